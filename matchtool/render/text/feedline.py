"""Terminal view of ``feedline``, and the sentences about a feed (how much of the radio-end return
loss the cable explains; what the cable is) that the JSON document also carries."""

from __future__ import annotations

import math

from ... import feedline as fl
from ...units import format_frequency as ff
from . import console, fmt
from .tables import say, show_table

LIVE_FEED_CAUTION = ("Caution: working on live transmitter feeds and masts is dangerous; switch the transmitter "
                     "off and follow your site's safety rules.")


def describe_cable(cable) -> str:
    """A short label of a cable: model, measured file or delay."""
    if isinstance(cable, fl.CableModel):
        z = "" if cable.z0_ohm is None else f", Z0 {cable.z0_ohm:g} ohm"
        diel = f" + {cable.dielectric_loss_db_per_m:g} dB/m (f)" if cable.dielectric_loss_db_per_m else ""
        vf = "" if cable.velocity_factor is None else f", VF {cable.velocity_factor:g}"
        return (f"cable model {cable.length_m:g} m{vf}, "
                f"{cable.loss_db_per_m:g} dB/m (sqrt f){diel} at {cable.loss_ref_hz / 1e6:g} MHz{z}")
    if isinstance(cable, fl.Delay):
        return f"delay {cable.delay_s * 1e12:g} ps"
    return f"measured cable {cable.path}" + (" (ports flipped)" if cable.flipped else "")


def masking_text(return_loss_radio_db: float, return_loss_antenna_db: float, loss_db: float) -> str:
    """One sentence on how much of the radio-end return loss is the cable's.

    ``loss_db`` is the cable's dissipative one-way loss with matched ends
    (:attr:`matchtool.feedline.FeedPoints.dissipative_loss_db`), not its insertion loss: a lossless
    cable of another impedance explains none of it. E.g. "14.0 dB return loss at the radio end, of
    which 2 x 1.5 dB is the cable; the antenna itself: 11.0 dB". When the radio end differs from
    "antenna + 2 x loss" (a cable mismatched to the system, or a measured cable that reflects), the
    sentence adds in which direction and by how much the cable's own reflection moves it."""
    def f(x: float) -> str:
        return "inf" if math.isinf(x) else ("n/a" if math.isnan(x) else f"{round(x, 1) + 0.0:.1f}")  # no "-0.0"

    text = (f"{f(return_loss_radio_db)} dB return loss at the radio end, of which 2 x {f(loss_db)} dB "
            f"is the cable; the antenna itself: {f(return_loss_antenna_db)} dB")
    expected = return_loss_antenna_db + 2.0 * loss_db
    rest = return_loss_radio_db - expected
    if math.isfinite(rest) and round(abs(rest), 1) >= 0.1:
        way = "better" if rest > 0 else "worse"
        text += (f"; the cable's own reflection (an impedance mismatch) makes the radio end {f(abs(rest))} dB "
                 f"{way} than the {f(expected)} dB that the antenna and the cable's loss alone would give")
    return text


def band_masking(b: fl.BandWorst) -> str:
    """The masking sentence at the frequency of the worst radio-end return loss of a band."""
    loss = b.dissipative_loss_at_worst_radio_db
    return masking_text(b.worst_return_loss_radio_db, b.return_loss_antenna_at_worst_radio_db,
                        b.one_way_loss_at_worst_radio_db if math.isnan(loss) else loss)


def point_masking(feed: fl.FeedPoints, k: int) -> str:
    """The masking sentence at frequency index ``k`` of ``feed``."""
    return masking_text(float(feed.return_loss_radio_db[k]), float(feed.return_loss_antenna_db[k]),
                        float(feed.dissipative_loss_db[k]))


def touchstone_comments(r: fl.FeedlineResult) -> list[str]:
    """Comment lines for the moved sweep's Touchstone file."""
    out = [f"matchtool feedline: {r.name} port {r.port} moved toward the {r.toward}",
           f"{describe_cable(r.cable)}, system impedance {r.z0_ohm:g} ohm"]
    if r.nonphysical_points:
        out.append(f"WARNING: {r.nonphysical_points} point(s) with |Gamma| > 1 (non-physical)")
    return out


def _fmt(x: float, digits: int = 2) -> str:
    """:func:`fmt` without negative zeros (a pure delay's loss is -0.00 in IEEE arithmetic)."""
    if x is None or not math.isfinite(x):
        return fmt(x, digits)
    return fmt(round(float(x), digits) + 0.0, digits)


def render(r: fl.FeedlineResult, out: str | None = None, con=None) -> None:
    """Terminal view of a FeedlineResult; ``out`` names the file written, if any."""
    c = con or console()
    way = "added toward the radio" if r.toward == "radio" else "removed toward the antenna (de-embedded)"
    c.print(f"[bold]{r.path}[/bold]  port {r.port}, Z0 {r.z0_ohm:g} ohm, {r.points} points")
    c.print(f"{describe_cable(r.cable)}: {way}")
    fa = r.feed_at
    if fa is not None and fa.f_hz.size:
        # the shared layout helper: a table where it fits the console, else the same cells stacked
        headers = ["frequency", "S21 loss\ndB", "RL radio\ndB", "VSWR\nradio", "RL antenna\ndB", "VSWR\nantenna",
                   "RL gained\ndB", "2 x loss\ndB", "line loss\ndB", "total loss\ndB"]
        rows = [[ff(f), _fmt(fa.one_way_loss_db[k]), _fmt(fa.return_loss_radio_db[k]), _fmt(fa.vswr_radio[k]),
                 _fmt(fa.return_loss_antenna_db[k]), _fmt(fa.vswr_antenna[k]), _fmt(fa.return_loss_improvement_db[k]),
                 _fmt(fa.cable_share_db[k]), _fmt(fa.line_loss_db[k], 3), _fmt(fa.total_feed_loss_db[k], 3)]
                for k, f in enumerate(fa.f_hz)]
        # narrower: one row per quantity, one column per frequency (fits 80 columns for a few --at)
        flat = [" ".join(h.split()) for h in headers[1:]]
        narrow = (["quantity"] + [row[0] for row in rows], [[flat[j]] + [row[j + 1] for row in rows]
                                                            for j in range(len(flat))], None)
        show_table(c, "At chosen frequencies (RL = return loss, positive; S21 loss = insertion loss; 2 x loss = "
                      "twice the cable's own matched loss; total = matched radio to antenna)", headers, rows,
                   narrow=narrow)
        for k, f in enumerate(fa.f_hz):
            say(c, f"{ff(f)}: " + point_masking(fa, k))
    for w in r.bands:
        span = "whole sweep" if r.whole_sweep else "band"
        say(c, f"Over the {span} {ff(w.f_low_hz)} to {ff(w.f_high_hz)}:")
        say(c, f"  one-way insertion loss (S21) {_fmt(w.one_way_loss_min_db)} to {_fmt(w.one_way_loss_max_db)} dB")
        say(c, f"  worst return loss at the radio end {_fmt(w.worst_return_loss_radio_db)} dB "
                f"(at {ff(w.worst_return_loss_radio_f_hz)}), VSWR up to {_fmt(w.worst_vswr_radio)}")
        say(c, f"  worst return loss at the antenna   {_fmt(w.worst_return_loss_antenna_db)} dB "
                f"(at {ff(w.worst_return_loss_antenna_f_hz)}), VSWR up to {_fmt(w.worst_vswr_antenna)}")
        say(c, f"  total feed loss, matched radio into the antenna (1/G_T: cable loss and every mismatch) up to "
                f"{_fmt(w.max_total_feed_loss_db, 3)} dB "
                f"(at {ff(w.max_total_feed_loss_f_hz)})")
        say(c, f"  at {ff(w.worst_return_loss_radio_f_hz)}: {band_masking(w)}")
        if w.nonphysical_points:
            c.print(f"  [bold]{w.nonphysical_points} point(s) with |Gamma| > 1: non-physical[/bold]")
    if out:
        c.print(f"Wrote {out}")
    say(c, LIVE_FEED_CAUTION)

"""``matchtool feedline SWEEP``: move the reference plane along a cable, both ways.

``--toward radio`` adds the cable in front of the antenna (what the radio sees through the feed);
``--toward antenna`` removes it from a measurement taken through it (de-embedding).
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Any

import numpy as np
import typer

from .. import feedline as fl
from ..errors import OutputError, UsageError
from ..outputs import check_output
from ..sweep import gamma_at_many, load, ports_from_name, write_touchstone
from ..units import format_frequency as ff
from ..units import parse_band, parse_frequency, parse_length, parse_time
from .common import (
    ForceOpt,
    JsonOpt,
    PortOpt,
    Z0Opt,
    console,
    emit_json,
    frequencies,
    same_file,
    warn,
)
from .common import fmt as _fmt

EPILOG = """Examples:

\b
  # measured at the end of a 3 m test cable: remove the cable
  matchtool feedline meas.s1p --length 3m --velocity-factor 0.66 \\
      --loss-db-per-m 0.66 --toward antenna --out ant.s1p

\b
  # what the radio sees through a 1.5 m feed (losses given at 1 GHz)
  matchtool feedline ant.s1p --length 150cm --velocity-factor 0.85 \\
      --loss-db-per-m 0.12 --dielectric-loss-db-per-m 0.02 \\
      --toward radio --band 902MHz:928MHz

\b
  # a measured cable (port 1 toward the analyzer); a port extension
  matchtool feedline meas.s1p --cable cable.s2p --toward antenna --out ant.s1p
  matchtool feedline meas.s1p --delay 250ps --toward antenna --at 2.45GHz
"""

MAX_DELAY_S = 1e-6
"""Longest --delay accepted: 1 us is some 200 m of cable, longer than any feed measured on a VNA."""

MIN_LOSS_REF_HZ = 1e6
"""Lowest --loss-ref accepted: cable attenuation is not specified below 1 MHz."""


def fmt(x: float, digits: int = 2) -> str:
    """:func:`common.fmt` without negative zeros (a pure delay's loss is -0.00 in IEEE arithmetic)."""
    if x is None or not math.isfinite(x):
        return _fmt(x, digits)
    return _fmt(round(float(x), digits) + 0.0, digits)


def _bare(text: str) -> bool:
    """True when ``text`` is a number without a unit."""
    try:
        float(text)
    except ValueError:
        return False
    return True


_MODEL_OPTS = ("--velocity-factor", "--loss-db-per-m", "--loss-ref", "--dielectric-loss-db-per-m", "--cable-z0")


def _cable_from_options(length: str | None, velocity_factor: float | None, loss_db_per_m: float | None,
                        loss_ref: str | None, dielectric: float | None, cable_z0: float | None, cable: str | None,
                        flip_cable: bool, delay: str | None):
    """Validate the cable options; return ("model", CableModel) / ("delay", Delay) / ("file", path)."""
    given = [name for name, v in (("--length", length), ("--cable", cable), ("--delay", delay)) if v is not None]
    if not given:
        raise UsageError("no cable given", expected="--length L with --velocity-factor and --loss-db-per-m, "
                                                    "or --cable FILE.s2p, or --delay T")
    if len(given) > 1:
        raise UsageError(f"give only one of --length, --cable, --delay (got {' and '.join(given)})")
    model_given = [n for n, v in zip(_MODEL_OPTS, (velocity_factor, loss_db_per_m, loss_ref, dielectric, cable_z0),
                                     strict=True) if v is not None]
    if flip_cable and cable is None:
        raise UsageError("--flip-cable applies only to a measured cable", expected="--cable FILE.s2p")
    if length is None:
        if model_given:
            raise UsageError(f"{model_given[0]} applies only to a cable model", expected="--length L")
        if delay is not None:
            delay_s = parse_time(delay)
            if delay_s > MAX_DELAY_S:
                hint = "a delay of at most 1us" + (f" (a bare number is seconds: did you mean {delay.strip()}ps?)"
                                                   if _bare(delay) else ", e.g. 250ps or 1.2ns")
                raise UsageError(f"--delay {delay.strip()} is {delay_s:g} s, longer than any feed line", expected=hint)
            return "delay", fl.Delay(delay_s)
        return "file", cable
    if velocity_factor is None:
        raise UsageError("a cable model needs --velocity-factor",
                         expected="e.g. 0.66 for solid PE, 0.69 PTFE, about 0.85 foam PE")
    if loss_db_per_m is None:
        raise UsageError("a cable model needs --loss-db-per-m (at --loss-ref, default 1 GHz)",
                         expected="the cable's attenuation in dB per metre; 0 for a lossless line")
    ref_hz = parse_frequency(loss_ref) if loss_ref is not None else 1e9
    if ref_hz < MIN_LOSS_REF_HZ:
        hint = "a frequency of at least 1MHz" + (f" (a bare number is Hz: did you mean {loss_ref.strip()}MHz?)"
                                                 if loss_ref is not None and _bare(loss_ref) else ", e.g. 1GHz")
        raise UsageError(f"--loss-ref {loss_ref.strip() if loss_ref else ''} is {ref_hz:g} Hz, below any cable "
                         "data sheet", expected=hint)
    return "model", fl.CableModel(length_m=parse_length(length), velocity_factor=velocity_factor,
                                  loss_db_per_m=loss_db_per_m, loss_ref_hz=ref_hz,
                                  dielectric_loss_db_per_m=dielectric or 0.0, z0_ohm=cable_z0)


def _end_doc(g: complex) -> dict[str, Any]:
    from .. import reflection as rf

    return {"gamma_re": g.real, "gamma_im": g.imag, "gamma_mag": abs(g), "return_loss_db": float(rf.return_loss_db(g)),
            "s11_db": float(rf.s11_db(g)), "vswr": float(rf.vswr(g)), "mismatch_loss_db": float(rf.mismatch_loss_db(g))}


def point_docs(feed: fl.FeedPoints) -> list[dict[str, Any]]:
    """One JSON entry per frequency of ``feed``."""
    cols = {
        "one_way_loss_db": feed.one_way_loss_db, "two_way_loss_db": feed.two_way_loss_db,
        "matched_loss_db": feed.matched_loss_db, "dissipative_loss_db": feed.dissipative_loss_db,
        "return_loss_improvement_db": feed.return_loss_improvement_db,
        "cable_share_db": feed.cable_share_db, "line_loss_db": feed.line_loss_db,
        "total_feed_loss_db": feed.total_feed_loss_db,
    }
    bad = feed.nonphysical
    out = []
    for k, f in enumerate(feed.f_hz):
        d: dict[str, Any] = {"f_hz": float(f)}
        d.update({name: float(v[k]) for name, v in cols.items()})
        if not isinstance(feed.matched_loss_db, np.ndarray) or np.isnan(feed.matched_loss_db[k]):
            d["matched_loss_db"] = None  # only a cable model has one; not a defect worth a warning
        d["radio"] = _end_doc(complex(feed.gamma_radio[k]))
        d["antenna"] = _end_doc(complex(feed.gamma_antenna[k]))
        d["nonphysical"] = bool(bad[k])
        d["masking"] = fl.masking_text(float(feed.return_loss_radio_db[k]), float(feed.return_loss_antenna_db[k]),
                                       float(feed.dissipative_loss_db[k]))
        out.append(d)
    return out


def band_doc(b: fl.BandWorst, whole: bool) -> dict[str, Any]:
    d = {k: getattr(b, k) for k in b.__dataclass_fields__}
    d["whole_sweep"] = whole
    d["masking"] = b.masking
    return d


def cable_doc(kind: str, cable) -> dict[str, Any]:
    d: dict[str, Any] = {"kind": cable.kind, "description": cable.describe()}
    if isinstance(cable, fl.CableModel):
        d.update(length_m=cable.length_m, velocity_factor=cable.velocity_factor, loss_db_per_m=cable.loss_db_per_m,
                 loss_ref_hz=cable.loss_ref_hz, dielectric_loss_db_per_m=cable.dielectric_loss_db_per_m,
                 cable_z0_ohm=cable.z0_ohm, delay_s=cable.delay_s())
    elif isinstance(cable, fl.Delay):
        d.update(delay_s=cable.delay_s)
    else:
        d.update(file=cable.path, flipped=cable.flipped, points=int(cable.f_hz.size))
    return d


def render(doc: dict[str, Any], feed_at: fl.FeedPoints | None, worst: fl.BandWorst) -> None:
    """Terminal view."""
    from rich.table import Table

    c = console()
    way = "added toward the radio" if doc["toward"] == "radio" else "removed toward the antenna (de-embedded)"
    c.print(f"[bold]{doc['file']}[/bold]  port {doc['port']}, Z0 {doc['z0_ohm']:g} ohm, {doc['points']} points")
    c.print(f"{doc['cable']['description']}: {way}")
    if feed_at is not None and feed_at.f_hz.size:
        t = Table(title="At chosen frequencies (all in dB except VSWR; RL = return loss, positive; S21 loss = "
                        "insertion loss; 2 x loss = twice the cable's own matched loss; total = matched radio "
                        "to antenna)",
                  title_justify="left", show_edge=False)
        for col in ("frequency", "S21 loss", "RL radio", "VSWR radio", "RL antenna", "VSWR ant.",
                    "RL gained", "2 x loss", "line loss", "total loss"):
            t.add_column(col, justify="right")
        for k, f in enumerate(feed_at.f_hz):
            t.add_row(ff(f), fmt(feed_at.one_way_loss_db[k]), fmt(feed_at.return_loss_radio_db[k]),
                      fmt(feed_at.vswr_radio[k]), fmt(feed_at.return_loss_antenna_db[k]), fmt(feed_at.vswr_antenna[k]),
                      fmt(feed_at.return_loss_improvement_db[k]), fmt(feed_at.cable_share_db[k]),
                      fmt(feed_at.line_loss_db[k], 3), fmt(feed_at.total_feed_loss_db[k], 3))
        c.print(t)
        for k, f in enumerate(feed_at.f_hz):
            c.print(f"{ff(f)}: " + fl.masking_text(float(feed_at.return_loss_radio_db[k]),
                                                    float(feed_at.return_loss_antenna_db[k]),
                                                    float(feed_at.dissipative_loss_db[k])))
    w = worst
    span = "whole sweep" if doc["band"]["whole_sweep"] else "band"
    c.print(f"Over the {span} {ff(w.f_low_hz)} to {ff(w.f_high_hz)}:")
    c.print(f"  one-way insertion loss (S21) {fmt(w.one_way_loss_min_db)} to {fmt(w.one_way_loss_max_db)} dB")
    c.print(f"  worst return loss at the radio end {fmt(w.worst_return_loss_radio_db)} dB "
            f"(at {ff(w.worst_return_loss_radio_f_hz)}), VSWR up to {fmt(w.worst_vswr_radio)}")
    c.print(f"  worst return loss at the antenna   {fmt(w.worst_return_loss_antenna_db)} dB "
            f"(at {ff(w.worst_return_loss_antenna_f_hz)}), VSWR up to {fmt(w.worst_vswr_antenna)}")
    c.print(f"  total feed loss, matched radio into the antenna (1/G_T: cable loss and every mismatch) up to "
            f"{fmt(w.max_total_feed_loss_db, 3)} dB "
            f"(at {ff(w.max_total_feed_loss_f_hz)})")
    c.print(f"  at {ff(w.worst_return_loss_radio_f_hz)}: {w.masking}")
    if w.nonphysical_points:
        c.print(f"  [bold]{w.nonphysical_points} point(s) with |Gamma| > 1: non-physical[/bold]")
    if doc["out"]:
        c.print(f"Wrote {doc['out']}")


def register(app: typer.Typer) -> None:
    @app.command("feedline", epilog=EPILOG)
    def feedline_cmd(
        sweep: Annotated[str, typer.Argument(metavar="SWEEP", help="Touchstone file (.s1p, .s2p, .sNp, .ts).",
                                             show_default=False)],
        toward: Annotated[str | None, typer.Option(
            "--toward", metavar="radio|antenna",
            help="radio: add the cable in front of the antenna; antenna: remove (de-embed) it.")] = None,
        length: Annotated[str | None, typer.Option(
            "--length", metavar="L", help="Cable model length with unit: 3m, 150cm, 18in.")] = None,
        velocity_factor: Annotated[float | None, typer.Option(
            "--velocity-factor", metavar="VF", help="Velocity factor, 0 < VF <= 1 (solid PE 0.66).")] = None,
        loss_db_per_m: Annotated[float | None, typer.Option(
            "--loss-db-per-m", metavar="A", help="Conductor loss in dB/m at --loss-ref, scaled with sqrt(f).")] = None,
        loss_ref: Annotated[str | None, typer.Option(
            "--loss-ref", metavar="FREQ", help="Frequency at which the losses are given [default: 1GHz].")] = None,
        dielectric_loss_db_per_m: Annotated[float | None, typer.Option(
            "--dielectric-loss-db-per-m", metavar="A",
            help="Dielectric loss in dB/m at --loss-ref, scaled with f [default: 0].")] = None,
        cable_z0: Annotated[float | None, typer.Option(
            "--cable-z0", metavar="OHM", help="Cable impedance [default: the system impedance].")] = None,
        cable: Annotated[str | None, typer.Option(
            "--cable", metavar="FILE.s2p", help="Measured cable, port 1 toward the radio / analyzer.")] = None,
        flip_cable: Annotated[bool, typer.Option(
            "--flip-cable", help="The cable file was saved with port 1 toward the antenna.")] = False,
        delay: Annotated[str | None, typer.Option(
            "--delay", metavar="T", help="Pure lossless delay (port extension): 250ps, 1.2ns.")] = None,
        at: Annotated[list[str] | None, typer.Option(
            "--at", metavar="FREQ", help="Report at this frequency (repeatable).")] = None,
        band: Annotated[str | None, typer.Option(
            "--band", metavar="LOW:HIGH", help="Report worst cases over this band [default: the whole sweep].")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        out: Annotated[str | None, typer.Option(
            "--out", metavar="FILE", help="Write the moved sweep as Touchstone (same ports and reference).")] = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Move the reference plane along a cable model, a measured cable or a delay, and report the
        cable loss, return loss and VSWR at both ends, what the cable hides, and the total feed loss."""
        if toward is None:
            raise UsageError("--toward is required", expected="--toward radio (add the cable) or "
                                                              "--toward antenna (remove it)")
        toward = toward.strip().lower()
        if toward not in ("radio", "antenna"):
            raise UsageError(f"--toward {toward!r}", expected="radio or antenna")
        kind, cab = _cable_from_options(length, velocity_factor, loss_db_per_m, loss_ref, dielectric_loss_db_per_m,
                                        cable_z0, cable, flip_cable, delay)
        at_hz = frequencies(at)
        band_hz = parse_band(band) if band is not None else None
        if z0 is not None and not (math.isfinite(z0) and z0 > 0):
            raise UsageError(f"--z0 {z0:g} ohm", expected="a positive, finite impedance")
        if out is not None:
            check_output(out, force)
            for name, inp in (("sweep", sweep), ("--cable file", cable)):
                if inp is not None and same_file(out, inp):
                    raise UsageError(f"--out would overwrite the input {name}", path=out,
                                     expected="an output file name that is not one of the inputs")
            if ports_from_name(out) is None:
                raise UsageError(f"cannot tell the Touchstone kind from the name {Path(out).name!r}", path=out,
                                 expected="a .sNp file name with N the input's port count")

        sw = load(sweep, port=port)
        n = sw.nports
        if out is not None and ports_from_name(out) not in (None, n):
            raise UsageError(f"the input has {n} port(s); the output cannot be .s{ports_from_name(out)}p",
                             path=out, expected=f".s{n}p")
        z_sys = float(z0) if z0 is not None else float(sw.network.z0[0, port - 1].real)
        warnings = list(sw.warnings)
        if kind == "file":
            cab, cw = fl.load_cable(cab, z_sys, flip_cable)
            warnings += cw
            if not cab.covers(sw.f_hz):
                cab.s_params(sw.f_hz, z_sys)  # raises the coverage error
            warnings += fl.interpolation_warnings(cab, sw.f_hz)

        f = sw.f_hz
        try:
            moved = fl.move_sweep(sw, cab, toward, z_sys)
        except UsageError as exc:
            if kind == "file" and exc.path is None:
                raise UsageError(exc.what, path=cab.path, expected=exc.expected) from None
            raise
        mv = moved.move
        warnings += list(mv.warnings)

        g_in = moved.gamma_in
        feed_at = None
        if at_hz:
            q = np.asarray(at_hz, dtype=float)
            feed_at = fl.feed_points(q, gamma_at_many(f, g_in, q, sw.path), cab, toward, z_sys)
        if band_hz is not None:
            fb = fl.band_frequencies(f, *band_hz, path=sw.path)
        else:
            fb = f
        feed_band = fl.feed_points(fb, gamma_at_many(f, g_in, fb, sw.path), cab, toward, z_sys)
        worst = fl.band_worst(feed_band)

        if out is not None and not np.isfinite(mv.s).all():
            k = int(np.argmax(~np.isfinite(mv.s).all(axis=(1, 2))))
            raise OutputError(f"the moved sweep is not finite at {f[k] / 1e6:.6g} MHz (the cable undoes the "
                              "measurement completely there); nothing written", path=out)
        if out is not None:
            net = moved.network
            comments = [f"matchtool feedline: {sw.name} port {port} moved toward the {toward}",
                        f"{cab.describe()}, system impedance {z_sys:g} ohm"]
            if mv.nonphysical_count:
                comments.append(f"WARNING: {mv.nonphysical_count} point(s) with |Gamma| > 1 (non-physical)")
            write_touchstone(out, net, force=force, comments=comments)

        doc = {
            "file": sw.path, "port": port, "z0_ohm": z_sys, "points": int(f.size), "toward": toward,
            "cable": cable_doc(kind, cab), "out": out,
            "at": point_docs(feed_at) if feed_at is not None else [],
            "band": band_doc(worst, band_hz is None),
            "nonphysical_points": mv.nonphysical_count,
            "warnings": warnings,
        }
        if json_out:
            emit_json(doc)
        else:
            render(doc, feed_at, worst)
            warn(warnings)
        return 0

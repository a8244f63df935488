"""Terminal view of ``locate``, and the sentences about a time-domain view (the reading of the
strongest reflection, what the mode and window mean, the cautions) that JSON and HTML reuse."""

from __future__ import annotations

import math

from ...locate import DYNAMIC_RANGE_DB, LocateResult, Peak
from ...units import format_frequency as ff
from . import console, fmt
from .tables import show_table

CAUTIONS = (
    "Distances are only as accurate as the velocity factor: 5 % off in VF is 5 % off in distance.",
    "Reflections closer together than the range resolution merge into one; a wider sweep (span) "
    "separates them, a longer cable or a narrow sweep cannot.",
    "Climbing masts and working on live transmitter feeds is dangerous: follow your site's safety "
    "rules and licensed practice; this tool only computes.",
)

MODE_TEXT = {
    "bandpass": "band-pass (the sweep does not start near 0 Hz): magnitude only, the sign of a reflection "
                "is not known",
    "lowpass-impulse": "low-pass impulse (a harmonic sweep, extended to 0 Hz): a real response, the sign "
                       "of a reflection is known",
    "lowpass-step": "low-pass step (a harmonic sweep, extended to 0 Hz): a step up is a higher impedance, "
                    "a step down a lower one, a dip a shunt capacitance, a bump a series inductance",
}

KIND_TEXT = {
    "higher_impedance": "higher Z (step up)",
    "lower_impedance": "lower Z (step down)",
    "capacitive": "capacitive (dip)",
    "inductive": "inductive (bump)",
}


def mode_text(r: LocateResult) -> str:
    text = MODE_TEXT[r.mode]
    if r.extrapolated_points:
        text += f"; {r.extrapolated_points} point(s) below the sweep's start extrapolated to 0 Hz"
    return text


def window_text(r: LocateResult) -> str:
    w = r.window
    return (f"{w.label}: highest sidelobe {w.sidelobe_db:.1f} dB, -6 dB main lobe {w.mainlobe_6db_bins:.2f} "
            f"bins, {w.widening:.2f} x the rectangular window's")


def resolution_text(r: LocateResult) -> str:
    return (f"range resolution {r.resolution_m:.4g} m (c0 VF / (2 x {ff(r.transform_span_hz)}) = "
            f"{r.resolution_base_m:.4g} m, x {r.window.widening:.2f} for the window); alias-free range "
            f"{r.max_range_m:.4g} m (c0 VF / (2 x {ff(r.f_step_hz)} step))")


def compensation_text(r: LocateResult) -> str:
    c = r.cable
    if not r.loss_compensated:
        return f"VF {c.velocity_factor:g}, no cable loss given: reflections are not loss-compensated"
    diel = f" + {c.dielectric_loss_db_per_m:g} dB/m (f)" if c.dielectric_loss_db_per_m else ""
    return (f"VF {c.velocity_factor:g}, loss {c.loss_db_per_m:g} dB/m (sqrt f){diel} at "
            f"{c.loss_ref_hz / 1e6:g} MHz: each reflection is compensated for the cable's two-way loss to "
            "its distance")


def listing_text(r: LocateResult) -> str:
    if r.floor_mag >= 1.0:
        # a floor at or above total reflection is no return loss at all (it would read as negative dB)
        above = f"|Gamma| {r.floor_mag:.3g} (above total reflection: the trace is not physical; check the calibration)"
    else:
        floor_rl = -20 * math.log10(r.floor_mag) if r.floor_mag > 0 else math.inf
        above = f"return loss {fmt(floor_rl, 1)} dB"
    return (f"reflections above {above} at the analyzer (the noise, and at most "
            f"{DYNAMIC_RANGE_DB:g} dB below the strongest unless --floor is given), standing out of their "
            f"surroundings and clear of stronger ones' window sidelobes, at least {r.min_separation_m:.3g} m apart; "
            "strongest first")


def reading(r: LocateResult) -> str:
    """One line on the strongest reflection, e.g. "largest reflection at 3.02 m, return loss 6.1 dB:
    likely the antenna"."""
    if not r.peaks:
        return "no reflection above the listing floor"
    p = r.peaks[0]
    head = f"largest reflection at {p.distance_m:.2f} m, return loss {fmt(p.return_loss_db, 1)} dB"
    # the far end is the farthest reflection of some size (weak ones further out are echoes or noise)
    farthest = max((q for q in r.peaks if q.return_loss_db <= p.return_loss_db + 20.0), key=lambda q: q.distance_m)
    if p.return_loss_db < 1.0:
        why = "nearly total reflection: an open or a short (a broken, crushed or disconnected line)"
    elif p.distance_m < 1.5 * r.resolution_m:
        why = ("within the resolution of the reference plane: the antenna right at the analyzer's connector, "
               "or the first connector or adapter")
    elif p is farthest:
        why = "likely the antenna (the farthest large reflection)"
    else:
        why = (f"before the far end ({farthest.distance_m:.2f} m): a connector, adapter, kink or water "
               "in the cable there")
    return f"{head}: {why}"


def peak_reading(p: Peak) -> str:
    kind = f", {KIND_TEXT[p.kind]}" if p.kind else ""
    return f"{p.distance_m:.3f} m, return loss {fmt(p.return_loss_db, 1)} dB{kind}"


def gate_text(r: LocateResult) -> list[str]:
    g = r.gate
    if g is None:
        return []
    return [
        f"Gate {g.start_m:.4g} m to {g.stop_m:.4g} m (round trip {g.start_s * 1e9:.4g} to {g.stop_s * 1e9:.4g} ns): "
        f"flat, raised-cosine edges of {g.taper_m:.3g} m each; reflections outside it are dropped",
        f"  the gated sweep is unreliable within {ff(g.edge_hz)} of each end of the sweep (the gate's own "
        "spectral width smears the band edges)",
        f"  worst return loss over {ff(g.f_low_hz)} to {ff(g.f_high_hz)}: before gating "
        f"{fmt(g.worst_return_loss_before_db)} dB (at {ff(g.worst_return_loss_before_f_hz)}), after "
        f"{fmt(g.worst_return_loss_after_db)} dB (at {ff(g.worst_return_loss_after_f_hz)}) at the analyzer",
        f"  after gating, without the cable's two-way loss to {g.compensated_at_m:.3g} m: "
        f"{fmt(g.worst_return_loss_after_compensated_db)} dB",
    ]


def touchstone_comments(r: LocateResult) -> list[str]:
    g = r.gate
    out = [f"matchtool locate: {r.name} port {r.port} gated from {g.start_m:.6g} m to {g.stop_m:.6g} m "
           f"(VF {r.velocity_factor:g})",
           "reference plane: the analyzer's (the cable's delay and loss are still in it)"]
    out.append(f"unreliable within {g.edge_hz / 1e6:.6g} MHz of each end of the sweep (gate edge effects)")
    return out


def render(r: LocateResult, out: str | None = None, uncompensated: bool = False, con=None) -> None:
    """Terminal view of a LocateResult."""
    c = con or console()
    c.print(f"[bold]{r.path}[/bold]  port {r.port}, {r.points} points, {ff(r.f_start_hz)} to {ff(r.f_stop_hz)}, "
            f"step {ff(r.f_step_hz)}")
    c.print(f"Mode: {mode_text(r)}")
    c.print(f"Cable: {compensation_text(r)}")
    c.print(f"Window: {window_text(r)}")
    c.print(f"Range: {resolution_text(r)}; view 0 to {r.view_max_m:.4g} m")
    c.print(f"Listed: {listing_text(r)}")
    if r.peaks:
        # the shared layout helper: a table where it fits, else the same cells stacked (never cut)
        cols = ["#", "distance\nm", "RL\ndB", "|Gamma|"]
        if uncompensated or r.loss_compensated:
            cols += ["RL analyzer\ndB", "2-way loss\ndB"]
        if r.mode == "lowpass-step":
            cols.append("kind")
        rows = []
        for k, p in enumerate(r.peaks, 1):
            row = [str(k), f"{p.distance_m:.3f}", fmt(p.return_loss_db), f"{p.reflection_mag:.4f}"]
            if uncompensated or r.loss_compensated:
                row += [fmt(p.raw_return_loss_db), fmt(p.two_way_loss_db)]
            if r.mode == "lowpass-step":
                row.append(KIND_TEXT.get(p.kind or "", "-"))
            rows.append(row)
        show_table(c, "Reflections, strongest first (RL = return loss of that reflection alone, positive dB):",
                   cols, rows, right=[c_ != "kind" for c_ in cols])
    c.print(f"Reading: {reading(r)}")
    for line in gate_text(r):
        c.print(line)
    if out:
        c.print(f"Wrote {out} (the gated sweep at the analyzer's plane; 'matchtool feedline --toward antenna' "
                "moves it to the antenna)")
    for line in CAUTIONS:
        c.print(f"Caution: {line}")

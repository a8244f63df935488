"""``matchtool inspect SWEEP``: reflection metrics of one sweep."""

from __future__ import annotations

from typing import Annotated, Any

import typer

from ..summary import PointMetrics, SweepSummary, summarize, threshold_from_options
from ..sweep import load
from ..units import format_frequency as ff
from .common import (
    JsonOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinRLOpt,
    PortOpt,
    Z0Opt,
    console,
    emit_json,
    fmt,
    frequencies,
    warn,
)

EPILOG = """Examples:

  matchtool inspect sample_sweeps/ant_r2.s1p

  matchtool inspect ant.s2p --port 2 --at 902MHz --at 915MHz --at "928 MHz"

  matchtool inspect ant.s1p --max-vswr 2 --json
"""


def point_doc(p: PointMetrics) -> dict[str, Any]:
    """The contract's ``at`` entry for one frequency."""
    z = p.z_ohm
    return {"f_hz": p.f_hz, "gamma_re": p.gamma.real, "gamma_im": p.gamma.imag, "gamma_mag": p.gamma_mag,
            "s11_db": p.s11_db + 0.0, "return_loss_db": p.return_loss_db + 0.0, "vswr": p.vswr,  # + 0.0: no -0.0
            "mismatch_loss_db": p.mismatch_loss_db, "delivered_fraction": p.delivered_fraction,
            "z_re_ohm": z.real, "z_im_ohm": z.imag}


def summary_doc(s: SweepSummary) -> dict[str, Any]:
    """The ``inspect --json`` document (keys per the interface contract, plus a few more)."""
    return {
        "file": s.path, "port": s.port, "z0_ohm": s.z0_ohm, "points": s.points,
        "f_start_hz": s.f_start_hz, "f_stop_hz": s.f_stop_hz,
        "threshold_return_loss_db": s.threshold_return_loss_db,
        "best": point_doc(s.best),
        "bands": [{"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "f_center_hz": b.f_center_hz,
                   "bandwidth_hz": b.bandwidth_hz, "fractional_bandwidth": b.fractional_bandwidth,
                   "clipped_low": b.clipped_low, "clipped_high": b.clipped_high} for b in s.bands],
        "at": [point_doc(p) for p in s.at],
        "warnings": list(s.warnings),
    }


def _s(s: SweepSummary) -> str:
    """The name of the reflection parameter shown: S11, S22, ... (S_pp of the chosen port)."""
    return f"S{s.port}{s.port}" if s.port < 10 else f"S{s.port},{s.port}"


def _delivered(fraction: float) -> str:
    """Delivered power as a percentage; |Gamma| > 1 (a negative fraction) is not physical."""
    return f"{100 * fraction:.1f} %" if fraction >= 0 else "none (|Gamma| > 1, not physical)"


def render_summary(s: SweepSummary) -> None:
    """Terminal view of a SweepSummary."""
    from rich.table import Table

    c = console()
    c.print(f"[bold]{s.path}[/bold]  port {s.port}, Z0 {s.z0_ohm:g} ohm, {s.points} points, "
            f"{ff(s.f_start_hz)} to {ff(s.f_stop_hz)}")
    b = s.best
    c.print(f"Best match (smallest |Gamma| sample): {ff(b.f_hz)}  return loss {fmt(b.return_loss_db)} dB "
            f"({_s(s)} {fmt(b.s11_db)} dB)  VSWR {fmt(b.vswr)}  delivered {_delivered(b.delivered_fraction)}")
    thr = s.threshold_return_loss_db
    title = f"Bands with return loss >= {thr:.2f} dB ({_s(s)} <= {-thr:.2f} dB)"
    if not s.bands:
        c.print(f"{title}: none - the sweep never reaches the threshold")
    else:
        t = Table(title=title, title_justify="left", show_edge=False)
        for col in ("low edge", "high edge", "centre", "width", "fractional", "note"):
            t.add_column(col, justify="left" if col == "note" else "right")
        for band in s.bands:
            note = ", ".join(x for x, on in (("runs past the sweep start", band.clipped_low),
                                              ("runs past the sweep stop", band.clipped_high)) if on)
            t.add_row(ff(band.f_low_hz), ff(band.f_high_hz), ff(band.f_center_hz), ff(band.bandwidth_hz),
                      f"{100 * band.fractional_bandwidth:.2f} %", note)
        c.print(t)
    if s.at:
        t = Table(title="Values at chosen frequencies (interpolated in complex Gamma)", title_justify="left",
                  show_edge=False)
        for col in ("frequency", "|Gamma|", f"{_s(s)} dB", "return loss dB", "VSWR", "mismatch loss dB",
                    "delivered", "impedance ohm"):
            t.add_column(col, justify="right")
        for p in s.at:
            z = p.z_ohm
            t.add_row(ff(p.f_hz), f"{p.gamma_mag:.4f}", fmt(p.s11_db), fmt(p.return_loss_db), fmt(p.vswr),
                      fmt(p.mismatch_loss_db, 3), _delivered(p.delivered_fraction),
                      f"{z.real:.1f} {'+' if z.imag >= 0 else '-'} j{abs(z.imag):.1f}")
        c.print(t)


def register(app: typer.Typer) -> None:
    @app.command("inspect", epilog=EPILOG)
    def inspect_cmd(
        sweep: Annotated[str, typer.Argument(metavar="SWEEP", help="Touchstone file (.s1p, .s2p, .sNp, .ts).",
                                             show_default=False)],
        port: PortOpt = 1,
        z0: Z0Opt = None,
        at: Annotated[list[str] | None, typer.Option(
            "--at", metavar="FREQ", help="Frequency to report values at (repeatable): 915MHz, '2.45 GHz', 868e6.")] = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Metrics of one sweep: best match, bands meeting the return-loss threshold, values at points."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        at_hz = frequencies(at)
        sw = load(sweep, port=port, z0_ohm=z0)
        s = summarize(sw, thr, at_hz)
        if json_out:
            emit_json(summary_doc(s))
        else:
            render_summary(s)
            warn(s.warnings)
        return 0

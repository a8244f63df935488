"""Terminal view of ``inspect``: one sweep's best match, threshold bands and values at points."""

from __future__ import annotations

from ...summary import PortsSummary, SweepSummary
from ...units import format_frequency as ff
from ..words import computed_frequency
from . import console, fmt


def _s(s: SweepSummary) -> str:
    """The name of the reflection parameter shown: S11, S22, ... (S_pp of the chosen port)."""
    return f"S{s.port}{s.port}" if s.port < 10 else f"S{s.port},{s.port}"


def _delivered(fraction: float) -> str:
    """Delivered power as a percentage; |Gamma| > 1 (a negative fraction) is not physical."""
    return f"{100 * fraction:.1f} %" if fraction >= 0 else "none (|Gamma| > 1, not physical)"


def render(s: SweepSummary) -> None:
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
        why = "none wide enough to count" if s.noise_crossings else "none - the sweep never reaches the threshold"
        c.print(f"{title}: {why}")
    else:
        t = Table(title=title, title_justify="left", show_edge=False)
        for col in ("low edge", "high edge", "centre", "width", "fractional", "note"):
            t.add_column(col, justify="left" if col == "note" else "right")
        for band in s.bands:
            note = ", ".join(x for x, on in (("runs past the sweep start", band.clipped_low),
                                              ("runs past the sweep stop", band.clipped_high)) if on)
            t.add_row(ff(band.f_low_hz), ff(band.f_high_hz), computed_frequency(band.f_center_hz),
                      computed_frequency(band.bandwidth_hz),
                      f"{100 * band.fractional_bandwidth:.2f} %", note)
        c.print(t)
    if s.noise_crossings:
        c.print(noise_line(s), soft_wrap=True)
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


def noise_line(s: SweepSummary) -> str:
    """The threshold crossings too narrow to be bands, said apart from the bands (never as bands)."""
    spans = ", ".join(f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)} ({computed_frequency(b.bandwidth_hz)} wide)"
                      for b in s.noise_crossings)
    return (f"Noise-level crossings, not bands (narrower than {computed_frequency(s.min_band_width_hz)} or under 2 "
            f"samples; see --min-band-width): {spans}")


def _best_line(s: SweepSummary) -> str:
    thr = s.threshold_return_loss_db
    bands = ", ".join(f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}"
                      + (" (runs past the sweep)" if b.clipped_low or b.clipped_high else "") for b in s.bands) or "none"
    noise = f"; {len(s.noise_crossings)} noise-level crossing(s)" if s.noise_crossings else ""
    return (f"port {s.port}: best {ff(s.best.f_hz)} return loss {fmt(s.best.return_loss_db)} dB; "
            f"bands >= {thr:.2f} dB: {bands}{noise}")


def render_ports(m: PortsSummary) -> None:
    """Terminal view of several ports: one line per port, then the details of ``detail_port`` (or of
    every port when it is None)."""
    from rich.markup import escape

    c = console()
    if m.detail_port is not None:
        c.print(f"[bold]{escape(m.path)}[/bold]: {m.nports}-port file, every port's best match (smallest |Gamma| "
                "sample) and threshold bands:")
        for s in m.ports:
            c.print("  " + escape(_best_line(s)))
        c.print(f"Details for port {m.detail_port} (--port N for another, --port all for every port):")
        render(m.port(m.detail_port))
        return
    for k, s in enumerate(m.ports):
        if k:
            c.print("")
        render(s)

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
    """Terminal view of a SweepSummary (legible at 80 columns: tables too wide are stacked)."""
    from rich.markup import escape

    from .tables import say, show_table

    c = console()
    c.print(f"[bold]{escape(s.path)}[/bold]", soft_wrap=True)
    say(c, f"port {s.port}, Z0 {s.z0_ohm:g} ohm, {s.points} points, {ff(s.f_start_hz)} to {ff(s.f_stop_hz)}")
    b = s.best
    say(c, f"Best match (smallest |Gamma| sample): {ff(b.f_hz)}")
    say(c, f"  return loss {fmt(b.return_loss_db)} dB ({_s(s)} {fmt(b.s11_db)} dB), VSWR {fmt(b.vswr)}, "
           f"delivered {_delivered(b.delivered_fraction)}")
    thr = s.threshold_return_loss_db
    title = f"Bands with return loss >= {thr:.2f} dB ({_s(s)} <= {-thr:.2f} dB)"
    if not s.bands:
        why = "none wide enough to count" if s.noise_crossings else "none - the sweep never reaches the threshold"
        say(c, f"{title}: {why}")
    else:
        rows = []
        for band in s.bands:
            note = ", ".join(x for x, on in (("runs past the sweep start", band.clipped_low),
                                              ("runs past the sweep stop", band.clipped_high)) if on)
            rows.append([ff(band.f_low_hz), ff(band.f_high_hz), computed_frequency(band.f_center_hz),
                         computed_frequency(band.bandwidth_hz), f"{100 * band.fractional_bandwidth:.2f} %", note])
        show_table(c, title, ["low edge", "high edge", "centre", "width", "fractional", "note"], rows,
                   [True, True, True, True, True, False])
    if s.noise_crossings:
        say(c, noise_line(s))
    if s.at:
        rows = []
        for p in s.at:
            z = p.z_ohm
            rows.append([ff(p.f_hz), f"{p.gamma_mag:.4f}", fmt(p.s11_db), fmt(p.return_loss_db), fmt(p.vswr),
                         fmt(p.mismatch_loss_db, 3), _delivered(p.delivered_fraction),
                         f"{z.real:.1f} {'+' if z.imag >= 0 else '-'} j{abs(z.imag):.1f}"])
        headers = ["frequency", "|Gamma|", f"{_s(s)}\ndB", "return\nloss dB", "VSWR", "mismatch\nloss dB",
                   "delivered", "impedance\nohm"]
        # at 80 columns: without |Gamma| and S_pp dB (= -return loss), which the JSON keeps
        keep = (0, 3, 4, 5, 6, 7)
        narrow = ([headers[k] for k in keep], [[r[k] for k in keep] for r in rows], [True] * len(keep))
        show_table(c, "Values at chosen frequencies (interpolated in complex Gamma)", headers, rows,
                   [True] * len(headers), narrow=narrow)


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


def _indented(c, text: str) -> None:
    """A line indented two spaces, its continuation four, wrapped at the console width (a number
    keeps its unit on its line)."""
    import re
    import textwrap

    from rich.text import Text

    glued = re.sub(r"(\d) (?=(?:[kMG]?Hz|dB)\b)", "\\1\u00a0", text)
    for line in textwrap.wrap(glued, width=max(20, c.width), initial_indent="  ", subsequent_indent="    ",
                              break_long_words=False, break_on_hyphens=False):
        c.print(Text(line.replace("\u00a0", " ")), soft_wrap=True)


def render_ports(m: PortsSummary) -> None:
    """Terminal view of several ports: one line per port, then the details of ``detail_port`` (or of
    every port when it is None)."""
    from .tables import say

    c = console()
    if m.detail_port is not None:
        say(c, f"{m.path}: {m.nports}-port file, every port's best match (smallest |Gamma| sample) and threshold bands:")
        for s in m.ports:
            _indented(c, _best_line(s))
        say(c, f"Details for port {m.detail_port} (--port N for another, --port all for every port):")
        render(m.port(m.detail_port))
        return
    for k, s in enumerate(m.ports):
        if k:
            c.print("")
        render(s)

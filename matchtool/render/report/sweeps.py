"""Sweeps: the inspect metrics of each file (best match, threshold bands)."""

from __future__ import annotations

from ...units import format_frequency as ff
from .. import html as h
from ..words import computed_frequency, fixed


def section(ctx, names) -> h.Section:
    parts = []
    nports = {sw.path: sw.nports for sw in ctx.sweeps}
    for s in ctx.summaries:
        b = s.best
        z = b.z_ohm
        n = nports.get(s.path, 1)
        shown = names[s.path] + (f", port {s.port} (S{s.port}{s.port} of a {n}-port file)" if n > 1 else "")
        parts.append(f"<h3>{h.esc(shown)}</h3>")
        parts.append(h.table(["port", "Z0 ohm", "points", "start", "stop"],
                             [[s.port, f"{s.z0_ohm:g}", s.points, ff(s.f_start_hz), ff(s.f_stop_hz)]],
                             [False, True, True, True, True], caption="Sweep"))
        parts.append(h.table(
            ["best match", "return loss dB", "S11 dB", "VSWR", "mismatch loss dB", "delivered", "impedance ohm"],
            [[ff(b.f_hz), fixed(b.return_loss_db), fixed(b.s11_db), fixed(b.vswr, 3), fixed(b.mismatch_loss_db, 3),
              f"{100 * b.delivered_fraction:.1f} %", f"{z.real:.1f} {'+' if z.imag >= 0 else '-'} j{abs(z.imag):.1f}"]],
            [True] * 7, caption="Best match (the measured sample with the smallest |Γ|)"))
        cap = f"Bands with return loss >= {s.threshold_return_loss_db:.2f} dB"
        if s.bands:
            parts.append(h.table(
                ["low edge", "high edge", "centre", "width", "fractional", "note"],
                [[ff(x.f_low_hz), ff(x.f_high_hz), computed_frequency(x.f_center_hz), computed_frequency(x.bandwidth_hz),
                  f"{100 * x.fractional_bandwidth:.2f} %",
                  ", ".join(n for n, on in (("runs past the sweep start", x.clipped_low),
                                            ("runs past the sweep stop", x.clipped_high)) if on)] for x in s.bands],
                [True, True, True, True, True, False], caption=cap))
        else:
            why = ("none wide enough to count (below)" if s.noise_crossings
                   else "none - the sweep never reaches the threshold")
            parts.append(h.paragraph(f"{cap}: {why}."))
        if s.noise_crossings:
            parts.append(h.paragraph(
                f"Noise-level crossings, not bands (narrower than {computed_frequency(s.min_band_width_hz)} or under "
                "2 samples; never used in a verdict): " + "; ".join(
                    f"{ff(x.f_low_hz)} to {ff(x.f_high_hz)} ({computed_frequency(x.bandwidth_hz)} wide)"
                    for x in s.noise_crossings) + ".", "note"))
    return h.Section("sweeps", "Sweeps (inspect metrics)", "\n".join(parts))

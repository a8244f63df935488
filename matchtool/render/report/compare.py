"""Comparison: every threshold band of every revision with deltas, then each band of interest."""

from __future__ import annotations

from ...units import format_frequency as ff
from .. import html as h
from ..words import band_verdict_sentence, computed_frequency, fixed, margin


def _d(x: float | None, scale: float = 1e6, digits: int = 3) -> str:
    return "n/a" if x is None else f"{x / scale + 0.0:+.{digits}f}"


def section(ctx, names) -> h.Section | None:
    c = ctx.comparison
    shown = c.verdicts[:c.adhoc_bands]
    if len(c.rows) < 2 and not shown:
        return None
    base = names[c.rows[0].file]
    rows = []
    for r in c.rows:
        lab = names[r.file] + (" (baseline)" if r.is_baseline else "")
        if not r.threshold_bands:
            rows.append([lab, ff(r.best_f_hz), fixed(r.best_return_loss_db), "misses threshold", "n/a",
                         _d(r.delta_best_f_hz), "n/a"])
        for k, t in enumerate(r.threshold_bands):
            b = t.band
            band = f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}" + (" (best match)" if t.holds_best else "")
            rows.append([lab if k == 0 else "", ff(r.best_f_hz) if k == 0 else "", fixed(r.best_return_loss_db)
                         if k == 0 else "", band, computed_frequency(b.bandwidth_hz), _d(r.delta_best_f_hz) if k == 0 else "",
                         _d(t.delta_bandwidth_hz)])
    parts = [h.table(["file", "best match", "RL dB", "threshold band", "width", "d best MHz", "d width MHz"], rows,
                     [False, True, True, False, True, True, True],
                     caption=f"Against {base} (d = this file minus the baseline; every threshold band listed)")]
    noise = [f"{names[r.file]}: at {computed_frequency(b.f_center_hz)}, {computed_frequency(b.bandwidth_hz)} wide"
             for r in c.rows for b in r.noise_crossings]
    if noise:
        parts.append(h.paragraph("Noise-level crossings (too narrow to be bands; never used in a verdict): "
                                 + "; ".join(noise) + ".", "note"))
    for k, v in enumerate(shown):
        brows = []
        for r in c.rows:
            w, d = r.bands[k], r.delta_worst_return_loss_db[k]
            lab = names[r.file]
            if not w.covered:
                brows.append([lab, "not covered", "n/a", "n/a", "n/a", "n/a", "FAIL" if w.passed is False else ""])
                continue
            brows.append([lab, fixed(w.worst_return_loss_db), "n/a" if d is None else f"{d + 0.0:+.2f}",
                          ff(w.worst_f_hz), fixed(w.worst_mismatch_loss_db, 3), margin(w.margin_db, 2, "", w.passed),
                          "" if w.passed is None else ("pass" if w.passed else "FAIL")])
        lim = "" if v.limit_return_loss_db is None else f", limit return loss {v.limit_return_loss_db:.2f} dB"
        parts.append(h.table(["file", "worst RL dB", "d RL dB", "at", "mismatch loss dB", "margin dB", "verdict"],
                             brows, [False, True, True, True, True, True, False],
                             caption=f"Band {v.name}: {ff(v.f_low_hz)} to {ff(v.f_high_hz)}{lim}"))
        parts.append(h.paragraph(band_verdict_sentence(v, names)))
    return h.Section("compare", "Comparison", "\n".join(parts))

"""Trend drawing of ``history``: per requirement, each unit's worst value in the order checked
with the limit (or resonance window) and the lot boundaries, and a histogram of it per lot."""

from __future__ import annotations

from typing import Any

_YLABEL = {"min_return_loss_db": "worst return loss (dB)", "max_vswr": "worst VSWR", "max_s11_db": "worst S11 (dB)",
           "max_mismatch_loss_db": "worst mismatch loss (dB)", "max_deviation_db": "largest deviation (dB)",
           "resonance": "best-match frequency (MHz)"}


def draw_trend(result, out: Any, fmt: str = "png") -> None:
    """Draw the trend figure of a ``history.HistoryResult`` (computed with ``series=True``) to
    ``out`` (a path or a binary file object) as ``fmt`` ("png" or "svg")."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import numpy as np

    series = list(result.series)
    rows = max(1, len(series))
    fig, axes = plt.subplots(rows, 2, figsize=(11, 3.2 * rows), squeeze=False,
                             gridspec_kw={"width_ratios": [3, 1]})
    if not series:
        axes[0][0].text(0.5, 0.5, "no units in the store for these filters", ha="center", va="center")
        axes[0][0].set_axis_off()
        axes[0][1].set_axis_off()
    for (ax, hx), s in zip(axes, series, strict=False):
        scale = 1e-6 if s.key == "resonance" else 1.0
        y = np.array([np.nan if v is None else v * scale for v in s.worst], dtype=float)
        x = np.arange(y.size)
        lots = list(s.lot)
        names = list(dict.fromkeys(lots))
        colours = plt.get_cmap("tab10")
        for k, name in enumerate(names):
            m = np.array([lt == name for lt in lots])
            ax.plot(x[m], y[m], ".", ms=3, color=colours(k % 10), label=str(name))
            vals = y[m][np.isfinite(y[m])]
            if vals.size:
                hx.hist(vals, bins=min(40, max(5, int(np.sqrt(vals.size)))), orientation="horizontal",
                        histtype="step", color=colours(k % 10), label=str(name))
        for k in range(1, len(lots)):
            if lots[k] != lots[k - 1]:
                ax.axvline(k - 0.5, color="0.6", lw=0.8, ls=":")
        limits = ([s.f_low_hz * scale, s.f_high_hz * scale] if s.key == "resonance" and s.f_low_hz is not None
                  else [s.limit] if s.limit is not None else [])
        for lim in limits:
            ax.axhline(lim, color="black", lw=1.0, ls="--")
            hx.axhline(lim, color="black", lw=1.0, ls="--")
        ax.set_title(f"{s.name}: worst value per unit (dashed: limit; dotted: lot boundaries)", fontsize=9)
        ax.set_xlabel("units in the order checked")
        ax.set_ylabel(_YLABEL.get(s.key, s.key))
        hx.set_xlabel("units")
        hx.set_title("per lot", fontsize=9)
        hx.sharey(ax)
        if len(names) <= 10:
            ax.legend(fontsize=7, loc="best", title="lot", title_fontsize=7)
        ax.grid(True, alpha=0.3)
    fig.tight_layout()
    fig.savefig(out, format=fmt)
    plt.close(fig)

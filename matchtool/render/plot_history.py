"""Trend drawing of ``history``: per requirement, each unit's worst value in the order checked
with the limit (or resonance window) and the lot boundaries, and a histogram of it per lot.

matplotlib is imported only inside :func:`draw_trend` (Agg canvas, no pyplot state). Colours and
markers are matchtool's own (``render.plots.PALETTE``, ``MARKERS`` via ``plots._look``): each lot
takes the next colour and marker shape, drawn open (white face, coloured edge) and large enough to
read; histograms are outlines (no hatching). Unit counts are whole numbers, so both count axes have
integer ticks. Artists tests look for carry a ``gid``: ``trend:<requirement>:lot:<lot>``,
``hist:<requirement>:lot:<lot>``, ``trend:<requirement>:limit``.
"""

from __future__ import annotations

from typing import Any

_YLABEL = {"min_return_loss_db": "worst return loss (dB)", "max_vswr": "worst VSWR", "max_s11_db": "worst S11 (dB)",
           "max_mismatch_loss_db": "worst mismatch loss (dB)", "max_deviation_db": "largest deviation (dB)",
           "resonance": "best-match frequency (MHz)"}
MARKER_SIZE = 5.5  # points: open markers of this size stay readable at the figure's 150 dpi
LIMIT_COLOR = "#222222"
BOUNDARY_COLOR = "#8a8a8a"


def draw_trend(result, out: Any, fmt: str = "png") -> None:
    """Draw the trend figure of a ``history.HistoryResult`` (computed with ``series=True``) to
    ``out`` (a path or a binary file object) as ``fmt`` ("png" or "svg")."""
    from .plots import figure_bytes

    data = figure_bytes(trend_figure(result), fmt)
    if hasattr(out, "write"):
        out.write(data)
    else:
        with open(out, "wb") as fh:
            fh.write(data)


def trend_figure(result):
    """The trend ``matplotlib.figure.Figure`` of a ``history.HistoryResult`` (see the module)."""
    import numpy as np

    from .plots import _look, _mpl

    _mpl()
    from matplotlib import rc_context
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import MaxNLocator

    from .plots import _style

    series = list(result.series)
    rows = max(1, len(series))
    with rc_context(_style()):
        fig = Figure(figsize=(11, 3.4 * rows), layout="constrained")
        FigureCanvasAgg(fig)
        axes = fig.subplots(rows, 2, squeeze=False, gridspec_kw={"width_ratios": [3, 1]})
        if not series:
            axes[0][0].text(0.5, 0.5, "no units in the store for these filters", ha="center", va="center")
            axes[0][0].set_axis_off()
            axes[0][1].set_axis_off()
        for (ax, hx), s in zip(axes, series, strict=False):
            scale = 1e-6 if s.key == "resonance" else 1.0
            y = np.array([np.nan if v is None else v * scale for v in s.worst], dtype=float)
            x = np.arange(1, y.size + 1)  # unit 1, 2, ... in the order checked
            lots = list(s.lot)
            names = list(dict.fromkeys(lots))
            for k, name in enumerate(names):
                look = _look(k)
                m = np.array([lt == name for lt in lots])
                ax.plot(x[m], y[m], linestyle="none", marker=look["marker"], markersize=MARKER_SIZE,
                        markerfacecolor="white", markeredgecolor=look["color"], markeredgewidth=1.3,
                        label=str(name), gid=f"trend:{s.name}:lot:{name}")
                vals = y[m][np.isfinite(y[m])]
                if vals.size:
                    hx.hist(vals, bins=min(40, max(5, int(np.sqrt(vals.size)))), orientation="horizontal",
                            histtype="step", linewidth=1.6, color=look["color"], label=str(name),
                            gid=f"hist:{s.name}:lot:{name}")
            for k in range(1, len(lots)):
                if lots[k] != lots[k - 1]:
                    ax.axvline(k + 0.5, color=BOUNDARY_COLOR, lw=0.9, ls=(0, (1.5, 2.5)))
            limits = ([s.f_low_hz * scale, s.f_high_hz * scale] if s.key == "resonance" and s.f_low_hz is not None
                      else [s.limit] if s.limit is not None else [])
            for lim in limits:
                ax.axhline(lim, color=LIMIT_COLOR, lw=1.2, ls=(0, (6, 3)), gid=f"trend:{s.name}:limit")
                hx.axhline(lim, color=LIMIT_COLOR, lw=1.2, ls=(0, (6, 3)))
            ax.set_title(f"{s.name}: worst value per unit (dashed: limit; dotted: lot boundaries)")
            ax.set_xlabel("unit number, in the order checked")
            ax.set_ylabel(_YLABEL.get(s.key, s.key))
            ax.xaxis.set_major_locator(MaxNLocator(integer=True, min_n_ticks=1))
            if y.size:
                ax.set_xlim(0.5, y.size + 0.5)
            hx.set_xlabel("number of units")
            hx.xaxis.set_major_locator(MaxNLocator(integer=True, min_n_ticks=1))
            hx.set_title("histogram per lot")
            hx.sharey(ax)
            if len(names) <= 10:
                ax.legend(loc="best", title="lot")
    return fig

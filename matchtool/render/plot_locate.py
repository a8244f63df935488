"""The distance picture of ``locate``: reflection (dB, or return loss) against metres along the feed,
the listed reflections labelled, the gate shaded. matplotlib is imported only inside the functions
(through :mod:`matchtool.render.plots`, Agg canvas, no pyplot state).

Artists carry a ``gid`` for tests and readers: ``distance:trace``, ``distance:raw``,
``distance:peak:<n>``, ``distance:floor``, ``distance:gate``.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, BinaryIO

import numpy as np

from ..errors import UsageError
from . import plots

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

QUANTITIES = ("reflection", "return-loss")
FLOOR_DB = -80.0  # the trace is drawn no lower than this (reflection dB)


def distance_figure(result, quantity: str = "reflection", uncompensated: bool = False) -> Figure:
    """A Figure of ``result`` (a ``locate.LocateResult``): ``quantity`` "reflection" draws
    20 log10 |Gamma| (negative dB, up is worse), "return-loss" its negative (up is better)."""
    if quantity not in QUANTITIES:
        raise UsageError("is not a quantity of the distance picture", parameter="quantity", value=quantity,
                         expected=", ".join(QUANTITIES))
    plots._mpl()
    from matplotlib import rc_context
    from matplotlib.figure import Figure

    sign = 1.0 if quantity == "reflection" else -1.0
    d = result.trace_distance_m

    def y(mag):
        return sign * np.maximum(20 * np.log10(np.maximum(np.asarray(mag, dtype=float), 1e-15)), FLOOR_DB)

    with rc_context(plots._style()):
        fig = Figure(figsize=(8.0, 4.2))
        ax = fig.add_subplot(1, 1, 1)
        ink, ochre = plots.PALETTE[0][1], plots.PALETTE[1][1]
        label = "loss compensated" if result.loss_compensated else "as measured"
        ax.plot(d, y(result.trace_reflection_mag), color=ink, linewidth=1.3, gid="distance:trace", label=label)
        if uncompensated and result.loss_compensated:
            ax.plot(d, y(result.trace_raw_reflection_mag), color=ochre, linestyle=(0, (6, 2)), linewidth=1.0,
                    gid="distance:raw", label="at the analyzer (no compensation)")
        if result.floor_mag > 0:
            ax.axhline(sign * 20 * np.log10(result.floor_mag), color=plots.THRESHOLD_COLOR, linestyle=(0, (1.5, 1.5)),
                       linewidth=0.8, gid="distance:floor", label="listing floor (at the analyzer)")
        g = result.gate
        if g is not None:
            ax.axvspan(g.start_m, g.stop_m, color=plots.BAND_FILL, zorder=0, gid="distance:gate", label="gate")
        for k, p in enumerate(result.peaks, 1):
            yy = sign * 20 * np.log10(p.reflection_mag)
            # matchtool's own reflection mark: an open diamond with a dot, on the trace
            ax.plot([p.distance_m], [yy], marker="D", markersize=7, markerfacecolor="white",
                    markeredgecolor=plots.PALETTE[2][1], markeredgewidth=1.8, linestyle="none", zorder=5,
                    gid=f"distance:peak:{k}")
            ax.plot([p.distance_m], [yy], marker=".", markersize=3, color="black", linestyle="none", zorder=5.5)
            ax.annotate(f"{k}: {p.distance_m:.2f} m\nRL {p.return_loss_db:.1f} dB", (p.distance_m, yy),
                        textcoords="offset points", xytext=(4, 6 if sign > 0 else -18), fontsize=7.5)
        right = result.view_max_m
        if result.peaks and math.isclose(result.view_max_m, result.max_range_m):
            # no --max-distance: show the listed reflections, not the whole alias-free range (mostly
            # empty, and its far end holds the wrapped response of the reflections near 0 m)
            far = max(p.distance_m for p in result.peaks)
            right = min(result.view_max_m, max(1.5 * far + 5 * result.resolution_m, 20 * result.resolution_m))
        ax.set_xlim(0, right)
        ax.margins(y=0.18)  # room for the labels above (below) the peaks
        ax.set_xlabel(f"distance along the feed, m (one way, VF {result.velocity_factor:g})")
        ax.set_ylabel("reflection, dB (20 log10 |Gamma|)" if sign > 0 else "return loss, dB (positive)")
        ax.set_title(f"{result.name}: reflections versus distance ({result.mode}, {result.window.label} window, "
                     f"resolution {result.resolution_m:.3g} m)")
        ax.legend(loc="upper right" if sign > 0 else "lower right")
        fig.tight_layout()
    return fig


def draw_distance(result, out: str | BinaryIO, fmt: str = "png", quantity: str = "reflection",
                  uncompensated: bool = False, force: bool = False) -> None:
    """Draw the distance picture of ``result`` to ``out`` (a path, written atomically and not
    replaced without ``force``, or a binary file object) as ``fmt`` (png, svg, pdf)."""
    data = plots.figure_bytes(distance_figure(result, quantity, uncompensated), fmt)
    if hasattr(out, "write"):
        out.write(data)
        return
    from ..outputs import atomic_write

    atomic_write(out, data, force=force)

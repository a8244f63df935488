"""Pictures of a multi-port antenna's coupling: every |S_ij| in dB with isolation masks, and the
envelope correlation (ECC) of every pair with correlation masks.

matplotlib is imported only inside the drawing functions (Agg canvas, no pyplot state), so
importing this module costs nothing. Colours, dash patterns and markers are the project's own
(``render.plots.PALETTE`` and friends). Artists that tests look for carry a ``gid``:
``isolation:trace:S21``, ``isolation:mask:<name>``, ``isolation:band:<k>``, ``ecc:trace:1-2``,
``ecc:mask:<name>``, ``tarc:worst``, ``tarc:best``.

Sign conventions: the isolation panel draws |S_ij| in dB (negative, lower is better isolated); an
isolation mask of ``min_isolation_db`` is drawn at ``-min_isolation_db`` over its band. ECC is
dimensionless, 0 (uncorrelated) to 1.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from pathlib import Path
from typing import IO, Any

import numpy as np

from .plots import BAND_FILL, FORMATS, MASK_ALPHA, MASK_COLOR, MASK_TINT, _look, _mpl, _style, figure_bytes, frequency_unit

ISOLATION_FLOOR_DB = -80.0  # |S_ij| below this (or zero) is drawn at the bottom of the axis


def _masks(masks: Sequence[Any] | None, table: str) -> list[Any]:
    """The requirements of one kind from ``masks`` (a ``spec.Spec`` or a sequence of requirements)."""
    if masks is None:
        return []
    if hasattr(masks, "isolations"):
        return list(masks.isolations if table == "isolation" else masks.correlations)
    return [m for m in masks if getattr(m, "TABLE", None) == table]


def _figure():
    _mpl()
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.2, 5.0), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _shade(ax, bands: Sequence[tuple[float, float]], f_hz: np.ndarray, scale: float, kind: str) -> None:
    whole = len(bands) == 1 and bands[0][0] <= f_hz[0] and bands[0][1] >= f_hz[-1]
    if whole:
        return
    for k, (lo, hi) in enumerate(bands):
        ax.axvspan(lo / scale, hi / scale, color=BAND_FILL, zorder=0, gid=f"{kind}:band:{k}")


def _write(fig, out: str | Path | IO[bytes], fmt: str, force: bool) -> bytes:
    data = figure_bytes(fig, fmt)
    if hasattr(out, "write"):
        out.write(data)
    else:
        from ..outputs import atomic_write

        atomic_write(out, data, force)
    return data


def _limit_line(ax, m, scale: float, kind: str, y: float, forbidden_to: float, text: str) -> None:
    """A spec limit of two ports over its band: the line, the forbidden side (from ``y`` to
    ``forbidden_to``) in the light tint of the reflection masks, and its name and ports."""
    x = [m.f_low_hz / scale, m.f_high_hz / scale]
    ax.fill_between(x, [y, y], [forbidden_to, forbidden_to], facecolor=MASK_TINT, alpha=MASK_ALPHA,
                    edgecolor="none", zorder=1, gid=f"{kind}:tint:{m.name}")
    ax.hlines(y, x[0], x[1], colors=MASK_COLOR, linewidth=2.2, gid=f"{kind}:mask:{m.name}")
    # the name sits on the allowed side of the line, away from the tint a failing trace runs through
    up = forbidden_to < y
    ax.annotate(f"{m.name}: {text} (ports {m.pair[0]},{m.pair[1]})", (x[0], y), xytext=(0, 4 if up else -11),
                textcoords="offset points", fontsize=7.5)


def _frame(ax, f: np.ndarray, scale: float, unit: str, ylabel: str, title: str, ncol: int | None = None) -> None:
    """Frequency axis over the sweep, labels, title, and the legend under the plot."""
    ax.set_xlim(f[0] / scale, f[-1] / scale)
    ax.set_xlabel(f"Frequency ({unit})")
    ax.set_ylabel(ylabel)
    ax.set_title(title)
    n = len(ax.get_legend_handles_labels()[1])
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.13), ncol=ncol or min(4, max(1, n)), frameon=False)


def isolation_figure(result, masks=None):
    """The Figure of :func:`draw_isolation` (a ``coupling.CouplingResult``)."""
    from matplotlib import rc_context

    f = result.f_hz
    scale, unit = frequency_unit(f)
    with rc_context(_style()):
        fig = _figure()
        ax = fig.add_subplot()
        ax.set_gid("panel:isolation")
        _shade(ax, result.bands, f, scale, "isolation")
        k = 0
        for p in result.pairs:
            i, j = p.ports
            curves = [((i, j), p.isolation_ij_db)] + ([] if p.reciprocal else [((j, i), p.isolation_ji_db)])
            for (a, b), iso in curves:
                y = np.maximum(-iso, ISOLATION_FLOOR_DB)
                label = f"S{a}{b}" + (f" = S{b}{a}" if p.reciprocal else "")
                ax.plot(f / scale, y, label=label, markevery=max(1, f.size // 8), markersize=4,
                        gid=f"isolation:trace:S{a}{b}", **_look(k))
                k += 1
        for m in _masks(masks, "isolation"):
            _limit_line(ax, m, scale, "isolation", -m.limit, 0.0, f"isolation >= {m.limit:g} dB")
        _frame(ax, f, scale, unit, "|S_ij| (dB); isolation is its negative",
               f"Coupling between ports ({Path(result.path).name})")
    return fig


def ecc_figure(result, masks=None):
    """The Figure of :func:`draw_ecc` (a ``coupling.CouplingResult``)."""
    from matplotlib import rc_context

    f = result.f_hz
    scale, unit = frequency_unit(f)
    with rc_context(_style()):
        fig = _figure()
        ax = fig.add_subplot()
        ax.set_gid("panel:ecc")
        _shade(ax, result.bands, f, scale, "ecc")
        for k, p in enumerate(result.pairs):
            i, j = p.ports
            ax.plot(f / scale, p.ecc, label=f"ports {i},{j}", markevery=max(1, f.size // 8), markersize=4,
                    gid=f"ecc:trace:{i}-{j}", **_look(k))
        top = max([0.1] + [float(np.max(p.ecc)) for p in result.pairs])
        for m in _masks(masks, "correlation"):
            _limit_line(ax, m, scale, "ecc", m.limit, 1.0, f"ECC <= {m.limit:g}")
            top = max(top, m.limit)
        ax.set_ylim(0, min(1.0, 1.15 * top))
        _frame(ax, f, scale, unit, "Envelope correlation (from S-parameters)",
               "ECC; lossless antennas assumed: optimistic for low efficiency")
    return fig


def tarc_figure(result):
    """TARC worst and best over the excitation phases (dB) against frequency, -10 dB line."""
    from matplotlib import rc_context

    t = result.tarc
    f = t.f_hz
    scale, unit = frequency_unit(f)
    with rc_context(_style()):
        fig = _figure()
        ax = fig.add_subplot()
        ax.set_gid("panel:tarc")
        ax.fill_between(f / scale, t.best_db, t.worst_db, color=BAND_FILL, label="range over phase")
        ax.plot(f / scale, t.worst_db, label="worst over phase", gid="tarc:worst", markevery=max(1, f.size // 8),
                markersize=4, **_look(0))
        ax.plot(f / scale, t.best_db, label="best over phase", gid="tarc:best", **{**_look(2), "marker": None})
        ax.axhline(-10.0, color=MASK_COLOR, linewidth=1.0, linestyle=(0, (4, 2)), label="-10 dB TARC")
        ax.set_ylim(max(-60.0, float(np.min(t.best_db)) - 3.0), 1.0)
        _frame(ax, f, scale, unit, "TARC (dB)", f"Total active reflection of ports {', '.join(map(str, t.ports))}",
               ncol=3)
    return fig


def _draw(fig, out, fmt: str, force: bool) -> bytes:
    if fmt not in FORMATS:
        from ..errors import UsageError

        raise UsageError(f"unknown picture format {fmt!r}", parameter="fmt", expected=", ".join(FORMATS))
    return _write(fig, out, fmt, force)


def draw_isolation(result, out: str | Path | IO[bytes], fmt: str = "png", masks=None, force: bool = False) -> bytes:
    """Draw every |S_ij| (dB) of a ``coupling.CouplingResult`` with the isolation masks of ``masks``
    (a ``spec.Spec`` or its ``[[isolation]]`` requirements) to ``out`` (a path, written atomically
    and not replacing a file without ``force``, or a binary file object); returns the bytes."""
    return _draw(isolation_figure(result, masks), out, fmt, force)


def draw_ecc(result, out: str | Path | IO[bytes], fmt: str = "png", masks=None, force: bool = False) -> bytes:
    """Draw the ECC of every pair with the ``[[correlation]]`` masks of ``masks``; as :func:`draw_isolation`."""
    return _draw(ecc_figure(result, masks), out, fmt, force)


def draw_tarc(result, out: str | Path | IO[bytes], fmt: str = "png", force: bool = False) -> bytes:
    """Draw the TARC (worst and best over phase); as :func:`draw_isolation`."""
    return _draw(tarc_figure(result), out, fmt, force)


def svg_text(fig) -> str:
    """The SVG text of a Figure (for inline use in HTML)."""
    buf = io.BytesIO()
    buf.write(figure_bytes(fig, "svg"))
    return buf.getvalue().decode("utf-8")

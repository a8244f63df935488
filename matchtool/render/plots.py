"""Every picture matchtool draws: return loss or S11 dB, VSWR, Smith chart and impedance panels.

This is the only module that imports matplotlib, and only inside its drawing functions, so
importing it costs nothing. Figures are built on ``matplotlib.figure.Figure`` with the Agg canvas
(no pyplot state, no display needed) and are returned so callers and tests can inspect them.

Data flow: :func:`trace_from_sweep` turns a Sweep into a :class:`Trace` (plain arrays, computed by
the core reflection functions); the drawing functions only place those arrays. Artists that tests
or readers look for carry a ``gid``: ``<panel>:threshold``, ``<panel>:band:<name>``,
``<panel>:mask:<name>``, ``<panel>:trace:<label>``, ``<panel>:best:<label>``,
``<panel>:edges:<label>``, ``smith:bandedge:<name>:<label>``.

Sign conventions: return loss is positive dB (RL = -20 log10 |Gamma|, higher is better); S11 in dB
is its negative (lower is better). Axis labels state which one is drawn.

Palette: our own six colours, chosen so their luminance steps apart (readable in greyscale) and
paired with distinct dash patterns and markers, so no trace relies on hue alone (colour-blind
readers); chosen by us, no source.
"""

from __future__ import annotations

import io
import sys
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from .. import reflection as rf
from ..bands import Band, find_bands
from ..errors import UsageError
from ..summary import best_index
from ..sweep import Sweep

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

KINDS = ("return-loss", "s11-db", "vswr", "smith", "impedance")
"""The panels drawn from reflection sweeps (several may share one picture)."""

@dataclass(frozen=True)
class FigureKind:
    """A picture drawn by another capability's own module (one sweep, one picture).

    ``compute`` and ``draw`` are ``"module:function"`` references, imported on use:
    ``compute(sweep, **options)`` returns that capability's result and ``draw(result,
    path_or_fileobj, fmt, **options)`` writes the picture. ``compute_options`` / ``draw_options``
    name the keyword arguments each takes from the command's options (the others are not passed);
    ``multiport`` kinds need a file with two or more ports; ``needs`` lists the options the kind
    cannot do without (``--velocity-factor``...), ``what`` says what the picture shows (for help)."""

    compute: str
    draw: str
    what: str = ""
    multiport: bool = False
    compute_options: tuple[str, ...] = ()
    draw_options: tuple[str, ...] = ()

    @staticmethod
    def pick(names: Sequence[str], options: dict[str, Any]) -> dict[str, Any]:
        """The entries of ``options`` named in ``names`` whose value is set (not None)."""
        return {k: options[k] for k in names if options.get(k) is not None}


FIGURE_KINDS: dict[str, FigureKind] = {
    "distance": FigureKind("matchtool.locate:analyze", "matchtool.render.plot_locate:draw_distance",
                           "reflection versus distance along the feed (needs --velocity-factor)",
                           compute_options=("velocity_factor", "gate_m", "gate_s", "max_distance_m")),
    "isolation": FigureKind("matchtool.coupling:analyze_coupling", "matchtool.render.plot_coupling:draw_isolation",
                            "every |S_ij| in dB with the spec's isolation limits (multi-port file)",
                            multiport=True, compute_options=("bands",), draw_options=("masks",)),
    "ecc": FigureKind("matchtool.coupling:analyze_coupling", "matchtool.render.plot_coupling:draw_ecc",
                      "envelope correlation of every pair with the spec's ECC limits (multi-port file)",
                      multiport=True, compute_options=("bands",), draw_options=("masks",)),
    "tarc": FigureKind("matchtool.coupling:analyze_coupling", "matchtool.render.plot_coupling:draw_tarc",
                       "total active reflection, worst and best over the excitation phases (multi-port file)",
                       multiport=True, compute_options=("bands",)),
}
"""Kinds drawn by another capability's own module, one picture each. Adding one is one line."""


def figure_kind(kind: str):
    """``(compute, draw)`` callables of a :data:`FIGURE_KINDS` entry (imported on use)."""
    import importlib

    def load(ref: str):
        mod, _, name = ref.partition(":")
        return getattr(importlib.import_module(mod), name)

    fk = FIGURE_KINDS[kind]
    return load(fk.compute), load(fk.draw)


FORMATS = ("png", "svg", "pdf")

# name, hex colour, in the order traces take them. CIE L* (lightness): 22, 74, 40, 58, 31, 80 - the
# first traces differ most in grey; every colour also has its own dash pattern and marker.
PALETTE = (
    ("ink", "#1d2f6f"),
    ("ochre", "#e0b030"),
    ("brick", "#a83a24"),
    ("pine", "#3a9a7a"),
    ("plum", "#7a2a5a"),
    ("sky", "#8fd0f0"),
)
DASHES = ("-", (0, (6, 2)), (0, (1.5, 1.5)), (0, (6, 2, 1.5, 2)), (0, (3, 1.2)), (0, (8, 2, 1.5, 2, 1.5, 2)))
MARKERS = ("o", "s", "^", "D", "X", "P")  # no downward triangle: it reads as a limit or a fault mark
BAND_FILL = "#e4e4e4"  # light grey: band spans stay visible when printed in black and white
MASK_COLOR = "#222222"
MASK_TINT = "#a83a24"  # the forbidden side of a limit: a light brick tint (alpha below), never hatching
MASK_ALPHA = 0.11
BEST_MARKER = "H"  # matchtool's best-match mark: an open hexagon ringed in the trace's colour
BAND_ROW_PT = 15.0  # height of one row of band brackets above the axes (points)
THRESHOLD_COLOR = "#555555"
LEGEND_TWO_COLUMN_CHARS = 44  # the longest label a two-column legend takes under a 7.2-inch panel
RL_CAP_DB = 60.0  # a return loss above this (or infinite) is drawn at the top of the axis


@dataclass(frozen=True)
class Trace:
    """One sweep ready to draw: ``f_hz`` (Hz), complex ``gamma``, reference ``z0_ohm``, the
    threshold bands it meets (Hz) and the index of its best (smallest |Gamma|) sample."""

    label: str
    f_hz: np.ndarray
    gamma: np.ndarray
    z0_ohm: float
    threshold_bands: list[Band]
    best: int

    @property
    def return_loss_db(self) -> np.ndarray:
        return rf.return_loss_db(self.gamma)

    @property
    def s11_db(self) -> np.ndarray:
        return rf.s11_db(self.gamma)

    @property
    def vswr(self) -> np.ndarray:
        return rf.vswr(self.gamma)

    @property
    def z_ohm(self) -> np.ndarray:
        return rf.impedance_ohm(self.gamma, self.z0_ohm)


@dataclass(frozen=True)
class BandMask:
    """A band to shade (Hz) and, when ``limit_return_loss_db`` is set, its limit drawn as a mask."""

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float | None = None


def trace_from_sweep(sweep: Sweep, threshold_return_loss_db: float, label: str | None = None) -> Trace:
    """Prepare a Sweep for drawing (threshold in positive dB of return loss)."""
    f, g = sweep.f_hz, sweep.gamma
    return Trace(label=label or sweep.name, f_hz=np.asarray(f, dtype=float), gamma=np.asarray(g, dtype=complex),
                 z0_ohm=sweep.z0_ohm, threshold_bands=find_bands(f, rf.return_loss_db(g), threshold_return_loss_db),
                 best=best_index(g))


def trace_from_arrays(label: str, f_hz: np.ndarray, gamma: np.ndarray, z0_ohm: float,
                      threshold_return_loss_db: float) -> Trace:
    """A Trace from plain arrays (Hz, complex Gamma at ``z0_ohm``), e.g. a sweep seen through a network."""
    f, g = np.asarray(f_hz, dtype=float), np.asarray(gamma, dtype=complex)
    return Trace(label=label, f_hz=f, gamma=g, z0_ohm=float(z0_ohm),
                 threshold_bands=find_bands(f, rf.return_loss_db(g), threshold_return_loss_db), best=best_index(g))


def legend_labels(paths: Sequence[str]) -> list[str]:
    """Legend labels from file names: the base name, or the whole path where base names collide."""
    from pathlib import Path

    names = [Path(p).name for p in paths]
    return [n if names.count(n) == 1 else str(p) for n, p in zip(names, paths, strict=True)]


def frequency_unit(f_hz: np.ndarray | Sequence[float]) -> tuple[float, str]:
    """The axis unit that fits a frequency range: ``(scale, name)``, e.g. ``(1e6, 'MHz')``.

    GHz once the top of the range reaches 10 GHz, or reaches 1 GHz with a span of at least 1 GHz
    (2.4-2.5 GHz reads better as 2400-2500 MHz); kHz below 1 MHz; Hz below 1 kHz.
    """
    f = np.asarray(f_hz, dtype=float)
    top, span = float(np.max(f)), float(np.max(f) - np.min(f))
    if top >= 10e9 or (top >= 1e9 and span >= 1e9):
        return 1e9, "GHz"
    if top >= 1e6:
        return 1e6, "MHz"
    if top >= 1e3:
        return 1e3, "kHz"
    return 1.0, "Hz"


def parse_kinds(values: Sequence[str] | None) -> list[str]:
    """``--kind`` values (repeatable, or comma-separated) -> a list of panel kinds, in order."""
    out: list[str] = []
    for v in values or ["return-loss"]:
        for k in (x.strip().lower() for x in str(v).split(",")):
            if not k:
                continue
            if k not in KINDS and k not in FIGURE_KINDS:
                raise UsageError("unknown plot kind", parameter="kind", value=k,
                                 expected=", ".join((*KINDS, *FIGURE_KINDS)))
            if k not in out:
                out.append(k)
    if not out:
        raise UsageError("no plot kind given", parameter="kind", expected=", ".join((*KINDS, *FIGURE_KINDS)))
    alone = [k for k in out if k in FIGURE_KINDS]
    if alone and len(out) > 1:
        raise UsageError("is drawn as a picture of its own", parameter="kind", value=alone[0],
                         expected=f"--kind {alone[0]} alone")
    return out


def output_format(path: str) -> str:
    """The picture format from the output file's extension (png, svg or pdf), else UsageError."""
    from pathlib import Path

    ext = Path(path).suffix.lower().lstrip(".")
    if Path(path).is_dir():
        raise UsageError("is a directory", path=path, expected="a picture file name ending in .png, .svg or .pdf")
    if ext not in FORMATS:
        raise UsageError(f"unknown picture extension {('.' + ext) if ext else '(none)'!r}", path=path,
                         expected="a file name ending in .png, .svg or .pdf")
    return ext


def match_traces(pm, threshold_return_loss_db: float, label: str | None = None) -> list[Trace]:
    """The before/after traces of a ``proposal.ProposedMatch``: the measured sweep, then the
    sweep through the network."""
    from .words import network_text

    name = label or pm.sweep.name
    before = trace_from_sweep(pm.sweep, threshold_return_loss_db, f"{name} measured")
    after = trace_from_arrays(f"{name} + #{pm.pick}: {network_text(pm.candidate.elements)}", pm.sweep.f_hz,
                              pm.gamma_after, pm.result.z0_ohm, threshold_return_loss_db)
    return [before, after]


def match_title(pm, label: str | None = None) -> str:
    """Title naming the network: parts from the radio side, target, worst return loss before -> after."""
    from .words import fixed, network_text, target_text

    r, c = pm.result, pm.candidate
    return (f"Proposed match for {label or pm.sweep.name} {target_text(r)}\n"
            f"radio side first: {network_text(c.elements)}\n"
            f"worst return loss over the target {fixed(r.before_worst_return_loss_db)} dB -> "
            f"{fixed(c.worst_return_loss_db)} dB (network #{pm.pick} of {len(r.candidates)}, {r.series} values)")


# --- matplotlib from here on (imported lazily) ---------------------------------------------------

def _mpl():
    import matplotlib

    if "matplotlib.pyplot" not in sys.modules:
        matplotlib.use("Agg", force=True)
    return matplotlib


def _style() -> dict[str, Any]:
    return {
        "font.size": 9.0, "axes.titlesize": 10.0, "axes.labelsize": 9.0, "legend.fontsize": 8.0,
        "axes.spines.top": False, "axes.spines.right": False, "axes.grid": True, "grid.color": "#c8c8c8",
        "grid.linewidth": 0.6, "grid.linestyle": "-", "axes.edgecolor": "#333333", "axes.axisbelow": True,
        "lines.linewidth": 1.6, "svg.fonttype": "none", "svg.hashsalt": "matchtool", "hatch.linewidth": 0.7,
        "figure.dpi": 100, "savefig.dpi": 150, "pdf.fonttype": 42,
    }


def _look(i: int) -> dict[str, Any]:
    """Colour, dash pattern and marker of the i-th trace; after each round of six colours the
    dashes and markers shift, so the 7th trace does not repeat the look of the 1st."""
    k = i // len(PALETTE)
    return {"color": PALETTE[i % len(PALETTE)][1], "linestyle": DASHES[(i + k) % len(DASHES)],
            "marker": MARKERS[(i + 2 * k) % len(MARKERS)]}


def _markevery(n: int) -> int:
    return max(1, n // 8)


def _best_text(t: Trace, scale: float, unit: str) -> str:
    rl = float(t.return_loss_db[t.best])
    rl_s = "inf" if not np.isfinite(rl) else f"{rl:.1f}"
    return f"{t.label} (best {t.f_hz[t.best] / scale:.4g} {unit}, RL {rl_s} dB)"


def _xlim(ax: Axes, traces: Sequence[Trace], scale: float) -> None:
    """Frequency axis over all sweeps; a single-frequency sweep gets +-1 % around its point."""
    lo = min(float(t.f_hz[0]) for t in traces) / scale
    hi = max(float(t.f_hz[-1]) for t in traces) / scale
    if hi <= lo:
        lo, hi = lo * 0.99, hi * 1.01
    ax.set_xlim(lo, hi)


def _legend_below(ax: Axes, gap: float = 0.13, extra: Sequence[Any] = ()) -> None:
    """Legend under the axes (``gap`` in axes fractions), so it never hides a curve; ``extra``
    handles (the key to the marks) follow the traces."""
    handles, labels = ax.get_legend_handles_labels()
    handles = list(handles) + list(extra)
    labels = list(labels) + [h.get_label() for h in extra]
    n = len(labels)
    # two columns only while the labels are short: long ones (a network's parts) would push the
    # legend past the picture's edges
    two = n > 3 and max((len(x) for x in labels), default=0) <= LEGEND_TWO_COLUMN_CHARS
    ax.legend(handles, labels, loc="upper center", bbox_to_anchor=(0.5, -gap), ncol=2 if two else 1, frameon=False)


def _span(traces: Sequence[Trace]) -> tuple[float, float]:
    """Lowest and highest frequency of all traces (Hz)."""
    return min(float(t.f_hz[0]) for t in traces), max(float(t.f_hz[-1]) for t in traces)


def _shade_bands(ax: Axes, kind: str, bands: Sequence[BandMask], scale: float,
                 span_hz: tuple[float, float] | None = None, limit_text=None) -> int:
    """Shade each band and name it in a bracket above the axes (``|-- name --|`` over the band's
    visible span). Overlapping bands (a band and its guard band) get their brackets on separate
    rows, so each name sits over its own extent. Returns the number of rows used.

    ``limit_text(b)`` adds the band's limit to its name (``ism: RL >= 10 dB``), so no limit label
    sits inside the plot where a marker could hide it."""
    from matplotlib.transforms import offset_copy

    rows: list[list[tuple[float, float]]] = []
    x0, x1 = span_hz if span_hz else (min(b.f_low_hz for b in bands or [BandMask("", 0, 1)]),
                                      max(b.f_high_hz for b in bands or [BandMask("", 0, 1)]))
    axes_pt = max(ax.figure.get_figwidth() * 72.0 * ax.get_position().width, 50.0)
    hz_per_pt = max(x1 - x0, 1.0) / axes_pt
    for b in bands:
        ax.axvspan(b.f_low_hz / scale, b.f_high_hz / scale, facecolor=BAND_FILL, edgecolor="none", zorder=0,
                   gid=f"{kind}:band:{b.name}")
        # the name sits over the part of the band that is on the axis (a band reaching past the
        # sweep keeps its label in view; one wholly outside is drawn but its label is not)
        lo, hi = (max(b.f_low_hz, span_hz[0]), min(b.f_high_hz, span_hz[1])) if span_hz else (b.f_low_hz, b.f_high_hz)
        if hi < lo:
            continue
        text = b.name if limit_text is None or b.limit_return_loss_db is None else f"{b.name}: {limit_text(b)}"
        half = 0.5 * len(text) * 4.3 * hz_per_pt + 2 * hz_per_pt  # DejaVu Sans at 7.5 pt: ~4.3 pt a character
        c = 0.5 * (lo + hi)
        used = (min(lo, c - half), max(hi, c + half))
        row = next((k for k, taken in enumerate(rows) if all(used[1] < a or used[0] > z for a, z in taken)), len(rows))
        if row == len(rows):
            rows.append([])
        rows[row].append(used)
        y_pt = 3.0 + BAND_ROW_PT * row
        tr = offset_copy(ax.get_xaxis_transform(), fig=ax.figure, x=0.0, y=y_pt, units="points")
        bracket = ax.plot([lo / scale, hi / scale], [1.0, 1.0], transform=tr, color="#444444", linewidth=1.2,
                          marker="|", markersize=7, markeredgewidth=1.2, clip_on=False, zorder=7,
                          gid=f"{kind}:bandbracket:{b.name}")
        ann = ax.annotate(text, xy=(c / scale, 1.0), xycoords=("data", "axes fraction"),
                          xytext=(0, y_pt + 2.0), textcoords="offset points", ha="center", va="bottom", fontsize=7.5,
                          color="#333333", gid=f"{kind}:bandlabel:{b.name}", zorder=8, annotation_clip=False)
        ann.set_in_layout(False)
        for a in bracket:
            a.set_in_layout(False)
    return len(rows)


def _lim(x: float) -> str:
    """A limit for a label: one decimal when that is exact (``10.0``), else two (``6.02``)."""
    text = f"{x:.1f}"
    return text if abs(float(text) - x) <= 1e-9 * max(1.0, abs(x)) else f"{x:.2f}"


def _title(ax: Axes, text: str, rows: int) -> None:
    """The panel title above the band brackets."""
    ax.set_title(text, pad=6.0 + BAND_ROW_PT * rows)


def _mask(ax: Axes, kind: str, b: BandMask, scale: float, limit: float, floor: float) -> None:
    """A band's limit: a solid line across the band and a light tint over the forbidden side
    (between the limit and ``floor``). The limit's value is named in the band's bracket."""
    x = np.array([b.f_low_hz, b.f_high_hz]) / scale
    ax.fill_between(x, [limit, limit], [floor, floor], facecolor=MASK_TINT, alpha=MASK_ALPHA, edgecolor="none",
                    linewidth=0.0, zorder=1, gid=f"{kind}:maskfill:{b.name}")
    ax.plot(x, [limit, limit], color=MASK_COLOR, linewidth=2.0, solid_capstyle="butt", zorder=4,
            gid=f"{kind}:mask:{b.name}")


def _best(ax: Axes, kind: str, t: Trace, x: float, y: float, look: dict[str, Any]) -> None:
    """The best-match mark: an open hexagon ringed in the trace's colour (never clipped)."""
    ax.plot([x], [y], linestyle="none", marker=BEST_MARKER, markersize=10, markerfacecolor="white",
            markeredgecolor=look["color"], markeredgewidth=2.2, zorder=6, clip_on=False, gid=f"{kind}:best:{t.label}")
    ax.plot([x], [y], linestyle="none", marker=".", markersize=3.5, color="black", zorder=6.5, clip_on=False)


def key_handles(entries: Sequence[str]) -> list:
    """Legend handles that say what the marks mean, for a picture that stands alone: ``best``,
    ``edges`` (threshold crossings), ``mask`` (beyond a limit), ``band``."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    shapes = {
        "best": lambda: Line2D([], [], linestyle="none", marker=BEST_MARKER, markersize=8, markerfacecolor="white",
                               markeredgecolor="#333333", markeredgewidth=1.8, label="best match of each trace"),
        "edges": lambda: Line2D([], [], linestyle="none", marker="|", markersize=9, markeredgewidth=2.0,
                                color="#333333", label="bars: where a trace crosses the threshold"),
        "mask": lambda: Patch(facecolor=MASK_TINT, alpha=MASK_ALPHA + 0.1, edgecolor=MASK_COLOR,
                              label="tint: beyond a band's limit (line: the limit)"),
        "band": lambda: Patch(facecolor=BAND_FILL, edgecolor="none", label="grey: a band (named above the plot)"),
    }
    return [shapes[e]() for e in entries]


def draw_db(ax: Axes, traces: Sequence[Trace], threshold_return_loss_db: float, bands: Sequence[BandMask] = (),
            convention: str = "return-loss", explain: bool = False) -> None:
    """Return loss (positive dB, ``convention='return-loss'``) or S11 dB (``'s11-db'``) against
    frequency, with the threshold line, shaded bands with their limit masks, the threshold-band
    edges of each trace and its best sample."""
    kind = convention
    sign = 1.0 if convention == "return-loss" else -1.0
    scale, unit = frequency_unit(np.concatenate([t.f_hz for t in traces]))
    finite = np.concatenate([t.return_loss_db[np.isfinite(t.return_loss_db)] for t in traces] + [np.array([0.0])])
    top = float(min(RL_CAP_DB, max(threshold_return_loss_db + 10.0, np.max(finite) + 3.0)))
    lowest = float(np.min(finite))
    bottom = 0.0 if lowest >= 0 else lowest - 1.0  # below 0 only for |Gamma| > 1 (not passive)
    def words(b: BandMask) -> str:
        lim = b.limit_return_loss_db
        return f"RL >= {_lim(lim)} dB" if sign > 0 else f"S11 <= {_lim(-lim)} dB"

    rows = _shade_bands(ax, kind, bands, scale, _span(traces), words)
    for b in bands:
        if b.limit_return_loss_db is not None:
            _mask(ax, kind, b, scale, sign * b.limit_return_loss_db, 0.0)
    ax.axhline(sign * threshold_return_loss_db, color=THRESHOLD_COLOR, linestyle=(0, (4, 2, 1, 2)), linewidth=1.1,
               zorder=2, gid=f"{kind}:threshold",
               label=(f"threshold RL {threshold_return_loss_db:.1f} dB" if sign > 0
                      else f"threshold S11 {-threshold_return_loss_db:.1f} dB"))
    for i, t in enumerate(traces):
        look = _look(i)
        y = sign * t.return_loss_db
        ax.plot(t.f_hz / scale, y, color=look["color"], linestyle=look["linestyle"], marker=look["marker"],
                markersize=3.5, markevery=_markevery(t.f_hz.size), zorder=3, label=_best_text(t, scale, unit),
                gid=f"{kind}:trace:{t.label}")
        _mark_unbounded(ax, kind, t, t.f_hz / scale, np.isposinf(t.return_loss_db), sign * top, look,
                        "|Γ| = 0 (return loss infinite)")
        yb = float(np.clip(t.return_loss_db[t.best], bottom, top)) * sign
        _best(ax, kind, t, t.f_hz[t.best] / scale, yb, look)
        edges = [e for b in t.threshold_bands for e, clipped in ((b.f_low_hz, b.clipped_low), (b.f_high_hz, b.clipped_high))
                 if not clipped]
        if edges:
            ax.plot(np.array(edges) / scale, np.full(len(edges), sign * threshold_return_loss_db), linestyle="none",
                    marker="|", markersize=11, markeredgewidth=2.0, color=look["color"], zorder=5,
                    gid=f"{kind}:edges:{t.label}")
    ax.set_xlabel(f"Frequency ({unit})")
    if sign > 0:
        ax.set_ylim(bottom, top)
        ax.set_ylabel("Return loss (dB, positive)\nRL = -20 log10|Γ|; higher is better")
        _title(ax, "Return loss (= -S11 dB)", rows)
    else:
        ax.set_ylim(-top, -bottom)
        ax.set_ylabel("S11 (dB) = -return loss\nlower is better")
        _title(ax, "S11 magnitude in dB (= -return loss)", rows)
    _xlim(ax, traces, scale)
    has_edges = any(b.f_low_hz for t in traces for b in t.threshold_bands)
    keys = ["best"] + (["edges"] if has_edges else []) + (["band"] if bands else []) + (
        ["mask"] if any(b.limit_return_loss_db is not None for b in bands) else [])
    _legend_below(ax, extra=key_handles(keys) if explain else ())


def _mark_unbounded(ax: Axes, kind: str, t: Trace, x: np.ndarray, unbounded: np.ndarray, y_top: float,
                    look: dict[str, Any], what: str) -> None:
    """Samples whose value is infinite cannot be drawn; mark them on the top edge of the axes (a
    thick segment in the trace's colour over each run, with up-pointing markers) and say so in the
    legend, so the gap in the curve reads as 'off the scale', not as missing data."""
    idx = np.flatnonzero(unbounded)
    if idx.size == 0:
        return
    xs = np.where(unbounded, x, np.nan)  # NaN breaks the segment between runs
    ax.plot(xs, np.full(x.size, y_top), color=look["color"], linewidth=4.0, solid_capstyle="butt", clip_on=False,
            zorder=6, gid=f"{kind}:unbounded:{t.label}")
    ax.plot(x[idx], np.full(idx.size, y_top), linestyle="none", marker="^", markersize=6,
            markerfacecolor=look["color"], markeredgecolor="black", clip_on=False, zorder=7,
            markevery=max(1, idx.size // 6), label=f"{t.label}: {what} at {idx.size} sample(s), marked at the top")


def draw_vswr(ax: Axes, traces: Sequence[Trace], threshold_return_loss_db: float,
              bands: Sequence[BandMask] = (), explain: bool = False) -> None:
    """VSWR against frequency (infinite VSWR drawn at the top of the axis), threshold and masks."""
    scale, unit = frequency_unit(np.concatenate([t.f_hz for t in traces]))
    thr_v = float(rf.vswr(rf.gamma_mag_from_return_loss(threshold_return_loss_db)))
    finite = np.concatenate([t.vswr[np.isfinite(t.vswr)] for t in traces] + [np.array([1.0])])
    top = float(min(10.0, max(2.0 * thr_v, np.max(finite) * 1.05)))
    def vswr_of(b: BandMask) -> float:
        return float(rf.vswr(rf.gamma_mag_from_return_loss(b.limit_return_loss_db)))

    rows = _shade_bands(ax, "vswr", bands, scale, _span(traces), lambda b: f"VSWR <= {_lim(vswr_of(b))}")
    for b in bands:
        if b.limit_return_loss_db is not None:
            _mask(ax, "vswr", b, scale, vswr_of(b), top)
    ax.axhline(thr_v, color=THRESHOLD_COLOR, linestyle=(0, (4, 2, 1, 2)), linewidth=1.1, zorder=2,
               gid="vswr:threshold", label=f"threshold VSWR {thr_v:.2f} (RL {threshold_return_loss_db:.1f} dB)")
    for i, t in enumerate(traces):
        look = _look(i)
        ax.plot(t.f_hz / scale, t.vswr, color=look["color"], linestyle=look["linestyle"], marker=look["marker"],
                markersize=3.5, markevery=_markevery(t.f_hz.size), zorder=3, label=t.label, gid=f"vswr:trace:{t.label}")
        _best(ax, "vswr", t, t.f_hz[t.best] / scale, min(float(t.vswr[t.best]), top), look)
        _mark_unbounded(ax, "vswr", t, t.f_hz / scale, ~np.isfinite(t.vswr), top, look,
                        "|Γ| >= 1 (VSWR infinite)")
    ax.set_ylim(1.0, top)  # the best-match mark is not clipped, so a VSWR near 1 stays whole at the floor
    _xlim(ax, traces, scale)
    ax.set_xlabel(f"Frequency ({unit})")
    ax.set_ylabel("VSWR (ratio); lower is better")
    _title(ax, "VSWR", rows)
    keys = ["best"] + (["band"] if bands else []) + (
        ["mask"] if any(b.limit_return_loss_db is not None for b in bands) else [])
    _legend_below(ax, extra=key_handles(keys) if explain else ())


def _gamma_at(t: Trace, f_hz: float) -> complex | None:
    if not (t.f_hz[0] <= f_hz <= t.f_hz[-1]):
        return None
    return complex(np.interp(f_hz, t.f_hz, t.gamma.real) + 1j * np.interp(f_hz, t.f_hz, t.gamma.imag))


EDGE_MARKERS = ("s", "D", "o", "p", "8", "d")
"""Band-edge marks on the Smith chart, one shape per band (open, in the trace's colour)."""


def draw_smith(ax: Axes, traces: Sequence[Trace], threshold_return_loss_db: float,
               bands: Sequence[BandMask] = (), explain: bool = False) -> None:
    """Impedance Smith chart (scikit-rf's grid) of Gamma, the threshold circle |Gamma| = const,
    markers at each band's edges (interpolated in complex Gamma) and at each trace's best sample.
    Without bands, the edges of each trace's threshold bands are marked instead.

    The edge frequencies are not written on the chart (they would overprint each other and the
    grid's labels): each band has its own marker shape, named with its edges in the legend."""
    import skrf.plotting
    from matplotlib.lines import Line2D

    skrf.plotting.smith(ax=ax, chart_type="z", draw_labels=True)
    g_thr = float(rf.gamma_mag_from_return_loss(threshold_return_loss_db))
    phi = np.linspace(0, 2 * np.pi, 361)
    ax.plot(g_thr * np.cos(phi), g_thr * np.sin(phi), color=THRESHOLD_COLOR, linestyle=(0, (4, 2, 1, 2)),
            linewidth=1.1, gid="smith:threshold", label=f"|Γ| = {g_thr:.3f} (RL {threshold_return_loss_db:.1f} dB)")
    scale, unit = frequency_unit(np.concatenate([t.f_hz for t in traces]))
    shapes: dict[str, tuple[str, list[float]]] = {}
    for i, t in enumerate(traces):
        look = _look(i)
        ax.plot(t.gamma.real, t.gamma.imag, color=look["color"], linestyle=look["linestyle"], linewidth=1.5,
                label=t.label, gid=f"smith:trace:{t.label}")
        gb = t.gamma[t.best]
        _best(ax, "smith", t, gb.real, gb.imag, look)
        if bands:
            marks = [(b.name, f) for b in bands for f in (b.f_low_hz, b.f_high_hz)]
        else:
            # a trace's short name (before the parts list of a matched trace) keeps the legend narrow
            marks = [(f"{t.label.split(':')[0]} band {k + 1}" if len(traces) > 1 else f"band {k + 1}", f)
                     for k, b in enumerate(t.threshold_bands) for f in (b.f_low_hz, b.f_high_hz)]
        for name in dict.fromkeys(m[0] for m in marks):
            pts = [(f, _gamma_at(t, f)) for n, f in marks if n == name]
            pts = [(f, g) for f, g in pts if g is not None]
            if not pts:
                continue
            if name not in shapes:
                shapes[name] = (EDGE_MARKERS[len(shapes) % len(EDGE_MARKERS)], list(dict.fromkeys(f for f, _ in pts)))
            ax.plot([g.real for _, g in pts], [g.imag for _, g in pts], linestyle="none", marker=shapes[name][0],
                    markersize=6.5, markerfacecolor="white", markeredgecolor=look["color"], markeredgewidth=1.6,
                    zorder=6, gid=f"smith:bandedge:{name}:{t.label}")
    extra = [Line2D([], [], linestyle="none", marker=m, markersize=6.5, markerfacecolor="white",
                    markeredgecolor="#333333", markeredgewidth=1.4,
                    label=f"{name} edges: {' / '.join(f'{f / scale:.6g}' for f in fs)} {unit}")
             for name, (m, fs) in shapes.items()]
    if explain:
        extra += key_handles(["best"])
    ax.set_title(f"Smith chart (impedance, Z0 = {traces[0].z0_ohm:g} ohm)")
    _legend_below(ax, 0.06, extra)


def draw_impedance(ax: Axes, traces: Sequence[Trace], bands: Sequence[BandMask] = ()) -> None:
    """Series resistance R (solid) and reactance X (dashed) in ohms against frequency, with the
    reference impedance and X = 0 drawn as guides."""
    scale, unit = frequency_unit(np.concatenate([t.f_hz for t in traces]))
    rows = _shade_bands(ax, "impedance", bands, scale, _span(traces))
    ax.axhline(traces[0].z0_ohm, color=THRESHOLD_COLOR, linestyle=(0, (4, 2, 1, 2)), linewidth=1.0,
               gid="impedance:z0", label=f"R = Z0 = {traces[0].z0_ohm:g} ohm")
    ax.axhline(0.0, color="#888888", linewidth=0.8, gid="impedance:zero")
    ys = []
    for i, t in enumerate(traces):
        look = _look(i)
        z = t.z_ohm
        me = _markevery(t.f_hz.size)
        ax.plot(t.f_hz / scale, z.real, color=look["color"], linestyle="-", marker=look["marker"], markersize=3.5,
                markevery=me, label=f"{t.label} R", gid=f"impedance:r:{t.label}")
        ax.plot(t.f_hz / scale, z.imag, color=look["color"], linestyle=(0, (5, 2)), marker=look["marker"],
                markersize=3.5, markevery=me, markerfacecolor="white", label=f"{t.label} X",
                gid=f"impedance:x:{t.label}")
        ys.append(np.concatenate([z.real[np.isfinite(z.real)], z.imag[np.isfinite(z.imag)]]))
    y = np.concatenate(ys + [np.array([0.0, traces[0].z0_ohm])])
    lo, hi = np.percentile(y, [1, 99])
    pad = 0.08 * (hi - lo + 1.0)
    ax.set_ylim(min(lo, 0.0) - pad, max(hi, traces[0].z0_ohm) + pad)
    _xlim(ax, traces, scale)
    ax.set_xlabel(f"Frequency ({unit})")
    ax.set_ylabel("Impedance (ohm): R solid, X dashed")
    _title(ax, "Impedance Z = R + jX (X > 0 inductive)", rows)
    _legend_below(ax)


def figure(traces: Sequence[Trace], kinds: Sequence[str], threshold_return_loss_db: float,
           bands: Sequence[BandMask] = (), title: str | None = None, explain: bool = True) -> Figure:
    """Build one Figure with a panel per kind (``KINDS``), in order; returns the Figure.

    ``explain`` adds a key under the panels that says what the marks mean (for a picture that
    stands alone; the report's captions say it instead)."""
    if not traces:
        raise UsageError("nothing to plot", expected="at least one sweep")
    kinds = parse_kinds(kinds)
    _mpl()
    from matplotlib import rc_context
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    n = len(kinds)
    cols = 1 if n == 1 else 2
    rows = (n + cols - 1) // cols
    with rc_context(_style()):
        fig = Figure(figsize=(7.2 * cols, 5.0 * rows), layout="constrained")
        FigureCanvasAgg(fig)
        grid = fig.add_gridspec(rows, cols)
        for k, kind in enumerate(kinds):
            r, c = divmod(k, cols)
            # an odd panel count: the last panel takes its whole row (no empty cell beside it)
            ax = fig.add_subplot(grid[r, :] if (k == n - 1 and n % cols) else grid[r, c])
            ax.set_gid(f"panel:{kind}")
            if kind in ("return-loss", "s11-db"):
                draw_db(ax, traces, threshold_return_loss_db, bands, kind, explain)
            elif kind == "vswr":
                draw_vswr(ax, traces, threshold_return_loss_db, bands, explain)
            elif kind == "smith":
                draw_smith(ax, traces, threshold_return_loss_db, bands, explain)
            else:
                draw_impedance(ax, traces, bands)
        if title:
            fig.suptitle(title, fontsize=11)
    return fig


def figure_bytes(fig: Figure, fmt: str) -> bytes:
    """Render a Figure to PNG, SVG or PDF bytes (SVG keeps text as text; no date stamps)."""
    if fmt not in FORMATS:
        raise UsageError(f"unknown picture format {fmt!r}", expected=", ".join(FORMATS))
    _mpl()
    from matplotlib import rc_context

    meta = {"png": {"Software": "matchtool"}, "svg": {"Date": None, "Creator": "matchtool"},
            "pdf": {"CreationDate": None, "Creator": "matchtool"}}[fmt]
    buf = io.BytesIO()
    with rc_context(_style()):
        fig.savefig(buf, format=fmt, metadata=meta)
    return buf.getvalue()

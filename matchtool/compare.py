"""Revisions side by side: resonance, threshold bandwidth and per-band worst cases, with deltas
against a baseline sweep (pure computation; no rendering).

Conventions: return loss is positive dB (RL = -20 log10 |Gamma|); ``best`` is the measured sample
with the smallest |Gamma|; the worst case over a band includes the band-edge values interpolated
linearly in complex Gamma between the bracketing samples, so a coarse sweep cannot miss its edges.

Per-band values come from :func:`band_worst`, which takes plain ``(name, f_low_hz, f_high_hz,
limit_return_loss_db)`` tuples, so any source of bands (``--band`` options, a spec file) can feed it.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

import numpy as np

from . import reflection as rf
from .bands import Band, band_containing, band_samples, find_bands
from .errors import UsageError
from .summary import best_index
from .sweep import Sweep

BandSpec = tuple[str, float, float, float | None]
"""``(name, f_low_hz, f_high_hz, limit_return_loss_db)``; the limit (positive dB) may be None."""


@dataclass(frozen=True)
class BandWorst:
    """The worst case of one sweep over one band. Frequencies in Hz, losses in positive dB.

    ``covered`` is False when the sweep does not span the whole band; the worst values are then
    None and ``reason`` says why. ``passed`` is None when the band has no limit.
    """

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float | None
    covered: bool
    samples: int = 0
    worst_return_loss_db: float | None = None
    worst_f_hz: float | None = None
    worst_mismatch_loss_db: float | None = None
    reason: str = ""

    @property
    def worst_s11_db(self) -> float | None:
        """S11 in dB at the worst point (the negative of the worst return loss)."""
        return None if self.worst_return_loss_db is None else -self.worst_return_loss_db

    @property
    def margin_db(self) -> float | None:
        """Worst return loss minus the limit (positive when passing); None without a limit or coverage."""
        if self.limit_return_loss_db is None or self.worst_return_loss_db is None:
            return None
        return self.worst_return_loss_db - self.limit_return_loss_db

    @property
    def passed(self) -> bool | None:
        """True/False against the limit; None without a limit. An uncovered band fails its limit."""
        if self.limit_return_loss_db is None:
            return None
        if not self.covered:
            return False
        return bool(self.margin_db >= 0)


def band_worst(f_hz: np.ndarray, gamma: np.ndarray, bands: Iterable[BandSpec]) -> list[BandWorst]:
    """Worst return loss (largest |Gamma|) and its mismatch loss over each band.

    ``f_hz`` strictly increasing (Hz), ``gamma`` the complex reflection coefficient at each sample.
    Each band is ``(name, f_low_hz, f_high_hz, limit_return_loss_db or None)``. The band edges are
    included, interpolated linearly in complex Gamma. A band not wholly inside the sweep is
    reported as not covered (never extrapolated).
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma, dtype=complex)
    out = []
    for name, lo, hi, limit in bands:
        lo, hi = float(lo), float(hi)
        if not hi > lo:
            raise UsageError(f"band {name!r} has its high edge at or below its low edge", expected="LOW < HIGH")
        lim = None if limit is None else float(limit)
        if lo < f[0] or hi > f[-1]:
            out.append(BandWorst(name, lo, hi, lim, covered=False,
                                 reason=f"the sweep ({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz) does not cover "
                                        f"{lo / 1e6:.6g} to {hi / 1e6:.6g} MHz"))
            continue
        fb, gb = band_samples(f, g, lo, hi)
        mag = np.abs(gb)
        k = int(np.argmax(mag))
        out.append(BandWorst(name, lo, hi, lim, covered=True, samples=int(((f >= lo) & (f <= hi)).sum()),
                             worst_return_loss_db=float(rf.return_loss_db(mag[k])), worst_f_hz=float(fb[k]),
                             worst_mismatch_loss_db=float(rf.mismatch_loss_db(mag[k]))))
    return out


@dataclass(frozen=True)
class Revision:
    """One sweep's row in a comparison (Hz, positive dB). Deltas are this minus the baseline."""

    file: str
    best_f_hz: float
    best_return_loss_db: float
    band: Band | None
    bands: list[BandWorst]
    delta_best_f_hz: float
    delta_bandwidth_hz: float | None
    delta_worst_return_loss_db: list[float | None]
    is_baseline: bool = False

    @property
    def bandwidth_hz(self) -> float | None:
        """Width of the threshold band that holds the best sample; None when the best misses it."""
        return None if self.band is None else self.band.bandwidth_hz


@dataclass(frozen=True)
class BandVerdict:
    """Which revision has the highest worst-case return loss over one band."""

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float | None
    best_file: str | None
    best_worst_return_loss_db: float | None
    passing_files: list[str]
    uncovered_files: list[str]

    def sentence(self, names: dict[str, str] | None = None) -> str:
        """One line for a terminal or a report; ``names`` maps file paths to display names."""
        def nm(path: str) -> str:
            return (names or {}).get(path, path)

        span = self.name
        if self.name != band_name(self.f_low_hz, self.f_high_hz):
            span += f" ({self.f_low_hz / 1e6:.6g} to {self.f_high_hz / 1e6:.6g} MHz)"
        if self.best_file is None:
            return f"{span}: no sweep covers this band"
        text = f"{span}: best is {nm(self.best_file)} (worst return loss {self.best_worst_return_loss_db:.2f} dB"
        if self.limit_return_loss_db is not None:
            text += f"; limit {self.limit_return_loss_db:.2f} dB, {len(self.passing_files)} passing"
        text += ")"
        if self.uncovered_files:
            text += f"; not covered by {', '.join(nm(f) for f in self.uncovered_files)}"
        return text


@dataclass(frozen=True)
class Comparison:
    """The whole comparison: rows in order (the baseline first), per-band verdicts."""

    baseline: str
    threshold_return_loss_db: float
    rows: list[Revision]
    verdicts: list[BandVerdict]
    warnings: list[str] = field(default_factory=list)


def _threshold_band(f: np.ndarray, g: np.ndarray, threshold_db: float) -> tuple[int, Band | None]:
    i = best_index(g)
    bands = find_bands(f, rf.return_loss_db(g), threshold_db)
    return i, band_containing(bands, float(f[i]))


def order_with_baseline(paths: Sequence[str], baseline: str | None) -> list[str]:
    """Input order with the baseline first: ``baseline`` moves to the front (added if absent)."""
    paths = list(paths)
    if baseline is None:
        return paths
    return [baseline] + [p for p in paths if p != baseline]


def compare(sweeps: Sequence[Sweep], threshold_return_loss_db: float = 10.0,
            bands: Iterable[BandSpec] = ()) -> Comparison:
    """Compare ``sweeps`` against the first one (the baseline).

    For each sweep: the best sample (frequency, return loss), the threshold band holding it
    (``threshold_return_loss_db`` positive dB), the worst case over each band, and the deltas
    against the baseline (``delta = this - baseline``; None where either side has no band).
    """
    if not sweeps:
        raise UsageError("nothing to compare", expected="at least one sweep")
    bands = list(bands)
    rows: list[Revision] = []
    warnings: list[str] = []
    for sw in sweeps:
        warnings.extend(sw.warnings)
        f, g = sw.f_hz, sw.gamma
        i, band = _threshold_band(f, g, threshold_return_loss_db)
        worst = band_worst(f, g, bands)
        for w in worst:
            if not w.covered:
                warnings.append(f"{sw.path}: band {w.name!r}: {w.reason}")
            elif w.samples < 3:
                warnings.append(f"{sw.path}: band {w.name!r} holds only {w.samples} sample(s); "
                                "the worst case between samples is interpolated")
        if band is not None and (band.clipped_low or band.clipped_high):
            warnings.append(f"{sw.path}: the threshold band runs past the end of the sweep; "
                            "its bandwidth is a lower bound")
        base = rows[0] if rows else None
        bw = None if band is None else band.bandwidth_hz
        if base is None:
            d_f, d_bw = 0.0, (0.0 if bw is not None else None)
            d_worst = [0.0 if w.worst_return_loss_db is not None else None for w in worst]
        else:
            d_f = float(f[i]) - base.best_f_hz
            d_bw = None if (bw is None or base.bandwidth_hz is None) else bw - base.bandwidth_hz
            d_worst = [None if (w.worst_return_loss_db is None or b.worst_return_loss_db is None)
                       else w.worst_return_loss_db - b.worst_return_loss_db for w, b in zip(worst, base.bands, strict=True)]
        rows.append(Revision(file=sw.path, best_f_hz=float(f[i]), best_return_loss_db=float(rf.return_loss_db(g[i])),
                             band=band, bands=worst, delta_best_f_hz=d_f, delta_bandwidth_hz=d_bw,
                             delta_worst_return_loss_db=d_worst, is_baseline=base is None))
    verdicts = []
    for k, (name, lo, hi, limit) in enumerate(bands):
        cand = [(r.bands[k].worst_return_loss_db, r.file) for r in rows if r.bands[k].covered]
        best = max(cand, key=lambda c: c[0]) if cand else None  # first wins a tie
        verdicts.append(BandVerdict(
            name=name, f_low_hz=float(lo), f_high_hz=float(hi), limit_return_loss_db=None if limit is None else float(limit),
            best_file=None if best is None else best[1], best_worst_return_loss_db=None if best is None else best[0],
            passing_files=[r.file for r in rows if r.bands[k].passed],
            uncovered_files=[r.file for r in rows if not r.bands[k].covered]))
    return Comparison(baseline=rows[0].file, threshold_return_loss_db=float(threshold_return_loss_db), rows=rows,
                      verdicts=verdicts, warnings=warnings)


def band_name(f_low_hz: float, f_high_hz: float) -> str:
    """A default name for a band given only by its edges: ``902-928 MHz``."""
    def mhz(x: float) -> str:
        return f"{x / 1e6:.6g}"
    return f"{mhz(f_low_hz)}-{mhz(f_high_hz)} MHz"


"""Revisions side by side: resonance, threshold bandwidth and per-band worst cases, with deltas
against a baseline sweep (pure computation; no rendering).

Conventions: return loss is positive dB (RL = -20 log10 |Gamma|); ``best`` is the measured sample
with the smallest |Gamma|; the worst case over a band includes the band-edge values interpolated
linearly in complex Gamma between the bracketing samples, so a coarse sweep cannot miss its edges.

Ad-hoc bands (``--band``) go through :func:`band_worst`, which takes plain ``(name, f_low_hz,
f_high_hz, limit_return_loss_db)`` tuples. A spec file is evaluated by :func:`matchtool.spec.evaluate`
itself, so every requirement of a revision (band limits in the units of their key, mismatch loss,
resonance window, golden deviation) is exactly what ``matchtool check`` reports for that file;
:func:`spec_verdicts` then names the best revision per requirement.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from . import reflection as rf
from .bands import Band, band_containing, band_samples, find_bands, sweep_covers
from .errors import UsageError
from .summary import best_index
from .sweep import Sweep

if TYPE_CHECKING:  # pragma: no cover
    from .spec import RequirementResult, Spec, UnitResult

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
    reported as not covered (never extrapolated); as in ``matchtool check``, an edge within
    1e-9 (relative) of the sweep's end counts as inside (the rounding of a file's frequency unit).
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma, dtype=complex)
    out = []
    for name, lo, hi, limit in bands:
        lo, hi = float(lo), float(hi)
        if not hi > lo:
            raise UsageError(f"band {name!r} has its high edge at or below its low edge", expected="LOW < HIGH")
        lim = None if limit is None else float(limit)
        if not sweep_covers(f, lo, hi):
            out.append(BandWorst(name, lo, hi, lim, covered=False,
                                 reason=f"the sweep ({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz) does not cover "
                                        f"{lo / 1e6:.6g} to {hi / 1e6:.6g} MHz"))
            continue
        fb, gb = band_samples(f, g, max(lo, f[0]), min(hi, f[-1]))
        fb[0], fb[-1] = lo, hi  # the band's own edges (they differ from the sweep's by rounding only)
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
    spec: UnitResult | None = None
    """The spec verdicts of this file (``matchtool.spec.evaluate``), when a spec was given."""
    delta_margin: list[float | None] = field(default_factory=list)
    """Per spec requirement: this file's margin minus the baseline's (``margin_db``, or
    ``margin_hz`` for the resonance window); None where either was not evaluated."""

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


def requirement_margin(r: RequirementResult) -> float | None:
    """The margin that ranks revisions on one requirement: ``margin_db`` (dB, positive when
    passing), or ``margin_hz`` for the resonance window (Hz inside the window); None if not evaluated."""
    return r.margin_db if r.margin_db is not None else r.margin_hz


@dataclass(frozen=True)
class RequirementVerdict:
    """Which revision does best on one spec requirement (the largest margin; the first wins a tie)."""

    name: str
    key: str
    unit: str
    best_file: str | None
    best: RequirementResult | None
    passing_files: list[str]
    failing_files: list[str]
    unevaluated_files: list[str]

    def sentence(self, names: dict[str, str] | None = None) -> str:
        """One line: ``ism: best is r3.s1p (worst 12.31 dB return loss at 915 MHz, margin +2.31 dB); 2 of 3 pass``."""
        def nm(path: str) -> str:
            return (names or {}).get(path, path)

        n = len(self.passing_files) + len(self.failing_files)
        if self.best is None or self.best_file is None:
            return f"{self.name}: no revision could be evaluated ({'; '.join(nm(f) for f in self.unevaluated_files)})"
        b = self.best
        if self.key == "resonance":
            what = (f"best match at {b.worst / 1e6:.6g} MHz, {b.margin_hz / 1e6:+.3f} MHz from the nearer edge "
                    f"of {b.f_low_hz / 1e6:.6g}-{b.f_high_hz / 1e6:.6g} MHz")
        else:
            d = 3 if self.key == "max_vswr" else 2
            what = (f"worst {b.worst:.{d}f} {self.unit} at {b.worst_f_hz / 1e6:.6g} MHz, limit {b.limit:.{d}f}, "
                    f"margin {b.margin_db:+.2f} dB")
        text = f"{self.name}: best is {nm(self.best_file)} ({what}); {len(self.passing_files)} of {n} pass"
        if self.failing_files:
            text += f" (failing: {', '.join(nm(f) for f in self.failing_files)})"
        return text


def spec_verdicts(units: Sequence[UnitResult]) -> list[RequirementVerdict]:
    """Per requirement (in the spec's order), the revision with the largest margin.

    ``units`` are the :class:`matchtool.spec.UnitResult` of each revision against one spec, so
    they list the same requirements in the same order. A requirement that could not be evaluated
    for a file (band not covered) fails and does not compete for best.
    """
    if not units:
        return []
    out = []
    for k, first in enumerate(units[0].requirements):
        cand = [(requirement_margin(u.requirements[k]), i) for i, u in enumerate(units)
                if requirement_margin(u.requirements[k]) is not None]
        best_i = max(cand, key=lambda c: (c[0], -c[1]))[1] if cand else None
        out.append(RequirementVerdict(
            name=first.name, key=first.key, unit=first.unit,
            best_file=None if best_i is None else units[best_i].file,
            best=None if best_i is None else units[best_i].requirements[k],
            passing_files=[u.file for u in units if u.requirements[k].passed],
            failing_files=[u.file for u in units if not u.requirements[k].passed],
            unevaluated_files=[u.file for u in units if requirement_margin(u.requirements[k]) is None]))
    return out


@dataclass(frozen=True)
class Comparison:
    """The whole comparison: rows in order (the baseline first), per-band verdicts."""

    baseline: str
    threshold_return_loss_db: float
    rows: list[Revision]
    verdicts: list[BandVerdict]
    warnings: list[str] = field(default_factory=list)
    spec_path: str | None = None
    spec_verdicts: list[RequirementVerdict] = field(default_factory=list)

    @property
    def spec_failed(self) -> bool:
        """True when a spec was given and some requirement of some revision failed."""
        return any(r.spec is not None and not r.spec.passed for r in self.rows)


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
            bands: Iterable[BandSpec] = (), spec: Spec | None = None) -> Comparison:
    """Compare ``sweeps`` against the first one (the baseline).

    For each sweep: the best sample (frequency, return loss), the threshold band holding it
    (``threshold_return_loss_db`` positive dB), the worst case over each band, and the deltas
    against the baseline (``delta = this - baseline``; None where either side has no band).
    With ``spec`` each sweep is also evaluated by :func:`matchtool.spec.evaluate` (load the
    sweeps with ``spec.port`` and ``spec.z0_ohm``), and the best revision per requirement named.
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
        unit = None
        if spec is not None:
            from .spec import evaluate

            unit = evaluate(sw, spec)
            warnings.extend(w for w in unit.warnings if w not in sw.warnings)
        base = rows[0] if rows else None
        d_margin: list[float | None] = []
        if unit is not None:
            base_reqs = unit.requirements if base is None else base.spec.requirements
            d_margin = [None if (requirement_margin(a) is None or requirement_margin(b) is None)
                        else requirement_margin(a) - requirement_margin(b)
                        for a, b in zip(unit.requirements, base_reqs, strict=True)]
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
                             delta_worst_return_loss_db=d_worst, is_baseline=base is None, spec=unit,
                             delta_margin=d_margin))
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
                      verdicts=verdicts, warnings=warnings, spec_path=None if spec is None else spec.path,
                      spec_verdicts=[] if spec is None else spec_verdicts([r.spec for r in rows]))


def band_name(f_low_hz: float, f_high_hz: float) -> str:
    """A default name for a band given only by its edges: ``902-928 MHz``."""
    def mhz(x: float) -> str:
        return f"{x / 1e6:.6g}"
    return f"{mhz(f_low_hz)}-{mhz(f_high_hz)} MHz"


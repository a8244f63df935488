"""Revisions side by side: resonance, threshold bands and per-band worst cases, with deltas
against a baseline sweep (pure computation; the sentences and tables are built in ``render/``).

Entry point: :func:`revisions`. Conventions: return loss is positive dB (RL = -20 log10 |Gamma|);
``best`` is the measured sample with the smallest |Gamma|; the worst case over a band includes
the band-edge values interpolated linearly in complex Gamma between the bracketing samples, so a
coarse sweep cannot miss its edges. Deltas are always *this revision minus the baseline*.

Bands of interest are :class:`BandOfInterest` (an optional limit as a minimum return loss);
``(name, f_low_hz, f_high_hz, limit)`` tuples and :class:`matchtool.spec.BandSpec` objects are
accepted too. A spec file is evaluated by :func:`matchtool.spec.evaluate` itself, so every
requirement of a revision is exactly what ``matchtool check`` reports for that file;
:func:`spec_verdicts` then names the best revision per requirement.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from . import reflection as rf
from .bands import Band, band_containing, band_samples, search_bands, sweep_covers
from .errors import UsageError
from .summary import best_index
from .sweep import Sweep, as_sweep

if TYPE_CHECKING:  # pragma: no cover
    from .spec import RequirementResult, Spec, UnitResult


@dataclass(frozen=True)
class BandOfInterest:
    """A band to evaluate (Hz) with an optional limit as a minimum return loss (positive dB).

    :class:`matchtool.spec.BandSpec` cannot stand in for it: a spec band always carries a limit,
    while a band of interest may have none (it is then only measured, never judged)."""

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float | None = None

    def __iter__(self):  # unpacks like the (name, low, high, limit) tuples callers used before
        return iter((self.name, self.f_low_hz, self.f_high_hz, self.limit_return_loss_db))


BandSpec = BandOfInterest
"""Former name (a tuple alias); kept for callers."""


def as_band(b: Any) -> BandOfInterest:
    """A :class:`BandOfInterest` from one, a ``(name, low, high, limit)`` tuple or a spec BandSpec
    (whose limit, in any of its keys, becomes the equivalent minimum return loss)."""
    if isinstance(b, BandOfInterest):
        return b
    if hasattr(b, "min_return_loss_db") and hasattr(b, "limit_key"):
        return BandOfInterest(b.name, float(b.f_low_hz), float(b.f_high_hz), float(b.min_return_loss_db))
    name, lo, hi, limit = b
    return BandOfInterest(str(name), float(lo), float(hi), None if limit is None else float(limit))


@dataclass(frozen=True)
class BandWorst:
    """The worst case of one sweep over one band. Frequencies in Hz, losses in positive dB.

    ``covered`` is False when the sweep does not span the whole band; the worst values are then
    None and ``reason`` (a one-line warning) says why. ``passed`` is None when the band has no limit.
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
        """Worst return loss minus the limit (dB, positive when passing); None without a limit or coverage."""
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


def band_worst(f_hz: np.ndarray, gamma: np.ndarray, bands: Iterable[Any]) -> list[BandWorst]:
    """Worst return loss (largest |Gamma|) and its mismatch loss over each band.

    ``f_hz`` strictly increasing (Hz), ``gamma`` the complex reflection coefficient at each sample.
    Each band is a :class:`BandOfInterest` (or what :func:`as_band` accepts). The band edges are
    included, interpolated linearly in complex Gamma (:func:`matchtool.bands.band_samples`). A band
    not wholly inside the sweep (:func:`matchtool.bands.sweep_covers`) is reported as not covered
    (never extrapolated).
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma, dtype=complex)
    out = []
    for b in map(as_band, bands):
        lo, hi = b.f_low_hz, b.f_high_hz
        if not hi > lo:
            raise UsageError(f"band {b.name!r} has its high edge at or below its low edge", expected="LOW < HIGH")
        if not sweep_covers(f, lo, hi):
            out.append(BandWorst(b.name, lo, hi, b.limit_return_loss_db, covered=False,
                                 reason=f"the sweep ({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz) does not cover "
                                        f"{lo / 1e6:.6g} to {hi / 1e6:.6g} MHz"))
            continue
        fb, gb = band_samples(f, g, max(lo, f[0]), min(hi, f[-1]))
        fb[0], fb[-1] = lo, hi  # the band's own edges (they differ from the sweep's by rounding only)
        mag = np.abs(gb)
        k = int(np.argmax(mag))
        out.append(BandWorst(b.name, lo, hi, b.limit_return_loss_db, covered=True,
                             samples=int(((f >= lo) & (f <= hi)).sum()),
                             worst_return_loss_db=float(rf.return_loss_db(mag[k])), worst_f_hz=float(fb[k]),
                             worst_mismatch_loss_db=float(rf.mismatch_loss_db(mag[k]))))
    return out


@dataclass(frozen=True)
class RevisionBand:
    """One threshold band of a revision, paired with the baseline band it overlaps most.

    Deltas (Hz) are this band minus that baseline band; None when no baseline band overlaps."""

    band: Band
    holds_best: bool
    baseline_band: Band | None
    delta_center_hz: float | None
    delta_bandwidth_hz: float | None


@dataclass(frozen=True)
class Revision:
    """One sweep's row in a comparison (Hz, positive dB). Deltas are this minus the baseline."""

    file: str
    best_f_hz: float
    best_return_loss_db: float
    band: Band | None
    """The threshold band that holds the best sample (None when the best misses the threshold)."""
    bands: tuple[BandWorst, ...]
    """The worst case over each band of interest, in the comparison's band order."""
    delta_best_f_hz: float
    delta_bandwidth_hz: float | None
    delta_worst_return_loss_db: tuple[float | None, ...]
    is_baseline: bool = False
    spec: UnitResult | None = None
    """The spec verdicts of this file (``matchtool.spec.evaluate``), when a spec was given."""
    delta_margin: tuple[float | None, ...] = ()
    """Per spec requirement: this file's margin minus the baseline's (``margin_db``, or
    ``margin_hz`` for the resonance window); None where either was not evaluated."""
    threshold_bands: tuple[RevisionBand, ...] = ()
    """Every threshold band of the sweep (not only the one holding the best sample), low to high."""
    noise_crossings: tuple[Band, ...] = ()
    """Threshold crossings narrower than the minimum band width (never bands; see bands.search_bands)."""

    @property
    def bandwidth_hz(self) -> float | None:
        """Width of the threshold band that holds the best sample; None when the best misses it."""
        return None if self.band is None else self.band.bandwidth_hz


@dataclass(frozen=True)
class BandVerdict:
    """Which revision has the highest worst-case return loss over one band (the first wins a tie)."""

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float | None
    best_file: str | None
    best_worst_return_loss_db: float | None
    passing_files: tuple[str, ...]
    uncovered_files: tuple[str, ...]


def requirement_margin(r: RequirementResult) -> float | None:
    """The margin that ranks revisions on one requirement: ``margin_db`` (dB, positive when
    passing), ``margin_hz`` for the resonance window (Hz inside the window) or ``margin_ecc`` for an
    envelope-correlation limit (limit minus worst); None if not evaluated."""
    for m in (r.margin_db, r.margin_hz, getattr(r, "margin_ecc", None)):
        if m is not None:
            return m
    return None


@dataclass(frozen=True)
class RequirementVerdict:
    """Which revision does best on one spec requirement (the largest margin; the first wins a tie)."""

    name: str
    key: str
    unit: str
    best_file: str | None
    best: RequirementResult | None
    passing_files: tuple[str, ...]
    failing_files: tuple[str, ...]
    unevaluated_files: tuple[str, ...]


def spec_verdicts(units: Sequence[UnitResult]) -> tuple[RequirementVerdict, ...]:
    """Per requirement (in the spec's order), the revision with the largest margin.

    ``units`` are the :class:`matchtool.spec.UnitResult` of each revision against one spec, so
    they list the same requirements in the same order. A requirement that could not be evaluated
    for a file (band not covered) fails and does not compete for best.
    """
    if not units:
        return ()
    out = []
    for k, first in enumerate(units[0].requirements):
        cand = [(requirement_margin(u.requirements[k]), i) for i, u in enumerate(units)
                if requirement_margin(u.requirements[k]) is not None]
        best_i = max(cand, key=lambda c: (c[0], -c[1]))[1] if cand else None
        out.append(RequirementVerdict(
            name=first.name, key=first.key, unit=first.unit,
            best_file=None if best_i is None else units[best_i].file,
            best=None if best_i is None else units[best_i].requirements[k],
            passing_files=tuple(u.file for u in units if u.requirements[k].passed),
            failing_files=tuple(u.file for u in units if not u.requirements[k].passed),
            unevaluated_files=tuple(u.file for u in units if requirement_margin(u.requirements[k]) is None)))
    return tuple(out)


@dataclass(frozen=True)
class Comparison:
    """The whole comparison: rows in order (the baseline first), per-band verdicts, spec verdicts.

    ``bands`` are the bands of interest in order: the ``adhoc_bands`` given by the caller first,
    then (with a spec) the spec's bands without a limit of their own, whose verdicts are the spec
    requirements."""

    baseline: str
    threshold_return_loss_db: float
    rows: tuple[Revision, ...]
    verdicts: tuple[BandVerdict, ...]
    warnings: tuple[str, ...] = ()
    spec_path: str | None = None
    spec_verdicts: tuple[RequirementVerdict, ...] = ()
    bands: tuple[BandOfInterest, ...] = ()
    adhoc_bands: int = 0
    min_band_width_hz: float | None = None

    @property
    def spec_failed(self) -> bool:
        """True when a spec was given and some requirement of some revision failed."""
        return any(r.spec is not None and not r.spec.passed for r in self.rows)

    @property
    def failing_files(self) -> tuple[str, ...]:
        """Files that fail the spec (empty without a spec)."""
        return tuple(r.file for r in self.rows if r.spec is not None and not r.spec.passed)


def order_with_baseline(paths: Sequence[str], baseline: str | None) -> list[str]:
    """Input order with the baseline first: ``baseline`` moves to the front (added if absent)."""
    paths = list(paths)
    if baseline is None:
        return paths
    return [baseline] + [p for p in paths if p != baseline]


def _overlap(a: Band, b: Band) -> float:
    return min(a.f_high_hz, b.f_high_hz) - max(a.f_low_hz, b.f_low_hz)


def _pair_bands(bands: Sequence[Band], base: Sequence[Band], best_band: Band | None) -> tuple[RevisionBand, ...]:
    """Pair each threshold band with a baseline band: in frequency order when both sweeps have
    the same number of bands (a resonance that moved is still the same band), else the baseline
    band it overlaps most (None when none overlaps)."""
    out = []
    for k, b in enumerate(bands):
        if len(bands) == len(base):
            m = base[k]
        else:
            over = [(_overlap(b, x), x) for x in base if _overlap(b, x) > 0]
            m = max(over, key=lambda t: t[0])[1] if over else None
        out.append(RevisionBand(b, b is best_band, m,
                                None if m is None else b.f_center_hz - m.f_center_hz,
                                None if m is None else b.bandwidth_hz - m.bandwidth_hz))
    return tuple(out)


def revisions(sweeps_or_networks: Sequence[Any], threshold_return_loss_db: float = 10.0,
              bands: Iterable[Any] = (), spec: Spec | None = None, min_band_width_hz: float | None = None,
              port: int = 1, z0_ohm: float | None = None) -> Comparison:
    """Compare revisions against the first one (the baseline).

    ``sweeps_or_networks``: loaded Sweeps or ``skrf.Network`` objects (``port`` 1-based and
    ``z0_ohm`` apply to networks; load sweeps with ``spec.port`` / ``spec.z0_ohm`` for a spec).
    For each revision: the best sample (frequency, return loss), every threshold band
    (``threshold_return_loss_db`` positive dB; runs narrower than ``min_band_width_hz``, default
    :data:`matchtool.bands.MIN_BAND_FRACTION` of the span, are noise crossings), the worst case over
    each band of interest, and the deltas against the baseline (``delta = this - baseline``; None
    where either side has no band). With ``spec`` each sweep is also evaluated by
    :func:`matchtool.spec.evaluate`, its bands are measured too, and the best revision per
    requirement is named.
    """
    sweeps = [s if isinstance(s, Sweep) else as_sweep(s, port=port, z0_ohm=z0_ohm) for s in sweeps_or_networks]
    if not sweeps:
        raise UsageError("nothing to compare", expected="at least one sweep")
    adhoc = [as_band(b) for b in bands]
    all_bands = list(adhoc)
    if spec is not None:  # measured without a limit: their verdicts are the spec requirements
        # only the bands of the analysed port: a band of another port is judged on that port's own
        # reflection by spec.evaluate, and measuring it here on this port's would show wrong numbers
        all_bands += [BandOfInterest(b.name, float(b.f_low_hz), float(b.f_high_hz), None)
                      for b in spec_port_bands(spec, sweeps[0].port)]
    rows: list[Revision] = []
    warnings: list[str] = [] if spec is None else list(spec.warnings)
    base_bands: tuple[Band, ...] = ()
    for sw in sweeps:
        warnings.extend(w for w in sw.warnings if w not in warnings)
        f, g = sw.f_hz, sw.gamma
        i = best_index(g)
        found = search_bands(f, rf.return_loss_db(g), threshold_return_loss_db, min_band_width_hz)
        band = band_containing(list(found.bands), float(f[i]))
        worst = band_worst(f, g, all_bands)
        for w in worst:
            if not w.covered:
                warnings.append(f"{sw.path}: band {w.name!r}: {w.reason}")
            elif w.samples < 3:
                warnings.append(f"{sw.path}: band {w.name!r} holds only {w.samples} sample(s); "
                                "the worst case between samples is interpolated")
        if band is not None and (band.clipped_low or band.clipped_high):
            warnings.append(f"{sw.path}: the threshold band runs past the end of the sweep; "
                            "its bandwidth is a lower bound")
        if found.noise_crossings:
            warnings.append(f"{sw.path}: {len(found.noise_crossings)} threshold crossing(s) narrower than "
                            f"{found.min_width_hz / 1e6:.6g} MHz or holding fewer than {found.min_samples} samples are "
                            "noise-level crossings, not bands")
        unit = None
        if spec is not None:
            from .spec import evaluate

            unit = evaluate(sw, spec)
            warnings.extend(w for w in unit.warnings if w not in warnings)
        base = rows[0] if rows else None
        if base is None:
            base_bands = found.bands
        d_margin: tuple[float | None, ...] = ()
        if unit is not None:
            base_reqs = unit.requirements if base is None else base.spec.requirements
            d_margin = tuple(None if (requirement_margin(a) is None or requirement_margin(b) is None)
                             else requirement_margin(a) - requirement_margin(b)
                             for a, b in zip(unit.requirements, base_reqs, strict=True))
        bw = None if band is None else band.bandwidth_hz
        if base is None:
            d_f, d_bw = 0.0, (0.0 if bw is not None else None)
            d_worst = tuple(0.0 if w.worst_return_loss_db is not None else None for w in worst)
        else:
            d_f = float(f[i]) - base.best_f_hz
            d_bw = None if (bw is None or base.bandwidth_hz is None) else bw - base.bandwidth_hz
            d_worst = tuple(None if (w.worst_return_loss_db is None or b.worst_return_loss_db is None)
                            else w.worst_return_loss_db - b.worst_return_loss_db
                            for w, b in zip(worst, base.bands, strict=True))
        rows.append(Revision(file=sw.path, best_f_hz=float(f[i]), best_return_loss_db=float(rf.return_loss_db(g[i])),
                             band=band, bands=tuple(worst), delta_best_f_hz=d_f, delta_bandwidth_hz=d_bw,
                             delta_worst_return_loss_db=d_worst, is_baseline=base is None, spec=unit,
                             delta_margin=d_margin, threshold_bands=_pair_bands(found.bands, base_bands, band),
                             noise_crossings=found.noise_crossings))
    verdicts = []
    for k, b in enumerate(all_bands):
        cand = [(r.bands[k].worst_return_loss_db, r.file) for r in rows if r.bands[k].covered]
        best = max(cand, key=lambda c: c[0]) if cand else None  # first wins a tie
        verdicts.append(BandVerdict(
            name=b.name, f_low_hz=b.f_low_hz, f_high_hz=b.f_high_hz, limit_return_loss_db=b.limit_return_loss_db,
            best_file=None if best is None else best[1], best_worst_return_loss_db=None if best is None else best[0],
            passing_files=tuple(r.file for r in rows if r.bands[k].passed),
            uncovered_files=tuple(r.file for r in rows if not r.bands[k].covered)))
    return Comparison(baseline=rows[0].file, threshold_return_loss_db=float(threshold_return_loss_db),
                      rows=tuple(rows), verdicts=tuple(verdicts), warnings=tuple(warnings),
                      spec_path=None if spec is None else spec.path,
                      spec_verdicts=() if spec is None else spec_verdicts([r.spec for r in rows]),
                      bands=tuple(all_bands), adhoc_bands=len(adhoc), min_band_width_hz=min_band_width_hz)


def compare(sweeps: Sequence[Any], threshold_return_loss_db: float = 10.0, bands: Iterable[Any] = (),
            spec: Spec | None = None, min_band_width_hz: float | None = None) -> Comparison:
    """Former name of :func:`revisions` (same arguments and result)."""
    return revisions(sweeps, threshold_return_loss_db, bands, spec, min_band_width_hz)


def spec_port_bands(spec: Spec, port: int | None = None) -> tuple[Any, ...]:
    """The ``[[band]]`` requirements of ``spec`` on ``port`` (1-based; default the spec's port):
    the bands whose reflection is that port's."""
    p = spec.port if port is None else port
    return tuple(b for b in spec.bands if getattr(b, "port", spec.port) == p)


def spec_band_limits(spec: Spec, given: Iterable[Any] = (), port: int | None = None) -> tuple[BandOfInterest, ...]:
    """The bands of a spec on ``port`` (default the spec's port, the reflection a sweep loaded for
    the spec shows) with their limits as minimum return loss (every limit key converted), for
    shading and masks in pictures; a band equal to one of ``given`` (same name, edges and limit)
    is left out, so it is not drawn twice."""
    seen = {as_band(b) for b in given}
    return tuple(b for b in map(as_band, spec_port_bands(spec, port)) if b not in seen)


def band_name(f_low_hz: float, f_high_hz: float) -> str:
    """A default name for a band given only by its edges: ``902-928 MHz``."""
    def mhz(x: float) -> str:
        return f"{x / 1e6:.6g}"
    return f"{mhz(f_low_hz)}-{mhz(f_high_hz)} MHz"

"""``propose``: the one entry point of matching. Ranked networks for one frequency or several bands,
evaluated on the measured sweep.

Ranking ("best")
----------------
Every network is judged on the target samples (the measured samples inside each band plus the
interpolated band edges; or the one interpolated sample at ``f0_hz``). For each band b the margin is
``-10 log10(1 - worst delivered power in b) - limit_b`` (dB), and networks are ranked by their
smallest margin over the bands. For one band this is the worst in-band power delivered to the
antenna; for ideal parts ``1 - delivered = |Gamma_in|^2``, so it is the worst in-band return loss.
With part Q the delivered power includes what the parts burn.

For a preferred-value series the ranked list's first network is the best combination of values of
that series within the value ranges and the practical-part limits (an exhaustive, bounded search,
:mod:`.search`); for ``series="exact"`` the best grid networks (and the closed-form L-sections) are
refined by a Nelder-Mead minimax on the logarithm of the values.

With a parts library (``parts=``, :mod:`matchtool.parts`) every position may hold any part of the
library or nothing; the search is the same exhaustive search over those options (so the first network
is the best combination of the library's parts), every part is used through its real behaviour (see
:mod:`.library`: the same 2-port for the search, the figures, the yield and the written files), and
each candidate also carries what the same values would do as ideal parts (``Candidate.ideal``).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from .. import eseries
from ..bands import MIN_BAND_SAMPLES, Band, band_samples, find_bands
from ..errors import NoSolutionError, UsageError
from ..numeric import median
from ..parts import Part, PartsLibrary
from ..reflection import impedance_ohm, return_loss_db
from ..sweep import Sweep, as_sweep, gamma_at_many
from . import library as lib_
from . import search as srch
from .bodefano import BodeFanoBound, bode_fano_bound
from .network import (
    MEANINGFUL_GAIN_DB,
    SERIES_BLOCK_X_PER_Z0,
    SERIES_WIRE_X_PER_Z0,
    SHUNT_OPEN_X_PER_Z0,
    SHUNT_SHORT_X_PER_Z0,
    TWO_PI,
    Element,
    PartQ,
    ValueBounds,
    dc_path,
    evaluate,
    filter_character,
    passes_dc,
    s_parameters,
    synthesize_at,
)
from .optimise import nelder_mead
from .yield_ import YieldSettings, build_yield

ROUGH_FIT = 0.1  # relative rms misfit of the resonator model above which the bound is flagged
LOSSLESS_TOL = 1e-9  # |Gamma| within this of 1 counts as a lossless (unmatchable) load
NETWORKS = ("l", "pi", "tee")
SIMPLER_GAIN_DB = 0.01  # a network with more parts is listed only when it beats every simpler one by more
RANKED_POOL = 6  # the search ranks at least this many networks (plus a margin), however few are listed, so
# that the ranking and the verdict (direct connection first or not) never depend on ``max_candidates``
# Parts whose value is comparable to the parasitics of the pads they sit on (an 0402 pad pair is
# about 0.1-0.3 pF to ground and a few tenths of a nH; common practice, no source)
PAD_SCALE_C_F = 0.5e-12
PAD_SCALE_L_H = 1.0e-9
IDEAL_PARTS = PartQ()
NEGATIVE_R_FRACTION = 0.01  # R below -1 % of |Z|: more than measurement noise (a choice, no source)
DEFAULT_BOUNDS = ValueBounds()
RANK_BY = "worst in-band power delivered to the antenna (includes part losses)"
RANK_BY_PARTS = ("worst in-band power delivered to the antenna through the library's parts as they behave "
                 "(measured 2-ports or models; includes their losses)")
RANK_BY_BANDS = ("smallest margin over the bands: -10 log10(1 - worst delivered power) minus the band's "
                 "return-loss limit (includes part losses)")


# --------------------------------------------------------------------------- targets and results

@dataclass(frozen=True)
class Target:
    """A band [f_low_hz, f_high_hz] or, with f_low_hz == f_high_hz, one frequency; its limit as a
    return loss in positive dB; ``optimised`` False for a band that is only reported."""

    f_low_hz: float
    f_high_hz: float
    limit_return_loss_db: float
    name: str = ""
    optimised: bool = True

    @property
    def is_point(self) -> bool:
        return self.f_low_hz == self.f_high_hz

    @property
    def f_center_hz(self) -> float:
        return 0.5 * (self.f_low_hz + self.f_high_hz)


@dataclass(frozen=True)
class TargetReport:
    """One target before matching: worst return loss (dB) and the Bode-Fano bound (bands only)."""

    target: Target
    before_worst_return_loss_db: float
    bound: BodeFanoBound | None


@dataclass(frozen=True)
class BandOutcome:
    """What a network does over one target: worst return loss (dB), worst delivered fraction,
    ``margin_db`` = worst return loss minus the limit (positive: meets it)."""

    target: Target
    worst_return_loss_db: float
    worst_delivered_fraction: float
    margin_db: float


@dataclass(frozen=True)
class Position:
    """One footprint position: ``fitted`` "part", "empty" (shunt, not fitted) or "link" (series,
    a 0-ohm link); ``element`` the part when fitted."""

    position: int
    connection: str
    fitted: str
    element: Element | None = None


@dataclass(frozen=True)
class PartNote:
    """A remark on a fitted part: ``flag`` "range_end" (the value is the smallest or largest allowed
    at that position: the best value may lie beyond) or "pad_scale" (below 0.5 pF or 1 nH: as small
    as the pads' own parasitics)."""

    position: int
    flag: str
    side: str = ""  # "low" or "high" for "range_end"


@dataclass(frozen=True)
class IdealComparison:
    """What the same values would do as ideal (lossless, parasitic-free) parts, on the same samples:
    worst return loss (dB) over the optimised targets, smallest delivered fraction, smallest margin
    (dB), per-target outcomes and the bands of the matched sweep (at the default threshold)."""

    worst_return_loss_db: float
    worst_delivered_fraction: float
    min_margin_db: float
    per_band: tuple[BandOutcome, ...]
    bands: tuple[Band, ...]


@dataclass(frozen=True)
class Candidate:
    """One ranked network with its performance on the measured sweep.

    ``elements`` radio side first; ``topology`` names the shape (L: "shunt-at-antenna",
    "series-at-antenna", "series", "shunt", "direct"; pi / tee: footprint and fitted positions, e.g.
    "pi 1+2"); ``worst_return_loss_db`` the worst over the optimised targets (dB);
    ``network_loss_db`` the largest in-band network loss (dB, 0 for ideal parts);
    ``worst_delivered_fraction`` the smallest delivered power over the optimised samples;
    ``dc_path`` "passes" | "blocked" | "shorted" | "blocked+shorted". With a parts library: ``parts``
    the library's :class:`matchtool.parts.Part` behind each element (same order; every figure is
    computed through them) and ``ideal`` the same values as ideal parts (:class:`IdealComparison`).
    """

    topology: str
    elements: tuple[Element, ...]
    worst_return_loss_db: float
    return_loss_at_f0_db: float
    network_loss_db: float
    worst_delivered_fraction: float
    passes_dc: bool
    filter: str
    bands: tuple[Band, ...]
    yield_fraction: float | None = None
    footprint: str = "l"
    positions: tuple[Position, ...] = ()
    dc_path: str = "passes"
    per_band: tuple[BandOutcome, ...] = ()
    min_margin_db: float = math.nan
    meets_threshold: bool = False
    notes: tuple[PartNote, ...] = ()
    z0_ohm: float = 50.0
    q: PartQ = IDEAL_PARTS
    sweep: Sweep | None = field(default=None, repr=False, compare=False)
    parts: tuple[Part, ...] = field(default=(), repr=False, compare=False)  # library parts, as ``elements``
    ideal: IdealComparison | None = None

    @property
    def f_covered_hz(self) -> np.ndarray:
        """The sweep's frequencies (Hz) that every measured part of the network spans (all of them
        without library parts): where the matched sweep and the written files are given."""
        f = self.sweep.f_hz
        return f[lib_.covered_mask(self.parts, f)] if self.parts else f

    def network_2port(self, f_hz: np.ndarray | None = None, name: str = "matching network"):
        """The network as an ``skrf.Network`` 2-port (port 1 radio, port 2 antenna) at ``z0_ohm``, on
        ``f_hz`` (Hz; default: the sweep's frequencies the parts span). Library parts enter as they
        behave (a measured series part is its measured 2-port)."""
        import skrf

        f = np.asarray(self.f_covered_hz if f_hz is None else f_hz, dtype=float)
        freq = skrf.Frequency.from_f(f, unit="Hz")
        if self.parts:
            m = np.broadcast_to(np.eye(2, dtype=complex), (f.size, 2, 2))
            for p, e in zip(self.parts, self.elements, strict=True):
                m = m @ lib_.part_abcd(p, f, e.connection)
            s = skrf.network.a2s(m, self.z0_ohm)
        else:
            s = s_parameters(f, self.elements, self.z0_ohm, self.q)
        return skrf.Network(frequency=freq, s=s, z0=self.z0_ohm, name=name)

    def matched_network(self):
        """The antenna seen through the network, as an ``skrf.Network`` 1-port at ``z0_ohm`` (on the
        sweep's frequencies the parts span)."""
        import skrf

        sw = self.sweep
        if self.parts:
            mask = lib_.covered_mask(self.parts, sw.f_hz)
            f = sw.f_hz[mask]
            g = lib_.evaluate_parts(f, sw.gamma[mask], self.z0_ohm, self.parts,
                                    [e.connection for e in self.elements]).gamma_in
        else:
            f = sw.f_hz
            g = evaluate(sw.f_hz, sw.gamma, self.z0_ohm, [(e.kind, e.connection) for e in self.elements],
                         [e.value for e in self.elements], self.q).gamma_in
        return skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=g.reshape(-1, 1, 1),
                            z0=self.z0_ohm, name=f"{sw.name} matched")


@dataclass(frozen=True)
class MatchResult:
    """Everything ``matchtool match`` reports; ``candidates`` best first.

    ``f0_hz`` the first target's centre (or the ``--at`` frequency); ``f_low_hz`` / ``f_high_hz`` the
    first band's edges (None for one frequency); ``targets`` every target before matching;
    ``threshold_return_loss_db`` the default limit (for the threshold bands of the sweeps);
    ``parts_library`` the library the networks were picked from (None: standard values)."""

    path: str
    z0_ohm: float
    f0_hz: float
    f_low_hz: float | None
    f_high_hz: float | None
    series: str
    q: PartQ
    bounds: ValueBounds
    threshold_return_loss_db: float
    before_worst_return_loss_db: float
    before_return_loss_at_f0_db: float
    before_bands: tuple[Band, ...]
    candidates: tuple[Candidate, ...]
    bound: BodeFanoBound | None
    yield_settings: YieldSettings | None
    warnings: tuple[str, ...] = ()
    rank_by: str = RANK_BY
    before_meets_threshold: bool = False
    network: str = "l"
    targets: tuple[TargetReport, ...] = ()
    port: int = 1
    parts_library: PartsLibrary | None = field(default=None, repr=False)

    @property
    def no_network_needed(self) -> bool:
        """True when the antenna meets the threshold and no network beats a direct connection by
        more than MEANINGFUL_GAIN_DB (the first candidate is the direct connection)."""
        return self.before_meets_threshold and bool(self.candidates) and not self.candidates[0].elements

    @property
    def optimised_targets(self) -> tuple[TargetReport, ...]:
        return tuple(t for t in self.targets if t.target.optimised)


# --------------------------------------------------------------------------- the steps

@dataclass
class _Run:
    """State passed between the named steps of :func:`propose`."""

    sweep: Sweep
    targets: list[Target]
    network: str
    series: str
    q: PartQ
    bounds: ValueBounds
    threshold_db: float
    max_candidates: int
    yield_settings: YieldSettings | None
    z0: float = 50.0
    f0: float = 0.0
    samples: list[tuple[np.ndarray, np.ndarray]] = field(default_factory=list)  # per target (f, gamma)
    problem: srch.Problem | None = None
    found: list[srch.Found] = field(default_factory=list)
    reports: list[TargetReport] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    candidates: list[Candidate] = field(default_factory=list)
    meets: bool = False
    rank_by: str = RANK_BY
    range_ends: dict = field(default_factory=dict)  # (footprint, position, kind) -> (min, max) allowed
    library: PartsLibrary | None = None
    option_parts: dict = field(default_factory=dict)  # (footprint, position) -> the part behind each option


def _as_target(t, threshold_db: float, optimised: bool) -> Target:
    if isinstance(t, Target):
        return t if t.optimised == optimised else Target(t.f_low_hz, t.f_high_hz, t.limit_return_loss_db, t.name,
                                                         optimised)
    if hasattr(t, "f_low_hz") and hasattr(t, "min_return_loss_db"):  # a spec.BandSpec
        return Target(float(t.f_low_hz), float(t.f_high_hz), float(t.min_return_loss_db), getattr(t, "name", ""),
                      optimised)
    vals = tuple(t)
    if len(vals) not in (2, 3):
        raise UsageError("a band is (f_low_hz, f_high_hz) or (f_low_hz, f_high_hz, limit_db)", parameter="bands",
                         value=vals)
    lo, hi = float(vals[0]), float(vals[1])
    if not hi > lo:
        raise UsageError("band edges", parameter="bands", value=(lo, hi), expected="f_low < f_high")
    return Target(lo, hi, float(vals[2]) if len(vals) == 3 else threshold_db, "", optimised)


def _step_targets(run: _Run) -> None:
    """Samples of every target; refuse targets outside the sweep or too thin to judge."""
    sw = run.sweep
    for t in run.targets:
        if not (t.limit_return_loss_db >= 0 and math.isfinite(t.limit_return_loss_db)):
            raise UsageError("limit must be a positive return loss in dB", parameter="threshold_return_loss_db",
                             value=t.limit_return_loss_db)
        if t.is_point:
            g = gamma_at_many(sw.f_hz, sw.gamma, np.array([t.f_low_hz]), sw.path)
            run.samples.append((np.array([t.f_low_hz]), g))
            continue
        gamma_at_many(sw.f_hz, sw.gamma, np.array([t.f_low_hz, t.f_high_hz]), sw.path)  # raises outside
        inside = int(np.count_nonzero((sw.f_hz >= t.f_low_hz) & (sw.f_hz <= t.f_high_hz)))
        if inside < MIN_BAND_SAMPLES:
            step = median(np.diff(sw.f_hz)) if sw.f_hz.size > 1 else math.nan
            raise UsageError(f"band {t.f_low_hz / 1e6:.6g} to {t.f_high_hz / 1e6:.6g} MHz holds only {inside} "
                             f"measured sample(s) (sweep step {step / 1e6:.4g} MHz)", path=sw.path,
                             expected=f"a band holding at least {MIN_BAND_SAMPLES} samples, or --at FREQ")
        run.samples.append(band_samples(sw.f_hz, sw.gamma, t.f_low_hz, t.f_high_hz))
    opt = [k for k, t in enumerate(run.targets) if t.optimised]
    f = np.concatenate([run.samples[k][0] for k in opt])
    g = np.concatenate([run.samples[k][1] for k in opt])
    wt = np.concatenate([np.full(run.samples[k][0].size, 10 ** (run.targets[k].limit_return_loss_db / 10))
                         for k in opt])
    if not np.any(np.abs(g) < 1 - LOSSLESS_TOL):
        where = "at the target" if len(opt) == 1 and run.targets[opt[0]].is_point else "anywhere in the band(s)"
        raise NoSolutionError(f"the load has no resistance {where} (|Gamma| = 1), nothing to match",
                              path=sw.path, expected="a lossy passive load")
    run.problem = srch.Problem(f, g, wt, run.z0, run.q)
    run.f0 = run.targets[opt[0]].f_center_hz
    if run.library is not None:
        every = np.concatenate([s[0] for s in run.samples] + [np.array([run.f0])])
        run.library.check_covers(every)  # one line naming the library and the part
        for part in run.library.parts:
            if part.measured:  # pads left in a series measurement show as a negative resistance in Z from S21
                z = part.series_impedance_ohm(f)
                if np.any(z.real < -NEGATIVE_R_FRACTION * np.abs(z)):
                    run.warnings.append(f"{run.library.path or 'parts library'}: part {part.label!r}: its impedance "
                                        "from S21 has a negative resistance in the band (pads or fixture not "
                                        "de-embedded, or noise near its self-resonance); in a shunt position it "
                                        "is used as measured")
        covered = lib_.covered_mask(run.library.parts, sw.f_hz)
        if not covered.all():
            fc = sw.f_hz[covered]
            run.warnings.append(f"{sw.path}: the parts' measurements span only {fc.min() / 1e6:.6g} to "
                                f"{fc.max() / 1e6:.6g} MHz of the sweep; matched-sweep bands and written files "
                                "for networks of measured parts cover only the frequencies their parts span")


def _step_before(run: _Run) -> None:
    """Each target's worst return loss without a network, and the Bode-Fano bound of each band."""
    sw = run.sweep
    for t, (f, g) in zip(run.targets, run.samples, strict=True):
        with np.errstate(divide="ignore"):
            before = float(-10 * np.log10(np.max(np.abs(g) ** 2)))
        bound = None
        if not t.is_point:
            ok = np.abs(g) < 1
            if ok.sum() >= MIN_BAND_SAMPLES:
                bound = bode_fano_bound(f[ok], impedance_ohm(g[ok], run.z0), t.f_low_hz, t.f_high_hz)
            where = f"{t.f_low_hz / 1e6:.6g}-{t.f_high_hz / 1e6:.6g} MHz"
            if bound is None:
                run.warnings.append(f"{sw.path}: no resonator model fits {where}; Bode-Fano bound not given")
            elif bound.fit_rms_rel > ROUGH_FIT:
                run.warnings.append(f"{sw.path}: the {bound.model} model fits {where} only roughly "
                                    f"({100 * bound.fit_rms_rel:.0f} % rms); the Bode-Fano bound is indicative")
        run.reports.append(TargetReport(t, before, bound))
    run.meets = all(r.before_worst_return_loss_db >= r.target.limit_return_loss_db
                    for r in run.reports if r.target.optimised)


def _grid(series: str, lo: float, hi: float) -> np.ndarray:
    return eseries.values_between(lo, hi, series)


def _allowed(connection: str, kind: str, values: np.ndarray, centres: Sequence[float], z0: float) -> np.ndarray:
    """Values that act as a part (see :func:`network.part_role`) at one target centre at least and
    neither block nor short the signal at any (reactance relative to Z0; limits: common practice)."""
    if values.size == 0:
        return values
    ok_any = np.zeros(values.size, dtype=bool)
    ok_all = np.ones(values.size, dtype=bool)
    for fc in centres:
        w = TWO_PI * fc
        x = w * values if kind == "inductor" else 1 / (w * values)
        ratio = x / z0
        if connection == "series":
            part = (ratio >= SERIES_WIRE_X_PER_Z0) & (ratio <= SERIES_BLOCK_X_PER_Z0)
            harm = ratio > SERIES_BLOCK_X_PER_Z0
        else:
            part = (ratio <= SHUNT_OPEN_X_PER_Z0) & (ratio >= SHUNT_SHORT_X_PER_Z0)
            harm = ratio < SHUNT_SHORT_X_PER_Z0
        ok_any |= part
        ok_all &= ~harm
    return values[ok_any & ok_all]


def _step_search(run: _Run) -> None:
    """The exhaustive search over the series (or over a grid, then refined, for exact values)."""
    p = run.problem
    centres = sorted({t.f_center_hz for t in run.targets if t.optimised})
    fps = srch.FOOTPRINTS[run.network]
    if run.library is not None:  # every part of the library (or nothing) at every position
        options = {}
        for fp in fps:
            opts = []
            for j, conn in enumerate(fp.connections, start=1):
                o, behind = lib_.options_from_library(conn, run.library, p)
                opts.append(o)
                run.option_parts[(fp, j)] = behind
            options[fp] = opts
        run.found = srch.search(p, fps, options, _pool(run), 10 ** (SIMPLER_GAIN_DB / 10))
        return
    exact = run.series == "exact"
    options = {}
    for fp in fps:
        grid = run.series if not exact else ("E48" if len(fp.connections) == 2 else "E24")
        opts = []
        for j, conn in enumerate(fp.connections, start=1):
            per_kind = {}
            for kind in ("inductor", "capacitor"):
                lo, hi = run.bounds.limits(kind)
                vals = _allowed(conn, kind, _grid(grid, lo, hi), centres, run.z0)
                if exact:  # the continuous range: the allowed part of a fine grid, held to the bounds
                    fine = _allowed(conn, kind, _grid("E96", lo, hi), centres, run.z0)
                    run.range_ends[(fp, j, kind)] = ((max(lo, float(fine.min()) / 1.03), min(hi, float(fine.max()) * 1.03))
                                                     if fine.size else None)
                elif vals.size:
                    run.range_ends[(fp, j, kind)] = (float(vals.min()), float(vals.max()))
                per_kind[kind] = vals
            opts.append(srch.options_for(conn, per_kind["inductor"], per_kind["capacitor"], p))
        options[fp] = opts
    keep = _pool(run)
    found = srch.search(p, fps, options, keep, 10 ** (SIMPLER_GAIN_DB / 10))
    if exact:
        seeds = _closed_form_seeds(run, fps)
        if run.network != "l":  # the exact L results on the pads: a pi / tee is never worse than an L
            sub = _Run(run.sweep, run.targets, "l", run.series, run.q, run.bounds, run.threshold_db, run.max_candidates,
                       None, z0=run.z0, f0=run.f0, samples=run.samples, problem=run.problem)
            _step_search(sub)
            for fd in sub.found:
                seeds += _placements(_elements(fd)[0], fps)
        found = _refine(run, fps, found + seeds, keep)
    run.found = found


def _pool(run: _Run) -> int:
    """How many circuits the search keeps for ranking: never fewer than RANKED_POOL + 3, so that the
    list for ``max_candidates`` N is the first N of the same ranking."""
    return max(run.max_candidates, RANKED_POOL) + 3


def _direct(run: _Run) -> srch.Found:
    """The direct connection (no part on any position) as a found circuit, with its cost."""
    fp = srch.FOOTPRINTS[run.network][0]
    k = len(fp.connections)
    kinds, values = (srch.NONE,) * k, (math.nan,) * k
    return srch.Found(srch.cost_of(run.problem, fp.connections, kinds, values), fp, kinds, values, (0,) * k)


def _closed_form_seeds(run: _Run, fps) -> list[srch.Found]:
    """Closed-form L-sections (Pozar 4th ed. sec. 5.1) at five frequencies per band, placed on every
    footprint position sequence they fit: starting points for the exact refinement."""
    sw = run.sweep
    seeds = []
    for t in run.targets:
        if not t.optimised:
            continue
        fs = np.array([t.f_low_hz]) if t.is_point else np.linspace(t.f_low_hz, t.f_high_hz, 5)
        for f, g in zip(fs, gamma_at_many(sw.f_hz, sw.gamma, fs, sw.path), strict=True):
            if abs(g) >= 1 - LOSSLESS_TOL:
                continue
            z = complex(impedance_ohm(g, run.z0))
            nets = synthesize_at(z, float(f), run.z0, single_part_rl_db=0.0)
            for net in nets:
                seeds += _placements(net.elements, fps)
    return seeds


def _placements(elements: Sequence[Element], fps) -> list[srch.Found]:
    """``elements`` (radio side first) placed on every run of footprint positions with the same
    connections in the same order, the other positions empty."""
    out = []
    for fp in fps:
        for combo in itertools.combinations(range(len(fp.connections)), len(elements)):
            if any(fp.connections[c] != e.connection for c, e in zip(combo, elements, strict=True)):
                continue
            kinds = [srch.NONE] * len(fp.connections)
            values = [math.nan] * len(fp.connections)
            for c, e in zip(combo, elements, strict=True):
                kinds[c] = srch.INDUCTOR if e.kind == "inductor" else srch.CAPACITOR
                values[c] = e.value
            out.append(srch.Found(math.inf, fp, tuple(kinds), tuple(values)))
    return out


def _refine(run: _Run, fps, starts: list[srch.Found], keep: int) -> list[srch.Found]:
    """Nelder-Mead minimax on the log values of the fitted positions from every start; best per circuit."""
    p = run.problem
    best: dict[tuple, srch.Found] = {}
    for s in starts:
        fitted = [j for j, k in enumerate(s.kinds) if k != srch.NONE]
        if not fitted:
            c = srch.cost_of(p, s.footprint.connections, s.kinds, s.values)
            key = srch.canonical(s.footprint.connections, s.kinds)
            if key not in best or c < best[key].cost:
                best[key] = srch.Found(c, s.footprint, s.kinds, s.values)
            continue
        ranges = [run.range_ends.get((s.footprint, j + 1, srch.KIND_NAMES[s.kinds[j]])) for j in fitted]
        if any(r is None for r in ranges):
            continue
        lo = np.log([r[0] for r in ranges])
        hi = np.log([r[1] for r in ranges])
        x0 = np.clip(np.log([s.values[j] for j in fitted]), lo, hi)

        def values_of(x, s=s, fitted=fitted):
            v = list(s.values)
            for j, xv in zip(fitted, np.exp(x), strict=True):
                v[j] = float(xv)
            return v

        def cost(x, s=s, lo=lo, hi=hi):
            xc = np.minimum(np.maximum(x, lo), hi)
            return srch.cost_of(p, s.footprint.connections, s.kinds, values_of(xc)) + float(np.sum((x - xc) ** 2))

        x, _ = nelder_mead(cost, x0, xatol=1e-6, fatol=1e-12, maxiter=400 * len(x0))
        # a second pass from the result restarts a simplex that collapsed on a ridge
        x, _ = nelder_mead(cost, np.clip(x, lo, hi), step=0.01, xatol=1e-7, fatol=1e-14, maxiter=400 * len(x0))
        x = np.clip(x, lo, hi)
        vals = values_of(x)
        c = srch.cost_of(p, s.footprint.connections, s.kinds, vals)
        c0 = srch.cost_of(p, s.footprint.connections, s.kinds, values_of(x0))
        if c0 < c:
            c, vals = c0, values_of(x0)
        key = srch.canonical(s.footprint.connections, s.kinds)
        if key not in best or c < best[key].cost:
            best[key] = srch.Found(c, s.footprint, s.kinds, tuple(vals))
    return sorted(best.values(), key=lambda f: f.cost)[:keep]


def _library_parts(run: _Run, fd: srch.Found) -> tuple[Part, ...]:
    """The library parts of a found circuit's fitted positions, radio side first."""
    if run.library is None:
        return ()
    return tuple(run.option_parts[(fd.footprint, j)][ix]
                 for j, (kind, ix) in enumerate(zip(fd.kinds, fd.index, strict=True), start=1) if kind != srch.NONE)


def _elements(fd: srch.Found, parts: Sequence[Part] = ()) -> tuple[tuple[Element, ...], tuple[Position, ...]]:
    els, pos = [], []
    labels = iter(p.label for p in parts)
    for j, (conn, kind, val) in enumerate(zip(fd.footprint.connections, fd.kinds, fd.values, strict=True), start=1):
        if kind == srch.NONE:
            pos.append(Position(j, conn, "link" if conn == "series" else "empty"))
            continue
        e = Element(srch.KIND_NAMES[kind], conn, float(val), position=j, label=next(labels, None))
        els.append(e)
        pos.append(Position(j, conn, "part", e))
    return tuple(els), tuple(pos)


def topology_name(footprint: str, elements: Sequence[Element]) -> str:
    """The shape's name: for ``l`` "shunt-at-antenna" (series part toward the radio, shunt at the
    antenna), "series-at-antenna", "series", "shunt" or "direct"; for pi / tee the footprint and the
    fitted positions, e.g. "pi 1+2"; "direct" for no part on any footprint."""
    if not elements:
        return "direct"
    if footprint == "l":
        if len(elements) == 1:
            return elements[0].connection
        return "shunt-at-antenna" if elements[-1].connection == "shunt" else "series-at-antenna"
    return f"{footprint} {'+'.join(str(e.position) for e in elements)}"


def _step_rank(run: _Run) -> None:
    """Best first; a direct connection only when the antenna meets the limits; networks with more
    parts only when they beat every simpler one by more than SIMPLER_GAIN_DB."""
    found = list(run.found)
    if run.meets and not any(all(k == srch.NONE for k in fd.kinds) for fd in found):
        # the search keeps the best few by cost; networks that gain a trace over a wire can fill
        # them all, but an antenna that already meets the limit is always compared with the wire
        found.append(_direct(run))
    found.sort(key=lambda f: f.cost)
    kept: list[srch.Found] = []
    for fd in found:
        n = sum(k != srch.NONE for k in fd.kinds)
        if n == 0 and not run.meets:
            continue
        if any(sum(k != srch.NONE for k in s.kinds) < n and s.cost <= fd.cost * 10 ** (SIMPLER_GAIN_DB / 10)
               for s in found):
            continue
        kept.append(fd)
    run.candidates = [_describe(run, fd) for fd in kept]
    if run.meets:
        direct = next((c for c in run.candidates if not c.elements), None)
        if direct is not None:
            floor = direct.worst_delivered_fraction
            better = [c for c in run.candidates if c.elements and c.worst_delivered_fraction > floor * (1 + 1e-12)]
            gain = 10 ** (MEANINGFUL_GAIN_DB / 10)
            run.candidates = ([c for c in better if c.worst_delivered_fraction > floor * gain] + [direct]
                              + [c for c in better if c.worst_delivered_fraction <= floor * gain])
            run.rank_by = (f"{run.rank_by}; the antenna already meets the limit, so the direct connection (no part) "
                           f"is listed above every network that gains less than {MEANINGFUL_GAIN_DB:g} dB over it, "
                           "and networks that gain nothing are left out")
    run.candidates = run.candidates[:run.max_candidates]
    if not run.candidates and run.library is not None:
        raise NoSolutionError("no network of the library's parts improves this load", path=run.sweep.path,
                              expected="a parts library with values that can match this antenna")
    if not run.candidates:
        b = run.bounds
        raise NoSolutionError("no network with practical part values inside the bounds improves this load",
                              path=run.sweep.path,
                              expected=f"C {b.c_min_f:.3g}..{b.c_max_f:.3g} F, L {b.l_min_h:.3g}..{b.l_max_h:.3g} H "
                                       "(see --c-range, --l-range)")


def _outcomes(run: _Run, response_of) -> tuple[list[BandOutcome], list[float]]:
    """Per target, the outcome of a network whose response on samples (f, gamma) is ``response_of``."""
    outcomes, losses = [], []
    for t, (f, g) in zip(run.targets, run.samples, strict=True):
        r = response_of(f, g)
        g2 = np.max(np.abs(r.gamma_in) ** 2)
        with np.errstate(divide="ignore"):
            rl = float(-10 * np.log10(g2))
        outcomes.append(BandOutcome(t, rl, float(r.delivered.min()), rl - t.limit_return_loss_db))
        if t.optimised and np.isfinite(r.network_loss_db).any():
            losses.append(float(np.nanmax(r.network_loss_db)))
    return outcomes, losses


def _describe_parts(run: _Run, fd: srch.Found) -> Candidate:
    """A network of library parts: every figure through the parts' real 2-ports (as written), and
    the same values as ideal parts beside it."""
    sw, z0 = run.sweep, run.z0
    parts = _library_parts(run, fd)
    els, pos = _elements(fd, parts)
    conns = [e.connection for e in els]

    def real(f, g):
        return lib_.evaluate_parts(f, g, z0, parts, conns)

    def ideal(f, g):
        return evaluate(f, g, z0, [(e.kind, e.connection) for e in els], [e.value for e in els], IDEAL_PARTS)

    outcomes, losses = _outcomes(run, real)
    ideal_out, _ = _outcomes(run, ideal)
    opt = [o for o in outcomes if o.target.optimised]
    iopt = [o for o in ideal_out if o.target.optimised]
    g0 = gamma_at_many(sw.f_hz, sw.gamma, np.array([run.f0]), sw.path)
    rl0 = float(return_loss_db(real(np.array([run.f0]), g0).gamma_in)[0])
    mask = lib_.covered_mask(parts, sw.f_hz)
    fc, gc = sw.f_hz[mask], sw.gamma[mask]
    bands = tuple(find_bands(fc, return_loss_db(real(fc, gc).gamma_in), run.threshold_db))
    ideal_bands = tuple(find_bands(fc, return_loss_db(ideal(fc, gc).gamma_in), run.threshold_db))
    cmp_ = IdealComparison(min(o.worst_return_loss_db for o in iopt), min(o.worst_delivered_fraction for o in iopt),
                           min(o.margin_db for o in iopt), tuple(ideal_out), ideal_bands)
    notes = tuple(PartNote(e.position, "pad_scale") for e, p in zip(els, parts, strict=True)
                  if not p.measured and ((e.kind == "capacitor" and e.value < PAD_SCALE_C_F)
                                         or (e.kind == "inductor" and e.value < PAD_SCALE_L_H)))
    loss = max(losses) if losses else math.nan
    return Candidate(topology_name(fd.footprint.name, els), els, min(o.worst_return_loss_db for o in opt), rl0, loss,
                     min(o.worst_delivered_fraction for o in opt), passes_dc(els), filter_character(els), bands, None,
                     fd.footprint.name, pos, dc_path(els), tuple(outcomes), min(o.margin_db for o in opt),
                     all(o.margin_db >= 0 for o in opt), notes, z0, IDEAL_PARTS, sw, parts, cmp_)


def _describe(run: _Run, fd: srch.Found) -> Candidate:
    if run.library is not None:
        return _describe_parts(run, fd)
    sw, z0, q = run.sweep, run.z0, run.q
    els, pos = _elements(fd)
    pattern = [(e.kind, e.connection) for e in els]
    vals = [e.value for e in els]
    outcomes = []
    losses = []
    for t, (f, g) in zip(run.targets, run.samples, strict=True):
        r = evaluate(f, g, z0, pattern, vals, q)
        g2 = np.max(np.abs(r.gamma_in) ** 2)
        with np.errstate(divide="ignore"):
            rl = float(-10 * np.log10(g2))
        outcomes.append(BandOutcome(t, rl, float(r.delivered.min()), rl - t.limit_return_loss_db))
        if t.optimised and np.isfinite(r.network_loss_db).any():
            losses.append(float(np.nanmax(r.network_loss_db)))
    opt = [o for o in outcomes if o.target.optimised]
    worst_rl = min(o.worst_return_loss_db for o in opt)
    worst_del = min(o.worst_delivered_fraction for o in opt)
    loss = max(losses) if losses else math.nan
    if math.isinf(q.inductor) and math.isinf(q.capacitor) and abs(loss) < 1e-9:
        loss = 0.0
    g0 = gamma_at_many(sw.f_hz, sw.gamma, np.array([run.f0]), sw.path)
    rl0 = float(return_loss_db(evaluate(np.array([run.f0]), g0, z0, pattern, vals, q).gamma_in)[0])
    rf = evaluate(sw.f_hz, sw.gamma, z0, pattern, vals, q)
    bands = tuple(find_bands(sw.f_hz, return_loss_db(rf.gamma_in), run.threshold_db))
    notes = []
    for e in els:
        ends = run.range_ends.get((fd.footprint, e.position, e.kind))
        if ends is not None and run.series != "exact":
            if e.value <= ends[0] * (1 + 1e-9):
                notes.append(PartNote(e.position, "range_end", "low"))
            elif e.value >= ends[1] * (1 - 1e-9):
                notes.append(PartNote(e.position, "range_end", "high"))
        if (e.kind == "capacitor" and e.value < PAD_SCALE_C_F) or (e.kind == "inductor" and e.value < PAD_SCALE_L_H):
            notes.append(PartNote(e.position, "pad_scale"))
    return Candidate(topology_name(fd.footprint.name, els), els, worst_rl, rl0, loss, worst_del, passes_dc(els),
                     filter_character(els), bands, None, fd.footprint.name, pos, dc_path(els), tuple(outcomes),
                     min(o.margin_db for o in opt), all(o.margin_db >= 0 for o in opt), tuple(notes), z0, q, sw)


def _step_yield(run: _Run) -> None:
    ys = run.yield_settings
    if ys is None:
        return
    opt = [(t, s) for t, s in zip(run.targets, run.samples, strict=True) if t.optimised]
    f = np.concatenate([s[0] for _, s in opt])
    g = np.concatenate([s[1] for _, s in opt])
    lim = np.concatenate([np.full(s[0].size, t.limit_return_loss_db) for t, s in opt])
    from dataclasses import replace

    if run.library is not None:
        run.candidates = [replace(c, yield_fraction=_parts_yield(c, f, g, lim, run.z0, ys)) for c in run.candidates]
        return
    run.candidates = [replace(c, yield_fraction=build_yield(c.elements, f, g, lim, run.z0, run.q, ys))
                      for c in run.candidates]


YIELD_CHUNK_POINTS = 65_536


def _parts_yield(c: Candidate, f: np.ndarray, g: np.ndarray, limit_db: np.ndarray, z0: float,
                 ys: YieldSettings) -> float:
    """Fraction of Monte Carlo builds of a network of library parts whose return loss meets the limit
    at every target sample: each part's value drawn uniformly within its own tolerance (the library's;
    the settings' tolerances are not used), parasitics kept (``Part.series_impedance_ohm(f, value)``),
    a drawn value below 1 % of the nominal held there."""
    g_lim2 = 10 ** (-np.asarray(limit_db, dtype=float) / 10)
    if not c.elements:
        return 1.0 if bool(np.all(np.abs(g) ** 2 <= g_lim2)) else 0.0
    rng = np.random.default_rng(ys.seed)
    draws = [np.maximum(p.value + p.tolerance * rng.uniform(-1, 1, size=ys.trials), 0.01 * p.value) for p in c.parts]
    conns = [e.connection for e in c.elements]
    chunk = max(1, YIELD_CHUNK_POINTS // max(f.size, 1))
    passed = 0
    for start in range(0, ys.trials, chunk):
        vals = [d[start:start + chunk] for d in draws]
        gin = lib_.evaluate_parts(f, g, z0, c.parts, conns, vals).gamma_in
        passed += int(np.count_nonzero(np.all(gin.real ** 2 + gin.imag ** 2 <= g_lim2, axis=-1)))
    return passed / ys.trials


def _step_warnings(run: _Run) -> None:
    """One line per remarkable part of the best network."""
    if not run.candidates:
        return
    best = run.candidates[0]
    path = run.sweep.path
    for n in best.notes:
        e = next(e for e in best.elements if e.position == n.position)
        if n.flag == "range_end":
            run.warnings.append(f"{path}: the best network's {e.kind} at position {n.position} ({e.value:.3g} {e.unit}) "
                                f"is the {'smallest' if n.side == 'low' else 'largest'} value allowed there; a better "
                                "value may lie beyond the value range or the practical-part limits")
        else:
            run.warnings.append(f"{path}: the best network's {e.kind} at position {n.position} ({e.value:.3g} {e.unit}) "
                                "is as small as the pads' own parasitics; expect the built value to differ")


# --------------------------------------------------------------------------- the entry point

def propose(sweep_or_network, *, f0_hz: float | None = None, bands: Sequence = (), network: str = "l",
            series: str = "E24", q: PartQ = IDEAL_PARTS, bounds: ValueBounds = DEFAULT_BOUNDS,
            threshold_db: float = 10.0, tolerance: YieldSettings | None = None, max_candidates: int = 6,
            report_bands: Sequence = (), port: int | None = None, z0_ohm: float | None = None,
            parts: PartsLibrary | None = None) -> MatchResult:
    """Ranked matching networks for the antenna in ``sweep_or_network`` (a ``Sweep`` or an
    ``skrf.Network``; ``port`` 1-based, ``z0_ohm`` the system impedance, default the sweep's).

    Give either ``f0_hz`` (Hz, one frequency) or ``bands``: (f_low_hz, f_high_hz) or
    (f_low_hz, f_high_hz, limit_db) tuples, or spec ``BandSpec`` objects; several bands are served
    by one network (the smallest margin over them is maximised). ``report_bands`` are evaluated and
    reported but not optimised. ``network`` "l" (two parts), "pi" (shunt, series, shunt) or "tee"
    (series, shunt, series), any position of pi / tee may stay empty. ``series`` "exact", "E12",
    "E24", "E48" or "E96"; ``q`` part quality factors (constant-Q model); ``bounds`` the allowed
    values; ``threshold_db`` the default limit (positive dB return loss); ``tolerance`` the yield
    settings (None: no yield). ``parts`` a :class:`matchtool.parts.PartsLibrary`: pick only from its
    parts, used as they behave (``series``, ``q`` and ``bounds`` are then not used; the yield, when
    ``tolerance`` is given, takes its trials and seed and each part's own tolerance). Raises
    OutOfRangeError outside the sweep, UsageError for bad arguments, NoSolutionError when nothing can
    be matched, PartsLibraryError when a measured part does not span the targets.
    """
    sw = as_sweep(sweep_or_network, port=port, z0_ohm=z0_ohm)
    series = eseries.normalize_series_name(series)
    if network not in NETWORKS:
        raise UsageError("unknown network", parameter="network", value=network, expected="l, pi or tee")
    if not (threshold_db >= 0 and math.isfinite(threshold_db)):
        raise UsageError("threshold must be a positive return loss in dB", parameter="threshold_return_loss_db",
                         value=threshold_db)
    if max_candidates < 1:
        raise UsageError("how many networks to list", parameter="max_candidates", value=max_candidates,
                         expected="1 or more")
    if (f0_hz is None) == (not bands):
        raise UsageError("give exactly one target: f0_hz (one frequency) or bands", parameter="target")
    targets = ([Target(float(f0_hz), float(f0_hz), threshold_db)] if f0_hz is not None
               else [_as_target(b, threshold_db, True) for b in bands])
    targets += [_as_target(b, threshold_db, False) for b in report_bands]
    if parts is not None and not isinstance(parts, PartsLibrary):
        raise UsageError("must be a matchtool.parts.PartsLibrary", parameter="parts", value=type(parts).__name__)
    if parts is not None:
        series, q = "library", IDEAL_PARTS
    run = _Run(sw, targets, network, series, q, bounds, threshold_db, max_candidates, tolerance,
               z0=float(sw.z0_ohm), warnings=list(sw.warnings), library=parts)
    if len([t for t in targets if t.optimised]) > 1:
        run.rank_by = RANK_BY_BANDS
    elif parts is not None:
        run.rank_by = RANK_BY_PARTS
    for step in (_step_targets, _step_before, _step_search, _step_rank, _step_yield, _step_warnings):
        step(run)
    first = next(r for r in run.reports if r.target.optimised)
    t0 = first.target
    opt_reports = [r for r in run.reports if r.target.optimised]
    g0 = gamma_at_many(sw.f_hz, sw.gamma, np.array([run.f0]), sw.path)
    return MatchResult(
        sw.path, run.z0, run.f0, None if t0.is_point else t0.f_low_hz, None if t0.is_point else t0.f_high_hz,
        series, q, bounds, threshold_db, min(r.before_worst_return_loss_db for r in opt_reports),
        float(return_loss_db(g0)[0]), tuple(find_bands(sw.f_hz, return_loss_db(sw.gamma), threshold_db)),
        tuple(run.candidates), first.bound, tolerance, tuple(run.warnings), run.rank_by, run.meets, network,
        tuple(run.reports), sw.port, parts)


# --------------------------------------------------------------------------- earlier entry points

def design_at(sweep, f0_hz: float, series: str = "E24", q: PartQ = IDEAL_PARTS, bounds: ValueBounds = DEFAULT_BOUNDS,
              threshold_db: float = 10.0, yield_settings: YieldSettings | None = None, max_candidates: int = 6,
              network: str = "l") -> MatchResult:
    """:func:`propose` at one frequency ``f0_hz`` (Hz)."""
    return propose(sweep, f0_hz=f0_hz, series=series, q=q, bounds=bounds, threshold_db=threshold_db,
                   tolerance=yield_settings, max_candidates=max_candidates, network=network)


def design_for_band(sweep, f_low_hz: float, f_high_hz: float, series: str = "E24", q: PartQ = IDEAL_PARTS,
                    bounds: ValueBounds = DEFAULT_BOUNDS, threshold_db: float = 10.0,
                    yield_settings: YieldSettings | None = None, max_candidates: int = 6,
                    network: str = "l") -> MatchResult:
    """:func:`propose` over one band [f_low_hz, f_high_hz] (Hz)."""
    if not (f_high_hz > f_low_hz):
        raise UsageError("band edges", parameter="bands", value=(f_low_hz, f_high_hz), expected="f_low < f_high")
    return propose(sweep, bands=[(f_low_hz, f_high_hz)], series=series, q=q, bounds=bounds,
                   threshold_db=threshold_db, tolerance=yield_settings, max_candidates=max_candidates,
                   network=network)

"""Lot history from one or more results stores: yields, the spread of each requirement's worst
value, process capability against its limit, the resonance's spread and the worst units.

The one entry point is :func:`history`. The counts are those of ``check``'s lot summary
(:func:`matchtool.batch.summarize_lot`): ``units`` counts every stored unit including unreadable
ones, ``yield_fraction`` is passed / units, a requirement's ``evaluated`` counts the readable units
that have it and its yield is passed / evaluated. The aggregates are computed by the database
(counts, sums, sums of squares about a fixed shift, minima, maxima), so they add across stores:
shards written to separate stores give the same lot summary as one run.

Process capability (NIST/SEMATECH e-Handbook of Statistical Methods, sec. 6.1.6): with the mean
``mu`` and the sample standard deviation ``s`` (n - 1) of a requirement's worst value per unit,

- a lower limit (minimum return loss): ``Cpk = (mu - LSL) / (3 s)``;
- an upper limit (maximum VSWR, maximum S11 in dB, maximum mismatch loss, maximum deviation from
  the golden unit): ``Cpk = (USL - mu) / (3 s)``;
- the resonance window [f_low, f_high] on the best-match frequency (two-sided):
  ``Cpk = min((USL - mu) / (3 s), (mu - LSL) / (3 s))``.

Cpk is not given (``cpk`` None, ``cpk_reason`` says why) for fewer than :data:`MIN_CPK_UNITS`
values, for no spread (s = 0), or when the limit changed within the lot. It describes the units
measured, assuming a stable process; it does not certify anything.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import datetime

from .errors import UsageError

MIN_CPK_UNITS = 5
TIE_WINDOW = 20
"""Worst-unit candidates fetched beyond the places to fill, so that ties are broken by file name
(as ``check`` does) rather than by the store's key."""
LOWER_KEYS = ("min_return_loss_db",)
UPPER_KEYS = ("max_vswr", "max_s11_db", "max_mismatch_loss_db", "max_deviation_db")


@dataclass(frozen=True)
class RequirementHistory:
    """One requirement over one lot. ``mean``/``std``/``min``/``max`` are of the worst value per
    unit, in the units of ``key`` (Hz for the resonance); ``std`` is the sample standard deviation
    (n - 1). ``limit`` is in the same units (None for the resonance, which has ``f_low_hz`` and
    ``f_high_hz``); ``cpk_side`` is "lower", "upper" or "two-sided"."""

    name: str
    key: str
    evaluated: int
    passed: int
    n_values: int
    mean: float | None
    std: float | None
    min: float | None
    max: float | None
    limit: float | None
    f_low_hz: float | None
    f_high_hz: float | None
    cpk: float | None
    cpk_side: str
    cpk_reason: str = ""

    @property
    def yield_fraction(self) -> float:
        return self.passed / self.evaluated if self.evaluated else 0.0


@dataclass(frozen=True)
class StoredWorst:
    """A unit that misses the spec by most, by the rule of :func:`matchtool.batch.worst_units`:
    ``ranked_by`` "requirement" for the worst unit of ``requirement`` (margin in its own unit),
    "relative_margin" for the other units ranked across requirements; in a lot where every unit
    passed, one closest to failing (``passed`` True)."""

    file: str
    station: str
    requirement: str
    margin_db: float | None
    margin_hz: float | None
    relative_margin: float | None
    passed: bool = False
    ranked_by: str = "relative_margin"


@dataclass(frozen=True)
class LotHistory:
    """One lot: counts, yield, per-requirement statistics, resonance spread (Hz), worst units,
    the spec names and stations seen, and the first and last check time (UTC)."""

    lot: str
    units: int
    passed: int
    failed: int
    errors: int
    requirements: tuple[RequirementHistory, ...]
    resonance_n: int
    resonance_mean_hz: float | None
    resonance_std_hz: float | None
    resonance_min_hz: float | None
    resonance_max_hz: float | None
    worst: tuple[StoredWorst, ...]
    specs: tuple[str, ...]
    stations: tuple[str, ...]
    first_at: datetime | None
    last_at: datetime | None

    @property
    def yield_fraction(self) -> float:
        return self.passed / self.units if self.units else 0.0


@dataclass(frozen=True)
class Series:
    """Per-unit worst values of one requirement in check-time order, for the trend plot: ``t``
    (UTC datetimes), ``lot`` names, ``worst`` values (None where not evaluated), and the limit."""

    name: str
    key: str
    t: tuple[datetime, ...]
    lot: tuple[str, ...]
    worst: tuple[float | None, ...]
    limit: float | None
    f_low_hz: float | None
    f_high_hz: float | None


@dataclass(frozen=True)
class HistoryResult:
    """The lots found (in order of their first check), the stores read (passwords hidden), the
    filters, and per-unit series when asked for."""

    lots: tuple[LotHistory, ...]
    stores: tuple[str, ...]
    lot: str | None = None
    since: datetime | None = None
    spec: str | None = None
    series: tuple[Series, ...] = ()
    warnings: tuple[str, ...] = field(default=())


def cpk(mean: float, std: float, lsl: float | None = None, usl: float | None = None) -> float:
    """Process capability index of a normal process with ``mean`` and ``std`` against a lower
    and/or upper limit (NIST/SEMATECH e-Handbook sec. 6.1.6); one-sided when one limit is None."""
    parts = []
    if usl is not None:
        parts.append((usl - mean) / (3 * std))
    if lsl is not None:
        parts.append((mean - lsl) / (3 * std))
    if not parts:
        raise UsageError("needs at least one limit", parameter="limit")
    return min(parts)


def parse_since(text: str | datetime | None) -> datetime | None:
    """``YYYY-MM-DD`` or an ISO 8601 time (UTC unless it states an offset) -> naive UTC datetime."""
    from datetime import UTC

    if text is None or isinstance(text, datetime):
        t = text
    else:
        try:
            t = datetime.fromisoformat(str(text).strip().replace("Z", "+00:00"))
        except ValueError:
            raise UsageError("is not a date", parameter="since", value=text,
                             expected="YYYY-MM-DD or YYYY-MM-DDTHH:MM (UTC)") from None
    if t is not None and t.tzinfo is not None:
        t = t.astimezone(UTC).replace(tzinfo=None)
    return t


# ------------------------------------------------------------------------------------------ queries

def _filters(tbl, lot, since, spec):
    conds = []
    if lot is not None:
        conds.append(tbl.c.lot == lot)
    if since is not None:
        conds.append(tbl.c.checked_at >= since)
    if spec is not None:
        conds.append(tbl.c.spec_name == spec)
    return conds


def _raw_parts(st, lot, since, spec):
    """Per-store aggregates computed from the unit rows (for a ``since`` with a time of day, which
    the per-day running statistics cannot answer). Sums of squares are taken about a shift (the
    store's first best-match frequency for Hz values) and turned into (count, mean, M2)."""
    from sqlalchemy import Float, and_, case, cast, func, select

    _, _, U, R = _tables()
    with st.engine.connect() as conn:
        k_hz = conn.execute(select(U.c.best_f_hz).where(U.c.best_f_hz.is_not(None)).limit(1)).scalar() or 0.0
        uw = _filters(U, lot, since, spec)
        fx = U.c.best_f_hz - k_hz
        units = conn.execute(
            select(U.c.lot, U.c.spec_name, U.c.station, func.count(), func.sum(case((U.c.passed, 1), else_=0)),
                   func.sum(case((U.c.error.is_not(None), 1), else_=0)), func.count(U.c.best_f_hz), func.sum(fx),
                   func.sum(fx * fx), func.min(U.c.best_f_hz), func.max(U.c.best_f_hz), func.min(U.c.checked_at),
                   func.max(U.c.checked_at))
            .where(and_(True, *uw)).group_by(U.c.lot, U.c.spec_name, U.c.station)).all()
        shift = case((R.c.key == "resonance", k_hz), else_=0.0)
        w = cast(R.c.worst, Float) - shift
        reqs = conn.execute(
            select(R.c.lot, R.c.name, R.c.key, func.min(R.c.position), func.count(),
                   func.sum(case((R.c.passed, 1), else_=0)), func.count(R.c.worst), func.sum(w), func.sum(w * w),
                   func.min(R.c.worst), func.max(R.c.worst), func.min(R.c.limit_value), func.max(R.c.limit_value),
                   func.min(R.c.f_low_hz), func.max(R.c.f_low_hz), func.min(R.c.f_high_hz), func.max(R.c.f_high_hz))
            .where(and_(True, *_filters(R, lot, since, spec))).group_by(R.c.lot, R.c.name, R.c.key)).all()

    def mm(n, s1, s2, k):
        if not n:
            return 0, None, None
        s1, s2 = float(s1 or 0.0), float(s2 or 0.0)
        return n, s1 / n + k, max(0.0, s2 - s1 * s1 / n)

    up = [(lt, sn, sta, n, int(p or 0), int(e or 0), *mm(nf, sf, sf2, k_hz), fmin, fmax, t0, t1)
          for (lt, sn, sta, n, p, e, nf, sf, sf2, fmin, fmax, t0, t1) in units]
    rp = [(lt, name, key, pos, n, int(p or 0), *mm(nw, s1, s2, k_hz if key == "resonance" else 0.0), *rest)
          for (lt, name, key, pos, n, p, nw, s1, s2, *rest) in reqs]
    return up, rp


def _stat_parts(st, lot, since, spec):
    """Per-store aggregates from the running statistics kept by every write (a few rows per lot)."""
    from sqlalchemy import and_, select

    from .store import stats_tables

    LU, LR = stats_tables()
    out = []
    for t in (LU, LR):
        conds = []
        if lot is not None:
            conds.append(t.c.lot == lot)
        if spec is not None:
            conds.append(t.c.spec_name == spec)
        if since is not None:
            conds.append(t.c.day >= since.date().isoformat())
        out.append(and_(True, *conds))
    with st.engine.connect() as conn:
        units = conn.execute(select(LU.c.lot, LU.c.spec_name, LU.c.station, LU.c.units, LU.c.passed, LU.c.errors,
                                    LU.c.f_n, LU.c.f_mean, LU.c.f_m2, LU.c.f_min, LU.c.f_max, LU.c.first_at,
                                    LU.c.last_at).where(out[0])).all()
        reqs = conn.execute(select(LR.c.lot, LR.c.name, LR.c.key, LR.c.position, LR.c.evaluated, LR.c.passed,
                                   LR.c.n_values, LR.c.mean, LR.c.m2, LR.c.min, LR.c.max, LR.c.limit_min,
                                   LR.c.limit_max, LR.c.f_low_min, LR.c.f_low_max, LR.c.f_high_min,
                                   LR.c.f_high_max).where(out[1])).all()
    return [tuple(r) for r in units], [tuple(r) for r in reqs]


def _worst_candidates(st, lots, failing_names, lot_f, since, spec, n_worst):
    """Per lot: the argmin unit of each failing requirement, and the ``n_worst`` failing units
    with the smallest relative margin (candidates; merged across stores by the caller)."""
    from sqlalchemy import and_, case, func, select

    _, _, U, R = _tables()
    out: dict[str, tuple[dict, list]] = {}
    with st.engine.connect() as conn:
        for lot in lots:
            if not failing_names.get(lot):
                out[lot] = ({}, _closest(conn, lot, since, spec, n_worst))
                continue
            base = [R.c.lot == lot, R.c.passed.is_(False), *_filters(R, None, since, spec)]
            per_req = {}
            for name in failing_names.get(lot, ()):
                m = case((R.c.key == "resonance", R.c.margin_hz), else_=R.c.margin_db)
                # a few more than one: ties are broken by file name below, as check does
                got = conn.execute(select(R.c.uid, m, R.c.margin_db, R.c.margin_hz, R.c.relative_margin)
                                   .where(and_(*base, R.c.name == name))
                                   .order_by(m.is_(None), m, R.c.uid).limit(TIE_WINDOW)).all()
                if got:
                    per_req[name] = got
            rel = func.min(R.c.relative_margin)
            rows = conn.execute(select(R.c.uid, rel, func.count()).where(and_(*base)).group_by(R.c.uid)
                                .order_by(rel.is_(None), rel, func.count().desc(), R.c.uid)
                                .limit(n_worst + TIE_WINDOW)).all()
            uids = {r[0] for got in per_req.values() for r in got} | {r[0] for r in rows}
            info = {}
            if uids:
                for u in conn.execute(select(U.c.uid, U.c.file, U.c.station, U.c.checked_at).where(U.c.uid.in_(uids))):
                    info[u[0]] = (u[1], u[2], u[3])
            per_req = {name: min(got, key=lambda r: (r[1] is None, r[1] if r[1] is not None else 0.0,
                                                     info.get(r[0], ("",))[0]))
                       for name, got in per_req.items()}
            # the requirement each filling unit misses most
            detail = {}
            if rows:
                for r in conn.execute(select(R.c.uid, R.c.name, R.c.margin_db, R.c.margin_hz, R.c.relative_margin)
                                      .where(and_(*base, R.c.uid.in_([x[0] for x in rows])))
                                      .order_by(R.c.uid, R.c.relative_margin.is_(None), R.c.relative_margin,
                                                R.c.position)):
                    detail.setdefault(r[0], r)
            out[lot] = ({name: (row, info.get(row[0])) for name, row in per_req.items()},
                        [(x[1], -x[2], detail.get(x[0]), info.get(x[0])) for x in rows])
    return out


def _closest(conn, lot, since, spec, n_worst):
    """A lot where every unit passed: the units with the smallest relative margin (each unit at
    its requirement closest to failing), as candidates in the form of the filling list."""
    from sqlalchemy import and_, select

    _, _, U, R = _tables()
    rows = conn.execute(select(R.c.uid, R.c.name, R.c.margin_db, R.c.margin_hz, R.c.relative_margin)
                        .where(and_(R.c.lot == lot, *_filters(R, None, since, spec)))
                        .order_by(R.c.relative_margin.is_(None), R.c.relative_margin, R.c.position)
                        .limit(4 * (n_worst + TIE_WINDOW))).all()
    first: dict[str, tuple] = {}
    for r in rows:
        first.setdefault(r[0], r)
    info = {}
    if first:
        for u in conn.execute(select(U.c.uid, U.c.file, U.c.station, U.c.checked_at).where(U.c.uid.in_(list(first)))):
            info[u[0]] = (u[1], u[2], u[3])
    return [(r[4], 0, r, info.get(uid)) for uid, r in first.items()]


def _tables():
    from .store import tables

    return tables()


def _series(stores, lot, since, spec):
    from sqlalchemy import and_, select

    _, _, _, R = _tables()
    rows = []
    for st in stores:
        with st.engine.connect() as conn:
            rows += conn.execute(select(R.c.checked_at, R.c.seq, R.c.position, R.c.lot, R.c.name, R.c.key, R.c.worst,
                                        R.c.limit_value, R.c.f_low_hz, R.c.f_high_hz)
                                 .where(and_(True, *_filters(R, lot, since, spec)))).all()
    rows.sort(key=lambda r: (r[0], r[1], r[2]))
    by: dict[str, list] = {}
    order: list[str] = []
    for r in rows:
        if r[4] not in by:
            by[r[4]] = []
            order.append(r[4])
        by[r[4]].append(r)
    out = []
    for name in order:
        rs = by[name]
        lims = {r[7] for r in rs}
        out.append(Series(name=name, key=rs[0][5], t=tuple(r[0] for r in rs), lot=tuple(r[3] for r in rs),
                          worst=tuple(r[6] for r in rs), limit=lims.pop() if len(lims) == 1 else None,
                          f_low_hz=rs[-1][8], f_high_hz=rs[-1][9]))
    return tuple(out)


# ----------------------------------------------------------------------------------------- assembly

def _stats(n: int, mean: float | None, m2: float | None) -> tuple[float | None, float | None]:
    """(mean, sample standard deviation) from (count, mean, sum of squared deviations)."""
    if not n:
        return None, None
    if n < 2 or m2 is None:
        return mean, None
    return mean, math.sqrt(max(0.0, m2) / (n - 1))


def _cpk_of(key, n, mean, std, lim_lo, lim_hi, flo, fhi) -> tuple[float | None, str, str]:
    side = "two-sided" if key == "resonance" else "lower" if key in LOWER_KEYS else "upper"
    if n < MIN_CPK_UNITS:
        return None, side, f"fewer than {MIN_CPK_UNITS} units with a value ({n})"
    if key == "resonance":
        if flo[0] != flo[1] or fhi[0] != fhi[1]:
            return None, side, "the resonance window changed within the lot"
    elif lim_lo != lim_hi or lim_lo is None:
        return None, side, "the limit changed within the lot" if lim_lo != lim_hi else "no limit"
    if not std:
        return None, side, "no spread (standard deviation 0)"
    if key == "resonance":
        return cpk(mean, std, lsl=flo[0], usl=fhi[0]), side, ""
    if side == "lower":
        return cpk(mean, std, lsl=lim_lo), side, ""
    return cpk(mean, std, usl=lim_lo), side, ""


def history(stores: Sequence[str], lot: str | None = None, since: str | datetime | None = None,
            spec: str | None = None, n_worst: int = 5, series: bool = False) -> HistoryResult:
    """The lot history of the stores at ``stores`` (URLs or paths; several are added together, as
    for shards written to separate stores), optionally only ``lot``, units checked at or after
    ``since`` (UTC) and spec name ``spec``. ``series`` also returns the per-unit worst values for
    a trend plot. Raises InputError when a store cannot be opened, or when ``lot`` is given and no
    store holds that lot (the message lists the lots present)."""
    from .store import Store

    if not stores:
        raise UsageError("no store given", parameter="store", expected="a store path or URL")
    since_t = parse_since(since)
    from sqlalchemy.exc import SQLAlchemyError

    from .errors import InputError
    from .store import _db_reason

    opened = []
    try:
        for u in stores:
            opened.append(Store(u, create=False))
        try:
            if lot is not None:
                _require_lot(opened, lot)
            return _history(opened, lot, since_t, spec, n_worst, series)
        except SQLAlchemyError as exc:
            raise InputError(f"cannot read the results store ({_db_reason(exc)})",
                             path=", ".join(st.shown for st in opened)) from None
    finally:
        for st in opened:
            st.close()


LOTS_LISTED = 20
"""An unknown lot's error names at most this many of the lots present."""


def lot_names(opened) -> list[str]:
    """Every lot in the opened stores, in natural order (``lot2`` before ``lot10``)."""
    from sqlalchemy import select

    from .batch import _natural

    _, _, U, _ = _tables()
    names: set[str] = set()
    for st in opened:
        with st.engine.connect() as conn:
            names |= {r[0] for r in conn.execute(select(U.c.lot).distinct())}
    return sorted(names, key=_natural)


def _require_lot(opened, lot: str) -> None:
    """Raise InputError (parameter ``lot``) when no store holds lot ``lot`` at all, naming the lots
    present (or saying the stores are empty). A lot that exists but has no unit within the other
    filters is not an error (the result is then empty)."""
    from .errors import InputError

    present = lot_names(opened)
    if lot in present:
        return
    where = ", ".join(st.shown for st in opened)
    if not present:
        raise InputError(f"no such lot: {where} is empty (no lot stored yet)", parameter="lot", value=lot,
                         expected="a store written by 'matchtool check --store ... --lot NAME'")
    shown = ", ".join(present[:LOTS_LISTED]) + (f" and {len(present) - LOTS_LISTED} more"
                                                if len(present) > LOTS_LISTED else "")
    raise InputError(f"no such lot in {where}", parameter="lot", value=lot,
                     expected=f"one of the lots present: {shown}")


def _history(opened, lot, since_t, spec, n_worst, series) -> HistoryResult:

    from .store import combine

    warnings: list[str] = []
    midnight = since_t is None or (since_t.hour, since_t.minute, since_t.second, since_t.microsecond) == (0, 0, 0, 0)
    lots: dict[str, dict] = {}
    for st in opened:
        units, reqs = (_stat_parts if midnight else _raw_parts)(st, lot, since_t, spec)
        for (lt, sn, sta, n, p, e, nf, fm, fq, fmin, fmax, t0, t1) in units:
            d = lots.setdefault(lt, {"n": 0, "p": 0, "e": 0, "t0": None, "t1": None, "f": (0, None, None),
                                     "fmin": None, "fmax": None, "reqs": {}, "specs": set(), "stations": set()})
            d["n"] += n
            d["p"] += p
            d["e"] += e
            d["t0"], d["t1"] = _mn(d["t0"], t0), _mx(d["t1"], t1)
            d["f"] = combine(d["f"], (nf, fm, fq))
            d["fmin"], d["fmax"] = _mn(d["fmin"], fmin), _mx(d["fmax"], fmax)
            d["specs"].add(sn)
            d["stations"].add(sta)
        for (lt, name, key, pos, n, p, nw, wm, wq, wmin, wmax, lmin, lmax, flo0, flo1, fhi0, fhi1) in reqs:
            if lt not in lots:
                continue
            d = lots[lt]["reqs"].setdefault((name, key), {"pos": pos, "n": 0, "p": 0, "w": (0, None, None),
                                                           "wmin": None, "wmax": None, "lmin": None, "lmax": None,
                                                           "flo": [None, None], "fhi": [None, None]})
            d["pos"] = min(d["pos"], pos)
            d["n"] += n
            d["p"] += p
            d["w"] = combine(d["w"], (nw, wm, wq))
            d["wmin"], d["wmax"] = _mn(d["wmin"], wmin), _mx(d["wmax"], wmax)
            d["lmin"], d["lmax"] = _mn(d["lmin"], lmin), _mx(d["lmax"], lmax)
            d["flo"] = [_mn(d["flo"][0], flo0), _mx(d["flo"][1], flo1)]
            d["fhi"] = [_mn(d["fhi"][0], fhi0), _mx(d["fhi"][1], fhi1)]
    if len(opened) > 1:
        warnings += _overlap_warnings(opened, lot, since_t, spec)
    failing_names = {lt: [nm for (nm, _k), r in sorted(d["reqs"].items(), key=lambda kv: (kv[1]["pos"], kv[0][0]))
                         if r["p"] < r["n"]]
                     for lt, d in lots.items()}
    cands = [_worst_candidates(st, list(lots), failing_names, lot, since_t, spec, n_worst) for st in opened]
    out = []
    for lt, d in sorted(lots.items(), key=lambda kv: (kv[1]["t0"] or datetime.min, kv[0])):
        rh = []
        for (name, key), r in sorted(d["reqs"].items(), key=lambda kv: kv[1]["pos"]):
            mean, std = _stats(*r["w"])
            c, side, why = _cpk_of(key, r["w"][0], mean, std, r["lmin"], r["lmax"], r["flo"], r["fhi"])
            rh.append(RequirementHistory(name=name, key=key, evaluated=r["n"], passed=r["p"], n_values=r["w"][0],
                                         mean=mean, std=std, min=r["wmin"], max=r["wmax"],
                                         limit=r["lmin"] if r["lmin"] == r["lmax"] else None,
                                         f_low_hz=r["flo"][1], f_high_hz=r["fhi"][0], cpk=c, cpk_side=side,
                                         cpk_reason=why))
        fmean, fstd = _stats(*d["f"])
        out.append(LotHistory(lot=lt, units=d["n"], passed=d["p"], failed=d["n"] - d["p"] - d["e"], errors=d["e"],
                              requirements=tuple(rh), resonance_n=d["f"][0], resonance_mean_hz=fmean,
                              resonance_std_hz=fstd, resonance_min_hz=d["fmin"], resonance_max_hz=d["fmax"],
                              worst=_merge_worst(lt, failing_names.get(lt, []), cands, n_worst),
                              specs=tuple(sorted(d["specs"])), stations=tuple(sorted(d["stations"])),
                              first_at=d["t0"], last_at=d["t1"]))
    return HistoryResult(lots=tuple(out), stores=tuple(st.shown for st in opened), lot=lot, since=since_t, spec=spec,
                         series=_series(opened, lot, since_t, spec) if series else (), warnings=tuple(warnings))


def _merge_worst(lt, names, cands, n_worst) -> tuple[StoredWorst, ...]:
    """Merge per-store candidates with the rule of :func:`matchtool.batch.worst_units`."""
    chosen: list[StoredWorst] = []
    taken: set[tuple] = set()
    for name in names:
        best = None
        for c in cands:
            per_req, _ = c.get(lt, ({}, []))
            if name in per_req:
                row, info = per_req[name]
                k = (row[1] is None, row[1] if row[1] is not None else 0.0, info[0] if info else "")
                if best is None or k < best[0]:
                    best = (k, row, info)
        if best is not None and best[2] is not None:  # a unit may be the worst of several requirements
            taken.add((best[2][0], best[2][1]))
            row = best[1]
            chosen.append(StoredWorst(best[2][0], best[2][1], name, row[2], row[3], row[4], ranked_by="requirement"))
    fill = []
    for c in cands:
        _, rows = c.get(lt, ({}, []))
        for rel, negcount, det, info in rows:
            if det is None or info is None or (info[0], info[1]) in taken:
                continue
            fill.append(((rel is None, rel if rel is not None else 0.0, negcount, info[0]), det, info))
    fill.sort(key=lambda t: t[0])
    for _, det, info in fill:
        if len(taken) >= n_worst:
            break
        if (info[0], info[1]) in taken:
            continue
        taken.add((info[0], info[1]))
        chosen.append(StoredWorst(info[0], info[1], det[1], det[2], det[3], det[4], passed=not names))
    return tuple(chosen)


def _overlap_warnings(opened, lot, since, spec) -> list[str]:
    """Units (the same key) present in more than one store are counted once per store: say so."""
    from sqlalchemy import and_, select

    _, _, U, _ = _tables()
    seen: set[str] = set()
    dup = 0
    for st in opened:
        with st.engine.connect() as conn:
            uids = {r[0] for r in conn.execute(select(U.c.uid).where(and_(True, *_filters(U, lot, since, spec))))}
        dup += len(uids & seen)
        seen |= uids
    if dup:
        return [f"{dup} unit(s) appear in more than one store (same sweep, spec, lot and station) and are counted "
                "once per store; pass each store once, or merge them"]
    return []


def _mn(a, b):
    return b if a is None else a if b is None else min(a, b)


def _mx(a, b):
    return b if a is None else a if b is None else max(a, b)

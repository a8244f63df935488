"""Spec files (TOML) and the pass/fail evaluation of one sweep against them.

A spec states requirements on the reflection of each port, and between ports of a multi-port
(multi-antenna) file::

    port = 1                 # optional, 1-based: the default port of [[band]], [resonance], [golden]
    z0_ohm = 50              # optional: renormalise to this system impedance (ohm)

    [[band]]
    name = "ism"
    f_low = "902 MHz"        # a string with a unit, or a number in Hz
    f_high = "928 MHz"
    min_return_loss_db = 10  # exactly one of min_return_loss_db, max_vswr, max_s11_db
    max_mismatch_loss_db = 0.5   # optional
    port = 2                 # optional (default: the top-level port); a name may repeat once per port

    [[isolation]]            # between two ports: isolation = -20 log10 |S_ij| (both S_ij and S_ji)
    name = "wifi to ble"
    ports = [1, 2]
    f_low = "2.4 GHz"
    f_high = "2.4835 GHz"
    min_isolation_db = 15    # positive dB

    [[correlation]]          # envelope correlation coefficient from S-parameters
    name = "mimo pair"
    ports = [1, 2]
    f_low = "2.4 GHz"
    f_high = "2.4835 GHz"
    max_ecc = 0.5

    [resonance]              # optional: the best-matched sample must lie inside
    f_low = "905 MHz"
    f_high = "925 MHz"

    [golden]                 # optional: stay close to a known-good unit
    file = "golden.s1p"      # relative to the spec file
    band = "ism"             # the name of one [[band]]
    max_deviation_db = 3

Each kind of requirement is one class in :data:`KINDS` (parse, evaluate, the unit of its limit, a
short description); a new kind is added there alone. The limit keys, their units and descriptions
are in :data:`LIMITS`, which the renderers read instead of switching on key names.

Evaluation rules (see docs/check.md):

- The worst case over a band is taken over the samples inside the band plus the band-edge values,
  interpolated linearly in complex Gamma (or complex S_ij) between the two bracketing samples
  (:func:`matchtool.bands.worst_in_band`; the contract's rule for any value between samples, so
  ``matchtool inspect --at EDGE`` shows the same number). |Gamma| of a straight segment is largest
  at one of its ends, so the samples plus the edges give the exact worst case of the interpolated
  curve: a coarse sweep cannot pass because its samples miss a failing band edge. Near a deep null
  complex Gamma is close to linear in frequency, so this reads the edges far better than
  interpolating the dB curve would; when the phase turns far between two samples the straight
  chord reads |Gamma| low, hence the warning for a band with fewer than three samples.
- A band the sweep does not cover fails, with the reason; fewer than three samples in a band warn.
- A spec naming a port the file lacks is an error for that file, never a pass; a multi-port file
  of which the spec checks only some ports gets a warning naming the ports not checked.
- ``limit`` and ``worst`` are in the units of the limit key: positive dB of return loss for
  ``min_return_loss_db``, a ratio for ``max_vswr``, dB of S11 for ``max_s11_db``, dB for
  ``max_mismatch_loss_db`` and ``max_deviation_db``, positive dB of isolation for
  ``min_isolation_db``, the dimensionless ECC for ``max_ecc``. ``margin_db`` is positive when
  passing; for ``max_vswr`` it is the margin in dB of return loss (worst return loss minus the
  return loss of the VSWR limit), and likewise dB of S11 equals dB of return loss for
  ``max_s11_db``. ECC has no dB margin: ``margin_ecc`` (limit minus worst) instead.
"""

from __future__ import annotations

import math
import tomllib
import unicodedata
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, ClassVar

import numpy as np

from . import reflection as rf
from .bands import CAP_DB, MIN_BAND_SAMPLES, band_samples, sweep_covers, worst_in_band
from .errors import MatchtoolError, SpecError, UsageError
from .sweep import Sweep, _file_reference, _port_warnings, load, parse_touchstone, ports_from_name, sweep_from_arrays

_CAP_DB = CAP_DB  # the old private name (the one definition lives in bands.py)
MAX_SPEC_BYTES = 1_000_000
"""A spec file larger than this is refused unread (a real spec is a few hundred bytes)."""


@dataclass(frozen=True)
class LimitKey:
    """What a renderer needs to know of one limit key: ``unit`` of ``limit`` and ``worst``,
    ``description`` (a few words: what the limit bounds), ``margin_unit`` (what ``margin_db`` or the
    kind's margin is measured in), ``digits`` to show, and ``reflection`` (one of the three
    equivalent reflection limits)."""

    key: str
    unit: str
    description: str
    margin_unit: str
    digits: int = 2
    reflection: bool = False


LIMITS: dict[str, LimitKey] = {k.key: k for k in (
    LimitKey("min_return_loss_db", "dB return loss", "minimum return loss", "dB of return loss", 2, True),
    LimitKey("max_vswr", "ratio", "maximum VSWR", "dB of return loss", 3, True),
    LimitKey("max_s11_db", "dB S11", "maximum S11", "dB of return loss", 2, True),
    LimitKey("max_mismatch_loss_db", "dB", "maximum mismatch loss", "dB of mismatch loss"),
    LimitKey("max_deviation_db", "dB", "maximum deviation from the golden unit", "dB of deviation"),
    LimitKey("resonance", "Hz", "best match inside the window", "MHz inside the window", 0),
    LimitKey("min_isolation_db", "dB isolation", "minimum isolation between two ports", "dB of isolation"),
    LimitKey("max_ecc", "ECC", "maximum envelope correlation of two ports", "ECC (limit minus worst)", 3),
)}
"""Every key a :class:`RequirementResult` may carry."""

LIMIT_KEYS = ("min_return_loss_db", "max_vswr", "max_s11_db")
"""The three equivalent ways to state a band's reflection limit."""

LIMIT_UNITS = {k: v.unit for k, v in LIMITS.items()}
"""The unit of ``limit`` and ``worst`` for each kind of requirement (from :data:`LIMITS`)."""


def limit_info(key: str) -> LimitKey:
    """The :class:`LimitKey` of ``key`` (KeyError for a key no requirement kind uses)."""
    return LIMITS[key]


# --------------------------------------------------------------------------------------------- model

@dataclass(frozen=True)
class RequirementResult:
    """The verdict of one requirement on one unit.

    ``limit`` and ``worst`` are in the units of ``key`` (see :data:`LIMITS`); ``margin_db`` is
    positive when passing (dB of return loss for the reflection limits, dB of isolation for
    ``min_isolation_db``). ``worst`` and ``margin_db`` are None when the requirement could not be
    evaluated (``reason`` says why); the resonance requirement has no dB margin and reports
    ``margin_hz`` instead, the ECC requirement ``margin_ecc``. ``port`` is the port of a one-port
    requirement, ``ports`` the pair of a two-port one; ``checked`` says which S-parameters were
    read where that is not obvious (e.g. ``"S21 and S12"``).
    """

    name: str
    key: str
    passed: bool
    limit: float | None
    worst: float | None
    worst_f_hz: float | None
    margin_db: float | None
    f_low_hz: float
    f_high_hz: float
    worst_return_loss_db: float | None = None
    margin_hz: float | None = None
    samples: int = 0
    reason: str = ""
    port: int | None = None
    ports: tuple[int, int] | None = None
    margin_ecc: float | None = None
    checked: str = ""

    @property
    def unit(self) -> str:
        return LIMITS[self.key].unit

    @property
    def info(self) -> LimitKey:
        """Unit, description and margin unit of this requirement's key."""
        return LIMITS[self.key]


@dataclass(frozen=True)
class UnitResult:
    """All verdicts for one file. ``error`` is the one-line reason when it could not be read
    (then ``requirements`` is empty and ``passed`` is False)."""

    file: str
    passed: bool
    requirements: tuple[RequirementResult, ...] = ()
    error: str | None = None
    best_f_hz: float | None = None
    best_return_loss_db: float | None = None
    warnings: tuple[str, ...] = field(default=())


@dataclass
class _Parse:
    """What a kind's parser needs besides its own table: the spec's path, default port, system
    impedance, the warnings so far and the bands already parsed (the golden table refers to one)."""

    path: str
    port: int
    z0_ohm: float | None
    warnings: list[str]
    bands: tuple[BandSpec, ...] = ()


@dataclass
class _Eval:
    """One unit under evaluation: frequencies (Hz), the full S-matrix when at hand (n, N, N), else
    the reflection of the ports needed; warnings collected for ``file``."""

    f: np.ndarray
    s: np.ndarray | None
    gammas: dict[int, np.ndarray]
    file: str
    warnings: list[str]

    def gamma(self, port: int) -> np.ndarray:
        if port in self.gammas:
            return self.gammas[port]
        if self.s is None:
            raise UsageError(f"the reflection of port {port} is needed", parameter="gamma",
                             expected="the full S-matrix (n, N, N) for a spec naming several ports")
        return self.s[:, port - 1, port - 1]

    def matrix(self) -> np.ndarray:
        if self.s is None:
            raise UsageError("a two-port requirement needs the full S-matrix", parameter="gamma",
                             expected="the S-matrix (n, N, N), or a Sweep / skrf.Network")
        return self.s


def _port_value(v: Any, path: str, key: str) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or v < 1:
        raise SpecError(f"port is {v!r}", path=path, key=key, expected="a port number from 1")
    return int(v)


def _pair_value(v: Any, path: str, key: str) -> tuple[int, int]:
    if (not isinstance(v, list) or len(v) != 2
            or any(isinstance(x, bool) or not isinstance(x, int) or x < 1 for x in v)):
        raise SpecError(f"ports is {v!r}", path=path, key=key, expected="two port numbers such as [1, 2]")
    if v[0] == v[1]:
        raise SpecError(f"ports names port {v[0]} twice", path=path, key=key, expected="two different ports")
    return (int(v[0]), int(v[1]))


def _name_value(t: dict, path: str, prefix: str, what: str) -> str:
    name = t.get("name")
    if not isinstance(name, str) or not name.strip():
        raise SpecError(f"missing or empty {what} name", path=path, key=prefix + "name", expected="a string")
    name = name.strip()
    _control_free(name, path, prefix + "name")
    return name


def _not_covered(name: str, key: str, limit: float, lo: float, hi: float, f: np.ndarray,
                 **extra: Any) -> RequirementResult:
    reason = (f"the sweep ({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz) does not cover the band "
              f"({lo / 1e6:.6g} to {hi / 1e6:.6g} MHz)")
    return RequirementResult(name=name, key=key, passed=False, limit=limit, worst=None, worst_f_hz=None,
                             margin_db=None, f_low_hz=lo, f_high_hz=hi, reason=reason, **extra)


def _few_samples(ev: _Eval, what: str, lo: float, hi: float) -> int:
    n_in = int(np.count_nonzero((ev.f >= lo) & (ev.f <= hi)))
    if n_in < MIN_BAND_SAMPLES:
        ev.warnings.append(f"{ev.file}: {what} holds {n_in} sample(s); the worst case leans on interpolation "
                           f"(measure at least {MIN_BAND_SAMPLES} points in the band)")
    return n_in


def _mhz(lo: float, hi: float) -> str:
    return f"{lo / 1e6:.6g} to {hi / 1e6:.6g} MHz"


def _s_name(i: int, j: int) -> str:
    return f"S{i}{j}" if i < 10 and j < 10 else f"S{i},{j}"


class Requirement:
    """One kind of requirement: its TOML table, keys, parser, evaluation and description.

    Subclasses are frozen dataclasses registered in :data:`KINDS`. ``parse`` builds one from its
    table (``prefix`` is the key path for messages, e.g. ``"band[2]."``); ``evaluate`` gives its
    verdicts on one unit; ``result_names`` the names those verdicts carry (unique in a spec);
    ``ports`` the ports it reads; ``describe`` a short description for people.
    """

    TABLE: ClassVar[str]
    ARRAY: ClassVar[bool] = True
    KEYS: ClassVar[frozenset[str]]
    LIMIT_KEYS: ClassVar[tuple[str, ...]]

    @classmethod
    def parse(cls, t: dict, prefix: str, ctx: _Parse) -> Requirement:  # pragma: no cover - abstract
        raise NotImplementedError

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:  # pragma: no cover - abstract
        raise NotImplementedError

    def result_names(self) -> list[str]:  # pragma: no cover - abstract
        raise NotImplementedError

    @property
    def ports(self) -> tuple[int, ...]:  # pragma: no cover - abstract
        raise NotImplementedError

    def describe(self) -> str:  # pragma: no cover - abstract
        raise NotImplementedError

    def unit(self, key: str | None = None) -> str:
        """The unit of ``limit`` and ``worst`` for ``key`` (default: the kind's first limit key)."""
        return LIMITS[key or self.LIMIT_KEYS[0]].unit


@dataclass(frozen=True)
class BandSpec(Requirement):
    """One ``[[band]]``: frequencies in Hz; ``limit_key`` is one of :data:`LIMIT_KEYS` and ``limit``
    its value in that key's units; ``max_mismatch_loss_db`` is optional (dB, positive); ``port``
    1-based; ``label`` the requirement name when the band name repeats on several ports."""

    TABLE: ClassVar[str] = "band"
    KEYS: ClassVar[frozenset[str]] = frozenset({"name", "f_low", "f_high", "max_mismatch_loss_db", "port",
                                                *LIMIT_KEYS})
    LIMIT_KEYS: ClassVar[tuple[str, ...]] = (*LIMIT_KEYS, "max_mismatch_loss_db")

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_key: str
    limit: float
    max_mismatch_loss_db: float | None = None
    port: int = 1
    label: str = ""

    @property
    def min_return_loss_db(self) -> float:
        """The limit as a minimum return loss in positive dB (all three keys mean this)."""
        if self.limit_key == "min_return_loss_db":
            return self.limit
        if self.limit_key == "max_s11_db":
            return -self.limit
        return float(rf.return_loss_from_vswr(self.limit))

    @property
    def requirement_name(self) -> str:
        return self.label or self.name

    @property
    def ports(self) -> tuple[int, ...]:
        return (self.port,)

    def result_names(self) -> list[str]:
        n = self.requirement_name
        return [n] + ([f"{n} mismatch loss"] if self.max_mismatch_loss_db is not None else [])

    def describe(self) -> str:
        return (f"port {self.port}: {self.limit_key} = {self.limit:g} ({LIMITS[self.limit_key].unit}) over "
                f"{_mhz(self.f_low_hz, self.f_high_hz)}")

    @classmethod
    def parse(cls, t: dict, prefix: str, ctx: _Parse) -> BandSpec:
        path = ctx.path
        name = _name_value(t, path, prefix, "band")
        port = _port_value(t["port"], path, prefix + "port") if "port" in t else ctx.port
        lo, hi = _edges(t, path, prefix)
        given = [k for k in LIMIT_KEYS if k in t]
        if not given:
            raise SpecError(f"band {name!r} has no limit", path=path, key=prefix + "min_return_loss_db",
                            expected="exactly one of " + ", ".join(LIMIT_KEYS))
        if len(given) > 1:
            raise SpecError(f"band {name!r} has two limits ({' and '.join(given)})", path=path,
                            key=prefix + given[1], expected="exactly one of " + ", ".join(LIMIT_KEYS))
        key = given[0]
        limit = _number(t[key], path, prefix + key, "limit")
        if key == "min_return_loss_db" and limit < 0:
            raise SpecError(f"negative return loss {limit:g} dB (return loss is positive; S11 is its negative)",
                            path=path, key=prefix + key,
                            expected="e.g. min_return_loss_db = 10, or max_s11_db = -10")
        if key == "max_s11_db" and limit > 0:
            raise SpecError(f"positive S11 limit {limit:g} dB (a passive load has S11 <= 0 dB)", path=path,
                            key=prefix + key, expected="e.g. max_s11_db = -10, or min_return_loss_db = 10")
        if key == "max_vswr" and limit < 1:
            raise SpecError(f"VSWR limit {limit:g} is below 1", path=path, key=prefix + key,
                            expected="a VSWR above 1, e.g. 2")
        if key == "max_vswr" and limit == 1:
            raise SpecError("VSWR limit 1 asks for a perfect match, which no measured unit meets", path=path,
                            key=prefix + key, expected="a VSWR above 1, e.g. 2")
        ml = None
        if "max_mismatch_loss_db" in t:
            ml = _number(t["max_mismatch_loss_db"], path, prefix + "max_mismatch_loss_db", "limit")
            if ml < 0:
                raise SpecError(f"negative mismatch loss {ml:g} dB", path=path, key=prefix + "max_mismatch_loss_db",
                                expected="a loss in positive dB, e.g. 0.5")
        return cls(name, lo, hi, key, limit, ml, port)

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:
        f, lo, hi, name = ev.f, self.f_low_hz, self.f_high_hz, self.requirement_name
        at = {"port": self.port}
        if not sweep_covers(f, lo, hi):
            out = [_not_covered(name, self.limit_key, self.limit, lo, hi, f, **at)]
            if self.max_mismatch_loss_db is not None:
                out.append(_not_covered(f"{name} mismatch loss", "max_mismatch_loss_db", self.max_mismatch_loss_db,
                                        lo, hi, f, **at))
            return out
        w = worst_in_band(f, ev.gamma(self.port), lo, hi)
        n_in = _few_samples(ev, f"band {name!r}", lo, hi)
        mag, worst_f = w.magnitude, w.worst_f_hz
        worst_rl = min(float(rf.return_loss_db(mag)), CAP_DB) + 0.0  # + 0.0: a short gives 0.0, not -0.0
        margin = worst_rl - self.min_return_loss_db
        if self.limit_key == "min_return_loss_db":
            worst = worst_rl
        elif self.limit_key == "max_s11_db":
            worst = -worst_rl
        else:
            worst = float(rf.vswr(mag))
        out = [RequirementResult(name=name, key=self.limit_key, passed=bool(margin >= 0), limit=self.limit,
                                 worst=worst, worst_f_hz=worst_f, margin_db=margin, f_low_hz=lo, f_high_hz=hi,
                                 worst_return_loss_db=worst_rl, samples=n_in, **at)]
        if self.max_mismatch_loss_db is not None:
            ml = float(rf.mismatch_loss_db(mag))
            m = self.max_mismatch_loss_db - ml if math.isfinite(ml) else -math.inf
            out.append(RequirementResult(
                name=f"{name} mismatch loss", key="max_mismatch_loss_db", passed=bool(m >= 0),
                limit=self.max_mismatch_loss_db, worst=ml if math.isfinite(ml) else None, worst_f_hz=worst_f,
                margin_db=m if math.isfinite(m) else None, f_low_hz=lo, f_high_hz=hi, worst_return_loss_db=worst_rl,
                samples=n_in, reason="" if math.isfinite(ml) else "|Gamma| >= 1: mismatch loss is undefined", **at))
        return out


@dataclass(frozen=True)
class _PairSpec(Requirement):
    """Common part of the requirements between two ports (``ports`` 1-based, as written)."""

    name: str
    pair: tuple[int, int]
    f_low_hz: float
    f_high_hz: float
    limit: float

    @property
    def ports(self) -> tuple[int, ...]:
        return tuple(self.pair)

    def result_names(self) -> list[str]:
        return [self.name]

    @classmethod
    def _parse_common(cls, t: dict, prefix: str, ctx: _Parse, what: str) -> tuple[str, tuple[int, int], float, float]:
        name = _name_value(t, ctx.path, prefix, what)
        if "ports" not in t:
            raise SpecError("missing", path=ctx.path, key=prefix + "ports", expected="two port numbers such as [1, 2]")
        pair = _pair_value(t["ports"], ctx.path, prefix + "ports")
        lo, hi = _edges(t, ctx.path, prefix)
        return name, pair, lo, hi


@dataclass(frozen=True)
class IsolationSpec(_PairSpec):
    """One ``[[isolation]]``: isolation ``-20 log10 |S_ij|`` (positive dB) of the two ``ports`` at
    least ``limit`` dB over [f_low_hz, f_high_hz]. Both S_ij and S_ji are read and the smaller
    isolation counts (a reciprocal file has them equal; ``checked`` says which were read)."""

    TABLE: ClassVar[str] = "isolation"
    KEYS: ClassVar[frozenset[str]] = frozenset({"name", "ports", "f_low", "f_high", "min_isolation_db"})
    LIMIT_KEYS: ClassVar[tuple[str, ...]] = ("min_isolation_db",)

    @property
    def min_isolation_db(self) -> float:
        return self.limit

    def describe(self) -> str:
        i, j = self.pair
        return f"ports {i},{j}: isolation at least {self.limit:g} dB over {_mhz(self.f_low_hz, self.f_high_hz)}"

    @classmethod
    def parse(cls, t: dict, prefix: str, ctx: _Parse) -> IsolationSpec:
        name, pair, lo, hi = cls._parse_common(t, prefix, ctx, "isolation")
        key = "min_isolation_db"
        if key not in t:
            raise SpecError(f"isolation {name!r} has no limit", path=ctx.path, key=prefix + key,
                            expected="min_isolation_db in positive dB, e.g. 15")
        limit = _number(t[key], ctx.path, prefix + key, "limit")
        if limit <= 0:
            raise SpecError(f"isolation limit {limit:g} dB (isolation is positive dB: -20 log10 |S21|)",
                            path=ctx.path, key=prefix + key, expected="a positive number of dB, e.g. 15")
        return cls(name, pair, lo, hi, limit)

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:
        from .coupling import isolation_db, same_both_ways

        f, lo, hi = ev.f, self.f_low_hz, self.f_high_hz
        i, j = self.pair
        s = ev.matrix()
        same = same_both_ways(s, i, j)
        checked = (f"{_s_name(i, j)} (equal to {_s_name(j, i)} in the file)" if same
                   else f"{_s_name(i, j)} and {_s_name(j, i)}")
        at = {"ports": self.pair, "checked": checked}
        if not sweep_covers(f, lo, hi):
            return [_not_covered(self.name, "min_isolation_db", self.limit, lo, hi, f, **at)]
        w = max((worst_in_band(f, s[:, a - 1, b - 1], lo, hi) for a, b in ((i, j), (j, i))),
                key=lambda x: x.magnitude)
        n_in = _few_samples(ev, f"isolation {self.name!r}", lo, hi)
        worst = float(isolation_db(w.magnitude)) + 0.0
        margin = worst - self.limit
        return [RequirementResult(name=self.name, key="min_isolation_db", passed=bool(margin >= 0), limit=self.limit,
                                  worst=worst, worst_f_hz=w.worst_f_hz, margin_db=margin, f_low_hz=lo, f_high_hz=hi,
                                  samples=n_in, **at)]


@dataclass(frozen=True)
class CorrelationSpec(_PairSpec):
    """One ``[[correlation]]``: the envelope correlation coefficient of the two ``ports`` from
    S-parameters (see :mod:`matchtool.coupling`) at most ``limit`` over [f_low_hz, f_high_hz]."""

    TABLE: ClassVar[str] = "correlation"
    KEYS: ClassVar[frozenset[str]] = frozenset({"name", "ports", "f_low", "f_high", "max_ecc"})
    LIMIT_KEYS: ClassVar[tuple[str, ...]] = ("max_ecc",)

    @property
    def max_ecc(self) -> float:
        return self.limit

    def describe(self) -> str:
        i, j = self.pair
        return (f"ports {i},{j}: envelope correlation at most {self.limit:g} over "
                f"{_mhz(self.f_low_hz, self.f_high_hz)} (from S-parameters, lossless antennas assumed)")

    @classmethod
    def parse(cls, t: dict, prefix: str, ctx: _Parse) -> CorrelationSpec:
        name, pair, lo, hi = cls._parse_common(t, prefix, ctx, "correlation")
        key = "max_ecc"
        if key not in t:
            raise SpecError(f"correlation {name!r} has no limit", path=ctx.path, key=prefix + key,
                            expected="max_ecc between 0 and 1, e.g. 0.5")
        limit = _number(t[key], ctx.path, prefix + key, "limit")
        if not 0 < limit < 1:
            raise SpecError(f"ECC limit {limit:g}", path=ctx.path, key=prefix + key,
                            expected="a value above 0 and below 1, e.g. 0.5 (ECC lies between 0 and 1)")
        return cls(name, pair, lo, hi, limit)

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:
        from .coupling import envelope_correlation

        f, lo, hi = ev.f, self.f_low_hz, self.f_high_hz
        i, j = self.pair
        at = {"ports": self.pair, "checked": "ECC from S-parameters (lossless antennas assumed)"}
        if not sweep_covers(f, lo, hi):
            return [_not_covered(self.name, "max_ecc", self.limit, lo, hi, f, **at)]
        s = ev.matrix()
        fb, sb = band_samples(f, s, max(lo, f[0]), min(hi, f[-1]))
        fb[0], fb[-1] = lo, hi
        rho, undefined, clipped = envelope_correlation(sb, i, j)
        if undefined.any() or clipped.any():
            ev.warnings.append(f"{ev.file}: correlation {self.name!r}: the ECC formula is undefined or above 1 at "
                               f"{int(undefined.sum() + clipped.sum())} point(s) in the band (1 - sum |S|^2 <= 0: "
                               "noise, calibration or |S| > 1); counted as 1 (fully correlated)")
        n_in = _few_samples(ev, f"correlation {self.name!r}", lo, hi)
        k = int(np.argmax(rho))
        worst = float(rho[k])
        margin = self.limit - worst
        return [RequirementResult(name=self.name, key="max_ecc", passed=bool(margin >= 0), limit=self.limit,
                                  worst=worst, worst_f_hz=float(fb[k]), margin_db=None, f_low_hz=lo, f_high_hz=hi,
                                  samples=n_in, margin_ecc=margin, **at)]


@dataclass(frozen=True)
class ResonanceSpec(Requirement):
    """``[resonance]``: the best-matched sample (smallest |Gamma|) of ``port`` must lie in
    [f_low, f_high] Hz."""

    TABLE: ClassVar[str] = "resonance"
    ARRAY: ClassVar[bool] = False
    KEYS: ClassVar[frozenset[str]] = frozenset({"f_low", "f_high"})
    LIMIT_KEYS: ClassVar[tuple[str, ...]] = ("resonance",)

    f_low_hz: float
    f_high_hz: float
    port: int = 1

    @property
    def ports(self) -> tuple[int, ...]:
        return (self.port,)

    def result_names(self) -> list[str]:
        return ["resonance"]

    def describe(self) -> str:
        return f"port {self.port}: best match inside {_mhz(self.f_low_hz, self.f_high_hz)}"

    @classmethod
    def parse(cls, t: dict, prefix: str, ctx: _Parse) -> ResonanceSpec:
        return cls(*_edges(t, ctx.path, prefix), port=ctx.port)

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:
        g = ev.gamma(self.port)
        i = int(np.argmin(np.abs(g)))
        best_f, best_rl = float(ev.f[i]), float(rf.return_loss_db(g[i])) + 0.0
        m_hz = min(best_f - self.f_low_hz, self.f_high_hz - best_f)
        return [RequirementResult(name="resonance", key="resonance", passed=bool(m_hz >= 0), limit=None,
                                  worst=best_f, worst_f_hz=best_f, margin_db=None, f_low_hz=self.f_low_hz,
                                  f_high_hz=self.f_high_hz, worst_return_loss_db=min(best_rl, CAP_DB),
                                  margin_hz=m_hz, samples=int(ev.f.size), port=self.port,
                                  reason="" if m_hz >= 0 else "the best match lies outside the resonance window")]


@dataclass(frozen=True, eq=False)
class GoldenSpec(Requirement):
    """``[golden]``: a known-good unit's reflection (``f_hz``, complex ``gamma``) whose return-loss
    curve a unit may not stray from by more than ``max_deviation_db`` over ``band``."""

    TABLE: ClassVar[str] = "golden"
    ARRAY: ClassVar[bool] = False
    KEYS: ClassVar[frozenset[str]] = frozenset({"file", "band", "max_deviation_db", "port", "rl_ceiling_db"})
    LIMIT_KEYS: ClassVar[tuple[str, ...]] = ("max_deviation_db",)

    path: str
    band: str
    max_deviation_db: float
    f_hz: np.ndarray
    gamma: np.ndarray
    rl_ceiling_db: float | None = None
    """Return loss above this (positive dB) counts as this in both curves, so that two deep nulls
    of different depth (35 dB against 45 dB, both excellent) do not count as a deviation."""
    port: int = 1
    band_spec: BandSpec | None = None

    @property
    def ports(self) -> tuple[int, ...]:
        return (self.port,)

    def result_names(self) -> list[str]:
        return [f"{self.band_spec.requirement_name if self.band_spec else self.band} deviation from golden"]

    def describe(self) -> str:
        return f"port {self.port}: within {self.max_deviation_db:g} dB of the golden unit over band {self.band!r}"

    @classmethod
    def parse(cls, t: Any, prefix: str, ctx: _Parse) -> GoldenSpec:
        return _golden(t, ctx.path, ctx.bands, ctx.port, ctx.z0_ohm, ctx.warnings)

    def evaluate(self, ev: _Eval) -> list[RequirementResult]:
        b = self.band_spec
        return [_golden_result(self, b, ev.f, ev.gamma(self.port))]


KINDS: dict[str, type[Requirement]] = {k.TABLE: k for k in (BandSpec, IsolationSpec, CorrelationSpec, ResonanceSpec,
                                                             GoldenSpec)}
"""Every kind of requirement, by its TOML table name, in evaluation order."""


@dataclass(frozen=True)
class Spec:
    """A validated spec file. ``port`` is 1-based (the default of the one-port tables); ``z0_ohm``
    None keeps each file's reference."""

    path: str
    bands: tuple[BandSpec, ...]
    port: int = 1
    z0_ohm: float | None = None
    resonance: ResonanceSpec | None = None
    golden: GoldenSpec | None = None
    name: str = ""
    warnings: tuple[str, ...] = ()
    isolations: tuple[IsolationSpec, ...] = ()
    correlations: tuple[CorrelationSpec, ...] = ()
    port_keys: tuple[tuple[int, str], ...] = ()
    """(port, spec key that names it), the first key for each port the spec reads."""

    def band(self, name: str) -> BandSpec:
        for b in self.bands:
            if b.name == name:
                return b
        raise KeyError(name)

    @property
    def requirements(self) -> tuple[Requirement, ...]:
        """Every requirement in evaluation order (bands, isolation, correlation, resonance, golden)."""
        extra = tuple(x for x in (self.resonance, self.golden) if x is not None)
        return (*self.bands, *self.isolations, *self.correlations, *extra)

    @property
    def ports(self) -> tuple[int, ...]:
        """Every port the spec reads, ascending."""
        return tuple(sorted({p for r in self.requirements for p in r.ports}))

    @property
    def needs_matrix(self) -> bool:
        """Whether evaluating needs more than the reflection of the one port ``port``."""
        return self.ports != (self.port,) or bool(self.isolations or self.correlations)

    def key_for_port(self, port: int) -> str:
        return next((k for p, k in self.port_keys if p == port), "port")


# ----------------------------------------------------------------------------------------- loading

def _number(value: Any, path: str, key: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise SpecError(f"{what} is {value!r}, not a number", path=path, key=key)
    x = float(value)
    if not math.isfinite(x):
        raise SpecError(f"{what} is {value!r}", path=path, key=key, expected="a finite number")
    return x


def _frequency(value: Any, path: str, key: str) -> float:
    from .units import parse_frequency

    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise SpecError(f"frequency is {value!r}", path=path, key=key,
                        expected="a string with a unit such as \"902 MHz\", or a number in Hz")
    try:
        f = parse_frequency(value)
    except MatchtoolError as exc:
        raise SpecError(exc.what, path=path, key=key, expected=exc.expected) from None
    if f < 0:
        raise SpecError(f"negative frequency {value!r}", path=path, key=key, expected="a frequency >= 0")
    return f


def _unknown(table: dict, allowed: set[str], path: str, prefix: str) -> None:
    for k in table:
        if k not in allowed:
            raise SpecError(f"unknown key {k!r}", path=path, key=f"{prefix}{k}",
                            expected="one of " + ", ".join(sorted(allowed)))


def _edges(t: dict, path: str, prefix: str) -> tuple[float, float]:
    for k in ("f_low", "f_high"):
        if k not in t:
            raise SpecError("missing", path=path, key=prefix + k, expected="a frequency such as \"902 MHz\"")
    lo = _frequency(t["f_low"], path, prefix + "f_low")
    hi = _frequency(t["f_high"], path, prefix + "f_high")
    if hi == lo:
        raise SpecError(f"zero-width band ({lo:g} Hz to {hi:g} Hz)", path=path, key=prefix + "f_high",
                        expected="f_high above f_low")
    if hi < lo:
        raise SpecError(f"reversed band: f_high {hi:g} Hz is below f_low {lo:g} Hz", path=path,
                        key=prefix + "f_high", expected="f_high above f_low")
    return lo, hi


def _bare_hz_warning(t: dict, path: str, prefix: str, warnings: list[str]) -> None:
    for k in ("f_low", "f_high"):
        v = t.get(k)
        if isinstance(v, int | float) and not isinstance(v, bool) and 0 < v < 1e5:
            warnings.append(f"{path}: {prefix}{k} = {v!r} is read as {v:g} Hz (a bare number is Hz); "
                            f"write \"{v:g} MHz\" if that was meant")


def _control_free(name: str, path: str, key: str) -> None:
    """Refuse a name holding a control character (NUL, ESC, ...): it would reach terminals, XML
    and CSV reports, where it corrupts the output or cannot be written at all."""
    bad = next((c for c in name if unicodedata.category(c) == "Cc"), None)
    if bad is not None:
        raise SpecError(f"name holds the control character U+{ord(bad):04X}", path=path, key=key,
                        expected="printable text")


def _tables(doc: dict, kind: type[Requirement], path: str) -> list[tuple[str, Any]]:
    """The raw tables of one kind with their key prefixes (``band[1].``), shapes checked."""
    name = kind.TABLE
    if name not in doc:
        return []
    raw = doc[name]
    if not kind.ARRAY:
        if not isinstance(raw, dict):
            raise SpecError("is not a table", path=path, key=name, expected=f"a [{name}] table")
        return [(f"{name}.", raw)]
    if isinstance(raw, dict):
        raise SpecError(f"[{name}] is a single table", path=path, key=name,
                        expected=f"[[{name}]] (an array of tables)")
    if not isinstance(raw, list):
        raise SpecError(f"{name} is {raw!r}", path=path, key=name, expected=f"[[{name}]] tables")
    out = []
    for i, t in enumerate(raw):
        if not isinstance(t, dict):
            raise SpecError("is not a table", path=path, key=f"{name}[{i + 1}]", expected=f"[[{name}]] tables")
        out.append((f"{name}[{i + 1}].", t))
    return out


def parse_spec(text: str, path: str | Path = "<spec>", port: int | None = None, z0_ohm: float | None = None) -> Spec:
    """Validate TOML spec text. Relative golden paths resolve against ``path``'s directory.

    ``port`` / ``z0_ohm`` (if given) override the spec's own. Raises :class:`SpecError` (one line
    naming the spec file and key).
    """
    path = str(path)
    try:
        doc = tomllib.loads(text)
    except RecursionError:  # arrays or inline tables nested thousands deep
        raise SpecError("not valid TOML: values nested too deeply", path=path,
                        expected="a spec of plain keys and [[band]], [[isolation]], [[correlation]], "
                                 "[resonance] and [golden] tables") from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        line = None
        if "(at line " in msg:
            try:
                line = int(msg.split("(at line ", 1)[1].split(",", 1)[0])
            except ValueError:
                line = None
            msg = msg.split(" (at line ", 1)[0]
        raise SpecError(f"not valid TOML: {msg}", path=path, line=line) from None
    _unknown(doc, {"name", "port", "z0_ohm", *KINDS}, path, "")
    name = doc.get("name", "")
    if not isinstance(name, str):
        raise SpecError(f"name is {name!r}", path=path, key="name", expected="a string")
    _control_free(name, path, "name")
    if port is None:
        port = _port_value(doc.get("port", 1), path, "port")
    if z0_ohm is None and "z0_ohm" in doc:
        z0_ohm = _number(doc["z0_ohm"], path, "z0_ohm", "reference impedance")
        if z0_ohm <= 0:
            raise SpecError(f"reference impedance {z0_ohm:g} ohm", path=path, key="z0_ohm",
                            expected="a positive impedance in ohms, e.g. 50")
    ctx = _Parse(path=path, port=port, z0_ohm=z0_ohm, warnings=[])
    parsed: dict[str, list[tuple[str, Requirement]]] = {}
    port_keys: dict[int, str] = {}
    if "port" in doc:
        port_keys[port] = "port"
    for table, kind in KINDS.items():
        items = _tables(doc, kind, path)
        for prefix, t in items:
            _unknown(t, set(kind.KEYS), path, prefix)
        out = parsed.setdefault(table, [])
        for prefix, t in items:
            req = kind.parse(t, prefix, ctx)
            out.append((prefix, req))
            own = next((k for k in ("ports", "port") if k in t), None)
            key = prefix + own if own else "port"
            for p in req.ports:
                port_keys.setdefault(p, key)
            if kind.ARRAY:
                _bare_hz_warning(t, path, prefix, ctx.warnings)
            elif table == "resonance":
                _bare_hz_warning(t, path, prefix, ctx.warnings)
        if table == "band":
            ctx.bands = _label_bands(out, path)
            parsed["band"] = [(p, b) for (p, _), b in zip(out, ctx.bands, strict=True)]
    bands = tuple(b for _, b in parsed["band"])
    single = {t: (parsed[t][0][1] if parsed.get(t) else None) for t in ("resonance", "golden")}
    taken: dict[str, str] = {}
    for table in KINDS:
        for prefix, req in parsed.get(table, []):
            names = req.result_names()
            keys = [prefix + "name" if KINDS[table].ARRAY else prefix.rstrip(".")]
            if isinstance(req, BandSpec) and len(names) > 1:
                keys.append(prefix + "max_mismatch_loss_db")
            if isinstance(req, GoldenSpec):
                keys = ["golden.band"]
            for key, n in zip(keys, names, strict=False):
                if n in taken:
                    raise SpecError(f"two requirements would both be named {n!r} (here and at {key})", path=path,
                                    key=taken[n],
                                    expected="names that differ from each other, from 'resonance' and from "
                                             "'<band> mismatch loss'")
                taken[n] = key
    if not bands and single["resonance"] is None and not parsed.get("isolation") and not parsed.get("correlation"):
        raise SpecError("the spec states no requirement (an empty spec would pass every unit)", path=path,
                        key="band", expected="at least one [[band]] with a limit, a [resonance] window, "
                                             "or an [[isolation]] / [[correlation]] between two ports")
    return Spec(path=path, bands=bands, port=port, z0_ohm=z0_ohm, resonance=single["resonance"],
                golden=single["golden"], name=name, warnings=tuple(ctx.warnings),
                isolations=tuple(r for _, r in parsed.get("isolation", [])),
                correlations=tuple(r for _, r in parsed.get("correlation", [])),
                port_keys=tuple(sorted(port_keys.items())))


def _label_bands(items: list[tuple[str, Requirement]], path: str) -> tuple[BandSpec, ...]:
    """Refuse a band name repeated on one port; name a band repeated on several ports
    ``"<name> (port N)"`` so that every requirement keeps a unique name."""
    seen: dict[tuple[str, int], str] = {}
    ports_of: dict[str, set[int]] = {}
    for prefix, b in items:
        assert isinstance(b, BandSpec)
        if (b.name, b.port) in seen:
            raise SpecError(f"duplicate band name {b.name!r} for port {b.port}", path=path, key=prefix + "name",
                            expected="a different name for each [[band]] of a port")
        seen[(b.name, b.port)] = prefix
        ports_of.setdefault(b.name, set()).add(b.port)
    out = []
    for _, b in items:
        assert isinstance(b, BandSpec)
        label = f"{b.name} (port {b.port})" if len(ports_of[b.name]) > 1 else ""
        out.append(BandSpec(b.name, b.f_low_hz, b.f_high_hz, b.limit_key, b.limit, b.max_mismatch_loss_db, b.port,
                            label))
    return tuple(out)


def _golden(g: Any, path: str, bands: tuple[BandSpec, ...], port: int, z0_ohm: float | None,
            warnings: list[str]) -> GoldenSpec:
    if not isinstance(g, dict):
        raise SpecError("is not a table", path=path, key="golden", expected="a [golden] table")
    _unknown(g, set(GoldenSpec.KEYS), path, "golden.")
    for k in ("file", "band", "max_deviation_db"):
        if k not in g:
            raise SpecError("missing", path=path, key=f"golden.{k}")
    if not isinstance(g["file"], str) or not g["file"].strip():
        raise SpecError(f"file is {g['file']!r}", path=path, key="golden.file", expected="a path to a Touchstone file")
    names = list(dict.fromkeys(b.name for b in bands))
    if g["band"] not in names:
        raise SpecError(f"band {g['band']!r} is not the name of a [[band]]", path=path, key="golden.band",
                        expected="one of " + (", ".join(repr(n) for n in names) or "(no bands defined)"))
    dev = _number(g["max_deviation_db"], path, "golden.max_deviation_db", "limit")
    if dev <= 0:
        raise SpecError(f"max_deviation_db is {dev:g}", path=path, key="golden.max_deviation_db",
                        expected="a positive number of dB")
    ceiling = None
    if "rl_ceiling_db" in g:
        ceiling = _number(g["rl_ceiling_db"], path, "golden.rl_ceiling_db", "ceiling")
        if ceiling <= 0:
            raise SpecError(f"rl_ceiling_db is {ceiling:g}", path=path, key="golden.rl_ceiling_db",
                            expected="a positive return loss in dB, e.g. 25")
    gport = g.get("port", port)
    if isinstance(gport, bool) or not isinstance(gport, int) or gport < 1:
        raise SpecError(f"port is {gport!r}", path=path, key="golden.port", expected="a port number from 1")
    gpath = Path(g["file"])
    if not gpath.is_absolute():
        gpath = Path(path).parent / gpath
    special = special_file_error(gpath)
    if special is not None:
        raise SpecError(f"golden file unusable: {special}", path=path, key="golden.file")
    if gpath.is_dir():
        raise SpecError(f"golden file {str(gpath)!r} is a directory", path=path, key="golden.file",
                        expected="a Touchstone file")
    if not gpath.is_file():
        raise SpecError(f"golden file {str(gpath)!r} does not exist", path=path, key="golden.file")
    try:
        sw = load(gpath, port=gport, z0_ohm=z0_ohm)
    except MatchtoolError as exc:
        raise SpecError(f"golden file unusable: {exc}", path=path, key="golden.file") from None
    same = [b for b in bands if b.name == g["band"]]
    band = next((b for b in same if b.port == gport), same[0])
    f = sw.f_hz
    if not sweep_covers(f, band.f_low_hz, band.f_high_hz):
        raise SpecError(f"golden sweep ({f[0]:g} to {f[-1]:g} Hz) does not cover band {band.name!r} "
                        f"({band.f_low_hz:g} to {band.f_high_hz:g} Hz)", path=path, key="golden.file")
    warnings.extend(sw.warnings)
    return GoldenSpec(path=str(gpath), band=band.name, max_deviation_db=dev, f_hz=np.array(f, dtype=float),
                      gamma=np.array(sw.gamma, dtype=complex), rl_ceiling_db=ceiling,
                      port=band.port, band_spec=band)


def load_spec(path: str | Path, port: int | None = None, z0_ohm: float | None = None) -> Spec:
    """Read and validate a spec file (UTF-8 TOML; a byte-order mark is accepted, UTF-16 with a
    byte-order mark is decoded). Raises :class:`SpecError`."""
    from .inputs import read_text as read_input

    text = read_input(path, kind="toml", max_bytes=MAX_SPEC_BYTES, what="a TOML spec file", error=SpecError)
    if not text.strip():
        raise SpecError("the spec file is empty (an empty spec would pass every unit)", path=path,
                        expected="at least one [[band]] with a limit")
    return parse_spec(text, path, port, z0_ohm)




# -------------------------------------------------------------------------------------- evaluation

def _rl_db(gamma: np.ndarray) -> np.ndarray:
    """Return loss in positive dB, capped at CAP_DB where |Gamma| = 0 (so it interpolates)."""
    return np.minimum(rf.return_loss_db(gamma), CAP_DB)


def _golden_result(g: GoldenSpec, b: BandSpec, f: np.ndarray, gamma: np.ndarray) -> RequirementResult:
    name = f"{b.requirement_name} deviation from golden"
    lo, hi = b.f_low_hz, b.f_high_hz
    if not sweep_covers(f, lo, hi):
        return _not_covered(name, "max_deviation_db", g.max_deviation_db, lo, hi, f, port=b.port)
    lo, hi = max(lo, f[0]), min(hi, f[-1])
    fu, gu = band_samples(f, gamma, lo, hi)
    grid = np.union1d(fu, g.f_hz[(g.f_hz > lo) & (g.f_hz < hi)])
    gu = np.interp(grid, f, gamma.real) + 1j * np.interp(grid, f, gamma.imag)
    gg = np.interp(grid, g.f_hz, g.gamma.real) + 1j * np.interp(grid, g.f_hz, g.gamma.imag)
    cap = CAP_DB if g.rl_ceiling_db is None else g.rl_ceiling_db
    dev = np.abs(np.minimum(_rl_db(gu), cap) - np.minimum(_rl_db(gg), cap))
    k = int(np.argmax(dev))
    worst = float(dev[k])
    return RequirementResult(name=name, key="max_deviation_db", passed=bool(worst <= g.max_deviation_db),
                             limit=g.max_deviation_db, worst=worst, worst_f_hz=float(grid[k]),
                             margin_db=g.max_deviation_db - worst, f_low_hz=lo, f_high_hz=hi,
                             samples=int(np.count_nonzero((f >= lo) & (f <= hi))), port=b.port)


def _unchecked_warning(file: str, nports: int, spec: Spec) -> list[str]:
    """The warning for a multi-port file of which the spec reads only some ports."""
    missing = [p for p in range(1, nports + 1) if p not in spec.ports]
    if nports < 2 or not missing:
        return []
    checked = ", ".join(str(p) for p in spec.ports)
    gone = (f"ports {missing[0]}..{missing[-1]}" if len(missing) > 2 and missing == list(range(missing[0],
            missing[-1] + 1)) else ("port " if len(missing) == 1 else "ports ") + ", ".join(map(str, missing)))
    return [f"{file}: {nports}-port file; the spec checks port{'s' if len(spec.ports) > 1 else ''} {checked} only: "
            f"{gone} not checked (add [[band]] tables with port = N, or [[isolation]] / [[correlation]])"]


def _missing_port(file: str, nports: int, spec: Spec) -> str | None:
    """The one-line error for a spec naming a port the file lacks, else None."""
    for p in spec.ports:
        if p > nports:
            return (f"{file}: the spec names port {p} ({spec.path} key '{spec.key_for_port(p)}') but the file has "
                    f"{nports} port{'s' if nports != 1 else ''}")
    return None


def evaluate_arrays(f_hz: np.ndarray, gamma: np.ndarray, spec: Spec, file: str = "<arrays>",
                    warnings: list[str] | tuple[str, ...] = ()) -> UnitResult:
    """Evaluate a unit sampled at ``f_hz`` (strictly increasing, Hz) against ``spec``.

    ``gamma`` is either the complex reflection of the spec's port (shape (n,), at the spec's system
    impedance) or the whole S-matrix (shape (n, N, N)); a spec that reads other ports or pairs of
    ports needs the matrix. A spec naming a port the matrix lacks raises :class:`UsageError`
    (``parameter="gamma"``). Warnings name ``file``.
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma, dtype=complex)
    warns = list(warnings)
    if g.ndim == 3:
        s, gammas, nports = g, {}, g.shape[1]
    elif g.ndim == 1:
        if spec.needs_matrix:
            raise UsageError("the spec reads several ports but one reflection curve was given", parameter="gamma",
                             expected="the S-matrix (n, N, N), or a Sweep / skrf.Network")
        s, gammas, nports = None, {spec.port: g}, None
    else:
        raise UsageError(f"shape {g.shape}", parameter="gamma", expected="(n,) or (n, N, N)")
    if nports is not None:
        err = _missing_port(file, nports, spec)
        if err is not None:
            raise UsageError(err, parameter="gamma", expected=f"a file with at least {max(spec.ports)} ports")
        warns.extend(_unchecked_warning(file, nports, spec))
    ev = _Eval(f=f, s=s, gammas=gammas, file=file, warnings=warns)
    reqs: list[RequirementResult] = []
    for r in spec.requirements:
        reqs.extend(r.evaluate(ev))
    g0 = ev.gamma(spec.port) if (s is None or spec.port <= s.shape[1]) else None
    best_f = best_rl = None
    if g0 is not None:
        i = int(np.argmin(np.abs(g0)))  # the sample with the smallest |Gamma| (contract's 'best')
        best_f, best_rl = float(f[i]), float(rf.return_loss_db(g0[i])) + 0.0  # 0.0, not -0.0, for a short
    return UnitResult(file=file, passed=all(r.passed for r in reqs), requirements=tuple(reqs), best_f_hz=best_f,
                      best_return_loss_db=best_rl, warnings=tuple(warns))


def evaluate(sweep: Sweep | Any, spec: Spec) -> UnitResult:
    """Evaluate a loaded :class:`~matchtool.sweep.Sweep` or an ``skrf.Network`` against ``spec``.

    The whole S-matrix is used (every port the spec names); a Network is renormalised to
    ``spec.z0_ohm`` when the spec states one. A Sweep loaded at another system impedance than the
    spec states is refused (UsageError) rather than judged on the wrong reflection, and so is a
    spec naming a port the sweep lacks.
    """
    from .sweep import as_sweep

    if not isinstance(sweep, Sweep):
        sweep = as_sweep(sweep, z0_ohm=spec.z0_ohm)
    if spec.z0_ohm is not None and not math.isclose(sweep.z0_ohm, spec.z0_ohm, rel_tol=1e-9):
        raise UsageError(f"sweep is at {sweep.z0_ohm:g} ohm but the spec asks for {spec.z0_ohm:g} ohm",
                         path=sweep.path, expected=f"load(path, z0_ohm={spec.z0_ohm:g})")
    err = _missing_port(sweep.path, sweep.nports, spec)
    if err is not None:
        raise UsageError(err, expected=f"a file with at least {max(spec.ports)} ports")
    return evaluate_arrays(sweep.f_hz, np.asarray(sweep.network.s), spec, file=sweep.path,
                           warnings=sweep.warnings)


# one input policy (matchtool/inputs.py): the special-file check lives there; kept importable here
from .inputs import SPECIAL_FILE, is_special_file, read_touchstone, special_file_error  # noqa: E402,F401


def _read_unit(path: str | Path, spec: Spec, on_bytes: Callable[[bytes], object] | None = None
               ) -> tuple[np.ndarray, np.ndarray, list[str], int]:
    """(f_hz, S-matrix (n, N, N) at the spec's impedance, warnings, N) of one file, read once.

    Like :func:`matchtool.sweep.load` but without an ``skrf.Network`` in the common case (no
    renormalisation, no |S_pp| > 1 to warn about): for a lot of a thousand sweeps the Network
    objects would cost more than the evaluation itself. A spec naming a port the file lacks raises
    SpecError (one line naming the file, the port and the spec key).
    """
    ts = parse_touchstone(read_touchstone(path, on_bytes=on_bytes), path, ports_from_name(path),
                          checked=True)  # ASCII files stay bytes
    n = ts.s.shape[1]
    err = _missing_port(str(path), n, spec)
    if err is not None:
        raise SpecError(err, expected=f"a file with at least {max(spec.ports)} ports")
    warnings = list(ts.warnings)
    s, z0 = ts.s, ts.z0_ohm
    if ts.port_z0_ohm is not None or (spec.z0_ohm is not None and not np.allclose(ts.z0_ohm, spec.z0_ohm)):
        # renormalise as load() does (a per-frequency or complex reference from the file, or the spec's z0_ohm)
        sw = sweep_from_arrays(ts.f_hz, ts.s, _file_reference(ts), path=str(path), port=spec.ports[0],
                               z0_ohm=spec.z0_ohm, warnings=ts.warnings, version=ts.version, s_def=ts.s_def)
        s, z0, warnings = sw.s, np.full(n, sw.z0_ohm), list(sw.warnings)
    for p in spec.ports:
        if (np.abs(s[:, p - 1, p - 1]) > 1.0).any():  # the loader's own warning, for each port read
            warnings.extend(w for w in sweep_from_arrays(ts.f_hz, s, z0, path=str(path), port=p).warnings
                            if w not in warnings)
        _port_warnings(warnings, str(path), ts.s[:, p - 1, p - 1], p, float(np.real(np.atleast_1d(z0)[p - 1])),
                       spec.z0_ohm is None and ts.port_z0_ohm is None)
    return ts.f_hz, s, warnings, n


def check_file(path: str | Path, spec: Spec, on_bytes: Callable[[bytes], object] | None = None) -> UnitResult:
    """Load one file with the spec's ports and impedance and evaluate it; a file that cannot be
    read (or lacks a port the spec names) gives a UnitResult with ``error`` set instead of raising.
    ``on_bytes`` sees the file's bytes as they are read (see ``inputs.read_touchstone``)."""
    special = special_file_error(path)
    if special is not None:
        return UnitResult(file=str(path), passed=False, error=special)
    try:
        f_hz, s, warnings, n = _read_unit(path, spec, on_bytes)
        if spec.needs_matrix:
            return evaluate_arrays(f_hz, s, spec, file=str(path), warnings=warnings)
        # the one-port fast path: the reflection alone (the N-port warning added here)
        warnings.extend(_unchecked_warning(str(path), n, spec))
        return evaluate_arrays(f_hz, s[:, spec.port - 1, spec.port - 1], spec, file=str(path), warnings=warnings)
    except MatchtoolError as exc:
        return UnitResult(file=str(path), passed=False, error=str(exc))
    except (ValueError, OSError, ArithmeticError) as exc:  # never let one file stop the lot
        return UnitResult(file=str(path), passed=False, error=f"{path}: cannot evaluate ({type(exc).__name__}: "
                          f"{' '.join(str(exc).split())})")

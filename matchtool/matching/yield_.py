"""Tolerance yield: Monte Carlo builds of a network with part values drawn within their tolerance."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import UsageError
from .network import TWO_PI, Element, PartQ, _walk, unit_impedance

# Small capacitors are sold with an absolute tolerance (+-0.05 pF, +-0.1 pF, +-0.25 pF...) rather
# than a percentage; +-0.1 pF below 10 pF is the usual offer for C0G chip capacitors (common
# practice, no source). Applied when the capacitor tolerance is a percentage that was not given for
# capacitors explicitly (``--tolerance`` rather than ``--tolerance-capacitor``).
SMALL_C_LIMIT_F = 10e-12
SMALL_C_TOLERANCE_F = 0.1e-12
CHUNK_POINTS = 65_536


@dataclass(frozen=True)
class YieldSettings:
    """Monte Carlo settings: part values uniform within +-tolerance (common practice, no source).

    ``tolerance_l`` / ``tolerance_c``: relative (fractions, 0.05 = 5 %); ``tolerance_l_h`` /
    ``tolerance_c_f``: absolute half-widths in H / F, which replace the relative ones when given;
    ``small_c_tolerance_f``: the absolute tolerance of capacitors below 10 pF when the capacitor
    tolerance is relative (None: the relative tolerance applies to every capacitor).
    """

    tolerance_l: float = 0.0
    tolerance_c: float = 0.0
    trials: int = 2000
    seed: int = 1
    tolerance_l_h: float | None = None
    tolerance_c_f: float | None = None
    small_c_tolerance_f: float | None = None

    def __post_init__(self) -> None:
        for name, t in (("tolerance_inductor", self.tolerance_l), ("tolerance_capacitor", self.tolerance_c)):
            if not (0 <= t < 1):
                raise UsageError("tolerance out of range", parameter=name, value=t,
                                 expected="a fraction from 0 to below 1 (0.05 for 5 %)")
        for name, a in (("tolerance_inductor", self.tolerance_l_h), ("tolerance_capacitor", self.tolerance_c_f),
                        ("small_capacitor_tolerance", self.small_c_tolerance_f)):
            if a is not None and not (a >= 0 and math.isfinite(a)):
                raise UsageError("absolute tolerance", parameter=name, value=a, expected="a value of 0 or more")
        if self.trials < 1 or self.trials > 10_000_000:
            raise UsageError("number of builds", parameter="trials", value=self.trials, expected="1 to 10000000")
        if self.seed < 0:
            raise UsageError("random seed", parameter="seed", value=self.seed, expected="a seed of 0 or more")

    def half_width(self, e: Element) -> float:
        """The tolerance of part ``e`` as an absolute half-width (H or F)."""
        if e.kind == "inductor":
            return self.tolerance_l_h if self.tolerance_l_h is not None else self.tolerance_l * e.value
        if self.tolerance_c_f is not None:
            return self.tolerance_c_f
        if self.small_c_tolerance_f is not None and e.value < SMALL_C_LIMIT_F:
            return self.small_c_tolerance_f
        return self.tolerance_c * e.value


def build_yield(elements: Sequence[Element], f_hz: np.ndarray, gamma: np.ndarray, limit_db: np.ndarray,
                z0_ohm: float, q: PartQ, ys: YieldSettings) -> float:
    """Fraction of Monte Carlo builds whose return loss at every target sample meets that sample's
    limit (``limit_db``, positive dB, one per sample). A drawn value below 1 % of the nominal value
    is held there (a part cannot have a value of zero or less)."""
    rng = np.random.default_rng(ys.seed)
    g_lim2 = 10 ** (-np.asarray(limit_db, dtype=float) / 10)
    if not elements:  # nothing to vary: every build is the load itself
        return 1.0 if bool(np.all(np.abs(gamma) ** 2 <= g_lim2)) else 0.0
    draws = [np.maximum(e.value + ys.half_width(e) * rng.uniform(-1, 1, size=(ys.trials, 1)), 0.01 * e.value)
             for e in elements]
    w = TWO_PI * np.asarray(f_hz, dtype=float)
    pattern = [(e.kind, e.connection) for e in elements]
    units = [unit_impedance(k, w, q.inductor if k == "inductor" else q.capacitor) for k, _ in pattern]
    chunk = max(1, CHUNK_POINTS // max(w.size, 1))
    passed = 0
    for start in range(0, ys.trials, chunk):
        vals = [d[start:start + chunk] for d in draws]
        gin = _walk(gamma, z0_ohm, pattern, units, vals).gamma_in
        ok = np.all(gin.real ** 2 + gin.imag ** 2 <= g_lim2, axis=-1)
        passed += int(np.count_nonzero(ok))
    return passed / ys.trials

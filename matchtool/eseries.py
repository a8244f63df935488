"""IEC 60063 preferred-number series (E12, E24, E48, E96) and snapping to them.

E12 and E24 are stored as the standard's tables: they do not follow their rounded formula
(E24 departs from round(10 * 10^(i/24)) at 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2).
E96 equals round(100 * 10^(i/96)) for i = 0..95 (confirmed against the IEC 60063 table).
E48 is every second E96 value (from memory; tests check the table below against E96).
"""

from __future__ import annotations

import math

import numpy as np

from .errors import UsageError

E12: tuple[int, ...] = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
E24: tuple[int, ...] = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62,
                        68, 75, 82, 91)
E96: tuple[int, ...] = tuple(int(round(100 * 10 ** (i / 96))) for i in range(96))
# From memory; test_eseries checks it equals E96[::2].
E48: tuple[int, ...] = (100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205,
                        215, 226, 237, 249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442,
                        464, 487, 511, 536, 562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953)

SERIES: dict[str, tuple[int, ...]] = {"E12": E12, "E24": E24, "E48": E48, "E96": E96}
SERIES_NAMES = ("exact", "E12", "E24", "E48", "E96")


def series_mantissas(name: str) -> np.ndarray:
    """Mantissas of series ``name`` in [1, 10) as floats (e.g. E12 -> 1.0, 1.2, ..., 8.2)."""
    key = normalize_series_name(name)
    if key == "exact":
        raise UsageError("the 'exact' series has no table")
    digits = SERIES[key]
    return np.array(digits, dtype=float) / (10 ** (len(str(digits[0])) - 1))


def normalize_series_name(name: str) -> str:
    """Return the canonical name (``exact``, ``E12``, ``E24``, ``E48``, ``E96``) or raise UsageError."""
    n = str(name).strip()
    if n.lower() == "exact":
        return "exact"
    if n.upper() in SERIES:
        return n.upper()
    raise UsageError("unknown value series", parameter="series", value=name, expected="exact, E12, E24, E48 or E96")


def neighbours(value: float, name: str, count: int = 2) -> np.ndarray:
    """The ``count`` preferred values at or below ``value`` and the ``count`` above it (sorted, SI units
    kept: a value in farads gives farads). ``exact`` returns the value itself."""
    if normalize_series_name(name) == "exact":
        return np.array([value], dtype=float)
    if not (value > 0 and math.isfinite(value)):
        raise UsageError(f"cannot snap {value!r} to a preferred value", expected="a positive finite value")
    m = series_mantissas(name)
    d = math.floor(math.log10(value))
    grid = np.concatenate([m * 10.0 ** (d + k) for k in (-1, 0, 1)])
    # tolerate float noise: a value equal to a table entry counts as that entry
    idx = int(np.searchsorted(grid, value * (1 + 1e-9), side="right"))  # grid[idx-1] <= value
    lo = grid[max(idx - count, 0):idx]
    hi = grid[idx:idx + count]
    return np.concatenate([lo, hi])


def nearest(value: float, name: str) -> float:
    """The preferred value nearest to ``value`` on a logarithmic scale (``exact``: the value)."""
    cand = neighbours(value, name, 1)
    return float(cand[np.argmin(np.abs(np.log(cand / value)))])


def values_between(lo: float, hi: float, name: str) -> np.ndarray:
    """Every value of series ``name`` in [lo, hi] (SI units, sorted), each the double nearest to its
    decimal value (``8.2e-09``, never ``8.199999999999999e-09``). Ends are included within 1e-9."""
    key = normalize_series_name(name)
    if key == "exact":
        raise UsageError("the 'exact' series has no table", parameter="series", value=name)
    if not (0 < lo <= hi and math.isfinite(hi)):
        raise UsageError("value range", parameter="value_range", value=(lo, hi), expected="0 < low <= high")
    digits = SERIES[key]
    nd = len(str(digits[0])) - 1
    out = []
    for d in range(math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 1):
        for m in digits:
            v = float(f"{m}e{d - nd}")
            if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9):
                out.append(v)
    return np.array(sorted(set(out)), dtype=float)

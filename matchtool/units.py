"""Parsing and formatting of quantities with units (frequency, length, time).

Bare numbers are SI (Hz, m, s). Units are case-insensitive where that is unambiguous
(``915MHz``, ``2.45 GHz``, ``868e6``); ``mHz`` is read as MHz, since millihertz never occurs here.
A frequency is never negative. A band ``LOW:HIGH`` carries a unit on both sides (``902MHz:928MHz``)
or on neither (``902e6:928e6``, Hz); ``902:928MHz`` is refused rather than read as 902 Hz.
"""

from __future__ import annotations

import math
import re

from .errors import UsageError

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*([A-Za-z\u00b5]*)\s*$")

_FREQ = {"": 1.0, "hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9, "thz": 1e12}
_LENGTH = {"": 1.0, "m": 1.0, "cm": 1e-2, "mm": 1e-3, "km": 1e3, "in": 0.0254, "ft": 0.3048}
_TIME = {"": 1.0, "s": 1.0, "ms": 1e-3, "us": 1e-6, "\u00b5s": 1e-6, "ns": 1e-9, "ps": 1e-12, "fs": 1e-15}


def _parse(text: str | float | int, table: dict[str, float], what: str, what_units: str) -> float:
    if isinstance(text, bool):
        raise UsageError(f"{what} {text!r} is not a number", expected=what_units)
    if isinstance(text, int | float):
        value = float(text)
    else:
        m = _QUANTITY.match(str(text))
        if not m:
            raise UsageError(f"cannot read {what} {text!r}", expected=f"a number with an optional unit ({what_units})")
        unit = m.group(2).lower()
        if unit not in table:
            raise UsageError(f"unknown unit {m.group(2)!r} in {what} {text!r}", expected=what_units)
        value = float(m.group(1)) * table[unit]
    if not math.isfinite(value):
        raise UsageError(f"{what} {text!r} is not finite")
    return value


def parse_frequency(text: str | float | int) -> float:
    """Return a frequency in Hz from ``'915MHz'``, ``'2.45 GHz'``, ``'868e6'`` or a number (Hz).

    A negative frequency is refused (UsageError); 0 Hz is accepted."""
    f = _parse(text, _FREQ, "frequency", "Hz, kHz, MHz, GHz")
    if f < 0:
        raise UsageError(f"frequency {text!r} is negative", expected="a frequency of 0 Hz or more")
    return f


def _has_unit(text: str) -> bool:
    m = _QUANTITY.match(str(text))
    return bool(m and m.group(2))


def parse_length(text: str | float | int) -> float:
    """Return a length in metres from ``'3m'``, ``'150cm'``, ``'18in'``, ``'2ft'`` or a number (m)."""
    return _parse(text, _LENGTH, "length", "m, cm, mm, km, in, ft")


def parse_time(text: str | float | int) -> float:
    """Return a time in seconds from ``'250ps'``, ``'1.2ns'`` or a number (s)."""
    return _parse(text, _TIME, "time", "s, ms, us, ns, ps")


def parse_band(text: str) -> tuple[float, float]:
    """Return ``(f_low_hz, f_high_hz)`` from ``'902MHz:928MHz'``; the high edge must exceed the low.

    Both edges carry a unit, or neither does (Hz); a unit on one side only is refused."""
    parts = str(text).split(":")
    if len(parts) != 2:
        raise UsageError(f"cannot read band {text!r}", expected="LOW:HIGH, e.g. 902MHz:928MHz")
    if _has_unit(parts[0]) != _has_unit(parts[1]):
        unit = _QUANTITY.match(parts[1] if _has_unit(parts[1]) else parts[0]).group(2)
        raise UsageError(f"band {text!r} has a unit on one side only (a bare number is Hz)",
                         expected=f"the unit on both sides, e.g. {parts[0].strip().removesuffix(unit).strip()}{unit}:"
                                  f"{parts[1].strip().removesuffix(unit).strip()}{unit}")
    lo, hi = parse_frequency(parts[0]), parse_frequency(parts[1])
    if not (hi > lo):
        raise UsageError(f"band {text!r} has its high edge at or below its low edge", expected="LOW < HIGH")
    if lo < 0:
        raise UsageError(f"band {text!r} has a negative frequency")
    return lo, hi


def format_frequency(f_hz: float, digits: int = 3, max_extra_digits: int = 3) -> str:
    """Format a frequency with the unit that fits it: ``915.000 MHz``, ``2.450 GHz``.

    At least ``digits`` decimals; more (up to ``digits + max_extra_digits``) when that many
    show the value exactly, so a band edge keeps the digits it was given: 2483.5 MHz is
    ``2.4835 GHz``, not ``2.483 GHz``. A value that no such precision shows exactly (an
    interpolated edge) keeps ``digits`` decimals."""
    if not math.isfinite(f_hz):
        return "n/a"
    a = abs(f_hz)
    unit, scale = "Hz", 1.0
    for u, sc in (("GHz", 1e9), ("MHz", 1e6), ("kHz", 1e3)):
        if a >= sc:
            unit, scale = u, sc
            break
    x = f_hz / scale
    tol = 1e-12 * max(abs(x), 1e-300)  # float noise of a typed or file value, far below a displayed digit
    shown = digits
    for d in range(digits, digits + max_extra_digits + 1):
        if abs(round(x, d) - x) <= tol:
            shown = d
            break
    return f"{x:.{shown}f} {unit}"


def format_value_si(value: float, unit: str, digits: int = 3) -> str:
    """Format a part value with an SI prefix: ``38.98 nH``, ``2.6 pF``, ``1.2 kohm``."""
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}"
    prefixes = [(1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1, ""), (1e-3, "m"), (1e-6, "u"),
                (1e-9, "n"), (1e-12, "p"), (1e-15, "f")]
    for scale, p in prefixes:
        if abs(value) >= scale * 0.9995:
            return f"{value / scale:.{digits}g} {p}{unit}"
    return f"{value:.{digits}g} {unit}"

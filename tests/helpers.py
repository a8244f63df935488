"""Test helpers: physical toy loads written as Touchstone text (our own data, derived here)."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]


def series_rlc_z(f_hz: np.ndarray, r_ohm: float, l_h: float, f0_hz: float) -> np.ndarray:
    """Impedance of a series RLC resonating at f0 (C chosen from L)."""
    c_f = 1.0 / ((2 * math.pi * f0_hz) ** 2 * l_h)
    w = 2 * math.pi * np.asarray(f_hz, dtype=float)
    return r_ohm + 1j * (w * l_h - 1.0 / (w * c_f))


def gamma_of(z: np.ndarray, z0: float = 50.0) -> np.ndarray:
    return (z - z0) / (z + z0)


def s1p_text(f_hz: np.ndarray, gamma: np.ndarray, z0: float = 50.0, unit: str = "Hz", fmt: str = "RI") -> str:
    """A 1-port Touchstone v1 text in the given unit and format (values to 12 digits)."""
    scale = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}[unit]
    rows = ["! test sweep", f"# {unit} S {fmt} R {z0:g}"]
    for f, g in zip(f_hz, gamma, strict=True):
        if fmt == "RI":
            a, b = g.real, g.imag
        elif fmt == "MA":
            a, b = abs(g), math.degrees(np.angle(g))
        else:
            a, b = 20 * math.log10(abs(g)), math.degrees(np.angle(g))
        rows.append(f"{f / scale:.12g} {a:.12g} {b:.12g}")
    return "\n".join(rows) + "\n"


def write_rlc(path: Path, f0_hz: float = 915e6, r_ohm: float = 50.0, l_h: float = 40e-9,
              lo_hz: float = 800e6, hi_hz: float = 1030e6, n: int = 401, z0: float = 50.0, **kw) -> Path:
    f = np.linspace(lo_hz, hi_hz, n)
    path.write_text(s1p_text(f, gamma_of(series_rlc_z(f, r_ohm, l_h, f0_hz), z0), z0=z0, **kw))
    return path

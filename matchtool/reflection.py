"""Reflection metrics from the complex reflection coefficient Gamma (all vectorised).

Sign conventions (Pozar, Microwave Engineering, 4th ed., sec. 2.3; T. S. Bird, IEEE Antennas
Propag. Mag. 51(2), 2009): return loss is positive, RL = -20 log10 |Gamma| dB; S11 in dB is its
negative. VSWR = (1 + |Gamma|) / (1 - |Gamma|) is infinite for |Gamma| >= 1 (never negative).
Mismatch loss = -10 log10(1 - |Gamma|^2) dB; delivered fraction = 1 - |Gamma|^2.
"""

from __future__ import annotations

import numpy as np

ArrayLike = np.ndarray | complex | float


def return_loss_db(gamma: ArrayLike) -> np.ndarray:
    """Return loss in dB, positive for a passive load; +inf at a perfect match."""
    with np.errstate(divide="ignore"):
        return -20.0 * np.log10(np.abs(gamma)) + 0.0  # + 0.0: |Gamma| = 1 gives 0.0, not -0.0


def s11_db(gamma: ArrayLike) -> np.ndarray:
    """|S11| in dB (= -return loss): negative for a passive load."""
    with np.errstate(divide="ignore"):
        return 20.0 * np.log10(np.abs(gamma)) + 0.0


def vswr(gamma: ArrayLike) -> np.ndarray:
    """Voltage standing-wave ratio; +inf where |Gamma| >= 1 (undefined for a passive load)."""
    g = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore", invalid="ignore"):
        v = (1.0 + g) / (1.0 - g)
    return np.where(g < 1.0, v, np.inf)


def delivered_fraction(gamma: ArrayLike) -> np.ndarray:
    """Fraction of the available incident power accepted by the load, 1 - |Gamma|^2.

    Negative where |Gamma| > 1, which no passive load can do (flagged by the loader).
    """
    return 1.0 - np.abs(gamma) ** 2


def mismatch_loss_db(gamma: ArrayLike) -> np.ndarray:
    """Mismatch loss in dB, -10 log10(1 - |Gamma|^2); +inf for |Gamma| = 1, NaN for |Gamma| > 1."""
    d = delivered_fraction(gamma)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(d > 0, -10.0 * np.log10(np.where(d > 0, d, 1.0)) + 0.0, np.where(d == 0, np.inf, np.nan))


def impedance_ohm(gamma: ArrayLike, z0_ohm: float) -> np.ndarray:
    """Load impedance Z = z0 (1 + Gamma) / (1 - Gamma) in ohms (complex); inf at Gamma = 1."""
    g = np.asarray(gamma, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = z0_ohm * (1 + g) / (1 - g)
    return np.where(g == 1, complex(np.inf, 0), z)


def gamma_from_impedance(z_ohm: ArrayLike, z0_ohm: float) -> np.ndarray:
    """Reflection coefficient of an impedance ``z_ohm`` on a real reference ``z0_ohm``."""
    z = np.asarray(z_ohm, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (z - z0_ohm) / (z + z0_ohm)


def gamma_mag_from_return_loss(rl_db: ArrayLike) -> np.ndarray:
    """|Gamma| for a return loss in dB (positive)."""
    return 10.0 ** (-np.asarray(rl_db, dtype=float) / 20.0)


def gamma_mag_from_vswr(v: ArrayLike) -> np.ndarray:
    """|Gamma| for a VSWR (>= 1)."""
    v = np.asarray(v, dtype=float)
    return (v - 1.0) / (v + 1.0)


def return_loss_from_vswr(v: ArrayLike) -> np.ndarray:
    """Return loss in dB for a VSWR: 20 log10((VSWR + 1) / (VSWR - 1)); inf at VSWR 1."""
    return return_loss_db(gamma_mag_from_vswr(v))

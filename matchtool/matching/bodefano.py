"""The Bode-Fano limit of a resonator fitted to the measured impedance over a band."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class BodeFanoBound:
    """Resonator fitted around the band and the Bode-Fano limit for it.

    ``model`` "series RLC" or "parallel RLC"; ``gamma_min`` the smallest flat in-band |Gamma| any
    lossless passive network can reach over the band, ``best_return_loss_db`` = -20 log10 of it.
    """

    model: str
    r_ohm: float
    l_h: float
    c_f: float
    fit_rms_rel: float
    gamma_min: float
    best_return_loss_db: float


def _lstsq(a: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.linalg.lstsq(a, y, rcond=None)[0]


def bode_fano_bound(f_hz: np.ndarray, z_ohm: np.ndarray, f_low_hz: float, f_high_hz: float) -> BodeFanoBound | None:
    """Fit a series and a parallel RLC to ``z_ohm`` (samples over the band) and return the bound of the
    better fit, or None when neither fit is a physical resonator.

    Pozar 4th ed. sec. 5.9: parallel RC, int ln(1/|G|) dw <= pi/(RC) (eq. 5.79), so for a flat
    in-band |G| = Gm over w1..w2, Gm >= exp(-pi/(R C (w2 - w1))) (eq. 5.80). The other forms of the
    same section (from memory for the figure number): series RC, int w^-2 ln(1/|G|) dw <= pi R C;
    series RL, int ln(1/|G|) dw <= pi R / L; parallel RL, int w^-2 ln(1/|G|) dw <= pi L / R. For an
    RLC load either reactive part may be absorbed into the network, so both forms hold and the
    tighter (larger Gm) is reported.
    """
    f = np.asarray(f_hz, dtype=float)
    z = np.asarray(z_ohm, dtype=complex)
    w = TWO_PI * f
    w1, w2 = TWO_PI * f_low_hz, TWO_PI * f_high_hz
    fits: list[BodeFanoBound] = []
    # series RLC: Z = R + j(wL - 1/(wC))
    wc = math.sqrt(w1 * w2)  # scale the columns: w and 1/w differ by ~1e19
    lc = _lstsq(np.column_stack([w / wc, -wc / w]), z.imag) * np.array([1 / wc, wc])
    r = float(np.mean(z.real))
    model_z = r + 1j * (w * lc[0] - lc[1] / w)
    rel = float(np.sqrt(np.mean(np.abs(model_z - z) ** 2)) / np.sqrt(np.mean(np.abs(z) ** 2)))
    lns = []
    if r > 0 and lc[1] > 0:
        lns.append(math.pi * r / lc[1] / (1 / w1 - 1 / w2))  # series RC (C = 1/lc[1])
    if r > 0 and lc[0] > 0:
        lns.append(math.pi * r / lc[0] / (w2 - w1))  # series RL
    if lns:
        g = math.exp(-min(lns))
        fits.append(BodeFanoBound("series RLC", r, float(lc[0]), float(1 / lc[1]) if lc[1] > 0 else math.inf, rel, g,
                                  -20 * math.log10(g) if g > 0 else math.inf))
    # parallel RLC: Y = G + j(wC - 1/(wL))
    y = 1 / z
    cl = _lstsq(np.column_stack([w / wc, -wc / w]), y.imag) * np.array([1 / wc, wc])
    gg = float(np.mean(y.real))
    model_y = gg + 1j * (w * cl[0] - cl[1] / w)
    rel_p = float(np.sqrt(np.mean(np.abs(1 / model_y - z) ** 2)) / np.sqrt(np.mean(np.abs(z) ** 2)))
    lnp = []
    if gg > 0 and cl[0] > 0:
        lnp.append(math.pi * gg / cl[0] / (w2 - w1))  # parallel RC: pi/(R C dw)
    if gg > 0 and cl[1] > 0:
        lnp.append(math.pi * (1 / cl[1]) * gg / (1 / w1 - 1 / w2))  # parallel RL: pi L/R over int w^-2
    if lnp:
        g = math.exp(-min(lnp))
        fits.append(BodeFanoBound("parallel RLC", 1 / gg, float(1 / cl[1]) if cl[1] > 0 else math.inf,
                                  float(cl[0]), rel_p, g, -20 * math.log10(g) if g > 0 else math.inf))
    if not fits:
        return None
    return min(fits, key=lambda b: b.fit_rms_rel)

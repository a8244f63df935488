"""What the antenna itself allows: Q and bandwidth potential from the measured impedance, the
small-antenna (Chu-McLean) bound for its size, and radiation efficiency by the cap method.

Sources:

- Q from impedance (A. D. Yaghjian, S. R. Best, "Impedance, bandwidth, and Q of antennas", IEEE
  Trans. Antennas Propag. 53(4), 2005, pp. 1298-1324):
  ``Q_Z(w0) = w0 / (2 R) * sqrt(R'^2 + (X' + |X| / w0)^2)``, primes d/d(omega), omega in rad/s.
  The ``|X| / w0`` term is the energy of the series reactance (an inductor for X < 0, a capacitor
  for X > 0) that would tune the antenna at ``w0``; at a resonance (X = 0) it vanishes. A series RLC
  gives ``w0 L / R``, a parallel RLC ``w0 R C``. Fractional bandwidth at VSWR ``s`` once tuned and
  matched at ``w0`` (ideal transformer to R(w0)): ``FBW ~ (s - 1) / (Q_Z sqrt(s))`` (same paper;
  exact for a single series or parallel RLC, with the band width divided by ``f0``).
- Small-antenna bound (L. J. Chu, J. Appl. Phys. 19, 1948, as corrected by J. S. McLean, IEEE
  Trans. Antennas Propag. 44(5), 1996): ``Q_min = 1/(ka)^3 + 1/(ka)`` for one spherical mode of a
  linearly polarised antenna enclosed by a sphere of radius ``a``; ``k = 2 pi f / c0``. For
  ``ka > 1`` the bound no longer constrains a practical design.
- Bode-Fano (Pozar, Microwave Engineering, 4th ed., sec. 5.9, eq. 5.80 with ``Q B`` in place of
  ``R C dw``): a flat in-band ``|Gamma| <= Gm`` over a fractional band ``B`` needs
  ``B <= pi / (Q ln(1/Gm))`` with any lossless matching network, however complex.
- Cap method (H. A. Wheeler, "The radiansphere around a small antenna", Proc. IRE 47(8), 1959):
  a closed conducting cap suppresses radiation and leaves the loss; near a series resonance
  ``efficiency = (R_free - R_cap) / R_free``; near a parallel resonance the same with the
  conductances ``G = Re(1/Z)``.

Derivatives are taken by a smoothing local fit: least-squares cubic polynomials in omega,
one for R and one for X (or G and B), over the samples within half the antenna's half-power
bandwidth either side of ``f0`` (``f0 / (2 Q)``, iterated from a first estimate; at least
:data:`MIN_FIT_POINTS` samples, at most a tenth of ``f0`` either side). No library offers a local
derivative with its own standard error, which the warnings need, so the fit is written here.

All frequencies in Hz, impedances in ohms, conductances in siemens, angular frequencies in rad/s.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import skrf

from . import reflection as rf
from .bands import Band, band_containing, find_bands, sweep_covers
from .errors import NoSolutionError, UsageError
from .matching import bode_fano_bound
from .summary import best_index
from .sweep import Sweep, as_sweep, gamma_at_many
from .units import format_frequency as _ff

C0_M_PER_S = 299_792_458.0  # exact, SI definition of the metre
TWO_PI = 2.0 * math.pi
FIT_DEGREE = 3
MIN_FIT_POINTS = 7
FIT_HALF_WIDTH_BANDWIDTHS = 0.5  # the fit spans f0 +- f0/(2Q): the half-power bandwidth
MAX_FIT_HALF_WIDTH = 0.1  # fraction of f0 either side (low-Q antennas)
NOISY_Q_REL_STD = 0.05  # warn when the fit's standard error of Q exceeds 5 %
BELOW_CHU_RATIO = 0.9  # Q_Z of an ideal antenna at the bound reads 4 % low at ka = 0.5 (derived in the tests)
RESONANCE_X_FRACTION = 0.1  # f0 is called a resonance only where |X| <= 0.1 R (common practice, no source)
CLOSE_RESONANCE_BANDWIDTHS = 2.0  # warn when another resonance lies within 2 f0/Q of f0
SPHERE_CAVITY_KA = 2.7437  # lowest (TM) mode of a closed conducting sphere: first root of d/dr [r j1(r)]


# ----------------------------------------------------------------------------------------------
# Closed forms


def q_from_impedance(w0_rad_s: float, r_ohm: float, x_ohm: float, dr_dw: float, dx_dw: float) -> float:
    """Yaghjian-Best Q_Z at angular frequency ``w0_rad_s`` from R, X (ohm) and their derivatives
    d/d(omega) (ohm s/rad). Infinite for R <= 0 (no power accepted)."""
    if not r_ohm > 0:
        return math.inf
    return w0_rad_s / (2.0 * r_ohm) * math.hypot(dr_dw, dx_dw + abs(x_ohm) / w0_rad_s)


def fractional_bandwidth_potential(q: float, vswr: float) -> float:
    """Fractional bandwidth (width / f0) at VSWR ``vswr`` of an antenna of Q ``q`` once tuned and
    matched at f0 with a lossless single-resonator match: ``(s - 1) / (Q sqrt(s))``."""
    return (vswr - 1.0) / (q * math.sqrt(vswr))


def bode_fano_fractional_bandwidth(q: float, gamma_max: float) -> float:
    """The widest fractional band over which any lossless match can hold ``|Gamma| <= gamma_max``
    for a resonant load of Q ``q`` (Pozar 4th ed. sec. 5.9): ``pi / (Q ln(1/gamma_max))``."""
    if not 0 < gamma_max < 1:
        return math.inf
    return math.pi / (q * math.log(1.0 / gamma_max))


def chu_q_min(ka: float) -> float:
    """Minimum radiation Q of a linearly polarised antenna (one spherical mode) inside a sphere of
    electrical radius ``ka``: ``1/(ka)^3 + 1/(ka)`` (Chu 1948, McLean 1996)."""
    return 1.0 / ka**3 + 1.0 / ka


def electrical_radius(f_hz: float, radius_m: float) -> float:
    """``ka = 2 pi f a / c0`` (dimensionless)."""
    return TWO_PI * f_hz * radius_m / C0_M_PER_S


# ----------------------------------------------------------------------------------------------
# Results


@dataclass(frozen=True)
class LocalFit:
    """A local fit of an immittance (Z in ohms, or Y in siemens) around ``f_hz``.

    ``re``, ``im`` and their derivatives ``d_re``, ``d_im`` (per rad/s) at ``f_hz``; ``points``
    samples from ``f_low_hz`` to ``f_high_hz``; ``re_std``, ``im_std``, ``d_re_std``, ``d_im_std``
    their standard errors from the residuals (0 for noiseless data).
    """

    f_hz: float
    re: float
    im: float
    d_re: float
    d_im: float
    re_std: float
    im_std: float
    d_re_std: float
    d_im_std: float
    points: int
    f_low_hz: float
    f_high_hz: float
    degree: int


@dataclass(frozen=True)
class QFactorResult:
    """What the antenna allows, from one impedance sweep (and optionally its radius and a capped sweep).

    - ``f0_hz`` where Q is evaluated; ``f0_choice``: "at" (asked for), "resonance" (the X = 0
      crossing nearest the best-matched sample) or "best sample" (no X = 0 in the sweep).
    - ``r_ohm``, ``x_ohm``, ``dr_dw_ohm_s``, ``dx_dw_ohm_s``: smoothed impedance and its derivatives
      d/d(omega) at f0 (ohm s/rad); ``fit``: the local fit used (points, span, degree).
    - ``resonance``: "series" when X rises with frequency at f0 (X' > 0), "parallel" otherwise.
    - ``q``: Yaghjian-Best Q_Z; ``q_rel_std``: its relative standard error from the fit.
    - ``threshold_return_loss_db`` and ``vswr``: the same limit (positive dB / ratio).
    - ``fractional_bandwidth_potential``: (s - 1) / (Q sqrt(s)) once tuned and matched at f0;
      ``bandwidth_potential_hz`` = that times f0.
    - ``tuned_band``: the band found on the sweep itself after an ideal series tune (an inductor
      or a capacitor cancelling X(f0)) and an ideal transformer to R(f0); its width / f0 is
      ``tuned_fractional_bandwidth`` (None when the band runs past the sweep).
    - ``measured_band``: today's threshold band holding f0, unmatched (None when f0 misses the
      threshold); ``measured_fractional_bandwidth`` its width / arithmetic centre.
    - ``bode_fano_fractional_bandwidth``: pi / (Q ln(1/Gamma_s)), the limit of any lossless match;
      ``bode_fano_best_return_loss_db``: the best flat return loss any lossless match could hold
      over the single-resonator band (``matching.bode_fano_bound`` on the sweep), None when unknown.
    - ``radius_m``, ``ka``, ``chu_q_min``, ``q_over_chu``: the small-antenna bound (None without a radius).
    - Cap method (None without a capped sweep): ``efficiency``; ``efficiency_model`` "series" (R)
      or "parallel" (G); ``efficiency_in_range`` whether it lies in [0, 1]; ``f_cap_hz`` where the
      capped sweep was read; ``free_value`` and ``capped_value`` R in ohms (series) or G in
      siemens (parallel), named by ``efficiency_unit`` ("ohm" or "S"); ``efficiency_reliable`` False
      when the result lies outside 0..1 or the capped resonance lies outside the free antenna's
      half-power band ``f0 +- f0 / (2 Q)`` (a different antenna, or a cap disturbing the near field).
    - Cap sizing at f0 (common practice): ``radiansphere_radius_m`` = lambda / (2 pi), the radius a
      cap should exceed (Wheeler 1959); ``sphere_cap_resonance_radius_m`` = 2.7437 lambda / (2 pi),
      the radius at which a closed spherical cap resonates in its lowest mode (stay well below).
    """

    path: str
    port: int
    z0_ohm: float
    points: int
    f0_hz: float
    f0_choice: str
    r_ohm: float
    x_ohm: float
    dr_dw_ohm_s: float
    dx_dw_ohm_s: float
    fit: LocalFit
    resonance: str
    q: float
    q_rel_std: float
    threshold_return_loss_db: float
    vswr: float
    fractional_bandwidth_potential: float
    bandwidth_potential_hz: float
    tuned_band: Band | None
    tuned_fractional_bandwidth: float | None
    measured_band: Band | None
    measured_fractional_bandwidth: float | None
    bode_fano_fractional_bandwidth: float
    bode_fano_best_return_loss_db: float | None
    radius_m: float | None = None
    ka: float | None = None
    chu_q_min: float | None = None
    q_over_chu: float | None = None
    capped_path: str | None = None
    efficiency: float | None = None
    efficiency_model: str | None = None
    efficiency_in_range: bool | None = None
    f_cap_hz: float | None = None
    free_value: float | None = None
    capped_value: float | None = None
    efficiency_unit: str | None = None
    efficiency_reliable: bool | None = None
    radiansphere_radius_m: float = math.nan
    sphere_cap_resonance_radius_m: float = math.nan
    warnings: tuple[str, ...] = ()

    @property
    def at_resonance(self) -> bool:
        """True when f0 is (close to) a resonance: ``|X| <= RESONANCE_X_FRACTION * R`` at f0."""
        return abs(self.x_ohm) <= RESONANCE_X_FRACTION * abs(self.r_ohm)

    @property
    def tuning_reactance_ohm(self) -> float:
        """The series reactance (ohm) that cancels X at f0: ``-X`` (positive: an inductor)."""
        return -self.x_ohm + 0.0


# ----------------------------------------------------------------------------------------------
# Local fit


def local_fit(f_hz: np.ndarray, y: np.ndarray, f0_hz: float, half_width_hz: float,
              degree: int = FIT_DEGREE, min_points: int = MIN_FIT_POINTS) -> LocalFit:
    """Least-squares polynomials of ``degree`` in omega through the real and imaginary parts of
    ``y`` (complex, finite samples) over ``f0 +- half_width_hz``; the ``min_points`` samples
    nearest ``f0`` are used when the window holds fewer. Values and d/d(omega) at ``f0``."""
    f = np.asarray(f_hz, dtype=float)
    y = np.asarray(y, dtype=complex)
    ok = np.isfinite(y)
    f, y = f[ok], y[ok]
    if f.size < min_points:
        raise NoSolutionError(f"only {f.size} usable samples; a local fit needs at least {min_points}",
                              expected="a sweep with more points around the resonance")
    inside = np.flatnonzero(np.abs(f - f0_hz) <= half_width_hz)
    if inside.size < min_points:
        inside = np.sort(np.argsort(np.abs(f - f0_hz), kind="stable")[:min_points])
    fw, yw = f[inside], y[inside]
    w0 = TWO_PI * f0_hz
    scale = max(float(np.max(np.abs(TWO_PI * fw - w0))), 1e-12 * w0)
    t = (TWO_PI * fw - w0) / scale
    a = np.vander(t, degree + 1, increasing=True)
    ata_inv = np.linalg.inv(a.T @ a)
    out = []
    for part in (yw.real, yw.imag):
        coef, *_ = np.linalg.lstsq(a, part, rcond=None)
        dof = fw.size - (degree + 1)
        resid = part - a @ coef
        s2 = float(resid @ resid) / dof if dof > 0 else 0.0
        std = np.sqrt(np.maximum(np.diag(ata_inv) * s2, 0.0))
        out.append((float(coef[0]), float(coef[1]) / scale, float(std[0]), float(std[1]) / scale))
    (re, d_re, re_std, d_re_std), (im, d_im, im_std, d_im_std) = out
    return LocalFit(float(f0_hz), re, im, d_re, d_im, re_std, im_std, d_re_std, d_im_std, int(fw.size),
                    float(fw[0]), float(fw[-1]), degree)


def impedance_fit(f_hz: np.ndarray, z_ohm: np.ndarray, f0_hz: float, half_width_hz: float) -> LocalFit:
    """:func:`local_fit` of the impedance, with values and derivatives in ohms (and ohm s/rad).

    Where the reactance falls with frequency (near a parallel resonance, whose impedance has a pole
    just off the real frequency axis) the admittance Y = 1/Z is smooth instead: it is fitted and
    converted, Z = 1/Y and Z' = -Y'/Y^2 (exact at any point; standard errors to first order).
    """
    fit = local_fit(f_hz, z_ohm, f0_hz, half_width_hz)
    if fit.d_im >= 0:
        return fit
    with np.errstate(divide="ignore", invalid="ignore"):
        y = 1 / np.asarray(z_ohm, dtype=complex)
    fy = local_fit(f_hz, y, f0_hz, half_width_hz)
    yc = complex(fy.re, fy.im)
    if yc == 0:
        return fit
    zc = 1 / yc
    dz = -complex(fy.d_re, fy.d_im) / yc**2
    k = 1 / abs(yc) ** 2
    v_std = math.hypot(fy.re_std, fy.im_std) * k
    d_std = math.hypot(fy.d_re_std, fy.d_im_std) * k
    return LocalFit(fy.f_hz, zc.real, zc.imag, dz.real, dz.imag, v_std, v_std, d_std, d_std, fy.points,
                    fy.f_low_hz, fy.f_high_hz, fy.degree)


def _q_of_fit(fit: LocalFit) -> tuple[float, float]:
    """Q_Z of an impedance fit and its relative standard error (first-order propagation)."""
    w0 = TWO_PI * fit.f_hz
    q = q_from_impedance(w0, fit.re, fit.im, fit.d_re, fit.d_im)
    if not math.isfinite(q):
        return q, math.inf
    t = fit.d_im + abs(fit.im) / w0
    s2 = fit.d_re**2 + t**2
    if s2 == 0:
        return q, math.inf
    t_std = math.hypot(fit.d_im_std, fit.im_std / w0)
    rel = math.sqrt((fit.d_re * fit.d_re_std / s2) ** 2 + (t * t_std / s2) ** 2 + (fit.re_std / fit.re) ** 2)
    return q, rel


def _fit_q(f: np.ndarray, z: np.ndarray, f0: float, refine_resonance: bool) -> tuple[LocalFit, float, float]:
    """Fit around f0 over f0 +- f0/(2Q) (the half-power bandwidth), iterated from a first estimate;
    with ``refine_resonance`` f0 moves to the fitted X = 0 (a Newton step per iteration)."""
    fit = impedance_fit(f, z, f0, 0.0)  # the nearest MIN_FIT_POINTS samples: a first estimate
    q, rel = _q_of_fit(fit)
    half = math.nan
    for _ in range(8):
        new_half = MAX_FIT_HALF_WIDTH * f0 if not (math.isfinite(q) and q > 0) else min(
            FIT_HALF_WIDTH_BANDWIDTHS * f0 / q, MAX_FIT_HALF_WIDTH * f0)
        step = 0.0
        if refine_resonance and fit.d_im != 0:
            step = -fit.im / fit.d_im / TWO_PI
            if abs(step) < new_half:
                f0 = min(max(f0 + step, float(f[0])), float(f[-1]))
            else:
                step = 0.0
        done = math.isclose(new_half, half, rel_tol=0.01) and abs(step) < 1e-9 * f0
        half = new_half
        fit = impedance_fit(f, z, f0, half)
        q, rel = _q_of_fit(fit)
        if done:
            break
    return fit, q, rel


# ----------------------------------------------------------------------------------------------
# Resonances


def reactance_zeros(f_hz: np.ndarray, x_ohm: np.ndarray) -> list[tuple[float, int]]:
    """Frequencies (Hz) where the reactance crosses zero, linearly interpolated, each with the sign
    of the slope (+1: X rises, a series resonance; -1: X falls, a parallel resonance)."""
    f = np.asarray(f_hz, dtype=float)
    x = np.asarray(x_ohm, dtype=float)
    out: list[tuple[float, int]] = []
    ok = np.isfinite(x)
    n = f.size
    for i in range(n):
        if not ok[i]:
            continue
        if x[i] == 0:  # a sample exactly at zero: its slope from the neighbours
            lo, hi = x[max(i - 1, 0)], x[min(i + 1, n - 1)]
            if hi != lo:
                out.append((float(f[i]), 1 if hi > lo else -1))
        elif i + 1 < n and ok[i + 1] and x[i] * x[i + 1] < 0:
            a, b = x[i], x[i + 1]
            out.append((float(f[i] - a * (f[i + 1] - f[i]) / (b - a)), 1 if b > a else -1))
    return out


def _impedance(sweep: Sweep) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(rf.impedance_ohm(sweep.gamma, sweep.z0_ohm), dtype=complex)


def _choose_f0(sweep: Sweep, z: np.ndarray) -> tuple[float, str]:
    f = sweep.f_hz
    i = best_index(sweep.gamma)
    zeros = reactance_zeros(f, z.imag)
    if not zeros:
        return float(f[i]), "best sample"
    fz = min(zeros, key=lambda p: abs(p[0] - f[i]))[0]
    return fz, "resonance"


# ----------------------------------------------------------------------------------------------
# Bands


def tuned_matched_gamma(f_hz: np.ndarray, z_ohm: np.ndarray, f0_hz: float, r0_ohm: float,
                        x0_ohm: float) -> np.ndarray:
    """Reflection after an ideal series tune at ``f0_hz`` (an inductor when ``x0_ohm`` < 0, a
    capacitor when > 0, cancelling X(f0) there) and an ideal transformer to ``r0_ohm``."""
    f = np.asarray(f_hz, dtype=float)
    u = f / f0_hz
    with np.errstate(divide="ignore", invalid="ignore"):
        x_tune = -x0_ohm * u if x0_ohm < 0 else -x0_ohm / u
        zt = np.asarray(z_ohm, dtype=complex) + 1j * x_tune
        g = (zt - r0_ohm) / (zt + r0_ohm)
    return np.where(np.isfinite(g), g, 1.0 + 0j)  # an infinite impedance (an open) reflects everything


def _bode_fano_rl(f: np.ndarray, z: np.ndarray, f0: float, fbw: float) -> float | None:
    lo, hi = f0 * (1 - fbw / 2), f0 * (1 + fbw / 2)
    if not (math.isfinite(fbw) and fbw > 0 and sweep_covers(f, lo, hi)):
        return None
    inside = (f >= lo) & (f <= hi) & np.isfinite(z)
    if inside.sum() < 3:
        return None
    b = bode_fano_bound(f[inside], z[inside], lo, hi)
    return None if b is None else float(b.best_return_loss_db)


# ----------------------------------------------------------------------------------------------
# Cap method


def _cap_efficiency(free_f: np.ndarray, z_free: np.ndarray, f0: float, half: float, resonance: str,
                    f0_is_resonance: bool, q: float, capped: Sweep, warnings: list[str]) -> dict:
    fc = capped.f_hz
    zc = _impedance(capped)
    lo, hi = max(free_f[0], fc[0]), min(free_f[-1], fc[-1])
    out = {"capped_path": capped.path}
    if lo >= hi:
        warnings.append(f"{capped.path}: the capped sweep ({_ff(fc[0])} to {_ff(fc[-1])}) does not overlap the free "
                        f"sweep ({_ff(free_f[0])} to {_ff(free_f[-1])}); no efficiency")
        return out
    series = resonance == "series"
    out["efficiency_model"] = resonance
    out["efficiency_unit"] = "ohm" if series else "S"
    f_cap = f0
    half_cap = half
    if f0_is_resonance:
        sign = 1 if series else -1
        zeros = [fz for fz, s in reactance_zeros(fc, zc.imag) if s == sign and lo <= fz <= hi]
        if zeros:
            f_cap = min(zeros, key=lambda x: abs(x - f0))
            try:  # refined on the capped sweep's own fit, as f0 is on the free one
                cfit, _, _ = _fit_q(fc, zc, f_cap, refine_resonance=True)
                if lo <= cfit.f_hz <= hi:
                    f_cap = cfit.f_hz
                    half_cap = max(f_cap - cfit.f_low_hz, cfit.f_high_hz - f_cap)
            except NoSolutionError:
                pass
            if abs(f_cap - f0) > f0 / (2 * q):  # outside the free antenna's half-power band f0 +- f0/(2Q)
                out["efficiency_reliable"] = False
                warnings.append(f"{capped.path}: the capped resonance {_ff(f_cap)} lies outside the free antenna's "
                                f"half-power band {_ff(f0 - f0 / (2 * q))} to {_ff(f0 + f0 / (2 * q))} (f0 +- f0/(2Q)): "
                                "the efficiency is UNRELIABLE (a different antenna, or a cap that disturbs the near "
                                "field: too small or too close?)")
        else:
            warnings.append(f"{capped.path}: no {resonance} resonance in the capped sweep; the capped sweep is read "
                            f"at f0 = {_ff(f0)}")
    if not (fc[0] <= f_cap <= fc[-1]):
        warnings.append(f"{capped.path}: the capped sweep ({_ff(fc[0])} to {_ff(fc[-1])}) does not cover "
                        f"{_ff(f_cap)}; no efficiency")
        return out
    if f_cap - half_cap < fc[0] or f_cap + half_cap > fc[-1]:
        warnings.append(f"{capped.path}: the capped sweep covers only part of the fit window around {_ff(f_cap)}")
    with np.errstate(divide="ignore", invalid="ignore"):
        y_free, y_cap = 1 / z_free, 1 / zc
    if series:
        free_fit = local_fit(free_f, z_free, f0, half)
        cap_fit = local_fit(fc, zc, f_cap, half_cap)
    else:
        free_fit = local_fit(free_f, y_free, f0, half)
        cap_fit = local_fit(fc, y_cap, f_cap, half_cap)
    v_free, v_cap = free_fit.re, cap_fit.re
    eff = (v_free - v_cap) / v_free if v_free > 0 else math.nan
    in_range = bool(math.isfinite(eff) and 0.0 <= eff <= 1.0)
    what = "R" if series else "G"
    if not in_range:
        warnings.append(f"{capped.path}: efficiency {eff:.3g} lies outside 0..1 ({what} capped {v_cap:.4g}, free "
                        f"{v_free:.4g}): noise, a leaking or resonating cap, or different reference planes; "
                        f"not a valid result")
    elif cap_fit.re_std > 0.1 * abs(v_free - v_cap):
        warnings.append(f"{capped.path}: the capped {what} is noisy (standard error {cap_fit.re_std:.3g}, more than "
                        f"10 % of the difference): the efficiency is uncertain")
    # a cap resonance shows as resonances in the capped sweep that the free sweep does not have
    span = max(CLOSE_RESONANCE_BANDWIDTHS * f0 / q, 2 * half) if math.isfinite(q) and q > 0 else 2 * half
    wlo, whi = max(lo, f0 - span), min(hi, f0 + span)
    n_free = [z for z, _ in reactance_zeros(free_f, z_free.imag) if wlo <= z <= whi]
    n_cap = [z for z, _ in reactance_zeros(fc, zc.imag) if wlo <= z <= whi]
    if len(n_cap) > len(n_free):
        extra = max(n_cap, key=lambda x: min((abs(x - y) for y in n_free), default=math.inf))  # the newest one
        warnings.append(f"{capped.path}: the capped sweep has {len(n_cap) - len(n_free)} more resonance(s) than the "
                        f"free sweep near f0 (e.g. {_ff(extra)}): the cap itself may resonate; do not trust the "
                        f"efficiency near a cap resonance")
    out.update(efficiency=float(eff), efficiency_in_range=in_range, f_cap_hz=float(f_cap),
               free_value=float(v_free), capped_value=float(v_cap),
               efficiency_reliable=bool(in_range and out.get("efficiency_reliable", True)))
    return out


# ----------------------------------------------------------------------------------------------
# Entry point


def qfactor(sweep: Sweep | skrf.Network | str, at_hz: float | None = None, radius_m: float | None = None,
            capped: Sweep | skrf.Network | str | None = None, threshold_return_loss_db: float = 10.0,
            port: int | None = None, z0_ohm: float | None = None) -> QFactorResult:
    """Q, bandwidth potential, small-antenna bound and cap-method efficiency of one antenna.

    ``sweep``: the antenna's reflection (a Sweep, an ``skrf.Network`` or a Touchstone path; port
    ``port``, renormalised to ``z0_ohm`` when given). ``at_hz``: where to evaluate Q (Hz); default
    the reactance zero (X = 0) nearest the best-matched sample, or that sample when the sweep has no
    X = 0. ``radius_m``: radius of the smallest sphere enclosing the antenna (m). ``capped``: the
    same antenna measured inside a closed conducting cap (same port and reference impedance).
    ``threshold_return_loss_db``: positive dB; it sets the VSWR of the bandwidth figures.
    """
    sw = as_sweep(sweep, port=port, z0_ohm=z0_ohm)
    warnings: list[str] = list(sw.warnings)
    if not (isinstance(threshold_return_loss_db, int | float) and math.isfinite(threshold_return_loss_db)
            and threshold_return_loss_db > 0):
        raise UsageError("must be a positive return loss in dB", parameter="threshold_return_loss_db",
                         value=threshold_return_loss_db, expected="e.g. 10 (S11 of -10 dB)")
    if radius_m is not None and not (isinstance(radius_m, int | float) and math.isfinite(radius_m) and radius_m > 0):
        raise UsageError("must be a positive length", parameter="radius_m", value=f"{radius_m} m",
                         expected="the radius of the smallest sphere enclosing the antenna, e.g. 3cm")
    f = sw.f_hz
    if f.size < MIN_FIT_POINTS:
        raise NoSolutionError(f"the sweep has {f.size} points; Q needs at least {MIN_FIT_POINTS}", path=sw.path,
                              expected="a sweep with more points around the resonance")
    z = _impedance(sw)
    if at_hz is not None:
        if not (isinstance(at_hz, int | float) and math.isfinite(at_hz)):
            raise UsageError("not a frequency", parameter="at_hz", value=at_hz)
        gamma_at_many(f, sw.gamma, np.array([float(at_hz)]), sw.path)  # refuses a frequency outside the sweep
        f0, choice = float(at_hz), "at"
    else:
        f0, choice = _choose_f0(sw, z)
        if choice == "best sample":
            warnings.append(f"{sw.path}: no resonance (X = 0) in the sweep; Q is taken at the best-matched sample "
                            f"{_ff(f0)} as if tuned there by a series reactance (choose with --at)")
    fit, q, q_rel = _fit_q(f, z, f0, refine_resonance=choice == "resonance")
    f0 = fit.f_hz
    if not fit.re > 1e-9 * max(abs(fit.im), sw.z0_ohm):  # a pure reactance, up to rounding
        raise NoSolutionError(f"the resistance at {_ff(f0)} is {fit.re:.3g} ohm; Q needs R > 0", path=sw.path,
                              expected="a sweep of a passive antenna (check calibration and --z0)")
    resonance = "series" if fit.d_im > 0 else "parallel"
    half_power = f0 / q
    # --- fit quality
    inside = int(np.count_nonzero(np.abs(f - f0) <= half_power / 2))
    if inside < MIN_FIT_POINTS:
        warnings.append(f"{sw.path}: sweep too coarse for a stable derivative: {inside} sample(s) within the "
                        f"half-power bandwidth around {_ff(f0)} (f0/Q = {_ff(half_power)}); the fit used the "
                        f"{fit.points} nearest samples, {_ff(fit.f_low_hz)} to {_ff(fit.f_high_hz)}; "
                        f"re-measure with a step below {_ff(half_power / MIN_FIT_POINTS)}")
    if q_rel > NOISY_Q_REL_STD:
        warnings.append(f"{sw.path}: the impedance around {_ff(f0)} is noisy or varies faster than the fit follows: "
                        f"Q is uncertain by about {100 * q_rel:.0f} % (standard error of the local fit); average more "
                        f"sweeps or narrow the IF bandwidth, and de-embed any cable first (matchtool feedline)")
    if f0 - fit.f_low_hz < 0.5 * (fit.f_high_hz - f0) or fit.f_high_hz - f0 < 0.5 * (f0 - fit.f_low_hz):
        warnings.append(f"{sw.path}: {_ff(f0)} lies near the end of the sweep: the derivative comes mostly from "
                        f"one side ({_ff(fit.f_low_hz)} to {_ff(fit.f_high_hz)})")
    half = max(f0 - fit.f_low_hz, fit.f_high_hz - f0)
    others = [fz for fz, _ in reactance_zeros(f, z.imag)
              if abs(fz - f0) > half / 2 and abs(fz - f0) <= CLOSE_RESONANCE_BANDWIDTHS * half_power]
    if others:
        near = min(others, key=lambda x: abs(x - f0))
        warnings.append(f"{sw.path}: another resonance at {_ff(near)} lies within {CLOSE_RESONANCE_BANDWIDTHS:g} "
                        f"half-power bandwidths of {_ff(f0)}: Q_Z and the bandwidth potential assume a single "
                        f"resonance and may be far off (compare the tuned band found on the sweep)")
    # --- bandwidths
    gamma_s = float(rf.gamma_mag_from_return_loss(threshold_return_loss_db))
    s = float(rf.vswr(gamma_s))
    fbw = fractional_bandwidth_potential(q, s)
    g_tuned = tuned_matched_gamma(f, z, f0, fit.re, fit.im)
    tuned = band_containing(find_bands(f, rf.return_loss_db(g_tuned), threshold_return_loss_db), f0)
    tuned_fbw = None
    if tuned is not None and not (tuned.clipped_low or tuned.clipped_high):
        tuned_fbw = tuned.bandwidth_hz / f0
    measured = band_containing(find_bands(f, rf.return_loss_db(sw.gamma), threshold_return_loss_db), f0)
    measured_fbw = measured.fractional_bandwidth if measured is not None else None
    if measured is not None and (measured.clipped_low or measured.clipped_high):
        warnings.append(f"{sw.path}: today's band runs past the end of the sweep; its true width is larger")
    bf_fbw = bode_fano_fractional_bandwidth(q, gamma_s)
    bf_rl = _bode_fano_rl(f, z, f0, fbw)
    kw: dict = {}
    # --- small-antenna bound
    if radius_m is not None:
        ka = electrical_radius(f0, float(radius_m))
        qmin = chu_q_min(ka)
        kw.update(radius_m=float(radius_m), ka=ka, chu_q_min=qmin, q_over_chu=q / qmin)
        if ka > 1:
            warnings.append(f"ka = {ka:.3g} > 1 at {_ff(f0)}: the antenna is not electrically small and the "
                            f"Chu-McLean bound no longer constrains it")
        elif q < BELOW_CHU_RATIO * qmin:
            warnings.append(f"Q {q:.3g} is below the Chu-McLean minimum {qmin:.3g} (Q/Q_min = {q / qmin:.2g}) for "
                            f"ka = {ka:.3g}: no lossless antenna of that size can do it; loss lowers Q (check the "
                            f"efficiency), or the radius is too small")
    # --- cap method
    if capped is not None:
        cap = as_sweep(capped, port=sw.port if port is None else port, z0_ohm=sw.z0_ohm)
        warnings.extend(w for w in cap.warnings if w not in warnings)
        kw.update(_cap_efficiency(f, z, f0, half, resonance, choice == "resonance", q, cap, warnings))
    return QFactorResult(
        path=sw.path, port=sw.port, z0_ohm=sw.z0_ohm, points=int(f.size), f0_hz=float(f0), f0_choice=choice,
        r_ohm=fit.re, x_ohm=fit.im, dr_dw_ohm_s=fit.d_re, dx_dw_ohm_s=fit.d_im, fit=fit, resonance=resonance,
        q=float(q), q_rel_std=float(q_rel), threshold_return_loss_db=float(threshold_return_loss_db), vswr=s,
        fractional_bandwidth_potential=float(fbw), bandwidth_potential_hz=float(fbw * f0),
        tuned_band=tuned, tuned_fractional_bandwidth=tuned_fbw, measured_band=measured,
        measured_fractional_bandwidth=measured_fbw, bode_fano_fractional_bandwidth=float(bf_fbw),
        bode_fano_best_return_loss_db=bf_rl, radiansphere_radius_m=C0_M_PER_S / (TWO_PI * f0),
        sphere_cap_resonance_radius_m=SPHERE_CAVITY_KA * C0_M_PER_S / (TWO_PI * f0), warnings=tuple(warnings), **kw)

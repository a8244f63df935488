"""Feed lines: cable models, reference-plane moves and de-embedding.

Conventions
-----------
- Lengths in metres, attenuation in dB per metre at a reference frequency, frequencies in Hz,
  times in seconds, impedances in ohms (real).
- Conductor loss scales with sqrt(f), dielectric loss with f (common practice, no source).
- A cable is a 2-port whose port 1 faces the radio (or the analyzer) and whose port 2 faces the
  antenna. ``toward="radio"`` cascades the cable in front of the antenna's port; ``toward="antenna"``
  removes (de-embeds) it from a measurement taken through it.
- Travelling waves go as exp(j omega t - gamma z), gamma = alpha + j beta (Pozar, Microwave
  Engineering, 4th ed., sec. 2.1 and eqs. 2.90-2.94): a matched line of length l has
  S21 = exp(-gamma l), and a load Gamma_L seen through it becomes Gamma_L exp(-2 gamma l).
- A cable model whose characteristic impedance differs from the system impedance is a real
  mismatch: its S-parameters at the system reference carry S11 = S22 != 0. The characteristic
  impedance is taken as real (the low-loss approximation).

Everything is vectorised over frequency with numpy; results are frozen dataclasses.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Literal, Protocol

import numpy as np

from . import reflection as rf
from .bands import band_samples, sweep_covers
from .errors import InputError, OutOfRangeError, UsageError

C0_M_PER_S = 299_792_458.0
"""Speed of light in vacuum (exact, SI)."""

NEPER_DB = 20.0 / math.log(10.0)
"""dB per neper (8.686)."""

TWO_WAY_WARN_DB = 10.0
"""Two-way cable loss above which de-embedding is warned about (measurement error grows by it)."""

Toward = Literal["radio", "antenna"]


NONPHYSICAL_TOL = 1e-9
"""|Gamma| up to 1 + this counts as 1 (floating-point rounding), not as non-physical."""


def matched_loss_db(f_hz: np.ndarray | float, length_m: float, loss_db_per_m: float, loss_ref_hz: float = 1e9,
                    dielectric_loss_db_per_m: float = 0.0) -> np.ndarray:
    """One-way matched loss of a cable in dB at ``f_hz``.

    ``loss_db_per_m`` is the conductor part at ``loss_ref_hz`` (scaled with sqrt(f / f_ref));
    ``dielectric_loss_db_per_m`` is the dielectric part at ``loss_ref_hz`` (scaled with f / f_ref).
    """
    ratio = np.asarray(f_hz, dtype=float) / float(loss_ref_hz)
    return length_m * (loss_db_per_m * np.sqrt(ratio) + dielectric_loss_db_per_m * ratio)


# --------------------------------------------------------------------------------------------
# 2-port building blocks
# --------------------------------------------------------------------------------------------

def line_s(f_hz: np.ndarray, gamma_per_m: np.ndarray, length_m: float, zc_ohm: float, z_ref_ohm: float) -> np.ndarray:
    """S-parameters (n, 2, 2) of a uniform line of characteristic impedance ``zc_ohm`` (real),
    propagation constant ``gamma_per_m`` (complex, 1/m: alpha Np/m + j beta rad/m) and length
    ``length_m``, at the real reference impedance ``z_ref_ohm`` on both ports.

    With rho = (Zc - Zref)/(Zc + Zref) and P = exp(-gamma l):
    S11 = S22 = rho (1 - P^2) / (1 - rho^2 P^2), S21 = S12 = P (1 - rho^2) / (1 - rho^2 P^2).
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.broadcast_to(np.asarray(gamma_per_m, dtype=complex), f.shape)
    p = np.exp(-g * length_m)
    rho = (zc_ohm - z_ref_ohm) / (zc_ohm + z_ref_ohm)
    den = 1.0 - rho**2 * p**2
    s = np.empty(f.shape + (2, 2), dtype=complex)
    s[..., 0, 0] = s[..., 1, 1] = rho * (1.0 - p**2) / den
    s[..., 0, 1] = s[..., 1, 0] = p * (1.0 - rho**2) / den
    return s


def flip(s2: np.ndarray) -> np.ndarray:
    """Swap the ports of a 2-port S array (n, 2, 2)."""
    return np.asarray(s2)[..., ::-1, ::-1].copy()


def invert_2port(s2: np.ndarray) -> np.ndarray:
    """The cascade inverse U of a 2-port T (n, 2, 2): U followed by T is a perfect thru.

    With D = T11 T22 - T12 T21: U11 = T11/D, U22 = T22/D, U12 = -T21/D, U21 = -T12/D.
    Raises UsageError where the cable transmits nothing (D = 0 cannot be undone).
    """
    t = np.asarray(s2, dtype=complex)
    d = t[..., 0, 0] * t[..., 1, 1] - t[..., 0, 1] * t[..., 1, 0]
    trans = np.abs(t[..., 0, 1] * t[..., 1, 0])
    if np.any(trans < 1e-24) or np.any(np.abs(d) < 1e-24):
        raise UsageError("the cable transmits (almost) nothing at some frequency; it cannot be de-embedded",
                         expected="a cable with |S21| well above zero over the sweep")
    u = np.empty_like(t)
    u[..., 0, 0] = t[..., 0, 0] / d
    u[..., 1, 1] = t[..., 1, 1] / d
    u[..., 0, 1] = -t[..., 1, 0] / d
    u[..., 1, 0] = -t[..., 0, 1] / d
    return u


def connect_port(s: np.ndarray, t2: np.ndarray, port: int) -> np.ndarray:
    """Attach 2-port ``t2`` (n, 2, 2) to port ``port`` (1-based) of N-port ``s`` (n, N, N).

    Port 2 of ``t2`` meets the device port; port 1 of ``t2`` becomes the new external port at the
    same index. All ports share the same reference impedance at the junction. With
    D = 1 - T22 S_pp:
    S'_pp = T11 + T12 T21 S_pp / D, S'_pj = T12 S_pj / D, S'_ip = S_ip T21 / D,
    S'_ij = S_ij + S_ip T22 S_pj / D (i, j != p).
    """
    s = np.asarray(s, dtype=complex)
    t = np.asarray(t2, dtype=complex)
    k = port - 1
    spp = s[:, k, k]
    t11, t12, t21, t22 = t[:, 0, 0], t[:, 0, 1], t[:, 1, 0], t[:, 1, 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        d = 1.0 - t22 * spp
        col = s[:, :, k] / d[:, None]  # S_ip / D
        out = s + col[:, :, None] * t22[:, None, None] * s[:, k, :][:, None, :]
        out[:, k, :] = t12[:, None] * s[:, k, :] / d[:, None]
        out[:, :, k] = col * t21[:, None]
        out[:, k, k] = t11 + t12 * t21 * spp / d
    return out


def gamma_toward_radio(gamma_antenna: np.ndarray, s2: np.ndarray) -> np.ndarray:
    """Reflection at port 1 of the cable with the antenna ``gamma_antenna`` on port 2:
    Gamma_in = S11 + S12 S21 Gamma_L / (1 - S22 Gamma_L)
    (the standard two-port input reflection; from memory, Pozar 4th ed. ch. 12)."""
    g = np.asarray(gamma_antenna, dtype=complex)
    t = np.asarray(s2, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        return t[:, 0, 0] + t[:, 0, 1] * t[:, 1, 0] * g / (1.0 - t[:, 1, 1] * g)


def gamma_toward_antenna(gamma_radio: np.ndarray, s2: np.ndarray) -> np.ndarray:
    """The antenna's reflection behind the cable from the one measured at port 1:
    Gamma_L = (Gamma_in - S11) / (S21 S12 + S22 (Gamma_in - S11))."""
    g = np.asarray(gamma_radio, dtype=complex)
    t = np.asarray(s2, dtype=complex)
    x = g - t[:, 0, 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        return x / (t[:, 1, 0] * t[:, 0, 1] + t[:, 1, 1] * x)


# --------------------------------------------------------------------------------------------
# cables
# --------------------------------------------------------------------------------------------

class Cable(Protocol):
    """Anything that gives the cable's S-parameters (n, 2, 2) at a real reference impedance."""

    kind: str

    def s_params(self, f_hz: np.ndarray, z_ref_ohm: float) -> np.ndarray: ...


def _checked(parameter: str, value: float, allow_zero: bool = False) -> float:
    """``value`` as a float, or a UsageError naming ``parameter`` (core terms)."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise UsageError("is not a number", parameter=parameter, value=value) from None
    ok = math.isfinite(v) and (v >= 0 if allow_zero else v > 0)
    if not ok:
        raise UsageError("out of range", parameter=parameter, value=v,
                         expected="a finite number of zero or more" if allow_zero else "a finite positive number")
    return v


@dataclass(frozen=True)
class CableModel:
    """The one cable model of matchtool: a uniform line.

    - ``length_m``: length in metres (>= 0).
    - ``velocity_factor``: 0 < VF <= 1, phase velocity over c0. ``None`` when only the loss is
      wanted (a link budget); everything that needs the phase then raises UsageError.
    - ``loss_db_per_m``: conductor loss in dB/m at ``loss_ref_hz``, scaled with sqrt(f / f_ref).
    - ``dielectric_loss_db_per_m``: dielectric loss in dB/m at ``loss_ref_hz``, scaled with f / f_ref
      (common practice, no source: skin effect ~ sqrt(f), dielectric loss tangent ~ f).
    - ``z0_ohm``: characteristic impedance (real, ohms); ``None`` is the system impedance (matched).

    Errors name the fields (``parameter="velocity_factor"``...); ``z0_ohm`` is named
    ``cable_z0_ohm`` so it is not taken for the system impedance.
    """

    length_m: float
    velocity_factor: float | None = None
    loss_db_per_m: float = 0.0
    loss_ref_hz: float = 1e9
    dielectric_loss_db_per_m: float = 0.0
    z0_ohm: float | None = None
    kind: str = field(default="model", init=False)

    def __post_init__(self) -> None:
        _checked("length_m", self.length_m, allow_zero=True)
        if self.velocity_factor is not None:
            vf = _checked("velocity_factor", self.velocity_factor)
            if not vf <= 1.0:
                raise UsageError("a velocity factor cannot exceed 1 (nothing travels faster than light)",
                                 parameter="velocity_factor", value=vf,
                                 expected="a number above 0 and at most 1 (solid PE 0.66, PTFE 0.69, foam PE ~0.85)")
        _checked("loss_db_per_m", self.loss_db_per_m, allow_zero=True)
        _checked("dielectric_loss_db_per_m", self.dielectric_loss_db_per_m, allow_zero=True)
        _checked("loss_ref_hz", self.loss_ref_hz)
        if self.z0_ohm is not None:
            _checked("cable_z0_ohm", self.z0_ohm)

    def _vf(self) -> float:
        if self.velocity_factor is None:
            raise UsageError("is needed for the phase along the cable", parameter="velocity_factor",
                             expected="a velocity factor above 0 and at most 1")
        return float(self.velocity_factor)

    @property
    def lossless(self) -> bool:
        return self.loss_db_per_m == 0 and self.dielectric_loss_db_per_m == 0

    def with_length(self, length_m: float) -> CableModel:
        """The same cable type cut to ``length_m`` metres."""
        return dataclasses.replace(self, length_m=length_m)

    def loss_db(self, f_hz: np.ndarray | float, length_m: float | None = None) -> np.ndarray:
        """One-way matched loss in positive dB at ``f_hz`` for ``length_m`` metres (default: the
        cable's own length). This is what a link budget needs."""
        n = self.length_m if length_m is None else length_m
        return np.asarray(matched_loss_db(f_hz, n, self.loss_db_per_m, self.loss_ref_hz,
                                          self.dielectric_loss_db_per_m), dtype=float)

    def alpha_np_per_m(self, f_hz: np.ndarray) -> np.ndarray:
        """Attenuation constant in Np/m at ``f_hz``."""
        return self.loss_db(f_hz, 1.0) / NEPER_DB

    def beta_rad_per_m(self, f_hz: np.ndarray) -> np.ndarray:
        """Phase constant in rad/m: 2 pi f / (VF c0)."""
        return 2 * np.pi * np.asarray(f_hz, dtype=float) / (self._vf() * C0_M_PER_S)

    def gamma_per_m(self, f_hz: np.ndarray) -> np.ndarray:
        """Propagation constant alpha + j beta (1/m)."""
        return self.alpha_np_per_m(f_hz) + 1j * self.beta_rad_per_m(f_hz)

    def matched_loss_db(self, f_hz: np.ndarray) -> np.ndarray:
        """One-way loss in dB of the whole length when terminated in its own impedance."""
        return self.loss_db(f_hz)

    def delay_s(self) -> float:
        """One-way delay in seconds, l / (VF c0)."""
        return self.length_m / (self._vf() * C0_M_PER_S)

    def distance_m(self, round_trip_s: np.ndarray | float) -> np.ndarray:
        """One-way distance in metres of a round-trip time: VF c0 t / 2."""
        return self._vf() * C0_M_PER_S * np.asarray(round_trip_s, dtype=float) / 2.0

    def round_trip_s(self, distance_m: np.ndarray | float) -> np.ndarray:
        """Round-trip time in seconds to a one-way distance: 2 d / (VF c0)."""
        return 2.0 * np.asarray(distance_m, dtype=float) / (self._vf() * C0_M_PER_S)

    def s_params(self, f_hz: np.ndarray, z_ref_ohm: float) -> np.ndarray:
        zc = z_ref_ohm if self.z0_ohm is None else self.z0_ohm
        return line_s(f_hz, self.gamma_per_m(f_hz), self.length_m, zc, z_ref_ohm)


@dataclass(frozen=True)
class Delay:
    """A pure, lossless, matched electrical delay of ``delay_s`` seconds (port extension)."""

    delay_s: float
    kind: str = field(default="delay", init=False)

    def __post_init__(self) -> None:
        _checked("delay_s", self.delay_s, allow_zero=True)

    def s_params(self, f_hz: np.ndarray, z_ref_ohm: float) -> np.ndarray:
        f = np.asarray(f_hz, dtype=float)
        s = np.zeros(f.shape + (2, 2), dtype=complex)
        s[..., 0, 1] = s[..., 1, 0] = np.exp(-2j * np.pi * f * self.delay_s)
        return s


def _interp_complex(fq: np.ndarray, f: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.interp(fq, f, y.real) + 1j * np.interp(fq, f, y.imag)


def _interp_transmission(fq: np.ndarray, f: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Interpolate a transmission term in log-magnitude and unwrapped phase (a cable's S21 turns
    quickly in phase; interpolating real and imaginary parts would cut the corners)."""
    mag = np.abs(y)
    with np.errstate(divide="ignore"):
        logm = np.log(np.where(mag > 0, mag, 1e-300))
    ph = np.unwrap(np.angle(y))
    return np.exp(np.interp(fq, f, logm) + 1j * np.interp(fq, f, ph))


@dataclass(frozen=True, eq=False)
class MeasuredCable:
    """A measured cable 2-port: ``f_hz`` (m,), ``s`` (m, 2, 2) at reference ``z0_ohm`` (real),
    port 1 toward the radio / analyzer. ``path`` names the file for messages."""

    f_hz: np.ndarray
    s: np.ndarray
    z0_ohm: float
    path: str = "<cable>"
    flipped: bool = False
    kind: str = field(default="measured", init=False)

    def covers(self, f_hz: np.ndarray) -> bool:
        f = np.asarray(f_hz, dtype=float)
        lo, hi = float(self.f_hz[0]), float(self.f_hz[-1])
        tol = 1e-9 * max(abs(hi), 1.0)
        return bool(f.min() >= lo - tol and f.max() <= hi + tol)

    def s_params(self, f_hz: np.ndarray, z_ref_ohm: float) -> np.ndarray:
        """S-parameters on ``f_hz``: exact on a shared grid, else interpolated (reflections linear in
        complex S, transmissions in log-magnitude and unwrapped phase). Outside the measured range:
        OutOfRangeError. ``z_ref_ohm`` must equal the cable's reference (renormalise when loading)."""
        f = np.asarray(f_hz, dtype=float)
        if not math.isclose(z_ref_ohm, self.z0_ohm, rel_tol=1e-9):
            raise UsageError(f"cable reference {self.z0_ohm:g} ohm differs from the system {z_ref_ohm:g} ohm",
                             path=self.path)
        if not self.covers(f):
            raise OutOfRangeError(
                f"the cable covers {self.f_hz[0] / 1e6:.6g} to {self.f_hz[-1] / 1e6:.6g} MHz, the sweep "
                f"{f.min() / 1e6:.6g} to {f.max() / 1e6:.6g} MHz", path=self.path,
                expected="a cable measurement that covers the whole sweep (never extrapolated)")
        if self.same_grid(f):
            return self.s.copy()
        fc = np.clip(f, self.f_hz[0], self.f_hz[-1])
        if self.f_hz.size == 1:
            return np.broadcast_to(self.s[0], f.shape + (2, 2)).copy()
        out = np.empty(f.shape + (2, 2), dtype=complex)
        out[:, 0, 0] = _interp_complex(fc, self.f_hz, self.s[:, 0, 0])
        out[:, 1, 1] = _interp_complex(fc, self.f_hz, self.s[:, 1, 1])
        out[:, 1, 0] = _interp_transmission(fc, self.f_hz, self.s[:, 1, 0])
        out[:, 0, 1] = _interp_transmission(fc, self.f_hz, self.s[:, 0, 1])
        return out

    def same_grid(self, f_hz: np.ndarray) -> bool:
        """True when ``f_hz`` is the cable's own frequency grid (no interpolation needed)."""
        f = np.asarray(f_hz, dtype=float)
        return f.shape == self.f_hz.shape and bool(np.allclose(f, self.f_hz, rtol=1e-12, atol=0))

    def max_phase_step_deg(self) -> float:
        """Largest change of the S21 phase between neighbouring cable samples, in degrees (after
        unwrapping; steps near 180 deg or more cannot be told from wrapping)."""
        if self.f_hz.size < 2:
            return 0.0
        return float(np.degrees(np.max(np.abs(np.diff(np.unwrap(np.angle(self.s[:, 1, 0])))))))


def load_cable(path, z_ref_ohm: float, flip_ports: bool = False) -> tuple[MeasuredCable, list[str]]:
    """Load a measured cable from a 2-port Touchstone file (through :func:`matchtool.sweep.load`)
    or take it from a 2-port ``skrf.Network`` or Sweep, renormalised to ``z_ref_ohm``. Port 1 faces
    the radio; ``flip_ports`` swaps the ports. Returns the cable and the loader's warnings."""
    from .sweep import as_sweep

    cab = as_sweep(path, port=1, z0_ohm=z_ref_ohm)
    path = cab.path
    if cab.nports != 2:
        raise InputError(f"a cable must be a 2-port; this one has {cab.nports} port(s)", path=path,
                         expected="a .s2p file (port 1 toward the radio / analyzer)")
    s = np.asarray(cab.network.s, dtype=complex)
    if flip_ports:
        s = flip(s)
    warnings = list(cab.warnings)
    power = np.maximum(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2, np.abs(s[:, 1, 1]) ** 2 + np.abs(s[:, 0, 1]) ** 2)
    if np.any(power > 1.0 + 1e-6):
        k = int(np.argmax(power))
        warnings.append(f"{path}: the cable puts out more power than it receives at {int(np.sum(power > 1 + 1e-6))} "
                        f"point(s) (|S11|^2 + |S21|^2 up to {power[k]:.4f} at {cab.f_hz[k] / 1e6:.6g} MHz); "
                        "a cable is passive: check its calibration")
    return MeasuredCable(f_hz=np.asarray(cab.f_hz, dtype=float).copy(), s=s, z0_ohm=float(z_ref_ohm), path=str(path),
                         flipped=bool(flip_ports)), warnings


# --------------------------------------------------------------------------------------------
# what the feed does at both ends
# --------------------------------------------------------------------------------------------

def _db_loss(ratio: np.ndarray) -> np.ndarray:
    r = np.asarray(ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(r > 0, -10.0 * np.log10(np.where(r > 0, r, 1.0)), np.nan)


@dataclass(frozen=True, eq=False)
class FeedPoints:
    """The feed at frequencies ``f_hz`` (n,): cable S (n, 2, 2) at the system impedance, the
    reflection at the radio end (cable port 1) and at the antenna (cable port 2 load).

    Losses are positive dB. ``matched_loss_db`` is the model's own attenuation (NaN for a measured
    cable or a delay, where it is the insertion loss)."""

    f_hz: np.ndarray
    s_cable: np.ndarray
    gamma_radio: np.ndarray
    gamma_antenna: np.ndarray
    z0_ohm: float
    matched_loss_db: np.ndarray

    @property
    def one_way_loss_db(self) -> np.ndarray:
        """Insertion loss of the cable in the system impedance, -20 log10 |S21| (radio to antenna)."""
        with np.errstate(divide="ignore"):
            return -20.0 * np.log10(np.abs(self.s_cable[:, 1, 0]))

    @property
    def dissipative_loss_db(self) -> np.ndarray:
        """The cable's own one-way loss with matched ends, positive dB: for a cable model its
        attenuation in its own impedance (``matched_loss_db``); for a measured cable or a delay the
        power it dissipates when fed from and terminated in the system impedance,
        -10 log10(|S21|^2 / (1 - |S11|^2)) (0 for any lossless 2-port, where |S11|^2 + |S21|^2 = 1).
        Unlike :attr:`one_way_loss_db` it leaves out what an impedance mismatch reflects."""
        ml = np.asarray(self.matched_loss_db, dtype=float)
        s11 = self.s_cable[:, 0, 0]
        s21 = self.s_cable[:, 1, 0]
        with np.errstate(divide="ignore", invalid="ignore"):
            measured = _db_loss(np.abs(s21) ** 2 / (1.0 - np.abs(s11) ** 2))
        return np.where(np.isnan(ml), measured, ml) + 0.0

    @property
    def two_way_loss_db(self) -> np.ndarray:
        """-20 log10 |S21 S12|: what a reflection loses going down the cable and back."""
        with np.errstate(divide="ignore"):
            return -20.0 * np.log10(np.abs(self.s_cable[:, 1, 0] * self.s_cable[:, 0, 1]))

    @property
    def return_loss_radio_db(self) -> np.ndarray:
        return rf.return_loss_db(self.gamma_radio)

    @property
    def return_loss_antenna_db(self) -> np.ndarray:
        return rf.return_loss_db(self.gamma_antenna)

    @property
    def vswr_radio(self) -> np.ndarray:
        return rf.vswr(self.gamma_radio)

    @property
    def vswr_antenna(self) -> np.ndarray:
        return rf.vswr(self.gamma_antenna)

    @property
    def return_loss_improvement_db(self) -> np.ndarray:
        """Return loss at the radio end minus at the antenna: what the cable adds (ideally 2 x one-way)."""
        with np.errstate(invalid="ignore"):
            return self.return_loss_radio_db - self.return_loss_antenna_db

    @property
    def cable_share_db(self) -> np.ndarray:
        """The part of the radio-end return loss that the cable's loss explains: 2 x its
        dissipative (matched, one-way) loss; an impedance mismatch of the cable is not in it."""
        return 2.0 * self.dissipative_loss_db

    @property
    def delivered_to_antenna(self) -> np.ndarray:
        """Power accepted by the antenna per unit power available from a matched radio (transducer
        gain G_T with Gamma_s = 0): |S21|^2 (1 - |Gamma_L|^2) / |1 - S22 Gamma_L|^2."""
        s21 = self.s_cable[:, 1, 0]
        s22 = self.s_cable[:, 1, 1]
        g = self.gamma_antenna
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(s21) ** 2 * (1 - np.abs(g) ** 2) / np.abs(1 - s22 * g) ** 2

    @property
    def total_feed_loss_db(self) -> np.ndarray:
        """Transducer loss from a matched radio into the antenna, 1 / G_T in dB: power available
        from a matched (Gamma_s = 0) radio over power accepted by the antenna,
        G_T = |S21|^2 (1 - |Gamma_L|^2) / |1 - S22 Gamma_L|^2 (Pozar 4th ed. sec. 12.1, transducer
        gain with Gamma_s = 0; eq. 12.8 from memory). It contains the cable's dissipation, the
        antenna's mismatch and the cable's own reflection; it equals :attr:`line_loss_db` plus the
        mismatch loss seen at the radio end. NaN where non-physical."""
        return _db_loss(self.delivered_to_antenna)

    @property
    def mismatch_loss_radio_db(self) -> np.ndarray:
        """Mismatch loss at the radio end, -10 log10(1 - |Gamma_in|^2)."""
        return rf.mismatch_loss_db(self.gamma_radio)

    @property
    def line_loss_db(self) -> np.ndarray:
        """Power entering the cable over power reaching the antenna, in dB (the cable's dissipation
        with this load, standing-wave excess included; Pozar 4th ed. eqs. 2.92-2.94 for a line)."""
        acc = rf.delivered_fraction(self.gamma_radio)
        with np.errstate(divide="ignore", invalid="ignore"):
            return _db_loss(self.delivered_to_antenna / acc)

    @property
    def nonphysical(self) -> np.ndarray:
        """True where either end has |Gamma| > 1 (a passive antenna cannot do that), beyond the
        rounding of a lossless move (a short through a delay stays at |Gamma| = 1 within 1e-9)."""
        lim = 1.0 + NONPHYSICAL_TOL
        return (np.abs(self.gamma_radio) > lim) | (np.abs(self.gamma_antenna) > lim) | ~np.isfinite(self.gamma_antenna)


def feed_points(f_hz: np.ndarray, gamma_in: np.ndarray, cable: Cable, toward: Toward, z0_ohm: float) -> FeedPoints:
    """Move the reflection ``gamma_in`` (n,) at ``f_hz`` along ``cable``.

    ``toward="radio"``: ``gamma_in`` is the antenna's; ``toward="antenna"``: it was measured at the
    cable's radio end. The cable is evaluated at ``f_hz`` itself (not interpolated from a grid)."""
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma_in, dtype=complex)
    t = cable.s_params(f, z0_ohm)
    if toward == "radio":
        g_radio, g_ant = gamma_toward_radio(g, t), g
    elif toward == "antenna":
        g_radio, g_ant = g, gamma_toward_antenna(g, t)
    else:
        raise UsageError("is neither 'radio' nor 'antenna'", parameter="toward", value=toward,
                         expected="radio or antenna")
    ml = cable.matched_loss_db(f) if isinstance(cable, CableModel) else np.full(f.shape, np.nan)
    return FeedPoints(f_hz=f, s_cable=t, gamma_radio=g_radio, gamma_antenna=g_ant, z0_ohm=float(z0_ohm),
                      matched_loss_db=np.asarray(ml, dtype=float))


@dataclass(frozen=True, eq=False)
class Move:
    """A moved N-port: ``s`` (n, N, N) at the system impedance ``z0_ohm`` with ``port`` moved,
    the feed at the sweep's own frequencies, and warnings."""

    f_hz: np.ndarray
    s: np.ndarray
    port: int
    z0_ohm: float
    toward: str
    feed: FeedPoints
    warnings: tuple[str, ...] = ()

    @property
    def gamma(self) -> np.ndarray:
        """The moved port's reflection."""
        return self.s[:, self.port - 1, self.port - 1]

    @property
    def nonphysical_count(self) -> int:
        return int(np.count_nonzero(self.feed.nonphysical))


def move_network(f_hz: np.ndarray, s: np.ndarray, port: int, cable: Cable, toward: Toward, z0_ohm: float,
                 name: str = "sweep") -> Move:
    """Move the reference plane of port ``port`` of ``s`` (n, N, N, at the real system impedance
    ``z0_ohm`` on that port) along ``cable``: cascade it (``toward="radio"``) or de-embed it
    (``toward="antenna"``). The other ports keep their planes."""
    f = np.asarray(f_hz, dtype=float)
    s = np.asarray(s, dtype=complex)
    if s.ndim == 1:
        s = s.reshape(-1, 1, 1)
    if not 1 <= port <= s.shape[1]:
        raise UsageError("does not exist", parameter="port", value=port, expected=f"a port from 1 to {s.shape[1]}")
    t = cable.s_params(f, z0_ohm)
    if toward == "radio":
        moved = connect_port(s, t, port)
    elif toward == "antenna":
        moved = connect_port(s, invert_2port(t), port)
    else:
        raise UsageError("is neither 'radio' nor 'antenna'", parameter="toward", value=toward,
                         expected="radio or antenna")
    feed = feed_points(f, s[:, port - 1, port - 1], cable, toward, z0_ohm)
    return Move(f_hz=f, s=moved, port=port, z0_ohm=float(z0_ohm), toward=toward, feed=feed,
                warnings=tuple(feed_warnings(feed, toward, name)))


def interpolation_warnings(cable: Cable, f_hz: np.ndarray, limit_deg: float = 90.0) -> list[str]:
    """A warning when a measured cable must be interpolated onto ``f_hz`` but is sampled so
    coarsely that its S21 phase turns by more than ``limit_deg`` between samples."""
    if not isinstance(cable, MeasuredCable) or cable.same_grid(f_hz):
        return []
    step = cable.max_phase_step_deg()
    if step <= limit_deg:
        return []
    return [f"{cable.path}: the cable's S21 phase turns by up to {step:.0f} deg between its samples; "
            "interpolating it onto the sweep is unreliable - measure the cable on the sweep's grid or finer"]


def feed_warnings(feed: FeedPoints, toward: str, name: str = "sweep") -> list[str]:
    """Warnings about a feed: heavy two-way loss (de-embedding amplifies error, or the radio end
    hides the antenna) and non-physical |Gamma| > 1."""
    out = []
    two = feed.two_way_loss_db
    if two.size and np.nanmax(two) > TWO_WAY_WARN_DB:
        k = int(np.nanargmax(two))
        at = f"{two[k]:.1f} dB at {feed.f_hz[k] / 1e6:.6g} MHz"
        if toward == "antenna":
            out.append(f"{name}: the cable's two-way loss reaches {at}; de-embedding multiplies measurement "
                       "error and noise by that much, so the antenna's return loss is uncertain")
        else:
            out.append(f"{name}: the cable's two-way loss reaches {at}; the radio end will look well "
                       "matched whatever the antenna does")
    bad = feed.nonphysical
    if bad.any():
        mags = np.abs(np.where(np.isfinite(feed.gamma_antenna), feed.gamma_antenna, np.inf))
        mags = np.maximum(mags, np.abs(feed.gamma_radio))
        k = int(np.argmax(np.where(bad, mags, -1)))
        out.append(f"{name}: {int(bad.sum())} point(s) with |Gamma| > 1 after the move (up to {mags[k]:.4f} at "
                   f"{feed.f_hz[k] / 1e6:.6g} MHz): non-physical for a passive antenna; the cable data do not "
                   "match the measurement (wrong length, loss, port orientation or calibration)")
    return out


@dataclass(frozen=True)
class BandWorst:
    """Worst cases of a feed over [f_low_hz, f_high_hz] (edges interpolated). Losses positive dB."""

    f_low_hz: float
    f_high_hz: float
    one_way_loss_min_db: float
    one_way_loss_max_db: float
    worst_return_loss_radio_db: float
    worst_return_loss_radio_f_hz: float
    worst_return_loss_antenna_db: float
    worst_return_loss_antenna_f_hz: float
    worst_vswr_radio: float
    worst_vswr_antenna: float
    max_total_feed_loss_db: float
    max_total_feed_loss_f_hz: float
    max_line_loss_db: float
    nonphysical_points: int
    return_loss_antenna_at_worst_radio_db: float
    one_way_loss_at_worst_radio_db: float
    dissipative_loss_at_worst_radio_db: float = math.nan


def band_frequencies(f_hz: np.ndarray, f_low_hz: float, f_high_hz: float, path: str | None = None) -> np.ndarray:
    """The sweep's samples inside [f_low, f_high] plus both edges (OutOfRangeError outside, naming
    the sweep file ``path`` when given). Coverage and edges come from :mod:`matchtool.bands`."""
    f = np.asarray(f_hz, dtype=float)
    _check_band(f, f_low_hz, f_high_hz, path)
    return band_samples(f, f, f_low_hz, f_high_hz)[0]


def _check_band(f: np.ndarray, f_low_hz: float, f_high_hz: float, path: str | None) -> None:
    if not sweep_covers(f, f_low_hz, f_high_hz):
        raise OutOfRangeError(f"band {f_low_hz / 1e6:.6g} to {f_high_hz / 1e6:.6g} MHz is not inside the sweep "
                              f"({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz)", path=path,
                              expected="a band inside the sweep (never extrapolated)")


def band_worst(feed: FeedPoints) -> BandWorst:
    """Worst cases over the frequencies of ``feed`` (made by :func:`band_frequencies`).
    NaN losses (non-physical points) are left out of the maxima and counted."""
    f = feed.f_hz
    ow = feed.one_way_loss_db
    rl_r, rl_a = feed.return_loss_radio_db, feed.return_loss_antenna_db
    tot = feed.total_feed_loss_db
    line = feed.line_loss_db

    def argmin(y):
        y = np.where(np.isnan(y), np.inf, y)
        return int(np.argmin(y))

    def nanmax(y):
        return float(np.nanmax(y)) if np.isfinite(y).any() or np.isinf(y).any() else math.nan

    i_r, i_a = argmin(rl_r), argmin(rl_a)
    t_ok = np.where(np.isnan(tot), -np.inf, tot)
    i_t = int(np.argmax(t_ok))
    return BandWorst(
        f_low_hz=float(f[0]), f_high_hz=float(f[-1]),
        one_way_loss_min_db=float(np.min(ow)), one_way_loss_max_db=float(np.max(ow)),
        worst_return_loss_radio_db=float(rl_r[i_r]), worst_return_loss_radio_f_hz=float(f[i_r]),
        worst_return_loss_antenna_db=float(rl_a[i_a]), worst_return_loss_antenna_f_hz=float(f[i_a]),
        worst_vswr_radio=float(np.max(feed.vswr_radio)), worst_vswr_antenna=float(np.max(feed.vswr_antenna)),
        max_total_feed_loss_db=float(t_ok[i_t]) if np.isfinite(t_ok[i_t]) else math.nan,
        max_total_feed_loss_f_hz=float(f[i_t]),
        max_line_loss_db=nanmax(line),
        nonphysical_points=int(np.count_nonzero(feed.nonphysical)),
        return_loss_antenna_at_worst_radio_db=float(rl_a[i_r]),
        one_way_loss_at_worst_radio_db=float(ow[i_r]),
        dissipative_loss_at_worst_radio_db=float(feed.dissipative_loss_db[i_r]),
    )


# --------------------------------------------------------------------------------------------
# sweeps (what the command does, for Python users)
# --------------------------------------------------------------------------------------------

def renormalize_port(s: np.ndarray, z_from_ohm: np.ndarray, port: int, z_to_ohm: float) -> np.ndarray:
    """Renormalise port ``port`` (1-based) of ``s`` (n, N, N) from its real reference in
    ``z_from_ohm`` (N,) to ``z_to_ohm``; the other ports keep theirs. Returns a new array."""
    import skrf

    z_from = np.asarray(z_from_ohm, dtype=float)
    z_new = z_from.copy()
    z_new[port - 1] = z_to_ohm
    s = np.array(s, dtype=complex)
    if np.allclose(z_new, z_from):
        return s
    return np.asarray(skrf.network.renormalize_s(s, z_from, z_new))


@dataclass(frozen=True, eq=False)
class SweepMove:
    """A sweep with one port's plane moved: ``network`` (skrf.Network, every port at the input's
    own reference impedances), ``move`` (the computation at the system impedance), ``gamma_in``
    (the chosen port's reflection at the system impedance before the move)."""

    network: object
    move: Move
    gamma_in: np.ndarray

    @property
    def z0_ohm(self) -> float:
        return self.move.z0_ohm


def move_sweep(sweep, cable: Cable, toward: Toward, z0_ohm: float | None = None) -> SweepMove:
    """Move the plane of ``sweep.port`` of a :class:`matchtool.sweep.Sweep` along ``cable``.

    The system impedance is ``z0_ohm`` or the port's own reference; the cable is taken in that
    system. The returned network keeps the input's port count and reference impedances."""
    import skrf

    port = sweep.port
    z_file = np.asarray(sweep.network.z0[0].real, dtype=float)
    z_sys = float(z0_ohm) if z0_ohm is not None else float(z_file[port - 1])
    if not (math.isfinite(z_sys) and z_sys > 0):
        raise UsageError("not a usable system impedance", parameter="z0_ohm", value=f"{z_sys:g} ohm",
                         expected="a positive, finite impedance")
    s_sys = renormalize_port(sweep.network.s, z_file, port, z_sys)
    mv = move_network(sweep.f_hz, s_sys, port, cable, toward, z_sys, name=sweep.name)
    z_mid = z_file.copy()
    z_mid[port - 1] = z_sys
    s_out = renormalize_port(mv.s, z_mid, port, float(z_file[port - 1])) if np.isfinite(mv.s).all() else mv.s
    net = skrf.Network(frequency=sweep.network.frequency, s=s_out, z0=z_file, name=f"{sweep.network.name}_moved")
    return SweepMove(network=net, move=mv, gamma_in=s_sys[:, port - 1, port - 1].copy())


# --------------------------------------------------------------------------------------------
# the one entry point
# --------------------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class FeedlineResult:
    """What :func:`analyze` found.

    - ``network``: the moved sweep as an ``skrf.Network`` (every port at the input's own reference
      impedances; only ``port`` moved).
    - ``z0_ohm``: the system impedance the cable was taken in (ohms).
    - ``feed_at``: the feed at the ``at_hz`` frequencies (None when none were asked for).
    - ``bands``: worst cases per band asked for, or one entry for the whole sweep
      (``whole_sweep`` true). Losses are positive dB, return loss positive dB.
    - ``first_nonfinite_f_hz``: the first frequency where the moved sweep is not finite (the cable
      undoes the measurement completely there), else None.
    """

    path: str
    port: int
    z0_ohm: float
    points: int
    toward: str
    cable: object
    network: object
    move: Move
    gamma_in: np.ndarray
    feed_at: FeedPoints | None
    bands: tuple[BandWorst, ...]
    whole_sweep: bool
    nonphysical_points: int
    first_nonfinite_f_hz: float | None
    warnings: tuple[str, ...] = ()

    @property
    def f_hz(self) -> np.ndarray:
        return self.move.f_hz

    @property
    def name(self) -> str:
        from pathlib import Path

        return Path(self.path).name


def analyze(sweep_or_network, cable, toward: Toward, z0_ohm: float | None = None,
            bands: tuple[tuple[float, float], ...] | list[tuple[float, float]] = (),
            at_hz: tuple[float, ...] | list[float] | np.ndarray = (), port: int | None = None,
            flip_cable: bool = False) -> FeedlineResult:
    """Move the reference plane of one port of a sweep along a cable, and report both ends.

    ``sweep_or_network``: a :class:`matchtool.sweep.Sweep`, an ``skrf.Network`` or a Touchstone
    path. ``cable``: a :class:`CableModel`, a :class:`Delay`, a :class:`MeasuredCable`, or a
    measured 2-port as a Touchstone path, an ``skrf.Network`` or a Sweep (port 1 toward the radio;
    ``flip_cable`` swaps its ports).
    ``toward="radio"`` adds the cable in front of the antenna; ``"antenna"`` removes it.
    ``z0_ohm``: system impedance in ohms (default: the port's own reference). ``bands``:
    (f_low_hz, f_high_hz) pairs inside the sweep; ``at_hz``: frequencies inside the sweep (Hz),
    interpolated linearly in complex Gamma. Raises UsageError / OutOfRangeError / InputError.
    """
    from pathlib import Path

    import skrf

    from .sweep import Sweep, as_sweep, gamma_at_many

    if toward not in ("radio", "antenna"):
        raise UsageError("is neither 'radio' nor 'antenna'", parameter="toward", value=toward,
                         expected="radio or antenna")
    sw = as_sweep(sweep_or_network, port=port)
    p = sw.port
    z_file = float(np.real(np.asarray(sw.network.z0)[0, p - 1]))
    z_sys = float(z0_ohm) if z0_ohm is not None else z_file
    if not (math.isfinite(z_sys) and z_sys > 0):
        raise UsageError("not a usable system impedance", parameter="z0_ohm", value=f"{z_sys:g} ohm",
                         expected="a positive, finite impedance")
    f = sw.f_hz
    for lo, hi in bands:
        _check_band(f, lo, hi, sw.path)
    warnings = list(sw.warnings)
    if isinstance(cable, str | Path | skrf.Network | Sweep):  # a measured 2-port: file, Network or Sweep
        cable, cw = load_cable(str(cable) if isinstance(cable, Path) else cable, z_sys, flip_cable)
        warnings += cw
    elif flip_cable:
        raise UsageError("applies only to a measured cable file", parameter="flip_cable")
    if isinstance(cable, MeasuredCable):
        if not cable.covers(f):
            cable.s_params(f, z_sys)  # raises the coverage error, naming the cable file
        warnings += interpolation_warnings(cable, f)
    try:
        moved = move_sweep(sw, cable, toward, z_sys)
    except UsageError as exc:
        if isinstance(cable, MeasuredCable) and exc.path is None:
            raise UsageError(exc.what, path=cable.path, expected=exc.expected) from None
        raise
    mv = moved.move
    warnings += list(mv.warnings)
    g_in = moved.gamma_in
    feed_at = None
    if len(at_hz):
        q = np.asarray(at_hz, dtype=float)
        feed_at = feed_points(q, gamma_at_many(f, g_in, q, sw.path), cable, toward, z_sys)
    worst = []
    for lo, hi in bands or [(float(f[0]), float(f[-1]))]:
        fb, gb = band_samples(f, g_in, lo, hi) if bands else (f, g_in)
        worst.append(band_worst(feed_points(fb, gb, cable, toward, z_sys)))
    bad = ~np.isfinite(mv.s).all(axis=(1, 2))
    return FeedlineResult(
        path=sw.path, port=p, z0_ohm=z_sys, points=int(f.size), toward=toward, cable=cable,
        network=moved.network, move=mv, gamma_in=g_in, feed_at=feed_at, bands=tuple(worst),
        whole_sweep=not bands, nonphysical_points=mv.nonphysical_count,
        first_nonfinite_f_hz=float(f[int(np.argmax(bad))]) if bad.any() else None,
        warnings=tuple(warnings))

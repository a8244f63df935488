"""Friis link budget with the measured mismatch, polarization, cables, path loss, sensitivity and range.

Conventions
-----------
- Powers in dBm, gains in dBi, losses in positive dB; frequencies in Hz, lengths in metres.
- Every budget row is a *signed contribution* in dB to the received power: the transmit power
  (dBm) first, then gains (positive) and losses (negative). The rows add up to the received power.
- Free-space path loss: ``20 log10(4 pi d / lambda)`` with ``lambda = c0 / f`` and the exact
  ``c0 = 299792458 m/s`` (ITU-R P.525 gives the same with a rounded constant).
- Friis with mismatch and polarization (Balanis, Antenna Theory, 3rd ed., sec. 2.17):
  ``P_r / P_t = (1 - |G_t|^2) (1 - |G_r|^2) (lambda / (4 pi d))^2 G_t G_r PLF``, with the polarization
  loss factor ``PLF = cos^2(psi)`` for two linear polarizations at an angle ``psi``.
- Effective aperture of a lossless antenna: ``A_e = G lambda^2 / (4 pi)`` (Balanis 3rd ed., sec. 2.15).
- Log-distance model (for environments that are not free space): free space up to the reference
  distance ``d0``, then ``PL(d) = PL_fs(d0) + 10 n log10(d / d0)`` (continuous at ``d0``).
- ``EIRP = P_t - cable_t - mismatch_t + G_t`` (dBm).

The core is pure: it reads a TOML file, loads the sweeps it names, and returns frozen dataclasses.
It does not certify anything: EIRP and RF exposure limits are set by local regulation, and a
free-space estimate is not a coverage prediction.
"""

from __future__ import annotations

import difflib
import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .errors import BudgetError, MatchtoolError, OutOfRangeError
from .feedline import CableModel  # the one cable model (loss_db(f_hz) of a length of line)
from .inputs import read_text, special_file_error
from .reflection import gamma_mag_from_vswr, mismatch_loss_db
from .reflection import vswr as vswr_of_gamma
from .units import parse_frequency, parse_length

C0_M_PER_S = 299_792_458.0  # exact, SI definition of the metre
MAX_POINTS = 10_001
DEFAULT_BAND_POINTS = 11
MAX_FILE_BYTES = 1_000_000
TX_CAUTION_VSWR = 3.0
"""Above this transmit VSWR (|Gamma| 0.5, mismatch loss 1.25 dB) ``budget`` cautions about the
amplifier: many transmitters fold back or are rated only to VSWR 3 (common practice, no source)."""
TX_CAUTION_GAMMA = (TX_CAUTION_VSWR - 1.0) / (TX_CAUTION_VSWR + 1.0)


# ----------------------------------------------------------------------------------------------
# Pure, vectorised physics


def wavelength_m(f_hz: ArrayLike) -> np.ndarray:
    """Free-space wavelength in metres at ``f_hz`` (c0 exact)."""
    return C0_M_PER_S / np.asarray(f_hz, dtype=float)


def free_space_path_loss_db(f_hz: ArrayLike, distance_m: ArrayLike) -> np.ndarray:
    """Free-space basic transmission loss ``20 log10(4 pi d / lambda)`` in positive dB."""
    return 20.0 * np.log10(4.0 * math.pi * np.asarray(distance_m, dtype=float) / wavelength_m(f_hz))


def log_distance_path_loss_db(f_hz: ArrayLike, distance_m: ArrayLike, exponent: float,
                              reference_distance_m: float) -> np.ndarray:
    """Log-distance path loss in dB: free space up to ``reference_distance_m``, exponent ``n`` beyond.

    ``PL(d) = PL_fs(d0) + 10 n log10(d / d0)`` for ``d >= d0``; ``PL_fs(d)`` for ``d < d0``.
    """
    d = np.asarray(distance_m, dtype=float)
    fs = free_space_path_loss_db(f_hz, d)
    beyond = free_space_path_loss_db(f_hz, reference_distance_m) + 10.0 * exponent * np.log10(
        np.maximum(d, reference_distance_m) / reference_distance_m)
    return np.where(d >= reference_distance_m, beyond, fs)


def range_for_path_loss_m(f_hz: ArrayLike, path_loss_db: ArrayLike, exponent: float | None = None,
                          reference_distance_m: float | None = None) -> np.ndarray:
    """Distance in metres at which the path loss reaches ``path_loss_db`` (closed-form inverse).

    Free space (``exponent`` None): ``d = lambda / (4 pi) 10^(L / 20)``. Log-distance: the inverse of
    :func:`log_distance_path_loss_db`. An infinite allowed loss gives an infinite range; ``-inf`` gives 0.
    """
    lam = wavelength_m(f_hz)
    loss = np.asarray(path_loss_db, dtype=float)
    with np.errstate(over="ignore"):
        d_fs = lam / (4.0 * math.pi) * np.power(10.0, loss / 20.0)
        if exponent is None:
            return d_fs
        l0 = free_space_path_loss_db(f_hz, reference_distance_m)
        d_ld = reference_distance_m * np.power(10.0, (loss - l0) / (10.0 * exponent))
    return np.where(loss >= l0, d_ld, d_fs)


def polarization_loss_db(angle_deg: ArrayLike) -> np.ndarray:
    """Polarization mismatch loss ``-10 log10(cos^2 psi)`` in positive dB (two linear polarizations).

    Infinite at psi = +-90 deg (cross-polarised: no coupling in the ideal model). cos(90 deg) in
    floating point is 6e-17, not 0; a cos^2 below 1e-24 (|psi - 90 deg| under about 6e-11 deg) is
    taken as 0 rather than reported as a 324 dB loss."""
    c = np.cos(np.radians(np.asarray(angle_deg, dtype=float)))
    c2 = np.where(c * c < 1e-24, 0.0, c * c)
    with np.errstate(divide="ignore"):
        return -10.0 * np.log10(c2)


def aperture_from_gain_m2(gain_dbi: ArrayLike, f_hz: ArrayLike) -> np.ndarray:
    """Effective aperture ``A_e = G lambda^2 / (4 pi)`` in m^2 of a lossless antenna of gain ``gain_dbi``."""
    return np.power(10.0, np.asarray(gain_dbi, dtype=float) / 10.0) * wavelength_m(f_hz) ** 2 / (4.0 * math.pi)


def gain_from_aperture_dbi(aperture_m2: ArrayLike, f_hz: ArrayLike) -> np.ndarray:
    """Gain in dBi of a lossless antenna with effective aperture ``aperture_m2`` (``G = 4 pi A_e / lambda^2``)."""
    return 10.0 * np.log10(4.0 * math.pi * np.asarray(aperture_m2, dtype=float) / wavelength_m(f_hz) ** 2)


# ----------------------------------------------------------------------------------------------
# Inputs


@dataclass(frozen=True)
class Side:
    """One end of the link as given in the file (either gain or aperture; one mismatch source)."""

    gain_dbi: float | None = None
    aperture_m2: float | None = None
    cable_loss_db: float = 0.0
    cable: CableModel | None = None
    sweep_path: str | None = None
    port: int = 1
    vswr: float | None = None


@dataclass(frozen=True)
class BudgetInput:
    """A validated budget file. ``f_hz`` holds one frequency or the band's grid."""

    path: str
    f_hz: tuple[float, ...]
    band: tuple[float, float] | None
    distance_m: float
    tx_power_dbm: float
    rx_sensitivity_dbm: float
    tx: Side
    rx: Side
    polarization_angle_deg: float | None = None
    polarization_loss_db: float | None = None
    fade_margin_db: float | None = None
    path_loss_exponent: float | None = None
    reference_distance_m: float | None = None
    eirp_limit_dbm: float | None = None
    warnings: tuple[str, ...] = ()
    """Warnings found while reading the file (they name it)."""


# ----------------------------------------------------------------------------------------------
# Results


@dataclass(frozen=True)
class BudgetRow:
    """One budget line: a signed contribution in dB and the running total after it (dBm)."""

    name: str
    value_db: float
    total_dbm: float


@dataclass(frozen=True)
class EndDetail:
    """How one end's mismatch was obtained."""

    source: str  # "sweep", "vswr" or "none"
    gamma_mag: float
    mismatch_loss_db: float
    gain_dbi: float
    aperture_m2: float
    cable_loss_db: float


@dataclass(frozen=True)
class BudgetPoint:
    """The budget at one frequency. Ranges are in metres; losses positive dB."""

    f_hz: float
    wavelength_m: float
    rows: tuple[BudgetRow, ...]
    eirp_dbm: float
    received_power_dbm: float
    margin_db: float
    path_loss_db: float
    free_space_path_loss_db: float
    polarization_loss_db: float
    tx: EndDetail
    rx: EndDetail
    max_range_m: float  # free space, margin = required margin
    zero_margin_range_m: float  # free space, margin = 0
    max_range_model_m: float  # path-loss model in use, margin = required margin
    zero_margin_range_model_m: float  # path-loss model in use, margin = 0
    matched_range_m: float  # model in use, required margin, no mismatch at either end
    mismatch_range_cost_m: float
    mismatch_range_cost_fraction: float

    @property
    def mismatch_loss_db(self) -> float:
        """Both ends' mismatch loss together (positive dB)."""
        return self.tx.mismatch_loss_db + self.rx.mismatch_loss_db


@dataclass(frozen=True)
class BudgetResult:
    """A whole budget: one point per frequency, the worst (smallest margin) marked."""

    path: str
    distance_m: float
    tx_power_dbm: float
    rx_sensitivity_dbm: float
    fade_margin_db: float | None
    required_margin_db: float
    path_loss_model: str  # "free space" or "log-distance"
    path_loss_exponent: float | None
    reference_distance_m: float | None
    eirp_limit_dbm: float | None
    band: tuple[float, float] | None
    points: tuple[BudgetPoint, ...]
    worst_index: int
    warnings: tuple[str, ...] = field(default_factory=tuple)

    @property
    def worst(self) -> BudgetPoint:
        """The point with the smallest margin (the first one on ties)."""
        return self.points[self.worst_index]

    @property
    def closes(self) -> bool:
        """True when every frequency keeps at least the required margin."""
        return all(p.margin_db >= self.required_margin_db for p in self.points)

    @property
    def max_eirp_index(self) -> int:
        """Index of the point with the highest EIRP (the first one on ties; NaN ignored)."""
        e = np.array([p.eirp_dbm for p in self.points], dtype=float)
        return int(np.argmax(np.where(np.isnan(e), -np.inf, e)))

    @property
    def max_eirp_dbm(self) -> float:
        """The highest EIRP over the frequencies (dBm)."""
        return self.points[self.max_eirp_index].eirp_dbm

    @property
    def max_eirp_f_hz(self) -> float:
        """The frequency of the highest EIRP (Hz)."""
        return self.points[self.max_eirp_index].f_hz

    @property
    def eirp_over_limit(self) -> bool:
        """True when an EIRP limit is given and some frequency exceeds it."""
        return self.eirp_limit_dbm is not None and any(p.eirp_dbm > self.eirp_limit_dbm for p in self.points)

    @property
    def passed(self) -> bool:
        """Every stated requirement met: the link closes and no frequency exceeds the EIRP limit."""
        return self.closes and not self.eirp_over_limit


# ----------------------------------------------------------------------------------------------
# Reading the file

_SIDE_KEYS = ("gain_dbi", "aperture_m2", "cable_loss_db", "cable", "sweep", "sweep_port", "vswr")
_TOP_KEYS = {
    "f_hz", "f_low", "f_high", "step", "points", "distance_m", "tx_power_dbm", "rx_sensitivity_dbm",
    "polarization_angle_deg", "polarization_loss_db", "fade_margin_db", "path_loss_exponent",
    "reference_distance_m", "eirp_limit_dbm",
    *(f"{s}_{k}" for s in ("tx", "rx") for k in _SIDE_KEYS),
}
_CABLE_KEYS = {"length_m", "loss_db_per_m", "loss_ref_hz", "dielectric_loss_db_per_m"}


class _Reader:
    """Typed access to the TOML table with one-line BudgetErrors naming the file and key."""

    def __init__(self, data: dict[str, Any], path: str) -> None:
        self.data = data
        self.path = path

    def err(self, key: str, what: str, expected: str | None = None) -> BudgetError:
        return BudgetError(what, path=self.path, key=key, expected=expected)

    def has(self, key: str) -> bool:
        return key in self.data

    def number(self, key: str, table: dict[str, Any] | None = None, prefix: str = "",
               required: bool = False, default: float | None = None) -> float | None:
        src = self.data if table is None else table
        name = prefix + key
        if key not in src:
            if required:
                raise self.err(name, "is missing", "a number")
            return default
        v = src[key]
        if isinstance(v, bool) or not isinstance(v, int | float):
            raise self.err(name, f"is {type(v).__name__} {v!r}, not a number", "a number")
        x = float(v)
        if not math.isfinite(x):
            raise self.err(name, f"is {v!r}", "a finite number")
        return x

    def quantity(self, key: str | int, parser, unit_words: str, table: dict[str, Any] | None = None,
                 prefix: str = "", required: bool = False) -> float | None:
        src = self.data if table is None else table
        if isinstance(key, int):  # an item of a list
            name = f"{prefix}[{key}]"
            v = src[key]
        elif key not in src:
            if required:
                raise self.err(prefix + key, "is missing", unit_words)
            return None
        else:
            name = prefix + key
            v = src[key]
        if isinstance(v, bool) or not isinstance(v, int | float | str):
            raise self.err(name, f"is {type(v).__name__} {v!r}", unit_words)
        try:
            return float(parser(v))
        except MatchtoolError as exc:
            raise self.err(name, exc.what, exc.expected or unit_words) from None


def _positive(r: _Reader, key: str, x: float | None, allow_zero: bool = False) -> None:
    if x is None:
        return
    if x < 0 or (x == 0 and not allow_zero):
        raise r.err(key, f"is {x:g}", "a value of zero or more" if allow_zero else "a positive value")


def _frequency_grid(r: _Reader) -> tuple[tuple[float, ...], tuple[float, float] | None]:
    single = r.has("f_hz")
    band = r.has("f_low") or r.has("f_high")
    if single and band:
        raise r.err("f_hz", "is given together with f_low/f_high", "either f_hz or a band f_low and f_high")
    for k in ("step", "points"):
        if r.has(k) and not band:
            raise r.err(k, "is given without a band", "f_low and f_high with it")
    if single and isinstance(r.data["f_hz"], list):
        items = r.data["f_hz"]
        if not 1 <= len(items) <= MAX_POINTS:
            raise r.err("f_hz", f"is a list of {len(items)} frequencies", f"1 to {MAX_POINTS} frequencies")
        out = []
        for i in range(len(items)):
            f = r.quantity(i, parse_frequency, "a frequency such as \"915 MHz\" or 915e6", items, "f_hz")
            _positive(r, f"f_hz[{i}]", f)
            out.append(f)
        return tuple(out), None
    if single:
        f = r.quantity("f_hz", parse_frequency, "a frequency such as \"915 MHz\" or 915e6")
        _positive(r, "f_hz", f)
        return (f,), None
    if not band:
        raise r.err("f_hz", "is missing", "f_hz, or a band f_low and f_high")
    lo = r.quantity("f_low", parse_frequency, "a frequency such as \"902 MHz\"", required=True)
    hi = r.quantity("f_high", parse_frequency, "a frequency such as \"928 MHz\"", required=True)
    _positive(r, "f_low", lo)
    if not hi > lo:
        raise r.err("f_high", f"{hi:g} Hz is not above f_low {lo:g} Hz", "f_high > f_low")
    if r.has("step") and r.has("points"):
        raise r.err("step", "is given together with points", "either step or points")
    if r.has("step"):
        step = r.quantity("step", parse_frequency, "a frequency step such as \"1 MHz\"")
        _positive(r, "step", step)
        n = math.floor((hi - lo) / step * (1 + 1e-12)) + 1
        if n > MAX_POINTS:
            raise r.err("step", f"gives {n} frequencies", f"at most {MAX_POINTS}")
        grid = lo + step * np.arange(n)
        if hi - grid[-1] > 1e-9 * hi:
            grid = np.append(grid, hi)
        grid[-1] = min(grid[-1], hi)
    else:
        n_raw = r.data.get("points", DEFAULT_BAND_POINTS)
        if isinstance(n_raw, bool) or not isinstance(n_raw, int):
            raise r.err("points", f"is {n_raw!r}", "a whole number of 2 or more")
        if not 2 <= n_raw <= MAX_POINTS:
            raise r.err("points", f"is {n_raw}", f"a whole number from 2 to {MAX_POINTS}")
        grid = np.linspace(lo, hi, n_raw)
    return tuple(float(x) for x in grid), (lo, hi)


def _side(r: _Reader, s: str) -> Side:
    word = "transmit" if s == "tx" else "receive"
    g = r.number(f"{s}_gain_dbi")
    a = r.number(f"{s}_aperture_m2")
    if g is not None and a is not None:
        raise r.err(f"{s}_aperture_m2", f"is given together with {s}_gain_dbi", "one of the two")
    if g is None and a is None:
        raise r.err(f"{s}_gain_dbi", f"is missing (the {word} antenna's gain)",
                    f"{s}_gain_dbi in dBi or {s}_aperture_m2 in m^2")
    _positive(r, f"{s}_aperture_m2", a)
    loss = r.number(f"{s}_cable_loss_db")
    _positive(r, f"{s}_cable_loss_db", loss, allow_zero=True)
    cable = None
    if r.has(f"{s}_cable"):
        if loss is not None:
            raise r.err(f"{s}_cable", f"is given together with {s}_cable_loss_db", "one of the two")
        t = r.data[f"{s}_cable"]
        if not isinstance(t, dict):
            raise r.err(f"{s}_cable", f"is {type(t).__name__}, not a table",
                        f"a table [{s}_cable] with length_m and loss_db_per_m")
        for k in t:
            if k not in _CABLE_KEYS:
                raise r.err(f"{s}_cable.{k}", "is not a known key", ", ".join(sorted(_CABLE_KEYS)))
        pre = f"{s}_cable."
        length = r.quantity("length_m", parse_length, "a length such as 3 or \"3 m\"", t, pre, required=True)
        _positive(r, pre + "length_m", length, allow_zero=True)
        per_m = r.number("loss_db_per_m", t, pre, required=True)
        _positive(r, pre + "loss_db_per_m", per_m, allow_zero=True)
        ref = r.quantity("loss_ref_hz", parse_frequency, "a frequency such as \"1 GHz\"", t, pre)
        ref = 1e9 if ref is None else ref
        _positive(r, pre + "loss_ref_hz", ref)
        diel = r.number("dielectric_loss_db_per_m", t, pre, default=0.0)
        _positive(r, pre + "dielectric_loss_db_per_m", diel, allow_zero=True)
        cable = CableModel(length_m=length, loss_db_per_m=per_m, loss_ref_hz=ref, dielectric_loss_db_per_m=diel)
    sweep_path = None
    if r.has(f"{s}_sweep"):
        v = r.data[f"{s}_sweep"]
        if not isinstance(v, str) or not v.strip():
            raise r.err(f"{s}_sweep", f"is {v!r}", "a path to a Touchstone file, relative to the budget file")
        sweep_path = v
    port = 1
    if r.has(f"{s}_sweep_port"):
        if sweep_path is None:
            raise r.err(f"{s}_sweep_port", f"is given without {s}_sweep", f"{s}_sweep with it")
        p = r.data[f"{s}_sweep_port"]
        if isinstance(p, bool) or not isinstance(p, int) or p < 1:
            raise r.err(f"{s}_sweep_port", f"is {p!r}", "a port number of 1 or more")
        port = p
    vswr = r.number(f"{s}_vswr")
    if vswr is not None:
        if sweep_path is not None:
            raise r.err(f"{s}_vswr", f"is given together with {s}_sweep", "one of the two")
        if vswr < 1:
            raise r.err(f"{s}_vswr", f"is {vswr:g}", "a VSWR of 1 or more")
    return Side(gain_dbi=g, aperture_m2=a, cable_loss_db=loss or 0.0, cable=cable, sweep_path=sweep_path,
                port=port, vswr=vswr)


def _bare_hz_warnings(data: dict[str, Any], path: str) -> list[str]:
    """A bare number under 100 kHz where an RF frequency belongs is almost always MHz meant."""
    found: list[tuple[str, Any]] = []
    for k in ("f_hz", "f_low", "f_high"):
        v = data.get(k)
        found += [(f"{k}[{i}]", x) for i, x in enumerate(v)] if isinstance(v, list) else [(k, v)]
    for s in ("tx", "rx"):
        t = data.get(f"{s}_cable")
        if isinstance(t, dict):
            found.append((f"{s}_cable.loss_ref_hz", t.get("loss_ref_hz")))
    def fix(k: str, v: float) -> str:
        if "[" in k:
            return f"write \"{v:g} MHz\" (quoted, with the unit) in that place of the list"
        if "." in k:
            table, key = k.split(".", 1)
            return f"write {key} = \"{v:g} MHz\" under [{table}]"
        return f"write {k} = \"{v:g} MHz\""

    return [f"{path}: {k} = {v!r} is read as {v:g} Hz (a bare number is Hz); if {v:g} MHz was meant, {fix(k, v)}"
            for k, v in found if isinstance(v, int | float) and not isinstance(v, bool) and 0 < v < 1e5]


def parse_budget(data: dict[str, Any], path: str = "<budget>") -> BudgetInput:
    """Validate a budget table (as read from TOML) into a :class:`BudgetInput`.

    Raises BudgetError naming ``path`` and the key for every unknown key, wrong type, non-finite
    value, missing required key, or inconsistent combination.
    """
    r = _Reader(data, path)
    for k, v in data.items():
        if k not in _TOP_KEYS:
            close = difflib.get_close_matches(str(k), sorted(_TOP_KEYS), n=1)
            raise r.err(k, "is not a known key" + (f" (did you mean '{close[0]}'?)" if close else ""),
                        "one of the keys listed in 'matchtool budget --help'")
        if isinstance(v, dict) and not k.endswith("_cable") or isinstance(v, list) and k != "f_hz":
            raise r.err(k, "is a table", "a plain value")
    f_hz, band = _frequency_grid(r)
    distance = r.quantity("distance_m", parse_length, "a distance in metres", required=True)
    _positive(r, "distance_m", distance)
    p_tx = r.number("tx_power_dbm", required=True)
    sens = r.number("rx_sensitivity_dbm", required=True)
    if sens > p_tx:
        raise r.err("rx_sensitivity_dbm", f"{sens:g} dBm is above the transmit power {p_tx:g} dBm",
                    "a sensitivity below tx_power_dbm (no passive link gains power)")
    angle = r.number("polarization_angle_deg")
    pol_db = r.number("polarization_loss_db")
    if angle is not None and pol_db is not None:
        raise r.err("polarization_loss_db", "is given together with polarization_angle_deg", "one of the two")
    if angle is not None and not -180.0 <= angle <= 180.0:
        raise r.err("polarization_angle_deg", f"is {angle:g}", "an angle from -180 to 180 degrees")
    _positive(r, "polarization_loss_db", pol_db, allow_zero=True)
    fade = r.number("fade_margin_db")
    _positive(r, "fade_margin_db", fade, allow_zero=True)
    n = r.number("path_loss_exponent")
    d0 = r.quantity("reference_distance_m", parse_length, "a distance in metres")
    if n is not None:
        if n <= 0:
            raise r.err("path_loss_exponent", f"is {n:g}", "a positive exponent (2 is free space)")
        if d0 is None:
            raise r.err("reference_distance_m", "is missing", "a reference distance with path_loss_exponent")
        _positive(r, "reference_distance_m", d0)
    elif d0 is not None:
        raise r.err("reference_distance_m", "is given without path_loss_exponent", "path_loss_exponent with it")
    eirp_limit = r.number("eirp_limit_dbm")
    return BudgetInput(warnings=tuple(_bare_hz_warnings(data, path)),
                       path=path, f_hz=f_hz, band=band, distance_m=distance, tx_power_dbm=p_tx,
                       rx_sensitivity_dbm=sens, tx=_side(r, "tx"), rx=_side(r, "rx"),
                       polarization_angle_deg=angle, polarization_loss_db=pol_db, fade_margin_db=fade,
                       path_loss_exponent=n, reference_distance_m=d0, eirp_limit_dbm=eirp_limit)


def read_budget_file(path: str | Path) -> BudgetInput:
    """Read and validate a budget TOML file (see :func:`parse_budget`)."""
    # one input policy (matchtool/inputs.py): size limit, special files, UTF-8 / UTF-16 decoding
    text = read_text(path, kind="toml", max_bytes=MAX_FILE_BYTES, what="a budget file (TOML)",
                     error=BudgetError)
    try:
        data = tomllib.loads(text)
    except RecursionError:  # arrays or inline tables nested thousands deep
        raise BudgetError("is not valid TOML (values nested too deeply)", path=str(path),
                          expected="a budget of plain keys and [tx_cable] / [rx_cable] tables") from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        line = None
        m = re.search(r"\(at line (\d+), column \d+\)", msg)
        if m:
            line = int(m.group(1))
            msg = msg[: m.start()].strip()
        elif "(at end of document)" in msg:  # a file cut off: the error is on its last line
            line = max(1, text.count("\n") + (0 if text.endswith("\n") else 1))
            msg = msg.replace("(at end of document)", "").strip() + ", the file ends early"
        raise BudgetError(f"is not valid TOML ({msg})", path=str(path), line=line) from None
    return parse_budget(data, str(path))


# ----------------------------------------------------------------------------------------------
# Computation


def _end(r_path: str, base: Path, s: str, side: Side, f: np.ndarray, warnings: list[str],
         freq_key: str = "f_hz") -> tuple[np.ndarray, np.ndarray, str]:
    """Return (|Gamma| array, mismatch loss dB array, source) for one end."""
    if side.sweep_path is not None:
        from .sweep import gamma_at_many, load

        sp = Path(side.sweep_path)
        full = sp if sp.is_absolute() else base / sp
        special = special_file_error(full)
        if special is not None:
            raise BudgetError(f"the sweep cannot be used: {special}", path=r_path, key=f"{s}_sweep")
        try:
            sw = load(full, port=side.port)
        except OSError as exc:
            raise BudgetError(f"cannot read the sweep {full} ({exc.strerror or exc})", path=r_path,
                              key=f"{s}_sweep") from None
        except MatchtoolError as exc:
            raise BudgetError(f"the sweep cannot be used: {exc}", path=r_path, key=f"{s}_sweep") from None
        warnings.extend(sw.warnings)
        try:
            g = gamma_at_many(sw.f_hz, sw.gamma, f, str(full))
        except OutOfRangeError as exc:
            bare = f[(f > 0) & (f < 1e5)]
            if bare.size:
                # the key at fault is the frequency, not the sweep
                raise BudgetError(f"{bare[0]:g} Hz (a bare number is Hz) is outside the {s}_sweep {full} "
                                  f"({sw.f_hz[0] / 1e6:.6g} to {sw.f_hz[-1] / 1e6:.6g} MHz)", path=r_path,
                                  key=freq_key, expected=f"the unit written out: f_hz = \"{bare[0]:g} MHz\" "
                                  "(likewise f_low, f_high)") from None
            raise BudgetError(exc.what, path=r_path, key=f"{s}_sweep",
                              expected=f"an operating frequency inside the sweep {full}") from None
        mag = np.abs(g)
        if np.any(mag > 1.0):
            k = int(np.argmax(mag))
            raise BudgetError(f"the sweep {full} has |Gamma| = {mag[k]:.4f} > 1 at {f[k] / 1e6:.6g} MHz, where the "
                              "mismatch loss is undefined (a passive antenna cannot reflect more than it receives)",
                              path=r_path, key=f"{s}_sweep",
                              expected="a sweep with |S11| <= 1 at the operating frequencies (check the calibration)")
        if np.any(mag >= 0.95):
            k = int(np.argmax(mag))
            warnings.append(f"{full}: |Gamma| = {mag[k]:.4f} (VSWR {float(vswr_of_gamma(mag[k])):.3g}) at {f[k] / 1e6:.6g} MHz; "
                            "almost no power crosses the antenna terminals (high VSWR can also damage an amplifier)")
        return mag, np.asarray(mismatch_loss_db(g), dtype=float), "sweep"
    if side.vswr is not None:
        mag = np.full(f.shape, float(gamma_mag_from_vswr(side.vswr)))
        return mag, np.asarray(mismatch_loss_db(mag), dtype=float), "vswr"
    return np.zeros(f.shape), np.zeros(f.shape), "none"


def compute_budget(inp: BudgetInput) -> BudgetResult:
    """Compute the link budget at every frequency of ``inp`` (vectorised over frequency).

    Sweeps are read relative to the budget file's folder. A frequency outside a sweep raises
    BudgetError (never extrapolated). Absurd but finite inputs (a gain of 1e308 dBi) may give
    infinite rows; numpy's overflow warnings are kept off stderr (the JSON writer reports them).
    """
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        return _compute_budget(inp)


def _compute_budget(inp: BudgetInput) -> BudgetResult:
    warnings: list[str] = list(inp.warnings)
    base = Path(inp.path).parent
    f = np.asarray(inp.f_hz, dtype=float)
    lam = wavelength_m(f)
    d = inp.distance_m
    n, d0 = inp.path_loss_exponent, inp.reference_distance_m

    def gain(side: Side) -> np.ndarray:
        if side.gain_dbi is not None:
            return np.full(f.shape, side.gain_dbi)
        return gain_from_aperture_dbi(side.aperture_m2, f)

    def cable(side: Side) -> np.ndarray:
        return side.cable.loss_db(f) if side.cable is not None else np.full(f.shape, side.cable_loss_db)

    g_t, g_r = gain(inp.tx), gain(inp.rx)
    c_t, c_r = cable(inp.tx), cable(inp.rx)
    fkey = "f_hz" if inp.band is None else "f_low"
    mag_t, mm_t, src_t = _end(inp.path, base, "tx", inp.tx, f, warnings, fkey)
    mag_r, mm_r, src_r = _end(inp.path, base, "rx", inp.rx, f, warnings, fkey)
    if src_t != "none" and np.any(mag_t > TX_CAUTION_GAMMA):
        k = int(np.argmax(mag_t))
        warnings.append(f"{inp.path}: CAUTION: the transmit antenna's VSWR is {float(vswr_of_gamma(mag_t[k])):.3g} at "
                        f"{f[k] / 1e6:.6g} MHz (above {TX_CAUTION_VSWR:g}, mismatch loss {mm_t[k]:.2f} dB); a high VSWR "
                        "can damage the transmitter's amplifier - check the radio's rating before transmitting")
    if inp.polarization_loss_db is not None:
        pol = np.full(f.shape, inp.polarization_loss_db)
    else:
        pol = np.full(f.shape, float(polarization_loss_db(inp.polarization_angle_deg or 0.0)))
    if np.any(np.isinf(pol)):
        warnings.append(f"{inp.path}: the antennas are cross-polarised (polarization_angle_deg = "
                        f"{inp.polarization_angle_deg:g}): the ideal model gives no link at all (polarization loss "
                        "infinite, no range); a real link sees some cross-polar leakage, which this model cannot "
                        "estimate - turn an antenna or give polarization_loss_db from a measurement")
    fspl = free_space_path_loss_db(f, d)
    pl = fspl if n is None else log_distance_path_loss_db(f, d, n, d0)
    model = "free space" if n is None else "log-distance"

    names = ["transmit power", "transmit cable loss", "transmit mismatch loss", "transmit antenna gain",
             f"path loss ({model})", "polarization loss", "receive antenna gain", "receive mismatch loss",
             "receive cable loss"]
    with np.errstate(invalid="ignore"):
        contrib = np.stack([np.full(f.shape, inp.tx_power_dbm), -c_t, -mm_t, g_t, -pl, -pol, g_r, -mm_r, -c_r])
        contrib = contrib + 0.0  # no "-0.00" rows
        totals = np.cumsum(contrib, axis=0)
    eirp = inp.tx_power_dbm - c_t - mm_t + g_t
    p_rx = totals[-1]
    margin = p_rx - inp.rx_sensitivity_dbm
    required = inp.fade_margin_db or 0.0
    # the path loss each margin allows: everything but the path loss, minus sensitivity and margin
    rest_matched = inp.tx_power_dbm - c_t + g_t - pol + g_r - c_r
    rest = rest_matched - mm_t - mm_r
    allowed_req = rest - inp.rx_sensitivity_dbm - required
    allowed_zero = rest - inp.rx_sensitivity_dbm
    allowed_matched = rest_matched - inp.rx_sensitivity_dbm - required
    r_req_fs = range_for_path_loss_m(f, allowed_req)
    r_zero_fs = range_for_path_loss_m(f, allowed_zero)
    r_req = range_for_path_loss_m(f, allowed_req, n, d0)
    r_zero = range_for_path_loss_m(f, allowed_zero, n, d0)
    r_matched = range_for_path_loss_m(f, allowed_matched, n, d0)
    with np.errstate(invalid="ignore", divide="ignore"):
        cost = r_matched - r_req
        cost_frac = np.where(r_matched > 0, cost / r_matched, 0.0)

    if np.any(d < 10 * lam):
        warnings.append(f"{inp.path}: the distance {d:g} m is under 10 wavelengths; Friis assumes the far field "
                        "and is unreliable this close")
    if inp.eirp_limit_dbm is not None and np.any(eirp > inp.eirp_limit_dbm):
        k = int(np.argmax(np.where(np.isnan(eirp), -np.inf, eirp)))
        warnings.append(f"{inp.path}: EIRP {eirp[k]:.2f} dBm exceeds the eirp_limit_dbm {inp.eirp_limit_dbm:g} dBm "
                        f"at {f[k] / 1e6:.6g} MHz; the permitted EIRP is set by local regulation")

    points = []
    for i in range(f.size):
        rows = tuple(BudgetRow(nm, float(contrib[j, i]), float(totals[j, i])) for j, nm in enumerate(names))
        tx = EndDetail(src_t, float(mag_t[i]), float(mm_t[i]), float(g_t[i]),
                       float(aperture_from_gain_m2(g_t[i], f[i])), float(c_t[i]))
        rx = EndDetail(src_r, float(mag_r[i]), float(mm_r[i]), float(g_r[i]),
                       float(aperture_from_gain_m2(g_r[i], f[i])), float(c_r[i]))
        points.append(BudgetPoint(
            f_hz=float(f[i]), wavelength_m=float(lam[i]), rows=rows, eirp_dbm=float(eirp[i]),
            received_power_dbm=float(p_rx[i]), margin_db=float(margin[i]), path_loss_db=float(pl[i]),
            free_space_path_loss_db=float(fspl[i]), polarization_loss_db=float(pol[i]), tx=tx, rx=rx,
            max_range_m=float(r_req_fs[i]), zero_margin_range_m=float(r_zero_fs[i]),
            max_range_model_m=float(r_req[i]), zero_margin_range_model_m=float(r_zero[i]),
            matched_range_m=float(r_matched[i]), mismatch_range_cost_m=float(cost[i]),
            mismatch_range_cost_fraction=float(cost_frac[i])))
    m_for_worst = np.where(np.isnan(margin), -np.inf, margin)
    return BudgetResult(
        path=inp.path, distance_m=d, tx_power_dbm=inp.tx_power_dbm, rx_sensitivity_dbm=inp.rx_sensitivity_dbm,
        fade_margin_db=inp.fade_margin_db, required_margin_db=required, path_loss_model=model,
        path_loss_exponent=n, reference_distance_m=d0, eirp_limit_dbm=inp.eirp_limit_dbm, band=inp.band,
        points=tuple(points), worst_index=int(np.argmin(m_for_worst)), warnings=tuple(warnings))


def evaluate(path_or_input: str | Path | BudgetInput) -> BudgetResult:
    """The link budget of a budget TOML file (read with :func:`read_budget_file`) or of an already
    validated :class:`BudgetInput`: powers in dBm, losses positive dB, ranges in metres.

    ``max_range_m`` is always the free-space range; ``max_range_model_m`` the range in the model
    in use (``path_loss_model``); the two are the same without ``path_loss_exponent``."""
    inp = path_or_input if isinstance(path_or_input, BudgetInput) else read_budget_file(path_or_input)
    return compute_budget(inp)


def budget(path: str | Path) -> BudgetResult:
    """Read a budget TOML file and compute it (former name of :func:`evaluate`)."""
    return evaluate(path)

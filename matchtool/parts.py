"""Matching parts as they will be fitted: a library of measured series 2-ports or equivalent-circuit
models (self-resonance and loss), each with its tolerance.

Conventions
-----------
- Values in SI: capacitance in F, inductance in H, frequencies in Hz, impedances in ohm.
- A part is characterised by its *series impedance* ``Z(f)``: the impedance the part presents when
  it is placed in series between two ports. A shunt part is the same component from the node to
  ground, so its admittance is ``Y = 1 / Z`` (the pads and the ground via are part of the
  measurement, or of nothing).
- A measured part (``file``) is a 2-port of the part in series between port 1 and port 2. Its
  series impedance comes from the transmission of a series element,
  ``S21 = 2 Z0 / (2 Z0 + Z)``, i.e. ``Z = 2 Z0 (1 - S21) / S21`` (from the ABCD matrix of a series
  impedance, [[1, Z], [0, 1]], and the ABCD -> S conversion; Pozar, Microwave Engineering, 4th ed.,
  Tables 4.1 and 4.2). S21 and S12 are averaged (a passive part is reciprocal; the average halves
  the noise). S21 is interpolated linearly in complex S onto the frequencies asked for; a frequency
  outside the part's measured sweep is refused with the part named, never extrapolated.
- A model part uses an equivalent circuit (common practice for 0402/0603 chip parts, no source):
  inductor: (L in series with R) in parallel with C_p, where R = 2 pi q_ref L / Q and
  C_p = 1 / ((2 pi srf)^2 L); capacitor: C in series with L_s and R, where L_s = 1 / ((2 pi srf)^2 C)
  and R = 1 / (2 pi q_ref C Q). Without ``q`` the part is lossless, without ``srf`` it has no
  parasitic reactance. Q is stated at ``q_ref`` for the element alone (the ideal reactance over R).
- Tolerance is absolute (F or H). A part that deviates by ``dv`` from its nominal value is modelled
  by adding the change of the ideal element's impedance, ``Z(f) + Z_ideal(v + dv) - Z_ideal(v)``,
  to the measured or modelled impedance: the parasitics stay, the value moves.

No library builds this (scikit-rf has lumped elements but no parts catalogue with tolerance), so the
file format and its validation are ours.
"""

from __future__ import annotations

import math
import tomllib
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .errors import InputError, UsageError
from .units import _QUANTITY

TWO_PI = 2.0 * math.pi
KINDS = ("capacitor", "inductor")
_VALUE_UNITS = {
    "capacitor": {"": 1.0, "f": 1.0, "mf": 1e-3, "uf": 1e-6, "\u00b5f": 1e-6, "nf": 1e-9, "pf": 1e-12, "ff": 1e-15},
    "inductor": {"": 1.0, "h": 1.0, "mh": 1e-3, "uh": 1e-6, "\u00b5h": 1e-6, "nh": 1e-9, "ph": 1e-12},
}
_FREQ_UNITS = {"": 1.0, "hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_TOP_KEYS = {"name", "part"}
_PART_KEYS = {"kind", "value", "tolerance", "file", "q", "q_ref", "srf", "name"}
MAX_LIBRARY_BYTES = 1_000_000


class PartsLibraryError(InputError):
    """A parts library file (TOML) that is malformed or inconsistent."""


@dataclass(frozen=True, eq=False)
class Part:
    """One part on the shelf.

    ``kind`` "capacitor" | "inductor"; ``value`` nominal in F or H; ``tolerance`` absolute in F or H
    (half-width of the allowed spread); ``label`` the name shown in tables (the library's ``name`` or
    a description). A measured part holds its 2-port's frequencies ``f_hz`` and S-parameters
    ``s`` (n, 2, 2) at reference ``z0_ohm``; a model part holds ``q`` (at ``q_ref_hz``) and ``srf_hz``.
    """

    kind: str
    value: float
    tolerance: float
    label: str
    file: str | None = None
    q: float | None = None
    q_ref_hz: float | None = None
    srf_hz: float | None = None
    f_hz: np.ndarray | None = field(default=None, repr=False)
    s: np.ndarray | None = field(default=None, repr=False)
    z0_ohm: float = 50.0

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise UsageError("unknown part kind", parameter="kind", value=self.kind, expected="capacitor or inductor")
        if not (math.isfinite(self.value) and self.value > 0):
            raise UsageError("must be positive and finite", parameter="value", value=self.value)
        if not (math.isfinite(self.tolerance) and 0 <= self.tolerance < self.value):
            raise UsageError("must be at least 0 and below the value", parameter="tolerance", value=self.tolerance)
        if self.q is not None and not (self.q > 0 and self.q_ref_hz is not None and self.q_ref_hz > 0):
            raise UsageError("needs a positive q with a positive q_ref_hz", parameter="q", value=self.q)
        if self.srf_hz is not None and not (math.isfinite(self.srf_hz) and self.srf_hz > 0):
            raise UsageError("must be positive and finite", parameter="srf_hz", value=self.srf_hz)
        if (self.f_hz is None) != (self.s is None):
            raise UsageError("a measured part needs both f_hz and s", parameter="s")
        if self.s is not None and (self.s.ndim != 3 or self.s.shape != (self.f_hz.size, 2, 2)):
            raise UsageError("must have shape (n, 2, 2) for n frequencies", parameter="s")

    @property
    def unit(self) -> str:
        """"F" for a capacitor, "H" for an inductor."""
        return "F" if self.kind == "capacitor" else "H"

    @property
    def measured(self) -> bool:
        """True when the part's behaviour comes from a measured 2-port."""
        return self.s is not None

    @property
    def s21(self) -> np.ndarray | None:
        """Measured transmission, the mean of S21 and S12 (a passive part is reciprocal)."""
        return None if self.s is None else 0.5 * (self.s[:, 1, 0] + self.s[:, 0, 1])

    @property
    def ideal(self) -> bool:
        """True for a part with neither a measurement nor loss nor self-resonance."""
        return not self.measured and self.q is None and self.srf_hz is None

    def covers(self, f_hz: np.ndarray) -> bool:
        """Whether a measured part's sweep spans ``f_hz`` (model parts cover every frequency)."""
        if self.f_hz is None:
            return True
        f = np.asarray(f_hz, dtype=float)
        tol = 1e-9 * max(abs(self.f_hz[-1]), 1.0)
        return bool(f.min() >= self.f_hz[0] - tol and f.max() <= self.f_hz[-1] + tol)

    def series_impedance_ohm(self, f_hz: np.ndarray | float, value: float | np.ndarray | None = None) -> np.ndarray:
        """Series impedance Z(f) in ohm at ``f_hz``; ``value`` (F or H) shifts the nominal value as
        described in the module docstring (an array of values broadcasts against ``f_hz`` on the
        last axis: shape ``value.shape + f.shape``)."""
        f = np.asarray(f_hz, dtype=float)
        w = TWO_PI * f
        if self.measured:
            if not self.covers(f):
                raise UsageError(
                    f"part {self.label!r} was measured from {self.f_hz[0] / 1e6:.6g} to {self.f_hz[-1] / 1e6:.6g} MHz "
                    f"and does not cover {f.min() / 1e6:.6g} to {f.max() / 1e6:.6g} MHz", parameter="parts",
                    expected="a part measurement that spans the band (never extrapolated)")
            s21 = _interp_complex(f, self.f_hz, self.s21)
            z = 2.0 * self.z0_ohm * (1.0 - s21) / s21
        else:
            z = self._model_impedance(w, self.value)
        if value is None:
            return z
        v = np.asarray(value, dtype=float)[..., None] if np.ndim(value) else float(value)
        return z + (_ideal_impedance(self.kind, v, w) - _ideal_impedance(self.kind, self.value, w))

    def shunt_admittance_s(self, f_hz: np.ndarray | float, value: float | np.ndarray | None = None) -> np.ndarray:
        """Admittance (siemens) of the part from a node to ground: Y = 1 / Z(f)."""
        return 1.0 / self.series_impedance_ohm(f_hz, value)

    def _model_impedance(self, w: np.ndarray, value: float) -> np.ndarray:
        if self.kind == "inductor":
            r = 0.0 if self.q is None else TWO_PI * self.q_ref_hz * value / self.q
            z = r + 1j * w * value
            if self.srf_hz is not None:
                cp = 1.0 / ((TWO_PI * self.srf_hz) ** 2 * value)
                z = z / (1.0 + 1j * w * cp * z)  # (R + jwL) || 1/(jw Cp)
            return z
        r = 0.0 if self.q is None else 1.0 / (TWO_PI * self.q_ref_hz * value * self.q)
        ls = 0.0 if self.srf_hz is None else 1.0 / ((TWO_PI * self.srf_hz) ** 2 * value)
        return r + 1j * w * ls + 1.0 / (1j * w * value)

    def with_value(self, value: float, label: str | None = None) -> Part:
        """The same part (parasitics and measurement) at another nominal value."""
        return replace(self, value=float(value), label=label or self.label)


def _interp_complex(fq: np.ndarray, f: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.interp(fq, f, y.real) + 1j * np.interp(fq, f, y.imag)


def _ideal_impedance(kind: str, value, w: np.ndarray) -> np.ndarray:
    return 1j * w * value if kind == "inductor" else 1.0 / (1j * w * value)


@dataclass(frozen=True, eq=False)
class PartsLibrary:
    """The parts an engineer can fit: ``parts`` in the order of the file, ``name`` of the kit."""

    parts: tuple[Part, ...]
    name: str = ""
    path: str | None = None

    def __post_init__(self) -> None:
        seen: dict[tuple[str, str], int] = {}
        for i, p in enumerate(self.parts):
            key = (p.kind, p.label)
            if key in seen:
                raise UsageError(f"part {i + 1} duplicates part {seen[key] + 1} ({p.label})", parameter="parts",
                                 expected="each part once")
            seen[key] = i

    def of_kind(self, kind: str) -> tuple[Part, ...]:
        """The capacitors or the inductors, by increasing value."""
        return tuple(sorted((p for p in self.parts if p.kind == kind), key=lambda p: p.value))

    @property
    def capacitors(self) -> tuple[Part, ...]:
        return self.of_kind("capacitor")

    @property
    def inductors(self) -> tuple[Part, ...]:
        return self.of_kind("inductor")

    def check_covers(self, f_hz: np.ndarray) -> None:
        """Refuse (one line naming the part) when a measured part does not span ``f_hz``."""
        for p in self.parts:
            if not p.covers(f_hz):
                f = np.asarray(f_hz, dtype=float)
                raise PartsLibraryError(
                    f"part {p.label!r} was measured from {p.f_hz[0] / 1e6:.6g} to {p.f_hz[-1] / 1e6:.6g} MHz and does "
                    f"not cover {f.min() / 1e6:.6g} to {f.max() / 1e6:.6g} MHz", path=self.path,
                    expected="part measurements that span the band (never extrapolated)")

    @classmethod
    def from_parts(cls, parts: Iterable[Part], name: str = "") -> PartsLibrary:
        """A library built in code."""
        return cls(parts=tuple(parts), name=name)

    @classmethod
    def load(cls, path: str | Path) -> PartsLibrary:
        """Read a parts library file (TOML); see ``docs/match.md`` for the format."""
        return load_library(path)


def _quantity(text, table: dict[str, float], path: str, key: str, what: str) -> float:
    if isinstance(text, bool) or not isinstance(text, str | int | float):
        raise PartsLibraryError(f"{what} must be a string with a unit or a number", path=path, key=key)
    if isinstance(text, int | float):
        x = float(text)
    else:
        m = _QUANTITY.match(text)
        unit = m.group(2).lower() if m else None
        if not m or unit not in table:
            raise PartsLibraryError(f"cannot read {what} {text!r}", path=path, key=key,
                                    expected=f"a number with a unit ({', '.join(u for u in table if u)})")
        x = float(m.group(1)) * table[unit]
    if not (math.isfinite(x) and x > 0):
        raise PartsLibraryError(f"{what} {text!r} must be positive and finite", path=path, key=key)
    return x


def _tolerance(text, kind: str, value: float, path: str, key: str) -> float:
    if isinstance(text, str) and text.strip().endswith("%"):
        try:
            pct = float(text.strip()[:-1])
        except ValueError:
            raise PartsLibraryError(f"cannot read tolerance {text!r}", path=path, key=key,
                                    expected="a percentage such as '5%' or an absolute value such as '0.1pF'") from None
        if not (math.isfinite(pct) and 0 <= pct < 100):
            raise PartsLibraryError(f"tolerance {text!r} must lie from 0 to 100 %", path=path, key=key)
        return value * pct / 100.0
    if isinstance(text, int | float) and not isinstance(text, bool) and float(text) == 0:
        return 0.0
    tol = _quantity(text, _VALUE_UNITS[kind], path, key, "tolerance")
    if tol >= value:
        raise PartsLibraryError(f"tolerance {text!r} is not below the value", path=path, key=key)
    return tol


def default_label(kind: str, value: float) -> str:
    """The label of a part without a ``name``: "C 2.2 pF", "L 12 nH"."""
    return _describe(kind, value)


def _describe(kind: str, value: float) -> str:
    from .units import format_value_si

    return f"{'C' if kind == 'capacitor' else 'L'} {format_value_si(value, 'F' if kind == 'capacitor' else 'H')}"


def _measured(path: Path, file_value: str, key: str, lib_path: str) -> tuple[np.ndarray, np.ndarray, float]:
    """(f_hz, S (n, 2, 2), reference ohm) of a part's measured 2-port."""
    from .sweep import load

    target = (path.parent / file_value) if not Path(file_value).is_absolute() else Path(file_value)
    if not target.is_file():
        raise PartsLibraryError(f"part file {file_value!r} does not exist", path=lib_path, key=key,
                                expected="a Touchstone 2-port relative to the library file")
    sw = load(target)
    if sw.nports != 2:
        raise PartsLibraryError(f"part file {file_value!r} has {sw.nports} port(s)", path=lib_path, key=key,
                                expected="a 2-port of the part in series between port 1 and port 2")
    s = sw.network.s
    z0 = np.asarray(sw.network.z0)
    if not np.allclose(z0, z0[0, 0]):
        raise PartsLibraryError(f"part file {file_value!r} has unequal port references", path=lib_path, key=key,
                                expected="one real reference impedance on both ports")
    s21 = 0.5 * (s[:, 1, 0] + s[:, 0, 1])
    if np.any(np.abs(s21) < 1e-12):
        raise PartsLibraryError(f"part file {file_value!r} has S21 = 0 at some frequency", path=lib_path, key=key,
                                expected="a part measured in series (it passes some signal)")
    return sw.f_hz.copy(), s.copy(), float(np.real(z0[0, 0]))


def parse_library(text: str, path: str | Path = "<parts>") -> PartsLibrary:
    """Parse the text of a parts library file (TOML); file parts are read relative to ``path``."""
    lib_path = str(path)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PartsLibraryError(f"not valid TOML ({' '.join(str(exc).split())})", path=lib_path) from None
    for k in data:
        if k not in _TOP_KEYS:
            raise PartsLibraryError("unknown key", path=lib_path, key=k, expected=", ".join(sorted(_TOP_KEYS)))
    name = data.get("name", "")
    if not isinstance(name, str):
        raise PartsLibraryError("must be a string", path=lib_path, key="name")
    tables = data.get("part")
    if not isinstance(tables, list) or not tables or not all(isinstance(t, dict) for t in tables):
        raise PartsLibraryError("no [[part]] tables", path=lib_path, key="part",
                                expected="one [[part]] table per part, with kind, value and tolerance")
    parts: list[Part] = []
    seen: dict[tuple, str] = {}
    for i, t in enumerate(tables, start=1):
        pre = f"part[{i}]"
        for k in t:
            if k not in _PART_KEYS:
                raise PartsLibraryError("unknown key", path=lib_path, key=f"{pre}.{k}", expected=", ".join(sorted(_PART_KEYS)))
        for k in ("kind", "value", "tolerance"):
            if k not in t:
                raise PartsLibraryError("missing", path=lib_path, key=f"{pre}.{k}")
        kind = t["kind"]
        if kind not in KINDS:
            raise PartsLibraryError(f"unknown kind {kind!r}", path=lib_path, key=f"{pre}.kind", expected="capacitor or inductor")
        value = _quantity(t["value"], _VALUE_UNITS[kind], lib_path, f"{pre}.value", "value")
        tol = _tolerance(t["tolerance"], kind, value, lib_path, f"{pre}.tolerance")
        label = t.get("name", _describe(kind, value))
        if not isinstance(label, str) or not label.strip():
            raise PartsLibraryError("must be a non-empty string", path=lib_path, key=f"{pre}.name")
        has_file, has_model = "file" in t, any(k in t for k in ("q", "q_ref", "srf"))
        if has_file and has_model:
            raise PartsLibraryError("gives both a file and model figures", path=lib_path, key=pre,
                                    expected="either file = '...' or q / q_ref / srf")
        kw: dict = {}
        if has_file:
            if not isinstance(t["file"], str) or not t["file"]:
                raise PartsLibraryError("must be a path string", path=lib_path, key=f"{pre}.file")
            f, s_meas, z0 = _measured(Path(lib_path), t["file"], f"{pre}.file", lib_path)
            kw = {"file": t["file"], "f_hz": f, "s": s_meas, "z0_ohm": z0}
        if "q" in t:
            q = t["q"]
            if isinstance(q, bool) or not isinstance(q, int | float) or not (math.isfinite(q) and q > 0):
                raise PartsLibraryError(f"q {q!r} must be a positive number", path=lib_path, key=f"{pre}.q")
            if "q_ref" not in t:
                raise PartsLibraryError("q without q_ref", path=lib_path, key=f"{pre}.q_ref",
                                        expected="the frequency at which q is stated, e.g. q_ref = '1GHz'")
            kw["q"] = float(q)
            kw["q_ref_hz"] = _quantity(t["q_ref"], _FREQ_UNITS, lib_path, f"{pre}.q_ref", "q_ref")
        elif "q_ref" in t:
            raise PartsLibraryError("q_ref without q", path=lib_path, key=f"{pre}.q")
        if "srf" in t:
            kw["srf_hz"] = _quantity(t["srf"], _FREQ_UNITS, lib_path, f"{pre}.srf", "srf")
        ident = (kind, label)
        if ident in seen:
            raise PartsLibraryError(f"duplicates {seen[ident]} ({label})", path=lib_path, key=pre,
                                    expected="each part once (give a distinct name = '...' to two makes of one value)")
        seen[ident] = pre
        parts.append(Part(kind=kind, value=value, tolerance=tol, label=label, **kw))
    return PartsLibrary(parts=tuple(parts), name=name, path=lib_path)


def load_library(path: str | Path) -> PartsLibrary:
    """Read and validate a parts library file (TOML; read by the one input policy of
    :mod:`matchtool.inputs`: UTF-8 with or without a byte-order mark, size limited, no special files)."""
    from .inputs import read_text

    text = read_text(path, kind="toml", max_bytes=MAX_LIBRARY_BYTES, what="a TOML parts library",
                     error=PartsLibraryError)
    return parse_library(text, path)


def _measured_s(part: Part, f: np.ndarray) -> np.ndarray:
    """The measured S (n, 2, 2) of a part, interpolated in complex S onto ``f`` (at ``part.z0_ohm``)."""
    return np.stack([np.stack([_interp_complex(f, part.f_hz, part.s[:, i, j]) for j in range(2)], axis=-1)
                     for i in range(2)], axis=-2)


def part_abcd(part: Part, f_hz: np.ndarray, connection: str = "series",
              value: float | np.ndarray | None = None) -> np.ndarray:
    """ABCD matrices of the part in ``connection`` at ``f_hz`` (ohm and siemens; shape (n, 2, 2), or
    ``value.shape + (n, 2, 2)`` for an array of values).

    A measured part in series is its measurement itself (S interpolated in complex S, converted with
    scikit-rf's ``s2a``; an ABCD matrix does not depend on the reference impedance); a value shift
    ``dv`` then cascades the change of the ideal element, a series impedance
    ``Z_ideal(v + dv) - Z_ideal(v)``, on the antenna side (port 2) of the measurement. Every other
    case is the series element [[1, Z], [0, 1]] or the shunt element [[1, 0], [1/Z, 1]] of the
    part's series impedance Z(f) (Pozar, Microwave Engineering, 4th ed., Table 4.1).
    """
    import skrf

    f = np.asarray(f_hz, dtype=float)
    if connection not in ("series", "shunt"):
        raise UsageError("unknown connection", parameter="connection", value=connection, expected="series or shunt")
    z = part.series_impedance_ohm(f, value)  # also refuses frequencies outside a measured part's sweep
    a = np.zeros(z.shape + (2, 2), dtype=complex)
    a[..., 0, 0] = a[..., 1, 1] = 1.0
    if part.measured and connection == "series":
        m = skrf.network.s2a(_measured_s(part, f), np.full(2, part.z0_ohm))
        if value is None:
            return m
        w = TWO_PI * f
        v = np.asarray(value, dtype=float)[..., None] if np.ndim(value) else float(value)
        a[..., 0, 1] = _ideal_impedance(part.kind, v, w) - _ideal_impedance(part.kind, part.value, w)
        return m @ a
    if connection == "series":
        a[..., 0, 1] = z
    else:
        a[..., 1, 0] = 1.0 / z
    return a


def part_two_port(part: Part, f_hz: np.ndarray, z0_ohm: float, connection: str = "series",
                  value: float | None = None):
    """The part as an ``skrf.Network`` 2-port at ``f_hz`` and reference ``z0_ohm``.

    A measured part in series gives its measurement itself (S interpolated in complex S onto
    ``f_hz``, renormalised to ``z0_ohm``); with ``value`` the ideal element's change is cascaded
    on its port-2 side (see :func:`part_abcd`). Every other case gives the series or shunt element
    of impedance Z(f).
    """
    import skrf

    f = np.asarray(f_hz, dtype=float)
    freq = skrf.Frequency.from_f(f, unit="Hz")
    if part.measured and connection == "series" and value is None:
        part.series_impedance_ohm(f)  # refuses frequencies outside the part's sweep, naming the part
        s = _measured_s(part, f)
        if not math.isclose(part.z0_ohm, z0_ohm):
            s = skrf.network.renormalize_s(s, np.full(2, part.z0_ohm), np.full(2, float(z0_ohm)))
        return skrf.Network(frequency=freq, s=s, z0=z0_ohm, name=part.label)
    s = skrf.network.a2s(part_abcd(part, f, connection, value), z0_ohm)
    return skrf.Network(frequency=freq, s=s, z0=z0_ohm, name=part.label)


def impedance_table(parts: Sequence[Part], f_hz: np.ndarray) -> np.ndarray:
    """Series impedances of ``parts`` at ``f_hz``: shape (len(parts), len(f_hz)), ohm."""
    return np.stack([p.series_impedance_ohm(f_hz) for p in parts]) if parts else np.zeros((0, np.size(f_hz)), complex)

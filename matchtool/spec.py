"""Spec files (TOML) and the pass/fail evaluation of one sweep against them.

A spec states requirements on the reflection of one port::

    port = 1                 # optional, 1-based
    z0_ohm = 50              # optional: renormalise to this system impedance (ohm)

    [[band]]
    name = "ism"
    f_low = "902 MHz"        # a string with a unit, or a number in Hz
    f_high = "928 MHz"
    min_return_loss_db = 10  # exactly one of min_return_loss_db, max_vswr, max_s11_db
    max_mismatch_loss_db = 0.5   # optional

    [resonance]              # optional: the best-matched sample must lie inside
    f_low = "905 MHz"
    f_high = "925 MHz"

    [golden]                 # optional: stay close to a known-good unit
    file = "golden.s1p"      # relative to the spec file
    band = "ism"             # the name of one [[band]]
    max_deviation_db = 3

Evaluation rules (see docs/check.md):

- The worst case over a band is taken over the samples inside the band plus the band-edge values,
  interpolated linearly in complex Gamma between the two bracketing samples (the contract's rule
  for any value between samples, so ``matchtool inspect --at EDGE`` shows the same number).
  |Gamma| of a straight segment is largest at one of its ends, so the samples plus the edges give
  the exact worst case of the interpolated curve: a coarse sweep cannot pass because its samples
  miss a failing band edge. Near a deep null complex Gamma is close to linear in frequency, so
  this reads the edges far better than interpolating the dB curve would; when the phase turns
  far between two samples the straight chord reads |Gamma| low, hence the warning for a band
  with fewer than three samples.
- A band the sweep does not cover fails, with the reason; fewer than three samples in a band warn.
- ``limit`` and ``worst`` are in the units of the limit key: positive dB of return loss for
  ``min_return_loss_db``, a ratio for ``max_vswr``, dB of S11 for ``max_s11_db``, dB for
  ``max_mismatch_loss_db`` and ``max_deviation_db``. ``margin_db`` is positive when passing; for
  ``max_vswr`` it is the margin in dB of return loss (worst return loss minus the return loss of
  the VSWR limit), and likewise dB of S11 equals dB of return loss for ``max_s11_db``.
"""

from __future__ import annotations

import math
import os
import tomllib
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from . import reflection as rf
from .bands import band_samples, sweep_covers
from .errors import MatchtoolError, SpecError
from .sweep import Sweep, load, load_reflection

LIMIT_KEYS = ("min_return_loss_db", "max_vswr", "max_s11_db")
"""The three equivalent ways to state a band's reflection limit."""

LIMIT_UNITS = {
    "min_return_loss_db": "dB return loss",
    "max_vswr": "ratio",
    "max_s11_db": "dB S11",
    "max_mismatch_loss_db": "dB",
    "max_deviation_db": "dB",
    "resonance": "Hz",
}
"""The unit of ``limit`` and ``worst`` for each kind of requirement."""

_TOP_KEYS = {"name", "port", "z0_ohm", "band", "resonance", "golden"}
_BAND_KEYS = {"name", "f_low", "f_high", "max_mismatch_loss_db", *LIMIT_KEYS}
_RES_KEYS = {"f_low", "f_high"}
_GOLDEN_KEYS = {"file", "band", "max_deviation_db", "port", "rl_ceiling_db"}
_CAP_DB = 400.0  # stands in for +inf return loss (a perfect sample), as in bands.py
MIN_BAND_SAMPLES = 3
MAX_SPEC_BYTES = 1_000_000
"""A spec file larger than this is refused unread (a real spec is a few hundred bytes)."""


# --------------------------------------------------------------------------------------------- model

@dataclass(frozen=True)
class BandSpec:
    """One ``[[band]]``: frequencies in Hz; ``limit_key`` is one of :data:`LIMIT_KEYS` and ``limit``
    its value in that key's units; ``max_mismatch_loss_db`` is optional (dB, positive)."""

    name: str
    f_low_hz: float
    f_high_hz: float
    limit_key: str
    limit: float
    max_mismatch_loss_db: float | None = None

    @property
    def min_return_loss_db(self) -> float:
        """The limit as a minimum return loss in positive dB (all three keys mean this)."""
        if self.limit_key == "min_return_loss_db":
            return self.limit
        if self.limit_key == "max_s11_db":
            return -self.limit
        return float(rf.return_loss_from_vswr(self.limit))


@dataclass(frozen=True)
class ResonanceSpec:
    """``[resonance]``: the best-matched sample (smallest |Gamma|) must lie in [f_low, f_high] Hz."""

    f_low_hz: float
    f_high_hz: float


@dataclass(frozen=True, eq=False)
class GoldenSpec:
    """``[golden]``: a known-good unit's reflection (``f_hz``, complex ``gamma``) whose return-loss
    curve a unit may not stray from by more than ``max_deviation_db`` over ``band``."""

    path: str
    band: str
    max_deviation_db: float
    f_hz: np.ndarray
    gamma: np.ndarray
    rl_ceiling_db: float | None = None
    """Return loss above this (positive dB) counts as this in both curves, so that two deep nulls
    of different depth (35 dB against 45 dB, both excellent) do not count as a deviation."""


@dataclass(frozen=True)
class Spec:
    """A validated spec file. ``port`` is 1-based; ``z0_ohm`` None keeps each file's reference."""

    path: str
    bands: tuple[BandSpec, ...]
    port: int = 1
    z0_ohm: float | None = None
    resonance: ResonanceSpec | None = None
    golden: GoldenSpec | None = None
    name: str = ""
    warnings: tuple[str, ...] = ()

    def band(self, name: str) -> BandSpec:
        for b in self.bands:
            if b.name == name:
                return b
        raise KeyError(name)


@dataclass(frozen=True)
class RequirementResult:
    """The verdict of one requirement on one unit.

    ``limit`` and ``worst`` are in the units of ``key`` (see :data:`LIMIT_UNITS`); ``margin_db`` is
    positive when passing (dB of return loss for the reflection limits). ``worst`` and
    ``margin_db`` are None when the requirement could not be evaluated (``reason`` says why);
    the resonance requirement has no dB margin and reports ``margin_hz`` instead.
    """

    name: str
    key: str
    passed: bool
    limit: float | None
    worst: float | None
    worst_f_hz: float | None
    margin_db: float | None
    f_low_hz: float
    f_high_hz: float
    worst_return_loss_db: float | None = None
    margin_hz: float | None = None
    samples: int = 0
    reason: str = ""

    @property
    def unit(self) -> str:
        return LIMIT_UNITS[self.key]


@dataclass(frozen=True)
class UnitResult:
    """All verdicts for one file. ``error`` is the one-line reason when it could not be read
    (then ``requirements`` is empty and ``passed`` is False)."""

    file: str
    passed: bool
    requirements: tuple[RequirementResult, ...] = ()
    error: str | None = None
    best_f_hz: float | None = None
    best_return_loss_db: float | None = None
    warnings: tuple[str, ...] = field(default=())


# ----------------------------------------------------------------------------------------- loading

def _decode(raw: bytes, path: str) -> str:
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    elif raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return raw.decode("utf-16")
        except UnicodeDecodeError:
            raise SpecError("file starts with a UTF-16 byte-order mark but is not valid UTF-16", path=path,
                            expected="UTF-8 text") from None
    if b"\x00" in raw:
        raise SpecError("file holds NUL bytes (UTF-16 without a byte-order mark, or binary)", path=path,
                        expected="UTF-8 text (TOML)")
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise SpecError(f"byte 0x{raw[exc.start]:02x} is not UTF-8", path=path, line=line,
                        expected="UTF-8 text (TOML)") from None


def _number(value: Any, path: str, key: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise SpecError(f"{what} is {value!r}, not a number", path=path, key=key)
    x = float(value)
    if not math.isfinite(x):
        raise SpecError(f"{what} is {value!r}", path=path, key=key, expected="a finite number")
    return x


def _frequency(value: Any, path: str, key: str) -> float:
    from .units import parse_frequency

    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise SpecError(f"frequency is {value!r}", path=path, key=key,
                        expected="a string with a unit such as \"902 MHz\", or a number in Hz")
    try:
        f = parse_frequency(value)
    except MatchtoolError as exc:
        raise SpecError(exc.what, path=path, key=key, expected=exc.expected) from None
    if f < 0:
        raise SpecError(f"negative frequency {value!r}", path=path, key=key, expected="a frequency >= 0")
    return f


def _unknown(table: dict, allowed: set[str], path: str, prefix: str) -> None:
    for k in table:
        if k not in allowed:
            raise SpecError(f"unknown key {k!r}", path=path, key=f"{prefix}{k}",
                            expected="one of " + ", ".join(sorted(allowed)))


def _edges(t: dict, path: str, prefix: str) -> tuple[float, float]:
    for k in ("f_low", "f_high"):
        if k not in t:
            raise SpecError("missing", path=path, key=prefix + k, expected="a frequency such as \"902 MHz\"")
    lo = _frequency(t["f_low"], path, prefix + "f_low")
    hi = _frequency(t["f_high"], path, prefix + "f_high")
    if hi == lo:
        raise SpecError(f"zero-width band ({lo:g} Hz to {hi:g} Hz)", path=path, key=prefix + "f_high",
                        expected="f_high above f_low")
    if hi < lo:
        raise SpecError(f"reversed band: f_high {hi:g} Hz is below f_low {lo:g} Hz", path=path,
                        key=prefix + "f_high", expected="f_high above f_low")
    return lo, hi


def _bare_hz_warning(t: dict, path: str, prefix: str, warnings: list[str]) -> None:
    for k in ("f_low", "f_high"):
        v = t.get(k)
        if isinstance(v, int | float) and not isinstance(v, bool) and 0 < v < 1e5:
            warnings.append(f"{path}: {prefix}{k} = {v!r} is read as {v:g} Hz (a bare number is Hz); "
                            f"write \"{v:g} MHz\" if that was meant")


def _control_free(name: str, path: str, key: str) -> None:
    """Refuse a name holding a control character (NUL, ESC, ...): it would reach terminals, XML
    and CSV reports, where it corrupts the output or cannot be written at all."""
    bad = next((c for c in name if unicodedata.category(c) == "Cc"), None)
    if bad is not None:
        raise SpecError(f"name holds the control character U+{ord(bad):04X}", path=path, key=key,
                        expected="printable text")


def _band(t: Any, i: int, path: str, seen: set[str]) -> BandSpec:
    prefix = f"band[{i}]."
    if not isinstance(t, dict):
        raise SpecError("is not a table", path=path, key=f"band[{i}]", expected="[[band]] tables")
    _unknown(t, _BAND_KEYS, path, prefix)
    name = t.get("name")
    if not isinstance(name, str) or not name.strip():
        raise SpecError("missing or empty band name", path=path, key=prefix + "name", expected="a string")
    name = name.strip()
    _control_free(name, path, prefix + "name")
    if name in seen:
        raise SpecError(f"duplicate band name {name!r}", path=path, key=prefix + "name",
                        expected="a different name for each [[band]]")
    seen.add(name)
    lo, hi = _edges(t, path, prefix)
    given = [k for k in LIMIT_KEYS if k in t]
    if not given:
        raise SpecError(f"band {name!r} has no limit", path=path, key=prefix + "min_return_loss_db",
                        expected="exactly one of " + ", ".join(LIMIT_KEYS))
    if len(given) > 1:
        raise SpecError(f"band {name!r} has two limits ({' and '.join(given)})", path=path, key=prefix + given[1],
                        expected="exactly one of " + ", ".join(LIMIT_KEYS))
    key = given[0]
    limit = _number(t[key], path, prefix + key, "limit")
    if key == "min_return_loss_db" and limit < 0:
        raise SpecError(f"negative return loss {limit:g} dB (return loss is positive; S11 is its negative)",
                        path=path, key=prefix + key, expected="e.g. min_return_loss_db = 10, or max_s11_db = -10")
    if key == "max_s11_db" and limit > 0:
        raise SpecError(f"positive S11 limit {limit:g} dB (a passive load has S11 <= 0 dB)", path=path,
                        key=prefix + key, expected="e.g. max_s11_db = -10, or min_return_loss_db = 10")
    if key == "max_vswr" and limit < 1:
        raise SpecError(f"VSWR limit {limit:g} is below 1", path=path, key=prefix + key, expected="a VSWR above 1, e.g. 2")
    if key == "max_vswr" and limit == 1:
        raise SpecError("VSWR limit 1 asks for a perfect match, which no measured unit meets", path=path,
                        key=prefix + key, expected="a VSWR above 1, e.g. 2")
    ml = None
    if "max_mismatch_loss_db" in t:
        ml = _number(t["max_mismatch_loss_db"], path, prefix + "max_mismatch_loss_db", "limit")
        if ml < 0:
            raise SpecError(f"negative mismatch loss {ml:g} dB", path=path, key=prefix + "max_mismatch_loss_db",
                            expected="a loss in positive dB, e.g. 0.5")
    return BandSpec(name, lo, hi, key, limit, ml)


def parse_spec(text: str, path: str | Path = "<spec>", port: int | None = None, z0_ohm: float | None = None) -> Spec:
    """Validate TOML spec text. Relative golden paths resolve against ``path``'s directory.

    ``port`` / ``z0_ohm`` (if given) override the spec's own. Raises :class:`SpecError` (one line
    naming the spec file and key).
    """
    path = str(path)
    try:
        doc = tomllib.loads(text)
    except RecursionError:  # arrays or inline tables nested thousands deep
        raise SpecError("not valid TOML: values nested too deeply", path=path,
                        expected="a spec of plain keys, [[band]], [resonance] and [golden] tables") from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        line = None
        if "(at line " in msg:
            try:
                line = int(msg.split("(at line ", 1)[1].split(",", 1)[0])
            except ValueError:
                line = None
            msg = msg.split(" (at line ", 1)[0]
        raise SpecError(f"not valid TOML: {msg}", path=path, line=line) from None
    _unknown(doc, _TOP_KEYS, path, "")
    name = doc.get("name", "")
    if not isinstance(name, str):
        raise SpecError(f"name is {name!r}", path=path, key="name", expected="a string")
    _control_free(name, path, "name")
    if port is None:
        port_v = doc.get("port", 1)
        if isinstance(port_v, bool) or not isinstance(port_v, int) or port_v < 1:
            raise SpecError(f"port is {port_v!r}", path=path, key="port", expected="a port number from 1")
        port = int(port_v)
    if z0_ohm is None and "z0_ohm" in doc:
        z0_ohm = _number(doc["z0_ohm"], path, "z0_ohm", "reference impedance")
        if z0_ohm <= 0:
            raise SpecError(f"reference impedance {z0_ohm:g} ohm", path=path, key="z0_ohm",
                            expected="a positive impedance in ohms, e.g. 50")
    raw_bands = doc.get("band", [])
    if isinstance(raw_bands, dict):
        raise SpecError("[band] is a single table", path=path, key="band", expected="[[band]] (an array of tables)")
    if not isinstance(raw_bands, list):
        raise SpecError(f"band is {raw_bands!r}", path=path, key="band", expected="[[band]] tables")
    seen: set[str] = set()
    bands = tuple(_band(t, i + 1, path, seen) for i, t in enumerate(raw_bands))
    warnings: list[str] = []
    for i, t in enumerate(raw_bands):
        _bare_hz_warning(t, path, f"band[{i + 1}].", warnings)

    resonance = None
    if "resonance" in doc:
        r = doc["resonance"]
        if not isinstance(r, dict):
            raise SpecError("is not a table", path=path, key="resonance", expected="a [resonance] table")
        _unknown(r, _RES_KEYS, path, "resonance.")
        resonance = ResonanceSpec(*_edges(r, path, "resonance."))
        _bare_hz_warning(r, path, "resonance.", warnings)

    golden = None
    if "golden" in doc:
        golden = _golden(doc["golden"], path, bands, port, z0_ohm, warnings)

    taken: dict[str, str] = {}
    generated = [(f"band[{i + 1}].name", b.name) for i, b in enumerate(bands)]
    generated += [(f"band[{i + 1}].max_mismatch_loss_db", f"{b.name} mismatch loss")
                  for i, b in enumerate(bands) if b.max_mismatch_loss_db is not None]
    if resonance is not None:
        generated.append(("resonance", "resonance"))
    if golden is not None:
        generated.append(("golden.band", f"{golden.band} deviation from golden"))
    for key, req in generated:
        if req in taken:
            raise SpecError(f"two requirements would both be named {req!r}", path=path, key=taken[req],
                            expected="band names that differ from 'resonance' and from '<band> mismatch loss'")
        taken[req] = key
    if not bands and resonance is None:
        raise SpecError("the spec states no requirement (an empty spec would pass every unit)", path=path,
                        key="band", expected="at least one [[band]] with a limit, or a [resonance] window")
    return Spec(path=path, bands=bands, port=port, z0_ohm=z0_ohm, resonance=resonance, golden=golden, name=name,
                warnings=tuple(warnings))


def _golden(g: Any, path: str, bands: tuple[BandSpec, ...], port: int, z0_ohm: float | None,
            warnings: list[str]) -> GoldenSpec:
    if not isinstance(g, dict):
        raise SpecError("is not a table", path=path, key="golden", expected="a [golden] table")
    _unknown(g, _GOLDEN_KEYS, path, "golden.")
    for k in ("file", "band", "max_deviation_db"):
        if k not in g:
            raise SpecError("missing", path=path, key=f"golden.{k}")
    if not isinstance(g["file"], str) or not g["file"].strip():
        raise SpecError(f"file is {g['file']!r}", path=path, key="golden.file", expected="a path to a Touchstone file")
    names = [b.name for b in bands]
    if g["band"] not in names:
        raise SpecError(f"band {g['band']!r} is not the name of a [[band]]", path=path, key="golden.band",
                        expected="one of " + (", ".join(repr(n) for n in names) or "(no bands defined)"))
    dev = _number(g["max_deviation_db"], path, "golden.max_deviation_db", "limit")
    if dev <= 0:
        raise SpecError(f"max_deviation_db is {dev:g}", path=path, key="golden.max_deviation_db",
                        expected="a positive number of dB")
    ceiling = None
    if "rl_ceiling_db" in g:
        ceiling = _number(g["rl_ceiling_db"], path, "golden.rl_ceiling_db", "ceiling")
        if ceiling <= 0:
            raise SpecError(f"rl_ceiling_db is {ceiling:g}", path=path, key="golden.rl_ceiling_db",
                            expected="a positive return loss in dB, e.g. 25")
    gport = g.get("port", port)
    if isinstance(gport, bool) or not isinstance(gport, int) or gport < 1:
        raise SpecError(f"port is {gport!r}", path=path, key="golden.port", expected="a port number from 1")
    gpath = Path(g["file"])
    if not gpath.is_absolute():
        gpath = Path(path).parent / gpath
    special = special_file_error(gpath)
    if special is not None:
        raise SpecError(f"golden file unusable: {special}", path=path, key="golden.file")
    if gpath.is_dir():
        raise SpecError(f"golden file {str(gpath)!r} is a directory", path=path, key="golden.file",
                        expected="a Touchstone file")
    if not gpath.is_file():
        raise SpecError(f"golden file {str(gpath)!r} does not exist", path=path, key="golden.file")
    try:
        sw = load(gpath, port=gport, z0_ohm=z0_ohm)
    except MatchtoolError as exc:
        raise SpecError(f"golden file unusable: {exc}", path=path, key="golden.file") from None
    band = next(b for b in bands if b.name == g["band"])
    f = sw.f_hz
    if not sweep_covers(f, band.f_low_hz, band.f_high_hz):
        raise SpecError(f"golden sweep ({f[0]:g} to {f[-1]:g} Hz) does not cover band {band.name!r} "
                        f"({band.f_low_hz:g} to {band.f_high_hz:g} Hz)", path=path, key="golden.file")
    warnings.extend(sw.warnings)
    return GoldenSpec(path=str(gpath), band=band.name, max_deviation_db=dev, f_hz=np.array(f, dtype=float),
                      gamma=np.array(sw.gamma, dtype=complex), rl_ceiling_db=ceiling)


def load_spec(path: str | Path, port: int | None = None, z0_ohm: float | None = None) -> Spec:
    """Read and validate a spec file (UTF-8 TOML; a byte-order mark is accepted, UTF-16 with a
    byte-order mark is decoded). Raises :class:`SpecError`."""
    p = Path(path)
    if p.is_dir():
        raise SpecError("is a directory", path=path, expected="a TOML spec file")
    try:
        with p.open("rb") as fh:
            raw = fh.read(MAX_SPEC_BYTES + 1)
    except FileNotFoundError:
        raise SpecError("no such spec file", path=path) from None
    except OSError as exc:
        raise SpecError(f"cannot read: {exc.strerror or exc}", path=path) from None
    if len(raw) > MAX_SPEC_BYTES:
        raise SpecError(f"is larger than {MAX_SPEC_BYTES} bytes", path=path, expected="a small TOML spec file")
    text = _decode(raw, str(path))
    if not text.strip():
        raise SpecError("the spec file is empty (an empty spec would pass every unit)", path=path,
                        expected="at least one [[band]] with a limit")
    return parse_spec(text, path, port, z0_ohm)


# -------------------------------------------------------------------------------------- evaluation

def _rl_db(gamma: np.ndarray) -> np.ndarray:
    """Return loss in positive dB, capped at 400 dB where |Gamma| = 0 (so it interpolates)."""
    return np.minimum(rf.return_loss_db(gamma), _CAP_DB)


def _not_covered(name: str, key: str, limit: float, lo: float, hi: float, f: np.ndarray) -> RequirementResult:
    reason = (f"the sweep ({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz) does not cover the band "
              f"({lo / 1e6:.6g} to {hi / 1e6:.6g} MHz)")
    return RequirementResult(name=name, key=key, passed=False, limit=limit, worst=None, worst_f_hz=None,
                             margin_db=None, f_low_hz=lo, f_high_hz=hi, reason=reason)


def _band_results(b: BandSpec, f: np.ndarray, gamma: np.ndarray, where: str,
                  warnings: list[str]) -> list[RequirementResult]:
    lo, hi = b.f_low_hz, b.f_high_hz
    if not sweep_covers(f, lo, hi):
        out = [_not_covered(b.name, b.limit_key, b.limit, lo, hi, f)]
        if b.max_mismatch_loss_db is not None:
            out.append(_not_covered(f"{b.name} mismatch loss", "max_mismatch_loss_db", b.max_mismatch_loss_db, lo, hi, f))
        return out
    fb, gb = band_samples(f, gamma, max(lo, f[0]), min(hi, f[-1]))
    fb[0], fb[-1] = lo, hi  # report the spec's own edges (they differ from the sweep's by rounding only)
    mag = np.abs(gb)
    n_in = int(np.count_nonzero((f >= lo) & (f <= hi)))
    if n_in < MIN_BAND_SAMPLES:
        warnings.append(f"{where}: band {b.name!r} holds {n_in} sample(s); the worst case leans on interpolation "
                        f"(measure at least {MIN_BAND_SAMPLES} points in the band)")
    k = int(np.argmax(mag))
    worst_f = float(fb[k])
    worst_rl = min(float(rf.return_loss_db(mag[k])), _CAP_DB) + 0.0  # + 0.0: a short gives 0.0, not -0.0
    margin = worst_rl - b.min_return_loss_db
    if b.limit_key == "min_return_loss_db":
        worst = worst_rl
    elif b.limit_key == "max_s11_db":
        worst = -worst_rl
    else:
        worst = float(rf.vswr(mag[k]))
    passed = margin >= 0  # the sign of margin_db is the verdict, for all three keys
    out = [RequirementResult(name=b.name, key=b.limit_key, passed=bool(passed), limit=b.limit, worst=worst,
                             worst_f_hz=worst_f, margin_db=margin, f_low_hz=lo, f_high_hz=hi,
                             worst_return_loss_db=worst_rl, samples=n_in)]
    if b.max_mismatch_loss_db is not None:
        ml = float(rf.mismatch_loss_db(mag[k]))
        m = b.max_mismatch_loss_db - ml if math.isfinite(ml) else -math.inf
        out.append(RequirementResult(name=f"{b.name} mismatch loss", key="max_mismatch_loss_db", passed=bool(m >= 0),
                                     limit=b.max_mismatch_loss_db, worst=ml if math.isfinite(ml) else None,
                                     worst_f_hz=worst_f, margin_db=m if math.isfinite(m) else None, f_low_hz=lo,
                                     f_high_hz=hi, worst_return_loss_db=worst_rl, samples=n_in,
                                     reason="" if math.isfinite(ml) else "|Gamma| >= 1: mismatch loss is undefined"))
    return out


def _golden_result(g: GoldenSpec, b: BandSpec, f: np.ndarray, gamma: np.ndarray) -> RequirementResult:
    name = f"{b.name} deviation from golden"
    lo, hi = b.f_low_hz, b.f_high_hz
    if not sweep_covers(f, lo, hi):
        return _not_covered(name, "max_deviation_db", g.max_deviation_db, lo, hi, f)
    lo, hi = max(lo, f[0]), min(hi, f[-1])
    fu, gu = band_samples(f, gamma, lo, hi)
    grid = np.union1d(fu, g.f_hz[(g.f_hz > lo) & (g.f_hz < hi)])
    gu = np.interp(grid, f, gamma.real) + 1j * np.interp(grid, f, gamma.imag)
    gg = np.interp(grid, g.f_hz, g.gamma.real) + 1j * np.interp(grid, g.f_hz, g.gamma.imag)
    cap = _CAP_DB if g.rl_ceiling_db is None else g.rl_ceiling_db
    dev = np.abs(np.minimum(_rl_db(gu), cap) - np.minimum(_rl_db(gg), cap))
    k = int(np.argmax(dev))
    worst = float(dev[k])
    return RequirementResult(name=name, key="max_deviation_db", passed=bool(worst <= g.max_deviation_db),
                             limit=g.max_deviation_db, worst=worst, worst_f_hz=float(grid[k]),
                             margin_db=g.max_deviation_db - worst, f_low_hz=lo, f_high_hz=hi,
                             samples=int(np.count_nonzero((f >= lo) & (f <= hi))))


def evaluate_arrays(f_hz: np.ndarray, gamma: np.ndarray, spec: Spec, file: str = "<arrays>",
                    warnings: list[str] | tuple[str, ...] = ()) -> UnitResult:
    """Evaluate reflection ``gamma`` (complex, at the spec's system impedance) sampled at ``f_hz``
    (strictly increasing, Hz) against ``spec``. Warnings name ``file``."""
    f = np.asarray(f_hz, dtype=float)
    gamma = np.asarray(gamma, dtype=complex)
    warns = list(warnings)
    reqs: list[RequirementResult] = []
    for b in spec.bands:
        reqs.extend(_band_results(b, f, gamma, file, warns))
    i = int(np.argmin(np.abs(gamma)))  # the sample with the smallest |Gamma| (contract's 'best')
    best_f, best_rl = float(f[i]), float(rf.return_loss_db(gamma[i])) + 0.0  # 0.0, not -0.0, for a short
    if spec.resonance is not None:
        r = spec.resonance
        m_hz = min(best_f - r.f_low_hz, r.f_high_hz - best_f)
        reqs.append(RequirementResult(name="resonance", key="resonance", passed=bool(m_hz >= 0), limit=None,
                                      worst=best_f, worst_f_hz=best_f, margin_db=None, f_low_hz=r.f_low_hz,
                                      f_high_hz=r.f_high_hz, worst_return_loss_db=min(best_rl, _CAP_DB),
                                      margin_hz=m_hz, samples=int(f.size),
                                      reason="" if m_hz >= 0 else "the best match lies outside the resonance window"))
    if spec.golden is not None:
        reqs.append(_golden_result(spec.golden, spec.band(spec.golden.band), f, gamma))
    return UnitResult(file=file, passed=all(r.passed for r in reqs), requirements=tuple(reqs), best_f_hz=best_f,
                      best_return_loss_db=best_rl, warnings=tuple(warns))


def evaluate(sweep: Sweep, spec: Spec) -> UnitResult:
    """Evaluate a loaded :class:`~matchtool.sweep.Sweep` against ``spec`` (the sweep's own port and
    reference impedance are used as loaded; load it with ``spec.port`` / ``spec.z0_ohm``).

    A sweep loaded for another port or system impedance than the spec states is refused
    (UsageError) rather than judged on the wrong reflection.
    """
    from .errors import UsageError

    if sweep.port != spec.port:
        raise UsageError(f"sweep was loaded for port {sweep.port} but the spec checks port {spec.port}",
                         path=sweep.path, expected=f"load(path, port={spec.port})")
    if spec.z0_ohm is not None and not math.isclose(sweep.z0_ohm, spec.z0_ohm, rel_tol=1e-9):
        raise UsageError(f"sweep is at {sweep.z0_ohm:g} ohm but the spec asks for {spec.z0_ohm:g} ohm",
                         path=sweep.path, expected=f"load(path, z0_ohm={spec.z0_ohm:g})")
    return evaluate_arrays(sweep.f_hz, sweep.gamma, spec, file=sweep.path, warnings=sweep.warnings)


SPECIAL_FILE = "is not a regular file (a FIFO, socket or device)"


def is_special_file(path: str | Path) -> bool:
    """Whether ``path`` exists but is neither a regular file nor a directory (a FIFO, socket or
    device, or a link to one): reading one can block for ever or never end, so it is never opened."""
    import stat

    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return False  # missing or unreadable: the reader reports it
    return not (stat.S_ISREG(mode) or stat.S_ISDIR(mode))


def special_file_error(path: str | Path) -> str | None:
    """The one-line error for a sweep path that :func:`is_special_file`, else None."""
    return f"{path}: {SPECIAL_FILE}; expected a Touchstone file" if is_special_file(path) else None


def check_file(path: str | Path, spec: Spec) -> UnitResult:
    """Load one file with the spec's port and impedance and evaluate it; a file that cannot be
    read gives a UnitResult with ``error`` set instead of raising."""
    special = special_file_error(path)
    if special is not None:
        return UnitResult(file=str(path), passed=False, error=special)
    try:
        f_hz, gamma, warnings = load_reflection(path, spec.port, spec.z0_ohm)
        return evaluate_arrays(f_hz, gamma, spec, file=str(path), warnings=warnings)
    except MatchtoolError as exc:
        return UnitResult(file=str(path), passed=False, error=str(exc))
    except (ValueError, OSError, ArithmeticError) as exc:  # never let one file stop the lot
        return UnitResult(file=str(path), passed=False, error=f"{path}: cannot evaluate ({type(exc).__name__}: "
                          f"{' '.join(str(exc).split())})")

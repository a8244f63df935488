"""The Sweep model: a loaded sweep (from a Touchstone file or an ``skrf.Network``), the port chosen
for reflection metrics, renormalisation to a system impedance, and interpolation.

Touchstone reading, parsing and writing live in :mod:`matchtool.touchstone`; the numbers are
handed to scikit-rf (``skrf.Network``, ``skrf.network.renormalize_s``) as arrays. A path is never
passed to ``skrf.Network(path)``, which would first try to unpickle the file. The names below
that come from :mod:`matchtool.touchstone` and :mod:`matchtool.inputs` stay importable from
here.

Conventions: frequencies in Hz (``f_hz``), S-parameters complex and dimensionless, reference
impedances in ohms (``z0_ohm``); ports are numbered from 1 as in the file.
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .errors import OutOfRangeError, UsageError
from .inputs import DEFAULT_MAX_BYTES, read_touchstone
from .touchstone import (
    Touchstone,
    decode_text,
    parse_touchstone,
    ports_from_name,
    read_text,
    touchstone_text,
    write_touchstone,
)
from .units import format_frequency

if TYPE_CHECKING:  # scikit-rf is imported where a Network is built or converted, not at start-up
    import skrf

__all__ = ["DEFAULT_MAX_BYTES", "SYSTEM_Z0_OHM", "Sweep", "Touchstone", "as_sweep", "decode_text", "gamma_at", "gamma_at_many",
           "load", "load_reflection", "parse_touchstone", "ports_from_name", "read_text", "sweep_from_arrays",
           "touchstone_text", "write_touchstone"]



@dataclass(frozen=True, eq=False)
class Sweep:
    """A loaded sweep and the port chosen for reflection metrics.

    ``f_hz`` (n,) in Hz; ``s`` (n, N, N) the whole N-port at ``z0_ports_ohm`` (N,) real ohms per
    port (renormalised when ``z0_ohm`` was asked for); ``gamma`` is S_pp of the chosen port
    ``port`` (1-based) at ``z0_ohm``. ``network`` is the same N-port as an ``skrf.Network``, built
    on first use (scikit-rf is imported only then: a command that needs only the arrays, such as
    ``inspect``, starts without it).
    """

    f_hz: np.ndarray
    s: np.ndarray
    z0_ports_ohm: np.ndarray
    port: int
    path: str
    z0_ohm: float
    warnings: list[str] = field(default_factory=list)
    version: str = "1"

    @cached_property
    def network(self) -> skrf.Network:
        """The N-port as an ``skrf.Network`` (z0 (n, N), named after the file's stem); built once."""
        import skrf

        m, n = self.s.shape[0], self.s.shape[1]
        freq = skrf.Frequency.from_f(self.f_hz, unit="Hz")
        # a (nports,) z0 would be read by scikit-rf as one value per frequency when nfreq == nports
        z0_net = np.broadcast_to(self.z0_ports_ohm, (m, n)).copy()
        return skrf.Network(frequency=freq, s=self.s, z0=z0_net, name=Path(self.path).stem)

    @property
    def gamma(self) -> np.ndarray:
        return self.s[:, self.port - 1, self.port - 1]

    @property
    def nports(self) -> int:
        return int(self.s.shape[1])

    @property
    def name(self) -> str:
        return Path(self.path).name

    @classmethod
    def from_network(cls, network: skrf.Network, port: int = 1, z0_ohm: float | None = None,
                     path: str | None = None) -> Sweep:
        """A Sweep of an ``skrf.Network`` (any number of ports; ``port`` 1-based).

        ``z0_ohm`` renormalises every port to that real impedance (ohms); otherwise the network's own
        reference is kept where it is real and constant over frequency per port, and a reference
        that varies with frequency or is complex is renormalised to :data:`SYSTEM_Z0_OHM` with a
        warning. ``path`` names it in messages (default: the network's name).
        """
        if not _is_network(network):
            raise UsageError(f"expected an skrf.Network, got {type(network).__name__}", parameter="network")
        name = path if path is not None else (network.name or "<network>")
        return sweep_from_arrays(network.f, network.s, np.asarray(network.z0), path=name, port=port,
                                 z0_ohm=z0_ohm, s_def=getattr(network, "s_def", "power"))


def _is_network(obj: object) -> bool:
    """Whether ``obj`` is an ``skrf.Network`` (without importing scikit-rf: if it is not imported,
    nothing can be one)."""
    skrf = sys.modules.get("skrf")
    return skrf is not None and isinstance(obj, skrf.Network)


def as_sweep(obj: Sweep | skrf.Network | str | Path, port: int | None = None, z0_ohm: float | None = None) -> Sweep:
    """Accept what every core entry point accepts: a loaded Sweep, an ``skrf.Network`` or a path.

    A Sweep is returned as it is unless another ``port`` or a ``z0_ohm`` is asked for.
    """
    if isinstance(obj, Sweep):
        if (port is None or port == obj.port) and (z0_ohm is None or math.isclose(z0_ohm, obj.z0_ohm)):
            return obj
        return sweep_from_arrays(obj.f_hz, obj.s, obj.z0_ports_ohm, path=obj.path,
                                 port=obj.port if port is None else port, z0_ohm=z0_ohm,
                                 warnings=list(obj.warnings), version=obj.version)
    if _is_network(obj):
        return Sweep.from_network(obj, port=1 if port is None else port, z0_ohm=z0_ohm)
    if isinstance(obj, str | Path):
        return load(obj, port=1 if port is None else port, z0_ohm=z0_ohm)
    raise UsageError(f"expected a Sweep, an skrf.Network or a path, got {type(obj).__name__}", parameter="sweep")


def _file_reference(ts: Touchstone) -> np.ndarray:
    """The reference the data of a parsed file are at: (N,) real, or (n, N) complex per frequency
    where the file's comments give the port impedances."""
    return ts.z0_ohm if ts.port_z0_ohm is None else ts.port_z0_ohm


def load(path: str | Path, port: int = 1, z0_ohm: float | None = None, max_bytes: int | None = None) -> Sweep:
    """Load a Touchstone sweep and choose the port whose reflection S_pp is analysed.

    ``port`` is 1-based; ``z0_ohm`` renormalises every port to that real impedance (ohms);
    otherwise the file's reference impedance is kept (a reference that varies with frequency or
    is complex, e.g. a simulator's port impedances, is renormalised to :data:`SYSTEM_Z0_OHM` with
    a warning). ``max_bytes`` is the input limit (default :func:`matchtool.inputs.default_max_bytes`).
    Raises TouchstoneError or UsageError.
    """
    text = read_touchstone(path, max_bytes)  # plain ASCII files stay bytes: no decode and re-encode
    ts = parse_touchstone(text, path, ports_from_name(path), checked=True)
    return sweep_from_arrays(ts.f_hz, ts.s, _file_reference(ts), path=str(path), port=port, z0_ohm=z0_ohm,
                             warnings=ts.warnings, version=ts.version, s_def=ts.s_def)


def load_reflection(path: str | Path, port: int, z0_ohm: float | None) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """(f_hz, gamma of ``port`` (1-based), warnings) of a file, read once.

    Same checks, results and warnings as :func:`matchtool.sweep.load`, without building an
    ``skrf.Network`` in the common case (no renormalisation, nothing to warn about |Gamma| > 1):
    for a lot of a thousand sweeps the Network objects cost more than the evaluation itself.
    """
    ts = parse_touchstone(read_touchstone(path), path, ports_from_name(path), checked=True)
    n = ts.s.shape[1]
    fast = (not isinstance(port, bool) and isinstance(port, int) and 1 <= port <= n and ts.port_z0_ohm is None
            and (z0_ohm is None or np.allclose(ts.z0_ohm, z0_ohm)))
    if fast:
        g = ts.s[:, port - 1, port - 1]
        if not (np.abs(g) > 1.0).any():
            warnings = list(ts.warnings)
            _port_warnings(warnings, str(path), g, port, float(ts.z0_ohm[port - 1]), z0_ohm is None)
            return ts.f_hz, g, warnings
    sw = sweep_from_arrays(ts.f_hz, ts.s, _file_reference(ts), path=str(path), port=port, z0_ohm=z0_ohm,
                           warnings=ts.warnings, version=ts.version, s_def=ts.s_def)
    return sw.f_hz, sw.gamma, list(sw.warnings)


SYSTEM_Z0_OHM = 50.0
"""The system impedance a sweep is renormalised to when its own reference cannot be used as one
real value per port (varies with frequency, or complex) and no ``z0_ohm`` is given."""

USUAL_Z0_OHM = (10.0, 300.0)
"""A file reference outside this range (ohms) is far from every usual system impedance (50 and
75 ohm coax, 100 ohm differential, up to 300 ohm twin lead; common practice, no source)."""


def _add(warnings: list[str], text: str) -> None:
    if text not in warnings:
        warnings.append(text)


def _port_warnings(warnings: list[str], path: str, g_file: np.ndarray, port: int, z_sys: float,
                   from_file: bool) -> None:
    """Warnings about the chosen port that a bench engineer must not miss: a reflection that is
    exactly zero at every frequency (never measured), and an analysis at a reference impedance
    far from any usual system impedance (the file's own, e.g. ``R 1``)."""
    if g_file.size and not np.any(g_file):
        _add(warnings, f"{path}: port {port} reflection is 0 everywhere: not measured? (its return loss, bands "
                       "and pass/fail mean nothing)")
    lo, hi = USUAL_Z0_OHM
    if from_file and not lo <= z_sys <= hi:
        _add(warnings, f"{path}: analysed at a {z_sys:.4g} ohm reference (the file's own); did you mean --z0 50?")


def sweep_from_arrays(f_hz: np.ndarray, s: np.ndarray, z0_file_ohm: np.ndarray | float, path: str = "<arrays>",
                      port: int = 1, z0_ohm: float | None = None, warnings: list[str] | None = None,
                      version: str = "1", s_def: str = "power") -> Sweep:
    """Build a Sweep from arrays: ``f_hz`` (n,), ``s`` (n,) or (n, N, N) at reference
    ``z0_file_ohm`` (ohms: one value, (N,) per port, or (n, N) per frequency and port, complex
    allowed, with wave definition ``s_def`` as scikit-rf names it).

    ``z0_ohm`` renormalises every port to that real system impedance; without it a reference
    that is real and constant per port is kept, and any other is renormalised to
    :data:`SYSTEM_Z0_OHM` with a warning (through ``skrf.network.renormalize_s``).
    """
    f_hz = np.asarray(f_hz, dtype=float)
    s = np.asarray(s, dtype=complex)
    if s.ndim == 1:
        s = s.reshape(-1, 1, 1)
    if f_hz.ndim != 1 or f_hz.size == 0 or s.ndim != 3 or s.shape[0] != f_hz.size or s.shape[1] != s.shape[2]:
        raise UsageError(f"arrays of shapes {f_hz.shape} and {s.shape} do not describe a sweep", path=path,
                         expected="f_hz (n,) and s (n,) or (n, N, N)")
    if not (np.isfinite(f_hz).all() and np.isfinite(s).all()):
        raise UsageError("non-finite frequency or S-parameter", path=path, expected="finite numbers")
    if np.any(f_hz < 0) or np.any(np.diff(f_hz) <= 0):
        raise UsageError("frequencies are negative or do not strictly increase", path=path)
    m, n = s.shape[0], s.shape[1]
    warnings = list(warnings or [])
    if isinstance(port, bool) or not isinstance(port, int | np.integer) or not 1 <= port <= n:
        raise UsageError(f"port {port} does not exist", path=path, expected=f"a port from 1 to {n}")
    z_in = np.asarray(z0_file_ohm, dtype=complex)
    try:
        z_full = np.broadcast_to(z_in if z_in.ndim != 1 or z_in.size != n else z_in[None, :], (m, n))
    except ValueError:
        raise UsageError(f"a reference impedance of shape {z_in.shape} does not fit {m} points of {n} ports",
                         path=path, expected="one value, (N,) or (n, N)") from None
    # one value or one per port (the common case): check those, not their broadcast over frequency
    z_chk = z_in.reshape(1, -1) if z_in.ndim == 0 or (z_in.ndim == 1 and z_in.size == n) else z_full
    if not (np.isfinite(z_chk).all() and np.all(z_chk.real > 0)):
        raise UsageError("reference impedance must be positive and finite", path=path)
    if z0_ohm is not None and not (math.isfinite(z0_ohm) and z0_ohm > 0):
        raise UsageError("not a usable system impedance", parameter="z0_ohm", value=f"{z0_ohm:g} ohm",
                         expected="a positive, finite impedance")
    g_file = s[:, port - 1, port - 1]
    usable = bool(np.all(z_chk.imag == 0) and np.all(z_chk == z_chk[:1]))
    if usable:
        z0_file = z_full[0].real.copy()
        if z0_ohm is not None and not np.allclose(z0_file, z0_ohm):
            import skrf

            s = skrf.network.renormalize_s(s, z0_file, np.full(n, float(z0_ohm)))
    else:
        target = SYSTEM_Z0_OHM if z0_ohm is None else float(z0_ohm)
        if z0_ohm is None:
            _add(warnings, f"{path}: the reference impedance varies with frequency or is complex; renormalised to "
                           f"{target:g} ohm (the system impedance; --z0 chooses another)")
        import skrf

        s = skrf.network.renormalize_s(s, np.array(z_full), np.full(n, target), s_def=s_def, s_def_old=s_def)
        z0_file = np.full(n, target)
    if z0_ohm is not None:
        z0_file = np.full(n, float(z0_ohm))
    g = np.abs(s[:, port - 1, port - 1])
    over = g > 1.0
    if over.any():
        k = int(np.argmax(g))
        sign = ("; most points are above 0 dB: does the file hold return loss (positive) where S11 in dB "
                "(negative) belongs?") if over.mean() > 0.5 else ""
        _add(warnings,
             f"{path}: {int(over.sum())} point(s) with |S{port}{port}| > 1 (up to {g[k]:.4f} at "
             f"{format_frequency(float(f_hz[k]))}): a passive antenna cannot reflect more than it receives; "
             f"check the calibration or de-embedding{sign}")
    _port_warnings(warnings, str(path), g_file, int(port), float(z0_file[port - 1]), z0_ohm is None and usable)
    return Sweep(f_hz=f_hz, s=s, z0_ports_ohm=np.asarray(z0_file, dtype=float), port=int(port), path=str(path),
                 z0_ohm=float(z0_file[port - 1]), warnings=warnings, version=version)


def gamma_at(sweep: Sweep, f_hz: float) -> complex:
    """Reflection coefficient at ``f_hz``, linear in complex Gamma between the bracketing samples.

    A frequency outside the sweep raises OutOfRangeError (never extrapolated).
    """
    return complex(gamma_at_many(sweep.f_hz, sweep.gamma, np.array([f_hz]), sweep.path)[0])


def gamma_at_many(f_hz: np.ndarray, gamma: np.ndarray, f_query_hz: np.ndarray, path: str = "") -> np.ndarray:
    """Vectorised :func:`gamma_at` over the sweep arrays ``f_hz`` and ``gamma``."""
    q = np.asarray(f_query_hz, dtype=float)
    lo, hi = float(f_hz[0]), float(f_hz[-1])
    out = (q < lo) | (q > hi) | ~np.isfinite(q)
    if out.any():
        bad = float(q[np.argmax(out)])
        hint = ""
        for unit, scale in (("MHz", 1e6), ("GHz", 1e9), ("kHz", 1e3)):
            if 0 < bad < 1e6 and lo <= bad * scale <= hi:  # a bare number is Hz: '915' is 915 Hz
                hint = f" (a bare number is Hz: did you mean {bad:g}{unit}?)"
                break
        raise OutOfRangeError(f"{bad / 1e6:.6g} MHz is outside the sweep ({lo / 1e6:.6g} to {hi / 1e6:.6g} MHz){hint}",
                              path=path or None, expected="a frequency inside the sweep (never extrapolated)")
    return np.interp(q, f_hz, gamma.real) + 1j * np.interp(q, f_hz, gamma.imag)


"""The metrics of one sweep, as ``matchtool inspect`` shows them (a plain dataclass)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from . import reflection as rf
from .bands import Band, search_bands
from .errors import UsageError
from .sweep import Sweep, gamma_at_many

if TYPE_CHECKING:  # pragma: no cover
    import skrf


@dataclass(frozen=True)
class PointMetrics:
    """Every reflection metric at one frequency (Hz); impedance in ohms."""

    f_hz: float
    gamma: complex
    z0_ohm: float

    @property
    def gamma_mag(self) -> float:
        return abs(self.gamma)

    @property
    def s11_db(self) -> float:
        return float(rf.s11_db(self.gamma))

    @property
    def return_loss_db(self) -> float:
        return float(rf.return_loss_db(self.gamma))

    @property
    def vswr(self) -> float:
        return float(rf.vswr(self.gamma))

    @property
    def mismatch_loss_db(self) -> float:
        return float(rf.mismatch_loss_db(self.gamma))

    @property
    def delivered_fraction(self) -> float:
        return float(rf.delivered_fraction(self.gamma))

    @property
    def z_ohm(self) -> complex:
        return complex(rf.impedance_ohm(self.gamma, self.z0_ohm))


@dataclass(frozen=True)
class SweepSummary:
    """What ``inspect`` reports of one sweep: the best sample, threshold bands, values at points."""

    path: str
    port: int
    z0_ohm: float
    points: int
    f_start_hz: float
    f_stop_hz: float
    threshold_return_loss_db: float
    best: PointMetrics
    bands: list[Band]
    at: list[PointMetrics]
    warnings: list[str] = field(default_factory=list)
    noise_crossings: list[Band] = field(default_factory=list)
    """Threshold crossings narrower than ``min_band_width_hz`` (or holding too few samples): listed
    apart, never bands."""
    min_band_width_hz: float = 0.0
    """The narrowest run that counted as a band (Hz)."""


def threshold_from_options(min_return_loss_db: float | None = None, max_vswr: float | None = None,
                           max_s11_db: float | None = None, default_db: float = 10.0) -> float:
    """Turn one of the three equivalent limits into a return-loss threshold (positive dB).

    At most one may be given; none gives ``default_db`` (10 dB, i.e. S11 = -10 dB).
    """
    given = [x is not None for x in (min_return_loss_db, max_vswr, max_s11_db)]
    if sum(given) > 1:
        names = [n for n, g in zip(("min_return_loss_db", "max_vswr", "max_s11_db"), given, strict=True) if g]
        raise UsageError(f"give only one of the three equivalent limits (got {len(names)})", parameter=names[-1],
                         expected="a single threshold: a return loss, a VSWR or an S11 in dB")
    if min_return_loss_db is not None:
        if not np.isfinite(min_return_loss_db) or min_return_loss_db < 0:
            raise UsageError("is not a positive return loss in dB", parameter="min_return_loss_db",
                             value=min_return_loss_db,
                             expected="a positive return loss (S11 of -10 dB is a return loss of 10 dB)")
        return float(min_return_loss_db)
    if max_vswr is not None:
        if not np.isfinite(max_vswr) or max_vswr <= 1:
            raise UsageError("is not a VSWR above 1", parameter="max_vswr", value=max_vswr, expected="a VSWR above 1")
        return float(rf.return_loss_from_vswr(max_vswr))
    if max_s11_db is not None:
        if not np.isfinite(max_s11_db) or max_s11_db > 0:
            raise UsageError("is not a negative S11 in dB", parameter="max_s11_db", value=max_s11_db,
                             expected="a negative S11 in dB, e.g. -10")
        return float(-max_s11_db)
    return float(default_db)


def best_index(gamma: np.ndarray) -> int:
    """Index of the measured sample with the smallest |Gamma| (no refinement between samples)."""
    return int(np.argmin(np.abs(gamma)))


def summarize(sweep: Sweep | skrf.Network | str, threshold_return_loss_db: float = 10.0, at_hz: list[float] = (),
              min_band_width_hz: float | None = None, port: int | None = None,
              z0_ohm: float | None = None) -> SweepSummary:
    """Compute the inspect metrics of ``sweep`` (a loaded Sweep, an ``skrf.Network`` or a path;
    ``port`` 1-based and ``z0_ohm`` as for :func:`matchtool.sweep.as_sweep`). Threshold in positive
    dB of return loss; runs above it narrower than ``min_band_width_hz`` (Hz; default
    :data:`matchtool.bands.MIN_BAND_FRACTION` of the span, and at least 2 samples) are
    ``noise_crossings``, not bands."""
    from .sweep import as_sweep

    sweep = as_sweep(sweep, port=port, z0_ohm=z0_ohm)
    f, g = sweep.f_hz, sweep.gamma
    i = best_index(g)
    found = search_bands(f, rf.return_loss_db(g), threshold_return_loss_db, min_band_width_hz)
    bands = list(found.bands)
    at_hz = list(at_hz)
    values = gamma_at_many(f, g, np.asarray(at_hz, dtype=float), sweep.path) if at_hz else []
    at = [PointMetrics(float(q), complex(v), sweep.z0_ohm) for q, v in zip(at_hz, values, strict=True)]
    return SweepSummary(path=sweep.path, port=sweep.port, z0_ohm=sweep.z0_ohm, points=int(f.size),
                        f_start_hz=float(f[0]), f_stop_hz=float(f[-1]),
                        threshold_return_loss_db=float(threshold_return_loss_db),
                        best=PointMetrics(float(f[i]), complex(g[i]), sweep.z0_ohm), bands=bands, at=at,
                        warnings=list(sweep.warnings), noise_crossings=list(found.noise_crossings),
                        min_band_width_hz=float(found.min_width_hz))


@dataclass(frozen=True)
class PortsSummary:
    """The inspect metrics of several ports of one N-port file: ``ports`` one SweepSummary per port
    analysed, in port order; ``detail_port`` the port whose full details are shown (None when every
    port's are); ``warnings`` those of the file and of each port, once each."""

    path: str
    nports: int
    ports: tuple[SweepSummary, ...]
    detail_port: int | None
    warnings: tuple[str, ...] = ()

    def port(self, n: int) -> SweepSummary:
        return next(s for s in self.ports if s.port == n)


def summarize_ports(sweep: Sweep | skrf.Network | str, threshold_return_loss_db: float = 10.0,
                    at_hz: list[float] = (), detail_port: int | None = None,
                    min_band_width_hz: float | None = None) -> PortsSummary:
    """The inspect metrics of every port of ``sweep`` (a loaded Sweep or an ``skrf.Network``).

    ``detail_port`` None: every port in full (``at_hz`` for each); otherwise the values at
    ``at_hz`` only for that port (the others get their best match and bands). Threshold in
    positive dB of return loss.
    """
    from .sweep import as_sweep

    base = as_sweep(sweep)
    out = []
    warnings: list[str] = []
    for p in range(1, base.nports + 1):
        sw = as_sweep(base, port=p)
        s = summarize(sw, threshold_return_loss_db, at_hz if detail_port in (None, p) else [], min_band_width_hz)
        out.append(s)
        warnings.extend(w for w in s.warnings if w not in warnings)
    if detail_port is not None and not 1 <= detail_port <= base.nports:
        raise UsageError(f"port {detail_port} does not exist", path=base.path, parameter="port",
                         expected=f"a port from 1 to {base.nports}")
    return PortsSummary(path=base.path, nports=base.nports, ports=tuple(out), detail_port=detail_port,
                        warnings=tuple(warnings))

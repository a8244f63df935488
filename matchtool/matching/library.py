"""Matching with a parts library (:mod:`matchtool.parts`): the search's options from the library's
parts, and the evaluation of a ladder of real parts on a load.

One part model everywhere
-------------------------
Every figure reported for a network of library parts, the search's cost, the tolerance yield and
the written files (``Candidate.network_2port``, ``Candidate.matched_network``) use the same 2-port
of each part, :func:`matchtool.parts.part_abcd`:

* a measured part in a **series** position is its whole measured 2-port (S interpolated in complex S
  onto the sweep; pads and all), not only the impedance derived from its S21;
* a part in a **shunt** position (measured or model) is the shunt element Y = 1 / Z(f), Z the part's
  series impedance (from S21, Z = 2 Z0 (1 - S21) / S21, for a measured part);
* a model part in a series position is the series element Z(f) of its equivalent circuit.

The ladder is walked from the antenna with normalised voltage and current (v = 1 + Gamma,
i = 1 - Gamma at the load, at the system Z0), through each part's normalised ABCD matrix
[[A, B / Z0], [C Z0, D]] (Pozar, Microwave Engineering, 4th ed., Table 4.1); the radio, a source of
impedance Z0, then sees Gamma_in = (v - i) / (v + i) and delivers to the antenna the fraction
4 (1 - |Gamma_L|^2) / |v + i|^2 of its available power (the load's power over the available power).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from ..parts import Part, PartsLibrary, part_abcd
from . import search as srch
from .network import Response


def normalised_abcd(part: Part, connection: str, f_hz: np.ndarray, z0_ohm: float,
                    value: float | np.ndarray | None = None) -> np.ndarray:
    """The part's ABCD matrices with B divided by and C multiplied by ``z0_ohm`` (dimensionless)."""
    m = part_abcd(part, f_hz, connection, value).copy()
    m[..., 0, 1] /= z0_ohm
    m[..., 1, 0] *= z0_ohm
    return m


def options_from_library(connection: str, library: PartsLibrary, problem: srch.Problem
                         ) -> tuple[srch.Options, tuple[Part | None, ...]]:
    """The options of one position from every part of ``library`` (nothing, then the inductors, then
    the capacitors, each by increasing value) and the part behind each option (None for nothing).

    A series position holding a measured part gives every option as a normalised ABCD matrix (the
    measured 2-port itself); otherwise the options are immittances (Z / Z0 series, Y Z0 shunt)."""
    parts = list(library.inductors) + list(library.capacitors)
    f = problem.f_hz
    z0 = problem.z0_ohm
    z = np.stack([np.zeros(f.size, dtype=complex)] + [p.series_impedance_ohm(f) for p in parts])
    if connection == "series":
        imm = z / z0
    else:
        imm = np.divide(z0, z, out=np.zeros_like(z), where=z != 0)
    kinds = np.array([srch.NONE] + [srch.INDUCTOR if p.kind == "inductor" else srch.CAPACITOR for p in parts],
                     dtype=np.int64)
    values = np.array([math.nan] + [p.value for p in parts])
    abcd = None
    if connection == "series" and any(p.measured for p in parts):
        eye = np.broadcast_to(np.eye(2, dtype=complex), (f.size, 2, 2))
        abcd = np.stack([eye] + [normalised_abcd(p, "series", f, z0) for p in parts])
    return srch.Options(connection, kinds, values, imm, abcd), (None, *parts)


def cascade(gamma_load: np.ndarray, mats: Sequence[np.ndarray]) -> Response:
    """The ladder of normalised ABCD matrices ``mats`` (radio side first; each (..., n, 2, 2),
    broadcasting) on the load ``gamma_load`` (n,): Gamma_in and the delivered fraction."""
    gl = np.asarray(gamma_load, dtype=complex)
    v = 1.0 + gl
    i = 1.0 - gl
    for m in reversed(list(mats)):
        v, i = m[..., 0, 0] * v + m[..., 0, 1] * i, m[..., 1, 0] * v + m[..., 1, 1] * i
    a = v + i
    with np.errstate(divide="ignore", invalid="ignore"):
        gin = (v - i) / a
        delivered = 4.0 * (1.0 - (gl.real ** 2 + gl.imag ** 2)) / (a.real ** 2 + a.imag ** 2)
    return Response(gin, delivered)


def evaluate_parts(f_hz: np.ndarray, gamma_load: np.ndarray, z0_ohm: float, parts: Sequence[Part],
                   connections: Sequence[str], values: Sequence | None = None) -> Response:
    """A ladder of library parts (radio side first) on a load; ``values`` optionally shifts each
    part's value (F or H: scalars, or 1-D arrays of Monte Carlo builds, giving results of shape
    (builds, n))."""
    f = np.asarray(f_hz, dtype=float)
    vals = values if values is not None else [None] * len(parts)
    mats = [normalised_abcd(p, c, f, z0_ohm, v) for p, c, v in zip(parts, connections, vals, strict=True)]
    return cascade(gamma_load, mats)


def covered_mask(parts: Sequence[Part], f_hz: np.ndarray) -> np.ndarray:
    """Which of ``f_hz`` every measured part of ``parts`` spans (model parts span everything)."""
    f = np.asarray(f_hz, dtype=float)
    ok = np.ones(f.size, dtype=bool)
    for p in parts:
        if p.measured:
            tol = 1e-9 * max(abs(p.f_hz[-1]), 1.0)
            ok &= (f >= p.f_hz[0] - tol) & (f <= p.f_hz[-1] + tol)
    return ok

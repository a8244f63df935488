"""A proposed matching network for one sweep and the sweep seen through it (for ``plot --match``
and the report's match section). Pure computation: the design is :mod:`matchtool.matching`'s own
(``matching.propose``, as ``matchtool match`` runs it), the network's effect is
``matching.gamma_matched`` (standard values) or the cascade of the library's parts (``parts``).

Entry point: :func:`propose`. Frequencies in Hz; Gamma complex at the sweep's reference impedance.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import matching as mt
from .errors import UsageError
from .sweep import Sweep, as_sweep

DEFAULT_CANDIDATES = 6


@dataclass(frozen=True)
class MatchRequest:
    """What to design: one of ``f0_hz`` (Hz) or ``band_hz`` ``(low, high)``; the part series, part
    Q, the allowed values and which ranked network (``pick``, 1 = best) to propose. ``parts`` a
    :class:`matchtool.parts.PartsLibrary` to pick only from (then ``series``, ``q`` and ``bounds``
    are not used, as for ``matching.propose``); None: standard values."""

    f0_hz: float | None = None
    band_hz: tuple[float, float] | None = None
    series: str = "E24"
    q: mt.PartQ = mt.PartQ()
    bounds: mt.ValueBounds = mt.ValueBounds()
    pick: int = 1
    parts: Any = field(default=None, repr=False)  # matchtool.parts.PartsLibrary | None

    def __post_init__(self) -> None:
        if (self.f0_hz is None) == (self.band_hz is None):
            raise UsageError("give exactly one target for the match", parameter="f0_hz",
                             expected="a frequency or a band")
        if self.pick < 1:
            raise UsageError("", parameter="pick", value=self.pick, expected="a rank of 1 or more")


@dataclass(frozen=True)
class ProposedMatch:
    """A ranked network from :mod:`matchtool.matching` and the sweep seen through it.

    ``gamma_after`` is ``matching.gamma_matched(sweep, candidate.elements, result.q)``: complex
    Gamma at the radio side, at the sweep's reference impedance, on ``f_after_hz`` (Hz): the sweep's
    frequencies. With library parts it is the cascade of the parts as they behave
    (``candidate.matched_network()``), on the sweep's frequencies that every measured part spans
    (``f_after_hz``, all of them unless a measured part covers less than the sweep)."""

    sweep: Sweep
    result: mt.MatchResult
    pick: int
    candidate: mt.Candidate
    gamma_after: np.ndarray
    warnings: tuple[str, ...] = ()
    f_after_hz: np.ndarray | None = field(default=None, repr=False, compare=False)

    def __post_init__(self) -> None:
        if self.f_after_hz is None:
            object.__setattr__(self, "f_after_hz", self.sweep.f_hz)


def propose(sweep_or_network: Any, request: MatchRequest, threshold_return_loss_db: float = 10.0) -> ProposedMatch:
    """Design as ``matchtool match`` does and return the ``request.pick``-th ranked network.

    Raises UsageError when fewer networks were found than ``pick``; the design's own errors
    (OutOfRangeError outside the sweep, NoSolutionError) pass through."""
    sweep = sweep_or_network if isinstance(sweep_or_network, Sweep) else as_sweep(sweep_or_network)
    n = max(DEFAULT_CANDIDATES, request.pick)
    if request.f0_hz is not None:
        r = mt.propose(sweep, f0_hz=request.f0_hz, series=request.series, q=request.q, bounds=request.bounds,
                       threshold_db=threshold_return_loss_db, max_candidates=n, parts=request.parts)
    else:
        lo, hi = request.band_hz
        if not hi > lo:
            raise UsageError("band edges", parameter="bands", value=(lo, hi), expected="f_low < f_high")
        r = mt.propose(sweep, bands=[(lo, hi)], series=request.series, q=request.q, bounds=request.bounds,
                       threshold_db=threshold_return_loss_db, max_candidates=n, parts=request.parts)
    if request.pick > len(r.candidates):
        raise UsageError("", parameter="pick", value=request.pick,
                         expected=f"a rank from 1 to {len(r.candidates)} (networks found)")
    cand = r.candidates[request.pick - 1]
    if cand.parts:
        m = cand.matched_network()
        return ProposedMatch(sweep, r, request.pick, cand, m.s[:, 0, 0], tuple(r.warnings), m.f)
    return ProposedMatch(sweep, r, request.pick, cand, mt.gamma_matched(sweep, cand.elements, r.q),
                         tuple(r.warnings))

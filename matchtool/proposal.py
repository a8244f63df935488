"""A proposed matching network for one sweep and the sweep seen through it (for ``plot --match``
and the report's match section). Pure computation: the design is :mod:`matchtool.matching`'s own
(``design_at`` / ``design_for_band``, as ``matchtool match`` runs them), the network's effect
is ``matching.gamma_matched``.

Entry point: :func:`propose`. Frequencies in Hz; Gamma complex at the sweep's reference impedance.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from . import matching as mt
from .errors import UsageError
from .sweep import Sweep, as_sweep

DEFAULT_CANDIDATES = 6


@dataclass(frozen=True)
class MatchRequest:
    """What to design: one of ``f0_hz`` (Hz) or ``band_hz`` ``(low, high)``; the part series, part
    Q, the allowed values and which ranked network (``pick``, 1 = best) to propose."""

    f0_hz: float | None = None
    band_hz: tuple[float, float] | None = None
    series: str = "E24"
    q: mt.PartQ = mt.PartQ()
    bounds: mt.ValueBounds = mt.ValueBounds()
    pick: int = 1

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
    Gamma at the radio side, at the sweep's reference impedance, on the sweep's frequencies."""

    sweep: Sweep
    result: mt.MatchResult
    pick: int
    candidate: mt.Candidate
    gamma_after: np.ndarray
    warnings: tuple[str, ...] = ()


def propose(sweep_or_network: Any, request: MatchRequest, threshold_return_loss_db: float = 10.0) -> ProposedMatch:
    """Design as ``matchtool match`` does and return the ``request.pick``-th ranked network.

    Raises UsageError when fewer networks were found than ``pick``; the design's own errors
    (OutOfRangeError outside the sweep, NoSolutionError) pass through."""
    sweep = sweep_or_network if isinstance(sweep_or_network, Sweep) else as_sweep(sweep_or_network)
    n = max(DEFAULT_CANDIDATES, request.pick)
    if request.f0_hz is not None:
        r = mt.design_at(sweep, request.f0_hz, series=request.series, q=request.q, bounds=request.bounds,
                         threshold_db=threshold_return_loss_db, max_candidates=n)
    else:
        lo, hi = request.band_hz
        r = mt.design_for_band(sweep, lo, hi, series=request.series, q=request.q, bounds=request.bounds,
                               threshold_db=threshold_return_loss_db, max_candidates=n)
    if request.pick > len(r.candidates):
        raise UsageError("", parameter="pick", value=request.pick,
                         expected=f"a rank from 1 to {len(r.candidates)} (networks found)")
    cand = r.candidates[request.pick - 1]
    return ProposedMatch(sweep, r, request.pick, cand, mt.gamma_matched(sweep, cand.elements, r.q),
                         tuple(r.warnings))

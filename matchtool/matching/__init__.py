"""Matching networks for a measured antenna: L, pi and tee ladders, an exhaustive standard-value
search, finite part Q, network loss, several bands at once, the Bode-Fano bound and a tolerance yield.

The one entry point is :func:`propose` (returns a :class:`MatchResult`); ``design_at`` and
``design_for_band`` are its single-frequency and single-band forms. Modules:

* :mod:`.network`  parts, the constant-Q model, ladder evaluation, ABCD / S, closed-form L-sections
* :mod:`.search`   the exhaustive bounded search over standard values (L, pi, tee)
* :mod:`.optimise` a small Nelder-Mead (exact values)
* :mod:`.bodefano` the Bode-Fano bound of a fitted resonator
* :mod:`.yield_`   the tolerance yield (relative or absolute tolerances)
* :mod:`.library`  a parts library's parts as search options, ladders of real parts
* :mod:`.propose`  targets, ranking, results
"""

from .bodefano import BodeFanoBound, bode_fano_bound
from .library import cascade, evaluate_parts
from .network import (
    MEANINGFUL_GAIN_DB,
    SERIES_BLOCK_X_PER_Z0,
    SERIES_WIRE_X_PER_Z0,
    SHUNT_OPEN_X_PER_Z0,
    SHUNT_SHORT_X_PER_Z0,
    TWO_PI,
    Element,
    LNetwork,
    PartQ,
    Response,
    ValueBounds,
    abcd,
    dc_path,
    element_from_reactance,
    evaluate,
    filter_character,
    gamma_matched,
    matched_network,
    network_2port,
    part_impedance,
    part_role,
    passes_dc,
    practical,
    s_parameters,
    synthesize_at,
    unit_impedance,
)
from .optimise import nelder_mead
from .propose import (
    LOSSLESS_TOL,
    MIN_BAND_SAMPLES,
    NETWORKS,
    PAD_SCALE_C_F,
    PAD_SCALE_L_H,
    ROUGH_FIT,
    SIMPLER_GAIN_DB,
    BandOutcome,
    Candidate,
    IdealComparison,
    MatchResult,
    PartNote,
    Position,
    Target,
    TargetReport,
    design_at,
    design_for_band,
    propose,
    topology_name,
)
from .yield_ import SMALL_C_LIMIT_F, SMALL_C_TOLERANCE_F, YieldSettings, build_yield

__all__ = [
    "MEANINGFUL_GAIN_DB", "SERIES_BLOCK_X_PER_Z0", "SERIES_WIRE_X_PER_Z0", "SHUNT_OPEN_X_PER_Z0",
    "SHUNT_SHORT_X_PER_Z0", "TWO_PI", "Element", "LNetwork", "PartQ", "Response", "ValueBounds", "abcd", "dc_path",
    "element_from_reactance", "evaluate", "filter_character", "gamma_matched", "matched_network", "network_2port",
    "part_impedance", "part_role", "passes_dc", "practical", "s_parameters", "synthesize_at", "unit_impedance",
    "cascade", "evaluate_parts",
    "nelder_mead", "LOSSLESS_TOL", "MIN_BAND_SAMPLES", "NETWORKS", "PAD_SCALE_C_F", "PAD_SCALE_L_H", "ROUGH_FIT",
    "SIMPLER_GAIN_DB", "BandOutcome", "Candidate",
    "IdealComparison", "MatchResult", "PartNote", "Position", "Target", "TargetReport",
    "design_at", "design_for_band", "propose", "topology_name", "SMALL_C_LIMIT_F", "SMALL_C_TOLERANCE_F",
    "YieldSettings", "build_yield", "BodeFanoBound", "bode_fano_bound",
]

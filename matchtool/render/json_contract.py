"""The whole JSON interface contract (``../shared/design.md``): one function per document, each
built from a core result dataclass, and the one writer that prints it.

Keys named by the contract must stay; more may be added. Non-finite numbers are written as null
with a warning (``render.jsonout.clean``); -0.0 is written as 0.0.
"""

from __future__ import annotations

import json
import math
import sys
from typing import Any

from .jsonout import clean
from .text import warn


def emit_json(doc: dict[str, Any]) -> None:
    """Print exactly one JSON document on stdout; non-finite numbers become null with a warning.

    The warnings (the document's own and the null ones) also go to stderr.
    """
    warnings = list(doc.get("warnings", []))
    body = clean({k: v for k, v in doc.items() if k != "warnings"}, warnings)
    body["warnings"] = warnings
    sys.stdout.write(json.dumps(body, indent=2, allow_nan=False) + "\n")
    warn(warnings)


# --- inspect -------------------------------------------------------------------------------------

def point_doc(p) -> dict[str, Any]:
    """The contract's ``at`` entry for one frequency (a ``summary.PointMetrics``)."""
    z = p.z_ohm
    return {"f_hz": p.f_hz, "gamma_re": p.gamma.real, "gamma_im": p.gamma.imag, "gamma_mag": p.gamma_mag,
            "s11_db": p.s11_db, "return_loss_db": p.return_loss_db, "vswr": p.vswr,
            "mismatch_loss_db": p.mismatch_loss_db, "delivered_fraction": p.delivered_fraction,
            "z_re_ohm": z.real, "z_im_ohm": z.imag}


def band_doc(b) -> dict[str, Any]:
    """One threshold band (a ``bands.Band``)."""
    return {"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "f_center_hz": b.f_center_hz,
            "bandwidth_hz": b.bandwidth_hz, "fractional_bandwidth": b.fractional_bandwidth,
            "clipped_low": b.clipped_low, "clipped_high": b.clipped_high}


def inspect_doc(s) -> dict[str, Any]:
    """The ``inspect --json`` document of one port (a ``summary.SweepSummary``)."""
    return {
        "file": s.path, "port": s.port, "z0_ohm": s.z0_ohm, "points": s.points,
        "f_start_hz": s.f_start_hz, "f_stop_hz": s.f_stop_hz,
        "threshold_return_loss_db": s.threshold_return_loss_db,
        "best": point_doc(s.best),
        "bands": [band_doc(b) for b in s.bands],
        "at": [point_doc(p) for p in s.at],
        "warnings": list(s.warnings),
    }


# --- match ---------------------------------------------------------------------------------------

def _none_if_inf(x: float | None) -> float | None:
    return None if x is None or (isinstance(x, float) and math.isinf(x)) else x


def _match_target_doc(t) -> dict[str, Any]:
    if t.is_point:
        return {"f_hz": t.f_low_hz, "limit_return_loss_db": t.limit_return_loss_db}
    return {"f_low_hz": t.f_low_hz, "f_high_hz": t.f_high_hz, "f_center_hz": t.f_center_hz,
            "limit_return_loss_db": t.limit_return_loss_db, "name": t.name or None, "optimised": t.optimised}


def _bode_fano_doc(bf, proposal_rl_db) -> dict[str, Any] | None:
    if bf is None:
        return None
    return {"model": bf.model, "r_ohm": bf.r_ohm, "l_h": _none_if_inf(bf.l_h), "c_f": _none_if_inf(bf.c_f),
            "fit_rms_relative": bf.fit_rms_rel, "gamma_min": bf.gamma_min,
            "best_worst_return_loss_db": _none_if_inf(bf.best_return_loss_db),
            "l_network_worst_return_loss_db": proposal_rl_db, "proposal_worst_return_loss_db": proposal_rl_db}


def match_doc(r) -> dict[str, Any]:
    """The ``match --json`` document (a ``matching.MatchResult``): contract keys plus more."""
    from .text.match import dc_words, no_network_text, short_of_threshold_text, tolerance_text

    opt = r.optimised_targets
    if len(opt) > 1:
        target: dict[str, Any] = {"bands": [dict(_match_target_doc(t.target),
                                                 before_worst_return_loss_db=t.before_worst_return_loss_db)
                                            for t in opt]}
    elif r.f_low_hz is None:
        target = {"f_hz": r.f0_hz}
    else:
        target = {"f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz, "f_center_hz": r.f0_hz}
    ys = r.yield_settings
    with_parts = [c for c in r.candidates if c.elements]

    def element_doc(c, e) -> dict[str, Any]:
        return {"kind": e.kind, "connection": e.connection, "value": e.value, "unit": e.unit,
                "position": e.position, "notes": [n.flag for n in c.notes if n.position == e.position]}

    def band_outcome(o) -> dict[str, Any]:
        return dict(_match_target_doc(o.target), worst_return_loss_db=o.worst_return_loss_db,
                    worst_delivered_fraction=o.worst_delivered_fraction, margin_db=o.margin_db)

    def bf_for(t):
        prop = None
        if with_parts:
            o = next((o for o in with_parts[0].per_band if o.target == t.target), None)
            prop = o.worst_return_loss_db if o else None
        return _bode_fano_doc(t.bound, prop)

    return {
        "file": r.path, "port": r.port, "z0_ohm": r.z0_ohm, "target": target, "network": r.network,
        "series": r.series,
        "q_inductor": _none_if_inf(r.q.inductor), "q_capacitor": _none_if_inf(r.q.capacitor),
        "q_model": "constant Q: series resistance |X|/Q at every frequency",
        "bounds": {"c_min_f": r.bounds.c_min_f, "c_max_f": r.bounds.c_max_f,
                   "l_min_h": r.bounds.l_min_h, "l_max_h": r.bounds.l_max_h},
        "threshold_return_loss_db": r.threshold_return_loss_db, "rank_by": r.rank_by,
        "order": "elements listed from the radio side (position 1) to the antenna side",
        "no_network_needed": r.no_network_needed,
        "advice": no_network_text(r) if r.no_network_needed else short_of_threshold_text(r),
        "before": {"worst_return_loss_db": r.before_worst_return_loss_db,
                   "return_loss_at_f0_db": r.before_return_loss_at_f0_db,
                   "meets_threshold": r.before_meets_threshold,
                   "bands": [band_doc(b) for b in r.before_bands],
                   "per_band": [dict(_match_target_doc(t.target), worst_return_loss_db=t.before_worst_return_loss_db)
                                for t in r.targets]},
        "candidates": [{
            "rank": i + 1, "topology": c.topology, "footprint": c.footprint,
            "elements": [element_doc(c, e) for e in c.elements],
            "positions": [{"position": p.position, "connection": p.connection, "fitted": p.fitted}
                          for p in c.positions],
            "worst_return_loss_db": c.worst_return_loss_db, "return_loss_at_f0_db": c.return_loss_at_f0_db,
            "network_loss_db": c.network_loss_db, "worst_delivered_fraction": c.worst_delivered_fraction,
            "min_margin_db": c.min_margin_db, "meets_threshold": c.meets_threshold,
            "per_band": [band_outcome(o) for o in c.per_band],
            "passes_dc": c.passes_dc, "dc_path": c.dc_path, "dc": dc_words(c.dc_path), "filter": c.filter,
            "bands": [band_doc(b) for b in c.bands], "yield_fraction": c.yield_fraction,
        } for i, c in enumerate(r.candidates)],
        "bode_fano": bf_for(opt[0]) if opt and opt[0].bound is not None else None,
        "bode_fano_per_band": [bf_for(t) for t in opt if not t.target.is_point],
        "yield": None if ys is None else {
            "tolerance_inductor_pct": 100 * ys.tolerance_l, "tolerance_capacitor_pct": 100 * ys.tolerance_c,
            "tolerance_inductor_h": ys.tolerance_l_h, "tolerance_capacitor_f": ys.tolerance_c_f,
            "small_capacitor_tolerance_f": ys.small_c_tolerance_f, "description": tolerance_text(ys),
            "trials": ys.trials, "seed": ys.seed, "distribution": "uniform within +-tolerance",
            "threshold_return_loss_db": r.threshold_return_loss_db,
            "best_fraction": r.candidates[0].yield_fraction if r.candidates else None,
        },
        "warnings": list(r.warnings),
    }

"""The whole JSON interface contract (``../shared/design.md``): one function per document, each
built from a core result dataclass, and the one writer that prints it.

Keys named by the contract must stay; more may be added. Non-finite numbers are written as null
with a warning (``render.jsonout.clean``); -0.0 is written as 0.0.
"""

from __future__ import annotations

import json
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


# --- qfactor -------------------------------------------------------------------------------------

def qfactor_doc(r) -> dict[str, Any]:
    """The ``qfactor --json`` document (an ``antenna.QFactorResult``).

    Contract keys: ``f0_hz``, ``q``, ``fractional_bandwidth_potential``, ``vswr``,
    ``measured_fractional_bandwidth``, ``ka``, ``chu_q_min``, ``q_over_chu`` (null without a radius),
    ``efficiency`` (null without a capped sweep), ``warnings``; the rest are added detail.
    """
    fit = r.fit
    return {
        "file": r.path, "port": r.port, "z0_ohm": r.z0_ohm, "points": r.points,
        "f0_hz": r.f0_hz, "f0_choice": r.f0_choice, "resonance": r.resonance,
        "r_ohm": r.r_ohm, "x_ohm": r.x_ohm, "dr_dw_ohm_s": r.dr_dw_ohm_s, "dx_dw_ohm_s": r.dx_dw_ohm_s,
        "q": r.q, "q_rel_std": r.q_rel_std,
        "fit": {"kind": "least-squares polynomial in omega", "degree": fit.degree, "points": fit.points,
                "f_low_hz": fit.f_low_hz, "f_high_hz": fit.f_high_hz},
        "threshold_return_loss_db": r.threshold_return_loss_db, "vswr": r.vswr,
        "fractional_bandwidth_potential": r.fractional_bandwidth_potential,
        "bandwidth_potential_hz": r.bandwidth_potential_hz,
        "tuned_fractional_bandwidth": r.tuned_fractional_bandwidth,
        "tuned_band": band_doc(r.tuned_band) if r.tuned_band is not None else None,
        "measured_fractional_bandwidth": r.measured_fractional_bandwidth,
        "measured_band": band_doc(r.measured_band) if r.measured_band is not None else None,
        "bode_fano_fractional_bandwidth": r.bode_fano_fractional_bandwidth,
        "bode_fano_best_return_loss_db": r.bode_fano_best_return_loss_db,
        "radius_m": r.radius_m, "ka": r.ka, "chu_q_min": r.chu_q_min, "q_over_chu": r.q_over_chu,
        "capped_file": r.capped_path, "efficiency": r.efficiency, "efficiency_model": r.efficiency_model,
        "efficiency_in_range": r.efficiency_in_range, "f_cap_hz": r.f_cap_hz,
        "efficiency_free_value": r.free_value, "efficiency_capped_value": r.capped_value,
        "efficiency_unit": r.efficiency_unit,
        "radiansphere_radius_m": r.radiansphere_radius_m,
        "sphere_cap_resonance_radius_m": r.sphere_cap_resonance_radius_m,
        "warnings": list(r.warnings),
    }

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


# --- compare -------------------------------------------------------------------------------------

def requirement_doc(r) -> dict[str, Any]:
    """One spec requirement (a ``spec.RequirementResult``): the contract's keys plus unit, band and
    reason. The check section builds the same entry; the two are to be unified at merge."""
    return {"name": r.name, "pass": r.passed, "limit": r.limit, "worst": r.worst, "worst_f_hz": r.worst_f_hz,
            "margin_db": r.margin_db, "key": r.key, "unit": r.unit, "f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz,
            "worst_return_loss_db": r.worst_return_loss_db, "margin_hz": r.margin_hz, "samples": r.samples,
            "reason": r.reason or None}


def _edges_doc(b) -> dict[str, Any]:
    return {"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "clipped_low": b.clipped_low,
            "clipped_high": b.clipped_high}


def compare_doc(c) -> dict[str, Any]:
    """The ``compare --json`` document of a ``compare.Comparison`` (contract keys plus every
    threshold band, noise-level crossings, per-band worst cases and verdicts)."""
    from .words import band_verdict_sentence, requirement_verdict_sentence

    rows = []
    for r in c.rows:
        rows.append({
            "file": r.file, "baseline": r.is_baseline, "best_f_hz": r.best_f_hz,
            "best_return_loss_db": r.best_return_loss_db, "best_s11_db": -r.best_return_loss_db,
            "bandwidth_hz": r.bandwidth_hz,
            "band": None if r.band is None else _edges_doc(r.band),
            "delta_best_f_hz": r.delta_best_f_hz, "delta_bandwidth_hz": r.delta_bandwidth_hz,
            "threshold_bands": [dict(_edges_doc(t.band), bandwidth_hz=t.band.bandwidth_hz, holds_best=t.holds_best,
                                     delta_center_hz=t.delta_center_hz, delta_bandwidth_hz=t.delta_bandwidth_hz)
                                for t in r.threshold_bands],
            "noise_crossings": [_edges_doc(b) for b in r.noise_crossings],
            "bands": [{"name": w.name, "f_low_hz": w.f_low_hz, "f_high_hz": w.f_high_hz, "covered": w.covered,
                       "limit_return_loss_db": w.limit_return_loss_db,
                       "worst_return_loss_db": w.worst_return_loss_db, "worst_s11_db": w.worst_s11_db,
                       "worst_f_hz": w.worst_f_hz, "worst_mismatch_loss_db": w.worst_mismatch_loss_db,
                       "margin_db": w.margin_db, "pass": w.passed, "samples": w.samples,
                       "delta_worst_return_loss_db": d, "reason": w.reason or None}
                      for w, d in zip(r.bands, r.delta_worst_return_loss_db, strict=True)],
        })
        if r.spec is not None:
            rows[-1]["spec_pass"] = r.spec.passed
            rows[-1]["requirements"] = [dict(requirement_doc(q), delta_margin=d)
                                        for q, d in zip(r.spec.requirements, r.delta_margin, strict=True)]
    return {"baseline": c.baseline, "threshold_return_loss_db": c.threshold_return_loss_db, "rows": rows,
            "band_verdicts": [{"name": v.name, "f_low_hz": v.f_low_hz, "f_high_hz": v.f_high_hz,
                               "limit_return_loss_db": v.limit_return_loss_db, "best_file": v.best_file,
                               "best_worst_return_loss_db": v.best_worst_return_loss_db,
                               "passing_files": list(v.passing_files), "uncovered_files": list(v.uncovered_files),
                               "verdict": band_verdict_sentence(v)} for v in c.verdicts],
            "spec": c.spec_path,
            "spec_verdicts": [{"name": v.name, "key": v.key, "unit": v.unit, "best_file": v.best_file,
                               "best_margin": None if v.best is None else (
                                   v.best.margin_db if v.best.margin_db is not None else v.best.margin_hz),
                               "passing_files": list(v.passing_files), "failing_files": list(v.failing_files),
                               "unevaluated_files": list(v.unevaluated_files),
                               "verdict": requirement_verdict_sentence(v)}
                              for v in c.spec_verdicts],
            "pass": None if c.spec_path is None else not c.spec_failed,
            "warnings": list(c.warnings)}


# --- budget --------------------------------------------------------------------------------------

def _end_doc(e) -> dict[str, Any]:
    return {"source": e.source, "gamma_mag": e.gamma_mag, "mismatch_loss_db": e.mismatch_loss_db,
            "gain_dbi": e.gain_dbi, "aperture_m2": e.aperture_m2, "cable_loss_db": e.cable_loss_db}


def budget_point_doc(p) -> dict[str, Any]:
    """Everything known at one frequency of a budget (a ``budget.BudgetPoint``)."""
    return {
        "f_hz": p.f_hz, "wavelength_m": p.wavelength_m,
        "rows": [{"name": r.name, "value_db": r.value_db, "total_dbm": r.total_dbm} for r in p.rows],
        "eirp_dbm": p.eirp_dbm, "received_power_dbm": p.received_power_dbm, "margin_db": p.margin_db,
        "path_loss_db": p.path_loss_db, "free_space_path_loss_db": p.free_space_path_loss_db,
        "polarization_loss_db": p.polarization_loss_db, "mismatch_loss_db": p.mismatch_loss_db,
        "max_range_m": p.max_range_m, "zero_margin_range_m": p.zero_margin_range_m,
        "max_range_model_m": p.max_range_model_m, "zero_margin_range_model_m": p.zero_margin_range_model_m,
        "matched_range_m": p.matched_range_m, "mismatch_range_cost_m": p.mismatch_range_cost_m,
        "mismatch_range_cost_fraction": p.mismatch_range_cost_fraction,
        "tx": _end_doc(p.tx), "rx": _end_doc(p.rx),
    }


def budget_doc(res) -> dict[str, Any]:
    """The ``budget --json`` document (a ``budget.BudgetResult``): the worst frequency's values at
    the top (``max_range_m`` is the free-space range, as the contract says; ``max_range_model_m``
    the range in the model in use), every frequency listed."""
    w = res.worst
    doc: dict[str, Any] = {"file": res.path}
    doc.update(budget_point_doc(w))
    doc.update({
        "worst_f_hz": w.f_hz,
        "distance_m": res.distance_m, "tx_power_dbm": res.tx_power_dbm,
        "rx_sensitivity_dbm": res.rx_sensitivity_dbm, "fade_margin_db": res.fade_margin_db,
        "required_margin_db": res.required_margin_db,
        "path_loss_model": {"kind": res.path_loss_model, "exponent": res.path_loss_exponent,
                            "reference_distance_m": res.reference_distance_m},
        "eirp_limit_dbm": res.eirp_limit_dbm, "eirp_over_limit": res.eirp_over_limit,
        "band": None if res.band is None else {"f_low_hz": res.band[0], "f_high_hz": res.band[1]},
        "pass": res.closes,
        "frequencies": [budget_point_doc(p) for p in res.points],
        "warnings": list(res.warnings),
    })
    return doc


# --- plot and report -----------------------------------------------------------------------------

def plot_doc(out: str, inputs, kinds, warnings, passed: bool | None = None,
             failing_files=()) -> dict[str, Any]:
    """The ``plot --json`` document: the picture written, its inputs and kinds; with a spec,
    ``pass`` and the failing files (null / empty without one)."""
    return {"out": str(out), "inputs": [str(x) for x in inputs], "kinds": list(kinds), "pass": passed,
            "failing_files": list(failing_files), "warnings": list(warnings)}


def report_doc(out: str, inputs, passed: bool, judged: bool, failing_files=(), budget_closes: bool | None = None,
               warnings=()) -> dict[str, Any]:
    """The ``report --json`` document: the page written, its inputs, the verdict (``pass``; whether
    anything was judged: a spec or a budget), the files failing the spec and whether the budget closes."""
    return {"out": str(out), "inputs": [str(x) for x in inputs], "pass": passed, "judged": judged,
            "failing_files": list(failing_files), "budget_pass": budget_closes, "warnings": list(warnings)}

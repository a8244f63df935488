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


# --- check ---------------------------------------------------------------------------------------

def requirement_doc(r) -> dict[str, Any]:
    """The contract's requirement entry (a ``spec.RequirementResult``; plus unit, band, reason and,
    for multi-port specs, ``port`` / ``ports`` fields)."""
    doc = {"name": r.name, "pass": r.passed, "limit": r.limit, "worst": r.worst, "worst_f_hz": r.worst_f_hz,
           "margin_db": r.margin_db, "key": r.key, "unit": r.unit, "f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz,
           "worst_return_loss_db": r.worst_return_loss_db, "margin_hz": r.margin_hz, "samples": r.samples,
           "reason": r.reason or None}
    for k in ("port", "ports"):
        v = getattr(r, k, None)
        if v is not None:
            doc[k] = list(v) if k == "ports" else v
    return doc


def unit_doc(u, sha256: str | None = None, time_s: float | None = None) -> dict[str, Any]:
    """One ``files`` entry of ``check --json`` (a ``spec.UnitResult``)."""
    doc = {"file": u.file, "pass": u.passed, "error": u.error, "best_f_hz": u.best_f_hz,
           "best_return_loss_db": u.best_return_loss_db, "requirements": [requirement_doc(r) for r in u.requirements]}
    if sha256 is not None:
        doc["sha256"] = sha256
    return doc


def worst_doc(w) -> dict[str, Any]:
    return {"file": w.file, "requirement": w.requirement, "margin_db": w.margin_db, "margin_hz": w.margin_hz,
            "relative_margin": w.relative_margin, "pass": w.passed}


def summary_doc(s) -> dict[str, Any]:
    """The lot summary (a ``batch.LotSummary``)."""
    return {"units": s.units, "passed": s.passed, "failed": s.failed, "errors": s.errors,
            "yield_fraction": s.yield_fraction,
            "yield": [{"name": y.name, "passed": y.passed, "evaluated": y.evaluated, "yield_fraction": y.yield_fraction}
                      for y in s.yields],
            "resonance_f_hz": {"min": s.resonance_min_hz, "median": s.resonance_median_hz, "max": s.resonance_max_hz},
            "worst_units": [worst_doc(w) for w in s.worst]}


def check_doc(lot, store_info=None, store_error: str | None = None, lot_name: str | None = None) -> dict[str, Any]:
    """The ``check --json`` document of a ``batch.LotResult`` (keys per the interface contract,
    plus the summary, the shard, and where the results were stored)."""
    doc: dict[str, Any] = {"pass": lot.passed, "spec": lot.spec.path,
                           "files": [unit_doc(c.result, c.sha256) for c in lot.units]}
    if len(lot.units) > 1 or lot.shard is not None:
        doc["summary"] = summary_doc(lot.summary)
    if lot.shard is not None:
        doc["shard"] = {"k": lot.shard[0], "n": lot.shard[1], "inputs_total": lot.inputs_total}
    if lot_name is not None:
        doc["lot"] = lot_name
    if store_info is not None:
        doc["store"] = {"url": store_info.url, "lot": store_info.lot, "station": store_info.station,
                        "added": store_info.added, "duplicates": store_info.duplicates, "error": None}
    elif store_error is not None:
        doc["store"] = {"error": store_error}
    doc["warnings"] = list(lot.warnings)
    return doc


# --- history -------------------------------------------------------------------------------------

def _time(t) -> str | None:
    return t.strftime("%Y-%m-%dT%H:%M:%SZ") if t is not None else None


def history_doc(h) -> dict[str, Any]:
    """The ``history --json`` document (a ``history.HistoryResult``)."""
    lots = []
    for lt in h.lots:
        lots.append({
            "lot": lt.lot, "units": lt.units, "passed": lt.passed, "failed": lt.failed, "errors": lt.errors,
            "yield_fraction": lt.yield_fraction, "specs": list(lt.specs), "stations": list(lt.stations),
            "first_at": _time(lt.first_at), "last_at": _time(lt.last_at),
            "requirements": [{"name": r.name, "key": r.key, "evaluated": r.evaluated, "passed": r.passed,
                              "yield_fraction": r.yield_fraction, "n_values": r.n_values, "mean": r.mean, "std": r.std,
                              "min": r.min, "max": r.max, "limit": r.limit, "f_low_hz": r.f_low_hz,
                              "f_high_hz": r.f_high_hz, "cpk": r.cpk, "cpk_side": r.cpk_side,
                              "cpk_reason": r.cpk_reason or None} for r in lt.requirements],
            "resonance_f_hz": {"n": lt.resonance_n, "mean": lt.resonance_mean_hz, "std": lt.resonance_std_hz,
                               "min": lt.resonance_min_hz, "max": lt.resonance_max_hz},
            "worst_units": [{"file": w.file, "station": w.station, "requirement": w.requirement,
                             "margin_db": w.margin_db, "margin_hz": w.margin_hz, "relative_margin": w.relative_margin,
                             "pass": w.passed} for w in lt.worst],
        })
    return {"stores": list(h.stores), "filters": {"lot": h.lot, "since": _time(h.since), "spec": h.spec},
            "lots": lots, "warnings": list(h.warnings)}

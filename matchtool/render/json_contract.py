"""The whole JSON interface contract (the keys the README and ``docs/`` promise to scripts): one function per document, each
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
        "min_band_width_hz": s.min_band_width_hz,
        "noise_crossings": [band_doc(b) for b in s.noise_crossings],
        "at": [point_doc(p) for p in s.at],
        "warnings": list(s.warnings),
    }


def _port_line(s) -> dict[str, Any]:
    """One port's best match and bands (a ``summary.SweepSummary``)."""
    return {"port": s.port, "best": point_doc(s.best), "bands": [band_doc(b) for b in s.bands],
            "noise_crossings": [band_doc(b) for b in s.noise_crossings]}


def inspect_overview_doc(m) -> dict[str, Any]:
    """``inspect --json`` of an N-port file without ``--port`` (a ``summary.PortsSummary``): the
    one-port document of ``detail_port``, plus ``nports`` and ``port_summary`` (every port's best
    match and bands)."""
    doc = inspect_doc(m.port(m.detail_port))
    doc["nports"] = m.nports
    doc["port_summary"] = [_port_line(s) for s in m.ports]
    doc["warnings"] = list(m.warnings)
    return doc


def inspect_ports_doc(m) -> dict[str, Any]:
    """``inspect --json --port all`` (a ``summary.PortsSummary``): the file-level keys once, and
    ``ports`` [ {``port``, ...the one-port keys...} ]."""
    first = m.ports[0]
    ports = []
    for s in m.ports:
        d = inspect_doc(s)
        d.pop("warnings")
        ports.append(d)
    return {"file": m.path, "nports": m.nports, "z0_ohm": first.z0_ohm, "points": first.points,
            "f_start_hz": first.f_start_hz, "f_stop_hz": first.f_stop_hz,
            "threshold_return_loss_db": first.threshold_return_loss_db, "ports": ports,
            "warnings": list(m.warnings)}


# --- check ---------------------------------------------------------------------------------------

def requirement_doc(r) -> dict[str, Any]:
    """The contract's requirement entry (a ``spec.RequirementResult``; plus unit, band, reason and,
    for multi-port specs, ``port`` / ``ports`` fields)."""
    doc = {"name": r.name, "pass": r.passed, "limit": r.limit, "worst": r.worst, "worst_f_hz": r.worst_f_hz,
           "margin_db": r.margin_db, "key": r.key, "unit": r.unit, "f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz,
           "worst_return_loss_db": r.worst_return_loss_db, "margin_hz": r.margin_hz, "samples": r.samples,
           "reason": r.reason or None}
    if r.ports is not None:
        doc["ports"] = list(r.ports)
    else:
        doc["port"] = r.port
    if r.checked:
        doc["checked"] = r.checked
    if r.margin_ecc is not None:
        doc["margin_ecc"] = r.margin_ecc
    return doc


def unit_doc(u, sha256: str | None = None, time_s: float | None = None) -> dict[str, Any]:
    """One ``files`` entry of ``check --json`` (a ``spec.UnitResult``)."""
    doc = {"file": u.file, "pass": u.passed, "error": u.error, "best_f_hz": u.best_f_hz,
           "best_return_loss_db": u.best_return_loss_db, "requirements": [requirement_doc(r) for r in u.requirements]}
    if sha256 is not None:
        doc["sha256"] = sha256
    return doc


def worst_doc(w) -> dict[str, Any]:
    """One ``worst_units`` entry (a ``batch.WorstUnit`` or ``history.StoredWorst``): ``ranked_by``
    is ``"requirement"`` for the worst unit of that requirement (margin in its own unit) and
    ``"relative_margin"`` for the other units, ranked across requirements by ``relative_margin``."""
    doc = {"file": w.file, "requirement": w.requirement, "margin_db": w.margin_db, "margin_hz": w.margin_hz,
           "relative_margin": w.relative_margin, "pass": w.passed, "ranked_by": w.ranked_by}
    if getattr(w, "margin_ecc", None) is not None:
        doc["margin_ecc"] = w.margin_ecc
    return doc


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
            "worst_units": [{"file": w.file, "station": w.station, **worst_doc(w)} for w in lt.worst],
        })
    return {"stores": list(h.stores), "filters": {"lot": h.lot, "since": _time(h.since), "spec": h.spec},
            "lots": lots, "warnings": list(h.warnings)}
# --- coupling ------------------------------------------------------------------------------------

ECC_NOTE = ("ECC is computed from S-parameters, which assumes lossless antennas (1 - sum |S_nk|^2 is taken as "
            "the radiated power); it becomes optimistic (too low) as the radiation efficiency drops, and a "
            "measured pattern is needed then")


def tarc_note(t) -> str:
    """How the excitation phases of a TARC were swept (a ``coupling.TarcResult``)."""
    k = len(t.ports)
    grid = (f"a = [1, e^(j theta)] with theta on a {t.phase_step_deg:g}-degree grid" if k == 2 else
            f"unit amplitudes on ports {', '.join(map(str, t.ports))} with every combination of relative phases "
            f"on a {t.phase_step_deg:g}-degree grid ({t.excitations} excitations)")
    return (f"TARC = |S a| / |a| (other ports terminated): {grid}; each frequency's worst and best polished to the "
            "extreme (exact one-phase-at-a-time steps" + (", exact for two ports)" if k == 2 else
                                                          ", then Newton's steps on the phases)"))


def _band_range(b) -> dict[str, Any]:
    return {"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "clipped_low": b.clipped_low,
            "clipped_high": b.clipped_high}


def _checked(p) -> str:
    i, j = p.ports
    return f"S{i}{j} (equal to S{j}{i} in the file)" if p.reciprocal else f"S{i}{j} and S{j}{i}"


def coupling_doc(r) -> dict[str, Any]:
    """The ``coupling --json`` document (a ``coupling.CouplingResult``)."""
    t = r.tarc
    doc: dict[str, Any] = {
        "file": r.path, "nports": r.nports, "z0_ohm": r.z0_ohm, "points": int(r.f_hz.size),
        "bands": [{"f_low_hz": lo, "f_high_hz": hi} for lo, hi in r.bands],
        "f_hz": r.f_hz,
        "pairs": [{
            "ports": list(p.ports), "reciprocal": p.reciprocal, "checked": _checked(p),
            "ecc_undefined_points": p.ecc_undefined, "ecc_clipped_points": p.ecc_clipped,
            "bands": [{"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "min_isolation_db": b.min_isolation_db,
                       "f_min_isolation_hz": b.f_min_isolation_hz,
                       "isolation_from": f"S{b.isolation_direction[0]}{b.isolation_direction[1]}",
                       "max_ecc": b.max_ecc, "f_max_ecc_hz": b.f_max_ecc_hz, "samples": b.samples}
                      for b in p.bands],
            "isolation_db": p.isolation_db, "ecc": p.ecc,
        } for p in r.pairs],
        "notes": [ECC_NOTE],
    }
    if t is not None:
        doc["tarc"] = {"ports": list(t.ports), "f_hz": t.f_hz, "worst_db": t.worst_db, "best_db": t.best_db,
                       "bands_10db": [_band_range(b) for b in t.bands_10db],
                       "bands": [{"f_low_hz": lo, "f_high_hz": hi, "worst_db": w, "f_worst_hz": fw}
                                 for (lo, hi), w, fw in zip(r.bands, t.band_worst_db, t.band_worst_f_hz,
                                                            strict=True)],
                       "phase_step_deg": t.phase_step_deg, "excitations": t.excitations}
        doc["notes"].append(tarc_note(t))
    doc["warnings"] = list(r.warnings)
    return doc


# --- feedline ------------------------------------------------------------------------------------

def _feed_end_doc(g: complex) -> dict[str, Any]:
    from .. import reflection as rf

    return {"gamma_re": g.real, "gamma_im": g.imag, "gamma_mag": abs(g), "return_loss_db": float(rf.return_loss_db(g)),
            "s11_db": float(rf.s11_db(g)), "vswr": float(rf.vswr(g)), "mismatch_loss_db": float(rf.mismatch_loss_db(g))}


def feed_point_docs(feed) -> list[dict[str, Any]]:
    """One ``at`` entry per frequency of a ``feedline.FeedPoints``."""
    import math

    from .text.feedline import point_masking

    cols = {
        "one_way_loss_db": feed.one_way_loss_db, "two_way_loss_db": feed.two_way_loss_db,
        "matched_loss_db": feed.matched_loss_db, "dissipative_loss_db": feed.dissipative_loss_db,
        "return_loss_improvement_db": feed.return_loss_improvement_db,
        "cable_share_db": feed.cable_share_db, "line_loss_db": feed.line_loss_db,
        "total_feed_loss_db": feed.total_feed_loss_db,
    }
    bad = feed.nonphysical
    out = []
    for k, f in enumerate(feed.f_hz):
        d: dict[str, Any] = {"f_hz": float(f)}
        d.update({name: float(v[k]) for name, v in cols.items()})
        if math.isnan(d["matched_loss_db"]):
            d["matched_loss_db"] = None  # only a cable model has one; not a defect worth a warning
        d["radio"] = _feed_end_doc(complex(feed.gamma_radio[k]))
        d["antenna"] = _feed_end_doc(complex(feed.gamma_antenna[k]))
        d["nonphysical"] = bool(bad[k])
        d["masking"] = point_masking(feed, k)
        out.append(d)
    return out


def feed_band_doc(b, whole: bool) -> dict[str, Any]:
    """One band's worst cases (a ``feedline.BandWorst``)."""
    from .text.feedline import band_masking

    d = {k: getattr(b, k) for k in b.__dataclass_fields__}
    d["whole_sweep"] = whole
    d["masking"] = band_masking(b)
    return d


def cable_doc(cable) -> dict[str, Any]:
    """The cable of a feedline result (model, delay or measured file)."""
    from .. import feedline as fl
    from .text.feedline import describe_cable

    d: dict[str, Any] = {"kind": cable.kind, "description": describe_cable(cable)}
    if isinstance(cable, fl.CableModel):
        d.update(length_m=cable.length_m, velocity_factor=cable.velocity_factor, loss_db_per_m=cable.loss_db_per_m,
                 loss_ref_hz=cable.loss_ref_hz, dielectric_loss_db_per_m=cable.dielectric_loss_db_per_m,
                 cable_z0_ohm=cable.z0_ohm, delay_s=cable.delay_s() if cable.velocity_factor else None)
    elif isinstance(cable, fl.Delay):
        d.update(delay_s=cable.delay_s)
    else:
        d.update(file=cable.path, flipped=cable.flipped, points=int(cable.f_hz.size))
    return d


def feedline_doc(r, out: str | None = None) -> dict[str, Any]:
    """The ``feedline --json`` document of a ``feedline.FeedlineResult``; ``out`` names the file written.

    ``band`` is the first band asked for (or the whole sweep); ``bands`` holds every one."""
    from .text.feedline import LIVE_FEED_CAUTION

    bands = [feed_band_doc(b, r.whole_sweep) for b in r.bands]
    return {
        "file": r.path, "port": r.port, "z0_ohm": r.z0_ohm, "points": r.points, "toward": r.toward,
        "cable": cable_doc(r.cable), "out": out,
        "at": feed_point_docs(r.feed_at) if r.feed_at is not None else [],
        "band": bands[0], "bands": bands,
        "nonphysical_points": r.nonphysical_points,
        "caution": LIVE_FEED_CAUTION,
        "warnings": list(r.warnings),
    }


# --- locate --------------------------------------------------------------------------------------

def _db_list(mag) -> list[float]:
    import numpy as np

    return [float(x) for x in 20.0 * np.log10(np.asarray(mag, dtype=float))]


def locate_peak_doc(p) -> dict[str, Any]:
    """One reflection (a ``locate.Peak``)."""
    return {"distance_m": p.distance_m, "return_loss_db": p.return_loss_db, "reflection_mag": p.reflection_mag,
            "round_trip_s": p.round_trip_s, "raw_return_loss_db": p.raw_return_loss_db,
            "raw_reflection_mag": p.raw_reflection_mag, "two_way_loss_db": p.two_way_loss_db,
            "kind": p.kind, "step_change": p.step_change}


def locate_gate_doc(g) -> dict[str, Any]:
    """The gate and the gated band metrics (a ``locate.GateResult``)."""
    return {"start_m": g.start_m, "stop_m": g.stop_m, "start_s": g.start_s, "stop_s": g.stop_s,
            "shape": "flat with raised-cosine edges", "taper_m": g.taper_m, "edge_hz": g.edge_hz,
            "band": {"f_low_hz": g.f_low_hz, "f_high_hz": g.f_high_hz,
                     "worst_return_loss_before_db": g.worst_return_loss_before_db,
                     "worst_return_loss_before_f_hz": g.worst_return_loss_before_f_hz,
                     "worst_return_loss_after_db": g.worst_return_loss_after_db,
                     "worst_return_loss_after_f_hz": g.worst_return_loss_after_f_hz,
                     "worst_return_loss_after_compensated_db": g.worst_return_loss_after_compensated_db,
                     "compensated_at_m": g.compensated_at_m, "in_edge_region": g.band_in_edge},
            "max_gamma_mag": g.max_gamma_mag, "nonphysical_points": g.nonphysical_points}


def locate_doc(r, out: str | None = None, uncompensated: bool = False) -> dict[str, Any]:
    """The ``locate --json`` document of a ``locate.LocateResult``. ``distance_m`` / ``reflection_db``
    are the sampled trace (loss compensated; ``reflection_uncompensated_db`` too when asked)."""
    from .text.locate import CAUTIONS, mode_text, reading

    w = r.window
    doc: dict[str, Any] = {
        "file": r.path, "port": r.port, "z0_ohm": r.z0_ohm, "points": r.points,
        "f_start_hz": r.f_start_hz, "f_stop_hz": r.f_stop_hz, "f_step_hz": r.f_step_hz,
        "velocity_factor": r.velocity_factor,
        "cable": {"loss_db_per_m": r.cable.loss_db_per_m, "loss_ref_hz": r.cable.loss_ref_hz,
                  "dielectric_loss_db_per_m": r.cable.dielectric_loss_db_per_m},
        "loss_compensated": r.loss_compensated,
        "resolution_m": r.resolution_m, "resolution_base_m": r.resolution_base_m,
        "transform_span_hz": r.transform_span_hz, "max_range_m": r.max_range_m, "view_max_m": r.view_max_m,
        "window": w.name,
        "window_info": {"label": w.label, "sidelobe_db": w.sidelobe_db, "mainlobe_6db_bins": w.mainlobe_6db_bins,
                        "resolution_widening": w.widening},
        "mode": r.mode, "mode_requested": r.mode_requested, "mode_note": mode_text(r),
        "extrapolated_points": r.extrapolated_points,
        "floor_return_loss_db": None if r.floor_mag <= 0 else -_db_list([r.floor_mag])[0],
        "min_separation_m": r.min_separation_m,
        "peaks": [locate_peak_doc(p) for p in r.peaks],
        "reading": reading(r),
        "distance_m": [float(x) for x in r.trace_distance_m],
        "reflection_db": _db_list(r.trace_reflection_mag),
        "out": out,
        "cautions": list(CAUTIONS),
        "warnings": list(r.warnings),
    }
    if uncompensated:
        doc["reflection_uncompensated_db"] = _db_list(r.trace_raw_reflection_mag)
    if r.gate is not None:
        doc["gate"] = locate_gate_doc(r.gate)
    return doc
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
        "efficiency_unit": r.efficiency_unit, "efficiency_reliable": r.efficiency_reliable,
        "at_resonance": r.at_resonance, "tuning_reactance_ohm": r.tuning_reactance_ohm,
        "radiansphere_radius_m": r.radiansphere_radius_m,
        "sphere_cap_resonance_radius_m": r.sphere_cap_resonance_radius_m,
        "warnings": list(r.warnings),
    }
# --- compare -------------------------------------------------------------------------------------

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
    from ..budget import TX_CAUTION_GAMMA

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
        "max_eirp_dbm": res.max_eirp_dbm, "max_eirp_f_hz": res.max_eirp_f_hz,
        "tx_vswr_caution": any(p.tx.source != "none" and p.tx.gamma_mag > TX_CAUTION_GAMMA for p in res.points),
        "band": None if res.band is None else {"f_low_hz": res.band[0], "f_high_hz": res.band[1]},
        "link_closes": res.closes,
        "pass": res.passed,  # the exit status: the link closes and no frequency exceeds the EIRP limit
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
               warnings=(), sections=()) -> dict[str, Any]:
    """The ``report --json`` document: the page written, its inputs, the verdict (``pass``; whether
    anything was judged: a spec or a budget), the files failing the spec, whether the budget closes
    and the ids of the page's sections, in page order."""
    # nothing judged (no spec, no budget): no verdict, as 'plot --json' gives (null, not a pass)
    return {"out": str(out), "inputs": [str(x) for x in inputs], "pass": passed if judged else None, "judged": judged,
            "failing_files": list(failing_files), "budget_pass": budget_closes, "sections": list(sections),
            "warnings": list(warnings)}


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
    lib = getattr(r, "parts_library", None)
    with_parts = [c for c in r.candidates if c.elements]

    def element_doc(c, e, k: int = 0) -> dict[str, Any]:
        d = {"kind": e.kind, "connection": e.connection, "value": e.value, "unit": e.unit,
             "position": e.position, "notes": [n.flag for n in c.notes if n.position == e.position]}
        if c.parts:
            p = c.parts[k]
            d["part"] = {"label": p.label, "tolerance": p.tolerance, "measured": p.measured, "file": p.file,
                         "q": p.q, "q_ref_hz": p.q_ref_hz, "srf_hz": p.srf_hz,
                         "model": ("measured 2-port in series" if e.connection == "series" else
                                   "shunt Y = 1/Z, Z = 2 Z0 (1 - S21) / S21 of the measurement") if p.measured
                         else ("ideal" if p.ideal else "equivalent circuit (docs/parts.md)")}
        return d

    def ideal_doc(c) -> dict[str, Any] | None:
        i = c.ideal
        if i is None:
            return None
        return {"worst_return_loss_db": i.worst_return_loss_db, "worst_delivered_fraction": i.worst_delivered_fraction,
                "min_margin_db": i.min_margin_db, "bands": [band_doc(b) for b in i.bands],
                "per_band": [band_outcome(o) for o in i.per_band],
                "worst_return_loss_change_db": c.worst_return_loss_db - i.worst_return_loss_db}

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
        "q_model": ("the library's parts as measured or modelled" if lib is not None
                    else "constant Q: series resistance |X|/Q at every frequency"),
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
            "elements": [element_doc(c, e, k) for k, e in enumerate(c.elements)],
            "positions": [{"position": p.position, "connection": p.connection, "fitted": p.fitted}
                          for p in c.positions],
            "worst_return_loss_db": c.worst_return_loss_db, "return_loss_at_f0_db": c.return_loss_at_f0_db,
            "network_loss_db": c.network_loss_db, "worst_delivered_fraction": c.worst_delivered_fraction,
            "min_margin_db": c.min_margin_db, "meets_threshold": c.meets_threshold,
            "per_band": [band_outcome(o) for o in c.per_band],
            "passes_dc": c.passes_dc, "dc_path": c.dc_path, "dc": dc_words(c.dc_path), "filter": c.filter,
            "bands": [band_doc(b) for b in c.bands], "yield_fraction": c.yield_fraction,
            "as_ideal_parts": ideal_doc(c),
        } for i, c in enumerate(r.candidates)],
        "parts_library": None if lib is None else {
            "name": lib.name or None, "path": lib.path, "parts": len(lib.parts),
            "measured": sum(p.measured for p in lib.parts),
            "shunt_model": "Y = 1/Z with Z = 2 Z0 (1 - S21) / S21 for a measured part",
            "value_shift": "Z(f) + Z_ideal(v + dv) - Z_ideal(v): parasitics kept"},
        "bode_fano": bf_for(opt[0]) if opt and opt[0].bound is not None else None,
        "bode_fano_per_band": [bf_for(t) for t in opt if not t.target.is_point],
        "yield": None if ys is None else {
            "tolerance_inductor_pct": None if lib else 100 * ys.tolerance_l,
            "tolerance_capacitor_pct": None if lib else 100 * ys.tolerance_c,
            "tolerance_inductor_h": ys.tolerance_l_h, "tolerance_capacitor_f": ys.tolerance_c_f,
            "small_capacitor_tolerance_f": ys.small_c_tolerance_f,
            "description": "each part within its own tolerance from the library" if lib else tolerance_text(ys),
            "trials": ys.trials, "seed": ys.seed, "distribution": "uniform within +-tolerance",
            "threshold_return_loss_db": r.threshold_return_loss_db,
            "best_fraction": r.candidates[0].yield_fraction if r.candidates else None,
        },
        "warnings": list(r.warnings),
    }

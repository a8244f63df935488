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


def _port_line(s) -> dict[str, Any]:
    """One port's best match and bands (a ``summary.SweepSummary``)."""
    return {"port": s.port, "best": point_doc(s.best), "bands": [band_doc(b) for b in s.bands]}


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

"""``matchtool budget FILE.toml``: Friis link budget with the measured mismatch of both antennas."""

from __future__ import annotations

import math
from typing import Annotated, Any

import typer

from ..budget import BudgetPoint, BudgetResult, budget
from ..units import format_frequency as ff
from .common import JsonOpt, console, emit_json, fmt, warn

HELP = """Link budget (Friis, in dB) from a TOML file, with the mismatch of the measured antenna sweeps.

Rows: transmit power, cable, mismatch (1 - |Gamma|^2 from the sweep at the frequency, interpolated),
antenna gain, path loss, polarization loss (cos^2 of the angle), then the receive side; the received
power, the margin over the receiver sensitivity, the EIRP, and the range at which the margin falls to
the required fade margin (zero when none is set), with what the mismatch alone costs in range.

Exit status: 0 when the margin meets the required margin at every frequency, 1 when it does not,
2 when the file cannot be used.

CAUTION: this is a path-loss model estimate (free space, or log-distance when path_loss_exponent is
set), not a coverage prediction (ground, walls, bodies and fading
change the real range). EIRP and RF exposure limits are set by local regulation; eirp_limit_dbm is a
number you take from your own regulation and the tool only compares against it. A high VSWR can damage a transmitter's
amplifier. The tool computes; it does not certify a radio.
"""

EPILOG = """Examples:

  matchtool budget sample_sweeps/link_915.toml

  matchtool budget link.toml --json

Budget file keys: f_hz (or f_low, f_high with step or points), distance_m, tx_power_dbm,
tx_gain_dbi or tx_aperture_m2, tx_cable_loss_db or [tx_cable], tx_sweep or tx_vswr, the same with
rx_, polarization_angle_deg or polarization_loss_db, rx_sensitivity_dbm, fade_margin_db,
path_loss_exponent with reference_distance_m, eirp_limit_dbm. See docs/budget.md.
"""


def _end_doc(e) -> dict[str, Any]:
    return {"source": e.source, "gamma_mag": e.gamma_mag, "mismatch_loss_db": e.mismatch_loss_db,
            "gain_dbi": e.gain_dbi, "aperture_m2": e.aperture_m2, "cable_loss_db": e.cable_loss_db}


def point_doc(p: BudgetPoint) -> dict[str, Any]:
    """Everything known at one frequency (the contract's keys plus the ranges and both ends)."""
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


def budget_doc(res: BudgetResult) -> dict[str, Any]:
    """The ``budget --json`` document: the worst frequency's values at the top, every frequency listed."""
    w = res.worst
    doc = {"file": res.path}
    doc.update(point_doc(w))
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
        "frequencies": [point_doc(p) for p in res.points],
        "warnings": list(res.warnings),
    })
    return doc


def _m(x: float) -> str:
    if math.isinf(x):
        return "unbounded"
    if x >= 10_000:
        return f"{x / 1000:.2f} km"
    return f"{x:.1f} m"


def _range_line(label: str, required_margin_db: float, range_m: float, zero_margin_range_m: float) -> str:
    """One range line; the zero-margin range only when a margin is required (else it is the same)."""
    if required_margin_db == 0:
        return f"{label} range at zero margin (no fade margin set): {_m(zero_margin_range_m)}"
    return (f"{label} range, margin {required_margin_db:g} dB: {_m(range_m)}; "
            f"at zero margin: {_m(zero_margin_range_m)}")


def render_budget(res: BudgetResult) -> None:
    """Terminal view: the budget table (worst frequency), the results, and a per-frequency table for a band."""
    from rich.table import Table

    c = console()
    w = res.worst
    where = f"at {ff(w.f_hz)}" if res.band is None else f"at {ff(w.f_hz)}, the worst frequency of the band"
    c.print(f"[bold]{res.path}[/bold]  link budget {where}, distance {_m(res.distance_m)}, "
            f"path loss model: {res.path_loss_model}"
            + ("" if res.path_loss_exponent is None else
               f" (n = {res.path_loss_exponent:g} beyond {res.reference_distance_m:g} m)"))
    t = Table(show_edge=False)
    t.add_column("item")
    t.add_column("dB", justify="right")
    t.add_column("running total dBm", justify="right")
    for r in w.rows:
        t.add_row(r.name, fmt(r.value_db, 3), fmt(r.total_dbm, 2))
    c.print(t)
    c.print(f"EIRP                      {fmt(w.eirp_dbm)} dBm"
            + ("" if res.eirp_limit_dbm is None else
               f"  (your limit {res.eirp_limit_dbm:g} dBm: {'EXCEEDED' if w.eirp_dbm > res.eirp_limit_dbm else 'met'})"))
    c.print(f"received power            {fmt(w.received_power_dbm)} dBm")
    c.print(f"sensitivity               {fmt(res.rx_sensitivity_dbm)} dBm")
    c.print(f"margin                    {fmt(w.margin_db)} dB (required {res.required_margin_db:g} dB: "
            f"{'met' if w.margin_db >= res.required_margin_db else 'NOT MET'})")
    cross = math.isinf(w.polarization_loss_db)
    if cross:
        c.print("range                     none: the antennas are cross-polarised (no link in the ideal model)")
    else:
        c.print(_range_line("free-space", res.required_margin_db, w.max_range_m, w.zero_margin_range_m))
        if res.path_loss_exponent is not None:
            c.print(_range_line(res.path_loss_model, res.required_margin_db, w.max_range_model_m,
                                w.zero_margin_range_model_m))
    if not cross:
        c.print(f"mismatch (tx {fmt(w.tx.mismatch_loss_db, 3)} dB + rx {fmt(w.rx.mismatch_loss_db, 3)} dB) costs "
                f"{_m(w.mismatch_range_cost_m)} of range ({fmt(100 * w.mismatch_range_cost_fraction, 1)} %); "
                f"perfectly matched antennas would reach {_m(w.matched_range_m)}")
    if res.band is not None:
        t = Table(title="Per frequency", title_justify="left", show_edge=False)
        for col in ("frequency", "tx mismatch dB", "rx mismatch dB", "EIRP dBm", "received dBm", "margin dB",
                    f"range m ({res.path_loss_model}, margin {res.required_margin_db:g} dB)"):
            t.add_column(col, justify="right")
        for p in res.points:
            t.add_row(ff(p.f_hz), fmt(p.tx.mismatch_loss_db, 3), fmt(p.rx.mismatch_loss_db, 3), fmt(p.eirp_dbm),
                      fmt(p.received_power_dbm), fmt(p.margin_db), fmt(p.max_range_model_m, 1))
        c.print(t)
    c.print(f"[dim]{estimate_words(res)}, not a coverage prediction; EIRP and RF exposure limits are set by "
            "local regulation.[/dim]")


def estimate_words(res) -> str:
    """'A free-space estimate' or 'A log-distance estimate (...)', for the budget's footers."""
    if res.path_loss_exponent is None:
        return "A free-space estimate"
    return (f"A log-distance estimate (exponent {res.path_loss_exponent:g} beyond "
            f"{res.reference_distance_m:g} m, an assumed environment)")


def register(app: typer.Typer) -> None:
    @app.command("budget", help=HELP, epilog=EPILOG)
    def budget_cmd(
        file: Annotated[str, typer.Argument(metavar="FILE.toml", help="Budget file (TOML).", show_default=False)],
        json_out: JsonOpt = False,
    ) -> int:
        res = budget(file)
        if json_out:
            emit_json(budget_doc(res))
        else:
            render_budget(res)
            warn(list(res.warnings))
        return 0 if res.closes else 1

"""Terminal view of ``budget``: the rows with a running total, the results (each range naming its
path-loss model), and a per-frequency table for a band."""

from __future__ import annotations

from ...budget import BudgetResult
from ...units import format_frequency as ff
from ..words import estimate_words, fixed, margin, mismatch_cost_line, model_words, range_text
from . import console
from .tables import say, show_table


def _range_line(label: str, required_margin_db: float, range_m: float, zero_margin_range_m: float) -> str:
    """One range line; the zero-margin range only when a margin is required (else it is the same)."""
    if required_margin_db == 0:
        return f"{label} range at zero margin (no fade margin set): {range_text(zero_margin_range_m)}"
    return (f"{label} range, margin {required_margin_db:g} dB: {range_text(range_m)}; "
            f"at zero margin: {range_text(zero_margin_range_m)}")


def tx_vswr_caution(res: BudgetResult) -> str | None:
    """The amplifier caution line when the transmit VSWR exceeds TX_CAUTION_VSWR somewhere, else None."""
    from ...budget import TX_CAUTION_GAMMA, TX_CAUTION_VSWR

    worst = max(res.points, key=lambda p: p.tx.gamma_mag)
    if worst.tx.source == "none" or not worst.tx.gamma_mag > TX_CAUTION_GAMMA:
        return None
    g = worst.tx.gamma_mag
    v = (1 + g) / (1 - g) if g < 1 else float("inf")
    return (f"CAUTION: transmit VSWR {v:.3g} at {ff(worst.f_hz)} (above {TX_CAUTION_VSWR:g}): a high VSWR can "
            "damage the transmitter's amplifier; check the radio's rating before transmitting.")


def render(res: BudgetResult, con=None) -> None:
    """Terminal view of a BudgetResult (worst frequency first, then every frequency of a band)."""
    import math

    con = con or console()
    w = res.worst
    where = f"at {ff(w.f_hz)}" if res.band is None else f"at {ff(w.f_hz)}, the worst frequency of the band"
    say(con, f"{res.path}  link budget {where}, distance {range_text(res.distance_m)}, "
             f"path loss model: {model_words(res)}")
    show_table(con, "Budget (signed contributions to the received power)", ["item", "dB", "running total dBm"],
               [[r.name, fixed(r.value_db, 3), fixed(r.total_dbm, 2)] for r in w.rows])
    # the EIRP line is the highest EIRP over the frequencies (not the worst-margin one's)
    eirp = f"{fixed(res.max_eirp_dbm)} dBm"
    if res.band is not None or len(res.points) > 1:
        eirp += f", the highest, at {ff(res.max_eirp_f_hz)}"
    if res.eirp_limit_dbm is not None:
        eirp += f"  (your limit {res.eirp_limit_dbm:g} dBm: {'EXCEEDED' if res.eirp_over_limit else 'met'})"
    lines = [("EIRP", eirp), ("received power", f"{fixed(w.received_power_dbm)} dBm"),
             ("sensitivity", f"{fixed(res.rx_sensitivity_dbm)} dBm"),
             ("margin", f"{margin(w.margin_db, 2, 'dB', w.margin_db >= res.required_margin_db)} (required "
                        f"{res.required_margin_db:g} dB: {'met' if w.margin_db >= res.required_margin_db else 'NOT MET'})")]
    width = max(len(k) for k, _ in lines)
    for k, v in lines:
        say(con, f"{k.ljust(width)}  {v}")
    if math.isinf(w.polarization_loss_db):
        say(con, f"{'range'.ljust(width)}  none: the antennas are cross-polarised (no link in the ideal model)")
    else:
        if res.path_loss_exponent is not None:  # the model in use first, each line naming its model
            label = f"log-distance (n = {res.path_loss_exponent:g} beyond {res.reference_distance_m:g} m)"
            say(con, _range_line(label, res.required_margin_db,
                                 w.max_range_model_m, w.zero_margin_range_model_m))
        say(con, _range_line("free-space", res.required_margin_db, w.max_range_m, w.zero_margin_range_m)
            + ("" if res.path_loss_exponent is None else " (for comparison only; not the model in use)"))
        say(con, mismatch_cost_line(res))
    if res.band is not None:
        show_table(con, f"Per frequency (range: {model_words(res)}, margin {res.required_margin_db:g} dB)",
                   ["frequency", "tx mismatch\ndB", "rx mismatch\ndB", "EIRP\ndBm", "received\ndBm", "margin\ndB",
                    "range"],
                   [[ff(p.f_hz), fixed(p.tx.mismatch_loss_db, 3), fixed(p.rx.mismatch_loss_db, 3), fixed(p.eirp_dbm),
                     fixed(p.received_power_dbm), margin(p.margin_db, 2, "", p.margin_db >= res.required_margin_db),
                     range_text(p.max_range_model_m)] for p in res.points])
    caution = tx_vswr_caution(res)
    if caution is not None:
        say(con, caution)
    say(con, f"{estimate_words(res)}, not a coverage prediction; EIRP and RF exposure limits are set by "
             "local regulation.")

"""Link budget: the rows at the worst frequency, the results (every range naming its model) and,
for a band, every frequency."""

from __future__ import annotations

from ...units import format_frequency as ff
from .. import html as h
from ..text.budget import tx_vswr_caution
from ..words import budget_range_lines, estimate_words, fixed, margin, mismatch_cost_line, model_words, range_text


def section(ctx, names) -> h.Section | None:
    b = ctx.budget
    if b is None:
        return None
    w = b.worst
    where = f"at {ff(w.f_hz)}" if b.band is None else f"at {ff(w.f_hz)}, the worst frequency of the band"
    parts = [h.paragraph(f"Budget file {b.path}, {where}; distance {range_text(b.distance_m)}, path loss model: "
                         f"{model_words(b)}. Rows are signed contributions in dB to the received power."),
             h.table(["item", "dB", "running total dBm"], [[r.name, fixed(r.value_db, 3), fixed(r.total_dbm, 2)]
                                                          for r in w.rows],
                     [False, True, True], caption="Link budget", css_class="budget")]
    eirp = f"{fixed(b.max_eirp_dbm)} dBm"
    if b.band is not None:
        eirp += f", the highest, at {ff(b.max_eirp_f_hz)}"
    if b.eirp_limit_dbm is not None:
        eirp += f" (your limit {b.eirp_limit_dbm:g} dBm: {'EXCEEDED' if b.eirp_over_limit else 'met'})"
    items = [("EIRP", eirp), ("received power", f"{fixed(w.received_power_dbm)} dBm"),
             ("sensitivity", f"{fixed(b.rx_sensitivity_dbm)} dBm"),
             ("margin", f"{margin(w.margin_db, 2, 'dB', b.closes)} (required {b.required_margin_db:g} dB: "
                        f"{'met' if b.closes else 'NOT MET'})")]
    items += budget_range_lines(b)
    import math

    if not math.isinf(w.polarization_loss_db):
        items.append(("what the mismatch costs", mismatch_cost_line(b)))
    parts.append(h.definition_list(items))
    if b.band is not None:
        parts.append(h.table(["frequency", "tx mismatch dB", "rx mismatch dB", "EIRP dBm", "received dBm", "margin dB",
                              f"range ({model_words(b)})"],
                             [[ff(p.f_hz), fixed(p.tx.mismatch_loss_db, 3), fixed(p.rx.mismatch_loss_db, 3),
                               fixed(p.eirp_dbm), fixed(p.received_power_dbm),
                               margin(p.margin_db, 2, "", p.margin_db >= b.required_margin_db),
                               range_text(p.max_range_model_m)] for p in b.points],
                             [True] * 7, caption=f"Per frequency (range at {b.required_margin_db:g} dB margin, "
                                                 f"{model_words(b)} model)"))
    caution = tx_vswr_caution(b)
    if caution:
        parts.append(h.paragraph(caution, "note warn"))
    if b.warnings:
        parts.append(h.bullet_list(b.warnings, "note warn"))
    limit_note = ("; the EIRP limit above is the user's number" if b.eirp_limit_dbm is not None
                  else "; no EIRP limit was given")
    parts.append(h.paragraph(f"{estimate_words(b)}, not a coverage prediction. EIRP and RF exposure limits are set "
                             f"by local regulation{limit_note}.", "note warn"))
    return h.Section("budget", "Link budget", "\n".join(parts))

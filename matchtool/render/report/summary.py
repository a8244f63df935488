"""Summary: one line per sweep, band and spec verdicts, the proposed match, the link budget
headline (each figure naming its path-loss model), warnings and cautions."""

from __future__ import annotations

from ... import reflection as rf
from ...units import format_frequency as ff
from .. import html as h
from ..words import (
    band_verdict_sentence,
    computed_frequency,
    fixed,
    margin,
    model_words,
    network_text,
    range_text,
    spec_verdict_line,
)
from .common import CAUTIONS


def budget_headline(b) -> str:
    """The budget in one sentence, one model only: the margin, then the range in the model in use."""
    w = b.worst
    rng = range_text(w.max_range_model_m)
    met = "met" if b.closes else "NOT MET"
    eirp = ""
    if b.eirp_limit_dbm is not None and b.eirp_over_limit:
        eirp = f" EIRP {b.max_eirp_dbm:.2f} dBm at {ff(b.max_eirp_f_hz)} EXCEEDS your limit of {b.eirp_limit_dbm:g} dBm."
    return (f"Link budget {b.path}: margin {margin(w.margin_db, 2, 'dB', b.closes)} at {ff(w.f_hz)} (required "
            f"{b.required_margin_db:g} dB: {met}); range at {b.required_margin_db:g} dB margin {rng} "
            f"({model_words(b)} model).{eirp}")


def section(ctx, names) -> h.Section:
    thr = ctx.threshold_return_loss_db
    c = ctx.comparison
    base = names[c.rows[0].file]
    lines = []
    ports = {sw.path: (sw.port, sw.nports) for sw in ctx.sweeps}
    for r in c.rows:
        lab = names[r.file]
        p, n = ports.get(r.file, (1, 1))
        if n > 1:  # a multi-port file: say whose reflection these numbers are
            lab = f"{lab} port {p} (S{p}{p}, of {n} ports)"
        if r.threshold_bands:
            widths = ", ".join(f"{ff(t.band.f_low_hz)} to {ff(t.band.f_high_hz)} ({computed_frequency(t.band.bandwidth_hz)} wide)"
                               for t in r.threshold_bands)
            bw = f"{len(r.threshold_bands)} threshold band(s): {widths}"
        else:
            bw = "misses the threshold"
        text = f"{lab}: best match {ff(r.best_f_hz)} (return loss {fixed(r.best_return_loss_db)} dB), {bw}"
        if not r.is_baseline:
            text += f"; resonance {r.delta_best_f_hz / 1e6 + 0.0:+.3f} MHz against {base}"
            if r.delta_bandwidth_hz is not None:
                text += f", bandwidth of the best-match band {r.delta_bandwidth_hz / 1e6 + 0.0:+.3f} MHz"
        lines.append(text)
    vswr = float(rf.vswr(rf.gamma_mag_from_return_loss(thr)))
    body = [h.paragraph(f"{len(ctx.sweeps)} sweep(s). Threshold: return loss >= {thr:.2f} dB (S11 <= {-thr:.2f} dB, "
                        f"VSWR <= {vswr:.3f})."),
            h.bullet_list(lines)]
    if c.verdicts[:c.adhoc_bands]:
        body.append("<h3>Bands</h3>" + h.bullet_list(band_verdict_sentence(v, names) for v in c.verdicts[:c.adhoc_bands]))
    if c.spec_path is not None:
        body.append(h.paragraph(f"Spec {c.spec_path}: {spec_verdict_line(c, names)}",
                                "fail" if c.spec_failed else "pass"))
    if ctx.match is not None:
        pm = ctx.match
        from ..words import target_text

        body.append(h.paragraph(f"Proposed match for {names[pm.sweep.path]} {target_text(pm.result)}: "
                                f"{network_text(pm.candidate.elements)} (worst return loss "
                                f"{fixed(pm.result.before_worst_return_loss_db)} dB -> "
                                f"{fixed(pm.candidate.worst_return_loss_db)} dB)."))
    if ctx.budget is not None:
        body.append(h.paragraph(budget_headline(ctx.budget), "pass" if ctx.budget.passed else "fail"))
    if ctx.warnings:
        body.append("<h3>Warnings</h3>" + h.bullet_list(ctx.warnings, "note warn"))
    body.append('<div class="note caution"><strong>Cautions</strong>' + h.bullet_list(CAUTIONS) + "</div>")
    return h.Section("summary", "Summary", "\n".join(body))

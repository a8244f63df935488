"""Proposed match: the ranked networks as build cards, the chosen one's schematic and parts in
solder order, before/after pictures."""

from __future__ import annotations

from .. import html as h
from ..text.match import dc_words
from ..words import fixed, network_text, part_text, q_text, schematic, target_text
from .plots import CAPTIONS, masks


def solder_steps(elements, z0_ohm: float) -> list[str]:
    """The parts in the order they are placed, from the radio connector toward the antenna."""
    steps = [f"Start at the radio connector ({z0_ohm:g} ohm)."]
    for i, e in enumerate(elements, start=1):
        sym = "L" if e.kind == "inductor" else "C"
        where = "in line with the feed" if e.connection == "series" else "from the feed to ground"
        steps.append(f"Part {i}: {e.kind} {sym}{i} {part_text(e)}, {where}.")
    steps.append("End at the antenna feed point." if elements else "No part: connect the antenna directly.")
    return steps


def section(ctx, names) -> h.Section | None:
    from .. import plots

    pm = ctx.match
    if pm is None:
        return None
    r = pm.result
    lab = names[pm.sweep.path]
    thr = ctx.threshold_return_loss_db
    cards = [[f"#{i}" + (" (shown)" if i == pm.pick else ""), c.topology, network_text(c.elements),
              fixed(c.worst_return_loss_db), fixed(c.return_loss_at_f0_db), fixed(c.network_loss_db, 3),
              f"{100 * c.worst_delivered_fraction:.1f} %", dc_words(c.elements), c.filter]
             for i, c in enumerate(r.candidates, start=1)]
    q = r.q
    parts = [h.paragraph(f"For {lab} {target_text(r)}, matched to {r.z0_ohm:g} ohm, {r.series} part values, "
                         f"part Q: L {q_text(q.inductor)}, C {q_text(q.capacitor)} (constant-Q model); "
                         f"designed as 'matchtool match' does. Worst return loss over the target: "
                         f"{fixed(r.before_worst_return_loss_db)} dB measured, "
                         f"{fixed(pm.candidate.worst_return_loss_db)} dB with network #{pm.pick}."),
             h.table(["#", "topology", "parts, radio side first", "worst RL dB", "RL at f0 dB", "part loss dB",
                      "worst delivered", "DC", "filter"], cards,
                     [False, False, False, True, True, True, True, False, False],
                     caption=f"Candidates, ranked by {r.rank_by}", css_class="candidates"),
             f"<h3>Network #{pm.pick}: parts in solder order</h3>",
             '<ol class="steps">' + "".join(f"<li>{h.esc(s)}</li>" for s in solder_steps(pm.candidate.elements,
                                                                                         r.z0_ohm)) + "</ol>",
             f'<pre class="schematic">{h.esc(schematic(pm.candidate.elements, r.z0_ohm))}</pre>']
    traces = plots.match_traces(pm, thr, lab)
    ms = masks(ctx)
    if r.f_low_hz is not None and not any(b.f_low_hz == r.f_low_hz and b.f_high_hz == r.f_high_hz for b in ms):
        ms.append(plots.BandMask("match target", r.f_low_hz, r.f_high_hz, None))
    for k, kind in enumerate(("return-loss", "smith")):
        fig = plots.figure(traces, [kind], thr, ms, plots.match_title(pm, lab) if k == 0 else None, explain=False)
        parts.append(h.figure_svg(plots.figure_bytes(fig, "svg").decode("utf-8"), f"match{k + 1}",
                                  f"Before/after: {lab} measured and with network #{pm.pick} "
                                  f"({network_text(pm.candidate.elements)}). " + CAPTIONS[kind]))
    if pm.warnings:
        parts.append(h.bullet_list(pm.warnings, "note warn"))
    parts.append(h.paragraph("Build the network and measure it before driving it with a transmitter: part "
                             "parasitics and the board move the match, and a high VSWR at power can damage the "
                             "amplifier.", "note warn"))
    return h.Section("match", "Proposed match", "\n".join(parts))

"""Spec verdicts: every file against every requirement (the results of ``matchtool check``)."""

from __future__ import annotations

from .. import html as h
from ..words import requirement_cells, requirement_verdict_sentence
from .common import verdict_cell


def section(ctx, names) -> h.Section | None:
    c = ctx.comparison
    if c.spec_path is None:
        return None
    rows = []
    for r in c.rows:
        for k, q in enumerate(r.spec.requirements):
            _, worst, where, limit, marg = requirement_cells(q)
            rows.append([names[r.file] if k == 0 else "", q.name, verdict_cell(q.passed), worst, where, limit, marg])
    parts = [h.paragraph(f"Spec file {c.spec_path}, evaluated exactly as 'matchtool check' does. Limit and worst "
                         "are in the units of the limit key (shown with the worst value); the margin is positive "
                         "when passing, in dB of return loss for the reflection limits (a VSWR or S11 limit is "
                         "converted to it)."),
             h.table(["file", "requirement", "verdict", "worst", "at", "limit", "margin"], rows,
                     [False, False, False, True, True, True, True], caption="Spec verdicts", css_class="spec"),
             "<h3>Best revision per requirement</h3>",
             h.bullet_list(requirement_verdict_sentence(v, names) for v in c.spec_verdicts)]
    reasons = [f"{names[r.file]}: {q.name}: {q.reason}" for r in c.rows for q in r.spec.requirements if q.reason]
    if reasons:
        parts.insert(2, h.bullet_list(reasons, "note warn"))
    return h.Section("spec", "Spec verdicts", "\n".join(parts))

"""Sections of further capabilities: coupling (every multi-port input), locate, qfactor and the lot
history, each built from the capability's own fragment (``render/report_<name>.section_html``)
with the results :func:`matchtool.report.build_report` put into ``ReportContext.extras``."""

from __future__ import annotations

import re

from .. import html as h


def _reprefix(fragment: str, old: str, new: str) -> str:
    """Give the inline SVG ids of a fragment built with prefix ``old`` the prefix ``new`` (so two
    fragments built with the same prefix can share a page)."""
    return re.sub(rf"""(id=["']|url\(#|href=["']#){re.escape(old)}-""", rf"\g<1>{new}-", fragment)


def coupling(ctx, names) -> h.Section | None:
    results = ctx.extras.get("coupling")
    if not results:
        return None
    from ..report_coupling import section_html

    spec = ctx.extras.get("coupling_masks")  # the spec, for its isolation / correlation limits
    body = "\n".join(section_html(r, masks=spec) for r in results)
    return h.Section("coupling", "Coupling between the ports (isolation, ECC, TARC)", body)


def locate(ctx, names) -> h.Section | None:
    results = ctx.extras.get("locate")
    if not results:
        return None
    from ..report_locate import section_html

    # one fragment per sweep: their SVG ids get a prefix each, their own headings sit under the section's
    body = "\n".join(_reprefix(section_html(r), "locate", f"locate{k + 1}").replace("<h2>", "<h3>")
                     .replace("</h2>", "</h3>") for k, r in enumerate(results))
    return h.Section("locate", "Reflections along the feed (time domain)", body)


def qfactor(ctx, names) -> h.Section | None:
    results = ctx.extras.get("qfactor")
    if not results:
        return None
    from ..report_qfactor import section_html

    return h.Section("qfactor", "Q and bandwidth potential", "\n".join(section_html(r) for r in results))


def history(ctx, names) -> h.Section | None:
    result = ctx.extras.get("history")
    if result is None:
        return None
    from ..report_history import section_html

    # the lot page's own fragment; its trend SVG gets the page's id prefixes and loses its metadata
    body = h.inline_svg(section_html(result, with_trend=True), "history")
    for a, b in (("h3", "h4"), ("h2", "h3")):  # its own headings sit under the section's
        body = body.replace(f"<{a}>", f"<{b}>").replace(f"</{a}>", f"</{b}>")
    return h.Section("history", "Lot history from the results store", body)

"""The HTML report: one module per section, each ``section(ctx, names) -> html.Section | None``
built from a :class:`matchtool.report.ReportContext` (formatting only; the core computed it).

The section list is a registry, :data:`SECTIONS`. A new section is one line:

- a builder of your own: ``SECTIONS.append(("qfactor", my_builder))`` with
  ``my_builder(ctx, names) -> Section | None``;
- or a module ``matchtool/render/report_<x>.py`` with ``section_html(result) -> str`` whose
  result the command puts into ``ReportContext.extras["<x>"]``:
  ``SECTIONS.append(from_extra("coupling", "Coupling (isolation, ECC, TARC)"))``.

The page order is :data:`matchtool.render.html.SECTION_ORDER` (unknown ids go just before
traceability, in registry order).
"""

from __future__ import annotations

import importlib
from collections.abc import Callable

from ... import __version__
from .. import html as h
from ..plots import legend_labels
from . import budget, compare, extras, match, plots, spec, summary, sweeps, traceability

Builder = Callable[..., "h.Section | None"]


def from_extra(section_id: str, title: str, module: str | None = None, key: str | None = None):
    """A registry entry for a capability's own fragment: ``matchtool.render.report_<id>`` (or
    ``module``) and its ``section_html(result)``, shown when ``ctx.extras[key or id]`` is set."""
    mod_name = module or f"matchtool.render.report_{section_id}"

    def build(ctx, names):
        result = ctx.extras.get(key or section_id)
        if result is None:
            return None
        return h.Section(section_id, title, importlib.import_module(mod_name).section_html(result))

    return section_id, build


SECTIONS: list[tuple[str, Builder]] = [
    ("summary", summary.section),
    ("spec", spec.section),
    ("sweeps", sweeps.section),
    ("compare", compare.section),
    ("plots", plots.section),
    ("match", match.section),
    ("budget", budget.section),
    ("coupling", extras.coupling),
    ("locate", extras.locate),
    ("qfactor", extras.qfactor),
    ("history", extras.history),
    ("traceability", traceability.section),
]


def display_names(ctx) -> dict[str, str]:
    """Path -> the name shown for it (the base name, or the path where base names collide)."""
    paths = [s.path for s in ctx.sweeps]
    return dict(zip(paths, legend_labels(paths), strict=True))


def build_page(ctx, title: str | None = None) -> h.Page:
    """Run every registered section builder and assemble the page."""
    names = display_names(ctx)
    sections = [s for s in (build(ctx, names) for _, build in SECTIONS) if s is not None]
    sub = f"Generated {ctx.generated.strftime('%Y-%m-%d %H:%M:%S UTC')} by matchtool {__version__}"
    return h.Page(title=title or f"Antenna match report: {', '.join(names.values())}", subtitle=sub,
                  sections=sections)


def render_page(ctx, title: str | None = None) -> tuple[str, list[str]]:
    """The whole page (as :func:`render`) and the ids of its sections, in page order."""
    page = build_page(ctx, title)
    return h.render_page(page), [s.id for s in h.ordered(page.sections)]


def render(ctx, title: str | None = None) -> str:
    """The whole self-contained HTML page (UTF-8 text)."""
    return h.render_page(build_page(ctx, title))

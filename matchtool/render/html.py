"""One self-contained HTML page: inline CSS, pictures inline (SVG, or PNG as base64), no scripts,
no fonts, links or images fetched from anywhere. Pure string building - no matplotlib here.

A report is a list of :class:`Section` objects in a fixed order (:data:`SECTION_ORDER`); a feature
that wants a place in the report (spec verdicts, a proposed match with its schematic, a link
budget) builds one Section with its id, and :func:`render_page` puts it where the order says.
"""

from __future__ import annotations

import base64
import html
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

# Where each section goes. Ids not listed are placed before "traceability", in the order given.
SECTION_ORDER = ("summary", "spec", "sweeps", "compare", "plots", "match", "budget", "traceability")


@dataclass(frozen=True)
class Section:
    """One part of the page. ``body_html`` is an HTML fragment built with this module's helpers
    (everything from the user already escaped)."""

    id: str
    title: str
    body_html: str


@dataclass(frozen=True)
class Page:
    """The whole report: a title, a subtitle line (date, tool version) and the sections."""

    title: str
    subtitle: str
    sections: list[Section] = field(default_factory=list)


class Raw(str):
    """An HTML fragment built by this program (already escaped) that :func:`table` puts into a cell as is."""


def esc(text: object) -> str:
    """Escape any value for HTML text or a quoted attribute (a :class:`Raw` fragment stays as is)."""
    if isinstance(text, Raw):
        return str(text)
    return html.escape(str(text), quote=True)


def table(headers: Sequence[str], rows: Iterable[Sequence[object]], numeric: Sequence[bool] | None = None,
          caption: str | None = None, css_class: str = "") -> str:
    """An HTML table; every cell is escaped. ``numeric`` right-aligns those columns."""
    numeric = list(numeric) if numeric is not None else [False] * len(headers)
    cls = f' class="{esc(css_class)}"' if css_class else ""
    out = [f"<table{cls}>"]
    if caption:
        out.append(f"<caption>{esc(caption)}</caption>")
    num = ' class="num"'
    out.append("<thead><tr>" + "".join(f"<th{num if n else ''}>{esc(h)}</th>"
                                          for h, n in zip(headers, numeric, strict=True)) + "</tr></thead><tbody>")
    for row in rows:
        out.append("<tr>" + "".join(f"<td{num if n else ''}>{esc(c) if n else _glue(esc(c))}</td>"
                                    for c, n in zip(row, numeric, strict=True)) + "</tr>")
    out.append("</tbody></table>")
    return "".join(out)


_NUMBER_UNIT = re.compile(r"(\d) (?=(?:[kMG]?Hz|dBm?|k?m|%|ohm|ratio|[pnu]?[FH])\b)")


def _glue(text: str) -> str:
    """Keep a number and its unit on one line in a text cell (numeric cells never wrap at all)."""
    return text if isinstance(text, Raw) else _NUMBER_UNIT.sub("\\1&nbsp;", text)


def definition_list(items: Iterable[tuple[str, object]]) -> str:
    """A two-column key/value list; both sides escaped."""
    return "<dl>" + "".join(f"<dt>{esc(k)}</dt><dd>{esc(v)}</dd>" for k, v in items) + "</dl>"


def paragraph(text: str, css_class: str = "") -> str:
    cls = f' class="{esc(css_class)}"' if css_class else ""
    return f"<p{cls}>{esc(text)}</p>"


def bullet_list(items: Iterable[str], css_class: str = "") -> str:
    cls = f' class="{esc(css_class)}"' if css_class else ""
    return f"<ul{cls}>" + "".join(f"<li>{esc(i)}</li>" for i in items) + "</ul>"


_XML_HEAD = re.compile(r"^\s*<\?xml[^>]*\?>\s*(<!DOCTYPE[^>]*>\s*)?", re.S)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)
_ID = re.compile(r"""\bid=(["'])(.+?)\1""")
_URL_REF = re.compile(r"url\(#([^)]+)\)")
_HREF_REF = re.compile(r"""((?:xlink:)?href)=(["'])#(.+?)\2""")


def inline_svg(svg: str, prefix: str) -> str:
    """Make an SVG document fit inside HTML: drop the XML header and the metadata block (which
    names external vocabularies), and prefix every id and reference with ``prefix`` so several
    figures on one page cannot collide."""
    s = _METADATA.sub("", _XML_HEAD.sub("", svg))
    s = _ID.sub(lambda m: f"id={m.group(1)}{prefix}-{m.group(2)}{m.group(1)}", s)
    s = _URL_REF.sub(lambda m: f"url(#{prefix}-{m.group(1)})", s)
    s = _HREF_REF.sub(lambda m: f"{m.group(1)}={m.group(2)}#{prefix}-{m.group(3)}{m.group(2)}", s)
    return s


def figure_svg(svg: str, prefix: str, caption: str) -> str:
    """An inline SVG picture with a caption."""
    return f'<figure>{inline_svg(svg, prefix)}<figcaption>{esc(caption)}</figcaption></figure>'


def figure_png(png: bytes, alt: str, caption: str) -> str:
    """A PNG picture embedded as a base64 data URI, with a caption."""
    data = base64.b64encode(png).decode("ascii")
    return (f'<figure><img alt="{esc(alt)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{esc(caption)}</figcaption></figure>")


CSS = """
:root { --ink: #1d2f6f; --rule: #c8c8c8; --soft: #f3f3f3; --bad: #a83a24; --good: #2e6b50; }
* { box-sizing: border-box; }
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; color: #1a1a1a;
       margin: 0 auto; max-width: 1180px; padding: 1.5rem 2rem 3rem; line-height: 1.45; font-size: 15px; }
header { border-bottom: 3px solid var(--ink); margin-bottom: 1rem; padding-bottom: .5rem; }
h1 { font-size: 1.6rem; margin: 0 0 .2rem; color: var(--ink); }
.subtitle { color: #444; margin: 0; font-size: .92rem; }
nav ol { display: flex; flex-wrap: wrap; gap: .3rem 1.2rem; list-style: none; padding: 0; margin: .6rem 0 0;
         font-size: .9rem; }
nav a { color: var(--ink); }
section { margin: 1.8rem 0; }
h2 { font-size: 1.2rem; border-bottom: 1px solid var(--rule); padding-bottom: .2rem; color: var(--ink); }
h3 { font-size: 1.02rem; margin: 1.2rem 0 .3rem; }
table { border-collapse: collapse; margin: .5rem 0 1rem; font-size: .88rem; }
caption { text-align: left; font-weight: 600; padding: .2rem 0; }
th, td { border-bottom: 1px solid var(--rule); padding: .25rem .6rem; text-align: left; vertical-align: top; }
th { background: var(--soft); font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num, th { white-space: nowrap; }  /* "2.000 GHz" never breaks into "2.000" / "GHz" */
table { display: block; max-width: 100%; overflow-x: auto; }  /* a wide table scrolls, the page does not */
ol.steps { font-size: .9rem; margin: .3rem 0 .6rem; }
dl { display: grid; grid-template-columns: max-content 1fr; gap: .15rem 1rem; font-size: .9rem; }
dt { font-weight: 600; } dd { margin: 0; word-break: break-all; }
figure { margin: 1rem 0 1.6rem; page-break-inside: avoid; }
figure svg, figure img { width: 100%; max-width: 880px; height: auto; display: block; }
figcaption { font-size: .85rem; color: #444; margin-top: .3rem; }
.note { border-left: 4px solid #888; background: var(--soft); padding: .5rem .8rem; font-size: .9rem; }
.warn { border-left-color: var(--bad); }
.hash { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: .8rem; }
.pass { color: var(--good); font-weight: 600; } .fail { color: var(--bad); font-weight: 600; }
.caution { border-left-color: var(--bad); } .caution ul { margin: .3rem 0 0; padding-left: 1.2rem; }
pre.schematic { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: .9rem; background: var(--soft);
                padding: .7rem 1rem; overflow-x: auto; line-height: 1.25; }
@media print { body { max-width: none; padding: 0; font-size: 11pt; } nav { display: none; } }
"""


def ordered(sections: Iterable[Section]) -> list[Section]:
    """Sections sorted by :data:`SECTION_ORDER` (unknown ids just before traceability)."""
    rank = {sid: i for i, sid in enumerate(SECTION_ORDER)}
    tail = rank["traceability"]
    items = list(sections)
    ids = [s.id for s in items]
    if len(set(ids)) != len(ids):
        raise ValueError(f"duplicate report section ids: {ids}")
    return sorted(items, key=lambda s: (rank.get(s.id, tail - 0.5), items.index(s)))


def render_page(page: Page) -> str:
    """The complete HTML document as text (UTF-8)."""
    secs = ordered(page.sections)
    nav = "".join(f'<li><a href="#{esc(s.id)}">{esc(s.title)}</a></li>' for s in secs)
    body = "\n".join(f'<section id="{esc(s.id)}"><h2>{esc(s.title)}</h2>\n{s.body_html}\n</section>' for s in secs)
    return ("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
            f"<title>{esc(page.title)}</title>\n<style>{CSS}</style>\n</head>\n<body>\n"
            f"<header><h1>{esc(page.title)}</h1><p class=\"subtitle\">{esc(page.subtitle)}</p>"
            f"<nav><ol>{nav}</ol></nav></header>\n{body}\n</body>\n</html>\n")

"""Tables that fit the terminal: a rich table when it fits the console's width without wrapping
or cutting a cell, else the same rows stacked (one ``header  value`` line per cell, the first
column as the row's heading). No cell is ever truncated or left empty ('' becomes '-')."""

from __future__ import annotations

from collections.abc import Sequence


def show_table(con, title: str, headers: Sequence[str], rows: Sequence[Sequence[str]],
               right: Sequence[bool] | None = None, narrow=None) -> None:
    """Print ``rows`` under ``title`` on ``con`` (a rich Console) as a table; when it is wider
    than the console, the ``narrow`` layout (``(headers, rows, right)``, fewer columns) if given
    and it fits, else the full rows stacked. Cells are plain text (rich markup is escaped)."""
    if narrow is not None and _width(con, headers, rows, right) > con.width:
        n_headers, n_rows, n_right = narrow
        if _width(con, n_headers, n_rows, n_right) <= con.width:
            headers, rows, right = n_headers, n_rows, n_right
    from rich.measure import Measurement
    from rich.text import Text

    t, cells = _table(headers, rows, right)
    need = Measurement.get(con, con.options.update(max_width=100_000), t).maximum
    _print_wrapped(con, title)
    if need <= con.width:
        con.print(t)
        return
    flat = [" ".join(h.split()) for h in headers]
    label = max((len(h) for h in flat[1:]), default=0)
    for row in cells:
        con.print(Text(f"{flat[0]}: {row[0]}"), soft_wrap=True)
        for h, c in zip(flat[1:], row[1:], strict=True):
            line = f"  {h.ljust(label)}  {c}"
            if len(line) > con.width:  # a long value goes on its own indented line
                con.print(Text(f"  {h}"))
                line = f"    {c}"
            con.print(Text(line), soft_wrap=True)


def _table(headers, rows, right):
    from rich import box
    from rich.markup import escape
    from rich.table import Table

    right = list(right) if right is not None else [False] + [True] * (len(headers) - 1)
    cells = [[str(c) if str(c) != "" else "-" for c in row] for row in rows]
    t = Table(show_edge=False, pad_edge=False, box=box.SIMPLE_HEAD, collapse_padding=True)
    for h, r in zip(headers, right, strict=True):
        t.add_column(escape(h), justify="right" if r else "left", no_wrap=True)
    for row in cells:
        t.add_row(*(escape(c) for c in row))
    return t, cells


def _width(con, headers, rows, right) -> int:
    from rich.measure import Measurement

    return Measurement.get(con, con.options.update(max_width=100_000), _table(headers, rows, right)[0]).maximum


def _print_wrapped(con, text: str) -> None:
    """A title or sentence, wrapped at word boundaries to the console width."""
    import re
    import textwrap

    from rich.text import Text

    # a number keeps its unit on its line: "61.25 km" never breaks into "61.25" / "km"
    glued = re.sub(r"(\d) (?=(?:k?m|dBm?|[kMG]?Hz|%|ohm|ratio)\b)", "\\1\u00a0", text)
    for line in textwrap.wrap(glued, width=max(20, con.width), break_long_words=False, break_on_hyphens=False) or [""]:
        con.print(Text(line.replace("\u00a0", " ")), soft_wrap=True)


def say(con, text: str) -> None:
    """A sentence wrapped to the console width (never cut)."""
    _print_wrapped(con, text)

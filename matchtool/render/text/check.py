"""Terminal view of ``check``: each unit's requirements, the lot summary and the verdict.

Tables are laid out here rather than by rich's table (whose columns break words to fit): a column
is never narrower than its longest word, cells wrap at spaces only, and when even that does not
fit the width the rows are stacked as ``name: verdict`` lines with the values below. So no cell is
ever cut short or broken inside a word, at 80 columns or wider.
"""

from __future__ import annotations

import math
import os
import sys
import textwrap
from collections.abc import Sequence

from ...units import format_frequency as ff

TABLE_ALL_MAX = 50
"""Lots larger than this show only the units that did not pass, at most this many, in the table
(the CSV and JSON hold every row; a table of a thousand units helps nobody and is slow to draw)."""
PROGRESS_MIN = 20
GAP = "  "


# ------------------------------------------------------------------------------------------ numbers

GLUE = "\u00a0"
"""Joins a number to its unit inside a table cell, so a cell never wraps between them (printed as a
plain space)."""
MAX_DIGITS = 17
"""Significant digits at which two different doubles always print differently."""


def signed(x: float | None, digits: int = 2, unit: str = "", passed: bool | None = None) -> str:
    """A margin with its sign always shown, by the one rule of :func:`matchtool.render.words.margin`
    (which compare and the report use): a failing margin never reads as 0.00 or -0.00 (digits are
    added until it reads negative, ``-0.00005 dB``; beyond that ``< 0.000001 dB below``). A positive
    margin too small for ``digits`` gets digits the same way (``+0.0004``, else ``< 0.000001 above``),
    so ``+0.000`` means exactly zero."""
    from ..words import MAX_EXTRA_DIGITS, margin

    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "n/a"
    if x > 0 and math.isfinite(x) and passed is not False and round(x, digits) == 0:
        for d in range(digits + 1, digits + MAX_EXTRA_DIGITS + 1):
            if round(x, d) > 0:
                return margin(x, d, unit, passed)
        d = digits + MAX_EXTRA_DIGITS
        return f"< {10 ** -d:.{d}f}" + (f" {unit}" if unit else "") + " above"
    return margin(x, digits, unit, passed)


def distinct(worst: float, limit: float | None, digits: int) -> tuple[str, str]:
    """Worst value and limit with enough digits that two different numbers never print the same
    (:func:`matchtool.render.words.distinct`, and beyond its cap as many digits as it takes)."""
    from ..words import distinct as words_distinct
    from ..words import fixed

    if limit is None:
        return fixed(worst, digits), "n/a"
    w, lim = words_distinct(worst, limit, digits)
    d = digits
    while w == lim and worst != limit and math.isfinite(worst) and math.isfinite(limit) and d < MAX_DIGITS:
        d += 1
        w, lim = fixed(worst, d), fixed(limit, d)
    if w == lim and worst != limit:  # not reached for finite doubles; say which side it lies
        w = ("< " if worst < limit else "> ") + lim
    return w, lim


def frequency_pair(a_hz: float, b_hz: float, digits: int = 3) -> tuple[str, str, int]:
    """Two frequencies (:func:`matchtool.units.format_frequency`, at least ``digits`` decimals)
    with more digits when two different values would otherwise read the same; and the decimals
    that took."""
    d = digits
    while True:
        a, b = ff(a_hz, d), ff(b_hz, d)
        if a != b or a_hz == b_hz or d >= 12:
            return a, b, d
        d += 1


def window_text(f_low_hz: float, f_high_hz: float, worst_hz: float | None = None) -> tuple[str, str]:
    """(worst, window) of a resonance requirement: the window edges with the digits the spec gave
    them (``914.75 to 925 MHz``), the worst (three decimals or more) with enough digits to tell it
    from the nearer edge; then that edge is shown with as many."""
    lo, hi = ff(f_low_hz, 0, 9), ff(f_high_hz, 0, 9)
    worst = ""
    if worst_hz is not None:
        edge = f_low_hz if abs(worst_hz - f_low_hz) <= abs(worst_hz - f_high_hz) else f_high_hz
        worst, e, d = frequency_pair(worst_hz, edge)
        if d > 3:
            lo, hi = (e, hi) if edge == f_low_hz else (lo, e)
    (nl, ul), (nh, uh) = lo.split(" "), hi.split(" ")
    window = f"{nl} to {nh}{GLUE}{uh}" if ul == uh else f"{nl}{GLUE}{ul} to {nh}{GLUE}{uh}"
    return worst.replace(" ", GLUE), window


_LIMIT_WORD = {"min_return_loss_db": ">=", "max_vswr": "<=", "max_s11_db": "<=", "max_mismatch_loss_db": "<=",
               "max_deviation_db": "<=", "min_isolation_db": ">=", "max_ecc": "<="}
_SHORT_UNIT = {"min_return_loss_db": "dB", "max_s11_db": "dB S11", "max_mismatch_loss_db": "dB",
               "max_deviation_db": "dB", "min_isolation_db": "dB", "max_ecc": ""}
"""Units in the table (the footer says what each dB is of); the others use the requirement's unit
(``ratio`` for VSWR, as every other view and the JSON name it)."""


def margin_text(r) -> str:
    """A requirement's signed margin in its own unit: dB, MHz for the resonance window, ECC."""
    if r.key == "resonance":
        return signed(r.margin_hz / 1e6, 3, "MHz", r.passed) if r.margin_hz is not None else "n/a"
    if r.margin_ecc is not None:
        return signed(r.margin_ecc, 3, "", r.passed)
    return signed(r.margin_db, 2, "dB", r.passed)


def requirement_cells(r) -> tuple[str, str, str, str]:
    """(worst, at, limit, margin) of one requirement as text (a number and its unit joined by
    :data:`GLUE`, so they stay on one line)."""
    if r.worst is None:
        return "", "", "", "n/a"
    margin = margin_text(r).replace(" ", GLUE)
    if r.key == "resonance":
        worst, window = window_text(r.f_low_hz, r.f_high_hz, r.worst)
        return worst, "", window, margin
    d = r.info.digits
    unit = _SHORT_UNIT.get(r.key, r.unit)
    w, lim = distinct(r.worst, r.limit, d)
    u = f"{GLUE}{unit}".replace(" ", GLUE) if unit else ""
    at = ff(r.worst_f_hz).replace(" ", GLUE) if r.worst_f_hz is not None else ""
    return f"{w}{u}", at, f"{_LIMIT_WORD.get(r.key, '')} {lim}{u}".strip(), margin


# -------------------------------------------------------------------------------------------- grids

def _words(s: str) -> int:
    return max((len(w) for w in s.split(" ")), default=0)


def grid(headers: Sequence[str], rows: Sequence[Sequence[str]], width: int, right: Sequence[bool] = (),
         indent: str = "") -> list[str] | None:
    """Lay out a table in ``width`` columns: every column at least as wide as its longest word,
    cells wrapped at spaces. None when that cannot fit (the caller stacks the rows instead).
    Rows whose first cell starts with the marker ``\\x00`` are headings printed whole."""
    n = len(headers)
    right = list(right) + [False] * (n - len(right))
    body = [r for r in rows if not (r and r[0].startswith("\x00"))]
    nat = [max([len(headers[i])] + [len(r[i]) for r in body]) for i in range(n)]
    mins = [max([_words(headers[i])] + [_words(r[i]) for r in body]) for i in range(n)]
    avail = width - len(indent) - len(GAP) * (n - 1)
    if sum(mins) > avail:
        return None
    w = list(nat)
    while sum(w) > avail:  # shrink the column with the most room to spare above its longest word
        i = max(range(n), key=lambda k: (w[k] - mins[k], w[k]))
        w[i] -= 1
    out = []

    def emit(cells: Sequence[str]) -> None:
        wrapped = [textwrap.wrap(c, w[i], break_long_words=False, break_on_hyphens=False) or [""]
                   for i, c in enumerate(cells)]
        for k in range(max(len(x) for x in wrapped)):
            parts = []
            for i in range(n):
                t = wrapped[i][k] if k < len(wrapped[i]) else ""
                parts.append(t.rjust(w[i]) if right[i] else t.ljust(w[i]))
            out.append((indent + GAP.join(parts)).rstrip().replace(GLUE, " "))

    emit(headers)
    for r in rows:
        if r and r[0].startswith("\x00"):
            out.append(r[0][1:])
        else:
            emit(r)
    return out


def stacked(headers: Sequence[str], rows: Sequence[Sequence[str]], width: int) -> list[str]:
    """The narrow layout: ``first cell: second cell`` then ``header value`` pairs wrapped below."""
    out = []
    for r in rows:
        if r and r[0].startswith("\x00"):
            out.append(r[0][1:])
            continue
        out += textwrap.wrap(f"{r[0]}: {r[1]}", width, initial_indent="  ", subsequent_indent="    ",
                             break_long_words=False, break_on_hyphens=False)
        # each "header value" pair kept on one line where it fits
        rest = ", ".join(f"{h} {c}" if len(h) + len(c) + 6 > width else f"{h} {c}".replace(" ", GLUE)
                         for h, c in zip(headers[2:], r[2:], strict=True) if c)
        if rest:
            out += [ln.replace(GLUE, " ") for ln in textwrap.wrap(rest, width, initial_indent="    ",
                                                                  subsequent_indent="    ", break_long_words=False,
                                                                  break_on_hyphens=False)]
    return out


def table(headers, rows, width, right=(), indent="") -> list[str]:
    return grid(headers, rows, width, right, indent) or stacked(headers, rows, width)


def text_width() -> int:
    """The width to lay out for: the terminal's, else ``COLUMNS``, else 100."""
    import shutil

    if sys.stdout.isatty():
        return max(40, shutil.get_terminal_size().columns)
    try:
        return max(40, int(os.environ.get("COLUMNS", "")))
    except ValueError:
        return 100


# --------------------------------------------------------------------------------------------- view

_MARGIN_WORDS_KEYS = ("min_return_loss_db", "max_vswr", "max_s11_db")


def margin_footer(results) -> str:
    """The sentence under the table saying what unit each margin shown is in (only kinds present)."""
    keys = {r.key for u in results for r in u.requirements}
    parts = []
    if keys & set(_MARGIN_WORDS_KEYS):
        conv = [w for k, w in (("max_vswr", "VSWR"), ("max_s11_db", "S11")) if k in keys]
        parts.append("return-loss limits in dB of return loss"
                     + (f" (a {' or '.join(conv)} limit converted to it)" if conv else ""))
    if "max_mismatch_loss_db" in keys:
        parts.append("mismatch-loss limits in dB of mismatch loss")
    if "max_deviation_db" in keys:
        parts.append("the golden-unit limit in dB of deviation")
    if "min_isolation_db" in keys:
        parts.append("isolation limits in dB of isolation (-20 log10 |S_ij|, both directions)")
    if "max_ecc" in keys:
        parts.append("ECC limits as limit minus worst ECC (from S-parameters, lossless antennas assumed: "
                     "optimistic for antennas of low efficiency)")
    if "resonance" in keys:
        parts.append("the resonance margin in MHz (how far the best match lies inside the window; negative: outside)")
    return "Margins are positive when passing: " + "; ".join(parts) + "." if parts else ""


def common_folder(files: list[str]) -> str:
    """The directory every one of ``files`` lies in (as written, '' when there is none or one file),
    so the table can show the names below it in full instead of truncating them."""
    if len(files) < 2:
        return ""
    parents = [os.path.dirname(f) for f in files]
    if any(not p for p in parents):
        return ""
    try:
        folder = os.path.commonpath(parents)
    except ValueError:  # absolute and relative mixed
        return ""
    if folder in ("", ".", os.sep):
        return ""
    return folder


def _short(file: str, folder: str) -> str:
    return os.path.relpath(file, folder) if folder and file.startswith(folder) else file


def worst_margin(w) -> str:
    """The margin of a worst-unit entry (``batch.WorstUnit`` or ``history.StoredWorst``) in its
    requirement's own unit, by the rule of :func:`signed`."""
    if w.margin_db is not None:
        return signed(w.margin_db, 2, "dB", w.passed)
    if getattr(w, "margin_ecc", None) is not None:
        return signed(w.margin_ecc, 3, "ECC", w.passed)
    if w.margin_hz is not None:
        return signed(w.margin_hz / 1e6, 3, "MHz", w.passed) + " from the window"
    return "not evaluated"


def _relative(w) -> str:
    if w.relative_margin is None or not math.isfinite(w.relative_margin):
        return ""
    return f" ({signed(100 * w.relative_margin, 0, '%')} of the limit)"


RELATIVE_WORDS = ("margin relative to the limit: the margin over the limit in dB of return loss, mismatch loss "
                  "or deviation, or over half the resonance window's width")


def worst_lines(worst, short=lambda f: f, station: bool = False) -> list[str]:
    """The worst-units section as (unwrapped) lines: per failing requirement its worst unit with
    that unit's margin for it, then the other failing units ranked across requirements by relative
    margin (saying so); in a lot where every unit passed, the units closest to failing."""
    from ...batch import BY_REQUIREMENT

    def who(w) -> str:
        return short(w.file) + (f" ({w.station})" if station else "")

    failing = [w for w in worst if not w.passed]
    if not worst:
        return []
    if not failing:
        out = [f"Closest to failing (ranked by {RELATIVE_WORDS}):"]
        return out + [f"  {who(w)}: {w.requirement}, margin {worst_margin(w)}{_relative(w)}" for w in worst]
    per = [w for w in failing if getattr(w, "ranked_by", "") == BY_REQUIREMENT]
    rest = [w for w in failing if getattr(w, "ranked_by", "") != BY_REQUIREMENT]
    out = []
    if per:
        out.append("Worst unit of each failing requirement (its margin in that requirement's unit):")
        out += [f"  {w.requirement}: {who(w)}, margin {worst_margin(w)}" for w in per]
    if rest:
        out.append(f"{'Other failing' if per else 'Failing'} units, worst first by {RELATIVE_WORDS}:")
        out += [f"  {who(w)}: {w.requirement}, margin {worst_margin(w)}{_relative(w)}" for w in rest]
    return out


def lot_lines(lot, width: int) -> list[str]:
    """The whole view as plain lines (no markup), laid out for ``width`` columns."""
    results = lot.results
    spec = lot.spec
    shown = results if len(results) <= TABLE_ALL_MAX else [u for u in results if not u.passed][:TABLE_ALL_MAX]
    folder = common_folder([u.file for u in shown])
    lines = textwrap.wrap(f"Check against {spec.path}" + (f" (files in {folder}/)" if folder else ""), width,
                          break_long_words=False, break_on_hyphens=False)
    if lot.shard is not None:
        lines.append(f"Shard {lot.shard[0]}/{lot.shard[1]}: {len(results)} of {lot.inputs_total} inputs")
    rows: list[list[str]] = []
    for u in shown:
        name = _short(u.file, folder)
        if u.error is not None:
            rows.append([f"\x00{name}: ERROR, could not be read (see the error line below)"])
            continue
        rows.append([f"\x00{name}: {'pass' if u.passed else 'FAIL'}"])
        for r in u.requirements:
            rows.append([r.name, "pass" if r.passed else "FAIL", *requirement_cells(r)])
            if r.worst is None:
                rows += [["\x00" + ln] for ln in textwrap.wrap(f"not evaluated: {r.reason or 'no value'}", width,
                                                               initial_indent="    ", subsequent_indent="    ",
                                                               break_long_words=False, break_on_hyphens=False)]
    if any(not r[0].startswith("\x00") for r in rows):
        lines += table(("requirement", "verdict", "worst", "at", "limit", "margin"), rows, width,
                       right=(False, False, True, True, True, True), indent="  ")
    elif rows:
        lines += [r[0][1:] for r in rows]
    if len(shown) < len(results):
        not_passing = sum(1 for u in results if not u.passed)
        lines += textwrap.wrap(f"({len(results) - len(shown)} units not listed: {len(results) - not_passing} passing, "
                               f"{not_passing - len(shown)} more not passing; --csv or --json hold every row)", width)
    footer = margin_footer(shown)
    if footer:
        lines += textwrap.wrap(footer, width, break_long_words=False, break_on_hyphens=False)
    s = lot.summary
    if len(results) > 1:
        lines += textwrap.wrap(f"Lot: {s.units} units, {s.passed} passed, {s.failed} failed, {s.errors} unreadable; "
                               f"yield {100 * s.yield_fraction:.1f} %", width)
        if s.yields:
            lines += table(("requirement", "passed", "evaluated", "yield"),
                           [[q.name, str(q.passed), str(q.evaluated), f"{100 * q.yield_fraction:.1f} %"] for q in s.yields],
                           width, right=(False, True, True, True), indent="  ")
        if s.resonance_min_hz is not None:
            lines += textwrap.wrap(f"Best-match frequency: min {ff(s.resonance_min_hz)}, median "
                                   f"{ff(s.resonance_median_hz)}, max {ff(s.resonance_max_hz)}", width)
        for ln in worst_lines(s.worst, lambda f: _short(f, folder)):
            if ln.startswith("  "):
                lines += textwrap.wrap(ln.strip(), width, initial_indent="  ", subsequent_indent="    ",
                                       break_long_words=False, break_on_hyphens=False)
            else:
                lines += textwrap.wrap(ln, width, break_long_words=False, break_on_hyphens=False)
    return lines


def verdict_line(lot) -> str:
    errors = len(lot.errors)
    failed = sum(1 for u in lot.results if u.error is None and not u.passed)
    if errors:
        extra = f"; {failed} unit{'s' if failed != 1 else ''} failed" if failed else ""
        return f"Verdict: ERROR ({errors} file{'s' if errors != 1 else ''} could not be read{extra})"
    return "Verdict: FAIL" if failed else "Verdict: PASS"


def render(lot, store_info=None, width: int | None = None) -> None:
    """Print the terminal view of a ``batch.LotResult`` (and where it was stored)."""
    from rich.console import Console
    from rich.text import Text

    width = width or text_width()
    c = Console(file=sys.stdout, highlight=False, width=max(width, 40), soft_wrap=True,
                force_terminal=None if sys.stdout.isatty() else False)
    for ln in lot_lines(lot, width):
        t = Text(ln)
        t.highlight_words([" FAIL", " ERROR"], style="red")
        c.print(t)
    if store_info is not None:
        c.print(Text(f"Stored in {store_info.url}: lot {store_info.lot}, station {store_info.station}, "
                     f"{store_info.added} units added, {store_info.duplicates} already there"))
    v = verdict_line(lot)
    c.print(Text(v, style="red" if "PASS" not in v else "green"))


class Progress:
    """A rich progress bar on stderr (only used when stderr is a terminal)."""

    def __init__(self, total: int) -> None:
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, TimeRemainingColumn
        from rich.progress import Progress as _P

        # no refresh thread (auto_refresh off): the worker processes are forked while it runs
        self.p = _P("checking", BarColumn(), MofNCompleteColumn(), TimeRemainingColumn(),
                    console=Console(file=sys.stderr), transient=True, auto_refresh=False)
        self.task = self.p.add_task("check", total=total)
        self.last = 0.0

    def __enter__(self):
        self.p.__enter__()
        return self

    def __exit__(self, *exc):
        return self.p.__exit__(*exc)

    def __call__(self, n: int) -> None:
        import time

        self.p.advance(self.task, n)
        now = time.monotonic()
        if now - self.last >= 0.1:  # at most ten redraws a second
            self.last = now
            self.p.refresh()

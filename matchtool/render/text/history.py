"""Terminal view of ``history``: per lot, the counts and yield, each requirement's spread and
process capability, the resonance's spread and the worst units (word-safe tables, see
``render/text/check.py``)."""

from __future__ import annotations

import sys
import textwrap

from ...units import format_frequency as ff
from .check import GLUE, _short, common_folder, table, text_width, window_text, worst_lines

_UNIT = {"min_return_loss_db": "dB", "max_vswr": "ratio", "max_s11_db": "dB", "max_mismatch_loss_db": "dB",
         "max_deviation_db": "dB"}


def _val(key: str, x: float | None, digits: int = 2) -> str:
    if x is None:
        return "n/a"
    if key == "resonance":
        return ff(x)
    d = max(3, digits) if key == "max_vswr" else digits
    u = _UNIT.get(key, "")
    return f"{x:.{d}f}" + (f"{GLUE}{u}" if u else "")


def _limit(r) -> str:
    if r.key == "resonance":
        if r.f_low_hz is None or r.f_high_hz is None:
            return "n/a"
        return window_text(r.f_low_hz, r.f_high_hz)[1]  # the edges with the digits the spec gave
    if r.limit is None:
        return "changed"
    d = 3 if r.key == "max_vswr" else 2
    while d < 10 and abs(round(r.limit, d) - r.limit) > 1e-12 * max(1.0, abs(r.limit)):
        d += 1  # the limit with the digits the spec gave it (15.7531, not 15.75)
    return (">= " if r.cpk_side == "lower" else "<= ") + _val(r.key, r.limit, d)


def _std(key: str, x: float | None) -> str:
    if x is None:
        return "n/a"
    if key == "resonance":
        return f"{x / 1e6:.3f} MHz"
    return _val(key, x, 3)


def _wrap(text: str, width: int, indent: str = "", sub: str = "") -> list[str]:
    return textwrap.wrap(text, width, initial_indent=indent, subsequent_indent=sub or indent,
                         break_long_words=False, break_on_hyphens=False)


def history_lines(h, width: int) -> list[str]:
    lines: list[str] = []
    if not h.lots:
        filt = ", ".join(f"{k} {v}" for k, v in (("lot", h.lot), ("since", h.since), ("spec", h.spec)) if v)
        return _wrap(f"No units in {', '.join(h.stores)}" + (f" ({filt})" if filt else "") + ".", width)
    for lt in h.lots:
        when = ""
        if lt.first_at is not None:
            a, b = lt.first_at.strftime("%Y-%m-%d %H:%M"), lt.last_at.strftime("%Y-%m-%d %H:%M")
            when = f", checked {a}" + (f" to {b}" if b != a else "") + " UTC"
        lines += _wrap(f"Lot {lt.lot}: {lt.units} units{when}; spec {', '.join(lt.specs)}; "
                       f"station{'s' if len(lt.stations) != 1 else ''} {', '.join(lt.stations)}", width)
        lines += _wrap(f"Yield {100 * lt.yield_fraction:.1f} %: {lt.passed} passed, {lt.failed} failed, "
                       f"{lt.errors} unreadable", width, "  ")
        rows = []
        for r in lt.requirements:
            cpk = f"{r.cpk:.2f}" if r.cpk is not None else "n/a"
            rows.append([r.name, f"{100 * r.yield_fraction:.1f} %", f"{r.passed}/{r.evaluated}", _val(r.key, r.mean),
                         _std(r.key, r.std), _limit(r), cpk])
        lines += table(("requirement", "yield", "passed", "mean", "std dev", "limit", "Cpk"), rows,
                       width, right=(False, True, True, True, True, True, True), indent="  ")
        for r in lt.requirements:
            if r.cpk is None and r.cpk_reason:
                lines += _wrap(f"{r.name}: no Cpk ({r.cpk_reason})", width, "  ", "    ")
        if lt.resonance_mean_hz is not None:
            spread = f", std dev {lt.resonance_std_hz / 1e6:.3f} MHz" if lt.resonance_std_hz is not None else ""
            lines += _wrap(f"Best-match frequency: mean {ff(lt.resonance_mean_hz)}{spread}, min "
                           f"{ff(lt.resonance_min_hz)}, max {ff(lt.resonance_max_hz)} ({lt.resonance_n} units)",
                           width, "  ", "    ")
        folder = common_folder([w.file for w in lt.worst])
        if folder and lt.worst:
            lines += _wrap(f"Worst units (files in {folder}/):", width, "  ", "    ")
        for ln in worst_lines(lt.worst, lambda f, folder=folder: _short(f, folder), station=True):
            if ln.startswith("  "):
                lines += _wrap(ln.strip(), width, "    ", "      ")
            else:
                lines += _wrap(ln, width, "  ", "    ")
    lines += _wrap("mean and std dev: of each unit's worst value in the band (the best-match frequency for the "
                   "resonance). Cpk: (mean - LSL) / (3 s) against a lower limit, (USL - mean) / (3 s) against an "
                   "upper limit, the "
                   "smaller of both for the resonance window (s: sample standard deviation of the worst value per "
                   "unit); not given below 5 units. It describes the units measured and certifies nothing.", width)
    return lines


def render(h, width: int | None = None) -> None:
    """Print the terminal view of a ``history.HistoryResult``."""
    from rich.console import Console
    from rich.text import Text

    width = width or text_width()
    c = Console(file=sys.stdout, highlight=False, width=max(width, 40), soft_wrap=True,
                force_terminal=None if sys.stdout.isatty() else False)
    for ln in history_lines(h, width):
        c.print(Text(ln))

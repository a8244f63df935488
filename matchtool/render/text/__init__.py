"""Terminal views: one module per command, each with ``render(result)``. Shared pieces here:
the console, number formatting, warnings on stderr."""

from __future__ import annotations

import math
import sys

NO_TERMINAL_COLUMNS = 140
"""Width of the tables when stdout is not a terminal (a file, a pipe) and ``COLUMNS`` is not set."""


def columns() -> int | None:
    """The width asked for in the ``COLUMNS`` environment variable (a positive whole number), else None."""
    import os

    text = os.environ.get("COLUMNS", "").strip()
    return int(text) if text.isdigit() and int(text) > 0 else None


def console():
    """A rich Console on the current stdout (created per call so tests can capture it): as wide as
    ``COLUMNS`` when that is set, else the terminal's width, else :data:`NO_TERMINAL_COLUMNS`."""
    from rich.console import Console

    width = columns() or (None if sys.stdout.isatty() else NO_TERMINAL_COLUMNS)
    return Console(file=sys.stdout, highlight=False, soft_wrap=False, width=width)


def fmt(x: float | None, digits: int = 2, unit: str = "") -> str:
    """A number for a table: fixed digits, 'inf' / 'n/a' for non-finite values, never '-0.00'."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "n/a"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    text = f"{x:.{digits}f}"
    if text.startswith("-") and float(text) == 0:  # no "-0.00" for a value that rounds to zero
        text = text[1:]
    return f"{text}{(' ' + unit) if unit else ''}"


def warn(messages) -> None:
    """Print warnings to stderr, one line each."""
    for m in messages:
        print(f"warning: {' '.join(str(m).split())}", file=sys.stderr)


def say(text: str) -> None:
    """A sentence on stdout, wrapped at word boundaries to the console's width (never cut)."""
    from .tables import say as wrapped

    wrapped(console(), text)

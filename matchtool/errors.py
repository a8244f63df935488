"""One exception hierarchy for matchtool.

Every error carries structured fields (``path``, ``line``, ``key``) and builds its one-line
message from them, so the CLI can print ``error: <message>`` and exit with status 2. Each class
also subclasses the matching built-in exception, so library callers may catch either.
"""

from __future__ import annotations

import enum
from collections.abc import Mapping
from pathlib import Path


class MatchtoolError(Exception):
    """Base class: something matchtool could not do. ``str(err)`` is one line."""

    def __init__(
        self,
        what: str,
        path: str | Path | None = None,
        line: int | None = None,
        key: str | None = None,
        expected: str | None = None,
        parameter: str | None = None,
        value: object = None,
    ) -> None:
        self.what = what
        self.path = str(path) if path is not None else None
        self.line = line
        self.key = key
        self.expected = expected
        # ``parameter`` names a function argument in the core's own terms (``velocity_factor``,
        # ``z0_ohm``) and ``value`` what it was given; the CLI shows the flag the user typed instead
        self.parameter = parameter
        self.value = value
        super().__init__(self.message)

    def message_for(self, names: Mapping[str, str] | None = None) -> str:
        """The one-line message, naming ``parameter`` as ``names[parameter]`` (e.g. a CLI flag)."""
        return self._build(names or {})

    @property
    def message(self) -> str:
        return self._build({})

    def _build(self, names: Mapping[str, str]) -> str:
        what = self.what
        if self.parameter is not None:
            shown = names.get(self.parameter, self.parameter)
            value = "" if self.value is None else f" {_show_value(self.value)}"
            what = f"{shown}{value}: {what}" if what else f"{shown}{value}"
        where = []
        if self.path is not None:
            where.append(self.path)
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.key is not None:
            where.append(f"key '{self.key}'")
        text = what
        if self.expected:
            text = f"{text}; expected {self.expected}"
        text = " ".join(text.split())  # always one line
        return f"{' '.join(where)}: {text}" if where else text

    def __str__(self) -> str:
        return self.message


class InputError(MatchtoolError, ValueError):
    """An input file is unreadable or malformed."""


class TouchstoneError(InputError):
    """A Touchstone file that cannot be loaded without guessing."""


class SpecError(InputError):
    """A spec file (TOML) that is malformed or inconsistent."""


class BudgetError(InputError):
    """A link-budget file (TOML) that is malformed or inconsistent."""


class UsageError(MatchtoolError, ValueError):
    """Bad command-line arguments or bad arguments to a library function."""


class OutOfRangeError(UsageError):
    """A frequency or band asked for lies outside the measured sweep (never extrapolated)."""


class OutputError(MatchtoolError, OSError):
    """An output could not be written, or would replace an existing file without --force."""


class NoSolutionError(MatchtoolError, ValueError):
    """A computation has no valid answer for these inputs (e.g. no matching network)."""


def _show_value(value: object) -> str:
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


class MatchtoolWarning(UserWarning):
    """Something the user must know about a result that was still computed (results also carry
    their warnings as one-line strings in a ``warnings`` field)."""


class ExitStatus(enum.IntEnum):
    """Exit statuses of every command (see the interface contract)."""

    OK = 0  # ran; every spec requirement (if any) passed
    FAIL = 1  # ran; at least one spec requirement failed
    ERROR = 2  # could not run: bad arguments, unreadable or malformed input, refused overwrite
    INTERRUPTED = 130  # Ctrl-C: stopped cleanly, nothing half-written

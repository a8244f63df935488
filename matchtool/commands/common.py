"""Pieces every command shares: option types, warning and JSON output, number formatting."""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path
from typing import Annotated, Any

import typer

from ..render.jsonout import clean
from ..units import parse_frequency

PortOpt = Annotated[int, typer.Option("--port", metavar="N", help="Port N whose reflection S_NN is analysed (1-based).")]
Z0Opt = Annotated[float | None, typer.Option(
    "--z0", metavar="OHM", help="Renormalise to this system impedance in ohms (default: the file's reference).")]
JsonOpt = Annotated[bool, typer.Option("--json", help="Print one JSON document on stdout instead of tables.")]
ForceOpt = Annotated[bool, typer.Option("--force", help="Replace output files that already exist.")]
MinRLOpt = Annotated[float | None, typer.Option(
    "--min-return-loss", metavar="DB", help="Threshold as return loss in positive dB [default: 10, i.e. S11 -10 dB].")]
MaxVswrOpt = Annotated[float | None, typer.Option("--max-vswr", metavar="V", help="Threshold as a VSWR, e.g. 2.")]
MaxS11Opt = Annotated[float | None, typer.Option("--max-s11-db", metavar="DB", help="Threshold as S11 in dB, e.g. -10.")]


def frequencies(values: list[str] | None) -> list[float]:
    """Parse repeatable frequency options (``915MHz``, ``2.45 GHz``, ``868e6``) into Hz."""
    return [parse_frequency(v) for v in values or []]


def warn(messages: list[str]) -> None:
    """Print warnings to stderr, one line each."""
    for m in messages:
        print(f"warning: {' '.join(str(m).split())}", file=sys.stderr)


def emit_json(doc: dict[str, Any]) -> None:
    """Print exactly one JSON document on stdout; non-finite numbers become null with a warning.

    The warnings (the document's own and the null ones) also go to stderr.
    """
    warnings = list(doc.get("warnings", []))
    body = clean({k: v for k, v in doc.items() if k != "warnings"}, warnings)
    body["warnings"] = warnings
    sys.stdout.write(json.dumps(body, indent=2, allow_nan=False) + "\n")
    warn(warnings)


def console():
    """A rich Console on the current stdout (created per call so tests can capture it)."""
    from rich.console import Console

    width = None if sys.stdout.isatty() else 140
    return Console(file=sys.stdout, highlight=False, soft_wrap=False, width=width)


def fmt(x: float, digits: int = 2, unit: str = "") -> str:
    """A number for a table: fixed digits, 'inf' / 'n/a' for non-finite values."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "n/a"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    text = f"{x:.{digits}f}"
    if text.startswith("-") and float(text) == 0:  # no "-0.00" for a value that rounds to zero
        text = text[1:]
    return f"{text}{(' ' + unit) if unit else ''}"








def same_file(a: str | Path, b: str | Path) -> bool:
    """Whether two paths name the same file (after resolving links and ``..``; hard links too)."""
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return pa.samefile(pb)
        return pa.resolve() == pb.resolve()
    except OSError:
        return False

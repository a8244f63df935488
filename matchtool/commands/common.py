"""Pieces every command shares: option types, warning and JSON output, number formatting."""

from __future__ import annotations

import functools
import json
import math
import os
import sys
from pathlib import Path
from typing import Annotated, Any

import typer

from ..errors import OutputError
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


def cli_guard(fn):
    """Wrap a command so that Ctrl-C reaches the CLI's handler (one line, exit status 130), and
    numpy's floating-point RuntimeWarnings (overflow for absurd but finite options such as
    ``--delay 1e300s``) never reach stderr as loose text: the results carry inf / NaN, which the
    tables show as 'inf' / 'n/a' and the JSON writer turns into null with a named warning.

    typer turns KeyboardInterrupt into a silent ``Exit(130)``; re-raised as ``typer.Abort`` it is
    reported by ``matchtool.cli.main``. Outputs are written atomically, so nothing is half-written.
    """

    @functools.wraps(fn)
    def run(*args, **kwargs):
        import warnings

        import numpy as np

        try:
            with np.errstate(all="ignore"), warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)  # numpy's "All-NaN slice" and the like
                return fn(*args, **kwargs)
        except KeyboardInterrupt:
            raise typer.Abort() from None

    return run


def refuse_special_output(path: str | Path) -> None:
    """Refuse an output path that exists but is not a regular file (a FIFO, device, socket, or a
    link to one, e.g. ``/dev/stdout``): the atomic rename would replace the node itself."""
    import stat

    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return
    if not stat.S_ISREG(mode) and not stat.S_ISDIR(mode):  # a directory is refused by check_output
        raise OutputError("is not a regular file (a FIFO, device or socket); not replaced", path=path,
                          expected="a plain file name for the output")


def no_negative_zero(obj: Any) -> Any:
    """``obj`` (nested dicts / lists) with every float -0.0 written as 0.0 (a return loss of -0.0 dB
    is IEEE arithmetic for |Gamma| = 1, not a measurement)."""
    if isinstance(obj, float):
        return obj + 0.0
    if isinstance(obj, dict):
        return {k: no_negative_zero(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [no_negative_zero(v) for v in obj]
    return obj


def same_file(a: str | Path, b: str | Path) -> bool:
    """Whether two paths name the same file (after resolving links and ``..``; hard links too)."""
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return pa.samefile(pb)
        return pa.resolve() == pb.resolve()
    except OSError:
        return False

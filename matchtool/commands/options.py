"""Option types every command shares, and the one table that maps a core parameter name to the
command-line flag that sets it (so an error raised in the core's own terms names the flag the user
typed)."""

from __future__ import annotations

from typing import Annotated

import typer

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

# core parameter name -> the flag that sets it; add a line when a command exposes a new parameter
PARAMETER_FLAGS: dict[str, str] = {
    "z0_ohm": "--z0",
    "port": "--port",
    "threshold_return_loss_db": "--min-return-loss",
    "min_return_loss_db": "--min-return-loss",
    "max_vswr": "--max-vswr",
    "max_s11_db": "--max-s11-db",
    "jobs": "--jobs",
    "at_hz": "--at",
    "radius_m": "--radius",
    "capped": "--capped",
}


def frequencies(values: list[str] | None) -> list[float]:
    """Parse repeatable frequency options (``915MHz``, ``2.45 GHz``, ``868e6``) into Hz."""
    return [parse_frequency(v) for v in values or []]

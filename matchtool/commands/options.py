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
    "shard": "--shard",
    "scheduler": "--scheduler",
    "store": "--store",
    "lot": "--lot",
    "since": "--since",
    "junit_level": "--junit-level",
    "pair": "--pair",
    "band": "--band",
    "phase_step_deg": "--phase-step",
    # feedline / locate: the one cable model (matchtool.feedline.CableModel)
    "length_m": "--length",
    "velocity_factor": "--velocity-factor",
    "loss_db_per_m": "--loss-db-per-m",
    "loss_ref_hz": "--loss-ref",
    "dielectric_loss_db_per_m": "--dielectric-loss-db-per-m",
    "cable_z0_ohm": "--cable-z0",
    "delay_s": "--delay",
    "toward": "--toward",
    "flip_cable": "--flip-cable",
    # locate
    "window": "--window",
    "mode": "--mode",
    "max_distance_m": "--max-distance",
    "gate": "--gate",
    "floor_return_loss_db": "--floor",
    "min_separation_m": "--min-separation",
    "max_peaks": "--peaks",
    "at_hz": "--at",
    "radius_m": "--radius",
    "capped": "--capped",
}


# the cable loss options that feedline and locate share (the one cable model, feedline.CableModel)
VelocityFactorOpt = Annotated[float | None, typer.Option(
    "--velocity-factor", metavar="VF", help="Velocity factor, 0 < VF <= 1 (solid PE 0.66).")]
LossDbPerMOpt = Annotated[float | None, typer.Option(
    "--loss-db-per-m", metavar="A", help="Conductor loss in dB/m at --loss-ref, scaled with sqrt(f).")]
LossRefOpt = Annotated[str | None, typer.Option(
    "--loss-ref", metavar="FREQ", help="Frequency at which the losses are given [default: 1GHz].")]
DielectricLossOpt = Annotated[float | None, typer.Option(
    "--dielectric-loss-db-per-m", metavar="A", help="Dielectric loss in dB/m at --loss-ref, scaled with f [default: 0].")]

MIN_LOSS_REF_HZ = 1e6
"""Lowest --loss-ref accepted: cable attenuation is not specified below 1 MHz."""


def is_bare_number(text: str) -> bool:
    """True when ``text`` is a number without a unit."""
    try:
        float(text)
    except ValueError:
        return False
    return True


def loss_ref_hz(text: str | None) -> float:
    """The --loss-ref frequency in Hz (default 1 GHz); refuses one below any cable data sheet."""
    from ..errors import UsageError

    ref_hz = parse_frequency(text) if text is not None else 1e9
    if ref_hz < MIN_LOSS_REF_HZ:
        hint = "a frequency of at least 1MHz" + (f" (a bare number is Hz: did you mean {text.strip()}MHz?)"
                                                 if text is not None and is_bare_number(text) else ", e.g. 1GHz")
        raise UsageError(f"--loss-ref {text.strip() if text else ''} is {ref_hz:g} Hz, below any cable "
                         "data sheet", expected=hint)
    return ref_hz


def frequencies(values: list[str] | None) -> list[float]:
    """Parse repeatable frequency options (``915MHz``, ``2.45 GHz``, ``868e6``) into Hz."""
    return [parse_frequency(v) for v in values or []]

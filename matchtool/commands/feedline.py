"""``matchtool feedline SWEEP``: move the reference plane along a cable, both ways.

``--toward radio`` adds the cable in front of the antenna (what the radio sees through the feed);
``--toward antenna`` removes it from a measurement taken through it (de-embedding).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from .. import feedline as fl
from ..errors import OutputError, UsageError
from ..outputs import check_output
from ..render.json_contract import emit_json, feedline_doc
from ..render.text import warn
from ..render.text.feedline import render, touchstone_comments
from ..sweep import ports_from_name, write_touchstone
from ..units import parse_band, parse_length, parse_time
from .common import same_file
from .options import (
    DielectricLossOpt,
    ForceOpt,
    JsonOpt,
    LossDbPerMOpt,
    LossRefOpt,
    PortOpt,
    SweepArg,
    VelocityFactorOpt,
    Z0Opt,
    frequencies,
    is_bare_number,
    loss_ref_hz,
)

EPILOG = """Examples:

\b
  # measured at the end of a 3 m test cable: remove the cable
  matchtool feedline meas.s1p --length 3m --velocity-factor 0.66 \\
      --loss-db-per-m 0.66 --toward antenna --out ant.s1p

\b
  # what the radio sees through a 1.5 m feed (losses given at 1 GHz)
  matchtool feedline ant.s1p --length 150cm --velocity-factor 0.85 \\
      --loss-db-per-m 0.12 --dielectric-loss-db-per-m 0.02 \\
      --toward radio --band 902MHz:928MHz

\b
  # a measured cable (port 1 toward the analyzer); a port extension
  matchtool feedline meas.s1p --cable cable.s2p --toward antenna --out ant.s1p
  matchtool feedline meas.s1p --delay 250ps --toward antenna --at 2.45GHz
"""

MAX_DELAY_S = 1e-6
"""Longest --delay accepted: 1 us is some 200 m of cable, longer than any feed measured on a VNA."""



_MODEL_OPTS = ("--velocity-factor", "--loss-db-per-m", "--loss-ref", "--dielectric-loss-db-per-m", "--cable-z0")


def _non_negative(x: float, parameter: str, typed: str, expected: str) -> float:
    """``x`` when finite and >= 0; else a UsageError that echoes the option as the user typed it
    (``--length -3m``, not the parsed ``-3``)."""
    import math

    if not (math.isfinite(x) and x >= 0):
        raise UsageError("must be zero or more", parameter=parameter, value=str(typed).strip(),
                         expected=expected)
    return x


def _cable_from_options(length: str | None, velocity_factor: float | None, loss_db_per_m: float | None,
                        loss_ref: str | None, dielectric: float | None, cable_z0: float | None, cable: str | None,
                        flip_cable: bool, delay: str | None):
    """Validate the cable options; return ("model", CableModel) / ("delay", Delay) / ("file", path)."""
    given = [name for name, v in (("--length", length), ("--cable", cable), ("--delay", delay)) if v is not None]
    if not given:
        raise UsageError("no cable given", expected="--length L with --velocity-factor and --loss-db-per-m, "
                                                    "or --cable FILE.s2p, or --delay T")
    if len(given) > 1:
        raise UsageError(f"give only one of --length, --cable, --delay (got {' and '.join(given)})")
    model_given = [n for n, v in zip(_MODEL_OPTS, (velocity_factor, loss_db_per_m, loss_ref, dielectric, cable_z0),
                                     strict=True) if v is not None]
    if flip_cable and cable is None:
        raise UsageError("--flip-cable applies only to a measured cable", expected="--cable FILE.s2p")
    if length is None:
        if model_given:
            raise UsageError(f"{model_given[0]} applies only to a cable model", expected="--length L")
        if delay is not None:
            delay_s = _non_negative(parse_time(delay), "delay_s", delay, "a delay of zero or more, e.g. 250ps")
            if delay_s > MAX_DELAY_S:
                hint = "a delay of at most 1us" + (f" (a bare number is seconds: did you mean {delay.strip()}ps?)"
                                                   if is_bare_number(delay) else ", e.g. 250ps or 1.2ns")
                raise UsageError(f"--delay {delay.strip()} is {delay_s:g} s, longer than any feed line", expected=hint)
            return "delay", fl.Delay(delay_s)
        return "file", cable
    if velocity_factor is None:
        raise UsageError("a cable model needs --velocity-factor",
                         expected="e.g. 0.66 for solid PE, 0.69 PTFE, about 0.85 foam PE")
    if loss_db_per_m is None:
        raise UsageError("a cable model needs --loss-db-per-m (at --loss-ref, default 1 GHz)",
                         expected="the cable's attenuation in dB per metre; 0 for a lossless line")
    ref_hz = loss_ref_hz(loss_ref)
    length_m = _non_negative(parse_length(length), "length_m", length, "a length of zero or more, e.g. 3m")
    return "model", fl.CableModel(length_m=length_m, velocity_factor=velocity_factor,
                                  loss_db_per_m=loss_db_per_m, loss_ref_hz=ref_hz,
                                  dielectric_loss_db_per_m=dielectric or 0.0, z0_ohm=cable_z0)


def register(app: typer.Typer) -> None:
    @app.command("feedline", epilog=EPILOG)
    def feedline_cmd(
        sweep: SweepArg,
        toward: Annotated[str | None, typer.Option(
            "--toward", metavar="radio|antenna",
            help="radio: add the cable in front of the antenna; antenna: remove (de-embed) it.")] = None,
        length: Annotated[str | None, typer.Option(
            "--length", metavar="L", help="Cable model length with unit: 3m, 150cm, 18in.")] = None,
        velocity_factor: VelocityFactorOpt = None,
        loss_db_per_m: LossDbPerMOpt = None,
        loss_ref: LossRefOpt = None,
        dielectric_loss_db_per_m: DielectricLossOpt = None,
        cable_z0: Annotated[float | None, typer.Option(
            "--cable-z0", metavar="OHM", help="Cable impedance [default: the system impedance].")] = None,
        cable: Annotated[str | None, typer.Option(
            "--cable", metavar="FILE.s2p", help="Measured cable, port 1 toward the radio / analyzer.")] = None,
        flip_cable: Annotated[bool, typer.Option(
            "--flip-cable", help="The cable file was saved with port 1 toward the antenna.")] = False,
        delay: Annotated[str | None, typer.Option(
            "--delay", metavar="T", help="Pure lossless delay (port extension): 250ps, 1.2ns.")] = None,
        at: Annotated[list[str] | None, typer.Option(
            "--at", metavar="FREQ", help="Report at this frequency (repeatable).")] = None,
        band: Annotated[str | None, typer.Option(
            "--band", metavar="LOW:HIGH", help="Report worst cases over this band [default: the whole sweep].")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        out: Annotated[str | None, typer.Option(
            "--out", metavar="FILE", help="Write the moved sweep as Touchstone (same ports and reference).")] = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Move the reference plane along a cable model, a measured cable or a delay, and report the
        cable loss, return loss and VSWR at both ends, what the cable hides, and the total feed loss."""
        if toward is None:
            raise UsageError("--toward is required", expected="--toward radio (add the cable) or "
                                                              "--toward antenna (remove it)")
        toward = toward.strip().lower()
        if toward not in ("radio", "antenna"):
            raise UsageError(f"--toward {toward!r}", expected="radio or antenna")
        _, cab = _cable_from_options(length, velocity_factor, loss_db_per_m, loss_ref, dielectric_loss_db_per_m,
                                     cable_z0, cable, flip_cable, delay)
        at_hz = frequencies(at)
        band_hz = parse_band(band) if band is not None else None
        if out is not None:
            check_output(out, force)
            for name, inp in (("sweep", sweep), ("--cable file", cable)):
                if inp is not None and same_file(out, inp):
                    raise UsageError(f"--out would overwrite the input {name}", path=out,
                                     expected="an output file name that is not one of the inputs")
            if ports_from_name(out) is None:
                raise UsageError(f"cannot tell the Touchstone kind from the name {Path(out).name!r}", path=out,
                                 expected="a .sNp file name with N the input's port count")

        result = fl.analyze(sweep, cab, toward, z0_ohm=z0, bands=[band_hz] if band_hz else (), at_hz=at_hz,
                            port=port, flip_cable=flip_cable)
        if out is not None:
            n = int(result.network.nports)
            if ports_from_name(out) != n:
                raise UsageError(f"the input has {n} port(s); the output cannot be .s{ports_from_name(out)}p",
                                 path=out, expected=f".s{n}p")
            if result.first_nonfinite_f_hz is not None:
                raise OutputError(f"the moved sweep is not finite at {result.first_nonfinite_f_hz / 1e6:.6g} MHz "
                                  "(the cable undoes the measurement completely there); nothing written", path=out)
            write_touchstone(out, result.network, force=force, comments=touchstone_comments(result))
        if json_out:
            emit_json(feedline_doc(result, out))
        else:
            render(result, out)
            warn(result.warnings)
        return 0

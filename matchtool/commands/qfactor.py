"""``matchtool qfactor SWEEP``: Q and bandwidth potential from the impedance, the small-antenna
bound for the antenna's size, and cap-method radiation efficiency."""

from __future__ import annotations

from typing import Annotated

import typer

from ..antenna import qfactor
from ..render.json_contract import emit_json, qfactor_doc
from ..render.text import warn
from ..summary import threshold_from_options
from ..sweep import load
from ..units import parse_frequency, parse_length
from .options import JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, SweepArg, Z0Opt

EPILOG = """Examples:

\b
  matchtool qfactor ant.s1p                         # Q at the resonance nearest the best match
  matchtool qfactor ant.s1p --at 915MHz --radius 3cm
  matchtool qfactor ant.s1p --capped ant_in_cap.s1p --max-vswr 2 --json

\b
Q is Yaghjian-Best Q_Z from R, X and their slopes (a local cubic fit, stated in the output).
The bandwidth potential is what a lossless single-resonator match at f0 could reach; the
Chu-McLean bound needs --radius, the radius of the smallest sphere enclosing the antenna; the
cap method needs a second sweep of the same antenna inside a closed metal cap (low power).
The efficiency is marked UNRELIABLE when the capped resonance lies outside the free antenna's
half-power band f0 +- f0/(2Q). f0 is called a resonance only where |X| <= 0.1 R; elsewhere the
output names the series reactance that would tune it.
"""


def register(app: typer.Typer) -> None:
    @app.command("qfactor", epilog=EPILOG)
    def qfactor_cmd(
        sweep: SweepArg,
        at: Annotated[str | None, typer.Option(
            "--at", metavar="FREQ",
            help="Evaluate Q here (915MHz); default: the X = 0 resonance nearest the best-matched sample.")] = None,
        radius: Annotated[str | None, typer.Option(
            "--radius", metavar="LENGTH",
            help="Radius of the smallest sphere enclosing the antenna (3cm, 18mm, 1.2in) for the Chu-McLean bound.")] = None,
        capped: Annotated[str | None, typer.Option(
            "--capped", metavar="SWEEP",
            help="The same antenna measured inside a closed conducting cap: radiation efficiency (Wheeler).")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Q and bandwidth potential of an antenna, its small-antenna bound, cap-method efficiency."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        at_hz = parse_frequency(at) if at is not None else None
        radius_m = parse_length(radius) if radius is not None else None
        sw = load(sweep, port=port, z0_ohm=z0)
        result = qfactor(sw, at_hz=at_hz, radius_m=radius_m, capped=capped, threshold_return_loss_db=thr)
        if json_out:
            emit_json(qfactor_doc(result))
        else:
            from ..render.text.qfactor import render

            render(result)
            warn(result.warnings)
        return 0

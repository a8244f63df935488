"""``matchtool inspect SWEEP``: reflection metrics of one sweep (one port, or every port)."""

from __future__ import annotations

from typing import Annotated

import typer

from ..errors import UsageError
from ..render.json_contract import emit_json, inspect_doc, inspect_overview_doc, inspect_ports_doc
from ..render.text import warn
from ..summary import summarize, summarize_ports, threshold_from_options
from ..sweep import load
from .options import JsonOpt, MaxS11Opt, MaxVswrOpt, MinBandWidthOpt, MinRLOpt, SweepArg, Z0Opt, frequencies, min_band_width

EPILOG = """Examples:

  matchtool inspect sample_sweeps/ant_r2.s1p

  matchtool inspect ant.s2p --port 2 --at 902MHz --at 915MHz --at "928 MHz"

  matchtool inspect board.s4p --port all --json

  matchtool inspect ant.s1p --max-vswr 2 --json

  matchtool inspect sample_sweeps/ant_r2.s1p --min-band-width 2MHz

An N-port file without --port shows one line per port and the details of port 1. Threshold
crossings narrower than --min-band-width (default 0.1 % of the sweep's span, and at least 2
samples) are listed apart as noise-level crossings, never as bands (JSON: noise_crossings).
"""

PortChoice = Annotated[str | None, typer.Option(
    "--port", metavar="N|all", help="Port N whose reflection S_NN is analysed (1-based), or 'all' for every port "
    "[default: 1; an N-port file also lists every port's best match and bands].", show_default=False)]


def parse_port(text: str | None) -> int | str | None:
    """``None`` -> None, ``"all"`` -> ``"all"``, ``"2"`` -> 2."""
    if text is None:
        return None
    t = str(text).strip().lower()
    if t == "all":
        return "all"
    if not t.isdigit() or int(t) < 1:
        raise UsageError("is not a port number", parameter="port", value=text, expected="a port from 1, or 'all'")
    return int(t)


def register(app: typer.Typer) -> None:
    @app.command("inspect", epilog=EPILOG)
    def inspect_cmd(
        sweep: SweepArg,
        port: PortChoice = None,
        z0: Z0Opt = None,
        at: Annotated[list[str] | None, typer.Option(
            "--at", metavar="FREQ", help="Frequency to report values at (repeatable): 915MHz, '2.45 GHz', 868e6.")] = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        min_band_width_opt: MinBandWidthOpt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Metrics of one sweep: best match, bands meeting the return-loss threshold, values at points."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        min_w = min_band_width(min_band_width_opt)
        at_hz = frequencies(at)
        choice = parse_port(port)
        sw = load(sweep, port=choice if isinstance(choice, int) else 1, z0_ohm=z0)
        if choice == "all" or (choice is None and sw.nports > 1):
            ms = summarize_ports(sw, thr, at_hz, detail_port=None if choice == "all" else 1, min_band_width_hz=min_w)
            if json_out:
                emit_json(inspect_ports_doc(ms) if choice == "all" else inspect_overview_doc(ms))
            else:
                from ..render.text.inspect import render_ports

                render_ports(ms)
                warn(ms.warnings)
            return 0
        s = summarize(sw, thr, at_hz, min_band_width_hz=min_w)
        if json_out:
            emit_json(inspect_doc(s))
        else:
            from ..render.text.inspect import render

            render(s)
            warn(s.warnings)
        return 0

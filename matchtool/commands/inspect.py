"""``matchtool inspect SWEEP``: reflection metrics of one sweep."""

from __future__ import annotations

from typing import Annotated

import typer

from ..render.json_contract import emit_json, inspect_doc
from ..render.text import warn
from ..summary import summarize, threshold_from_options
from ..sweep import load
from .options import JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, frequencies

EPILOG = """Examples:

  matchtool inspect sample_sweeps/ant_r2.s1p

  matchtool inspect ant.s2p --port 2 --at 902MHz --at 915MHz --at "928 MHz"

  matchtool inspect ant.s1p --max-vswr 2 --json
"""


def register(app: typer.Typer) -> None:
    @app.command("inspect", epilog=EPILOG)
    def inspect_cmd(
        sweep: Annotated[str, typer.Argument(metavar="SWEEP", help="Touchstone file (.s1p, .s2p, .sNp, .ts).",
                                             show_default=False)],
        port: PortOpt = 1,
        z0: Z0Opt = None,
        at: Annotated[list[str] | None, typer.Option(
            "--at", metavar="FREQ", help="Frequency to report values at (repeatable): 915MHz, '2.45 GHz', 868e6.")] = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Metrics of one sweep: best match, bands meeting the return-loss threshold, values at points."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        at_hz = frequencies(at)
        sw = load(sweep, port=port, z0_ohm=z0)
        s = summarize(sw, thr, at_hz)
        if json_out:
            emit_json(inspect_doc(s))
        else:
            from ..render.text.inspect import render

            render(s)
            warn(s.warnings)
        return 0

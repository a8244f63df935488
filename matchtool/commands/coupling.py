"""``matchtool coupling SWEEP.sNp``: isolation, envelope correlation (ECC) and active reflection
(TARC) between the antennas of a multi-port file."""

from __future__ import annotations

from typing import Annotated

import typer

from ..coupling import DEFAULT_PHASE_STEP_DEG, analyze_coupling
from ..errors import UsageError
from ..render.json_contract import coupling_doc, emit_json
from ..render.text import warn
from ..sweep import load
from ..units import parse_band
from .options import JsonOpt, Z0Opt

EPILOG = """Examples:

  matchtool coupling sample_sweeps/wifi_pair.s2p --band 2.4GHz:2.4835GHz

  matchtool coupling board.s4p --band 2.4GHz:2.4835GHz --band 5.15GHz:5.85GHz

  matchtool coupling board.s4p --pair 1,2 --json

Isolation is -20 log10 |S_ij| in positive dB (both S_ij and S_ji are read). ECC is computed from
S-parameters, which assumes lossless antennas: it reads low (optimistic) as the radiation
efficiency drops; use a measured pattern then. TARC is swept over the relative phase of the
excitations (see docs/coupling.md for the grid). The tool computes; it does not certify.
"""


def parse_pair(text: str | None) -> tuple[int, int] | None:
    """``"1,2"`` -> (1, 2); None stays None."""
    if text is None:
        return None
    parts = [p.strip() for p in str(text).split(",")]
    if len(parts) != 2 or not all(p.isdigit() for p in parts):
        raise UsageError(f"cannot read {text!r}", parameter="pair", expected="two port numbers such as 1,2")
    return int(parts[0]), int(parts[1])


def register(app: typer.Typer) -> None:
    @app.command("coupling", epilog=EPILOG)
    def coupling_cmd(
        sweep: Annotated[str, typer.Argument(metavar="SWEEP.sNp", help="Touchstone file of a multi-port antenna "
                                             "(.s2p, .s3p, .s4p, ...).", show_default=False)],
        band: Annotated[list[str] | None, typer.Option(
            "--band", metavar="LOW:HIGH", help="Band to report worst cases over (repeatable), e.g. "
            "2.4GHz:2.4835GHz [default: the whole sweep].")] = None,
        pair: Annotated[str | None, typer.Option(
            "--pair", metavar="I,J", help="Only this pair of ports (and the TARC of these two) [default: every "
            "pair, TARC of all ports].")] = None,
        phase_step: Annotated[float, typer.Option(
            "--phase-step", metavar="DEG", help="TARC phase grid step in degrees (widened for three or more "
            "ports to keep the grid within 1024 excitations, then polished).")] = DEFAULT_PHASE_STEP_DEG,
        z0: Z0Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Isolation, envelope correlation (ECC) and TARC between the ports of a multi-antenna device."""
        bands = [parse_band(b) for b in band or []]
        the_pair = parse_pair(pair)
        sw = load(sweep, port=1, z0_ohm=z0)
        res = analyze_coupling(sw, pair=the_pair, bands=bands, phase_step_deg=phase_step)
        if json_out:
            emit_json(coupling_doc(res))
        else:
            from ..render.text.coupling import render

            render(res)
            warn(res.warnings)
        return 0

"""``matchtool budget FILE.toml``: Friis link budget with the measured mismatch of both antennas."""

from __future__ import annotations

from typing import Annotated

import typer

from ..budget import evaluate as budget  # the one core entry point (tests patch this name)
from ..errors import ExitStatus
from ..render.json_contract import budget_doc, emit_json
from ..render.text import warn
from .options import JsonOpt

HELP = """Link budget (Friis, in dB) from a TOML file, with the mismatch of the measured antenna sweeps.

Rows: transmit power, cable, mismatch (1 - |Gamma|^2 from the sweep at the frequency, interpolated),
antenna gain, path loss, polarization loss (cos^2 of the angle), then the receive side; the received
power, the margin over the receiver sensitivity, the EIRP, and the range at which the margin falls to
the required fade margin (zero when none is set), with what the mismatch alone costs in range. Every
range names its path-loss model (free space, or log-distance when path_loss_exponent is set).

Exit status: 0 when the margin meets the required margin at every frequency and no frequency
exceeds eirp_limit_dbm (when given), 1 when either requirement fails, 2 when the file cannot be
used. The EIRP line gives the highest EIRP over the band and its frequency.

A transmit VSWR above 3 (mismatch loss above 1.25 dB) at any frequency prints a CAUTION line.

CAUTION: this is a path-loss model estimate (free space, or log-distance when path_loss_exponent is
set), not a coverage prediction (ground, walls, bodies and fading
change the real range). EIRP and RF exposure limits are set by local regulation; eirp_limit_dbm is a
number you take from your own regulation and the tool only compares against it. A high VSWR can damage a transmitter's
amplifier. The tool computes; it does not certify a radio.
"""

EPILOG = """Examples:

  matchtool budget sample_sweeps/link_915.toml

  matchtool budget link.toml --json

Budget file keys: f_hz (or f_low, f_high with step or points), distance_m, tx_power_dbm,
tx_gain_dbi or tx_aperture_m2, tx_cable_loss_db or [tx_cable], tx_sweep or tx_vswr, the same with
rx_, polarization_angle_deg or polarization_loss_db, rx_sensitivity_dbm, fade_margin_db,
path_loss_exponent with reference_distance_m, eirp_limit_dbm. See docs/budget.md.
"""


def register(app: typer.Typer) -> None:
    @app.command("budget", help=HELP, epilog=EPILOG)
    def budget_cmd(
        file: Annotated[str, typer.Argument(metavar="FILE.toml", help="Budget file (TOML).", show_default=False)],
        json_out: JsonOpt = False,
    ) -> int:
        res = budget(file)
        if json_out:
            emit_json(budget_doc(res))
        else:
            from ..render.text.budget import render

            render(res)
            warn(list(res.warnings))
        return ExitStatus.OK if res.passed else ExitStatus.FAIL

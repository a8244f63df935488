"""``matchtool compare SWEEP SWEEP...``: revisions side by side with deltas against a baseline."""

from __future__ import annotations

from typing import Annotated

import typer

from ..compare import order_with_baseline
from ..compare import revisions as compare  # the one core entry point (tests patch this name)
from ..errors import ExitStatus
from ..render.json_contract import compare_doc, emit_json
from ..render.text import warn
from ..summary import threshold_from_options
from ..sweep import load
from .options import (
    BandOpt,
    JsonOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinBandWidthOpt,
    MinRLOpt,
    PortOpt,
    SpecOpt,
    Z0Opt,
    band_options,
    min_band_width,
    require_bands_in_sweeps,
    spec_option,
)

EPILOG = """Examples:

  matchtool compare ant_r1.s1p ant_r2.s1p ant_r3.s1p --band 902MHz:928MHz

  matchtool compare r2.s1p r3.s1p --baseline r1.s1p --band ism=902MHz:928MHz --band lte=824MHz:849MHz

  matchtool compare r1.s1p r2.s1p --max-vswr 2 --json

  matchtool compare ant_r1.s1p ant_r2.s1p ant_r3.s1p --spec spec_915.toml

With --spec every requirement of the spec file (band limits, mismatch loss, resonance window,
golden deviation) is evaluated for each revision exactly as 'matchtool check' does, the best
revision per requirement is named, and the exit status is 1 when any requirement fails.

Deltas are each file minus the baseline (the first file, or --baseline). The threshold
(--min-return-loss, --max-vswr or --max-s11-db; default return loss 10 dB, i.e. S11 -10 dB)
defines the threshold bands (every band of each revision is listed, e.g. both bands of a
dual-band antenna) and is the limit applied to every --band. Crossings narrower than
--min-band-width (default 0.1 % of the span, and at least 2 samples) are listed apart as
noise-level crossings, never as bands.
"""


def register(app: typer.Typer) -> None:
    @app.command("compare", epilog=EPILOG)
    def compare_cmd(
        sweeps: Annotated[list[str], typer.Argument(metavar="SWEEP...", help="Touchstone files, in revision order.",
                                                    show_default=False)],
        baseline: Annotated[str | None, typer.Option(
            "--baseline", metavar="FILE", help="Sweep to compare against (default: the first SWEEP).")] = None,
        band: BandOpt = None,
        spec: SpecOpt = None,
        min_band_width_opt: MinBandWidthOpt = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Revisions side by side: best match, every threshold band, per-band worst case, deltas to the baseline."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = band_options(band, thr)
        min_w = min_band_width(min_band_width_opt)
        the_spec, port, z0 = spec_option(spec, port, z0)
        loaded = [load(p, port=port, z0_ohm=z0) for p in order_with_baseline(sweeps, baseline)]
        require_bands_in_sweeps(bands, loaded)
        c = compare(loaded, thr, bands, spec=the_spec, min_band_width_hz=min_w)
        if json_out:
            emit_json(compare_doc(c))
        else:
            from ..render.text.compare import render

            render(c)
            warn(c.warnings)
        # Exit 1 only for a spec requirement; --band limits inform and do not gate. An unreadable
        # file or spec raised before this point (status 2, which wins over 1).
        return ExitStatus.FAIL if c.spec_failed else ExitStatus.OK

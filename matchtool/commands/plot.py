"""``matchtool plot SWEEP... --out FILE``: return loss / S11 dB, VSWR, Smith chart, impedance."""

from __future__ import annotations

from typing import Annotated

import typer

from ..outputs import atomic_write, check_output
from ..summary import threshold_from_options
from ..sweep import load
from .common import ForceOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, warn
from .compare import BandOpt, SpecOpt, parse_band_options, read_spec, spec_bands

EPILOG = """Examples:

  matchtool plot ant_r2.s1p --out r2.png

  matchtool plot r1.s1p r2.s1p r3.s1p --band ism=902MHz:928MHz --out revisions.svg

  matchtool plot ant.s1p --kind return-loss,smith --kind vswr --kind impedance --out panels.pdf

  matchtool plot ant.s1p --kind s11-db --max-vswr 2 --out s11.png --force

Kinds: return-loss (positive dB, higher is better), s11-db (S11 in dB = -return loss), vswr,
smith (impedance chart, markers at band edges), impedance (R and X in ohms). Several kinds give
several panels in one picture. The threshold (default return loss 10 dB) is drawn as a line and
is the limit drawn as a hatched mask over every --band.
"""

KindOpt = Annotated[list[str] | None, typer.Option(
    "--kind", metavar="KIND",
    help="return-loss, s11-db, vswr, smith or impedance; repeat or comma-separate for several panels "
         "[default: return-loss].")]


def register(app: typer.Typer) -> None:
    @app.command("plot", epilog=EPILOG)
    def plot_cmd(
        sweeps: Annotated[list[str], typer.Argument(metavar="SWEEP...", help="Touchstone files to overlay.",
                                                    show_default=False)],
        out: Annotated[str, typer.Option("--out", metavar="FILE", help="Picture to write: .png, .svg or .pdf.",
                                         show_default=False)],
        kind: KindOpt = None,
        band: BandOpt = None,
        spec: SpecOpt = None,
        title: Annotated[str | None, typer.Option("--title", metavar="TEXT", help="Title over the picture.")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
    ) -> int:
        """Draw sweeps (overlaid, legend from file names) with the threshold, bands and limit masks."""
        from ..render import plots  # no matplotlib yet: it is imported inside the drawing functions

        fmt = plots.output_format(out)
        kinds = plots.parse_kinds(kind)
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = parse_band_options(band, thr)
        the_spec, port, z0 = read_spec(spec, port, z0)
        if the_spec is not None:
            bands += spec_bands(the_spec)
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        labels = plots.legend_labels([s.path for s in loaded])
        traces = [plots.trace_from_sweep(s, thr, lab) for s, lab in zip(loaded, labels, strict=True)]
        masks = [plots.BandMask(n, lo, hi, lim) for n, lo, hi, lim in bands]
        fig = plots.figure(traces, kinds, thr, masks, title)
        atomic_write(out, plots.figure_bytes(fig, fmt), force=force)
        warn([w for s in loaded for w in s.warnings])
        return 0

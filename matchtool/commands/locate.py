"""``matchtool locate SWEEP``: reflections versus distance along the feed (time domain), and gating."""

from __future__ import annotations

from typing import Annotated

import typer

from .. import locate as lc
from ..errors import UsageError
from ..feedline import CableModel
from ..outputs import check_output
from ..render.json_contract import emit_json, locate_doc
from ..render.text import warn
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
    loss_ref_hz,
)

EPILOG = """Examples:

\b
  # where are the reflections along a solid-PE feed (VF 0.66)?
  matchtool locate mast.s1p --velocity-factor 0.66

\b
  # with the cable's loss (compensated at each distance), a 30 m view
  matchtool locate mast.s1p --velocity-factor 0.85 --loss-db-per-m 0.07 \\
      --loss-ref 1GHz --max-distance 30m

\b
  # keep only the antenna at the end of a 3 m test cable; drop the connector echo
  matchtool locate bench.s1p --velocity-factor 0.7 --gate 2.8m:3.6m \\
      --band 902MHz:928MHz --out antenna_only.s1p

\b
  # capacitive or inductive? the sign of the low-pass step (sweep from k x step)
  matchtool locate bench.s1p --velocity-factor 0.7 --mode lowpass-step

A gated sweep with |Gamma| > 1 anywhere is not written (exit 2) unless --force-nonphysical.
Low-pass modes are refused when more than 10 % of the transform's points would be extrapolated
down to 0 Hz (use --mode bandpass). Distances are only as accurate as the velocity factor. Climbing masts and working on live
transmitter feeds is dangerous: follow your site's safety rules; this tool only computes.
"""


def parse_gate(text: str) -> tuple[str, float, float]:
    """``START:STOP`` as distances (``2.5m:4m``, bare numbers are metres) or round-trip times
    (``20ns:30ns``): ("m", a, b) or ("s", a, b)."""
    parts = str(text).split(":")
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise UsageError(f"cannot read --gate {text!r}", expected="START:STOP, e.g. 2.5m:4m or 20ns:30ns")
    kinds, values = [], []
    for p in parts:
        try:
            values.append(parse_length(p))
            kinds.append("m")
        except UsageError:
            try:
                values.append(parse_time(p))
                kinds.append("s")
            except UsageError:
                raise UsageError(f"cannot read --gate {text!r}: {p.strip()!r} is neither a distance nor a time",
                                 expected="distances (m, cm, mm, ft, in) or times (ns, ps, us)") from None
    if kinds[0] != kinds[1]:
        raise UsageError(f"--gate {text!r} mixes a distance and a time", expected="both distances or both times")
    if not (0 <= values[0] < values[1]):
        raise UsageError(f"--gate {text!r} must start at 0 or later and stop after it starts",
                         expected="0 <= START < STOP, e.g. 2.5m:4m")
    return kinds[0], values[0], values[1]


def register(app: typer.Typer) -> None:
    @app.command("locate", epilog=EPILOG)
    def locate_cmd(
        sweep: SweepArg,
        velocity_factor: VelocityFactorOpt = None,
        loss_db_per_m: LossDbPerMOpt = None,
        loss_ref: LossRefOpt = None,
        dielectric_loss_db_per_m: DielectricLossOpt = None,
        window: Annotated[str, typer.Option(
            "--window", metavar="|".join(lc.WINDOWS),
            help="Window over the sweep: kaiser (sidelobes -44 dB, default), kaiser13 (-98 dB, wider), "
                 "hann (-31 dB), rect (-13 dB, sharpest).")] = lc.DEFAULT_WINDOW,
        mode: Annotated[str, typer.Option(
            "--mode", metavar="|".join(lc.MODES),
            help="auto: low-pass on a harmonic sweep from near 0 Hz, else band-pass (magnitude only); "
                 "lowpass-step: the signed step, capacitive or inductive.")] = "auto",
        max_distance: Annotated[str | None, typer.Option(
            "--max-distance", metavar="L", help="Cut the view at this distance: 30m, 100ft [default: the "
                                                "alias-free range].")] = None,
        gate: Annotated[str | None, typer.Option(
            "--gate", metavar="START:STOP", help="Keep only reflections between these distances (2.8m:3.6m) or "
                                                 "round-trip times (20ns:30ns).")] = None,
        band: Annotated[str | None, typer.Option(
            "--band", metavar="LOW:HIGH", help="Band for the return loss before and after gating [default: the "
                                               "sweep without its edge regions].")] = None,
        floor: Annotated[float | None, typer.Option(
            "--floor", metavar="RL", help="List no reflection weaker than this return loss, dB [default: 10 dB "
                                          "above the trace's median, and clear of the window's sidelobes].")] = None,
        min_separation: Annotated[str | None, typer.Option(
            "--min-separation", metavar="L", help="Reflections closer than this are one [default: the "
                                                  "resolution].")] = None,
        peaks: Annotated[int, typer.Option("--peaks", metavar="N", help="List at most N reflections.")] = 10,
        uncompensated: Annotated[bool, typer.Option(
            "--uncompensated", help="Also show the reflections as seen at the analyzer, without the loss "
                                    "compensation.")] = False,
        port: PortOpt = 1,
        out: Annotated[str | None, typer.Option(
            "--out", metavar="FILE.s1p", help="Write the gated sweep (needs --gate).")] = None,
        force: ForceOpt = False,
        force_nonphysical: Annotated[bool, typer.Option(
            "--force-nonphysical", help="Write the gated sweep even where |Gamma| > 1 (refused otherwise).")] = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Reflection versus distance along the feed from a frequency sweep (distance to fault), and
        time gating that keeps the antenna and drops connector and cable echoes."""
        if velocity_factor is None:
            raise UsageError("--velocity-factor is required to turn time into distance",
                             expected="e.g. 0.66 for solid PE, 0.69 PTFE, about 0.85 foam PE")
        cable = CableModel(length_m=0.0, velocity_factor=velocity_factor, loss_db_per_m=loss_db_per_m or 0.0,
                           loss_ref_hz=loss_ref_hz(loss_ref), dielectric_loss_db_per_m=dielectric_loss_db_per_m or 0.0)
        md = parse_length(max_distance) if max_distance is not None else None
        sep = parse_length(min_separation) if min_separation is not None else None
        if peaks < 0:
            raise UsageError(f"--peaks {peaks}", expected="0 or more")
        gate_m = gate_s = None
        if gate is not None:
            kind, a, b = parse_gate(gate)
            gate_m, gate_s = ((a, b), None) if kind == "m" else (None, (a, b))
        band_hz = parse_band(band) if band is not None else None
        if band_hz is not None and gate is None:
            raise UsageError("--band applies to the gated return loss", expected="--gate START:STOP with it")
        if out is not None:
            if gate is None:
                raise UsageError("--out writes the gated sweep", expected="--gate START:STOP with it")
            check_output(out, force)
            if same_file(out, sweep):
                raise UsageError("--out would overwrite the input sweep", path=out,
                                 expected="an output file name that is not the input")
            if ports_from_name(out) != 1:
                raise UsageError("the gated sweep is a 1-port", path=out, expected="a .s1p file name")
        result = lc.analyze(sweep, cable=cable, window=window, mode=mode, max_distance_m=md, gate_m=gate_m,
                            gate_s=gate_s, band=band_hz, port=port, floor_return_loss_db=floor,
                            min_separation_m=sep, max_peaks=peaks)
        from ..render.text.locate import render, touchstone_comments

        if out is not None and result.gate is not None and result.gate.nonphysical_points and not force_nonphysical:
            # a passive 1-port cannot reflect more than it receives: such a file would mislead later steps
            raise UsageError(f"not written: the gated sweep is non-physical, |Gamma| up to "
                             f"{result.gate.max_gamma_mag:.3g} at {result.gate.nonphysical_points} point(s); widen "
                             "the gate or check the velocity factor / loss", path=out,
                             expected="--force-nonphysical to write it anyway")
        if out is not None and result.gate is not None:
            write_touchstone(out, result.gate.network, force=force, comments=touchstone_comments(result))
        if json_out:
            emit_json(locate_doc(result, out=out, uncompensated=uncompensated))
        else:
            render(result, out=out, uncompensated=uncompensated)
            warn(result.warnings)
        return 0

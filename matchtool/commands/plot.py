"""``matchtool plot SWEEP... --out FILE``: return loss / S11 dB, VSWR, Smith chart, impedance.

``--match`` draws a before/after view of a proposed L-network (the same design as ``matchtool
match``): the measured sweep and the sweep seen through the network, with the network named in the
title and legend. The match option types and :func:`propose_match` are shared with ``report``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Annotated

import numpy as np
import typer

from .. import matching as mt
from ..errors import UsageError
from ..outputs import atomic_write, check_output
from ..summary import threshold_from_options
from ..sweep import Sweep, load
from ..units import parse_band, parse_frequency
from .common import ForceOpt, JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, emit_json, warn
from .compare import BandOpt, SpecOpt, parse_band_options, read_spec, require_bands_in_sweeps, spec_bands
from .match import CRangeOpt, LRangeOpt, QCapacitorOpt, QInductorOpt, SeriesOpt, part_q

EPILOG = """Examples:

  matchtool plot ant_r2.s1p --out r2.png

  matchtool plot r1.s1p r2.s1p r3.s1p --band ism=902MHz:928MHz --out revisions.svg

  matchtool plot ant.s1p --kind return-loss,smith --kind vswr --kind impedance --out panels.pdf

  matchtool plot ant.s1p --kind s11-db --max-vswr 2 --out s11.png --force

  matchtool plot ant_r1.s1p --match --band ism=902MHz:928MHz --q-inductor 40 --out match.svg

  matchtool plot ant_r1.s1p --match --at 915MHz --series E12 --pick 2 --out match.png

Kinds: return-loss (positive dB, higher is better), s11-db (S11 in dB = -return loss), vswr,
smith (impedance chart, markers at band edges), impedance (R and X in ohms). Several kinds give
several panels in one picture. The threshold (default return loss 10 dB) is drawn as a line and
is the limit drawn as a hatched mask over every --band.

--match (one SWEEP) designs the L-network as 'matchtool match' does, for --at FREQ or for the one
--band, and draws the measured sweep and the sweep with the network in place (default kinds
return-loss and smith). Build the network and measure it before driving it with a transmitter.
"""

KindOpt = Annotated[list[str] | None, typer.Option(
    "--kind", metavar="KIND",
    help="return-loss, s11-db, vswr, smith or impedance; repeat or comma-separate for several panels "
         "[default: return-loss].")]

# The part options of `matchtool match` (same names, meanings and defaults), for plot and report.
PickOpt = Annotated[int, typer.Option("--pick", metavar="N", help="Match: which ranked network to draw (1 = best).")]
MatchAtOpt = Annotated[str | None, typer.Option("--at", metavar="FREQ",
                                                help="Match at one frequency, e.g. 915MHz (with --match).")]


@dataclass(frozen=True)
class ProposedMatch:
    """A ranked network from :mod:`matchtool.matching` and the sweep seen through it.

    ``gamma_after`` is ``matching.gamma_matched(sweep, candidate.elements, result.q)``: complex
    Gamma at the radio side, at the sweep's reference impedance, on the sweep's frequencies."""

    sweep: Sweep
    result: mt.MatchResult
    pick: int
    candidate: mt.Candidate
    gamma_after: np.ndarray

    @property
    def network_text(self) -> str:
        """``series L 12 nH, shunt C 3.3 pF`` (radio side first)."""
        return network_text(self.candidate.elements)

    @property
    def target_text(self) -> str:
        r = self.result
        if r.f_low_hz is None:
            return f"at {r.f0_hz / 1e6:.6g} MHz"
        return f"over {r.f_low_hz / 1e6:.6g}-{r.f_high_hz / 1e6:.6g} MHz"


def network_text(elements) -> str:
    """Parts in order from the radio side: ``series L 12 nH, shunt C 3.3 pF``."""
    from .match import part_value_text

    return ", ".join(f"{e.connection} {'L' if e.kind == 'inductor' else 'C'} {part_value_text(e)}" for e in elements)


def q_text(q: float) -> str:
    """A part Q for people: ``40``, or ``ideal`` for a lossless part (infinite Q)."""
    return "ideal" if math.isinf(q) else f"{q:g}"


def propose_match(sweep: Sweep, at: str | float | None, band: str | tuple[float, float] | None,
                  threshold_return_loss_db: float, series: str = "E24", q_inductor: float | None = None,
                  q_capacitor: float | None = None, c_range: str | None = None, l_range: str | None = None,
                  pick: int = 1, option_names: tuple[str, str] = ("--at", "--band")) -> ProposedMatch:
    """Design as ``matchtool match`` does (``at`` a frequency, or ``band`` ``'LOW:HIGH'`` or a
    (low, high) tuple in Hz; exactly one) and return the ``pick``-th ranked network (1-based)."""
    from .match import parse_range

    if (at is None) == (band is None):
        raise UsageError(f"give exactly one of {option_names[0]} FREQ or {option_names[1]} LOW:HIGH for the match")
    q = mt.PartQ(part_q(q_inductor, "--q-inductor"), part_q(q_capacitor, "--q-capacitor"))
    c_lo, c_hi = parse_range(c_range, "F", "--c-range", (0.1e-12, 100e-9))
    l_lo, l_hi = parse_range(l_range, "H", "--l-range", (0.5e-9, 10e-6))
    bounds = mt.ValueBounds(c_lo, c_hi, l_lo, l_hi)
    if pick < 1:
        raise UsageError(f"--pick {pick}", expected="a rank of 1 or more")
    n = max(6, pick)
    if at is not None:
        f0 = parse_frequency(at) if isinstance(at, str) else float(at)
        r = mt.design_at(sweep, f0, series=series, q=q, bounds=bounds, threshold_db=threshold_return_loss_db,
                         max_candidates=n)
    else:
        lo, hi = parse_band(band) if isinstance(band, str) else (float(band[0]), float(band[1]))
        r = mt.design_for_band(sweep, lo, hi, series=series, q=q, bounds=bounds, threshold_db=threshold_return_loss_db,
                               max_candidates=n)
    if pick > len(r.candidates):
        raise UsageError(f"--pick {pick}", expected=f"a rank from 1 to {len(r.candidates)} (networks found)")
    cand = r.candidates[pick - 1]
    return ProposedMatch(sweep, r, pick, cand, mt.gamma_matched(sweep, cand.elements, q))


def match_traces(pm: ProposedMatch, threshold_return_loss_db: float, label: str | None = None) -> list:
    """The before/after traces: the measured sweep, then the sweep through the network."""
    from ..render import plots

    name = label or pm.sweep.name
    before = plots.trace_from_sweep(pm.sweep, threshold_return_loss_db, f"{name} measured")
    after = plots.trace_from_arrays(f"{name} + #{pm.pick}: {pm.network_text}", pm.sweep.f_hz, pm.gamma_after,
                                    pm.result.z0_ohm, threshold_return_loss_db)
    return [before, after]


def match_title(pm: ProposedMatch, label: str | None = None) -> str:
    """Title naming the network: parts from the radio side, target, worst return loss before -> after."""
    r, c = pm.result, pm.candidate
    return (f"Proposed match for {label or pm.sweep.name} {pm.target_text}\n"
            f"radio side first: {pm.network_text}\n"
            f"worst return loss over the target {r.before_worst_return_loss_db:.2f} dB -> "
            f"{c.worst_return_loss_db:.2f} dB (network #{pm.pick} of {len(r.candidates)}, {r.series} values)")


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
        match: Annotated[bool, typer.Option(
            "--match", help="Before/after view of a proposed L-network for --at FREQ or the one --band.")] = False,
        at: MatchAtOpt = None,
        series: SeriesOpt = "E24",
        q_inductor: QInductorOpt = None,
        q_capacitor: QCapacitorOpt = None,
        c_range: CRangeOpt = None,
        l_range: LRangeOpt = None,
        pick: PickOpt = 1,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Draw sweeps (overlaid, legend from file names) with the threshold, bands and limit masks."""
        from ..render import plots  # no matplotlib yet: it is imported inside the drawing functions

        fmt = plots.output_format(out)
        kinds = plots.parse_kinds(kind or (["return-loss,smith"] if match else None))
        if at is not None and not match:
            raise UsageError("--at is a match option", expected="--match --at FREQ")
        target = None
        if match:
            if len(sweeps) != 1:
                raise UsageError(f"--match draws one sweep, {len(sweeps)} given", expected="one SWEEP with --match")
            if at is None and len(band or []) != 1:
                raise UsageError("--match needs its target: --at FREQ or exactly one --band LOW:HIGH",
                                 expected="e.g. --match --band 902MHz:928MHz")
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = parse_band_options(band, thr)
        if match and at is None:
            target = (bands[0][1], bands[0][2])
        the_spec, port, z0 = read_spec(spec, port, z0)
        if the_spec is not None:
            bands += spec_bands(the_spec)
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        require_bands_in_sweeps(bands, loaded)
        labels = plots.legend_labels([s.path for s in loaded])
        warnings = [w for s in loaded for w in s.warnings]
        if match:
            pm = propose_match(loaded[0], at, target, thr, series, q_inductor, q_capacitor, c_range, l_range, pick)
            traces = match_traces(pm, thr, labels[0])
            title = title or match_title(pm, labels[0])
            warnings += [w for w in pm.result.warnings if w not in warnings]
        else:
            traces = [plots.trace_from_sweep(s, thr, lab) for s, lab in zip(loaded, labels, strict=True)]
        masks = [plots.BandMask(n, lo, hi, lim) for n, lo, hi, lim in bands]
        fig = plots.figure(traces, kinds, thr, masks, title)
        atomic_write(out, plots.figure_bytes(fig, fmt), force=force)
        if json_out:
            emit_json({"out": str(out), "inputs": [str(x) for x in sweeps], "kinds": list(kinds),
                       "warnings": list(warnings)})
        else:
            print(f"wrote {out}")
            warn(warnings)
        return 0

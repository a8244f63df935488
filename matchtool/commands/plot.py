"""``matchtool plot SWEEP... --out FILE``: return loss / S11 dB, VSWR, Smith chart, impedance.

``--match`` draws a before/after view of a proposed L-network (the same design as ``matchtool
match``, through :func:`matchtool.proposal.propose`). ``--spec`` also judges every file as
``matchtool check`` does: a verdict line, and exit status 1 when a requirement fails.
"""

from __future__ import annotations

from typing import Annotated

import typer

from ..compare import revisions, spec_band_limits
from ..errors import ExitStatus, UsageError
from ..outputs import atomic_write, check_output
from ..proposal import propose
from ..render.json_contract import emit_json, plot_doc
from ..render.text import say, warn
from ..render.words import spec_verdict_line
from ..summary import threshold_from_options
from ..sweep import load
from ..units import parse_length
from .options import (
    BandOpt,
    CRangeOpt,
    ForceOpt,
    GateOpt,
    JsonOpt,
    LRangeOpt,
    MaxDistanceOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinRLOpt,
    PickOpt,
    PortOpt,
    QCapacitorOpt,
    QInductorOpt,
    SeriesOpt,
    SpecOpt,
    VelocityFactorOpt,
    Z0Opt,
    band_options,
    gate_option,
    match_request,
    require_bands_in_sweeps,
    spec_option,
)

EPILOG = """Examples:

  matchtool plot ant_r2.s1p --out r2.png

  matchtool plot r1.s1p r2.s1p r3.s1p --band ism=902MHz:928MHz --out revisions.svg

  matchtool plot r1.s1p r2.s1p r3.s1p --spec spec_915.toml --out revisions.png

  matchtool plot ant.s1p --kind return-loss,smith --kind vswr --kind impedance --out panels.pdf

  matchtool plot ant.s1p --kind s11-db --max-vswr 2 --out s11.png --force

  matchtool plot ant_r1.s1p --match --band ism=902MHz:928MHz --q-inductor 40 --out match.svg

  matchtool plot ant_r1.s1p --match --at 915MHz --series E12 --pick 2 --out match.png

  matchtool plot sample_sweeps/ant_r3_via_cable.s1p --kind distance --velocity-factor 0.66 --max-distance 10m --out feed.png

  matchtool plot sample_sweeps/wifi_pair.s2p --kind isolation --spec sample_sweeps/spec_wifi_pair.toml --out iso.png

  matchtool plot sample_sweeps/wifi_pair.s2p --kind ecc --band 2.4GHz:2.4835GHz --out ecc.svg

Kinds: return-loss (positive dB, higher is better), s11-db (S11 in dB = -return loss), vswr,
smith (impedance chart, markers at band edges), impedance (R and X in ohms). Several kinds give
several panels in one picture. The threshold (default return loss 10 dB) is drawn as a line and
is the limit drawn over every --band (a tinted region beyond a limit line). A key under the
panels says what each mark means.

Pictures of their own (one SWEEP, the kind alone): distance is the reflection versus distance
along the feed as 'matchtool locate' computes it: it needs --velocity-factor; --gate shades a
gate and --max-distance cuts the view [default: the alias-free range]; Kaiser window, automatic
mode, no cable-loss compensation ('matchtool locate' has those options). isolation, ecc and
tarc are drawn as 'matchtool coupling' computes them and need a multi-port file (.s2p, ...);
--band sets the bands shaded, --spec adds its [[isolation]] / [[correlation]] limits.

--spec draws the spec's bands and limits and judges every file as 'matchtool check' does: the
picture is written, a verdict line is printed, and the exit status is 1 when a requirement fails.

--match (one SWEEP) designs the L-network as 'matchtool match' does, for --at FREQ or for the one
--band, and draws the measured sweep and the sweep with the network in place (default kinds
return-loss and smith). Build the network and measure it before driving it with a transmitter.
"""

KindOpt = Annotated[list[str] | None, typer.Option(
    "--kind", metavar="KIND",
    help="return-loss, s11-db, vswr, smith or impedance (repeat or comma-separate for several panels), or one "
         "of distance, isolation, ecc, tarc (a picture of its own) [default: return-loss].")]
MatchAtOpt = Annotated[str | None, typer.Option("--at", metavar="FREQ",
                                                help="Match at one frequency, e.g. 915MHz (with --match).")]


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
        velocity_factor: VelocityFactorOpt = None,
        gate: GateOpt = None,
        max_distance: MaxDistanceOpt = None,
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
        if match:
            if len(sweeps) != 1:
                raise UsageError(f"--match draws one sweep, {len(sweeps)} given", expected="one SWEEP with --match")
            if at is None and len(band or []) != 1:
                raise UsageError("--match needs its target: --at FREQ or exactly one --band LOW:HIGH",
                                 expected="e.g. --match --band 902MHz:928MHz")
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = band_options(band, thr)
        the_spec, port, z0 = spec_option(spec, port, z0)
        shaded = bands + ([] if the_spec is None else list(spec_band_limits(the_spec, bands)))
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        require_bands_in_sweeps(shaded, loaded)
        if kinds[0] in plots.FIGURE_KINDS:  # another capability's own picture (one sweep, one kind)
            return _figure_kind(kinds[0], loaded, sweeps, out, fmt, force, json_out, bands, the_spec, thr,
                                title=title, match=match, velocity_factor=velocity_factor, gate=gate,
                                max_distance=max_distance)
        for flag, value in (("--velocity-factor", velocity_factor), ("--gate", gate), ("--max-distance", max_distance)):
            if value is not None:
                raise UsageError(f"{flag} applies to the distance picture", expected=f"--kind distance with {flag}")
        verdict = None if the_spec is None else revisions(loaded, thr, spec=the_spec)
        labels = plots.legend_labels([s.path for s in loaded])
        warnings = [w for s in loaded for w in s.warnings]
        if verdict is not None:
            warnings += [w for w in verdict.warnings if w not in warnings]
        if match:
            target = None if at is not None else (bands[0].f_low_hz, bands[0].f_high_hz)
            req = match_request(at, target, series, q_inductor, q_capacitor, c_range, l_range, pick)
            pm = propose(loaded[0], req, thr)
            traces = plots.match_traces(pm, thr, labels[0])
            title = title or plots.match_title(pm, labels[0])
            warnings += [w for w in pm.warnings if w not in warnings]
        else:
            traces = [plots.trace_from_sweep(s, thr, lab) for s, lab in zip(loaded, labels, strict=True)]
        masks = [plots.BandMask(b.name, b.f_low_hz, b.f_high_hz, b.limit_return_loss_db) for b in shaded]
        fig = plots.figure(traces, kinds, thr, masks, title)
        atomic_write(out, plots.figure_bytes(fig, fmt), force=force)
        failed = verdict is not None and verdict.spec_failed
        if json_out:
            emit_json(plot_doc(out, sweeps, kinds, warnings, None if verdict is None else not failed,
                               () if verdict is None else verdict.failing_files))
        else:
            print(f"wrote {out}")
            if verdict is not None:
                shown = dict(zip([s.path for s in loaded], labels, strict=True))
                say(f"spec {the_spec.path}: " + spec_verdict_line(verdict, shown))
            warn(warnings)
        # exit 1 for a failing spec requirement (the picture is still written); --band limits inform
        return ExitStatus.FAIL if failed else ExitStatus.OK


def _figure_kind(kind, loaded, paths, out, fmt, force, json_out, bands, spec, thr, *, title, match,
                 velocity_factor, gate, max_distance) -> int:
    """``--kind distance|isolation|ecc|tarc``: one sweep, its capability's own picture."""
    import io

    from ..render import plots

    fk = plots.FIGURE_KINDS[kind]
    if len(loaded) != 1 or match:
        raise UsageError(f"--kind {kind} draws one sweep", expected="one SWEEP, without --match")
    if title is not None:
        raise UsageError(f"--kind {kind} carries its own title", expected=f"--kind {kind} without --title")
    if fk.multiport and loaded[0].nports < 2:
        raise UsageError(f"--kind {kind} needs a multi-port file; this one has {loaded[0].nports} port",
                         path=loaded[0].path, expected="a .s2p, .s3p, ... file of two or more antennas")
    if kind != "distance":
        for flag, value in (("--velocity-factor", velocity_factor), ("--gate", gate), ("--max-distance", max_distance)):
            if value is not None:
                raise UsageError(f"{flag} applies to the distance picture", expected=f"--kind distance with {flag}")
    elif bands:
        raise UsageError("--band is not drawn on the distance picture",
                         expected="'matchtool locate --gate ... --band ...' for the gated return loss")
    gate_m, gate_s = gate_option(gate)
    verdict = None if spec is None else revisions(loaded, thr, spec=spec)
    options = {"velocity_factor": velocity_factor, "gate_m": gate_m, "gate_s": gate_s,
               "max_distance_m": None if max_distance is None else parse_length(max_distance),
               "bands": [(b.f_low_hz, b.f_high_hz) for b in bands] or None, "masks": spec}
    compute, draw = plots.figure_kind(kind)
    result = compute(loaded[0], **fk.pick(fk.compute_options, options))
    buf = io.BytesIO()
    draw(result, buf, fmt, **fk.pick(fk.draw_options, options))
    atomic_write(out, buf.getvalue(), force=force)
    warnings = list(loaded[0].warnings)
    extra = list(getattr(result, "warnings", ())) + ([] if verdict is None else list(verdict.warnings))
    warnings += [w for w in extra if w not in warnings]
    failed = verdict is not None and verdict.spec_failed
    if json_out:
        emit_json(plot_doc(out, paths, [kind], warnings, None if verdict is None else not failed,
                           () if verdict is None else verdict.failing_files))
    else:
        print(f"wrote {out}")
        if verdict is not None:
            shown = dict(zip([s.path for s in loaded], plots.legend_labels([s.path for s in loaded]), strict=True))
            say(f"spec {spec.path}: " + spec_verdict_line(verdict, shown))
        warn(warnings)
    return ExitStatus.FAIL if failed else ExitStatus.OK

"""``matchtool report SWEEP... --out report.html``: one self-contained HTML page of a bench session.

The content is computed by :func:`matchtool.report.build_report` (summaries, comparison, spec
verdicts, a proposed match, the link budget, input hashes); ``render/report/`` turns it into
sections (a registry: see :mod:`matchtool.render.report`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from ..errors import ExitStatus, UsageError
from ..outputs import atomic_write, check_output
from ..render.json_contract import emit_json, report_doc
from ..render.text import say, warn
from ..render.words import spec_verdict_line
from ..report import build_report
from ..summary import threshold_from_options
from ..sweep import load
from ..units import parse_length
from .options import (
    BandOpt,
    CRangeOpt,
    ForceOpt,
    JsonOpt,
    LRangeOpt,
    MaxDistanceOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinBandWidthOpt,
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
    match_request,
    min_band_width,
    require_bands_in_sweeps,
    spec_option,
)

EPILOG = """Examples:

  matchtool report ant_r1.s1p ant_r2.s1p ant_r3.s1p --band ism=902MHz:928MHz --out bench.html

  matchtool report unit7.s1p --max-vswr 2 --kind return-loss,smith --title "Unit 7, build 3" --out u7.html

  matchtool report ant_r1.s1p ant_r2.s1p ant_r3.s1p --spec spec_915.toml --budget link_915.toml \
      --match-band 902MHz:928MHz --match-sweep ant_r3.s1p --q-inductor 40 --out bench.html

  matchtool report wifi_pair.s2p --locate --velocity-factor 0.7 --max-distance 2m --qfactor --out pair.html

  matchtool report ant_r3.s1p --store results.db --lot L7 --out lot7.html

--spec adds the verdicts of 'matchtool check' for every file; --match-band or --match-at adds a
proposed L-network (options as for 'matchtool match') for the first SWEEP, or for --match-sweep
FILE (one of the SWEEPs), with its schematic and a before/after picture; --budget adds the link
budget of 'matchtool budget'. A multi-port SWEEP (.s2p, ...) adds its coupling (isolation, ECC,
TARC, as 'matchtool coupling'); --locate adds the reflections along the feed of every SWEEP (as
'matchtool locate'; needs --velocity-factor); --qfactor adds Q and bandwidth potential (as
'matchtool qfactor', with --radius and, for one SWEEP, --capped); --store adds the lot history
of a results store (as 'matchtool history', --lot for one lot). A verdict line is printed; the exit status is 1 when a spec
requirement fails or the budget does not keep its required margin (the page is still written).

The page needs no other file and no network: styles and pictures (SVG) are inside it. It carries
the date, the tool version and the SHA-256 of every input file, so it can go into a build record.
"""


def _match_index(match_sweep: str | None, sweeps: list[str]) -> int:
    """Which SWEEP ``--match-sweep`` names (the same path as given, or the same file)."""
    if match_sweep is None:
        return 0
    from .common import same_file

    for i, p in enumerate(sweeps):
        if p == match_sweep or same_file(p, match_sweep):
            return i
    raise UsageError(f"--match-sweep {match_sweep!r} is not one of the SWEEPs", expected="one of the files given")


def register(app: typer.Typer) -> None:
    @app.command("report", epilog=EPILOG)
    def report_cmd(
        sweeps: Annotated[list[str], typer.Argument(metavar="SWEEP...", help="Touchstone files (first = baseline).",
                                                    show_default=False)],
        out: Annotated[str, typer.Option("--out", metavar="FILE.html", help="HTML file to write.",
                                         show_default=False)],
        band: BandOpt = None,
        spec: SpecOpt = None,
        kind: Annotated[list[str] | None, typer.Option(
            "--kind", metavar="KIND", help="Plots to include: return-loss, s11-db, vswr, smith, impedance; repeat "
            "or comma-separate [default: return-loss,vswr,smith,impedance].")] = None,
        title: Annotated[str | None, typer.Option("--title", metavar="TEXT", help="Page title.")] = None,
        match_band: Annotated[str | None, typer.Option(
            "--match-band", metavar="LOW:HIGH", help="Propose a match over this band.")] = None,
        match_at: Annotated[str | None, typer.Option(
            "--match-at", metavar="FREQ", help="Propose a match at this frequency.")] = None,
        match_sweep: Annotated[str | None, typer.Option(
            "--match-sweep", metavar="FILE", help="Which SWEEP the match is for [default: the first].")] = None,
        series: SeriesOpt = "E24",
        q_inductor: QInductorOpt = None,
        q_capacitor: QCapacitorOpt = None,
        c_range: CRangeOpt = None,
        l_range: LRangeOpt = None,
        pick: PickOpt = 1,
        budget_file: Annotated[str | None, typer.Option(
            "--budget", metavar="FILE.toml", help="Link budget file (as for 'matchtool budget') to include.")] = None,
        min_band_width_opt: MinBandWidthOpt = None,
        locate: Annotated[bool, typer.Option(
            "--locate", help="Add the reflections versus distance along the feed of every SWEEP (needs "
                             "--velocity-factor).")] = False,
        velocity_factor: VelocityFactorOpt = None,
        max_distance: MaxDistanceOpt = None,
        qfactor: Annotated[bool, typer.Option(
            "--qfactor", help="Add Q and bandwidth potential of every SWEEP ('matchtool qfactor').")] = False,
        radius: Annotated[str | None, typer.Option(
            "--radius", metavar="LENGTH", help="With --qfactor: radius of the smallest sphere enclosing the "
                                               "antenna (3cm) for the Chu-McLean bound.")] = None,
        capped: Annotated[str | None, typer.Option(
            "--capped", metavar="SWEEP", help="With --qfactor and one SWEEP: the antenna inside a closed "
                                              "conducting cap (radiation efficiency).")] = None,
        store: Annotated[list[str] | None, typer.Option(
            "--store", metavar="URL", help="Add the lot history of this results store (path or URL; "
                                           "repeatable, as for 'matchtool history').")] = None,
        lot: Annotated[str | None, typer.Option("--lot", metavar="NAME",
                                                help="With --store: only this lot.")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """One self-contained HTML page: summary, spec verdicts, inspect metrics, comparison, plots, proposed
        match, link budget, input hashes."""
        from ..render import plots
        from ..render import report as page

        if Path(out).suffix.lower() not in (".html", ".htm"):
            raise UsageError(f"unknown report extension {Path(out).suffix or '(none)'!r}", path=out,
                             expected="a file name ending in .html")
        if match_band is not None and match_at is not None:
            raise UsageError("give one of --match-band LOW:HIGH or --match-at FREQ, not both")
        if match_sweep is not None and match_band is None and match_at is None:
            raise UsageError("--match-sweep chooses the sweep of a match", expected="--match-band or --match-at with it")
        kinds = plots.parse_kinds(kind or ["return-loss,vswr,smith,impedance"])
        for flag, value, needs in (("--velocity-factor", velocity_factor, locate), ("--max-distance", max_distance, locate),
                                   ("--radius", radius, qfactor), ("--capped", capped, qfactor), ("--lot", lot, store)):
            if value is not None and not needs:
                owner = {"--lot": "--store URL"}.get(flag, "--locate" if flag in ("--velocity-factor", "--max-distance")
                                                     else "--qfactor")
                raise UsageError(f"{flag} belongs to {owner.split()[0]}", expected=f"{owner} with {flag}")
        if any(k in plots.FIGURE_KINDS for k in kinds):
            raise UsageError("the report's plots are the sweep panels", key="--kind",
                             expected=", ".join(plots.KINDS) + " (--locate and a multi-port SWEEP add the others)")
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = band_options(band, thr)
        the_spec, port, z0 = spec_option(spec, port, z0)
        index = _match_index(match_sweep, sweeps)
        req = None
        if match_band is not None or match_at is not None:
            req = match_request(match_at, match_band, series, q_inductor, q_capacitor, c_range, l_range, pick,
                                option_names=("--match-at", "--match-band"))
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        from ..compare import spec_band_limits

        require_bands_in_sweeps(bands + ([] if the_spec is None else list(spec_band_limits(the_spec))), loaded)
        loc = None if not locate else {"velocity_factor": velocity_factor,
                                         "max_distance_m": None if max_distance is None else parse_length(max_distance)}
        qf = None if not qfactor else {"radius_m": None if radius is None else parse_length(radius), "capped": capped}
        lots = None if not store else {"stores": list(store), "lot": lot}
        ctx = build_report(loaded, thr, bands, the_spec, kinds, req, index, budget_file, port, z0,
                           min_band_width(min_band_width_opt), locate=loc, qfactor=qf, history=lots)
        text, section_ids = page.render_page(ctx, title)
        atomic_write(out, text, force=force)
        # Exit 1 when a spec requirement failed or the budget misses its margin (the page is still
        # written); --band limits inform. Unreadable inputs raised before anything was written (2).
        c = ctx.comparison
        if json_out:
            emit_json(report_doc(out, sweeps, not ctx.failed, ctx.judged, c.failing_files,
                                 None if ctx.budget is None else ctx.budget.passed, ctx.warnings,
                                 sections=section_ids))
        else:
            verdict = "FAIL" if ctx.failed else ("pass" if ctx.judged else "no spec or budget to judge")
            print(f"wrote {out} ({verdict})")
            names = page.display_names(ctx)
            if c.spec_path is not None:
                say(f"spec {c.spec_path}: {spec_verdict_line(c, names)}")
            if ctx.budget is not None:
                from ..render.report.summary import budget_headline

                say(budget_headline(ctx.budget))
            warn(ctx.warnings)
        return ExitStatus.FAIL if ctx.failed else ExitStatus.OK

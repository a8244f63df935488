"""``matchtool report SWEEP... --out report.html``: one self-contained HTML page of a bench session.

The page is built from sections (see :mod:`matchtool.render.html`). Each entry of
:data:`SECTION_BUILDERS` takes the :class:`ReportContext` and returns a Section, or None when it
has nothing to say: summary and cautions, spec verdicts (``--spec``, evaluated by
:func:`matchtool.spec.evaluate`, the same results as ``matchtool check``), inspect metrics, the
comparison, plots, a proposed match (``--match-band`` / ``--match-at``, designed by
:mod:`matchtool.matching` as ``matchtool match`` does) with its text schematic and a before/after
picture, the link budget (``--budget``, :func:`matchtool.budget.budget`) and traceability.
"""

from __future__ import annotations

import hashlib
import os
import platform
from collections.abc import Callable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Annotated

import typer

from .. import __version__
from .. import reflection as rf
from ..budget import BudgetResult
from ..compare import BandSpec, Comparison, compare
from ..errors import ExitStatus, InputError, UsageError
from ..outputs import atomic_write, check_output
from ..render import html as h
from ..render.text.match import dc_words as mt_dc_words
from ..summary import SweepSummary, summarize, threshold_from_options
from ..sweep import Sweep, load
from ..units import format_frequency as ff
from .common import ForceOpt, JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, emit_json, fmt, warn
from .compare import BandOpt, SpecOpt, parse_band_options, read_spec, require_bands_in_sweeps, requirement_cells, spec_bands
from .match import CRangeOpt, LRangeOpt, QCapacitorOpt, QInductorOpt, SeriesOpt
from .plot import (
    PickOpt,
    ProposedMatch,
    match_title,
    match_traces,
    propose_match,
    q_text,
)

EPILOG = """Examples:

  matchtool report ant_r1.s1p ant_r2.s1p ant_r3.s1p --band ism=902MHz:928MHz --out bench.html

  matchtool report unit7.s1p --max-vswr 2 --kind return-loss,smith --title "Unit 7, build 3" --out u7.html

  matchtool report ant_r1.s1p ant_r2.s1p ant_r3.s1p --spec spec_915.toml --budget link_915.toml \
      --match-band 902MHz:928MHz --q-inductor 40 --out bench.html

--spec adds the verdicts of 'matchtool check' for every file; --match-band or --match-at adds a
proposed L-network for the first SWEEP (options as for 'matchtool match') with its schematic and a
before/after picture; --budget adds the link budget of 'matchtool budget'. Exit status 1 when a
spec requirement fails or the budget does not keep its required margin (the page is still written).

The page needs no other file and no network: styles and pictures (SVG) are inside it. It carries
the date, the tool version and the SHA-256 of every input file, so it can go into a build record.
"""

CAUTIONS = (
    "A high VSWR at transmit power can damage a transmitter's power amplifier: check a match at low "
    "power (or on the network analyser) before driving it.",
    "RF exposure: keep people away from a transmitting antenna as your exposure rules require; "
    "a better match radiates more of the power.",
    "EIRP, band edges and power limits are set by local regulation; the bands and limits in this "
    "report are the user's inputs, not legal limits.",
    "matchtool computes; it does not certify. Every number here comes from the measured files "
    "and the stated models.",
)
SAFETY = " ".join(CAUTIONS)


@dataclass(frozen=True)
class InputFile:
    """An input file as read for the report: path, size in bytes and SHA-256 (hex)."""

    path: str
    size_bytes: int
    sha256: str


@dataclass(frozen=True)
class ReportContext:
    """Everything the section builders may use (computed before any HTML is built)."""

    sweeps: list[Sweep]
    labels: list[str]
    summaries: list[SweepSummary]
    comparison: Comparison
    threshold_return_loss_db: float
    bands: list[BandSpec]
    kinds: list[str]
    inputs: list[InputFile]
    generated: datetime
    options: list[tuple[str, str]]
    n_band_tables: int | None = None
    """How many of the comparison's bands get a table (the ad-hoc ones; spec bands have their own section)."""
    match: ProposedMatch | None = None
    budget: BudgetResult | None = None


def hash_file(path: str) -> InputFile:
    """SHA-256 and size of a file's bytes (read in chunks)."""
    digest = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                digest.update(chunk)
                size += len(chunk)
    except OSError as exc:
        raise InputError(f"cannot read: {exc.strerror or exc}", path=path) from exc
    return InputFile(str(path), size, digest.hexdigest())


def report_time() -> datetime:
    """Now (UTC), or the reproducible-build time SOURCE_DATE_EPOCH when that is set."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch:
        try:
            return datetime.fromtimestamp(int(epoch), UTC)
        except (ValueError, OverflowError, OSError):
            raise UsageError(f"SOURCE_DATE_EPOCH={epoch!r}", expected="whole seconds since 1970") from None
    return datetime.now(UTC).replace(microsecond=0)


def _names(ctx: ReportContext) -> dict[str, str]:
    return {s.path: lab for s, lab in zip(ctx.sweeps, ctx.labels, strict=True)}


# --- sections -------------------------------------------------------------------------------------

def summary_section(ctx: ReportContext) -> h.Section:
    thr = ctx.threshold_return_loss_db
    c = ctx.comparison
    lines = []
    for lab, r in zip(ctx.labels, c.rows, strict=True):
        bw = "misses the threshold" if r.band is None else f"threshold band {ff(r.bandwidth_hz)} wide"
        text = f"{lab}: best match {ff(r.best_f_hz)} (return loss {fmt(r.best_return_loss_db)} dB), {bw}"
        if not r.is_baseline:
            text += f"; resonance {r.delta_best_f_hz / 1e6:+.3f} MHz against {ctx.labels[0]}"
            if r.delta_bandwidth_hz is not None:
                text += f", bandwidth {r.delta_bandwidth_hz / 1e6:+.3f} MHz"
        lines.append(text)
    body = [h.paragraph(f"{len(ctx.sweeps)} sweep(s). Threshold: return loss >= {thr:.2f} dB (S11 <= {-thr:.2f} dB, "
                        f"VSWR <= {float(rf.vswr(rf.gamma_mag_from_return_loss(thr))):.3f})."),
            h.bullet_list(lines)]
    if c.verdicts:
        body.append("<h3>Bands</h3>" + h.bullet_list(v.sentence(_names(ctx)) for v in c.verdicts))
    if c.spec_path is not None:
        failed = [lab for lab, r in zip(ctx.labels, c.rows, strict=True) if not r.spec.passed]
        body.append(h.paragraph(f"Spec {c.spec_path}: " + (f"FAIL ({', '.join(failed)})" if failed else
                                                           "every file passes every requirement"),
                                "fail" if failed else "pass"))
    if ctx.match is not None:
        pm = ctx.match
        body.append(h.paragraph(f"Proposed match for {ctx.labels[0]} {pm.target_text}: {pm.network_text} "
                                f"(worst return loss {pm.result.before_worst_return_loss_db:.2f} dB -> "
                                f"{pm.candidate.worst_return_loss_db:.2f} dB)."))
    if ctx.budget is not None:
        b = ctx.budget
        w = b.worst
        body.append(h.paragraph(f"Link budget {b.path}: margin {w.margin_db:.2f} dB at {ff(w.f_hz)} (required "
                                f"{b.required_margin_db:g} dB: {'met' if b.closes else 'NOT MET'}).",
                                "pass" if b.closes else "fail"))
    if c.warnings:
        body.append("<h3>Warnings</h3>" + h.bullet_list(c.warnings, "note warn"))
    body.append('<div class="note caution"><strong>Cautions</strong>' + h.bullet_list(CAUTIONS) + "</div>")
    return h.Section("summary", "Summary", "\n".join(body))


def _verdict_cell(passed: bool) -> h.Raw:
    return h.Raw('<span class="pass">pass</span>' if passed else '<span class="fail">FAIL</span>')


def spec_section(ctx: ReportContext) -> h.Section | None:
    """Every file against every requirement: the results of ``matchtool check`` (matchtool.spec.evaluate)."""
    c = ctx.comparison
    if c.spec_path is None:
        return None
    rows = []
    for lab, r in zip(ctx.labels, c.rows, strict=True):
        for k, q in enumerate(r.spec.requirements):
            verdict, worst, where, limit, margin = requirement_cells(q)
            rows.append([lab if k == 0 else "", q.name, _verdict_cell(q.passed), worst, where, limit, margin])
    parts = [h.paragraph(f"Spec file {c.spec_path}, evaluated exactly as 'matchtool check' does. Limit and worst "
                         "are in the units of the limit key; the margin is positive when passing, in dB of "
                         "return loss for the reflection limits (a VSWR or S11 limit is converted to it)."),
             h.table(["file", "requirement", "verdict", "worst", "at", "limit", "margin"], rows,
                     [False, False, False, True, True, True, True], caption="Spec verdicts", css_class="spec"),
             "<h3>Best revision per requirement</h3>",
             h.bullet_list(v.sentence(_names(ctx)) for v in c.spec_verdicts)]
    reasons = [f"{lab}: {q.name}: {q.reason}" for lab, r in zip(ctx.labels, c.rows, strict=True)
               for q in r.spec.requirements if q.reason]
    if reasons:
        parts.insert(2, h.bullet_list(reasons, "note warn"))
    return h.Section("spec", "Spec verdicts", "\n".join(parts))


def sweeps_section(ctx: ReportContext) -> h.Section:
    parts = []
    for lab, s in zip(ctx.labels, ctx.summaries, strict=True):
        b = s.best
        z = b.z_ohm
        parts.append(f"<h3>{h.esc(lab)}</h3>")
        parts.append(h.table(
            ["port", "Z0 ohm", "points", "start", "stop", "best match", "return loss dB", "S11 dB", "VSWR",
             "mismatch loss dB", "delivered", "impedance ohm"],
            [[s.port, f"{s.z0_ohm:g}", s.points, ff(s.f_start_hz), ff(s.f_stop_hz), ff(b.f_hz), fmt(b.return_loss_db),
              fmt(b.s11_db), fmt(b.vswr, 3), fmt(b.mismatch_loss_db, 3), f"{100 * b.delivered_fraction:.1f} %",
              f"{z.real:.1f} {'+' if z.imag >= 0 else '-'} j{abs(z.imag):.1f}"]],
            [False, True, True, True, True, True, True, True, True, True, True, True],
            caption="Best match (the measured sample with the smallest |Γ|)"))
        cap = f"Bands with return loss >= {s.threshold_return_loss_db:.2f} dB"
        if s.bands:
            parts.append(h.table(
                ["low edge", "high edge", "centre", "width", "fractional", "note"],
                [[ff(x.f_low_hz), ff(x.f_high_hz), ff(x.f_center_hz), ff(x.bandwidth_hz),
                  f"{100 * x.fractional_bandwidth:.2f} %",
                  ", ".join(n for n, on in (("runs past the sweep start", x.clipped_low),
                                            ("runs past the sweep stop", x.clipped_high)) if on)] for x in s.bands],
                [True, True, True, True, True, False], caption=cap))
        else:
            parts.append(h.paragraph(f"{cap}: none - the sweep never reaches the threshold."))
    return h.Section("sweeps", "Sweeps (inspect metrics)", "\n".join(parts))


def compare_section(ctx: ReportContext) -> h.Section | None:
    c = ctx.comparison
    if len(c.rows) < 2 and not c.verdicts[:ctx.n_band_tables]:
        return None
    rows = []
    for lab, r in zip(ctx.labels, c.rows, strict=True):
        band = "misses threshold" if r.band is None else f"{ff(r.band.f_low_hz)} to {ff(r.band.f_high_hz)}"
        rows.append([lab + (" (baseline)" if r.is_baseline else ""), ff(r.best_f_hz), fmt(r.best_return_loss_db),
                     band, "n/a" if r.bandwidth_hz is None else ff(r.bandwidth_hz),
                     f"{r.delta_best_f_hz / 1e6:+.3f}",
                     "n/a" if r.delta_bandwidth_hz is None else f"{r.delta_bandwidth_hz / 1e6:+.3f}"])
    parts = [h.table(["file", "best match", "RL dB", "threshold band", "width", "d best MHz", "d width MHz"], rows,
                     [False, True, True, False, True, True, True],
                     caption=f"Against {ctx.labels[0]} (d = this file minus the baseline)")]
    shown = c.verdicts if ctx.n_band_tables is None else c.verdicts[:ctx.n_band_tables]
    for k, v in enumerate(shown):
        brows = []
        for lab, r in zip(ctx.labels, c.rows, strict=True):
            w, d = r.bands[k], r.delta_worst_return_loss_db[k]
            if not w.covered:
                brows.append([lab, "not covered", "n/a", "n/a", "n/a", "n/a", "FAIL" if w.passed is False else ""])
                continue
            brows.append([lab, fmt(w.worst_return_loss_db), "n/a" if d is None else f"{d:+.2f}",
                          ff(w.worst_f_hz), fmt(w.worst_mismatch_loss_db, 3),
                          "n/a" if w.margin_db is None else f"{w.margin_db:+.2f}",
                          "" if w.passed is None else ("pass" if w.passed else "FAIL")])
        lim = "" if v.limit_return_loss_db is None else f", limit return loss {v.limit_return_loss_db:.2f} dB"
        parts.append(h.table(["file", "worst RL dB", "d RL dB", "at", "mismatch loss dB", "margin dB", "verdict"],
                             brows, [False, True, True, True, True, True, False],
                             caption=f"Band {v.name}: {ff(v.f_low_hz)} to {ff(v.f_high_hz)}{lim}"))
        parts.append(h.paragraph(v.sentence(_names(ctx))))
    return h.Section("compare", "Comparison", "\n".join(parts))


_CAPTIONS = {
    "return-loss": "Return loss in positive dB (higher is better) with the threshold line; shaded: bands, "
                   "hatched: below the band's limit; bars: threshold crossings; triangles: best match.",
    "s11-db": "S11 in dB (= -return loss; lower is better) with the threshold line and band limit masks.",
    "vswr": "VSWR with the threshold line; hatched: above the band's limit.",
    "smith": "Impedance Smith chart; circle: the threshold |Γ|; open markers: band edges; star: best match.",
    "impedance": "Resistance R (solid) and reactance X (dashed) in ohms; X > 0 is inductive.",
}


def plots_section(ctx: ReportContext) -> h.Section:
    from ..render import plots

    traces = [plots.trace_from_sweep(s, ctx.threshold_return_loss_db, lab)
              for s, lab in zip(ctx.sweeps, ctx.labels, strict=True)]
    masks = [plots.BandMask(n, lo, hi, lim) for n, lo, hi, lim in ctx.bands]
    parts = []
    for k, kind in enumerate(ctx.kinds):
        fig = plots.figure(traces, [kind], ctx.threshold_return_loss_db, masks)
        svg = plots.figure_bytes(fig, "svg").decode("utf-8")
        parts.append(h.figure_svg(svg, f"fig{k + 1}", _CAPTIONS[kind]))
    return h.Section("plots", "Plots", "\n".join(parts))


def match_section(ctx: ReportContext) -> h.Section | None:
    """The proposed network: ranked candidates, the chosen one's schematic, before/after pictures."""
    from ..render import plots
    from .match import schematic

    pm = ctx.match
    if pm is None:
        return None
    r = pm.result
    thr = ctx.threshold_return_loss_db
    cands = [[f"#{i}" + (" (shown)" if i == pm.pick else ""), c.topology, _parts(c.elements),
              fmt(c.worst_return_loss_db), fmt(c.return_loss_at_f0_db), fmt(c.network_loss_db, 3),
              f"{100 * c.worst_delivered_fraction:.1f} %", mt_dc_words(c.elements), c.filter]
             for i, c in enumerate(r.candidates, start=1)]
    q = r.q
    parts = [h.paragraph(f"For {ctx.labels[0]} {pm.target_text}, matched to {r.z0_ohm:g} ohm, {r.series} part values, "
                         f"part Q: L {q_text(q.inductor)}, C {q_text(q.capacitor)} (constant-Q model); "
                         f"designed as 'matchtool match' does. Worst return loss over the target: "
                         f"{r.before_worst_return_loss_db:.2f} dB measured, {pm.candidate.worst_return_loss_db:.2f} dB "
                         f"with network #{pm.pick}."),
             h.table(["#", "topology", "parts, radio side first", "worst RL dB", "RL at f0 dB", "part loss dB",
                      "worst delivered", "DC", "filter"], cands,
                     [False, False, False, True, True, True, True, False, False],
                     caption=f"Candidates, ranked by {r.rank_by}", css_class="candidates"),
             f"<h3>Network #{pm.pick} (solder from the radio side)</h3>",
             f'<pre class="schematic">{h.esc(schematic(pm.candidate.elements, r.z0_ohm))}</pre>']
    traces = match_traces(pm, thr, ctx.labels[0])
    masks = [plots.BandMask(n, lo, hi, lim) for n, lo, hi, lim in ctx.bands]
    if r.f_low_hz is not None and not any(b.f_low_hz == r.f_low_hz and b.f_high_hz == r.f_high_hz for b in masks):
        masks.append(plots.BandMask("match target", r.f_low_hz, r.f_high_hz, None))
    for k, kind in enumerate(("return-loss", "smith")):
        fig = plots.figure(traces, [kind], thr, masks, match_title(pm, ctx.labels[0]) if k == 0 else None)
        parts.append(h.figure_svg(plots.figure_bytes(fig, "svg").decode("utf-8"), f"match{k + 1}",
                                  f"Before/after: {ctx.labels[0]} measured and with network #{pm.pick} "
                                  f"({pm.network_text}). " + _CAPTIONS[kind]))
    if r.warnings:
        parts.append(h.bullet_list(r.warnings, "note warn"))
    parts.append(h.paragraph("Build the network and measure it before driving it with a transmitter: part "
                             "parasitics and the board move the match, and a high VSWR at power can damage the "
                             "amplifier.", "note warn"))
    return h.Section("match", "Proposed match", "\n".join(parts))


def _parts(elements) -> str:
    from .plot import network_text

    return network_text(elements)


def _range(x: float) -> str:
    import math

    if math.isinf(x):
        return "unbounded"
    return f"{x / 1000:.2f} km" if x >= 10_000 else f"{x:.1f} m"


def budget_section(ctx: ReportContext) -> h.Section | None:
    """The link budget of ``matchtool budget`` at its worst frequency, and per frequency for a band."""
    b = ctx.budget
    if b is None:
        return None
    w = b.worst
    where = f"at {ff(w.f_hz)}" if b.band is None else f"at {ff(w.f_hz)}, the worst frequency of the band"
    parts = [h.paragraph(f"Budget file {b.path}, {where}; distance {_range(b.distance_m)}, path loss model: "
                         f"{b.path_loss_model}. Rows are signed contributions in dB to the received power."),
             h.table(["item", "dB", "running total dBm"], [[r.name, fmt(r.value_db, 3), fmt(r.total_dbm, 2)]
                                                          for r in w.rows],
                     [False, True, True], caption="Link budget", css_class="budget")]
    eirp = f"{fmt(w.eirp_dbm)} dBm"
    if b.eirp_limit_dbm is not None:
        eirp += f" (your limit {b.eirp_limit_dbm:g} dBm: {'EXCEEDED' if b.eirp_over_limit else 'met'})"
    items = [("EIRP", eirp), ("received power", f"{fmt(w.received_power_dbm)} dBm"),
             ("sensitivity", f"{fmt(b.rx_sensitivity_dbm)} dBm"),
             ("margin", f"{fmt(w.margin_db)} dB (required {b.required_margin_db:g} dB: "
                        f"{'met' if b.closes else 'NOT MET'})"),
             (f"free-space range at {b.required_margin_db:g} dB margin", _range(w.max_range_m)),
             ("mismatch (tx + rx)", f"{fmt(w.tx.mismatch_loss_db, 3)} + {fmt(w.rx.mismatch_loss_db, 3)} dB, costs "
                                    f"{_range(w.mismatch_range_cost_m)} of range")]
    parts.append(h.definition_list(items))
    if b.band is not None:
        parts.append(h.table(["frequency", "tx mismatch dB", "rx mismatch dB", "EIRP dBm", "received dBm", "margin dB",
                              "range"],
                             [[ff(p.f_hz), fmt(p.tx.mismatch_loss_db, 3), fmt(p.rx.mismatch_loss_db, 3),
                               fmt(p.eirp_dbm), fmt(p.received_power_dbm), fmt(p.margin_db),
                               _range(p.max_range_model_m)] for p in b.points],
                             [True] * 7, caption="Per frequency"))
    if b.warnings:
        parts.append(h.bullet_list(b.warnings, "note warn"))
    from .budget import estimate_words

    limit_note = ("; the EIRP limit above is the user's number" if b.eirp_limit_dbm is not None
                  else "; no EIRP limit was given")
    parts.append(h.paragraph(f"{estimate_words(b)}, not a coverage prediction. EIRP and RF exposure limits are set "
                             f"by local regulation{limit_note}.", "note warn"))
    return h.Section("budget", "Link budget", "\n".join(parts))


def traceability_section(ctx: ReportContext) -> h.Section:
    import numpy
    import skrf

    items = [("generated", ctx.generated.strftime("%Y-%m-%d %H:%M:%S UTC")), ("matchtool", __version__),
             ("python", platform.python_version()), ("numpy", numpy.__version__), ("scikit-rf", skrf.__version__)]
    try:
        import matplotlib

        items.append(("matplotlib", matplotlib.__version__))
    except ImportError:  # pragma: no cover
        pass
    parts = [h.definition_list(items + ctx.options),
             h.table(["input file", "bytes", "SHA-256"], [[f.path, f.size_bytes, f.sha256] for f in ctx.inputs],
                     [False, True, False], caption="Input files", css_class="hash")]
    return h.Section("traceability", "Traceability", "\n".join(parts))


SECTION_BUILDERS: list[Callable[[ReportContext], h.Section | None]] = [
    summary_section, spec_section, sweeps_section, compare_section, plots_section, match_section, budget_section,
    traceability_section]


def build_page(ctx: ReportContext, title: str) -> h.Page:
    """Run every section builder and assemble the page."""
    sections = [s for s in (b(ctx) for b in SECTION_BUILDERS) if s is not None]
    sub = f"Generated {ctx.generated.strftime('%Y-%m-%d %H:%M:%S UTC')} by matchtool {__version__}"
    return h.Page(title=title, subtitle=sub, sections=sections)


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
            "--match-band", metavar="LOW:HIGH", help="Propose a match for the first SWEEP over this band.")] = None,
        match_at: Annotated[str | None, typer.Option(
            "--match-at", metavar="FREQ", help="Propose a match for the first SWEEP at this frequency.")] = None,
        series: SeriesOpt = "E24",
        q_inductor: QInductorOpt = None,
        q_capacitor: QCapacitorOpt = None,
        c_range: CRangeOpt = None,
        l_range: LRangeOpt = None,
        pick: PickOpt = 1,
        budget_file: Annotated[str | None, typer.Option(
            "--budget", metavar="FILE.toml", help="Link budget file (as for 'matchtool budget') to include.")] = None,
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
        from ..budget import compute_budget, read_budget_file
        from ..render import plots

        if Path(out).suffix.lower() not in (".html", ".htm"):
            raise UsageError(f"unknown report extension {Path(out).suffix or '(none)'!r}", path=out,
                             expected="a file name ending in .html")
        if match_band is not None and match_at is not None:
            raise UsageError("give one of --match-band LOW:HIGH or --match-at FREQ, not both")
        kinds = plots.parse_kinds(kind or ["return-loss,vswr,smith,impedance"])
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = parse_band_options(band, thr)
        n_adhoc = len(bands)
        the_spec, port, z0 = read_spec(spec, port, z0)
        extra: list[BandSpec] = []
        if the_spec is not None:
            extra = [(n, lo, hi, None) for n, lo, hi, _ in spec_bands(the_spec)]
            bands += spec_bands(the_spec)
        others = ([spec] if spec else []) + ([the_spec.golden.path] if the_spec and the_spec.golden else [])
        budget_in = None
        if budget_file is not None:
            budget_in = read_budget_file(budget_file)
            others.append(budget_file)
            for side in (budget_in.tx, budget_in.rx):  # the sweeps the budget file names (as budget resolves them)
                if side.sweep_path is not None:
                    sp = Path(side.sweep_path)
                    others.append(str(sp if sp.is_absolute() else Path(budget_in.path).parent / sp))
        names = list(sweeps) + others
        resolved = [str(Path(p).resolve()) for p in names]
        inputs = [hash_file(p) for k, p in enumerate(names) if resolved[k] not in resolved[:k]]
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        require_bands_in_sweeps(bands, loaded)
        labels = plots.legend_labels([s.path for s in loaded])
        pm = None
        if match_band is not None or match_at is not None:
            pm = propose_match(loaded[0], match_at, match_band, thr, series, q_inductor, q_capacitor, c_range,
                               l_range, pick, option_names=("--match-at", "--match-band"))
        link = None if budget_in is None else compute_budget(budget_in)
        options = [("threshold", f"return loss >= {thr:.2f} dB"), ("port", str(port)),
                   ("z0", "from each file" if z0 is None else f"{z0:g} ohm")]
        options += [(f"band {n}", f"{ff(lo)} to {ff(hi)}") for n, lo, hi, _ in bands]
        if spec is not None:
            options.append(("spec", spec))
        if pm is not None:
            options.append(("match", f"{labels[0]} {pm.target_text}, {series}, Q(L) {q_text(pm.result.q.inductor)}, "
                                     f"Q(C) {q_text(pm.result.q.capacitor)}, network #{pick}"))
        if budget_file is not None:
            options.append(("budget", budget_file))
        c = compare(loaded, thr, bands[:n_adhoc] + extra, spec=the_spec)
        if the_spec is not None:
            c.warnings[:0] = [w for w in the_spec.warnings if w not in c.warnings]
        if pm is not None:
            c.warnings.extend(w for w in pm.result.warnings if w not in c.warnings)
        if link is not None:
            c.warnings.extend(w for w in link.warnings if w not in c.warnings)
        ctx = ReportContext(sweeps=loaded, labels=labels, summaries=[summarize(s, thr) for s in loaded],
                            comparison=c, threshold_return_loss_db=thr, bands=bands,
                            kinds=kinds, inputs=inputs, generated=report_time(), options=options,
                            n_band_tables=n_adhoc, match=pm, budget=link)
        page = build_page(ctx, title or f"Antenna match report: {', '.join(labels)}")
        atomic_write(out, h.render_page(page), force=force)
        # Exit 1 when a spec requirement failed or the budget misses its margin (the page is still
        # written); --band limits inform. Unreadable inputs raised before anything was written (2).
        failed = bool(c.spec_failed or (link is not None and not link.closes))
        verdict = "FAIL" if failed else ("pass" if (spec or budget_file) else "no spec or budget to judge")
        if json_out:
            emit_json({"out": str(out), "inputs": [str(x) for x in sweeps], "pass": not failed,
                       "warnings": list(ctx.comparison.warnings)})
        else:
            print(f"wrote {out} ({verdict})")
            warn(ctx.comparison.warnings)
        return ExitStatus.FAIL if failed else ExitStatus.OK

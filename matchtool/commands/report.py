"""``matchtool report SWEEP... --out report.html``: one self-contained HTML page of a bench session.

The page is built from sections (see :mod:`matchtool.render.html`). Each entry of
:data:`SECTION_BUILDERS` takes the :class:`ReportContext` and returns a Section, or None when it
has nothing to say. Spec verdicts (``--spec``), a proposed match with its schematic (``--match``)
and a link budget (``--budget``) join as further builders with the section ids ``spec``, ``match``
and ``budget``, which :data:`matchtool.render.html.SECTION_ORDER` already places.
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
from ..compare import BandSpec, Comparison, compare
from ..errors import InputError, UsageError
from ..outputs import atomic_write, check_output
from ..render import html as h
from ..summary import SweepSummary, summarize, threshold_from_options
from ..sweep import Sweep, load
from ..units import format_frequency as ff
from .common import ForceOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, fmt, warn
from .compare import BandOpt, SpecOpt, parse_band_options, read_spec, spec_bands
from .plot import KindOpt

EPILOG = """Examples:

  matchtool report ant_r1.s1p ant_r2.s1p ant_r3.s1p --band ism=902MHz:928MHz --out bench.html

  matchtool report unit7.s1p --max-vswr 2 --kind return-loss,smith --title "Unit 7, build 3" --out u7.html

The page needs no other file and no network: styles and pictures (SVG) are inside it. It carries
the date, the tool version and the SHA-256 of every input file, so it can go into a build record.
"""

SAFETY = ("matchtool computes; it does not certify. Transmitting into a badly matched antenna (high VSWR) "
          "can damage an amplifier; EIRP, band and RF-exposure limits are set by local regulation.")


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
    if c.warnings:
        body.append("<h3>Warnings</h3>" + h.bullet_list(c.warnings, "note warn"))
    body.append(h.paragraph(SAFETY, "note"))
    return h.Section("summary", "Summary", "\n".join(body))


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
    if len(c.rows) < 2 and not c.verdicts:
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
    for k, v in enumerate(c.verdicts):
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


# Integration round: spec_section (id "spec"), match_section ("match"), budget_section ("budget").
SECTION_BUILDERS: list[Callable[[ReportContext], h.Section | None]] = [
    summary_section, sweeps_section, compare_section, plots_section, traceability_section]


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
        kind: KindOpt = None,
        title: Annotated[str | None, typer.Option("--title", metavar="TEXT", help="Page title.")] = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
    ) -> int:
        """One self-contained HTML page: summary, inspect metrics, comparison, plots, input hashes."""
        from ..render import plots

        if Path(out).suffix.lower() not in (".html", ".htm"):
            raise UsageError(f"unknown report extension {Path(out).suffix or '(none)'!r}", path=out,
                             expected="a file name ending in .html")
        kinds = plots.parse_kinds(kind or ["return-loss,vswr,smith,impedance"])
        check_output(out, force)
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = parse_band_options(band, thr)
        the_spec, port, z0 = read_spec(spec, port, z0)
        if the_spec is not None:
            bands += spec_bands(the_spec)
        inputs = [hash_file(p) for p in sweeps]
        loaded = [load(p, port=port, z0_ohm=z0) for p in sweeps]
        labels = plots.legend_labels([s.path for s in loaded])
        options = [("threshold", f"return loss >= {thr:.2f} dB"), ("port", str(port)),
                   ("z0", "from each file" if z0 is None else f"{z0:g} ohm")]
        options += [(f"band {n}", f"{ff(lo)} to {ff(hi)}") for n, lo, hi, _ in bands]
        ctx = ReportContext(sweeps=loaded, labels=labels, summaries=[summarize(s, thr) for s in loaded],
                            comparison=compare(loaded, thr, bands), threshold_return_loss_db=thr, bands=bands,
                            kinds=kinds, inputs=inputs, generated=report_time(), options=options)
        page = build_page(ctx, title or f"Antenna match report: {', '.join(labels)}")
        atomic_write(out, h.render_page(page), force=force)
        warn(ctx.comparison.warnings)
        # Exit 1 when a spec band failed for some file (the page is still written); --band limits inform.
        first_spec = len(band or [])
        failed = any(w.passed is False for r in ctx.comparison.rows for w in r.bands[first_spec:])
        return 1 if (spec is not None and failed) else 0

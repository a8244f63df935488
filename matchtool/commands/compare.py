"""``matchtool compare SWEEP SWEEP...``: revisions side by side with deltas against a baseline."""

from __future__ import annotations

from typing import Annotated, Any

import typer

from ..compare import BandSpec, Comparison, band_name, compare, order_with_baseline
from ..errors import ExitStatus, OutOfRangeError, UsageError
from ..render.json_contract import requirement_doc
from ..spec import Spec, load_spec
from ..summary import threshold_from_options
from ..sweep import load
from ..units import parse_band
from .common import JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, console, emit_json, fmt, warn

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
defines the band that holds the best match, and is the limit applied to every --band.
"""

BandOpt = Annotated[list[str] | None, typer.Option(
    "--band", metavar="[NAME=]LOW:HIGH",
    help="Band of interest (repeatable), e.g. 902MHz:928MHz or ism=902MHz:928MHz; the threshold is its limit.")]
SpecOpt = Annotated[str | None, typer.Option(
    "--spec", metavar="FILE",
    help="Spec file (TOML, as for 'matchtool check'): every requirement is evaluated for each revision.")]


def parse_band_options(values: list[str] | None, limit_return_loss_db: float | None) -> list[BandSpec]:
    """``[NAME=]LOW:HIGH`` options -> ``(name, f_low_hz, f_high_hz, limit)`` tuples (duplicate names refused)."""
    out: list[BandSpec] = []
    for v in values or []:
        name, sep, rest = v.partition("=")
        if not sep:
            name, rest = "", v
        lo, hi = parse_band(rest)
        if sep and not name.strip():
            raise UsageError(f"--band {v!r} has an empty name", expected="NAME=LOW:HIGH or LOW:HIGH")
        name = name.strip() or band_name(lo, hi)
        if any(b[0] == name for b in out):
            raise UsageError(f"--band {v!r}: the name {name!r} is given twice", expected="distinct band names")
        out.append((name, lo, hi, limit_return_loss_db))
    return out


def require_bands_in_sweeps(bands: list[BandSpec], sweeps: list) -> None:
    """Refuse a --band that no sweep reaches at all (never extrapolated); a band that a sweep
    covers only in part is still evaluated and reported as not covered by that sweep."""
    for name, lo, hi, _ in bands:
        if not any(s.f_hz[0] <= hi and lo <= s.f_hz[-1] for s in sweeps):
            raise OutOfRangeError(
                f"--band {name!r} ({lo / 1e6:.6g} to {hi / 1e6:.6g} MHz) lies outside every sweep",
                expected="a band inside the measured range (never extrapolated)")


def spec_bands(spec: Spec) -> list[BandSpec]:
    """Bands of a loaded spec as ``(name, f_low_hz, f_high_hz, min_return_loss_db)`` (for shading
    and masks; every limit key becomes the equivalent minimum return loss)."""
    return [(b.name, float(b.f_low_hz), float(b.f_high_hz), float(b.min_return_loss_db)) for b in spec.bands]


def read_spec(path: str | None, port: int, z0_ohm: float | None) -> tuple[Spec | None, int, float | None]:
    """Load ``--spec`` (as ``matchtool check`` does) and return ``(spec, port, z0_ohm)`` to load the
    sweeps with: the spec's port and system impedance. ``--port`` / ``--z0`` that contradict the
    spec are refused, so a revision is never judged on another reflection than ``check`` would use.
    """
    if path is None:
        return None, port, z0_ohm
    spec = load_spec(path)
    if port != 1 and port != spec.port:
        raise UsageError(f"--port {port} contradicts the spec's port = {spec.port}", path=path,
                         expected="no --port, or the spec's port")
    if z0_ohm is not None and (spec.z0_ohm is None or abs(z0_ohm - spec.z0_ohm) > 1e-9 * spec.z0_ohm):
        have = "no z0_ohm (each file's own reference)" if spec.z0_ohm is None else f"z0_ohm = {spec.z0_ohm:g}"
        raise UsageError(f"--z0 {z0_ohm:g} contradicts the spec's {have}", path=path,
                         expected="no --z0 with --spec (set z0_ohm in the spec file)")
    return spec, spec.port, spec.z0_ohm


def comparison_doc(c: Comparison) -> dict[str, Any]:
    """The ``compare --json`` document (contract keys plus per-band worst cases and verdicts)."""
    rows = []
    for r in c.rows:
        b = r.band
        rows.append({
            "file": r.file, "baseline": r.is_baseline, "best_f_hz": r.best_f_hz,
            "best_return_loss_db": r.best_return_loss_db, "best_s11_db": -r.best_return_loss_db,
            "bandwidth_hz": r.bandwidth_hz,
            "band": None if b is None else {"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz,
                                            "clipped_low": b.clipped_low, "clipped_high": b.clipped_high},
            "delta_best_f_hz": r.delta_best_f_hz, "delta_bandwidth_hz": r.delta_bandwidth_hz,
            "bands": [{"name": w.name, "f_low_hz": w.f_low_hz, "f_high_hz": w.f_high_hz, "covered": w.covered,
                       "limit_return_loss_db": w.limit_return_loss_db,
                       "worst_return_loss_db": w.worst_return_loss_db, "worst_s11_db": w.worst_s11_db,
                       "worst_f_hz": w.worst_f_hz, "worst_mismatch_loss_db": w.worst_mismatch_loss_db,
                       "margin_db": w.margin_db, "pass": w.passed, "samples": w.samples,
                       "delta_worst_return_loss_db": d, "reason": w.reason or None}
                      for w, d in zip(r.bands, r.delta_worst_return_loss_db, strict=True)],
        })
        if r.spec is not None:
            rows[-1]["spec_pass"] = r.spec.passed
            rows[-1]["requirements"] = [dict(requirement_doc(q), delta_margin=d)
                                        for q, d in zip(r.spec.requirements, r.delta_margin, strict=True)]
    return {"baseline": c.baseline, "threshold_return_loss_db": c.threshold_return_loss_db, "rows": rows,
            "band_verdicts": [{"name": v.name, "f_low_hz": v.f_low_hz, "f_high_hz": v.f_high_hz,
                               "limit_return_loss_db": v.limit_return_loss_db, "best_file": v.best_file,
                               "best_worst_return_loss_db": v.best_worst_return_loss_db,
                               "passing_files": v.passing_files, "uncovered_files": v.uncovered_files,
                               "verdict": v.sentence()} for v in c.verdicts],
            "spec": c.spec_path,
            "spec_verdicts": [{"name": v.name, "key": v.key, "unit": v.unit, "best_file": v.best_file,
                               "best_margin": None if v.best is None else (
                                   v.best.margin_db if v.best.margin_db is not None else v.best.margin_hz),
                               "passing_files": v.passing_files, "failing_files": v.failing_files,
                               "unevaluated_files": v.unevaluated_files, "verdict": v.sentence()}
                              for v in c.spec_verdicts],
            "pass": None if c.spec_path is None else not c.spec_failed,
            "warnings": list(c.warnings)}


def _signed(x: float | None, scale: float, digits: int) -> str:
    return "n/a" if x is None else f"{x / scale:+.{digits}f}"


def _display_names(paths: list[str]) -> list[str]:
    """File names for a table: the base name when that is unambiguous, else the path."""
    from pathlib import Path

    base = [Path(p).name for p in paths]
    return base if len(set(base)) == len(base) else list(paths)


def render_comparison(c: Comparison, n_band_tables: int | None = None) -> None:
    """Terminal view of a Comparison (frequencies in MHz, losses in positive dB); a table for each
    of the first ``n_band_tables`` bands (default all), then the spec verdicts if any."""
    from rich.table import Table

    thr = c.threshold_return_loss_db
    con = console()
    names = _display_names([r.file for r in c.rows])
    t = Table(title=f"Revisions against {names[0]} (d = this minus the baseline); band = return loss >= "
                    f"{thr:.2f} dB (S11 <= {-thr:.2f} dB) around the best match",
              title_justify="left", show_edge=False)
    for col in ("file", "best MHz", "RL dB", "band MHz", "width MHz", "d best MHz", "d width MHz"):
        t.add_column(col, justify="left" if col in ("file", "band MHz") else "right", no_wrap=True)
    for name, r in zip(names, c.rows, strict=True):
        b = r.band
        if b is None:
            band, width = "misses threshold", "n/a"
        else:
            band = f"{b.f_low_hz / 1e6:.3f}-{b.f_high_hz / 1e6:.3f}"
            width = ("> " if b.clipped_low or b.clipped_high else "") + f"{b.bandwidth_hz / 1e6:.3f}"
        t.add_row(name + (" (base)" if r.is_baseline else ""), f"{r.best_f_hz / 1e6:.3f}", fmt(r.best_return_loss_db),
                  band, width, _signed(r.delta_best_f_hz, 1e6, 3), _signed(r.delta_bandwidth_hz, 1e6, 3))
    con.print(t)
    shown = c.verdicts if n_band_tables is None else c.verdicts[:n_band_tables]
    for k, v in enumerate(shown):
        lim = "" if v.limit_return_loss_db is None else f", limit return loss {v.limit_return_loss_db:.2f} dB"
        bt = Table(title=f"Band {v.name}: {v.f_low_hz / 1e6:.6g} to {v.f_high_hz / 1e6:.6g} MHz{lim}",
                   title_justify="left", show_edge=False)
        for col in ("file", "worst RL dB", "d RL dB", "at MHz", "mismatch dB", "margin dB", "verdict"):
            bt.add_column(col, justify="left" if col in ("file", "verdict") else "right", no_wrap=True)
        for name, r in zip(names, c.rows, strict=True):
            w, d = r.bands[k], r.delta_worst_return_loss_db[k]
            if not w.covered:
                bt.add_row(name, "n/a", "n/a", "n/a", "n/a", "n/a", "not covered" if w.passed is None else "FAIL (not covered)")
                continue
            verdict = "" if w.passed is None else ("pass" if w.passed else "FAIL")
            bt.add_row(name, fmt(w.worst_return_loss_db), _signed(d, 1.0, 2), f"{w.worst_f_hz / 1e6:.3f}",
                       fmt(w.worst_mismatch_loss_db, 3), "n/a" if w.margin_db is None else f"{w.margin_db:+.2f}",
                       verdict)
        con.print(bt)
    by_path = dict(zip([r.file for r in c.rows], names, strict=True))
    for v in shown:
        con.print(v.sentence(by_path))
    if c.spec_path is not None:
        render_spec(c, names)


def requirement_cells(q) -> tuple[str, str, str, str, str]:
    """Table cells of one spec requirement: verdict, worst (in the limit key's unit), where, limit, margin."""
    verdict = "pass" if q.passed else "FAIL"
    if q.worst is None:
        # not evaluated (e.g. the band is not covered): the reason is in the warnings and the JSON
        return verdict, "not evaluated", "n/a", "n/a" if q.limit is None else f"{q.limit:g}", "n/a"
    if q.key == "resonance":
        return (verdict, f"{q.worst / 1e6:.3f} MHz", f"{q.worst_f_hz / 1e6:.3f} MHz",
                f"{q.f_low_hz / 1e6:.6g}-{q.f_high_hz / 1e6:.6g} MHz", f"{q.margin_hz / 1e6:+.3f} MHz")
    d = 3 if q.key == "max_vswr" else 2
    return (verdict, f"{q.worst:.{d}f} {q.unit}", f"{q.worst_f_hz / 1e6:.3f} MHz", f"{q.limit:.{d}f}",
            f"{q.margin_db:+.2f} dB")


def render_spec(c: Comparison, names: list[str]) -> None:
    """Terminal view of the spec verdicts of every revision, then one line per requirement."""
    from rich.markup import escape
    from rich.table import Table

    con = console()
    t = Table(title=f"Spec {escape(c.spec_path or '')} (as 'matchtool check'; margin positive = passing, "
                    "in dB of return loss for the reflection limits)", title_justify="left", show_edge=False)
    for col in ("file", "requirement", "verdict", "worst", "at", "limit", "margin", "d margin"):
        t.add_column(col, justify="left" if col in ("file", "requirement", "verdict") else "right", no_wrap=True)
    for name, r in zip(names, c.rows, strict=True):
        for k, (q, d) in enumerate(zip(r.spec.requirements, r.delta_margin, strict=True)):
            cells = requirement_cells(q)
            dm = "n/a" if d is None else (f"{d / 1e6:+.3f} MHz" if q.key == "resonance" else f"{d:+.2f} dB")
            v = "[green]pass[/green]" if q.passed else "[red]FAIL[/red]"
            t.add_row(escape(name) if k == 0 else "", escape(q.name), v, *(escape(x) for x in cells[1:]), dm)
    con.print(t)
    by_path = dict(zip([r.file for r in c.rows], names, strict=True))
    for v in c.spec_verdicts:
        con.print(escape(v.sentence(by_path)))
    failing = [name for r, name in zip(c.rows, names, strict=True) if r.spec is not None and not r.spec.passed]
    if c.spec_failed:
        con.print(f"Verdict: [red]FAIL[/red] - {len(failing)} of {len(c.rows)} revisions fail the spec: "
                  + escape(", ".join(failing)))
    else:
        con.print(f"Verdict: [green]PASS[/green] - all {len(c.rows)} revisions meet every requirement")


def register(app: typer.Typer) -> None:
    @app.command("compare", epilog=EPILOG)
    def compare_cmd(
        sweeps: Annotated[list[str], typer.Argument(metavar="SWEEP...", help="Touchstone files, in revision order.",
                                                    show_default=False)],
        baseline: Annotated[str | None, typer.Option(
            "--baseline", metavar="FILE", help="Sweep to compare against (default: the first SWEEP).")] = None,
        band: BandOpt = None,
        spec: SpecOpt = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        json_out: JsonOpt = False,
    ) -> int:
        """Revisions side by side: best match, threshold band, per-band worst case, deltas to the baseline."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        bands = parse_band_options(band, thr)
        the_spec, port, z0 = read_spec(spec, port, z0)
        paths = order_with_baseline(sweeps, baseline)
        loaded = [load(p, port=port, z0_ohm=z0) for p in paths]
        require_bands_in_sweeps(bands, loaded)
        # spec bands also get the plain per-band worst values (return loss, mismatch loss) without
        # a limit of their own: their verdicts are the spec requirements, evaluated as check does
        extra = [] if the_spec is None else [(n, lo, hi, None) for n, lo, hi, _ in spec_bands(the_spec)]
        c = compare(loaded, thr, bands + extra, spec=the_spec)
        if the_spec is not None:
            c.warnings[:0] = [w for w in the_spec.warnings if w not in c.warnings]
        if json_out:
            emit_json(comparison_doc(c))
        else:
            render_comparison(c, len(bands))
            warn(c.warnings)
        # Exit 1 only for a spec requirement; --band limits inform and do not gate. An unreadable
        # file or spec raised before this point (status 2, which wins over 1).
        return ExitStatus.FAIL if c.spec_failed else ExitStatus.OK

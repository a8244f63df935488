"""``matchtool check SWEEP... --spec FILE``: pass/fail of one unit or a whole lot against a spec."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Annotated, Any

import typer

from ..batch import LotSummary, default_jobs, expand_inputs, run_batch, summarize_lot
from ..errors import ExitStatus, UsageError
from ..outputs import atomic_write_many, check_output
from ..spec import RequirementResult, Spec, UnitResult, load_spec
from ..units import format_frequency as ff
from .common import ForceOpt, JsonOpt, console, emit_json, fmt, warn

EPILOG = """Examples:

  matchtool check sample_sweeps/ant_r2.s1p --spec sample_sweeps/spec_915.toml

  matchtool check sweeps/lot7/ --spec antenna_spec.toml --junit results.xml --csv results.csv

  matchtool check 'sweeps/**/*.s1p' --spec antenna_spec.toml --jobs 8 --json

Exit status: 0 every unit passed, 1 a requirement failed, 2 a file or the spec could not be read
(2 wins over 1; the reports are still written for the files that could be read).
"""

TABLE_ALL_MAX = 50
"""Lots larger than this show only the units that did not pass, at most this many, in the table
(the CSV and JSON hold every row; a table of a thousand units helps nobody and is slow to draw)."""
PROGRESS_MIN = 20


def requirement_doc(r: RequirementResult) -> dict[str, Any]:
    """The contract's requirement entry (plus unit, band and reason fields)."""
    return {"name": r.name, "pass": r.passed, "limit": r.limit, "worst": r.worst, "worst_f_hz": r.worst_f_hz,
            "margin_db": r.margin_db, "key": r.key, "unit": r.unit, "f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz,
            "worst_return_loss_db": r.worst_return_loss_db, "margin_hz": r.margin_hz, "samples": r.samples,
            "reason": r.reason or None, **_where(r)}


def _where(r: RequirementResult) -> dict[str, Any]:
    """``port`` of a one-port requirement or ``ports`` of a two-port one (multi-port specs), with
    what was read and the ECC margin where they apply."""
    out: dict[str, Any] = {"port": r.port} if r.ports is None else {"ports": list(r.ports)}
    if r.checked:
        out["checked"] = r.checked
    if r.margin_ecc is not None:
        out["margin_ecc"] = r.margin_ecc
    return out


def unit_doc(u: UnitResult) -> dict[str, Any]:
    return {"file": u.file, "pass": u.passed, "error": u.error, "best_f_hz": u.best_f_hz,
            "best_return_loss_db": u.best_return_loss_db, "requirements": [requirement_doc(r) for r in u.requirements]}


def summary_doc(s: LotSummary) -> dict[str, Any]:
    return {"units": s.units, "passed": s.passed, "failed": s.failed, "errors": s.errors,
            "yield_fraction": s.yield_fraction,
            "yield": [{"name": y.name, "passed": y.passed, "evaluated": y.evaluated, "yield_fraction": y.yield_fraction}
                      for y in s.yields],
            "resonance_f_hz": {"min": s.resonance_min_hz, "median": s.resonance_median_hz, "max": s.resonance_max_hz},
            "worst_units": [{"file": w.file, "requirement": w.requirement, "margin_db": w.margin_db,
                             "margin_hz": w.margin_hz, "pass": w.passed} for w in s.worst]}


def check_doc(spec: Spec, results: list[UnitResult], summary: LotSummary | None, warnings: list[str]) -> dict[str, Any]:
    """The ``check --json`` document (keys per the interface contract, plus a few more)."""
    doc: dict[str, Any] = {"pass": all(u.passed for u in results), "spec": spec.path,
                           "files": [unit_doc(u) for u in results]}
    if summary is not None:
        doc["summary"] = summary_doc(summary)
    doc["warnings"] = warnings
    return doc


def _worst_margin(w) -> str:
    if w.margin_db is not None:
        return f"{w.margin_db:+.2f} dB"
    if w.margin_hz is not None:
        return f"{w.margin_hz / 1e6:+.3f} MHz from the window"
    return "not evaluated"


def _verdict(r: RequirementResult) -> str:
    return "[green]pass[/green]" if r.passed else "[red]FAIL[/red]"


def _worst_text(r: RequirementResult) -> tuple[str, str, str, str]:
    if r.worst is None:
        return "", "", "", r.reason
    if r.key == "resonance":
        return (ff(r.worst), ff(r.worst), f"{r.f_low_hz / 1e6:.1f}-{r.f_high_hz / 1e6:.1f} MHz",
                f"{r.margin_hz / 1e6:+.3f} MHz")
    d = r.info.digits
    margin = f"{r.margin_ecc:+.3f}" if r.margin_ecc is not None else f"{fmt(r.margin_db, 2)} dB"
    return (f"{r.worst:.{d}f} {r.unit}", ff(r.worst_f_hz), f"{r.limit:.{d}f} {r.unit}", margin)


_MARGIN_WORDS = {
    "min_return_loss_db": "return loss", "max_vswr": "return loss", "max_s11_db": "return loss",
    "max_mismatch_loss_db": "mismatch loss", "max_deviation_db": "deviation from the golden unit",
}


def margin_footer(results: list[UnitResult]) -> str:
    """The sentence under the table saying what unit each margin shown is in (only kinds present)."""
    keys = {r.key for u in results for r in u.requirements}
    parts = []
    if keys & {"min_return_loss_db", "max_vswr", "max_s11_db"}:
        conv = [w for k, w in (("max_vswr", "VSWR"), ("max_s11_db", "S11")) if k in keys]
        parts.append("return-loss limits in dB of return loss"
                     + (f" (a {' or '.join(conv)} limit converted to it)" if conv else ""))
    if "max_mismatch_loss_db" in keys:
        parts.append("mismatch-loss limits in dB of mismatch loss")
    if "max_deviation_db" in keys:
        parts.append("the golden-unit limit in dB of deviation")
    if "min_isolation_db" in keys:
        parts.append("isolation limits in dB of isolation (-20 log10 |S_ij|, both directions)")
    if "max_ecc" in keys:
        parts.append("ECC limits as limit minus worst ECC (from S-parameters, lossless antennas assumed: "
                     "optimistic for antennas of low efficiency)")
    if "resonance" in keys:
        parts.append("the resonance margin in MHz (how far the best match lies inside the window; negative: outside)")
    return "Margins are positive when passing: " + "; ".join(parts) + "." if parts else ""


def common_folder(files: list[str]) -> str:
    """The directory every one of ``files`` lies in (as written, '' when there is none or one file),
    so the table can show the names below it in full instead of truncating them."""
    import os

    if len(files) < 2:
        return ""
    parents = [os.path.dirname(f) for f in files]
    if any(not p for p in parents):
        return ""
    try:
        folder = os.path.commonpath(parents)
    except ValueError:  # absolute and relative mixed
        return ""
    if folder in ("", ".", os.sep):
        return ""
    return folder


def _short(file: str, folder: str) -> str:
    import os

    return os.path.relpath(file, folder) if folder and file.startswith(folder) else file


def render(spec: Spec, results: list[UnitResult], summary: LotSummary | None) -> None:
    """Terminal view: units by requirements, then the lot summary."""
    from rich.markup import escape
    from rich.table import Table

    c = console()
    shown = results if len(results) <= TABLE_ALL_MAX else [u for u in results if not u.passed][:TABLE_ALL_MAX]
    folder = common_folder([u.file for u in shown])
    title = f"Check against {escape(spec.path)}" + (f" (files in {escape(folder)}/)" if folder else "")
    t = Table(title=title, title_justify="left", show_edge=False)
    for col in ("file", "requirement", "verdict", "worst", "at", "limit", "margin"):
        # a file name is wrapped if it must be, never cut short with an ellipsis
        t.add_column(col, justify="left" if col in ("file", "requirement", "verdict") else "right",
                     overflow="fold" if col == "file" else "ellipsis" if col == "verdict" else "fold")
    for u in shown:
        if u.error is not None:
            t.add_row(escape(_short(u.file, folder)), "", "[red]ERROR[/red]", "", "", "", escape(u.error))
            continue
        for k, r in enumerate(u.requirements):
            t.add_row(escape(_short(u.file, folder)) if k == 0 else "", escape(r.name), _verdict(r),
                      *(escape(x) for x in _worst_text(r)))
    if shown:
        c.print(t)
    if len(shown) < len(results):
        not_passing = sum(1 for u in results if not u.passed)
        c.print(f"({len(results) - len(shown)} units not listed: {len(results) - not_passing} passing, "
                f"{not_passing - len(shown)} more not passing; --csv or --json hold every row)")
    footer = margin_footer(shown)
    if footer:
        c.print(footer)
    if summary is not None:
        c.print(f"[bold]Lot[/bold]: {summary.units} units, {summary.passed} passed, {summary.failed} failed, "
                f"{summary.errors} unreadable; yield {100 * summary.yield_fraction:.1f} %")
        y = Table(show_edge=False)
        for col in ("requirement", "passed", "evaluated", "yield"):
            y.add_column(col, justify="left" if col == "requirement" else "right")
        for q in summary.yields:
            y.add_row(escape(q.name), str(q.passed), str(q.evaluated), f"{100 * q.yield_fraction:.1f} %")
        c.print(y)
        if summary.resonance_min_hz is not None:
            c.print(f"Best-match frequency: min {ff(summary.resonance_min_hz)}, median {ff(summary.resonance_median_hz)}, "
                    f"max {ff(summary.resonance_max_hz)}")
        failing = [w for w in summary.worst if not w.passed]
        listed, label = (failing, "Worst failing units") if failing else (list(summary.worst), "Closest to failing")
        if listed:
            c.print(f"{label}: " + "; ".join(f"{escape(w.file)} ({escape(w.requirement)}, {_worst_margin(w)})"
                                             for w in listed))
    verdict = ("[red]FAIL[/red]" if not all(u.passed for u in results) else "[green]PASS[/green]")
    c.print(f"Verdict: {verdict}")


class _Progress:
    """A rich progress bar on stderr (only used when stderr is a terminal)."""

    def __init__(self, total: int) -> None:
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeRemainingColumn

        # no refresh thread (auto_refresh off): the worker processes are forked while it runs
        self.p = Progress("checking", BarColumn(), MofNCompleteColumn(), TimeRemainingColumn(),
                          console=Console(file=sys.stderr), transient=True, auto_refresh=False)
        self.task = self.p.add_task("check", total=total)
        self.last = 0.0

    def __enter__(self):
        self.p.__enter__()
        return self

    def __exit__(self, *exc):
        return self.p.__exit__(*exc)

    def __call__(self, n: int) -> None:
        import time

        self.p.advance(self.task, n)
        now = time.monotonic()
        if now - self.last >= 0.1:  # at most ten redraws a second
            self.last = now
            self.p.refresh()


def run_check(sweeps: list[str], spec_path: str, json_out: bool = False, junit: str | None = None,
              csv_path: str | None = None, jobs: int | None = None, force: bool = False) -> int:
    """The whole check command; returns the exit status (0 / 1 / 2)."""
    if jobs is not None and jobs < 1:
        raise UsageError(f"--jobs {jobs}", expected="a number of processes >= 1")
    targets = [p for p in (junit, csv_path) if p]
    if len({str(Path(p).resolve()) for p in targets}) < len(targets):
        raise UsageError("--junit and --csv name the same file", expected="two different output files")
    for p in targets:
        check_output(p, force)
    spec = load_spec(spec_path)
    inputs = expand_inputs(sweeps)
    if not inputs:
        raise UsageError("no sweep to check", expected="files, glob patterns or directories of Touchstone files")
    protected = {str(Path(i.path).resolve()) for i in inputs if i.error is None} | {str(Path(spec.path).resolve())}
    for p in targets:
        if str(Path(p).resolve()) in protected:
            raise UsageError("an output would overwrite one of the inputs", path=p,
                             expected="a report file name that is not a sweep or the spec")
    for opt, p, ext, kind in (("--junit", junit, ".xml", "JUnit XML"), ("--csv", csv_path, ".csv", "CSV")):
        if p and Path(p).suffix.lower() != ext:
            raise UsageError(f"{opt} needs a {ext} file name for the {kind} report", path=p,
                             expected=f"e.g. results{ext}")
    n_jobs = default_jobs() if jobs is None else jobs
    if sys.stderr.isatty() and len(inputs) >= PROGRESS_MIN:
        with _Progress(len(inputs)) as bar:
            results = run_batch(inputs, spec, n_jobs, progress=bar, fast_malloc=True)
    else:
        results = run_batch(inputs, spec, n_jobs, fast_malloc=True)
    summary = summarize_lot(results) if len(results) > 1 else None
    outputs: list[tuple[str, str]] = []
    if junit:
        from ..render.junit import junit_xml

        outputs.append((junit, junit_xml(results, suite_name=spec.name or f"matchtool check {Path(spec.path).name}")))
    if csv_path:
        from ..render.csvout import csv_text

        outputs.append((csv_path, csv_text(results)))
    atomic_write_many(outputs, force)
    warnings = list(spec.warnings) + [w for u in results for w in u.warnings]
    errors = [u.error for u in results if u.error is not None]
    if json_out:
        emit_json(check_doc(spec, results, summary, warnings))
    else:
        render(spec, results, summary)
        warn(warnings)
    for e in errors:
        print(f"error: {' '.join(e.split())}", file=sys.stderr)
    if errors:
        return ExitStatus.ERROR
    return ExitStatus.OK if all(u.passed for u in results) else ExitStatus.FAIL


def register(app: typer.Typer) -> None:
    @app.command("check", epilog=EPILOG)
    def check_cmd(
        sweeps: Annotated[list[str], typer.Argument(
            metavar="SWEEP...", help="Touchstone files, glob patterns ('lot7/**/*.s1p') or directories (searched "
            "recursively).", show_default=False)],
        spec: Annotated[str, typer.Option("--spec", metavar="FILE", help="Spec file (TOML) with [[band]] limits.",
                                          show_default=False)],
        json_out: JsonOpt = False,
        junit: Annotated[str | None, typer.Option("--junit", metavar="FILE", help="Write a JUnit XML report.")] = None,
        csv_path: Annotated[str | None, typer.Option("--csv", metavar="FILE", help="Write a CSV report.")] = None,
        jobs: Annotated[int | None, typer.Option(
            "--jobs", metavar="N", help="Worker processes [default: the machine's cores; small lots run in-process].",
            show_default=False)] = None,
        force: ForceOpt = False,
    ) -> int:
        """Pass/fail of each sweep against a spec file; terminal table, JSON, JUnit XML and CSV."""
        return run_check(sweeps, spec, json_out=json_out, junit=junit, csv_path=csv_path, jobs=jobs, force=force)

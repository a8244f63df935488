"""``matchtool check SWEEP... --spec FILE``: pass/fail of one unit or a whole lot against a spec,
optionally appended to a results store, split into shards or run on a Dask cluster."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Annotated

import typer

from ..batch import check_lot, default_jobs, expand_inputs, parse_shard
from ..errors import ExitStatus, MatchtoolError, UsageError
from ..outputs import atomic_write_many, check_output
from ..render.json_contract import check_doc, emit_json
from ..render.text import warn
from ..spec import load_spec
from .options import PARAMETER_FLAGS, ForceOpt, JsonOpt

EPILOG = """Examples:

  matchtool check sample_sweeps/ant_r2.s1p --spec sample_sweeps/spec_915.toml

  matchtool check sweeps/lot7/ --spec antenna_spec.toml --junit results.xml --csv results.csv

  matchtool check 'sweeps/**/*.s1p' --spec antenna_spec.toml --jobs 8 --json

  matchtool check sweeps/lot12/ --spec antenna_spec.toml --store results.db --lot lot12

  matchtool check archive/ --spec new_spec.toml --shard 3/8 --store postgresql://qa@dbhost/results --lot re-2026

  matchtool check archive/ --spec new_spec.toml --scheduler tcp://scheduler:8786 --junit-level lot --junit lot.xml

Exit status: 0 every unit passed, 1 a requirement failed, 2 a file, the spec or the store could
not be read or written (2 wins over 1; the reports are still written for the files that could be
read).
"""


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
            "--jobs", metavar="N",
            help="Processes: this one and N-1 workers [default: the machine's cores; small lots run in this one].",
            show_default=False)] = None,
        force: ForceOpt = False,
        store: Annotated[str | None, typer.Option(
            "--store", metavar="URL", help="Append every unit's results to this store: a file path or sqlite:///path "
            "(SQLite, no server) or postgresql://user@host/db (shared by several stations). Needs --lot.")] = None,
        lot: Annotated[str | None, typer.Option("--lot", metavar="NAME", help="Lot name the units are stored under.")] = None,
        station: Annotated[str | None, typer.Option(
            "--station", metavar="NAME", help="Test station name stored with each unit [default: the host name].",
            show_default=False)] = None,
        shard: Annotated[str | None, typer.Option(
            "--shard", metavar="K/N", help="Check only the K-th of N deterministic shares of the expanded inputs "
            "(for CI matrices, array jobs, several hosts).")] = None,
        scheduler: Annotated[str | None, typer.Option(
            "--scheduler", metavar="ADDRESS", help="Run on this Dask distributed scheduler (e.g. tcp://host:8786; "
            "needs matchtool[dask]); the workers must see the same file paths.")] = None,
        junit_level: Annotated[str, typer.Option(
            "--junit-level", metavar="unit|lot", help="JUnit test cases per file and requirement (unit) or one per "
            "requirement with the lot yield (lot).")] = "unit",
    ) -> int:
        """Pass/fail of each sweep against a spec file; terminal table, JSON, JUnit XML, CSV and a results store."""
        return run_check(sweeps, spec, json_out=json_out, junit=junit, csv_path=csv_path, jobs=jobs, force=force,
                         store=store, lot=lot, station=station, shard=shard, scheduler=scheduler,
                         junit_level=junit_level)


def _validate(sweeps, spec_path, junit, csv_path, jobs, force, store, lot, shard, scheduler, junit_level):
    if jobs is not None and jobs < 1:
        raise UsageError(f"--jobs {jobs}", expected="a number of processes >= 1")
    if junit_level not in ("unit", "lot"):
        raise UsageError(f"--junit-level {junit_level!r}", expected="unit or lot")
    if store and not (lot and lot.strip()):
        raise UsageError("--store needs --lot NAME", expected="e.g. --store results.db --lot lot12")
    if store:
        from ..store import normalise_url

        normalise_url(store)  # a URL of an unknown kind is a bad argument: refused before any work
    if scheduler and jobs is not None:
        raise UsageError("--jobs and --scheduler both given", expected="--jobs for this machine or --scheduler for a "
                         "Dask cluster")
    targets = [p for p in (junit, csv_path) if p]
    if len({str(Path(p).resolve()) for p in targets}) < len(targets):
        raise UsageError("--junit and --csv name the same file", expected="two different output files")
    for p in targets:
        check_output(p, force)
    return targets, parse_shard(shard) if shard else None


def run_check(sweeps: list[str], spec_path: str, json_out: bool = False, junit: str | None = None,
              csv_path: str | None = None, jobs: int | None = None, force: bool = False, store: str | None = None,
              lot: str | None = None, station: str | None = None, shard: str | None = None,
              scheduler: str | None = None, junit_level: str = "unit") -> int:
    """The whole check command; returns the exit status (0 / 1 / 2)."""
    targets, shard_kn = _validate(sweeps, spec_path, junit, csv_path, jobs, force, store, lot, shard, scheduler,
                                  junit_level)
    spec = load_spec(spec_path)
    inputs = expand_inputs(sweeps)
    if not inputs:
        raise UsageError("no sweep to check", expected="files, glob patterns or directories of Touchstone files")
    if targets:  # (resolving every input costs a few ms per hundred files: only when something is written)
        protected = {str(Path(i.path).resolve()) for i in inputs if i.error is None} | {str(Path(spec.path).resolve())}
        for p in targets:
            if str(Path(p).resolve()) in protected:
                raise UsageError("an output would overwrite one of the inputs", path=p,
                                 expected="a report file name that is not a sweep or the spec")
    for opt, p, ext, kind in (("--junit", junit, ".xml", "JUnit XML"), ("--csv", csv_path, ".csv", "CSV")):
        if p and Path(p).suffix.lower() != ext:
            raise UsageError(f"{opt} needs a {ext} file name for the {kind} report", path=p,
                             expected=f"e.g. results{ext}")
    # the kind of store URL was checked above (an unknown one is refused at once); the store itself
    # opens while the lot is checked; if it cannot be opened (a URL it cannot read, a missing
    # directory, a server that does not answer), the lot is still checked and the reports written,
    # and the exit status is 2
    db, store_error = None, None
    if store:
        from ..store import default_station, open_store

        station = station or default_station()
        try:
            db = open_store(store)
        except MatchtoolError as exc:
            store_error = exc.message_for(PARAMETER_FLAGS)
    from ..render.text.check import PROGRESS_MIN, Progress

    kw = dict(jobs=default_jobs() if jobs is None else jobs, shard=shard_kn, scheduler=scheduler,
              hashes=db is not None, fast_malloc=True)
    try:
        if sys.stderr.isatty() and len(inputs) >= PROGRESS_MIN:
            with Progress(len(inputs) if shard_kn is None else -(-len(inputs) // shard_kn[1])) as bar:
                result = check_lot(inputs, spec, progress=bar, **kw)
        else:
            result = check_lot(inputs, spec, **kw)
    except BaseException:
        if db is not None:
            db.close(abort=True)
        raise
    outputs: list[tuple[str, str]] = []
    if junit:
        from ..render.junit import junit_xml

        outputs.append((junit, junit_xml(result, suite_name=spec.name or f"matchtool check {Path(spec.path).name}",
                                         level=junit_level, lot_name=lot)))
    if csv_path:
        from ..render.csvout import csv_text

        outputs.append((csv_path, csv_text(result)))
    try:
        atomic_write_many(outputs, force)
    finally:
        info = None
        if db is not None:
            try:
                info = db.add_lot(result.units, spec, lot.strip(), station)
            except MatchtoolError as exc:
                store_error = exc.message_for(PARAMETER_FLAGS)
            except BaseException:  # Ctrl-C while writing: the write is not committed
                db.close(abort=True)
                raise
            db.close()
    if json_out:
        emit_json(check_doc(result, info, store_error, lot))
    else:
        from ..render.text.check import render

        render(result, info)
        warn(result.warnings)
    for e in result.errors:
        print(f"error: {' '.join(e.split())}", file=sys.stderr)
    if store_error:
        print(f"error: {' '.join(store_error.split())}", file=sys.stderr)
    if result.errors or store_error:
        return ExitStatus.ERROR
    return ExitStatus.OK if result.passed else ExitStatus.FAIL

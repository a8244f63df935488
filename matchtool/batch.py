"""Checking many sweeps against one spec: input expansion, parallel evaluation, lot summary.

Inputs may be files, glob patterns (``**`` recurses) and directories (searched recursively for
Touchstone files). The order is deterministic: the inputs in the order given, each expanded in
natural order (``u2`` before ``u10``), duplicates dropped. ``jobs`` > 1 evaluates in worker
processes in chunks; the results are identical to ``jobs = 1`` (same pure function, same order).
"""

from __future__ import annotations

import contextlib
import glob
import math
import os
import re
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .spec import RequirementResult, Spec, UnitResult, check_file

TOUCHSTONE = re.compile(r"\.(s\d+p|ts)$", re.I)
IN_PROCESS_MAX = 64
MAX_JOBS_PER_CORE = 4
"""``--jobs`` above this many processes per usable core is lowered to it (``--jobs 100000`` on a lot
of a thousand files would otherwise fork a thousand processes on a shared machine)."""
"""Lots of at most this many files run in-process whatever ``jobs`` says (a pool costs more)."""

_GLOB_CHARS = re.compile(r"[*?\[]")


def _natural(s: str) -> list:
    return [int(t) if t.isdigit() else t.lower() for t in re.split(r"(\d+)", s)] + [s]


@dataclass(frozen=True)
class Input:
    """One expanded input: ``path`` to check, or ``error`` (a pattern or directory with no sweep)."""

    path: str
    error: str | None = None


def expand_inputs(items: Iterable[str | Path]) -> list[Input]:
    """Expand files, glob patterns and directories (recursive) into a deterministic list.

    A literal path is kept even when it does not exist (its load then reports the error for that
    file); a pattern or directory that matches no Touchstone file becomes an Input with ``error``.
    """
    out: list[Input] = []
    seen: set[str] = set()

    def add(p: str) -> None:
        key = os.path.normpath(p)
        if key not in seen:
            seen.add(key)
            out.append(Input(p))

    for item in items:
        s = str(item)
        if os.path.isdir(s):
            found = []
            for root, dirs, files in os.walk(s):
                dirs[:] = [d for d in dirs if not d.startswith(".")]
                found += [os.path.join(root, f) for f in files if TOUCHSTONE.search(f) and not f.startswith(".")]
            if not found:
                out.append(Input(s, f"{s}: directory holds no Touchstone file (.sNp or .ts)"))
            for p in sorted(found, key=_natural):
                add(p)
        elif not os.path.exists(s) and _GLOB_CHARS.search(s):
            found = [p for p in glob.glob(s, recursive=True) if os.path.isfile(p)]
            if not found:
                out.append(Input(s, f"{s}: pattern matches no file"))
            for p in sorted(found, key=_natural):
                add(p)
        else:
            add(s)
    return out


# ------------------------------------------------------------------------------------------ running

_WORKER_SPEC: Spec | None = None


def tune_malloc() -> bool:
    """Ask glibc to keep freed blocks of up to 32 MB in the heap instead of returning each to the
    kernel. Parsing a sweep allocates a few arrays of the file's size; with the default threshold
    (128 kB) every one is a fresh mmap, and the page faults cost about a fifth of a lot's run time.
    Process-wide and glibc-only (a no-op returning False elsewhere); the CLI turns it on."""
    import ctypes
    import sys

    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL("libc.so.6")
        m_trim_threshold, m_mmap_threshold = -1, -3
        return bool(libc.mallopt(m_mmap_threshold, 32 << 20) and libc.mallopt(m_trim_threshold, 64 << 20))
    except (OSError, AttributeError):
        return False


def _init_worker(spec: Spec, tune: bool = False) -> None:
    global _WORKER_SPEC
    _WORKER_SPEC = spec
    if tune:
        tune_malloc()
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent handles Ctrl-C and stops the pool


def _work(path: str) -> UnitResult:
    return check_file(path, _WORKER_SPEC)


def default_jobs() -> int:
    """The number of worker processes by default: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


def run_batch(inputs: Iterable[Input | str], spec: Spec, jobs: int | None = None,
              progress: Callable[[int], None] | None = None, fast_malloc: bool = False) -> list[UnitResult]:
    """Evaluate every input against ``spec``; one UnitResult per input, in input order.

    ``jobs`` None means :func:`default_jobs` (at most :data:`MAX_JOBS_PER_CORE` per core are used);
    ``progress(n)`` is called after each ``n`` files;
    ``fast_malloc`` calls :func:`tune_malloc` (in this process and the workers) for a large lot.
    Unreadable files give results with ``error`` set; they never stop the others. Ctrl-C stops the
    workers and propagates KeyboardInterrupt.
    """
    items = [i if isinstance(i, Input) else Input(str(i)) for i in inputs]
    jobs = default_jobs() if jobs is None else int(jobs)
    todo = [i.path for i in items if i.error is None]
    tune = fast_malloc and len(todo) > 16
    if tune:
        tune_malloc()
    if jobs <= 1 or len(todo) <= IN_PROCESS_MAX:
        results = []
        for it in items:
            if it.error is not None:
                results.append(UnitResult(file=it.path, passed=False, error=it.error))
            else:
                results.append(check_file(it.path, spec))
            if progress:
                progress(1)
        return results
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor

    ctx = mp.get_context("fork") if "fork" in mp.get_all_start_methods() else None
    jobs = min(jobs, len(todo), MAX_JOBS_PER_CORE * default_jobs())
    chunk = max(1, min(64, math.ceil(len(todo) / (jobs * 8))))
    done = {}
    pool = ProcessPoolExecutor(max_workers=jobs, mp_context=ctx, initializer=_init_worker, initargs=(spec, tune))
    try:
        futures = []
        for k in range(0, len(todo), chunk):
            futures.append(pool.submit(_work_chunk, todo[k:k + chunk]))
        results_flat: list[UnitResult] = []
        for fut in futures:
            part = fut.result()
            results_flat.extend(part)
            if progress:
                progress(len(part))
    except BaseException:
        # Ctrl-C (or any failure): stop now, not after the queued chunks. The workers are this
        # process's own children; end each by its handle.
        procs = list(getattr(pool, "_processes", {}).values())
        pool.shutdown(wait=False, cancel_futures=True)
        for proc in procs:
            with contextlib.suppress(Exception):
                proc.terminate()
        for proc in procs:
            with contextlib.suppress(Exception):
                proc.join(timeout=2)
        raise
    pool.shutdown(wait=True)
    it_res = iter(results_flat)
    for n, it in enumerate(items):
        done[n] = UnitResult(file=it.path, passed=False, error=it.error) if it.error is not None else next(it_res)
    return [done[n] for n in range(len(items))]


def _work_chunk(paths: list[str]) -> list[UnitResult]:
    return [_work(p) for p in paths]


# -------------------------------------------------------------------------------------- lot summary

@dataclass(frozen=True)
class RequirementYield:
    """How many of the readable units met one requirement."""

    name: str
    passed: int
    evaluated: int

    @property
    def yield_fraction(self) -> float:
        return self.passed / self.evaluated if self.evaluated else 0.0


@dataclass(frozen=True)
class WorstUnit:
    """A unit with its smallest margin (dB; None when a requirement could not be evaluated) and the
    requirement that failed (or, for a passing unit, where the smallest margin occurs)."""

    file: str
    requirement: str
    margin_db: float | None
    passed: bool
    margin_hz: float | None = None


@dataclass(frozen=True)
class LotSummary:
    """A lot: counts, yield per requirement, spread of the best-match frequency (Hz), worst units."""

    units: int
    passed: int
    failed: int
    errors: int
    yields: tuple[RequirementYield, ...]
    resonance_min_hz: float | None
    resonance_median_hz: float | None
    resonance_max_hz: float | None
    worst: tuple[WorstUnit, ...]

    @property
    def yield_fraction(self) -> float:
        """Units that passed everything, over all units (unreadable units count as not passing)."""
        return self.passed / self.units if self.units else 0.0


def _unit_key(u: UnitResult) -> tuple[bool, float, RequirementResult | None, int]:
    """Sort key of a unit, worst first: failing before passing, then the smallest margin in dB.

    For a failing unit only its failing requirements count, and of those the ones with a margin in
    dB; a unit whose only failures have no dB margin (not evaluated, or outside the resonance
    window) counts as -inf. Ties go to the unit that fails more requirements. The requirement is
    returned too.
    """
    reqs = [r for r in u.requirements if not r.passed] or [r for r in u.requirements if r.margin_db is not None]
    in_db = [r for r in reqs if r.margin_db is not None]
    reqs = in_db or reqs  # rank on dB margins when the unit has any; a MHz miss alone counts as -inf
    worst, m = None, math.inf
    for r in reqs:
        x = r.margin_db if r.margin_db is not None else -math.inf
        if worst is None or x < m:
            worst, m = r, x
    return (u.passed, m, worst, -sum(1 for r in u.requirements if not r.passed))


def summarize_lot(results: list[UnitResult], n_worst: int = 5) -> LotSummary:
    """The lot summary of ``results`` (see :class:`LotSummary`)."""
    ok = [u for u in results if u.error is None]
    names: list[str] = []
    counts: dict[str, list[int]] = {}
    for u in ok:
        for r in u.requirements:
            if r.name not in counts:
                names.append(r.name)
                counts[r.name] = [0, 0]
            counts[r.name][1] += 1
            counts[r.name][0] += int(r.passed)
    f_best = np.array([u.best_f_hz for u in ok if u.best_f_hz is not None], dtype=float)
    spread = (float(f_best.min()), float(np.median(f_best)), float(f_best.max())) if f_best.size else (None,) * 3
    ranked = sorted(((_unit_key(u), n, u) for n, u in enumerate(ok)), key=lambda t: (t[0][0], t[0][1], t[0][3], t[1]))
    worst = tuple(WorstUnit(u.file, k[2].name if k[2] else "", k[2].margin_db if k[2] else None, u.passed,
                            k[2].margin_hz if k[2] else None)
                  for k, _, u in ranked[:n_worst])
    passed = sum(1 for u in results if u.passed)
    errors = len(results) - len(ok)
    return LotSummary(units=len(results), passed=passed, failed=len(results) - passed - errors, errors=errors,
                      yields=tuple(RequirementYield(n, *counts[n]) for n in names),
                      resonance_min_hz=spread[0], resonance_median_hz=spread[1], resonance_max_hz=spread[2],
                      worst=worst)

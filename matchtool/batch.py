"""Checking many sweeps against one spec: input expansion, shards, parallel evaluation (local
processes or a Dask cluster), lot summary. The one entry point is :func:`check_lot`.

Inputs may be files, glob patterns (``**`` recurses) and directories (searched recursively for
Touchstone files). The order is deterministic: the inputs in the order given, each expanded in
natural order (``u2`` before ``u10``), duplicates dropped. ``shard=(k, n)`` keeps the k-th of n
shares of that list (entry ``i``, 0-based, belongs to share ``i % n + 1``), so n hosts that see
the same files split a lot with no coordination. ``jobs`` > 1 evaluates in worker processes in
chunks, a ``scheduler`` address on a Dask cluster in batches of files per task; the results are
identical to ``jobs = 1`` (same pure function, same order).
"""

from __future__ import annotations

import contextlib
import glob
import hashlib
import math
import os
import re
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError, UsageError
from .numeric import median
from .spec import RequirementResult, Spec, UnitResult, check_file
from .touchstone.numbers import use_json_reader

TOUCHSTONE = re.compile(r"\.(s\d+p|ts)$", re.I)
IN_PROCESS_MAX = 64
"""Lots of at most this many files run in-process whatever ``jobs`` says (a pool costs more)."""
SAMPLE_FILES = 16
"""A larger lot starts in-process; after this many files (and after every file from then on) the
time the rest would take in one process is estimated from the files so far."""
POOL_MIN_S = 0.3
"""The rest goes to worker processes only when it would take longer than this in one process
(estimated from the files after the first, which pays one-time costs): a forked worker starts in
a few milliseconds, but the hand-over of chunks and results costs some 0.05-0.1 s on two cores,
so a lot that is quick anyway stays in-process (two jobs are never slower than one)."""
MAX_JOBS_PER_CORE = 4
"""``--jobs`` above this many processes per usable core is lowered to it (``--jobs 100000`` on a lot
of a thousand files would otherwise fork a thousand processes on a shared machine)."""
LOT_READER_MIN_FILES = 16
"""A lot of more files than this imports the JSON reader for its numbers up front (about 14 ms,
paid back after a few dozen files of 1,601 points; see ``touchstone.numbers``)."""

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


# ------------------------------------------------------------------------------------------ shards

def parse_shard(text: str) -> tuple[int, int]:
    """``"K/N"`` -> (K, N) with 1 <= K <= N. Raises UsageError (parameter ``shard``)."""
    m = re.fullmatch(r"\s*(\d+)\s*/\s*(\d+)\s*", str(text))
    if not m:
        raise UsageError("is not of the form K/N", parameter="shard", value=text, expected="e.g. 3/8 (the 3rd of 8 shares)")
    k, n = int(m.group(1)), int(m.group(2))
    if n < 1 or not 1 <= k <= n:
        raise UsageError(f"needs 1 <= K <= N (got K={k}, N={n})", parameter="shard", value=text,
                         expected="e.g. 1/4 ... 4/4")
    return k, n


def select_shard(items: list, shard: tuple[int, int] | None) -> list:
    """The ``k``-th of ``n`` shares of ``items``: entry ``i`` (0-based) is in share ``i % n + 1``.

    Round robin rather than contiguous blocks, so files of one folder (often one fixture or one day)
    spread over all shares. The shares are disjoint and together hold every entry once.
    """
    if shard is None:
        return list(items)
    k, n = shard
    return [x for i, x in enumerate(items) if i % n == k - 1]


# ------------------------------------------------------------------------------------------ running

@dataclass(frozen=True)
class CheckedUnit:
    """One unit's verdicts plus what the store needs: the SHA-256 (hex) of the sweep file's bytes
    (None when not asked for or the file could not be read) and the evaluation time in seconds."""

    result: UnitResult
    sha256: str | None = None
    time_s: float = 0.0


def file_sha256(path: str | Path) -> str | None:
    """SHA-256 (hex) of a file's bytes, None when it cannot be read (or is not a regular file)."""
    from .spec import is_special_file

    if is_special_file(path):
        return None
    try:
        with open(path, "rb") as fh:
            return hashlib.file_digest(fh, "sha256").hexdigest()
    except (OSError, ValueError):
        return None


def _check_one(path: str, spec: Spec, hashes: bool) -> CheckedUnit:
    """Check one file; with ``hashes``, the SHA-256 of the very bytes that were checked (None when
    the file could not be read)."""
    t0 = time.perf_counter()
    if not hashes:
        return CheckedUnit(check_file(path, spec), None, time.perf_counter() - t0)
    h, read = hashlib.sha256(), []
    u = check_file(path, spec, on_bytes=lambda raw: (h.update(raw), read.append(True)))
    return CheckedUnit(u, h.hexdigest() if read else None, time.perf_counter() - t0)


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


def _work_chunk(paths: list[str], hashes: bool = False) -> list[CheckedUnit]:
    return [_check_one(p, _WORKER_SPEC, hashes) for p in paths]


def check_chunk(paths: list[str], spec: Spec, hashes: bool = False) -> list[CheckedUnit]:
    """Check a batch of files (the task a Dask worker runs)."""
    if len(paths) > LOT_READER_MIN_FILES:
        use_json_reader()
    return [_check_one(p, spec, hashes) for p in paths]


def default_jobs() -> int:
    """The number of worker processes by default: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


QUEUED_PER_WORKER = 4
"""Chunks kept queued for each worker process: enough that a worker never waits for this process
to hand it the next one (the hand-over needs this process's interpreter lock)."""


def _run_pool(paths: list[str], spec: Spec, jobs: int, tune: bool, hashes: bool,
              progress: Callable[[int], None] | None) -> list[CheckedUnit]:
    """Check ``paths`` with ``jobs`` processes: ``jobs - 1`` forked workers and this one, in
    chunks. Each worker keeps :data:`QUEUED_PER_WORKER` chunks queued; this process takes the next
    chunk itself whenever the queues are full, and at the end takes back the queued chunks no
    worker has started (so no process idles while another has a backlog). Input order is kept."""
    import multiprocessing as mp
    from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

    ctx = mp.get_context("fork") if "fork" in mp.get_all_start_methods() else None
    jobs = min(jobs, len(paths), MAX_JOBS_PER_CORE * default_jobs())
    workers = max(1, jobs - 1)
    chunk = max(1, min(32, math.ceil(len(paths) / (jobs * 16))))
    ranges = [(k, min(k + chunk, len(paths))) for k in range(0, len(paths), chunk)]
    parts: list[list[CheckedUnit] | None] = [None] * len(ranges)
    pool = ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_init_worker, initargs=(spec, tune))
    pending: dict = {}

    def collect(futures) -> None:
        for fut in futures:
            parts[pending.pop(fut)] = part = fut.result()
            if progress:
                progress(len(part))

    def here(i: int) -> None:  # a chunk checked by this process
        a, b = ranges[i]
        parts[i] = [_check_one(p, spec, hashes) for p in paths[a:b]]
        if progress:
            progress(b - a)

    try:
        nxt = 0
        while nxt < len(ranges):
            while nxt < len(ranges) and len(pending) < QUEUED_PER_WORKER * workers:
                a, b = ranges[nxt]
                pending[pool.submit(_work_chunk, paths[a:b], hashes)] = nxt
                nxt += 1
            collect([f for f in pending if f.done()])
            if nxt < len(ranges):
                here(nxt)
                nxt += 1
        for fut in sorted(pending, key=pending.get, reverse=True):  # take back what no worker started
            if fut.cancel():
                here(pending.pop(fut))
        while pending:
            collect(wait(pending, return_when=FIRST_COMPLETED).done)
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
    return [u for part in parts for u in part]


def _run_local(paths: list[str], spec: Spec, jobs: int, tune: bool, hashes: bool,
               progress: Callable[[int], None] | None) -> list[CheckedUnit]:
    """In-process first; hand the rest to worker processes only when it is worth it (see
    :data:`POOL_MIN_S`)."""
    out: list[CheckedUnit] = []
    t1 = 0.0
    k = 0
    sample = max(2, min(IN_PROCESS_MAX, SAMPLE_FILES))
    while k < len(paths):
        out.append(_check_one(paths[k], spec, hashes))
        k += 1
        if k == 1:
            t1 = time.perf_counter()  # the first file pays one-time costs (lazy imports): not counted
        if progress:
            progress(1)
        if jobs > 1 and len(paths) > IN_PROCESS_MAX and k >= sample and k < len(paths):
            if (time.perf_counter() - t1) / (k - 1) * (len(paths) - k) > POOL_MIN_S:
                break
    if k < len(paths):
        out.extend(_run_pool(paths[k:], spec, jobs, tune, hashes, progress))
    return out


def _run_dask(paths: list[str], spec: Spec, address: str, hashes: bool, batch_size: int | None,
              progress: Callable[[int], None] | None) -> list[CheckedUnit]:
    """Evaluate on an existing Dask distributed cluster, ``batch_size`` files per task (default:
    about four tasks per worker thread, 8 to 1000 files each). The workers must see the files
    under the same paths (a shared file system, or absolute paths on identical mounts)."""
    try:
        from distributed import Client
    except ImportError:
        raise UsageError("needs the optional Dask extra", parameter="scheduler", value=address,
                         expected="pip install 'matchtool[dask]'") from None
    try:
        client = Client(address, timeout="20s", set_as_default=False)
    except (OSError, TimeoutError, ValueError, TypeError) as exc:
        raise InputError(f"cannot reach the Dask scheduler ({type(exc).__name__})", parameter="scheduler",
                         value=address, expected="the address of a running dask scheduler, e.g. tcp://host:8786") from None
    try:
        threads = sum(w.get("nthreads", 1) for w in client.scheduler_info().get("workers", {}).values()) or 1
        size = batch_size or max(8, min(1000, math.ceil(len(paths) / (4 * threads))))
        spec_f = client.scatter(spec, broadcast=True)
        futures = client.map(check_chunk, [paths[k:k + size] for k in range(0, len(paths), size)],
                             spec=spec_f, hashes=hashes, pure=False)
        out: list[CheckedUnit] = []
        for fut in futures:
            part = fut.result()
            out.extend(part)
            if progress:
                progress(len(part))
        return out
    finally:
        client.close()


def run_units(inputs: Iterable[Input | str], spec: Spec, jobs: int | None = None,
              progress: Callable[[int], None] | None = None, fast_malloc: bool = False, hashes: bool = False,
              scheduler: str | None = None, batch_size: int | None = None) -> list[CheckedUnit]:
    """Evaluate every input against ``spec``; one CheckedUnit per input, in input order.

    ``jobs`` None means :func:`default_jobs` (at most :data:`MAX_JOBS_PER_CORE` per core are used);
    ``scheduler`` runs on that Dask cluster instead (``jobs`` is then ignored); ``progress(n)`` is
    called after each ``n`` files; ``hashes`` computes each file's SHA-256; ``fast_malloc`` calls
    :func:`tune_malloc` (in this process and the workers) for a large lot. Unreadable files give
    results with ``error`` set; they never stop the others. Ctrl-C stops the workers and
    propagates KeyboardInterrupt.
    """
    items = [i if isinstance(i, Input) else Input(str(i)) for i in inputs]
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1:
        raise UsageError("must be at least 1", parameter="jobs", value=jobs, expected="a number of processes >= 1")
    todo = [i.path for i in items if i.error is None]
    tune = fast_malloc and len(todo) > 16
    if tune:
        tune_malloc()
    if len(todo) > LOT_READER_MIN_FILES:
        use_json_reader()  # paid back after a few dozen files (see touchstone.numbers)
    if scheduler:
        done = _run_dask(todo, spec, scheduler, hashes, batch_size, progress) if todo else []
    else:
        done = _run_local(todo, spec, jobs, tune, hashes, progress)
    it_res = iter(done)
    out = []
    for it in items:
        if it.error is not None:
            out.append(CheckedUnit(UnitResult(file=it.path, passed=False, error=it.error)))
            if progress and not scheduler:
                progress(1)
        else:
            out.append(next(it_res))
    return out


def run_batch(inputs: Iterable[Input | str], spec: Spec, jobs: int | None = None,
              progress: Callable[[int], None] | None = None, fast_malloc: bool = False) -> list[UnitResult]:
    """Like :func:`run_units`, returning the UnitResults only."""
    return [c.result for c in run_units(inputs, spec, jobs, progress, fast_malloc)]


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


BY_REQUIREMENT = "requirement"
"""``WorstUnit.ranked_by`` of an entry that is the worst unit of its requirement (the most negative
margin in that requirement's own unit)."""
BY_RELATIVE = "relative_margin"
"""``WorstUnit.ranked_by`` of an entry ranked across requirements of different kinds by
:func:`relative_margin` (margin over the limit's scale)."""


@dataclass(frozen=True)
class WorstUnit:
    """A unit and one requirement: ``margin_db`` (dB) or ``margin_hz`` (Hz) in that requirement's
    own unit, None when it could not be evaluated; ``relative_margin`` is the margin over the
    limit's scale (see :func:`relative_margin`). ``ranked_by`` says why it is listed:
    :data:`BY_REQUIREMENT` (the unit that misses ``requirement`` by most) or :data:`BY_RELATIVE`
    (one of the other units, ranked by relative margin; ``requirement`` is the one it misses most,
    or for a passing unit the one closest to failing)."""

    file: str
    requirement: str
    margin_db: float | None
    passed: bool
    margin_hz: float | None = None
    relative_margin: float | None = None
    ranked_by: str = BY_RELATIVE
    margin_ecc: float | None = None


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


RL_KEYS = ("min_return_loss_db", "max_vswr", "max_s11_db")


def limit_scale(r: RequirementResult) -> float | None:
    """The size of a requirement's limit that margins are compared against: the limit as return
    loss in dB for the three reflection keys, the limit in dB for mismatch loss and golden-unit
    deviation, half the window's width in Hz for the resonance. None when it is not positive."""
    if r.key == "resonance":
        s = (r.f_high_hz - r.f_low_hz) / 2
    elif r.key in RL_KEYS:
        if r.worst_return_loss_db is None or r.margin_db is None:
            from .reflection import return_loss_from_vswr

            if r.limit is None:
                return None
            s = {"min_return_loss_db": r.limit, "max_s11_db": -r.limit}.get(r.key)
            if s is None:
                s = float(return_loss_from_vswr(r.limit))
        else:
            s = r.worst_return_loss_db - r.margin_db
    else:
        s = r.limit if r.limit is not None else 0.0
    return float(s) if s is not None and math.isfinite(s) and s > 0 else None


def relative_margin(r: RequirementResult) -> float | None:
    """A requirement's margin over its :func:`limit_scale` (dimensionless; negative = failing), so
    that misses of different kinds compare: 8 dB return loss against a 10 dB limit is -0.2, a best
    match 2 MHz outside a 20 MHz wide window is -0.2. None when it could not be evaluated; a
    limit with no positive scale gives the margin itself."""
    m = own_margin(r)
    if m is None or not math.isfinite(m):
        return None if m is None else (-math.inf if m < 0 else math.inf)
    s = limit_scale(r)
    return m / s if s else m


def _worst_of(u: UnitResult) -> tuple[RequirementResult | None, float]:
    """The requirement a unit misses most (failing ones first; smallest relative margin; one that
    could not be evaluated counts after every evaluated failure) and its relative margin."""
    fails = [r for r in u.requirements if not r.passed]
    pool = fails or list(u.requirements)
    best, key = None, (2, math.inf)
    for r in pool:
        rel = relative_margin(r)
        k = (1, 0.0) if rel is None else (0, rel)
        if best is None or k < key:
            best, key = r, k
    return best, (key[1] if key[0] == 0 else math.nan)


def own_margin(r: RequirementResult) -> float | None:
    """A requirement's margin in its own unit: Hz for the resonance window, ECC for an ECC limit,
    dB for the others (positive when passing; None when not evaluated)."""
    if r.key == "resonance":
        return r.margin_hz
    if r.margin_db is None and r.margin_ecc is not None:
        return r.margin_ecc
    return r.margin_db


def _entry(u: UnitResult, r: RequirementResult | None, ranked_by: str = BY_RELATIVE) -> WorstUnit:
    if r is None:
        return WorstUnit(u.file, "", None, u.passed, ranked_by=ranked_by)
    return WorstUnit(u.file, r.name, r.margin_db, u.passed, r.margin_hz, relative_margin(r), ranked_by, r.margin_ecc)


def worst_units(results: list[UnitResult], n_worst: int = 5) -> tuple[WorstUnit, ...]:
    """The units that miss the spec by most, worst first.

    Failing units: first, for each requirement that some unit fails (in spec order: their place in
    the units' requirement lists), the unit that misses it by most in that requirement's own unit
    (dB, MHz for the resonance window, ECC), with its margin for that requirement
    (``ranked_by`` :data:`BY_REQUIREMENT`); one unit may be listed under several requirements. So
    the worst miss of every requirement is always shown with its own margin (a near-open unit is
    never crowded out by many small misses of another kind). Then other failing units, ranked by
    :func:`relative_margin` across kinds (``ranked_by`` :data:`BY_RELATIVE`, each with the
    requirement it misses most), until ``n_worst`` different units are listed. A requirement that
    could not be evaluated (band not covered) ranks after every evaluated miss. A lot where every
    unit passes lists the ``n_worst`` units closest to failing (smallest relative margin). Ties go
    to the unit that fails more requirements, then to the file name in code-point order (not the
    input order, so a store of shards ranks alike).
    """
    ok = [u for u in results if u.error is None]
    failing = [u for u in ok if not u.passed]
    if not failing:
        ranked = sorted(((_worst_of(u)[1], n) for n, u in enumerate(ok)),
                        key=lambda t: (math.isnan(t[0]), t[0], ok[t[1]].file, t[1]))
        return tuple(_entry(ok[n], _worst_of(ok[n])[0]) for _, n in ranked[:n_worst])
    order: dict[str, int] = {}
    for u in ok:
        for k, r in enumerate(u.requirements):
            order[r.name] = min(order.get(r.name, k), k)
    names = sorted({r.name for u in failing for r in u.requirements if not r.passed}, key=lambda n: (order[n], n))
    chosen: list[WorstUnit] = []
    taken: set[int] = set()
    for name in names:
        best, best_k = None, None
        for n, u in enumerate(failing):
            for r in u.requirements:
                if r.name == name and not r.passed:
                    m = own_margin(r)
                    k = (1, 0.0, u.file, n) if m is None else (0, m, u.file, n)
                    if best_k is None or k < best_k:
                        best, best_k = (n, r), k
        if best is not None:
            taken.add(best[0])
            chosen.append(_entry(failing[best[0]], best[1], BY_REQUIREMENT))
    rest = []
    for n, u in enumerate(failing):
        if n not in taken:
            r, rel = _worst_of(u)
            rest.append(((math.isnan(rel), 0.0 if math.isnan(rel) else rel, -sum(not q.passed for q in u.requirements),
                          u.file, n), n, r))
    rest.sort(key=lambda t: t[0])
    for _, n, r in rest[:max(0, n_worst - len(taken))]:
        chosen.append(_entry(failing[n], r))
    return tuple(chosen)


def worst_of_requirement(summary: LotSummary, name: str) -> WorstUnit | None:
    """The worst unit of requirement ``name`` in a lot summary (None when no unit fails it)."""
    return next((w for w in summary.worst if w.ranked_by == BY_REQUIREMENT and w.requirement == name), None)


def summarize_lot(results: list[UnitResult], n_worst: int = 5) -> LotSummary:
    """The lot summary of ``results`` (see :class:`LotSummary` and :func:`worst_units`)."""
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
    spread = (float(f_best.min()), median(f_best), float(f_best.max())) if f_best.size else (None,) * 3
    passed = sum(1 for u in results if u.passed)
    errors = len(results) - len(ok)
    return LotSummary(units=len(results), passed=passed, failed=len(results) - passed - errors, errors=errors,
                      yields=tuple(RequirementYield(n, *counts[n]) for n in names),
                      resonance_min_hz=spread[0], resonance_median_hz=spread[1], resonance_max_hz=spread[2],
                      worst=worst_units(results, n_worst))


# ------------------------------------------------------------------------------------ the one entry

@dataclass(frozen=True)
class LotResult:
    """A checked lot: the spec, one :class:`CheckedUnit` per input (input order, after the shard
    is taken), the lot summary, ``shard`` (k, n) or None, ``inputs_total`` the number of inputs
    before the shard was taken, ``started_at`` (UTC, ISO 8601) and ``elapsed_s``."""

    spec: Spec
    units: tuple[CheckedUnit, ...]
    summary: LotSummary
    shard: tuple[int, int] | None = None
    inputs_total: int = 0
    started_at: str = ""
    elapsed_s: float = 0.0
    warnings: tuple[str, ...] = field(default=())

    @property
    def results(self) -> list[UnitResult]:
        return [c.result for c in self.units]

    @property
    def passed(self) -> bool:
        return all(c.result.passed for c in self.units)

    @property
    def errors(self) -> list[str]:
        return [c.result.error for c in self.units if c.result.error is not None]


def check_lot(inputs: Iterable[str | Path | Input], spec: Spec, jobs: int | None = None,
              shard: tuple[int, int] | str | None = None, scheduler: str | None = None,
              progress: Callable[[int], None] | None = None, hashes: bool = False, fast_malloc: bool = False,
              batch_size: int | None = None, n_worst: int = 5) -> LotResult:
    """Check a lot: expand ``inputs`` (see :func:`expand_inputs`), keep ``shard`` (k, n) or "K/N",
    evaluate locally with ``jobs`` processes or on the Dask cluster at ``scheduler``, summarise.

    Raises UsageError when nothing is left to check.
    """
    from datetime import UTC, datetime

    if isinstance(shard, str):
        shard = parse_shard(shard)
    given = list(inputs)
    items = given if all(isinstance(i, Input) for i in given) else expand_inputs(
        [i.path if isinstance(i, Input) else i for i in given])
    total = len(items)
    if not items:
        raise UsageError("no sweep to check", expected="files, glob patterns or directories of Touchstone files")
    mine = select_shard(items, shard)
    started = datetime.now(UTC)
    t0 = time.perf_counter()
    units = run_units(mine, spec, jobs, progress=progress, fast_malloc=fast_malloc, hashes=hashes,
                      scheduler=scheduler, batch_size=batch_size)
    elapsed = time.perf_counter() - t0
    results = [c.result for c in units]
    warnings = tuple(spec.warnings) + tuple(w for u in results for w in u.warnings)
    if shard is not None and not mine:
        warnings += (f"shard {shard[0]}/{shard[1]} holds no file (the lot has {total} inputs)",)
    return LotResult(spec=spec, units=tuple(units), summary=summarize_lot(results, n_worst), shard=shard,
                     inputs_total=total, started_at=started.strftime("%Y-%m-%dT%H:%M:%S"), elapsed_s=elapsed,
                     warnings=warnings)

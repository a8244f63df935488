#!/usr/bin/env python3
"""matchtool benchmarks: each case timed against a baseline measured in the same run.

    python3 tests/benchmarks/run.py            # full sizes (a few minutes on 2 cores)
    python3 tests/benchmarks/run.py --quick    # tiny sizes, seconds (what the smoke test runs)
    python3 tests/benchmarks/run.py --only P2,P5 --reps 9 --json results.json

Cases (goals from the benchmarks issue):

  P1  ``matchtool check`` of 1,000 sweeps x 1,601 points against a two-band spec, --jobs 1 and
      --jobs 2, against one process looping ``skrf.Network(path)`` over the same files.
      Goal: <= 0.35x (one job), <= 0.25x (two jobs, on an idle machine; first round: 1.2x and
      0.7x). A third row: --jobs 2 against --jobs 1 on a small lot of 150 files, goal <= 1.0x
      (two jobs are never slower than one: a small lot stays in-process).
  P2  cold ``python -m matchtool inspect FILE --json`` against
      ``python -c "import skrf; skrf.Network(FILE)"``. Goal: <= 1.1x (first round: 1.3x).
  P3  ``matchtool match FILE --band 902MHz:928MHz --series E24`` with part Q on a 1,601-point
      sweep (wall time of the command). Goal: < 1 s; the ratio to a bare scikit-rf read is shown.
  P4  the same with ``--tolerance 5 --trials 10000``: the time the 10,000 trials add to P3.
      Goal: < 2 s.
  P5  ``inspect`` of a 1,000,000-point sweep: wall time and peak memory (max RSS of the process)
      against scikit-rf's own read of the same file. Goal: <= 0.35x time, <= 0.6x memory (first
      round: 1.3x and 2x).
  P6  the Touchstone parser in-process: ``matchtool.sweep.parse_touchstone`` of a 100,000-row
      two-port RI file (about 14 MB of text, already in memory) against ``numpy.loadtxt`` of the
      same body (the numbers only, from an in-memory text stream), interleaved in one process,
      CPU time (process_time), median of the repetitions. Goal: >= 1.0x loadtxt's throughput,
      i.e. a time ratio <= 1.0.
  P7  ``matchtool match`` exhaustive search on a 1,601-point sweep: E24 L with part Q (goal <= 3x a
      cold scikit-rf read), E24 pi with every population of the three pads (<= 6x), and two bands at
      once against the single band (<= 1.5x).
  P8  cold ``matchtool locate FILE --velocity-factor 0.7 --loss-db-per-m 0.3 --gate 4.5m:6m
      --json`` on a 10,001-point harmonic sweep (an antenna 5 m down a cable with a connector
      echo), against ``python -c "import skrf; skrf.Network(FILE)"``. Goal: <= 1.5x.
  P9  ``matchtool coupling`` of a 4-port 1,601-point file with TARC at 1-degree phase steps,
      against the cold ``skrf.Network(FILE)`` read of the same file. Goal: <= 2x.
  P10 ``check`` of the P1 lot with ``--store`` (a fresh SQLite store each run) against the same
      check without a store. Goal: <= 1.2x.
  P11 ``history --json`` over a generated SQLite store of 1,000,000 unit rows (50 lots, two
      requirements each). Goal: < 2 s.
  P12 ``matchtool match FILE --band 902MHz:928MHz --network pi --parts LIB.toml`` over a generated
      library of 60 parts (30 C, 30 L; half measured 2-port files, half Q/SRF models) on a
      1,601-point sweep, with the library's tolerance yield, against the cold
      ``python -c "import skrf; skrf.Network(FILE)"``. Goal: <= 6x.

Every measurement is a fresh subprocess (so start-up is counted, as a user sees it); candidate
and baseline runs are interleaved, repeated, and the median is reported. Peak memory comes from
``os.wait4`` (the child's own ``ru_maxrss``). Subprocesses get a private ``PYTHONPYCACHEPREFIX``
and one untimed warm-up run, so compiled bytecode is cached as it is for an installed package.
Commands that do not exist yet (or lack an option) are reported as "not built yet", not as
failures. All data are generated here, deterministically, into a temporary directory.

Exit status: 0 when every case ran or was skipped as not built; 1 when a built command failed.
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import math
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from matchtool.sweep import touchstone_text  # noqa: E402

SEED = 20261201
PY = sys.executable
TREE = ROOT  # the checkout whose matchtool is benchmarked (--tree)

SPEC_TOML = """\
# two-band spec for the benchmark (synthetic)
[[band]]
name = "ISM 915"
f_low = "902 MHz"
f_high = "928 MHz"
min_return_loss_db = 10

[[band]]
name = "SRD 868"
f_low = "863 MHz"
f_high = "870 MHz"
max_vswr = 2.0
"""


LAUNCHER = """
import json, os, subprocess, sys, time
err, timeout, argv = sys.argv[1], float(sys.argv[2]), sys.argv[3:]
with open(err, "wb") as fh:
    t0 = time.perf_counter()
    p = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=fh)
    while True:
        pid, status, usage = os.wait4(p.pid, os.WNOHANG)
        if pid:
            break
        if time.perf_counter() - t0 > timeout:
            p.kill()
            pid, status, usage = os.wait4(p.pid, 0)
            break
        time.sleep(0.001)
    wall = time.perf_counter() - t0
print(json.dumps([wall, usage.ru_maxrss, os.waitstatus_to_exitcode(status), usage.ru_utime + usage.ru_stime]))
"""


@dataclass
class Sizes:
    p1_files: int
    points: int
    p5_points: int
    p6_rows: int
    trials: int
    reps_fast: int  # repetitions of sub-second cases
    reps_slow: int  # repetitions of multi-second cases
    p8_points: int = 10_001
    history_units: int = 1_000_000


FULL = Sizes(p1_files=1000, points=1601, p5_points=1_000_000, p6_rows=100_000, trials=10_000, reps_fast=11,
             reps_slow=3)
QUICK = Sizes(p1_files=12, points=201, p5_points=20_000, p6_rows=5_000, trials=200, reps_fast=2, reps_slow=1,
              p8_points=1001, history_units=2_000)


@dataclass
class Run:
    wall_s: float
    maxrss_kb: int
    code: int
    err: str
    cpu_s: float = 0.0  # user + system time of the command (and the children it waited for)


@dataclass
class Row:
    case: str
    what: str
    ours: float | None = None  # seconds (or MB for memory rows): median wall time
    base: float | None = None
    ours_cpu: float | None = None  # median CPU time (user + system), seconds
    base_cpu: float | None = None
    unit: str = "s"
    goal: str = ""
    goal_kind: str = "ratio"  # "ratio": ours/base <= limit; "abs": ours < limit
    limit: float | None = None
    status: str = ""
    note: str = ""
    samples: dict = field(default_factory=dict)

    @property
    def ratio(self) -> float | None:
        if self.ours is None or not self.base:
            return None
        return self.ours / self.base

    @property
    def cpu_ratio(self) -> float | None:
        if self.ours_cpu is None or not self.base_cpu:
            return None
        return self.ours_cpu / self.base_cpu

    def set_times(self, ours: list[Run], base: list[Run] | None, best: bool = False) -> None:
        """Medians of the runs; ``best``: their minima instead (for two commands that do the same
        work, where the question is whether one adds a cost: the fastest run of each is the one
        least disturbed by the machine; the timeit documentation gives the same advice)."""
        wall, cpu = (lambda rs: min(r.wall_s for r in rs), lambda rs: min(r.cpu_s for r in rs)) if best else \
            (median_wall, median_cpu)
        self.ours, self.ours_cpu = wall(ours), cpu(ours)
        self.samples["ours_wall_s"] = [round(x.wall_s, 4) for x in ours]
        if base:
            self.base, self.base_cpu = wall(base), cpu(base)
            self.samples["base_wall_s"] = [round(x.wall_s, 4) for x in base]

    def judge(self) -> None:
        if self.status:
            return
        value = self.ratio if self.goal_kind == "ratio" else self.ours
        if value is None or self.limit is None:
            self.status = "measured"
        elif self.goal_kind == "ratio":
            self.status = "met" if value <= self.limit else "NOT met"
        else:
            self.status = "met" if value < self.limit else "NOT met"


# ------------------------------------------------------------------------------------------
# data (a series-RLC antenna with shunt pad C, through a short lossy pigtail, a little noise)


def antenna_gamma(f_hz: np.ndarray, f_res_hz: float, rng: np.random.Generator) -> np.ndarray:
    """S11 of a 915 MHz-class PCB antenna model (ohms, henries, farads; 50-ohm reference)."""
    w = 2 * math.pi * f_hz
    l_h = 100e-9
    c_f = 1.0 / ((2 * math.pi * f_res_hz) ** 2 * l_h)
    z = 46.0 * (f_hz / 915e6) ** 2 + 3.0 + 1j * (w * l_h - 1.0 / (w * c_f))
    z = 1.0 / (1.0 / z + 1j * w * 0.35e-12) + 1j * w * 1.5e-9
    g = (z - 50.0) / (z + 50.0)
    g = g * np.exp(-2j * w / (0.7 * 299_792_458.0) * 0.05) * 10 ** (-0.075 * np.sqrt(f_hz / 1e9) / 20)
    sigma = 10 ** (-60 / 20) / math.sqrt(2)
    return g + sigma * (rng.standard_normal(f_hz.size) + 1j * rng.standard_normal(f_hz.size))


def write_sweep(path: Path, n_points: int, f_res_hz: float, rng: np.random.Generator,
                f_lo_hz: float = 700e6, f_hi_hz: float = 1.1e9) -> Path:
    f = np.linspace(f_lo_hz, f_hi_hz, n_points)
    path.write_text(touchstone_text(f, antenna_gamma(f, f_res_hz, rng), 50.0,
                                    ["synthetic benchmark sweep (tests/benchmarks/run.py)"]))
    return path


def write_lot(folder: Path, n_files: int, n_points: int) -> list[Path]:
    """A production lot: one file per unit, resonance spread +-1 % around 917 MHz."""
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng([SEED, 1])
    f_res = 917.5e6 * (1 + 0.01 * rng.uniform(-1, 1, n_files))
    return [write_sweep(folder / f"unit{k:04d}.s1p", n_points, fr, rng) for k, fr in enumerate(f_res)]


# ------------------------------------------------------------------------------------------
# running and timing


class Runner:
    def __init__(self, tmp: Path, verbose: bool = False) -> None:
        env = dict(os.environ)
        env.pop("PYTHONDONTWRITEBYTECODE", None)
        env["PYTHONPYCACHEPREFIX"] = str(tmp / "pycache")
        env["PYTHONPATH"] = str(TREE) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
        env.setdefault("MPLBACKEND", "Agg")
        self.env = env
        self.cwd = tmp
        self.verbose = verbose

    def once(self, argv: list[str], timeout_s: float = 300.0) -> Run:
        """Run ``argv`` once; wall time (s), its peak RSS (kB), exit code and stderr.

        The command is started by a small launcher process, not by this one: a child's
        ``ru_maxrss`` starts at the RSS of the process that forked it, and this one holds numpy.
        """
        errf = self.cwd / "last_stderr.txt"
        p = subprocess.run([PY, "-c", LAUNCHER, str(errf), str(timeout_s), *argv], capture_output=True, text=True,
                           env=self.env, cwd=self.cwd, timeout=timeout_s + 30)
        try:
            wall, rss_kb, code, cpu = json.loads(p.stdout.strip().splitlines()[-1])
        except (ValueError, IndexError):
            raise RuntimeError(f"benchmark launcher failed: {p.stderr.strip()[-300:]}") from None
        err = errf.read_text("utf-8", "replace")
        if self.verbose:
            print(f"  {wall:7.3f} s {rss_kb / 1024:7.1f} MB rc={code} {' '.join(argv)[:110]}", file=sys.stderr)
        return Run(float(wall), int(rss_kb), int(code), err, float(cpu))

    def compare(self, cands: dict[str, list[str]], reps: int, warm: bool = True) -> dict[str, list[Run]]:
        """Interleave the commands ``reps`` times (after one untimed warm-up of each)."""
        if warm:
            for argv in cands.values():
                self.once(argv)
        out: dict[str, list[Run]] = {k: [] for k in cands}
        for _ in range(reps):
            for k, argv in cands.items():
                out[k].append(self.once(argv))
        return out


def median_wall(runs: list[Run]) -> float:
    return statistics.median(r.wall_s for r in runs)


def median_cpu(runs: list[Run]) -> float:
    return statistics.median(r.cpu_s for r in runs)


def median_rss_mb(runs: list[Run]) -> float:
    return statistics.median(r.maxrss_kb for r in runs) / 1024.0


def failed(runs: list[Run], ok_codes: tuple[int, ...] = (0,)) -> str | None:
    for r in runs:
        if r.code not in ok_codes:
            lines = [ln for ln in r.err.splitlines() if ln.strip()]
            return f"exit {r.code}: {lines[-1][:150] if lines else 'no message'}"
    return None


def not_built(err: str) -> str | None:
    """Recognise 'this command or option does not exist yet' in a CLI's error line."""
    low = err.lower()
    for key in ("no such command", "no such option", "got unexpected extra argument"):
        if key in low:
            line = next((ln for ln in err.splitlines() if key in ln.lower()), err.strip())
            return line.strip()[:120]
    return None


def has_command(name: str) -> bool:
    """Whether the benchmarked checkout has ``matchtool/commands/<name>.py``."""
    if TREE == ROOT:
        return importlib.util.find_spec(f"matchtool.commands.{name}") is not None
    return (TREE / "matchtool" / "commands" / f"{name}.py").is_file()


def skrf_read(path: Path) -> list[str]:
    return [PY, "-c", f"import skrf; skrf.Network({str(path)!r})"]


def mt(*args: object) -> list[str]:
    return [PY, "-m", "matchtool", *map(str, args)]


# ------------------------------------------------------------------------------------------
# the cases


def p1(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    small = min(150, sz.p1_files)
    rows = [Row("P1", f"check {sz.p1_files} x {sz.points} pts, --jobs 1", goal="<= 0.35x", limit=0.35),
            Row("P1", f"check {sz.p1_files} x {sz.points} pts, --jobs 2", goal="<= 0.25x", limit=0.25),
            # "never slower than one job": equal within the noise of repeated runs (5 %)
            Row("P1", f"check {small} files: --jobs 2 vs --jobs 1", goal="<= 1.0x+5%", limit=1.05)]
    if not has_command("check"):
        for r in rows:
            r.status = "not built yet"
        return rows
    files = write_lot(tmp / "lot", sz.p1_files, sz.points)
    spec = tmp / "spec.toml"
    spec.write_text(SPEC_TOML)
    listing = tmp / "lot_files.txt"
    listing.write_text("\n".join(map(str, files)))
    loop = [PY, "-c", "import sys, skrf\nfor p in open(sys.argv[1]).read().split('\\n'): skrf.Network(p)",
            str(listing)]
    cands = {"base": loop,
             "j1": mt("check", *files, "--spec", spec, "--json", "--jobs", 1),
             "j2": mt("check", *files, "--spec", spec, "--json", "--jobs", 2),
             "s1": mt("check", *files[:small], "--spec", spec, "--json", "--jobs", 1),
             "s2": mt("check", *files[:small], "--spec", spec, "--json", "--jobs", 2)}
    probe = run.once(cands["j1"])
    nb = not_built(probe.err) if probe.code == 2 else None
    if nb or probe.code not in (0, 1):
        for r in rows:
            r.status = "not built yet" if nb else "error"
            r.note = nb or failed([probe], (0, 1)) or ""
        return rows
    res = run.compare({k: cands[k] for k in ("base", "j1", "j2")}, sz.reps_slow)
    # the small lot takes a third of a second: more repetitions, so that the 5 % judged is not noise
    small_reps = 2 * sz.reps_fast - 1
    res.update(run.compare({k: cands[k] for k in ("s1", "s2")}, small_reps))
    for r, key, base in zip(rows, ("j1", "j2", "s2"), ("base", "base", "s1"), strict=True):
        bad = failed(res[key], (0, 1)) or failed(res[base], (0, 1) if base == "s1" else (0,))
        if bad:
            r.status, r.note = "error", bad
            continue
        r.set_times(res[key], res[base], best=key == "s2")
    rows[0].note = f"baseline: one process, skrf.Network over the {sz.p1_files} files"
    rows[2].note = (f"baseline: the same {small} files with --jobs 1; fastest of {small_reps} interleaved runs "
                    "each (both stay in one process: is --jobs 2 adding a cost?)")
    return rows


def p2(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    path = write_sweep(tmp / "p2_ant.s1p", sz.points, 917.5e6, np.random.default_rng([SEED, 2]))
    row = Row("P2", f"cold inspect --json, {sz.points} pts", goal="<= 1.1x", limit=1.1)
    res = run.compare({"base": skrf_read(path), "ours": mt("inspect", path, "--json"),
                       "python": [PY, "-c", "pass"], "numpy": [PY, "-c", "import numpy"]}, sz.reps_fast)
    bad = failed(res["ours"]) or failed(res["base"])
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], res["base"])
    row.note = (f"bare python {median_wall(res['python']):.3f} s, python+numpy {median_wall(res['numpy']):.3f} s; "
                f"peak RSS {median_rss_mb(res['ours']):.0f} vs {median_rss_mb(res['base']):.0f} MB")
    return [row]


def _match_args(path: Path) -> list[object]:
    return ["match", path, "--band", "902MHz:928MHz", "--series", "E24", "--q-inductor", 40,
            "--q-capacitor", 300, "--json"]


def p3_p4(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    r3 = Row("P3", f"match --band E24 + part Q, {sz.points} pts", goal="< 1 s", goal_kind="abs", limit=1.0)
    r4 = Row("P4", f"{sz.trials} tolerance trials, {sz.points} pts", goal="< 2 s" if sz.trials >= 10_000 else "-",
             goal_kind="abs", limit=2.0 if sz.trials >= 10_000 else None)
    if not has_command("match"):
        r3.status = r4.status = "not built yet"
        return [r3, r4]
    # r1-like: resonance near 870 MHz, misses 902-928 MHz, so the match has work to do
    path = write_sweep(tmp / "p3_r1.s1p", sz.points, 875e6, np.random.default_rng([SEED, 3]))
    m3 = mt(*_match_args(path))
    probe = run.once(m3)
    if probe.code not in (0, 1):
        r3.status = "not built yet" if not_built(probe.err) else "error"
        r3.note = not_built(probe.err) or failed([probe], (0, 1)) or ""
        r4.status, r4.note = r3.status, "needs P3"
        return [r3, r4]
    cands = {"base": skrf_read(path), "m3": m3}
    m4 = None
    for tol in ("5", "5%"):  # the option takes a percentage; accept either spelling
        argv = mt(*_match_args(path), "--tolerance", tol, "--trials", sz.trials)
        pr = run.once(argv)
        if pr.code in (0, 1):
            m4 = argv
            break
    if m4 is None:
        r4.status = "not built yet" if not_built(pr.err) else "error"
        r4.note = not_built(pr.err) or failed([pr], (0, 1)) or ""
    else:
        cands["m4"] = m4
    res = run.compare(cands, min(sz.reps_fast, 5), warm=False)
    bad = failed(res["m3"], (0, 1))
    if bad:
        r3.status, r3.note = "error", bad
    else:
        r3.set_times(res["m3"], res["base"])
        r3.note = "wall time of the command incl. start-up; ratio to a bare skrf read"
    if m4 is not None:
        bad = failed(res["m4"], (0, 1))
        if bad:
            r4.status, r4.note = "error", bad
        elif r3.ours is not None:
            total = median_wall(res["m4"])
            r4.ours = max(total - r3.ours, 0.0)
            r4.ours_cpu = max(median_cpu(res["m4"]) - (r3.ours_cpu or 0.0), 0.0)
            r4.goal_kind = "abs"
            r4.note = f"time added to P3 by the trials; whole command {total:.3f} s"
    return [r3, r4]


def p5(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    path = write_sweep(tmp / "p5_big.s1p", sz.p5_points, 917.5e6, np.random.default_rng([SEED, 5]), 100e6, 6e9)
    mb = path.stat().st_size / 1e6
    rt = Row("P5", f"inspect {sz.p5_points:,} pts ({mb:.0f} MB): time", goal="<= 0.35x", limit=0.35)
    rm = Row("P5", f"inspect {sz.p5_points:,} pts: peak memory", unit="MB", goal="<= 0.6x", limit=0.6)
    reps = sz.reps_slow
    res = run.compare({"base": skrf_read(path), "ours": mt("inspect", path, "--json")}, reps)
    bad = failed(res["ours"]) or failed(res["base"])
    if bad:
        rt.status = rm.status = "error"
        rt.note = bad
        return [rt, rm]
    rt.set_times(res["ours"], res["base"])
    rm.ours, rm.base = median_rss_mb(res["ours"]), median_rss_mb(res["base"])
    rm.note = "max RSS of each process (os.wait4), includes the interpreter and imports"
    return [rt, rm]


def p7(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    """The exhaustive matching search: E24 L with part Q, E24 pi (every population of the three
    pads), and two bands at once against one band."""
    rl = Row("P7", f"match E24 L search + part Q, {sz.points} pts", goal="<= 3x", limit=3.0)
    rp = Row("P7", f"match E24 pi search (all populations), {sz.points} pts", goal="<= 6x", limit=6.0)
    rb = Row("P7", "match two bands at once vs one band", goal="<= 1.5x", limit=1.5)
    rows = [rl, rp, rb]
    if not has_command("match"):
        for r in rows:
            r.status = "not built yet"
        return rows
    path = write_sweep(tmp / "p6_r1.s1p", sz.points, 875e6, np.random.default_rng([SEED, 6]))
    q = ["--q-inductor", 40, "--q-capacitor", 300, "--series", "E24", "--json"]
    cands = {"base": skrf_read(path),
             "l": mt("match", path, "--band", "902MHz:928MHz", *q),
             "pi": mt("match", path, "--band", "902MHz:928MHz", "--network", "pi", *q),
             "two": mt("match", path, "--band", "863MHz:870MHz", "--band", "902MHz:928MHz", *q)}
    probe = run.once(cands["pi"])
    if probe.code not in (0, 1):
        nb = not_built(probe.err)
        for r in rows:
            r.status = "not built yet" if nb else "error"
            r.note = nb or failed([probe], (0, 1)) or ""
        return rows
    res = run.compare(cands, min(sz.reps_fast, 5), warm=False)
    for r, key, base in ((rl, "l", "base"), (rp, "pi", "base"), (rb, "two", "l")):
        bad = failed(res[key], (0, 1)) or failed(res[base], (0, 1))
        if bad:
            r.status, r.note = "error", bad
            continue
        r.set_times(res[key], res[base])
    rl.note = "ratio to a cold skrf read of the same file"
    rb.note = "baseline: the single-band (902-928 MHz) E24 L run with part Q"
    return rows


def p8(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    """Cold locate with a gate on a 10,001-point harmonic sweep."""
    row = Row("P8", f"cold locate --gate --json, {sz.p8_points:,} pts", goal="<= 1.5x", limit=1.5)
    if not has_command("locate"):
        row.status = "not built yet"
        return [row]
    # a harmonic grid (k x 300 kHz): the antenna model 5 m down a VF 0.7 cable with 0.3 dB/m at 1 GHz,
    # and a small connector echo at 0.5 m (|Gamma| 0.05)
    f = np.arange(1, sz.p8_points + 1) * (3e9 / sz.p8_points)
    rng = np.random.default_rng([SEED, 6])
    beta = 2 * math.pi * f / (0.7 * 299_792_458.0)
    two_way = 10 ** (-2 * 5.0 * 0.3 * np.sqrt(f / 1e9) / 20)
    g = 0.05 * np.exp(-2j * beta * 0.5) + antenna_gamma(f, 917.5e6, rng) * np.exp(-2j * beta * 5.0) * two_way
    path = tmp / "p6_feed.s1p"
    path.write_text(touchstone_text(f, g, 50.0, ["synthetic benchmark sweep (tests/benchmarks/run.py)"]))
    ours = mt("locate", path, "--velocity-factor", 0.7, "--loss-db-per-m", 0.3, "--gate", "4.5m:6m", "--json")
    res = run.compare({"base": skrf_read(path), "ours": ours}, sz.reps_fast)
    bad = failed(res["ours"]) or failed(res["base"])
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], res["base"])
    row.note = f"peak RSS {median_rss_mb(res['ours']):.0f} vs {median_rss_mb(res['base']):.0f} MB"
    return [row]


P6_SCRIPT = """
import io, json, statistics, sys, time
import numpy as np
from matchtool.sweep import parse_touchstone, touchstone_text
rows, reps, seed = int(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3])
rng = np.random.default_rng(seed)
f = np.linspace(100e6, 6e9, rows)
s = rng.uniform(-0.6, 0.6, (rows, 2, 2)) + 1j * rng.uniform(-0.6, 0.6, (rows, 2, 2))
text = touchstone_text(f, s, 50.0)
body = text.split("\\n", 1)[1]
ts = parse_touchstone(text, "p6.s2p", 2)
ref = np.loadtxt(io.StringIO(body))
assert np.array_equal(ts.f_hz, ref[:, 0]) and np.array_equal(ts.s[:, 1, 0].real, ref[:, 3])
ours, base = [], []
for _ in range(reps):
    t0 = time.process_time(); parse_touchstone(text, "p6.s2p", 2); t1 = time.process_time()
    np.loadtxt(io.StringIO(body)); t2 = time.process_time()
    ours.append(t1 - t0); base.append(t2 - t1)
print(json.dumps({"ours": statistics.median(ours), "base": statistics.median(base), "mb": len(text) / 1e6}))
"""


def p6(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    row = Row("P6", f"parse {sz.p6_rows:,} two-port RI rows in-process", goal="<= 1.0x", limit=1.0)
    reps = max(3, sz.reps_fast)
    p = subprocess.run([PY, "-c", P6_SCRIPT, str(sz.p6_rows), str(reps), str(SEED)], capture_output=True,
                       text=True, env=run.env, cwd=run.cwd, timeout=600)
    try:
        got = json.loads(p.stdout.strip().splitlines()[-1])
    except (ValueError, IndexError):
        row.status = "error"
        row.note = (p.stderr.strip().splitlines() or ["no output"])[-1][:150]
        return [row]
    row.ours = row.ours_cpu = got["ours"]
    row.base = row.base_cpu = got["base"]
    row.note = (f"{got['mb']:.1f} MB of text; CPU time in one process, median of {reps}; baseline "
                "numpy.loadtxt of the same body; ratio = time ratio (<= 1.0x: at least loadtxt's throughput)")
    return [row]


def write_four_port(path: Path, n_points: int, rng: np.random.Generator) -> Path:
    """A four-antenna board (2.4 GHz class): series RLC antennas with a mutual impedance between each
    pair (falling with their distance in the row), S from scikit-rf's z2s, a little noise."""
    import skrf

    f = np.linspace(2.2e9, 2.7e9, n_points)
    w = 2 * math.pi * f
    z = np.zeros((n_points, 4, 4), dtype=complex)
    for k, f0 in enumerate((2.43e9, 2.44e9, 2.45e9, 2.47e9)):
        c_f = 1.0 / ((2 * math.pi * f0) ** 2 * 8e-9)
        z[:, k, k] = 45.0 + 1j * (w * 8e-9 - 1.0 / (w * c_f))
    for a in range(4):
        for b in range(a + 1, 4):
            z[:, a, b] = z[:, b, a] = (8 + 20j) / (b - a)
    s = skrf.network.z2s(z, np.full(4, 50.0))
    s = s + 1e-3 * (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape))
    path.write_text(touchstone_text(f, s, 50.0, ["synthetic benchmark 4-port (tests/benchmarks/run.py)"]))
    return path


def p9(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    row = Row("P9", f"coupling 4-port {sz.points} pts, TARC at 1-degree steps", goal="<= 2x", limit=2.0)
    if not has_command("coupling"):
        row.status = "not built yet"
        return [row]
    path = write_four_port(tmp / "p9_board.s4p", sz.points, np.random.default_rng([SEED, 6]))
    res = run.compare({"base": skrf_read(path), "ours": mt("coupling", path, "--json", "--phase-step", 1)},
                      sz.reps_fast)
    bad = failed(res["ours"]) or failed(res["base"])
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], res["base"])
    row.note = ("cold scikit-rf read of the same file as baseline; every pair's isolation and ECC, TARC of the "
                "four ports (grid widened to 36 degrees for four ports, then polished)")
    return [row]


def p10(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    """check of the P1 lot with --store (a fresh SQLite store each run) against the same check
    without a store."""
    row = Row("P10", f"check {sz.p1_files} files --store (SQLite)", goal="<= 1.2x", limit=1.2)
    if not has_command("history"):
        row.status = "not built yet"
        return [row]
    lot = tmp / "lot"
    files = sorted(lot.glob("*.s1p")) if lot.is_dir() else write_lot(lot, sz.p1_files, sz.points)
    spec = tmp / "spec.toml"
    spec.write_text(SPEC_TOML)
    db = tmp / "p6.db"
    args = " ".join(f"'{a}'" for a in map(str, mt("check", lot, "--spec", spec, "--json", "--jobs", 1)))
    clean = f"rm -f '{db}' '{db}-wal' '{db}-shm'"
    cands = {"base": ["sh", "-c", f"{clean} && exec {args}"],
             "ours": ["sh", "-c", f"{clean} && exec {args} --store '{db}' --lot bench"]}
    res = run.compare(cands, sz.reps_slow)
    bad = failed(res["ours"], (0, 1)) or failed(res["base"], (0, 1))
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], res["base"])
    row.note = f"baseline: the same check of the {len(files)} files without --store (both --jobs 1)"
    return [row]


def make_history_store(path: Path, n_units: int, n_lots: int = 50) -> None:
    """A results store of ``n_units`` generated units (two requirements each: a minimum return loss
    and the resonance window) in ``n_lots`` lots, written through matchtool's own store writer one
    lot at a time, as ``check --store`` would (values drawn from normal distributions; no sweeps
    are evaluated: what is measured is the reading)."""
    import datetime as dt
    import hashlib

    sys.path.insert(0, str(TREE))
    from matchtool.batch import CheckedUnit
    from matchtool.spec import RequirementResult, UnitResult, parse_spec
    from matchtool.store import Store

    spec_path = path.with_suffix(".toml")
    spec_path.write_text('name = "bench_spec"\n[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\n'
                         'min_return_loss_db = 10\n[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n')
    spec = parse_spec(spec_path.read_text(), spec_path)
    rng = np.random.default_rng([SEED, 7])
    per_lot = max(1, n_units // n_lots)
    t0 = dt.datetime(2026, 1, 1)
    with Store(str(path)) as st:
        for lot in range(n_lots):
            rl = rng.normal(14.0, 1.6, per_lot)
            fr = rng.normal(915e6, 3e6, per_lot)
            units = []
            for k in range(per_lot):
                r1 = RequirementResult(name="ism", key="min_return_loss_db", passed=bool(rl[k] >= 10), limit=10.0,
                                       worst=float(rl[k]), worst_f_hz=902e6, margin_db=float(rl[k] - 10),
                                       f_low_hz=902e6, f_high_hz=928e6, worst_return_loss_db=float(rl[k]))
                m = float(min(fr[k] - 905e6, 925e6 - fr[k]))
                r2 = RequirementResult(name="resonance", key="resonance", passed=m >= 0, limit=None, worst=float(fr[k]),
                                       worst_f_hz=float(fr[k]), margin_db=None, f_low_hz=905e6, f_high_hz=925e6,
                                       margin_hz=m)
                name = f"lot{lot:03d}/u{k}.s1p"
                u = UnitResult(file=name, passed=r1.passed and r2.passed, requirements=(r1, r2), best_f_hz=float(fr[k]),
                               best_return_loss_db=float(rl[k] + 8))
                units.append(CheckedUnit(u, hashlib.sha256(name.encode()).hexdigest()))
            st.add_lot(units, spec, f"lot{lot:03d}", "bench", checked_at=t0 + dt.timedelta(days=lot))


def p11(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    n = sz.history_units
    row = Row("P11", f"history --json over {n:,} stored units", goal="< 2 s", goal_kind="abs", limit=2.0)
    if not has_command("history"):
        row.status = "not built yet"
        return [row]
    db = tmp / "p7.db"
    t = time.perf_counter()
    make_history_store(db, n)
    res = run.compare({"ours": mt("history", "--store", db, "--json")}, sz.reps_slow)
    bad = failed(res["ours"])
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], None)
    row.note = (f"{n:,} units in 50 lots, two requirements each, written by matchtool's store writer in "
                f"{time.perf_counter() - t:.0f} s")
    return [row]


def write_parts_library(folder: Path, n_each: int = 30) -> Path:
    """A parts library of ``n_each`` capacitors (0.5 to 47 pF) and ``n_each`` inductors (1 to 100 nH),
    log-spaced; every other part a measured series 2-port (a chip-part circuit: C with ESL and ESR, or
    (L + R) parallel C, S from the series-element formulas S11 = Z / (Z + 2 Z0), S21 = 2 Z0 / (Z + 2 Z0),
    Pozar 4th ed. Table 4.2; 500 MHz to 1.5 GHz, 401 points), the others Q/SRF models."""
    folder.mkdir(parents=True, exist_ok=True)
    f = np.linspace(500e6, 1.5e9, 401)
    w = 2 * math.pi * f
    lines = ['name = "benchmark kit (synthetic)"']
    for kind, lo, hi in (("capacitor", 0.5e-12, 47e-12), ("inductor", 1e-9, 100e-9)):
        for k, v in enumerate(np.geomspace(lo, hi, n_each)):
            unit, scale = ("pF", 1e-12) if kind == "capacitor" else ("nH", 1e-9)
            srf = 1.0 / (2 * math.pi * math.sqrt((0.4e-9 if kind == "capacitor" else v)
                                                 * (v if kind == "capacitor" else 0.15e-12)))
            head = f'[[part]]\nkind = "{kind}"\nvalue = "{v / scale:.4g}{unit}"\ntolerance = "2%"'
            if k % 2:
                lines.append(f'{head}\nq = {40 if kind == "inductor" else 300}\nq_ref = "1GHz"\nsrf = "{srf / 1e9:.4g}GHz"')
                continue
            if kind == "capacitor":
                z = 1.0 / (2 * math.pi * 1e9 * v * 300) + 1j * w * 0.4e-9 + 1.0 / (1j * w * v)
            else:
                zb = 2 * math.pi * 1e9 * v / 40 + 1j * w * v
                z = zb / (1 + 1j * w * 0.15e-12 * zb)
            s = np.empty((f.size, 2, 2), dtype=complex)
            s[:, 0, 0] = s[:, 1, 1] = z / (z + 100.0)
            s[:, 0, 1] = s[:, 1, 0] = 100.0 / (z + 100.0)
            name = f"{kind[0]}{k:02d}.s2p"
            (folder / name).write_text(touchstone_text(f, s, 50.0, ["synthetic benchmark part (tests/benchmarks/run.py)"]))
            lines.append(f'{head}\nfile = "{name}"')
    path = folder / "kit.toml"
    path.write_text("\n".join(lines) + "\n")
    return path


def p12(run: Runner, tmp: Path, sz: Sizes) -> list[Row]:
    row = Row("P12", f"match pi --parts (60 parts, half measured), {sz.points} pts", goal="<= 6x", limit=6.0)
    if not has_command("match"):
        row.status = "not built yet"
        return [row]
    path = write_sweep(tmp / "p12_r1.s1p", sz.points, 875e6, np.random.default_rng([SEED, 12]))
    lib = write_parts_library(tmp / "p12_kit")
    ours = mt("match", path, "--band", "902MHz:928MHz", "--network", "pi", "--parts", lib, "--json")
    probe = run.once(ours)
    if probe.code not in (0, 1):
        nb = not_built(probe.err)
        row.status = "not built yet" if nb else "error"
        row.note = nb or failed([probe], (0, 1)) or ""
        return [row]
    res = run.compare({"base": skrf_read(path), "ours": ours}, min(sz.reps_fast, 5), warm=False)
    bad = failed(res["ours"], (0, 1)) or failed(res["base"])
    if bad:
        row.status, row.note = "error", bad
        return [row]
    row.set_times(res["ours"], res["base"])
    row.note = "ratio to a cold skrf read of the same file; includes reading the 30 part files and the yield"
    return [row]


CASES = {"P1": p1, "P2": p2, "P3": p3_p4, "P5": p5, "P6": p6, "P7": p7, "P8": p8, "P9": p9,
         "P10": p10, "P11": p11, "P12": p12}


# ------------------------------------------------------------------------------------------
# report


def _fmt(v: float | None, unit: str) -> str:
    if v is None:
        return "-"
    return f"{v:.1f} MB" if unit == "MB" else f"{v:.3f} s"


def table(rows: list[Row]) -> str:
    head = ["case", "what", "matchtool", "baseline", "ratio", "goal", "status", "cpu ratio"]
    body = [[r.case, r.what, _fmt(r.ours, r.unit), _fmt(r.base, r.unit),
             "-" if r.ratio is None else f"{r.ratio:.2f}x", r.goal or "-", r.status,
             "-" if r.cpu_ratio is None else f"{r.cpu_ratio:.2f}x"] for r in rows]
    widths = [max(len(x) for x in col) for col in zip(head, *body, strict=True)]
    line = lambda cells: "  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True)).rstrip()  # noqa: E731
    out = [line(head), line(["-" * w for w in widths])] + [line(b) for b in body]
    notes = [f"  {r.case}: {r.note}" for r in rows if r.note]
    return "\n".join(out + (["", "notes:"] + notes if notes else []))


def machine() -> dict:
    info = {"python": platform.python_version(), "numpy": np.__version__, "nproc": os.cpu_count(),
            "platform": platform.platform()}
    try:
        import skrf

        info["scikit-rf"] = skrf.__version__
    except ImportError:  # pragma: no cover
        pass
    try:
        for ln in Path("/proc/cpuinfo").read_text().splitlines():
            if ln.startswith("model name"):
                info["cpu"] = ln.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    info["load_average_start"] = round(os.getloadavg()[0], 2)
    for k in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE"):
        if k in os.environ:
            info[k] = os.environ[k]
    return info


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description="matchtool benchmarks against scikit-rf baselines")
    ap.add_argument("--quick", action="store_true", help="tiny sizes (seconds); for the smoke test")
    ap.add_argument("--only", default="", help="comma-separated cases, e.g. P2,P5 (P3 includes P4)")
    ap.add_argument("--reps", type=int, default=None, help="repetitions (overrides the defaults)")
    ap.add_argument("--json", dest="json_out", default=None, help="also write the results as JSON here")
    ap.add_argument("--verbose", action="store_true", help="print every subprocess run to stderr")
    ap.add_argument("--tree", default=None, help="benchmark the matchtool of another checkout (default: this one)")
    args = ap.parse_args(argv)
    global TREE
    TREE = Path(args.tree).resolve() if args.tree else ROOT
    if not (TREE / "matchtool" / "__init__.py").is_file():
        print(f"error: --tree {args.tree}: no matchtool package there; expected a matchtool checkout", file=sys.stderr)
        return 2
    sz = QUICK if args.quick else FULL
    if args.reps:
        sz = Sizes(**{**sz.__dict__, "reps_fast": args.reps, "reps_slow": args.reps})
    wanted = [c.strip().upper() for c in args.only.split(",") if c.strip()] or list(CASES)
    wanted = ["P3" if c == "P4" else c for c in wanted]
    unknown = [c for c in wanted if c not in CASES]
    if unknown:
        print(f"error: unknown case(s) {', '.join(unknown)}; expected some of P4 {' '.join(CASES)}", file=sys.stderr)
        return 2
    info = machine()
    print(f"matchtool benchmarks ({'quick' if args.quick else 'full'} sizes) - "
          f"{info.get('cpu', '?')}, {info['nproc']} cores, Python {info['python']}, numpy {info['numpy']}, "
          f"scikit-rf {info.get('scikit-rf', '?')}")
    rows: list[Row] = []
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="mt_bench_") as d:
        tmp = Path(d)
        run = Runner(tmp, verbose=args.verbose)
        for c in dict.fromkeys(wanted):
            t = time.perf_counter()
            got = CASES[c](run, tmp, sz)
            for r in got:
                r.judge()
            rows += got
            print(f"  {c} done in {time.perf_counter() - t:.1f} s", file=sys.stderr)
    print(table(rows))
    info["load_average_end"] = round(os.getloadavg()[0], 2)
    print(f"\ntotal {time.perf_counter() - t0:.1f} s; medians of interleaved runs, each a fresh process; "
          "cpu ratio = user+system time")
    busy = max(info["load_average_start"], info["load_average_end"])
    if busy > (info["nproc"] or 1):
        print(f"warning: the machine was busy (load average {busy:.1f} on {info['nproc']} cores): wall-time "
              "ratios are unreliable; the CPU-time ratios are steadier")
    if args.json_out:
        doc = {"machine": info, "quick": args.quick,
               "rows": [{**{k: v for k, v in r.__dict__.items()}, "ratio": r.ratio} for r in rows]}
        Path(args.json_out).write_text(json.dumps(doc, indent=2))
    return 1 if any(r.status == "error" for r in rows) else 0


if __name__ == "__main__":
    sys.exit(main())

"""Smoke test of the benchmark script: ``tests/benchmarks/run.py --quick`` runs to the end and
prints its table (timings are not asserted: benchmarks are not timed tests)."""

from __future__ import annotations

import os
import re
import subprocess
import sys

import pytest
from helpers import ROOT

SCRIPT = ROOT / "tests" / "benchmarks" / "run.py"


@pytest.mark.slow
def test_quick_benchmark_prints_the_table_and_exits_0(tmp_path):
    out_json = tmp_path / "bench.json"
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    p = subprocess.run([sys.executable, str(SCRIPT), "--quick", "--json", str(out_json)], capture_output=True,
                       text=True, timeout=600, cwd=tmp_path, env=env)
    assert p.returncode == 0, p.stdout + p.stderr
    lines = p.stdout.splitlines()
    header = next(i for i, ln in enumerate(lines) if ln.startswith("case") and "ratio" in ln)
    assert set(lines[header + 1]) <= {"-", " "}
    rows = lines[header + 2:]
    for case in ("P1", "P2", "P3", "P4", "P5"):
        assert any(r.startswith(case) for r in rows), f"no {case} row in:\n{p.stdout}"
    # the cases that need only inspect are measured now: a time, a baseline and a ratio
    for case in ("P2", "P5"):
        row = next(r for r in rows if r.startswith(case))
        assert re.search(r"\d+\.\d{3} s\s+\d+\.\d{3} s\s+\d+\.\d{2}x", row), row
    import json

    doc = json.loads(out_json.read_text())
    assert doc["quick"] is True and doc["machine"]["nproc"] >= 1
    p5_mem = next(r for r in doc["rows"] if r["case"] == "P5" and r["unit"] == "MB")
    assert p5_mem["ours"] > 10 and p5_mem["base"] > 10  # a Python with numpy holds over 10 MB


def test_unknown_case_is_a_one_line_error():
    p = subprocess.run([sys.executable, str(SCRIPT), "--only", "P99"], capture_output=True, text=True, timeout=120)
    assert p.returncode == 2
    assert p.stderr.strip().startswith("error: unknown case") and len(p.stderr.strip().splitlines()) == 1


NON_DRAWING = {  # command -> a run on a bundled sample with contract options only
    "inspect": ["sample_sweeps/ant_r3.s1p", "--json"],
    "compare": ["sample_sweeps/ant_r1.s1p", "sample_sweeps/ant_r3.s1p", "--json"],
    "match": ["sample_sweeps/ant_r1.s1p", "--at", "915MHz", "--json"],
    "check": None,
    "feedline": None,
    "budget": None,
}


def test_non_drawing_commands_do_not_import_matplotlib():
    """Start-up budget (benchmarks issue, P2): matplotlib costs more start-up than scikit-rf, so
    no command that draws nothing may import it - checked through sys.modules in a subprocess,
    for every such command that exists on this checkout."""
    present = [c for c in NON_DRAWING if (ROOT / "matchtool" / "commands" / f"{c}.py").is_file()]
    assert "inspect" in present
    for cmd in present:
        runs = [[cmd, "--help"]] + ([[cmd, *NON_DRAWING[cmd]]] if NON_DRAWING[cmd] else [])
        for argv in runs:
            code = (f"import sys; sys.argv = ['matchtool'] + {argv!r}\nfrom matchtool.cli import main\n"
                    "rc = main()\nprint('MODULES', ' '.join(sys.modules)); print('RC', rc)")
            p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
            tail = p.stdout.split("MODULES", 1)
            assert len(tail) == 2, p.stdout + p.stderr
            mods = set(tail[1].split("RC")[0].split())
            assert "matplotlib" not in mods, argv
            assert tail[1].split("RC")[1].strip() in ("0", "1"), (argv, p.stderr)

"""Batch checking: input expansion and order, parallel runs equal to serial, per-file errors, lot summary."""

from __future__ import annotations

import os

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z, write_rlc

from matchtool import batch
from matchtool.spec import parse_spec

SPEC = ('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'
        '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n')


@pytest.fixture
def spec():
    return parse_spec(SPEC, "spec.toml")


def make_lot(d, f0s_hz, r_ohm=50.0, l_h=40e-9):
    d.mkdir(parents=True, exist_ok=True)
    return [write_rlc(d / f"u{k}.s1p", f0_hz=f0, r_ohm=r_ohm, l_h=l_h, n=231) for k, f0 in enumerate(f0s_hz)]


def test_directories_recurse_in_natural_order(tmp_path):
    for name in ("u10.s1p", "u2.s1p", "sub/u1.s2p", "notes.txt", ".hidden/u0.s1p", "sub/deeper/x.ts"):
        p = tmp_path / "lot" / name
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text("x")
    got = [os.path.relpath(i.path, tmp_path / "lot") for i in batch.expand_inputs([tmp_path / "lot"])]
    assert got == ["sub/deeper/x.ts", "sub/u1.s2p", "u2.s1p", "u10.s1p"]


def test_globs_literals_duplicates_and_empty_patterns(tmp_path):
    make_lot(tmp_path / "a", [915e6] * 3)
    inputs = batch.expand_inputs([tmp_path / "a" / "u1.s1p", str(tmp_path / "a" / "*.s1p"),
                                  str(tmp_path / "**" / "u2.s1p"), tmp_path / "missing.s1p",
                                  str(tmp_path / "zzz*.s1p")])
    names = [os.path.basename(i.path) for i in inputs]
    assert names == ["u1.s1p", "u0.s1p", "u2.s1p", "missing.s1p", "zzz*.s1p"]  # first occurrence kept
    assert inputs[3].error is None  # a literal path is loaded (and reported) as a file
    assert "matches no file" in inputs[4].error


def test_parallel_equals_serial(tmp_path, spec, monkeypatch):
    rng = np.random.default_rng(7)
    f0s = rng.uniform(880e6, 950e6, 30)
    paths = make_lot(tmp_path, f0s, r_ohm=40.0)
    (tmp_path / "broken.s1p").write_text("# MHz S RI R 50\n900 0.1 0.2\n910 0.3\n")
    inputs = batch.expand_inputs([tmp_path])
    monkeypatch.setattr(batch, "IN_PROCESS_MAX", 4)  # force the process pool for this small lot
    monkeypatch.setattr(batch, "IN_PROCESS_S", 0.0)
    calls = []
    par = batch.run_batch(inputs, spec, jobs=3, progress=calls.append)
    ser = batch.run_batch(inputs, spec, jobs=1)
    assert par == ser and len(par) == len(paths) + 1
    assert sum(calls) == len(inputs)  # progress counts every file, readable or not
    assert [u.file for u in par] == [i.path for i in inputs]
    bad = [u for u in par if u.error]
    assert len(bad) == 1 and "broken.s1p line 3" in bad[0].error
    assert all(u.error is None and u.requirements for u in par if u is not bad[0])


def test_lot_summary(tmp_path, spec):
    # resonant frequencies on the sweep's 1 MHz grid, so the best sample lies exactly at f0
    f0s = [900e6, 915e6, 918e6, 930e6, 912e6]
    results = batch.run_batch(batch.expand_inputs(make_lot(tmp_path, f0s, l_h=150e-9)), spec, jobs=1)
    s = batch.summarize_lot(results)
    assert (s.resonance_min_hz, s.resonance_median_hz, s.resonance_max_hz) == pytest.approx(
        (900e6, float(np.median(f0s)), 930e6))
    # independent count: resonance window 905-925 MHz
    res_yield = next(y for y in s.yields if y.name == "resonance")
    assert (res_yield.passed, res_yield.evaluated) == (sum(905e6 <= f <= 925e6 for f in f0s), len(f0s))
    # independent count for the band: analytic worst return loss of each series RLC at the band edges
    edges = np.array([902e6, 928e6])
    rl_worst = [(-20 * np.log10(np.abs(gamma_of(series_rlc_z(edges, 50.0, 150e-9, f0))))).min() for f0 in f0s]
    ism = next(y for y in s.yields if y.name == "ism")
    assert ism.passed == sum(r >= 10 for r in rl_worst) and 0 < ism.passed < len(f0s)
    # worst units: for each failing requirement the unit with the most negative margin in that
    # requirement's own unit (computed here from the results), then the rest by relative margin
    failing = [u for u in results if not u.passed]
    assert {w.file for w in s.worst} <= {u.file for u in failing} and all(not w.passed for w in s.worst)
    for name in ("ism", "resonance"):
        cands = [(r.margin_hz if r.key == "resonance" else r.margin_db, u.file)
                 for u in failing for r in u.requirements if r.name == name and not r.passed]
        if cands:
            assert min(cands)[1] in [w.file for w in s.worst]
    assert len(s.worst) == min(5, len(failing))
    assert s.units == 5 and s.passed + s.failed + s.errors == 5 and s.errors == 0


def test_summary_counts_unreadable_units(tmp_path, spec):
    make_lot(tmp_path, [915e6, 915e6])
    (tmp_path / "x.s1p").write_text("nothing here")
    results = batch.run_batch(batch.expand_inputs([tmp_path]), spec, jobs=1)
    s = batch.summarize_lot(results)
    assert s.errors == 1 and s.units == 3 and s.yield_fraction == pytest.approx(s.passed / 3)
    assert all(y.evaluated == 2 for y in s.yields)


def test_keyboard_interrupt_propagates(tmp_path, spec, monkeypatch):
    make_lot(tmp_path, [915e6] * 3)

    def boom(path, spec):
        raise KeyboardInterrupt

    monkeypatch.setattr(batch, "check_file", boom)
    with pytest.raises(KeyboardInterrupt):
        batch.run_batch(batch.expand_inputs([tmp_path]), spec, jobs=1)


def test_absurd_job_count_is_capped_per_core(tmp_path, spec, monkeypatch):
    # --jobs 100000 on a lot of 80 files may not fork 80 processes on a 1-core machine
    import concurrent.futures

    files = make_lot(tmp_path, np.linspace(905e6, 925e6, 80))
    seen = []
    real = concurrent.futures.ProcessPoolExecutor

    def recording(*a, max_workers=None, **k):
        seen.append(max_workers)
        return real(*a, max_workers=max_workers, **k)

    monkeypatch.setattr(concurrent.futures, "ProcessPoolExecutor", recording)
    monkeypatch.setattr(batch, "default_jobs", lambda: 1)
    monkeypatch.setattr(batch, "IN_PROCESS_S", 0.0)  # hand the rest to the pool at once
    results = batch.run_batch(files, spec, jobs=100_000)
    assert seen == [batch.MAX_JOBS_PER_CORE]
    assert [r.file for r in results] == [str(f) for f in files] and all(r.error is None for r in results)

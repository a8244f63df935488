"""compare.py: revision deltas and per-band worst cases, checked against closed-form loads."""

from __future__ import annotations

import math

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z
from hypothesis import given
from hypothesis import strategies as st

from matchtool.compare import band_worst, compare, order_with_baseline
from matchtool.errors import UsageError
from matchtool.sweep import sweep_from_arrays


def rlc_sweep(path: str, f0_hz: float, l_h: float = 40e-9, r_ohm: float = 50.0,
              f: np.ndarray | None = None):
    f = np.linspace(800e6, 1030e6, 461) if f is None else f  # 0.5 MHz steps
    return sweep_from_arrays(f, gamma_of(series_rlc_z(f, r_ohm, l_h, f0_hz)), 50.0, path=path)


def test_threshold_bandwidth_of_series_rlc_matches_closed_form():
    # Derived (tests/REFERENCES.md, "Exact test vectors"): a series RLC with R = Z0 has
    # |Gamma| = |X| / sqrt(4 R^2 + X^2); RL = 10 dB where |X| = (2/3) Z0, so the -10 dB bandwidth is
    # (2/3) R / (2 pi L) exactly.
    f = np.linspace(800e6, 1030e6, 23001)
    c = compare([rlc_sweep("a", 915e6, 40e-9, f=f), rlc_sweep("b", 915e6, 30e-9, f=f)], 10.0)
    bw_a = (2 / 3) * 50 / (2 * math.pi * 40e-9)
    bw_b = (2 / 3) * 50 / (2 * math.pi * 30e-9)
    assert c.rows[0].bandwidth_hz == pytest.approx(bw_a, rel=1e-4)
    assert c.rows[1].bandwidth_hz == pytest.approx(bw_b, rel=1e-4)
    assert c.rows[1].delta_bandwidth_hz == pytest.approx(bw_b - bw_a, rel=1e-3)
    assert c.rows[0].delta_bandwidth_hz == 0.0 and c.rows[0].delta_best_f_hz == 0.0


def test_resonance_shift_is_the_difference_of_best_samples():
    # Both resonances sit on a sample (0.5 MHz grid), so best = resonance exactly.
    c = compare([rlc_sweep("r1", 900e6), rlc_sweep("r2", 915e6), rlc_sweep("r3", 921e6)], 10.0)
    assert [r.file for r in c.rows] == ["r1", "r2", "r3"]
    assert [r.best_f_hz for r in c.rows] == pytest.approx([900e6, 915e6, 921e6])
    assert [r.delta_best_f_hz for r in c.rows] == pytest.approx([0.0, 15e6, 21e6])
    assert c.baseline == "r1" and c.rows[0].is_baseline and not c.rows[1].is_baseline


def test_vswr_two_resistor_gives_table_values_and_no_threshold_band():
    # Pozar, Microwave Engineering 4th ed., sec. 2.3 (eqs. 2.38-2.41; table in tests/REFERENCES.md):
    # VSWR 2 -> |Gamma| 1/3, RL 9.5424 dB, mismatch loss 0.51153 dB. A 100-ohm resistor on 50 ohm.
    f = np.linspace(800e6, 1000e6, 41)
    sw = sweep_from_arrays(f, gamma_of(np.full(f.size, 100.0 + 0j)), 50.0, path="r100")
    c = compare([sw], 10.0, [("ism", 902e6, 928e6, 10.0)])
    w = c.rows[0].bands[0]
    assert w.worst_return_loss_db == pytest.approx(9.5424, abs=1e-4)
    assert w.worst_mismatch_loss_db == pytest.approx(0.51153, abs=1e-5)
    assert w.worst_s11_db == pytest.approx(-9.5424, abs=1e-4)
    assert w.passed is False and w.margin_db == pytest.approx(9.5424 - 10.0, abs=1e-4)
    assert c.rows[0].bandwidth_hz is None and c.rows[0].delta_bandwidth_hz is None
    assert c.verdicts[0].passing_files == () and c.verdicts[0].best_file == "r100"


def test_worst_case_includes_interpolated_band_edges_of_a_coarse_sweep():
    # 10 MHz steps; the band edges 902 and 938 MHz fall between samples. Worst |Gamma| is the larger of
    # the edge values (linear in complex Gamma between the bracketing samples) and the samples inside.
    f = np.arange(850e6, 1001e6, 10e6)
    g = gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))
    sw = sweep_from_arrays(f, g, 50.0, path="coarse")
    (w,) = band_worst(sw.f_hz, sw.gamma, [("b", 902e6, 938e6, None)])
    edge_lo = g[5] + (g[6] - g[5]) * (902e6 - 900e6) / 10e6  # hand-written interpolation
    edge_hi = g[8] + (g[9] - g[8]) * (938e6 - 930e6) / 10e6
    inside = np.abs(g[6:9])
    expect = max(abs(edge_lo), abs(edge_hi), *inside)
    assert expect > inside.max()  # the worst point is an edge, which no sample holds
    assert w.worst_return_loss_db == pytest.approx(-20 * math.log10(expect), rel=1e-12)
    assert w.worst_f_hz == 938e6 and w.samples == 3 and w.passed is None


def test_band_outside_the_sweep_is_not_covered_and_fails_its_limit():
    c = compare([rlc_sweep("a", 915e6)], 10.0, [("high", 1000e6, 1100e6, 10.0)])
    w = c.rows[0].bands[0]
    assert not w.covered and w.worst_return_loss_db is None and w.passed is False
    assert "does not cover" in w.reason
    assert any("does not cover" in m and m.startswith("a:") for m in c.warnings)
    assert c.verdicts[0].best_file is None and c.verdicts[0].uncovered_files == ("a",)


def test_per_band_deltas_and_best_revision():
    # Two revisions whose resonances bracket the band centre: the one closer to 915 MHz wins.
    bands = [("ism", 902e6, 928e6, 10.0)]
    c = compare([rlc_sweep("far", 880e6), rlc_sweep("near", 912e6)], 10.0, bands)
    far, near = (r.bands[0] for r in c.rows)
    assert near.worst_return_loss_db > far.worst_return_loss_db
    assert c.rows[1].delta_worst_return_loss_db[0] == pytest.approx(
        near.worst_return_loss_db - far.worst_return_loss_db)
    assert c.verdicts[0].best_file == "near"
    # with the resonance below the band, the worst point is the band edge farther from it
    assert far.worst_f_hz == 928e6


def test_tie_goes_to_the_first_revision():
    c = compare([rlc_sweep("x", 915e6), rlc_sweep("y", 915e6)], 10.0, [("b", 900e6, 930e6, None)])
    assert c.verdicts[0].best_file == "x"


def test_baseline_ordering():
    assert order_with_baseline(["a", "b", "c"], None) == ["a", "b", "c"]
    assert order_with_baseline(["a", "b", "c"], "b") == ["b", "a", "c"]
    assert order_with_baseline(["a", "b"], "z") == ["z", "a", "b"]


def test_bad_inputs_raise():
    with pytest.raises(UsageError):
        compare([], 10.0)
    with pytest.raises(UsageError):
        band_worst(np.array([1.0, 2.0]), np.array([0.1, 0.1]), [("x", 2.0, 1.0, None)])


@given(st.lists(st.tuples(st.floats(-0.95, 0.95), st.floats(-0.95, 0.95)), min_size=3, max_size=40),
       st.floats(0.0, 1.0), st.floats(0.0, 1.0), st.floats(0.0, 1.0))
def test_worst_case_bounds_every_sample_and_grows_with_the_band(pts, a, b, c):
    # Identities of a maximum: the worst |Gamma| over a band is at least every sample inside it, and a
    # band containing another has a worst case at least as bad (interpolation is the same on both).
    g = np.array([complex(x, y) for x, y in pts])
    f = np.linspace(1e9, 2e9, g.size)
    lo, hi = sorted((1e9 + 1e9 * a, 1e9 + 1e9 * b))
    if hi - lo < 1e3:
        return
    mid = lo + (hi - lo) * c
    inner_lo, inner_hi = sorted((mid, lo + (hi - lo) * (0.5 + c) / 2))
    outer, inner = band_worst(f, g, [("o", lo, hi, None), ("i", inner_lo, max(inner_hi, inner_lo + 1.0), None)])
    inside = np.abs(g[(f >= lo) & (f <= hi)])
    rl_outer = outer.worst_return_loss_db
    if inside.size:
        assert rl_outer <= -20 * np.log10(inside.max()) + 1e-9
    if inner.covered and inner.f_high_hz <= hi:
        assert rl_outer <= inner.worst_return_loss_db + 1e-9
    assert lo <= outer.worst_f_hz <= hi


def test_spec_rows_are_the_spec_evaluation_and_best_is_the_largest_margin():
    from matchtool.spec import evaluate, parse_spec

    spec = parse_spec('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmax_vswr = 2\n'
                      '[[band]]\nname = "far"\nf_low = "1005 MHz"\nf_high = "1020 MHz"\nmin_return_loss_db = 1\n'
                      '[resonance]\nf_low = "910 MHz"\nf_high = "920 MHz"\n', "s.toml")
    f_short = np.linspace(800e6, 1000e6, 401)  # does not reach the "far" band
    sweeps = [rlc_sweep("a", 870e6, l_h=100e-9), rlc_sweep("b", 915e6), rlc_sweep("c", 915e6), rlc_sweep("d", 915e6, f=f_short)]
    c = compare(sweeps, 10.0, spec=spec)
    for sw, row in zip(sweeps, c.rows, strict=True):
        assert row.spec == evaluate(sw, spec)
    ism, far, res = c.spec_verdicts
    # b and c are the same antenna: a tie, the first one wins; d matches them in-band too
    assert ism.best_file == "b" and ism.passing_files == ("b", "c", "d") and ism.failing_files == ("a",)
    assert res.key == "resonance" and res.best_file == "b" and res.failing_files == ("a",)
    # the sweep that does not cover a band fails it and does not compete for best
    assert far.unevaluated_files == ("d",) and "d" in far.failing_files and far.best_file != "d"
    assert c.spec_failed
    # deltas against the baseline: margin minus the baseline's margin
    assert c.rows[1].delta_margin[0] == pytest.approx(c.rows[1].spec.requirements[0].margin_db
                                                      - c.rows[0].spec.requirements[0].margin_db)
    assert c.rows[3].delta_margin[1] is None


def test_without_spec_there_are_no_spec_results():
    c = compare([rlc_sweep("a", 900e6)], 10.0, [("ism", 902e6, 928e6, 10.0)])
    assert c.spec_path is None and c.spec_verdicts == () and not c.spec_failed and c.rows[0].spec is None


def test_revisions_accepts_skrf_networks_and_gives_the_same_rows():
    import skrf

    from matchtool.compare import revisions

    sweeps = [rlc_sweep("r1", 900e6), rlc_sweep("r2", 915e6)]
    freq = skrf.Frequency.from_f(sweeps[0].f_hz, unit="hz")
    nets = [skrf.Network(frequency=freq, s=s.gamma.reshape(-1, 1, 1), z0=50.0, name=s.path) for s in sweeps]
    a = revisions(sweeps, 10.0)
    b = revisions(nets, 10.0)
    assert [r.best_f_hz for r in b.rows] == [r.best_f_hz for r in a.rows]
    assert [r.bandwidth_hz for r in b.rows] == pytest.approx([r.bandwidth_hz for r in a.rows], rel=1e-12)
    import dataclasses

    with pytest.raises(dataclasses.FrozenInstanceError):
        a.rows[0].best_f_hz = 0.0  # results are frozen
    assert isinstance(a.rows, tuple) and isinstance(a.warnings, tuple)


def test_every_threshold_band_of_a_dual_band_sweep_and_pairing_with_the_baseline():
    from matchtool.compare import revisions

    # derived: two series resonances in parallel-free sum (|Gamma| = min of two RLC loads' |Gamma|)
    f = np.linspace(2.0e9, 6.0e9, 4001)
    g1 = gamma_of(series_rlc_z(f, 50.0, 20e-9, 2.44e9))
    g2 = gamma_of(series_rlc_z(f, 50.0, 10e-9, 5.5e9))
    g = np.where(np.abs(g1) < np.abs(g2), g1, g2)
    g_b = np.where(np.abs(g1) < np.abs(g2), g1, gamma_of(series_rlc_z(f, 50.0, 8e-9, 5.5e9)))
    c = revisions([sweep_from_arrays(f, g, 50.0, path="a"), sweep_from_arrays(f, g_b, 50.0, path="b")], 10.0)
    a, b = c.rows
    assert len(a.threshold_bands) == len(b.threshold_bands) == 2
    # the 5.5 GHz band of b is wider (L 8 nH against 10 nH): bandwidth (2/3) R / (2 pi L), derived as above
    d = b.threshold_bands[1].delta_bandwidth_hz
    expect = (2 / 3) * 50 / (2 * math.pi) * (1 / 8e-9 - 1 / 10e-9)
    assert d == pytest.approx(expect, rel=2e-2)
    assert b.threshold_bands[0].delta_bandwidth_hz == pytest.approx(0.0, abs=2e3)

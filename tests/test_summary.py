"""Tests of matchtool.summary: the threshold stated three ways, the best sample, bands on an RLC.

Published values (Pozar, Microwave Engineering, 4th ed., sec. 2.3, eqs. 2.38-2.41; IEC 60050-702,
IEV 702-07-25 for the sign of return loss) and derived RLC band edges (tests/REFERENCES.md).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z

from matchtool.errors import UsageError
from matchtool.summary import PointMetrics, best_index, summarize, threshold_from_options
from matchtool.sweep import sweep_from_arrays

# VSWR -> return loss dB, Pozar 4th ed. eqs. 2.38-2.41 (table in tests/REFERENCES.md)
PUBLISHED = [(1.1, 26.444), (1.2, 20.828), (1.5, 13.979), (2.0, 9.5424), (3.0, 6.0206), (5.0, 3.5218)]


@pytest.mark.parametrize("vswr,rl_db", PUBLISHED)
def test_vswr_limit_is_the_published_return_loss(vswr, rl_db):
    assert threshold_from_options(max_vswr=vswr) == pytest.approx(rl_db, abs=6e-4)


@pytest.mark.parametrize("vswr,rl_db", PUBLISHED)
def test_three_statements_of_one_limit_agree(vswr, rl_db):
    # return loss is positive, S11 in dB its negative (IEC 60050-702; Bird 2009)
    a = threshold_from_options(max_vswr=vswr)
    b = threshold_from_options(min_return_loss_db=rl_db)
    c = threshold_from_options(max_s11_db=-rl_db)
    assert a == pytest.approx(b, abs=6e-4) and b == c


def test_default_is_10_db_and_vswr_1_925():
    # RL 10 dB: |G| = 0.31623, VSWR 1.9250 (tests/REFERENCES.md, Pozar 4th ed. eq. 2.40)
    assert threshold_from_options() == 10.0
    assert threshold_from_options(max_vswr=1.9250) == pytest.approx(10.0, abs=2e-3)
    assert threshold_from_options(default_db=6.0) == 6.0


@pytest.mark.parametrize("kw,words", [
    ({"max_vswr": 2.0, "min_return_loss_db": 10.0}, "only one"),
    ({"max_vswr": 2.0, "max_s11_db": -10.0}, "only one"),
    ({"min_return_loss_db": -10.0}, "positive"),
    ({"min_return_loss_db": math.nan}, "positive"),
    ({"max_vswr": 1.0}, "above 1"),
    ({"max_vswr": 0.5}, "above 1"),
    ({"max_vswr": math.inf}, "above 1"),
    ({"max_s11_db": 10.0}, "negative"),
])
def test_bad_limits(kw, words):
    with pytest.raises(UsageError) as e:
        threshold_from_options(**kw)
    assert words in str(e.value) and "\n" not in str(e.value)


def test_best_index_is_the_smallest_reflection():
    g = np.array([0.5, 0.2 + 0.1j, -0.05j, 0.3, 0.05 + 0.001j])
    assert best_index(g) == 2  # |G| 0.05 < 0.050010 (brute force by hand)
    assert best_index(np.array([0.3, 0.3, 0.3])) == 0  # ties: the first sample


def sweep(f, r_ohm=50.0, l_h=40e-9, f0=915e6, z0=50.0):
    return sweep_from_arrays(f, gamma_of(series_rlc_z(f, r_ohm, l_h, f0), z0), z0, path="rlc.s1p")


def test_bands_on_a_series_rlc_match_the_derived_edges():
    # Derived (tests/REFERENCES.md "Exact test vectors"): series RLC with R = Z0, 10 dB band where
    # |X| = (2/3) Z0: width (2/3) R / (2 pi L) exactly, f_low f_high = f0^2.
    f = np.linspace(800e6, 1030e6, 23001)
    s = summarize(sweep(f), 10.0)
    assert len(s.bands) == 1
    b = s.bands[0]
    assert b.bandwidth_hz == pytest.approx((2 / 3) * 50.0 / (2 * math.pi * 40e-9), rel=1e-5)
    assert b.f_low_hz * b.f_high_hz == pytest.approx(915e6**2, rel=1e-8)
    assert not b.clipped_low and not b.clipped_high
    # best sample at resonance: the sample nearest 915 MHz, |G| about 0
    assert s.best.f_hz == pytest.approx(915e6, abs=(f[1] - f[0]) / 2)
    assert s.points == f.size and s.f_start_hz == 800e6 and s.f_stop_hz == 1030e6


def test_vswr_2_band_is_one_over_q_sqrt2():
    # Derived (tests/REFERENCES.md): VSWR-2 bandwidth of a series RLC with R = Z0 is 1/(Q sqrt 2) of f0
    # (band width over f0; |X| = R/sqrt 2 at |G| = 1/3)
    lh = 40e-9
    q = 2 * math.pi * 915e6 * lh / 50.0
    f = np.linspace(800e6, 1030e6, 23001)
    s = summarize(sweep(f, l_h=lh), threshold_from_options(max_vswr=2.0))
    assert s.bands[0].bandwidth_hz / 915e6 == pytest.approx(1 / (q * math.sqrt(2)), rel=1e-5)


def test_band_running_past_the_sweep_is_clipped():
    f = np.linspace(905e6, 1030e6, 1001)
    b = summarize(sweep(f), 10.0).bands[0]
    assert b.clipped_low and not b.clipped_high and b.f_low_hz == 905e6


def test_mismatched_rlc_has_no_band():
    # R = Z0/4 at resonance: |G| = 0.6, RL 4.44 dB, never 10 dB (Pozar 4th ed. eq. 2.35)
    s = summarize(sweep(np.linspace(800e6, 1030e6, 401), r_ohm=12.5), 10.0)
    assert s.bands == []
    assert s.best.gamma_mag == pytest.approx(0.6, abs=1e-9)
    assert s.best.return_loss_db == pytest.approx(-20 * math.log10(0.6), abs=1e-9)


def test_values_at_points_interpolate_in_complex_gamma():
    f = np.linspace(800e6, 1030e6, 231)  # 1 MHz step
    sw = sweep(f)
    s = summarize(sw, 10.0, at_hz=[915e6, 915.5e6])
    g = sw.gamma
    k = int(np.argmin(np.abs(f - 915e6)))
    assert s.at[0].gamma == pytest.approx(g[k], abs=1e-15)  # on a sample: the sample
    assert s.at[1].gamma == pytest.approx(0.5 * (g[k] + g[k + 1]), abs=1e-15)  # halfway: the mean


def test_point_metrics_against_pozar_example_2_2():
    # Pozar 4th ed. Example 2.2: 40 + j70 ohm on a 100-ohm line: |G| = 0.59, SWR 3.87, RL 4.6 dB
    z, z0 = 40 + 70j, 100.0
    p = PointMetrics(915e6, complex((z - z0) / (z + z0)), z0)
    assert p.gamma_mag == pytest.approx(0.5890, abs=1e-4)
    assert p.vswr == pytest.approx(3.866, abs=1e-3)
    assert p.return_loss_db == pytest.approx(4.597, abs=1e-3) and p.s11_db == pytest.approx(-4.597, abs=1e-3)
    assert p.z_ohm == pytest.approx(z, abs=1e-9)
    # delivered 1 - |G|^2 (Pozar eq. 2.37), derived: |G|^2 = (60^2 + 70^2) / (140^2 + 70^2) = 8500/24500,
    # delivered 16000/24500 = 0.653061, mismatch loss 10 log10(24500/16000) = 1.8505 dB
    assert p.delivered_fraction == pytest.approx(16000 / 24500, rel=1e-12)
    assert p.mismatch_loss_db == pytest.approx(1.8505, abs=1e-4)


def test_summary_keeps_the_sweep_warnings():
    f = np.linspace(800e6, 1030e6, 11)
    g = gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))
    g[3] = 1.2  # |S11| > 1 is flagged by the loader
    s = summarize(sweep_from_arrays(f, g, 50.0, path="x.s1p"), 10.0)
    assert any("|S11| > 1" in w for w in s.warnings)

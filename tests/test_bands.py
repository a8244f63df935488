"""Threshold bands: exact series-RLC edges (derived), clipping, interpolated edges."""

import math

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z

from matchtool import reflection as rf
from matchtool.bands import MIN_BAND_FRACTION, MIN_BAND_SAMPLES, MIN_RUN_SAMPLES, band_samples, find_bands, search_bands


def test_series_rlc_ten_db_band_exact():
    # Derived (not from a book): a series RLC with R = Z0 reaches |G| = 1/sqrt(10) where
    # |X| = (2/3) Z0, so f_high - f_low = (2/3) R / (2 pi L) and f_low * f_high = f0^2.
    f0, r, l_h = 915e6, 50.0, 40e-9
    f = np.linspace(700e6, 1150e6, 20001)
    bands = find_bands(f, rf.return_loss_db(gamma_of(series_rlc_z(f, r, l_h, f0))), 10.0)
    assert len(bands) == 1
    b = bands[0]
    assert b.bandwidth_hz == pytest.approx((2 / 3) * r / (2 * math.pi * l_h), rel=1e-5)
    assert b.f_low_hz * b.f_high_hz == pytest.approx(f0**2, rel=1e-5)
    q = 2 * math.pi * f0 * l_h / r
    # fractional bandwidth about the geometric centre is 2/(3Q); ours is about the arithmetic centre
    assert b.bandwidth_hz / math.sqrt(b.f_low_hz * b.f_high_hz) == pytest.approx(2 / (3 * q), rel=1e-5)
    assert not b.clipped_low and not b.clipped_high


def test_vswr2_bandwidth():
    # Derived: VSWR 2 is |G| = 1/3, |X| = R/sqrt(2)... for R = Z0: |X| = 2 Z0 |G| / sqrt(1-|G|^2) = Z0/sqrt(2)
    f0, r, l_h = 915e6, 50.0, 40e-9
    f = np.linspace(700e6, 1150e6, 20001)
    thr = float(rf.return_loss_from_vswr(2.0))
    b = find_bands(f, rf.return_loss_db(gamma_of(series_rlc_z(f, r, l_h, f0))), thr)[0]
    q = 2 * math.pi * f0 * l_h / r
    assert b.bandwidth_hz / f0 == pytest.approx(1 / (q * math.sqrt(2)), rel=1e-4)


def test_interpolated_edges_on_coarse_grid():
    f = np.array([1.0, 2.0, 3.0, 4.0, 5.0])
    y = np.array([5.0, 15.0, 20.0, 15.0, 5.0])
    b = find_bands(f, y, 10.0)[0]
    assert b.f_low_hz == pytest.approx(1.5) and b.f_high_hz == pytest.approx(4.5)
    assert b.f_center_hz == pytest.approx(3.0) and b.fractional_bandwidth == pytest.approx(1.0)


def test_clipped_and_multiple_bands():
    f = np.arange(10.0)
    y = np.array([12, 12, 5, 5, 11, 11, 5, 5, 13, 13], dtype=float)
    bands = find_bands(f, y, 10.0)
    assert len(bands) == 3
    assert bands[0].clipped_low and not bands[0].clipped_high and bands[0].f_low_hz == 0.0
    assert not bands[1].clipped_low and not bands[1].clipped_high
    assert bands[2].clipped_high and bands[2].f_high_hz == 9.0
    assert find_bands(f, np.zeros(10), 10.0) == []


def test_band_samples_include_interpolated_edges():
    f = np.array([0.0, 10.0, 20.0, 30.0])
    y = np.array([0.0, 10.0, 20.0, 30.0])
    fs, ys = band_samples(f, y, 5.0, 25.0)
    assert list(fs) == [5.0, 10.0, 20.0, 25.0]
    assert list(ys) == [5.0, 10.0, 20.0, 25.0]


def test_sweep_covers_allows_unit_rounding_only():
    from matchtool.bands import sweep_covers

    f = np.linspace(0.9e9, 0.93e9, 31)
    assert sweep_covers(f, 0.9e9 * (1 - 1e-12), 0.93e9)       # GHz-unit rounding of the edge
    assert not sweep_covers(f, 0.899e9, 0.93e9)               # a real 1 MHz gap is not covered
    assert not sweep_covers(f[:1], 0.9e9, 0.9e9)              # one sample spans nothing


def _noisy_2g4():
    """A 2.4 GHz PCB antenna's return loss on a 625 kHz grid (derived: a Lorentzian dip of 20 dB
    at 2.44 GHz whose 10 dB crossings lie at 2.44 GHz +- 50 MHz), plus one sample of measurement
    noise poking 0.3 dB above the 10 dB threshold at 2.6 GHz: the kind of sliver users saw."""
    f = np.linspace(2.0e9, 3.0e9, 1601)
    x = (f - 2.44e9) / 50e6
    y = 20.0 / (1.0 + x * x)  # 10 dB exactly at x = +-1
    k = int(np.argmin(abs(f - 2.6e9)))
    y[k] = 10.3
    return f, y, k


def test_a_one_sample_noise_crossing_is_not_a_band():
    f, y, k = _noisy_2g4()
    found = search_bands(f, y, 10.0)
    (band,) = found.bands
    assert band.f_low_hz == pytest.approx(2.39e9, abs=1e3) and band.f_high_hz == pytest.approx(2.49e9, abs=1e3)
    (noise,) = found.noise_crossings
    assert noise.f_low_hz < f[k] < noise.f_high_hz and noise.bandwidth_hz < 625e3
    assert find_bands(f, y, 10.0) == [band]  # find_bands never returns a sliver
    # the minimum is a parameter: one sample and no width minimum keep the crossing as a band
    assert len(search_bands(f, y, 10.0, min_width_hz=0.0, min_samples=1).bands) == 2
    # a width minimum wider than the real band moves it too (nothing is lost: it is listed apart)
    wide = search_bands(f, y, 10.0, min_width_hz=200e6)
    assert wide.bands == () and len(wide.noise_crossings) == 2


def test_default_minimum_is_a_fraction_of_the_span_and_two_samples():
    f, y, _ = _noisy_2g4()
    found = search_bands(f, y, 10.0)
    assert found.min_width_hz == pytest.approx(MIN_BAND_FRACTION * 1e9) and found.min_samples == MIN_RUN_SAMPLES == 2
    # a sweep that meets the threshold everywhere is one band, however short
    assert len(search_bands(np.array([1.0, 2.0]), np.array([20.0, 20.0]), 10.0).bands) == 1


def test_the_two_sample_minimums_are_distinct():
    # a threshold band is a run of at least 2 samples (noise-level crossings below that); a spec or
    # match band should hold at least 3 measured samples (its worst case leans on interpolation)
    assert (MIN_RUN_SAMPLES, MIN_BAND_SAMPLES) == (2, 3)

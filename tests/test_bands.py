"""Threshold bands: exact series-RLC edges (derived), clipping, interpolated edges."""

import math

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z

from matchtool import reflection as rf
from matchtool.bands import band_samples, find_bands


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

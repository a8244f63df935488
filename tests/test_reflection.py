"""Reflection metrics against published values and identities."""

import math

import numpy as np
import pytest

from matchtool import reflection as rf

# Pozar, Microwave Engineering, 4th ed., eqs. 2.37-2.41, and the VSWR table in shared references
# (values recomputed here from the closed forms; the table rows are VSWR -> |G|, RL, ML, delivered).
TABLE = [
    (1.1, 0.04762, 26.444, 0.00986, 0.99773),
    (1.2, 0.09091, 20.828, 0.03604, 0.99174),
    (1.5, 0.20000, 13.979, 0.17729, 0.96000),
    (2.0, 0.33333, 9.5424, 0.51153, 0.88889),
    (3.0, 0.50000, 6.0206, 1.24939, 0.75000),
    (5.0, 0.66667, 3.5218, 2.55273, 0.55556),
]


@pytest.mark.parametrize("v, g, rl, ml, d", TABLE)
def test_vswr_table(v, g, rl, ml, d):
    mag = rf.gamma_mag_from_vswr(v)
    assert mag == pytest.approx(g, abs=5e-6)
    assert rf.return_loss_db(mag) == pytest.approx(rl, abs=5e-4)
    assert rf.mismatch_loss_db(mag) == pytest.approx(ml, abs=5e-5)
    assert rf.delivered_fraction(mag) == pytest.approx(d, abs=5e-6)
    assert rf.vswr(mag) == pytest.approx(v, rel=1e-12)
    # Bird, IEEE APM 51(2) 2009: RL = 20 log10((VSWR+1)/(VSWR-1)), and S11 dB is its negative
    assert rf.return_loss_from_vswr(v) == pytest.approx(20 * math.log10((v + 1) / (v - 1)), rel=1e-12)
    assert rf.s11_db(mag) == pytest.approx(-rf.return_loss_db(mag), rel=1e-12)


def test_pozar_example_2_2():
    # Pozar 4th ed. Example 2.2: 40 + j70 ohm on a 100 ohm line: |G| 0.59, SWR 3.87, RL 4.6 dB
    g = rf.gamma_from_impedance(40 + 70j, 100.0)
    assert abs(g) == pytest.approx(0.5890, abs=1e-4)
    assert rf.vswr(g) == pytest.approx(3.866, abs=1e-3)
    assert rf.return_loss_db(g) == pytest.approx(4.597, abs=1e-3)
    assert rf.impedance_ohm(g, 100.0) == pytest.approx(40 + 70j)


def test_ten_db_rule():
    # common practice, no source: -10 dB S11 means 90 % of the power is delivered
    g = rf.gamma_mag_from_return_loss(10.0)
    assert rf.delivered_fraction(g) == pytest.approx(0.9, rel=1e-12)
    assert rf.vswr(g) == pytest.approx(1.9250, abs=1e-4)
    assert rf.mismatch_loss_db(g) == pytest.approx(0.4576, abs=1e-4)


def test_vswr_never_negative_and_limits():
    g = np.array([0.0, 0.5, 1.0, 1.2])
    v = rf.vswr(g)
    assert v[0] == 1.0 and v[1] == pytest.approx(3.0)
    assert np.isinf(v[2]) and np.isinf(v[3])
    assert np.all(v >= 1)
    assert np.isinf(rf.return_loss_db(0.0))
    ml = rf.mismatch_loss_db(g)
    assert ml[0] == 0.0 and np.isinf(ml[2]) and np.isnan(ml[3])


def test_energy_identity_random():
    rng = np.random.default_rng(1)
    g = rng.uniform(0, 0.99, 1000) * np.exp(1j * rng.uniform(-np.pi, np.pi, 1000))
    # delivered + reflected power = incident (Pozar eq. 2.37)
    assert np.allclose(rf.delivered_fraction(g) + np.abs(g) ** 2, 1.0)
    z = rf.impedance_ohm(g, 75.0)
    assert np.allclose(rf.gamma_from_impedance(z, 75.0), g)
    assert np.all(z.real >= 0)  # |G| < 1 is a passive load

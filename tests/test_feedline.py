"""Core feed-line checks: transmission-line theory, scikit-rf cross-checks, physical identities."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import skrf
from hypothesis import given
from hypothesis import strategies as st

from matchtool import feedline as fl
from matchtool import reflection as rf
from matchtool.errors import OutOfRangeError, UsageError
from matchtool.render.text.feedline import band_masking, masking_text

C0 = 299_792_458.0


def _rand_s(rng, n, ports, scale=0.3):
    return (rng.normal(size=(n, ports, ports)) + 1j * rng.normal(size=(n, ports, ports))) * scale


# ---------------------------------------------------------------- Pozar 4th ed. eqs. 2.90-2.94

def test_matched_line_rotates_and_attenuates_gamma():
    """Pozar, Microwave Engineering, 4th ed., eqs. 2.90-2.94 (confirmed): Gamma_in = Gamma_L exp(-2 gamma l)."""
    f = np.linspace(100e6, 3e9, 57)
    cab = fl.CableModel(length_m=2.5, velocity_factor=0.66, loss_db_per_m=0.4, dielectric_loss_db_per_m=0.1)
    g_l = 0.4 * np.exp(1j * np.linspace(0, 6, f.size))
    alpha = (0.4 * np.sqrt(f / 1e9) + 0.1 * f / 1e9) / (20 / math.log(10))  # Np/m, derived here
    beta = 2 * np.pi * f / (0.66 * C0)
    expected = g_l * np.exp(-2 * (alpha + 1j * beta) * 2.5)
    got = fl.gamma_toward_radio(g_l, cab.s_params(f, 50.0))
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-14)


def test_quarter_wave_turns_short_into_open_and_half_wave_repeats():
    """Pozar 4th ed. eq. 2.90 ff.: a quarter-wave line turns a short into an open; a half-wave line
    repeats the load (lossless)."""
    vf, f0 = 0.7, 1e9
    lam = vf * C0 / f0
    quarter = fl.CableModel(length_m=lam / 4, velocity_factor=vf, loss_db_per_m=0.0)
    half = fl.CableModel(length_m=lam / 2, velocity_factor=vf, loss_db_per_m=0.0)
    f = np.array([f0])
    assert fl.gamma_toward_radio(np.array([-1.0 + 0j]), quarter.s_params(f, 50.0))[0] == pytest.approx(1.0, abs=1e-12)
    load = np.array([0.3 - 0.45j])
    assert fl.gamma_toward_radio(load, half.s_params(f, 50.0))[0] == pytest.approx(load[0], abs=1e-12)
    # also for a cable whose impedance differs from the system: a half wave still repeats the load
    half75 = fl.CableModel(length_m=lam / 2, velocity_factor=vf, loss_db_per_m=0.0, z0_ohm=75.0)
    assert fl.gamma_toward_radio(load, half75.s_params(f, 50.0))[0] == pytest.approx(load[0], abs=1e-12)
    # a quarter-wave 75-ohm line transforms 50 ohm into 75^2/50 = 112.5 ohm
    # (quarter-wave transformer, Pozar 4th ed. sec. 2.5; section number from memory)
    q75 = fl.CableModel(length_m=lam / 4, velocity_factor=vf, loss_db_per_m=0.0, z0_ohm=75.0)
    z_in = rf.impedance_ohm(fl.gamma_toward_radio(np.array([0j]), q75.s_params(f, 50.0)), 50.0)[0]
    assert z_in == pytest.approx(112.5, abs=1e-9)


def test_lossy_line_worked_case():
    """Load of VSWR 2 behind a 3 dB one-way matched cable (from Pozar 4th ed. eqs. 2.92-2.94):
    |Gamma_in| 0.16706, RL 15.542 dB, VSWR 1.4011, total (line) loss 3.3886 dB."""
    f = np.array([1e9])
    cab = fl.CableModel(length_m=2.0, velocity_factor=0.8, loss_db_per_m=1.5)
    feed = fl.feed_points(f, np.array([1 / 3 + 0j]), cab, "radio", 50.0)
    assert abs(feed.gamma_radio[0]) == pytest.approx(0.16706, abs=1e-5)
    assert feed.return_loss_radio_db[0] == pytest.approx(15.542, abs=1e-3)
    assert feed.vswr_radio[0] == pytest.approx(1.4011, abs=1e-4)
    assert feed.line_loss_db[0] == pytest.approx(3.3886, abs=1e-4)
    assert feed.one_way_loss_db[0] == pytest.approx(3.0, abs=1e-12)
    # the total from a matched radio adds the mismatch loss at the radio end (power balance)
    assert feed.total_feed_loss_db[0] == pytest.approx(
        3.3886 - 10 * math.log10(1 - 0.16706**2), abs=2e-4)


@given(mag=st.floats(0.0, 0.99), phase=st.floats(-math.pi, math.pi), length=st.floats(0.05, 30.0),
       loss=st.floats(0.0, 2.0), f=st.floats(1e6, 6e9))
def test_line_loss_matches_pozar_power_balance(mag, phase, length, loss, f):
    """Pozar 4th ed. eqs. 2.92-2.94 (lossy terminated line): P_in / P_L = (e^{2 al} - |G|^2 e^{-2 al}) / (1 - |G|^2)."""
    cab = fl.CableModel(length_m=length, velocity_factor=0.66, loss_db_per_m=loss)
    g = np.array([mag * np.exp(1j * phase)])
    feed = fl.feed_points(np.array([f]), g, cab, "radio", 50.0)
    al = float(cab.alpha_np_per_m(np.array([f]))[0]) * length
    ratio = (math.exp(2 * al) - mag**2 * math.exp(-2 * al)) / (1 - mag**2)
    assert feed.line_loss_db[0] == pytest.approx(10 * math.log10(ratio), abs=1e-9)


@given(mag=st.floats(0.01, 0.99), phase=st.floats(-math.pi, math.pi), length=st.floats(0.05, 30.0),
       loss=st.floats(0.0, 1.0))
def test_return_loss_improves_by_twice_the_one_way_loss(mag, phase, length, loss):
    """A matched cable of one-way loss A adds 2A to the return loss (common practice, no source)."""
    cab = fl.CableModel(length_m=length, velocity_factor=0.85, loss_db_per_m=loss)
    feed = fl.feed_points(np.array([915e6]), np.array([mag * np.exp(1j * phase)]), cab, "radio", 50.0)
    assert feed.return_loss_improvement_db[0] == pytest.approx(2 * feed.one_way_loss_db[0], abs=1e-9)
    assert feed.cable_share_db[0] == pytest.approx(2 * float(cab.matched_loss_db(915e6)), abs=1e-9)


# ---------------------------------------------------------------- scikit-rf cross-checks

@pytest.mark.parametrize("zc", [50.0, 75.0, 35.0])
def test_cable_two_port_equals_scikit_rf_line(zc):
    """Our closed-form line 2-port against skrf.media.DefinedGammaZ0(...).line with the same gamma."""
    freq = skrf.Frequency.from_f(np.linspace(50e6, 6e9, 101), unit="Hz")
    cab = fl.CableModel(length_m=1.7, velocity_factor=0.69, loss_db_per_m=0.8, dielectric_loss_db_per_m=0.3,
                        loss_ref_hz=2.4e9, z0_ohm=zc)
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=zc, gamma=cab.gamma_per_m(freq.f))
    ref = media.line(1.7, unit="m")
    np.testing.assert_allclose(cab.s_params(freq.f, 50.0), ref.s, atol=1e-12)


def test_connect_port_equals_scikit_rf_connect():
    """Attaching a (non-reciprocal, mismatched) 2-port to port 2 of a 3-port, against skrf's connect."""
    rng = np.random.default_rng(7)
    freq = skrf.Frequency.from_f(np.linspace(1e9, 2e9, 9), unit="Hz")
    s = _rand_s(rng, 9, 3)
    t = _rand_s(rng, 9, 2, 0.5)
    dev = skrf.Network(frequency=freq, s=s, z0=50)
    tn = skrf.Network(frequency=freq, s=t, z0=50)
    ref = skrf.network.connect(tn, 1, dev, 1)  # ports: t1, dev1, dev3
    perm = [1, 0, 2]
    np.testing.assert_allclose(fl.connect_port(s, t, 2), ref.s[:, perm][:, :, perm], atol=1e-12)


def test_deembed_is_the_inverse_for_a_general_two_port():
    """Removing a 2-port undoes adding it, for any port of an N-port; the 1-port case is the
    formula Gamma_L = (Gamma_in - S11) / (S21 S12 + S22 (Gamma_in - S11)) (derived from the
    cascade formula)."""
    rng = np.random.default_rng(3)
    s = _rand_s(rng, 11, 3)
    t = _rand_s(rng, 11, 2, 0.4)
    t[:, 1, 0] += 0.8
    t[:, 0, 1] += 0.6
    for port in (1, 2, 3):
        moved = fl.connect_port(s, t, port)
        back = fl.connect_port(moved, fl.invert_2port(t), port)
        np.testing.assert_allclose(back, s, atol=1e-12)
    g = s[:, 0, 0]
    g_in = fl.gamma_toward_radio(g, t)
    np.testing.assert_allclose(fl.gamma_toward_antenna(g_in, t), g, atol=1e-12)
    np.testing.assert_allclose(fl.connect_port(g_in.reshape(-1, 1, 1), fl.invert_2port(t), 1)[:, 0, 0], g,
                               atol=1e-12)


def test_move_network_round_trip_at_port_two():
    rng = np.random.default_rng(11)
    f = np.linspace(800e6, 1e9, 21)
    s = _rand_s(rng, 21, 2)
    cab = fl.CableModel(length_m=3.0, velocity_factor=0.66, loss_db_per_m=0.5, z0_ohm=60.0)
    up = fl.move_network(f, s, 2, cab, "radio", 50.0)
    down = fl.move_network(f, up.s, 2, cab, "antenna", 50.0)
    np.testing.assert_allclose(down.s, s, atol=1e-12)
    np.testing.assert_array_equal(up.s[:, 0, 0] == s[:, 0, 0], False)  # port 1 sees the cable's mismatch
    np.testing.assert_allclose(up.gamma, up.feed.gamma_radio, atol=1e-14)


# ---------------------------------------------------------------- identities

@given(length=st.floats(0.01, 10.0), zc=st.floats(10.0, 200.0), f=st.floats(1e6, 1e10))
def test_lossless_cable_conserves_power(length, zc, f):
    """Lossless 2-port: |S11|^2 + |S21|^2 = 1 (unitary S), also for a cable mismatched to Z0."""
    s = fl.CableModel(length_m=length, velocity_factor=0.7, loss_db_per_m=0.0, z0_ohm=zc).s_params(np.array([f]), 50.0)
    assert abs(s[0, 0, 0]) ** 2 + abs(s[0, 1, 0]) ** 2 == pytest.approx(1.0, abs=1e-12)
    assert abs(s[0, 1, 1]) ** 2 + abs(s[0, 0, 1]) ** 2 == pytest.approx(1.0, abs=1e-12)


def test_lossy_cable_is_passive_and_delay_is_a_lossless_matched_line():
    f = np.linspace(1e8, 6e9, 50)
    s = fl.CableModel(length_m=2, velocity_factor=0.8, loss_db_per_m=0.7, z0_ohm=93).s_params(f, 50.0)
    assert np.all(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2 < 1.0)
    line = fl.CableModel(length_m=0.3, velocity_factor=0.6, loss_db_per_m=0.0)
    np.testing.assert_allclose(fl.Delay(line.delay_s()).s_params(f, 50.0), line.s_params(f, 50.0), atol=1e-12)


def test_handbook_attenuation_scales_close_to_sqrt_f():
    """Handbook coax attenuation (typical 50-ohm coax table, from memory, +-15 %; tests/REFERENCES.md): 10.3 mm foam-PE
    4.1 dB/100 ft at 1 GHz scaled as sqrt(f) predicts the 2.4 GHz entry (6.6 dB/100 ft) within 15 %."""
    a_1g = 4.1 / 30.48  # dB/m
    pred = fl.matched_loss_db(2.4e9, 30.48, a_1g, 1e9)
    assert float(pred) == pytest.approx(6.6, rel=0.15)
    assert float(fl.matched_loss_db(4e9, 2.0, 0.5, 1e9, 0.25)) == pytest.approx(2 * (0.5 * 2 + 0.25 * 4))


# ---------------------------------------------------------------- measured cables

def test_measured_cable_interpolation_close_to_model():
    model = fl.CableModel(length_m=3.0, velocity_factor=0.66, loss_db_per_m=0.5, z0_ohm=52.0)
    coarse = np.linspace(700e6, 1.1e9, 81)
    cab = fl.MeasuredCable(f_hz=coarse, s=model.s_params(coarse, 50.0), z0_ohm=50.0)
    fine = np.linspace(800e6, 1e9, 333)
    np.testing.assert_allclose(cab.s_params(fine, 50.0), model.s_params(fine, 50.0), atol=2e-3)
    np.testing.assert_array_equal(cab.s_params(coarse, 50.0), model.s_params(coarse, 50.0))
    with pytest.raises(OutOfRangeError, match="covers"):
        cab.s_params(np.linspace(600e6, 1e9, 5), 50.0)


def test_flip_swaps_ports():
    t = np.array([[[0.1, 0.2], [0.3, 0.4]]], dtype=complex)
    f = fl.flip(t)
    assert f[0, 0, 0] == 0.4 and f[0, 1, 0] == 0.2 and f[0, 0, 1] == 0.3


# ---------------------------------------------------------------- warnings and flags

def test_deembedding_too_much_loss_flags_nonphysical_and_warns():
    f = np.linspace(900e6, 930e6, 11)
    measured = np.full(f.size, 0.5 + 0j)  # 6 dB return loss at the radio end
    cab = fl.CableModel(length_m=10, velocity_factor=0.66, loss_db_per_m=0.6)  # 2 x 6 dB two-way
    mv = fl.move_network(f, measured, 1, cab, "antenna", 50.0, name="m.s1p")
    assert mv.nonphysical_count == f.size
    assert np.all(np.abs(mv.gamma) > 1)
    assert any("non-physical" in w and "m.s1p" in w for w in mv.warnings)
    assert any("two-way loss" in w for w in mv.warnings)
    assert np.all(np.isnan(mv.feed.total_feed_loss_db))


def test_no_warning_for_a_short_low_loss_cable():
    f = np.linspace(900e6, 930e6, 11)
    cab = fl.CableModel(length_m=1, velocity_factor=0.66, loss_db_per_m=0.3)
    mv = fl.move_network(f, np.full(f.size, 0.2 + 0.1j), 1, cab, "antenna", 50.0)
    assert mv.warnings == () and mv.nonphysical_count == 0


def test_invert_refuses_a_cable_that_transmits_nothing():
    t = np.zeros((3, 2, 2), dtype=complex)
    with pytest.raises(UsageError, match="transmits"):
        fl.invert_2port(t)


@pytest.mark.parametrize("kw, parameter", [
    ({"length_m": -1, "velocity_factor": 0.66}, "length_m"),
    ({"length_m": math.inf, "velocity_factor": 0.66}, "length_m"),
    ({"length_m": 1, "velocity_factor": 0.0}, "velocity_factor"),
    ({"length_m": 1, "velocity_factor": 1.2}, "velocity_factor"),
    ({"length_m": 1, "velocity_factor": 1.5}, "velocity_factor"),
    ({"length_m": 1, "velocity_factor": math.nan}, "velocity_factor"),
    ({"length_m": 1, "velocity_factor": 0.66, "loss_db_per_m": -0.1}, "loss_db_per_m"),
    ({"length_m": 1, "velocity_factor": 0.66, "dielectric_loss_db_per_m": -0.1}, "dielectric_loss_db_per_m"),
    ({"length_m": 1, "velocity_factor": 0.66, "loss_ref_hz": 0}, "loss_ref_hz"),
    ({"length_m": 1, "velocity_factor": 0.66, "z0_ohm": 0}, "cable_z0_ohm"),
    ({"length_m": math.nan, "velocity_factor": 0.66}, "length_m"),
])
def test_cable_model_validates_in_core_terms(kw, parameter):
    """The core names its own fields; only the CLI's table turns them into flags."""
    with pytest.raises(UsageError) as info:
        fl.CableModel(**kw)
    assert info.value.parameter == parameter
    assert str(info.value).startswith(parameter) and "--" not in str(info.value)
    from matchtool.commands.options import PARAMETER_FLAGS

    assert info.value.message_for(PARAMETER_FLAGS).startswith(PARAMETER_FLAGS[parameter] + " ")


def test_cable_model_without_velocity_factor_gives_loss_but_no_phase():
    """A link budget needs only the loss: 2 m at 0.5 dB/m (sqrt f) + 0.25 dB/m (f) at 1 GHz, at
    4 GHz: 2 x (0.5 x 2 + 0.25 x 4) = 4 dB (derived)."""
    cab = fl.CableModel(length_m=2.0, loss_db_per_m=0.5, dielectric_loss_db_per_m=0.25)
    assert float(cab.loss_db(4e9)) == pytest.approx(4.0)
    assert float(cab.loss_db(4e9, length_m=1.0)) == pytest.approx(2.0)
    with pytest.raises(UsageError) as info:
        cab.s_params(np.array([1e9]), 50.0)
    assert info.value.parameter == "velocity_factor"


def test_results_are_frozen():
    cab = fl.CableModel(length_m=1, velocity_factor=0.66)
    with pytest.raises(dataclasses.FrozenInstanceError):
        cab.length_m = 2  # type: ignore[misc]
    feed = fl.feed_points(np.array([1e9]), np.array([0.1j]), cab, "radio", 50.0)
    with pytest.raises(dataclasses.FrozenInstanceError):
        feed.f_hz = np.array([2e9])  # type: ignore[misc]


def test_band_worst_uses_edges_and_masking_text():
    f = np.linspace(800e6, 1e9, 11)
    cab = fl.CableModel(length_m=1, velocity_factor=0.66, loss_db_per_m=0.5)
    fb = fl.band_frequencies(f, 905e6, 925e6)
    assert fb[0] == 905e6 and fb[-1] == 925e6 and np.all(np.diff(fb) > 0)
    g = 0.3 * np.exp(1j * np.linspace(0, 1, fb.size))
    w = fl.band_worst(fl.feed_points(fb, g, cab, "radio", 50.0))
    assert w.worst_return_loss_antenna_db == pytest.approx(-20 * math.log10(0.3))
    assert w.one_way_loss_max_db == pytest.approx(float(cab.matched_loss_db(925e6)))
    with pytest.raises(OutOfRangeError):
        fl.band_frequencies(f, 700e6, 900e6)
    assert masking_text(14.0, 11.0, 1.5) == ("14.0 dB return loss at the radio end, of which 2 x 1.5 dB is the "
                                                "cable; the antenna itself: 11.0 dB")


@given(zc=st.floats(20.0, 150.0), zl_re=st.floats(1.0, 300.0), zl_im=st.floats(-300.0, 300.0),
       length=st.floats(0.01, 5.0), loss=st.floats(0.0, 2.0), f=st.floats(1e7, 6e9))
def test_mismatched_lossy_line_input_impedance(zc, zl_re, zl_im, length, loss, f):
    """Pozar 4th ed. sec. 2.7, lossy-line input impedance (eq. number from memory, in 2.90-2.94):
    Z_in = Zc (Z_L + Zc tanh(gamma l)) / (Zc + Z_L tanh(gamma l)) for a
    lossy line of impedance Zc, seen in a 50-ohm system."""
    cab = fl.CableModel(length_m=length, velocity_factor=0.7, loss_db_per_m=loss, z0_ohm=zc)
    fa = np.array([f])
    zl = complex(zl_re, zl_im)
    th = np.tanh(cab.gamma_per_m(fa)[0] * length)
    z_in = zc * (zl + zc * th) / (zc + zl * th)
    g = fl.gamma_toward_radio(rf.gamma_from_impedance(np.array([zl]), 50.0), cab.s_params(fa, 50.0))
    assert complex(rf.impedance_ohm(g, 50.0)[0]) == pytest.approx(z_in, rel=1e-8, abs=1e-8)


def test_zero_length_and_zero_delay_are_the_identity():
    f = np.linspace(1e9, 2e9, 5)
    g = 0.3 * np.exp(1j * np.arange(5))
    for cab in (fl.CableModel(length_m=0.0, velocity_factor=0.66, loss_db_per_m=1.0), fl.Delay(0.0)):
        np.testing.assert_allclose(fl.gamma_toward_radio(g, cab.s_params(f, 50.0)), g, atol=1e-15)
    with pytest.raises(UsageError) as info:
        fl.Delay(-1e-12)
    assert info.value.parameter == "delay_s"


def test_coarse_measured_cable_is_warned_about():
    model = fl.CableModel(length_m=3.0, velocity_factor=0.66, loss_db_per_m=0.5)
    fine_grid = np.linspace(700e6, 1.1e9, 2001)  # 3 m at VF 0.66: 5.4 deg per 200 kHz step
    coarse = np.linspace(700e6, 1.1e9, 5)  # 100 MHz steps: 545 deg, aliased
    sweep_f = np.linspace(800e6, 1e9, 11)
    ok = fl.MeasuredCable(f_hz=fine_grid, s=model.s_params(fine_grid, 50.0), z0_ohm=50.0, path="fine.s2p")
    bad = fl.MeasuredCable(f_hz=coarse, s=model.s_params(coarse, 50.0), z0_ohm=50.0, path="coarse.s2p")
    assert fl.interpolation_warnings(ok, sweep_f) == []
    assert fl.interpolation_warnings(ok, fine_grid) == []
    (w,) = fl.interpolation_warnings(bad, sweep_f)
    assert "coarse.s2p" in w and "unreliable" in w


def test_masking_text_names_the_mismatch_of_a_cable_of_another_impedance():
    """A lossless 75-ohm quarter wave on a 50-ohm antenna: 2 x 0 dB of loss, yet the radio end
    sees 75^2/50 = 112.5 ohm (quarter-wave transformer; Pozar 4th ed. sec. 2.5, from memory), i.e. |Gamma| = 62.5/162.5."""
    lam = 0.7 * C0 / 1e9
    cab = fl.CableModel(length_m=lam / 4, velocity_factor=0.7, loss_db_per_m=0.0, z0_ohm=75.0)
    feed = fl.feed_points(np.array([1e9]), np.array([1e-9 + 0j]), cab, "radio", 50.0)
    rl_r = -20 * math.log10(62.5 / 162.5)
    assert feed.return_loss_radio_db[0] == pytest.approx(rl_r, abs=1e-6)
    text = masking_text(float(feed.return_loss_radio_db[0]), float(feed.return_loss_antenna_db[0]),
                           float(feed.dissipative_loss_db[0]))
    assert "of which 2 x 0.0 dB is the cable" in text
    # the radio end (8.3 dB) is worse than antenna (180 dB) + 2 x 0 dB: the direction is named, not a sign
    assert f"makes the radio end {180 - rl_r:.1f} dB worse than the 180.0 dB" in text
    assert masking_text(14.0, 11.0, 1.5).endswith("the antenna itself: 11.0 dB")


def test_lossless_75_ohm_line_dissipates_nothing_model_and_measured():
    """Lossless 2-port: |S11|^2 + |S21|^2 = 1 (physical identity), so a lossless 75-ohm line in a
    50-ohm system dissipates 0 dB although its |S21| is below 1; the masking sentence must not
    call its insertion loss "the cable"."""
    f = np.linspace(700e6, 1.1e9, 41)
    cab = fl.CableModel(length_m=3.0, velocity_factor=0.66, loss_db_per_m=0.0, z0_ohm=75.0)
    meas = fl.MeasuredCable(f_hz=f, s=cab.s_params(f, 50.0), z0_ohm=50.0, path="c75.s2p")
    g = 0.4 * np.exp(1j * np.linspace(0, 3, f.size))
    for c in (cab, meas):
        feed = fl.feed_points(f, g, c, "radio", 50.0)
        assert np.max(feed.one_way_loss_db) > 0.5  # insertion loss: the mismatch reflects power
        np.testing.assert_allclose(feed.dissipative_loss_db, 0.0, atol=1e-9)
        np.testing.assert_allclose(feed.cable_share_db, 0.0, atol=1e-9)
        k = int(np.argmax(feed.one_way_loss_db))
        text = masking_text(float(feed.return_loss_radio_db[k]), float(feed.return_loss_antenna_db[k]),
                               float(feed.dissipative_loss_db[k]))
        assert "of which 2 x 0.0 dB is the cable" in text
        rest = float(feed.return_loss_radio_db[k] - feed.return_loss_antenna_db[k])
        way = "better" if rest > 0 else "worse"
        assert f"makes the radio end {abs(rest):.1f} dB {way} than" in text
    lossy = fl.CableModel(length_m=3.0, velocity_factor=0.66, loss_db_per_m=0.5)
    feed = fl.feed_points(f, g, lossy, "radio", 50.0)  # matched cable: dissipative = insertion loss
    np.testing.assert_allclose(feed.dissipative_loss_db, feed.one_way_loss_db, atol=1e-12)


def test_masking_text_direction_and_no_negative_zero():
    # antenna 16.0, loss 1.9 each way: alone 19.8; the radio end at 18.4 is 1.4 dB worse
    assert masking_text(18.4, 16.0, 1.9).endswith(
        "; the cable's own reflection (an impedance mismatch) makes the radio end 1.4 dB worse than the "
        "19.8 dB that the antenna and the cable's loss alone would give")
    assert "1.0 dB better than the 19.8 dB" in masking_text(20.8, 16.0, 1.9)
    text = masking_text(-1e-17, -1e-17, -1e-17)
    assert "-0" not in text and text.startswith("0.0 dB return loss")


def test_total_feed_loss_is_the_transducer_loss_from_a_matched_source():
    """Independent check of G_T = |S21|^2 (1 - |GL|^2) / |1 - S22 GL|^2 (Pozar 4th ed. sec. 12.1,
    Gamma_s = 0; eq. 12.8 from memory): a 50-ohm source (EMF Vs) drives a lossy 75-ohm line (ABCD
    matrix of a line, Pozar 4th ed. Table 4.1: cosh, Zc sinh, sinh / Zc, cosh) into Z_L; power into
    the load over the source's available power |Vs|^2 / (8 Rs)."""
    f = np.array([915e6])
    cab = fl.CableModel(length_m=2.3, velocity_factor=0.7, loss_db_per_m=0.6, z0_ohm=75.0)
    zl = 30.0 - 45.0j
    gl = rf.gamma_from_impedance(np.array([zl]), 50.0)
    feed = fl.feed_points(f, gl, cab, "radio", 50.0)
    gl_line = complex(cab.gamma_per_m(f)[0]) * 2.3
    a, b = np.cosh(gl_line), 75.0 * np.sinh(gl_line)
    c, d = np.sinh(gl_line) / 75.0, np.cosh(gl_line)
    v2 = 1.0
    i2 = v2 / zl
    v1, i1 = a * v2 + b * i2, c * v2 + d * i2
    vs = v1 + 50.0 * i1
    p_load = 0.5 * (v2 * np.conj(i2)).real
    p_avail = abs(vs) ** 2 / (8 * 50.0)
    assert feed.total_feed_loss_db[0] == pytest.approx(-10 * math.log10(p_load / p_avail), abs=1e-9)
    # and it is line loss + mismatch loss at the radio end (power bookkeeping)
    assert feed.total_feed_loss_db[0] == pytest.approx(feed.line_loss_db[0] + feed.mismatch_loss_radio_db[0], abs=1e-9)


def test_analyze_is_the_one_entry_point_for_a_network():
    """analyze() on an skrf.Network: the moved network equals scikit-rf's own cascade of a
    DefinedGammaZ0 line (lossy, 75 ohm) in front of the load, and the band worst case includes the
    band edges (bands.band_samples)."""
    f = np.linspace(800e6, 1e9, 201)
    freq = skrf.Frequency.from_f(f, unit="Hz")
    g = 0.3 * np.exp(1j * np.linspace(0, 4, f.size))
    ant = skrf.Network(frequency=freq, s=g.reshape(-1, 1, 1), z0=50, name="ant")
    cab = fl.CableModel(length_m=1.5, velocity_factor=0.7, loss_db_per_m=0.4, z0_ohm=75.0)
    r = fl.analyze(ant, cab, "radio", bands=[(902e6, 928e6)], at_hz=[915e6])
    line = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=75.0, gamma=cab.gamma_per_m(f)).line(1.5, unit="m")
    np.testing.assert_allclose(r.network.s, (line ** ant).s, atol=1e-12)
    assert isinstance(r.network, skrf.Network)
    (b,) = r.bands
    assert (b.f_low_hz, b.f_high_hz) == (902e6, 928e6) and not r.whole_sweep
    assert b.one_way_loss_max_db >= float(cab.matched_loss_db(928e6)) - 1e-12
    assert r.feed_at is not None and r.feed_at.f_hz.tolist() == [915e6]
    assert r.z0_ohm == 50.0 and r.port == 1 and r.first_nonfinite_f_hz is None
    assert isinstance(r.warnings, tuple)
    assert band_masking(b).startswith(f"{round(b.worst_return_loss_radio_db, 1):.1f} dB return loss")
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.port = 2  # type: ignore[misc]
    with pytest.raises(OutOfRangeError):
        fl.analyze(ant, cab, "radio", bands=[(700e6, 900e6)])
    with pytest.raises(UsageError) as info:
        fl.analyze(ant, cab, "sideways")
    assert info.value.parameter == "toward"


def test_measured_cable_as_a_scikit_rf_network_equals_the_file(tmp_path):
    """A 2-port skrf.Network is a measured cable like its Touchstone file (same MeasuredCable path)."""
    from matchtool.sweep import touchstone_text

    f = np.linspace(800e6, 1e9, 201)
    m = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="Hz"), z0=50.0,
                                  gamma=0.01 + 2j * np.pi * f / (0.66 * 299_792_458.0))
    cable = m.line(3.0, "m")
    ant = m.load(0.3 + 0.2j)
    path = tmp_path / "cable.s2p"
    path.write_text(touchstone_text(f, cable.s, 50.0))
    by_net = fl.analyze(ant, cable, toward="radio")
    by_file = fl.analyze(ant, str(path), toward="radio")
    assert isinstance(by_net.cable, fl.MeasuredCable)
    np.testing.assert_allclose(by_net.network.s, by_file.network.s, atol=1e-9)
    # and the result is scikit-rf's own cascade of the cable into the load
    np.testing.assert_allclose(by_net.network.s[:, 0, 0], (cable ** ant).s[:, 0, 0], atol=1e-9)
    flipped = fl.analyze(ant, cable, toward="radio", flip_cable=True)
    assert flipped.cable.flipped
    from matchtool.errors import InputError

    with pytest.raises(InputError, match="2-port"):  # a 1-port is not a cable: one line, not an AttributeError
        fl.analyze(ant, ant, toward="radio")

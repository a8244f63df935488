"""Core checks of the time-domain view: synthetic cables built with scikit-rf (DefinedGammaZ0 lines of
known VF and loss, lumped discontinuities and loads at known positions), scikit-rf's own
impulse_response / time_gate as an independent cross-check, and the DFT's time relations."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import skrf

from matchtool import feedline as fl
from matchtool import locate as lc
from matchtool.errors import OutOfRangeError, UsageError

C0 = 299_792_458.0
Z0 = 50.0


def media(f, vf, loss_db_per_m=0.0, diel=0.0):
    """A 50-ohm cable medium of velocity factor vf and loss (dB/m at 1 GHz, sqrt(f) + f), built by
    scikit-rf from the propagation constant alpha + j 2 pi f / (vf c0) (Pozar 4th ed. sec. 2.1)."""
    freq = skrf.Frequency.from_f(f, unit="Hz")
    alpha = (loss_db_per_m * np.sqrt(f / 1e9) + diel * f / 1e9) / (20 / math.log(10))
    return skrf.media.DefinedGammaZ0(freq, z0_port=Z0, z0=Z0, gamma=alpha + 2j * np.pi * f / (vf * C0))


def cable_model(vf, loss=0.0, diel=0.0):
    return fl.CableModel(length_m=0.0, velocity_factor=vf, loss_db_per_m=loss, dielectric_loss_db_per_m=diel)


def gamma_r(r_ohm):
    return (r_ohm - Z0) / (r_ohm + Z0)


def series_r_gamma(r_ohm):
    """A series resistor in a matched 50-ohm line reflects R / (R + 2 Z0) and passes 2 Z0 / (2 Z0 + R)
    (derived: the resistor in series with the matched line's Z0)."""
    return r_ohm / (r_ohm + 2 * Z0), 2 * Z0 / (2 * Z0 + r_ohm)


# ------------------------------------------------------------------------- windows and relations

def test_window_sidelobes_and_widths_match_harris():
    """Harris, 'On the use of windows for harmonic analysis with the DFT', Proc. IEEE 66(1), 1978,
    Table 1 (values from memory): rectangular -13 dB highest sidelobe, 6-dB bandwidth 1.21 bins;
    Hann -32 dB, 2.00 bins. Kaiser beta 6 (alpha = 6 / pi = 1.9) sits just above Harris's
    Kaiser-Bessel alpha 2.0 (-46 dB, 2.00 bins)."""
    rect, hann, kai = lc.window_info("rect"), lc.window_info("hann"), lc.window_info("kaiser")
    assert rect.sidelobe_db == pytest.approx(-13.26, abs=0.1) and rect.mainlobe_6db_bins == pytest.approx(1.21, abs=0.01)
    assert rect.widening == pytest.approx(1.0, abs=1e-3)
    assert hann.sidelobe_db == pytest.approx(-31.5, abs=0.3) and hann.mainlobe_6db_bins == pytest.approx(2.00, abs=0.02)
    assert -47 < kai.sidelobe_db < -42 and 1.85 < kai.mainlobe_6db_bins < 2.05
    assert lc.window_info("kaiser13").sidelobe_db < -90  # a deeper window is wider
    assert lc.window_info("kaiser13").widening > kai.widening > rect.widening
    with pytest.raises(UsageError) as info:
        lc.window_info("triangle")
    assert info.value.parameter == "window"


@pytest.mark.parametrize("vf", [0.66, 0.85])
def test_resolution_and_alias_free_range(vf):
    """Range resolution c0 VF / (2 span) x window factor and alias-free range c0 VF / (2 step)
    (common practice; the time relations of the DFT, Oppenheim & Schafer, Discrete-Time Signal
    Processing, 3rd ed., ch. 8). Band-pass: span = f_stop - f_start; low-pass: the spectrum is
    mirrored about 0 Hz, span = 2 f_stop."""
    f = np.linspace(500e6, 2.5e9, 801)
    ant = media(f, vf).line(3, "m") ** media(f, vf).load(0.5)
    r = lc.analyze(ant, velocity_factor=vf, window="hann")
    assert r.mode == "bandpass"
    assert r.max_range_m == pytest.approx(C0 * vf / (2 * 2.5e6), rel=1e-9)
    assert r.resolution_base_m == pytest.approx(C0 * vf / (2 * 2e9), rel=1e-9)
    assert r.resolution_m == pytest.approx(r.resolution_base_m * lc.window_info("hann").widening, rel=1e-12)
    f2 = np.arange(1, 601) * 5e6  # harmonic: 5 MHz .. 3 GHz in 5 MHz steps
    r2 = lc.analyze(media(f2, vf).line(3, "m") ** media(f2, vf).load(0.5), velocity_factor=vf)
    assert r2.mode == "lowpass-impulse" and r2.extrapolated_points == 1
    assert r2.resolution_base_m == pytest.approx(C0 * vf / (2 * 2 * 3e9), rel=1e-9)
    assert r2.max_range_m == pytest.approx(C0 * vf / (2 * 5e6), rel=1e-9)


# ------------------------------------------------------------------------- synthetic cables

CASES = [
    # (f grid, vf, loss dB/m, dielectric, window, mode)
    (np.linspace(300e6, 3e9, 1201), 0.66, 0.0, 0.0, "kaiser", "auto"),
    (np.linspace(300e6, 3e9, 1201), 0.85, 0.4, 0.1, "hann", "bandpass"),
    (np.arange(1, 401) * 7.5e6, 0.7, 0.3, 0.0, "kaiser", "lowpass-impulse"),
    (np.arange(1, 401) * 7.5e6, 0.69, 0.5, 0.2, "rect", "auto"),
    (np.linspace(1e9, 6e9, 2001), 0.8, 0.2, 0.0, "kaiser13", "auto"),
]


@pytest.mark.parametrize("f, vf, loss, diel, window, mode", CASES)
def test_peaks_at_known_distances_with_known_return_loss(f, vf, loss, diel, window, mode):
    """Series resistor (22 ohm) at d1, resistive load (120 ohm) at d2 behind a lossy line: each peak
    within a quarter of the resolution of its true distance; the resistor's return loss within 1 dB
    of R / (R + 2 Z0), the load's within 1 dB of |Gamma_L| t^2 (t the resistor's transmission,
    derived above) after loss compensation."""
    m = media(f, vf, loss, diel)
    d1, d2 = 1.7, 6.3
    net = m.line(d1, "m") ** m.resistor(22.0) ** m.line(d2 - d1, "m") ** m.load(gamma_r(120.0))
    r = lc.analyze(net, cable=cable_model(vf, loss, diel), window=window, mode=mode, max_distance_m=9.0)
    g1, t1 = series_r_gamma(22.0)
    expect = {d1: g1, d2: abs(gamma_r(120.0)) * t1**2}
    assert len(r.peaks) >= 2
    for d, g in expect.items():
        pk = min(r.peaks, key=lambda p: abs(p.distance_m - d))
        assert abs(pk.distance_m - d) <= r.resolution_m / 4, (d, pk)
        assert pk.return_loss_db == pytest.approx(-20 * math.log10(g), abs=1.0), (d, pk)
    top = sorted(r.peaks, key=lambda p: -p.reflection_mag)
    assert list(r.peaks) == top  # strongest first
    assert all(p.distance_m <= 9.0 for p in r.peaks)


def test_loss_compensation_restores_a_far_load():
    """A 75-ohm load 12 m down a 0.6 dB/m (at 1 GHz) cable: seen at the analyzer it is some
    2 x 12 x 0.6 x sqrt(f/1 GHz) dB weaker (Pozar 4th ed. eq. 2.90 ff., Gamma_in = Gamma_L e^{-2 gamma l});
    compensated, its return loss is the load's own, 20 log10(125 / 25) = 13.98 dB (derived), within 1 dB."""
    f = np.linspace(200e6, 2e9, 1801)
    m = media(f, 0.78, 0.6)
    r = lc.analyze(m.line(12, "m") ** m.load(gamma_r(75.0)), cable=cable_model(0.78, 0.6))
    pk = r.peaks[0]
    assert pk.distance_m == pytest.approx(12.0, abs=r.resolution_m / 4)
    assert pk.return_loss_db == pytest.approx(20 * math.log10(125 / 25), abs=1.0)
    assert pk.raw_return_loss_db - pk.return_loss_db == pytest.approx(pk.two_way_loss_db, abs=1e-9)
    # at the band's centre frequency 1.1 GHz the two-way loss is 2 x 12 x 0.6 x sqrt(1.1) = 15.1 dB
    assert pk.two_way_loss_db == pytest.approx(2 * 12 * 0.6 * math.sqrt(1.1), abs=1.5)
    lossless = lc.analyze(m.line(12, "m") ** m.load(gamma_r(75.0)), velocity_factor=0.78)
    assert not lossless.loss_compensated
    assert lossless.peaks[0].return_loss_db == pytest.approx(pk.raw_return_loss_db, abs=0.01)


def test_distance_agrees_with_scikit_rf_impulse_response():
    """Independent cross-check: scikit-rf's own impulse_response (Hamming window, its default) on the
    same network puts the load's round trip at the same time."""
    f = np.arange(1, 1001) * 3e6
    vf = 0.66
    m = media(f, vf, 0.2)
    net = m.line(0.8, "m") ** m.shunt_capacitor(0.3e-12) ** m.line(7.2, "m") ** m.load(gamma_r(20.0))
    ours = lc.analyze(net, cable=cable_model(vf, 0.2))
    ext = net.extrapolate_to_dc(kind="linear")
    t, h = ext.impulse_response(pad=4000)
    far = t > 2 * 4.0 / (vf * C0)
    t_far = t[far][int(np.argmax(np.abs(h[far])))]
    d_skrf = vf * C0 * t_far / 2
    pk = min(ours.peaks, key=lambda p: abs(p.distance_m - 8.0))
    assert pk.distance_m == pytest.approx(d_skrf, abs=ours.resolution_m / 4)
    assert pk.distance_m == pytest.approx(8.0, abs=ours.resolution_m / 4)


def test_close_reflections_merge_below_the_resolution_and_split_above():
    """Two equal series resistors: 1.5 resolutions apart they are two peaks, 0.4 apart one
    (the resolution is what it says; common practice, no source)."""
    f = np.linspace(500e6, 1.5e9, 1001)
    vf = 0.7
    res = C0 * vf / (2 * 1e9)  # rectangular window: widening 1
    m = media(f, vf)

    def two(sep):
        net = m.line(2.0, "m") ** m.resistor(15.0) ** m.line(sep, "m") ** m.resistor(15.0) ** m.line(3, "m") ** m.match()
        return lc.analyze(net, velocity_factor=vf, window="rect", max_distance_m=4.5)

    split = [p for p in two(1.5 * res).peaks if 1.8 < p.distance_m < 2.6]
    assert len(split) == 2
    merged = [p for p in two(0.4 * res).peaks if 1.8 < p.distance_m < 2.6]
    assert len(merged) == 1


def test_step_mode_tells_capacitive_from_inductive_and_impedance_steps():
    """Low-pass step: a shunt C reflects about -j omega C Z0 / 2 (a dip in the step), a series L
    +j omega L / (2 Z0) (a bump), a load above Z0 a lasting step up, below Z0 a step down (derived;
    common practice of time-domain reflectometry, no source)."""
    f = np.arange(1, 601) * 5e6
    vf = 0.7
    m = media(f, vf, 0.1)
    net = (m.line(1.0, "m") ** m.shunt_capacitor(0.4e-12) ** m.line(1.5, "m") ** m.inductor(1.5e-9)
           ** m.line(2.0, "m") ** m.load(gamma_r(100.0)))
    r = lc.analyze(net, cable=cable_model(vf, 0.1), mode="lowpass-step", max_distance_m=7.0)
    kinds = {round(p.distance_m, 1): p.kind for p in r.peaks[:3]}
    assert kinds == {1.0: "capacitive", 2.5: "inductive", 4.5: "higher_impedance"}, kinds
    assert r.step is not None and r.step.shape == r.distance_m.shape
    low = lc.analyze(m.line(3.0, "m") ** m.load(gamma_r(25.0)), velocity_factor=vf, mode="lowpass-step")
    assert low.peaks[0].kind == "lower_impedance"
    # the step settles at the load's Gamma, -1/3 (derived), behind the reflection
    k = int(np.searchsorted(low.distance_m, 3.0 + 5 * low.resolution_m))
    assert low.step[k] == pytest.approx(-1 / 3, abs=0.02)


# ------------------------------------------------------------------------- gating

@pytest.mark.parametrize("r_load, window", [(20.0, "kaiser"), (150.0, "hann"), (90.0, "rect")])
def test_gate_keeps_the_load_and_drops_the_connector(r_load, window):
    """A known resistive load 5 m behind a lossy cable with a connector discontinuity (shunt 0.8 pF
    at 0.3 m, and a 10-ohm series resistor at 0.5 m): gated around the load and compensated for the
    two-way loss, the return loss is the load's own within 1 dB outside the stated edge regions.
    The connector's own two-way transmission |S21|^2 stays in the gated reflection (it is in front
    of the load); it is taken from scikit-rf's cascade of the connector alone."""
    f = np.linspace(600e6, 2.6e9, 1601)
    vf, loss = 0.75, 0.25
    m = media(f, vf, loss)
    lossless = media(f, vf)
    conn = lossless.shunt_capacitor(0.8e-12) ** lossless.line(0.2, "m") ** lossless.resistor(10.0)
    through = -20 * np.log10(np.abs(conn.s[:, 1, 0] * conn.s[:, 0, 1]))  # two-way, dB
    net = (m.line(0.3, "m") ** m.shunt_capacitor(0.8e-12) ** m.line(0.2, "m") ** m.resistor(10.0)
           ** m.line(4.5, "m") ** m.load(gamma_r(r_load)))
    r = lc.analyze(net, cable=cable_model(vf, loss), window=window, gate_m=(4.0, 6.5))
    g = r.gate
    assert isinstance(g.network, skrf.Network) and g.network.nports == 1
    np.testing.assert_allclose(g.network.f, f)
    rl = -20 * np.log10(np.abs(g.network.s[:, 0, 0])) - 2 * fl.matched_loss_db(f, 5.0, loss) - through
    mid = (f > f[0] + g.edge_hz) & (f < f[-1] - g.edge_hz)
    assert mid.sum() > 0.5 * f.size
    want = -20 * math.log10(abs(gamma_r(r_load)))
    assert np.max(np.abs(rl[mid] - want)) < 1.0
    assert g.worst_return_loss_after_compensated_db - float(np.min(through[mid])) == pytest.approx(want, abs=1.0)
    assert g.compensated_at_m == pytest.approx(5.0, abs=r.resolution_m / 4)
    # before gating the connector's echoes ripple the return loss by more than that
    rl_before = -20 * np.log10(np.abs(net.s[:, 0, 0])) - 2 * fl.matched_loss_db(f, 5.0, loss) - through
    assert np.max(np.abs(rl_before[mid] - want)) > 1.0
    # scikit-rf's own gate (its default Kaiser window, 'fft' method) on the same network agrees
    # in the middle of the band (an independent cross-check, within 1 dB)
    theirs = skrf.time.time_gate(net, start=g.start_s, stop=g.stop_s, t_unit="s")
    rl_theirs = -20 * np.log10(np.abs(theirs.s[:, 0, 0])) - 2 * fl.matched_loss_db(f, 5.0, loss) - through
    centre = (f > 1.2e9) & (f < 2.0e9)
    assert np.max(np.abs(rl[centre] - rl_theirs[centre])) < 1.0


def test_gate_in_time_equals_gate_in_distance_and_whole_range_gate_is_identity():
    f = np.linspace(800e6, 1.8e9, 1001)
    vf = 0.66
    m = media(f, vf)
    net = m.line(0.4, "m") ** m.resistor(12.0) ** m.line(2.6, "m") ** m.load(gamma_r(30.0))
    by_m = lc.analyze(net, velocity_factor=vf, gate_m=(2.5, 3.6))
    t = (2 * 2.5 / (vf * C0), 2 * 3.6 / (vf * C0))  # round trip (derived: t = 2 d / (VF c0))
    by_s = lc.analyze(net, velocity_factor=vf, gate_s=t)
    np.testing.assert_allclose(by_s.gate.network.s, by_m.gate.network.s, atol=1e-12)
    assert by_s.gate.start_m == pytest.approx(2.5) and by_s.gate.stop_m == pytest.approx(3.6)
    # a gate over (almost) the whole alias-free range keeps everything in the middle of the band
    whole = lc.analyze(net, velocity_factor=vf, gate_m=(0.0, 0.999 * by_m.max_range_m))
    mid = (f > 1.0e9) & (f < 1.6e9)
    np.testing.assert_allclose(whole.gate.network.s[mid, 0, 0], net.s[mid, 0, 0], atol=0.02)


def test_gate_band_metrics_and_refusals():
    f = np.linspace(800e6, 1.8e9, 501)
    vf = 0.7
    m = media(f, vf)
    net = m.line(3, "m") ** m.load(0.3)
    r = lc.analyze(net, velocity_factor=vf, gate_m=(2.5, 3.5), band=(1.2e9, 1.4e9))
    assert (r.gate.f_low_hz, r.gate.f_high_hz) == (1.2e9, 1.4e9) and not r.gate.band_in_edge
    edge = lc.analyze(net, velocity_factor=vf, gate_m=(2.5, 3.5), band=(800e6, 1.4e9))
    assert edge.gate.band_in_edge and any("edge" in w for w in edge.warnings)
    with pytest.raises(OutOfRangeError):
        lc.analyze(net, velocity_factor=vf, gate_m=(2.5, 3.5), band=(700e6, 1.4e9))
    with pytest.raises(OutOfRangeError) as info:
        lc.analyze(net, velocity_factor=vf, gate_m=(2.5, 1e4))
    assert info.value.parameter == "gate"
    with pytest.raises(UsageError) as info:
        lc.analyze(net, velocity_factor=vf, gate_m=(3.5, 2.5))
    assert info.value.parameter == "gate"


# ------------------------------------------------------------------------- sweeps and errors

def test_sweep_grids_and_modes():
    vf = 0.7
    f = np.linspace(800.3e6, 1e9, 201)  # 800.3 MHz is 801.5 steps: not harmonic
    net = media(f, vf).line(2, "m") ** media(f, vf).load(0.4)
    assert lc.analyze(net, velocity_factor=vf).mode == "bandpass"
    with pytest.raises(UsageError) as info:
        lc.analyze(net, velocity_factor=vf, mode="lowpass-step")
    assert info.value.parameter == "mode"
    with pytest.raises(UsageError) as info:
        lc.analyze(net, velocity_factor=vf, mode="sideways")
    assert info.value.parameter == "mode"
    uneven = np.sort(np.concatenate([f[:100], f[101:], [f[100] + 1e5]]))
    bad = skrf.Network(frequency=skrf.Frequency.from_f(uneven, unit="Hz"), s=np.full(uneven.size, 0.1 + 0j), z0=50)
    with pytest.raises(UsageError, match="evenly spaced"):
        lc.analyze(bad, velocity_factor=vf)
    with pytest.raises(UsageError) as info:
        lc.analyze(net)
    assert info.value.parameter == "velocity_factor"
    with pytest.raises(UsageError) as info:
        lc.analyze(net, velocity_factor=1.5)
    assert info.value.parameter == "velocity_factor"
    # a harmonic sweep far from 0 Hz: low-pass refused when the extrapolation would be more than
    # 10 % of the transform's points (100 of 301 here), suggesting band-pass
    fh = np.arange(100, 301) * 5e6
    neth = media(fh, vf).line(2, "m") ** media(fh, vf).load(0.4)
    assert lc.analyze(neth, velocity_factor=vf).mode == "bandpass"
    for mode in ("lowpass-impulse", "lowpass-step"):
        with pytest.raises(UsageError) as info:
            lc.analyze(neth, velocity_factor=vf, mode=mode)
        assert info.value.parameter == "mode" and "--mode bandpass" in str(info.value.expected)
    # the boundary (derived): 201 points from k0 steps: k0 <= 0.1 (201 + k0) holds up to k0 = 22
    for k0, allowed in ((22, True), (23, False)):
        fk = np.arange(k0, k0 + 201) * 5e6
        netk = media(fk, vf).line(2, "m") ** media(fk, vf).load(0.4)
        if allowed:
            lp = lc.analyze(netk, velocity_factor=vf, mode="lowpass-impulse")
            assert lp.extrapolated_points == k0 and any("extrapolates" in w for w in lp.warnings)
        else:
            with pytest.raises(UsageError):
                lc.analyze(netk, velocity_factor=vf, mode="lowpass-impulse")


def test_result_is_frozen_and_trace_is_sampled_keeping_peaks():
    f = np.arange(1, 10002) * 300e3  # 10,001 points
    vf = 0.8
    m = media(f, vf, 0.1)
    net = m.line(25, "m") ** m.load(gamma_r(200.0))
    r = lc.analyze(net, cable=cable_model(vf, 0.1))
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.mode = "x"  # type: ignore[misc]
    assert r.trace_distance_m.size <= lc.TRACE_POINTS < r.distance_m.size
    assert np.max(r.trace_reflection_mag) == pytest.approx(np.max(r.reflection_mag))
    assert r.peaks[0].distance_m == pytest.approx(25.0, abs=r.resolution_m / 4)
    assert isinstance(r.warnings, tuple)


def test_floor_option_and_peak_count():
    f = np.linspace(500e6, 2.5e9, 801)
    vf = 0.7
    m = media(f, vf)
    net = m.line(1, "m") ** m.resistor(2.0) ** m.line(2, "m") ** m.load(gamma_r(150.0))
    everything = lc.analyze(net, velocity_factor=vf, floor_return_loss_db=60)
    weak = -20 * math.log10(series_r_gamma(2.0)[0])  # 34.2 dB (derived)
    assert any(abs(p.distance_m - 1.0) < 0.05 for p in everything.peaks)
    strict = lc.analyze(net, velocity_factor=vf, floor_return_loss_db=weak - 5)
    assert not any(abs(p.distance_m - 1.0) < 0.05 for p in strict.peaks)
    assert len(lc.analyze(net, velocity_factor=vf, max_peaks=1).peaks) == 1
    with pytest.raises(UsageError) as info:
        lc.analyze(net, velocity_factor=vf, floor_return_loss_db=-3)
    assert info.value.parameter == "floor_return_loss_db"


@pytest.mark.parametrize("f", [np.arange(1, 401) * 5e6, np.linspace(700e6, 2.7e9, 401)], ids=["lowpass", "bandpass"])
def test_a_load_at_the_reference_plane_is_found_at_zero(f):
    """An antenna measured without any cable (a 100-ohm load, Gamma 1/3, derived) sits at 0 m: the
    transform is periodic, so the peak at the first sample is found like any other."""
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=np.full(f.size, 1 / 3 + 0j), z0=50)
    r = lc.analyze(net, velocity_factor=0.7)
    assert r.peaks and r.peaks[0].distance_m == pytest.approx(0.0, abs=r.resolution_m / 4)
    assert r.peaks[0].return_loss_db == pytest.approx(-20 * math.log10(1 / 3), abs=1.0)


def test_a_very_lossy_long_view_does_not_overflow():
    """3 dB/m over a 300 m view is 1,800 dB two-way at the far end: the compensation stays finite
    (log-sum-exp), is warned about, and the near load is still right."""
    f = np.arange(1, 1001) * 1e6
    m = media(f, 0.66, 3.0)
    r = lc.analyze(m.line(2, "m") ** m.load(gamma_r(150.0)), cable=cable_model(0.66, 3.0))
    assert np.isfinite(r.reflection_mag).all() and any("compensation" in w for w in r.warnings)
    pk = r.peaks[0]
    assert pk.distance_m == pytest.approx(2.0, abs=r.resolution_m / 4)
    assert pk.return_loss_db == pytest.approx(-20 * math.log10(0.5), abs=1.0)


@pytest.mark.parametrize("window", lc.WINDOWS)
@pytest.mark.parametrize("f", [np.arange(1, 801) * 3e6, np.linspace(400.3e6, 2.8e9, 1201)], ids=["lowpass", "bandpass"])
def test_nothing_is_listed_that_is_not_there(window, f):
    """Every listed reflection is one of the two discontinuities or one of their echoes
    (d2 + k (d2 - d1), multiple reflections between them: real, and where the physics puts them),
    within a quarter of the resolution: window sidelobes, skirts and the lossy line's dispersive
    tail are not listed."""
    vf, loss = 0.72, 0.3
    m = media(f, vf, loss)
    d1, d2 = 1.4, 4.9
    net = m.line(d1, "m") ** m.resistor(18.0) ** m.line(d2 - d1, "m") ** m.load(gamma_r(22.0))
    r = lc.analyze(net, cable=cable_model(vf, loss), window=window)
    where = [d1, d2] + [d2 + k * (d2 - d1) for k in range(1, 8)]
    assert r.peaks
    for p in r.peaks:
        assert min(abs(p.distance_m - x) for x in where) <= r.resolution_m / 4, (p, r.resolution_m)
    for d in (d1, d2):
        assert min(abs(p.distance_m - d) for p in r.peaks) <= r.resolution_m / 4


def test_gate_beyond_half_the_alias_free_range():
    """scikit-rf gates on t in [-T/2, T/2); a gate further out is moved there by a linear phase and
    back (a circular shift, exact): a load at 70 % of the alias-free range, behind a connector
    echo, gated, is the load alone in the middle of the band (|Gamma| 0.25, derived)."""
    f = np.linspace(800e6, 1.2e9, 401)  # 1 MHz steps: 104.9 m alias-free at VF 0.7
    vf = 0.7
    m = media(f, vf)
    far = 0.7 * C0 * vf / (2 * 1e6)
    net = m.line(0.5, "m") ** m.resistor(8.0) ** m.line(far - 0.5, "m") ** m.load(gamma_r(83.333333))
    r = lc.analyze(net, velocity_factor=vf, gate_m=(far - 3.0, far + 3.0))
    mid = (f > f[0] + r.gate.edge_hz) & (f < f[-1] - r.gate.edge_hz)
    t2 = series_r_gamma(8.0)[1] ** 2
    np.testing.assert_allclose(np.abs(r.gate.network.s[mid, 0, 0]), 0.25 * t2, rtol=0.05)

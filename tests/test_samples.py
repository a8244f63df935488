"""The bundled sample sweeps: reproducible from tools/make_samples.py, loadable, and true to the
scenario that sample_sweeps/README.md tells (synthetic demo data, generated from circuit models)."""

from __future__ import annotations

import importlib.util
import math

import numpy as np
import pytest
from helpers import ROOT

from matchtool import reflection as rf
from matchtool.bands import band_samples
from matchtool.feedline import matched_loss_db
from matchtool.summary import summarize
from matchtool.sweep import load

SAMPLES = ROOT / "sample_sweeps"
ISM_BAND_HZ = (902e6, 928e6)  # US 915 MHz ISM band edges (47 CFR 15.247; from memory)


def _generator():
    spec = importlib.util.spec_from_file_location("make_samples", ROOT / "tools" / "make_samples.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _worst_rl_db(sweep, f_low_hz: float, f_high_hz: float) -> tuple[float, float]:
    """Worst return loss over a band (edges interpolated) and where it is."""
    f, rl = band_samples(sweep.f_hz, rf.return_loss_db(sweep.gamma), f_low_hz, f_high_hz)
    k = int(np.argmin(rl))
    return float(rl[k]), float(f[k])


def _sample(name: str, port: int = 1):
    return load(SAMPLES / name, port=port)


def test_regenerated_files_are_byte_identical(tmp_path):
    gen = _generator()
    assert gen.main(["--out", str(tmp_path)]) == 0
    made = sorted(p.name for p in tmp_path.iterdir())
    # every committed sweep comes from the generator (spec and budget examples are hand-written TOML)
    committed = sorted(p.name for p in SAMPLES.iterdir() if p.suffix not in (".md", ".toml"))
    assert made == committed
    for name in made:
        new, old = (tmp_path / name).read_text(), (SAMPLES / name).read_text()
        _assert_same_text_and_numbers(new, old, name)


def _assert_same_text_and_numbers(new: str, old: str, name: str) -> None:
    """The same lines, word for word, except that numbers may differ in their last printed digit
    (numpy builds differ in the last ulp of transcendental functions; 1e-9 relative is far below
    anything the samples are used for)."""
    a, b = new.splitlines(), old.splitlines()
    assert len(a) == len(b), f"{name}: a fresh run of tools/make_samples.py has another line count"
    for k, (la, lb) in enumerate(zip(a, b, strict=True), start=1):
        if la == lb:
            continue
        wa, wb = la.split(), lb.split()
        assert len(wa) == len(wb), f"{name} line {k} differs from a fresh run of tools/make_samples.py"
        for x, y in zip(wa, wb, strict=True):
            if x != y:
                assert float(x) == pytest.approx(float(y), rel=1e-9, abs=1e-12), (
                    f"{name} line {k} differs from a fresh run of tools/make_samples.py")


@pytest.mark.parametrize("name", sorted(p.name for p in SAMPLES.glob("*.s?p")))
def test_every_sample_loads_cleanly_and_says_it_is_synthetic(name):
    sw = _sample(name)
    assert sw.warnings == []
    assert sw.f_hz.size >= 21 and np.all(np.diff(sw.f_hz) > 0)
    assert np.all(np.abs(sw.network.s) <= 1.0)
    head = (SAMPLES / name).read_text().splitlines()[0]
    assert "SYNTHETIC DEMO DATA" in head
    if sw.nports == 2:
        assert _sample(name, port=2).warnings == []


def test_r1_resonates_low_and_misses_the_band():
    s = summarize(_sample("ant_r1.s1p"), 10.0)
    assert 860e6 <= s.best.f_hz <= 880e6
    worst, _ = _worst_rl_db(_sample("ant_r1.s1p"), *ISM_BAND_HZ)
    assert worst < 10.0
    assert all(b.f_high_hz < ISM_BAND_HZ[0] for b in s.bands)


def test_r1_is_matchable_with_an_l_network_at_915_mhz():
    """Pozar, Microwave Engineering, 4th ed., sec. 5.1, eqs. 5.6a-b (R_L < Z0: series X at the load,
    shunt B at the source side): with ideal parts the match at 915 MHz is exact, and the matched
    r1 then meets 10 dB return loss across 902-928 MHz."""
    sw = _sample("ant_r1.s1p")
    z0 = sw.z0_ohm
    z = rf.impedance_ohm(sw.gamma, z0)
    f = sw.f_hz
    k0 = int(np.argmin(np.abs(f - 915e6)))
    rl_, xl = z[k0].real, z[k0].imag
    assert 0 < rl_ < z0
    x = math.sqrt(rl_ * (z0 - rl_)) - xl  # eq. 5.6a (one of the two solutions)
    b = math.sqrt((z0 - rl_) / rl_) / z0  # eq. 5.6b
    w0 = 2 * math.pi * f[k0]
    # realise X and B as fixed L or C parts, so that they vary with frequency
    w = 2 * math.pi * f
    x_f = x * w / w0 if x > 0 else x * w0 / w
    b_f = b * w / w0 if b > 0 else b * w0 / w
    z_series = z + 1j * x_f
    z_in = 1.0 / (1.0 / z_series + 1j * b_f)
    g = rf.gamma_from_impedance(z_in, z0)
    assert rf.return_loss_db(g[k0]) > 40
    inband = (f >= ISM_BAND_HZ[0]) & (f <= ISM_BAND_HZ[1])
    assert rf.return_loss_db(g[inband]).min() > 10.0


def test_r2_is_close_and_covers_part_of_the_band():
    sw = _sample("ant_r2.s1p")
    s = summarize(sw, 10.0)
    assert 895e6 <= s.best.f_hz <= 915e6
    worst, f_worst = _worst_rl_db(sw, *ISM_BAND_HZ)
    assert worst < 10.0 and f_worst == ISM_BAND_HZ[1]
    overlap = [b for b in s.bands if b.f_high_hz > ISM_BAND_HZ[0] and b.f_low_hz < ISM_BAND_HZ[1]]
    assert len(overlap) == 1
    covered = min(overlap[0].f_high_hz, ISM_BAND_HZ[1]) - max(overlap[0].f_low_hz, ISM_BAND_HZ[0])
    assert 0.3 < covered / (ISM_BAND_HZ[1] - ISM_BAND_HZ[0]) < 0.9


def test_r3_is_on_target_with_margin():
    sw = _sample("ant_r3.s1p")
    s = summarize(sw, 10.0)
    assert 910e6 <= s.best.f_hz <= 920e6
    worst, _ = _worst_rl_db(sw, *ISM_BAND_HZ)
    assert worst >= 13.0
    assert len(s.bands) == 1
    band = s.bands[0]
    assert abs(band.f_low_hz - 890e6) < 8e6 and abs(band.f_high_hz - 945e6) < 8e6


def test_revisions_move_up_in_frequency():
    best = [summarize(_sample(f"ant_{r}.s1p")).best.f_hz for r in ("r1", "r2", "r3")]
    assert best[0] < best[1] < best[2]


def test_dualband_has_two_separate_bands_over_wifi():
    sw = _sample("dualband_wifi.s1p")
    s = summarize(sw, 10.0)
    assert len(s.bands) == 2
    low, high = s.bands
    assert low.f_low_hz <= 2400e6 and low.f_high_hz >= 2483.5e6
    assert abs(high.f_low_hz - 5150e6) < 60e6 and abs(high.f_high_hz - 5850e6) < 60e6
    assert not low.clipped_low and not high.clipped_high
    gap, _ = _worst_rl_db(sw, low.f_high_hz + 50e6, high.f_low_hz - 50e6)
    assert gap < 6.0  # a real gap between the bands, not a notch


def test_coarse_sweep_hides_its_worst_in_band_point_between_samples():
    coarse, fine = _sample("ant_r2_coarse.s1p"), _sample("ant_r2.s1p")
    assert coarse.f_hz.size == 21
    assert not np.isin(ISM_BAND_HZ, coarse.f_hz).any()
    worst, f_worst = _worst_rl_db(coarse, *ISM_BAND_HZ)
    assert f_worst not in coarse.f_hz
    inside = (coarse.f_hz >= ISM_BAND_HZ[0]) & (coarse.f_hz <= ISM_BAND_HZ[1])
    worst_sample = rf.return_loss_db(coarse.gamma[inside]).min()
    assert worst < worst_sample - 1.0  # the samples alone would flatter it by over 1 dB
    fine_worst, _ = _worst_rl_db(fine, *ISM_BAND_HZ)
    assert abs(worst - fine_worst) < 0.5  # the same antenna as ant_r2.s1p


def test_75_ohm_file_keeps_its_reference():
    sw = _sample("ant_75ohm.s1p")
    assert sw.z0_ohm == 75.0
    s = summarize(sw, 10.0)
    assert 87.5e6 <= s.best.f_hz <= 108e6
    assert abs(s.best.z_ohm - 75.0) < 10.0
    # seen from a 50-ohm system the same antenna is worse matched at its best point
    assert rf.return_loss_db(summarize(load(SAMPLES / "ant_75ohm.s1p", z0_ohm=50.0)).best.gamma) < 15.0


def _passive(s: np.ndarray) -> bool:
    return bool(np.all(np.linalg.svd(s, compute_uv=False) <= 1.0 + 1e-12))


def test_module_fixture_is_passive_reciprocal_with_the_antenna_on_port_2():
    s = _sample("module_port2.s2p").network.s
    assert _passive(s)
    assert np.max(np.abs(s[:, 0, 1] - s[:, 1, 0])) < 0.01  # reciprocal to within the noise
    p2 = summarize(_sample("module_port2.s2p", port=2), 10.0)
    assert any(b.f_low_hz <= 915e6 <= b.f_high_hz for b in p2.bands)
    assert summarize(_sample("module_port2.s2p", port=1), 10.0).bands == []
    s21_db = 20 * np.log10(np.abs(s[:, 1, 0]))
    assert -15 < s21_db.min() and s21_db.max() < -3


def test_cable_is_a_passive_matched_line_with_sqrt_f_loss():
    """Cable loss against the matched-line model (Pozar 4th ed. eqs. 2.90-2.94; 5 mm solid-PE
    class coax about 20 dB per 100 ft at 1 GHz, typical coax table, from memory; tests/REFERENCES.md)."""
    sw = _sample("cable_3m.s2p")
    s = sw.network.s
    assert _passive(s)
    assert rf.return_loss_db(s[:, 0, 0]).min() > 25.0
    il_db = -20 * np.log10(np.abs(s[:, 1, 0]))
    model = matched_loss_db(sw.f_hz, 3.0, 0.56, 1e9, 0.10)
    assert np.max(np.abs(il_db - model)) < 0.1
    assert 1.5 < np.interp(915e6, sw.f_hz, il_db) < 2.3  # 3 m x 20 dB/100 ft ~ 1.97 dB at 1 GHz


def test_antenna_through_the_cable_is_the_cascade_and_de_embeds():
    """ant_r3 behind cable_3m: scikit-rf's cascade (Network ** Network) reproduces the file, the
    return loss improves by twice the one-way cable loss where the antenna reflects strongly
    (Gamma_in = Gamma_L exp(-2 alpha l), Pozar 4th ed. eq. 2.91), and de-embedding returns ant_r3."""
    cable, ant, via = _sample("cable_3m.s2p"), _sample("ant_r3.s1p"), _sample("ant_r3_via_cable.s1p")
    cascade = (cable.network ** ant.network).s[:, 0, 0]
    assert np.max(np.abs(cascade - via.gamma)) < 1e-9
    il_db = -20 * np.log10(np.abs(cable.network.s[:, 1, 0]))
    rl_ant, rl_via = rf.return_loss_db(ant.gamma), rf.return_loss_db(via.gamma)
    far = rl_ant < 6.0
    assert far.sum() > 100
    assert abs(np.median(rl_via[far] - rl_ant[far] - 2 * il_db[far])) < 0.3
    back = cable.network.inv ** via.network  # scikit-rf's de-embedding idiom
    assert np.max(np.abs(back.s[:, 0, 0] - ant.gamma)) < 1e-6


def test_wifi_pair_matches_each_antenna_but_misses_isolation():
    # the claims of sample_sweeps/README.md for wifi_pair.s2p; isolation = -20 log10 |S21| (Pozar,
    # Microwave Engineering, 4th ed., sec. 4.3), both directions read
    from matchtool.coupling import analyze_coupling
    from matchtool.spec import check_file, load_spec

    wifi = (2400e6, 2483.5e6)
    for port, (lo, hi) in ((1, (2360e6, 2494e6)), (2, (2373e6, 2517e6))):
        sw = _sample("wifi_pair.s2p", port=port)
        assert _worst_rl_db(sw, *wifi)[0] >= 10
        band = next(b for b in summarize(sw).bands if b.contains(2.44e9))
        assert band.f_low_hz == pytest.approx(lo, abs=3e6) and band.f_high_hz == pytest.approx(hi, abs=3e6)
    res = analyze_coupling(_sample("wifi_pair.s2p"), bands=[wifi])
    b = res.pairs[0].bands[0]
    assert 8.0 < b.min_isolation_db < 9.0 and b.max_ecc < 0.05
    assert -6.0 < res.tarc.band_worst_db[0] < -4.5
    u = check_file(SAMPLES / "wifi_pair.s2p", load_spec(SAMPLES / "spec_wifi_pair.toml"))
    assert [r.passed for r in u.requirements] == [True, True, False, True] and u.error is None


def test_dipole_mutual_impedance_reproduces_the_textbook_values():
    # Balanis, Antenna Theory, 3rd ed., sec. 8.6 (from memory): side-by-side half-wave dipoles have
    # Z21 -> 73.1 + j42.5 ohm as d -> 0 (the dipole's own impedance) and about 40.8 - j28.3 ohm at d = lambda/4
    gen = _generator()
    lam = 299_792_458.0 / 1e9
    z0 = gen.dipole_mutual_z(np.array([1e9]), 1e-7)[0]
    z4 = gen.dipole_mutual_z(np.array([1e9]), lam / 4)[0]
    assert z0.real == pytest.approx(73.1, abs=0.1) and z0.imag == pytest.approx(42.5, abs=0.1)
    assert z4.real == pytest.approx(40.8, abs=0.1) and z4.imag == pytest.approx(-28.3, abs=0.1)

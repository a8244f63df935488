"""CLI layer for feedline: written Touchstone read back by scikit-rf, JSON, exit status, errors."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import skrf
from helpers import gamma_of, s1p_text, series_rlc_z, write_rlc

from matchtool.sweep import touchstone_text

C0 = 299_792_458.0
MODEL = ["--length", "2m", "--velocity-factor", "0.66", "--loss-db-per-m", "0.4"]


def _gamma_l(f, length_m, vf, loss_db_per_m, ref_hz=1e9):
    """Pozar 4th ed. eqs. 2.90-2.94: the factor exp(-2 gamma l) of a matched line, derived here."""
    alpha = loss_db_per_m * np.sqrt(f / ref_hz) / (20 / math.log(10))
    beta = 2 * np.pi * f / (vf * C0)
    return np.exp(-2 * (alpha + 1j * beta) * length_m)


def _one_error(r, *words):
    assert r.code == 2, (r.code, r.out, r.err)
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: "), r.err
    for w in words:
        assert w in r.err, r.err
    assert "Traceback" not in r.err


def test_toward_radio_file_read_back_by_scikit_rf(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=35.0)
    out = tmp_path / "radio.s1p"
    r = cli("feedline", a, *MODEL, "--toward", "radio", "--out", out)
    assert r.code == 0, r.err
    ant, moved = skrf.Network(str(a)), skrf.Network(str(out))
    assert moved.nports == 1 and np.allclose(moved.z0, 50.0)
    np.testing.assert_allclose(moved.f, ant.f)
    expected = ant.s[:, 0, 0] * _gamma_l(ant.f, 2.0, 0.66, 0.4)
    np.testing.assert_allclose(moved.s[:, 0, 0], expected, atol=1e-10)


def test_round_trip_radio_then_antenna_returns_the_sweep(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=70.0, z0=75.0)
    up, down = tmp_path / "up.s1p", tmp_path / "down.s1p"
    extra = ["--cable-z0", "50", "--dielectric-loss-db-per-m", "0.1", "--loss-ref", "900MHz"]
    assert cli("feedline", a, *MODEL, *extra, "--toward", "radio", "--out", up).code == 0
    assert cli("feedline", up, *MODEL, *extra, "--toward", "antenna", "--out", down).code == 0
    orig, back = skrf.Network(str(a)), skrf.Network(str(down))
    assert np.allclose(back.z0, 75.0)
    np.testing.assert_allclose(back.s, orig.s, atol=1e-9)


def test_lossy_worked_case_json(cli, tmp_path):
    """VSWR 2 load behind a 3 dB one-way matched cable (from Pozar 4th ed. eqs. 2.92-2.94)."""
    p = tmp_path / "vswr2.s1p"
    f = np.array([0.9e9, 1e9, 1.1e9])
    p.write_text(s1p_text(f, np.full(3, 1 / 3 + 0j)))
    r = cli("feedline", p, "--length", "1m", "--velocity-factor", "1", "--loss-db-per-m", "3", "--toward", "radio",
            "--at", "1GHz", "--json")
    assert r.code == 0, r.err
    pt = r.json()["at"][0]
    assert pt["radio"]["gamma_mag"] == pytest.approx(0.16706, abs=1e-5)
    assert pt["radio"]["return_loss_db"] == pytest.approx(15.542, abs=1e-3)
    assert pt["radio"]["vswr"] == pytest.approx(1.4011, abs=1e-4)
    assert pt["line_loss_db"] == pytest.approx(3.3886, abs=1e-4)
    assert pt["one_way_loss_db"] == pytest.approx(3.0, abs=1e-9)
    assert pt["antenna"]["vswr"] == pytest.approx(2.0, abs=1e-9)
    assert pt["return_loss_improvement_db"] == pytest.approx(6.0, abs=1e-9)  # 2 x one-way (common practice)
    assert "of which 2 x 3.0 dB is the cable" in pt["masking"]


def test_quarter_wave_delay_turns_short_into_open(cli, tmp_path):
    """Pozar 4th ed. eq. 2.90 ff.: a quarter wave turns a short into an open (port extension here)."""
    p = tmp_path / "short.s1p"
    f = np.linspace(0.5e9, 1.5e9, 101)
    p.write_text(s1p_text(f, np.full(f.size, -1 + 0j)))
    out = tmp_path / "o.s1p"
    r = cli("feedline", p, "--delay", "250ps", "--toward", "radio", "--out", out, "--at", "1GHz", "--json")
    assert r.code == 0
    assert r.json()["at"][0]["radio"]["gamma_re"] == pytest.approx(1.0, abs=1e-9)
    n = skrf.Network(str(out))
    k = int(np.argmin(abs(n.f - 1e9)))
    assert n.s[k, 0, 0] == pytest.approx(1.0, abs=1e-9)
    assert n.s[0, 0, 0] == pytest.approx(-np.exp(-4j * np.pi * 0.5e9 * 250e-12), abs=1e-9)


def _cable_file(path, f, s):
    path.write_text(touchstone_text(f, s, 50.0))
    return path


def test_measured_cable_equals_the_model_and_flip(cli, tmp_path):
    """A cable written by scikit-rf's own line model (DefinedGammaZ0), then used as --cable."""
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=30.0)
    f_cab = np.linspace(700e6, 1.2e9, 1001)
    freq = skrf.Frequency.from_f(f_cab, unit="Hz")
    alpha = 0.4 * np.sqrt(f_cab / 1e9) / (20 / math.log(10))
    gamma = alpha + 2j * np.pi * f_cab / (0.66 * C0)
    line = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=50.0, gamma=gamma).line(2.0, unit="m")
    # a 1 dB pad and a short 75-ohm section on the antenna side make the cable unsymmetric in
    # reflection, so its orientation matters
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=50.0)
    att = media.attenuator(-1.0)
    stub = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=75.0, gamma=2j * np.pi * f_cab / C0).line(0.02, unit="m")
    cab = line ** att ** stub
    fwd = _cable_file(tmp_path / "cab.s2p", f_cab, cab.s)
    rev = _cable_file(tmp_path / "cab_rev.s2p", f_cab, cab.flipped().s)
    o1, o2, o3 = tmp_path / "m1.s1p", tmp_path / "m2.s1p", tmp_path / "m3.s1p"
    assert cli("feedline", a, "--cable", fwd, "--toward", "radio", "--out", o1).code == 0
    assert cli("feedline", a, "--cable", rev, "--flip-cable", "--toward", "radio", "--out", o2).code == 0
    assert cli("feedline", a, "--cable", rev, "--toward", "radio", "--out", o3).code == 0
    ant = skrf.Network(str(a))
    # the expected radio-end reflection, from scikit-rf's own cascade on the cable's grid, then
    # compared on the antenna's grid (the cable is interpolated onto it)
    ant_on_cable = skrf.Network(frequency=ant.frequency, s=ant.s, z0=50).interpolate(
        skrf.Frequency.from_f(f_cab[(f_cab >= ant.f[0]) & (f_cab <= ant.f[-1])], unit="Hz"), kind="linear")
    ref = cab.interpolate(ant_on_cable.frequency) ** ant_on_cable
    n1, n2, n3 = (skrf.Network(str(o)) for o in (o1, o2, o3))
    got = n1.interpolate(ref.frequency, kind="cubic")
    np.testing.assert_allclose(got.s[:, 0, 0], ref.s[:, 0, 0], atol=2e-3)
    np.testing.assert_allclose(n2.s, n1.s, atol=1e-12)
    assert np.max(np.abs(n3.s - n1.s)) > 0.05  # the wrong orientation gives a different answer
    # JSON reports the measured insertion loss
    doc = cli("feedline", a, "--cable", fwd, "--toward", "radio", "--at", "915MHz", "--json").json()
    assert doc["cable"]["kind"] == "measured"
    s21 = cab.interpolate(skrf.Frequency.from_f([915e6], unit="Hz")).s[0, 1, 0]
    assert doc["at"][0]["one_way_loss_db"] == pytest.approx(-20 * math.log10(abs(s21)), abs=1e-3)
    assert doc["at"][0]["one_way_loss_db"] > 0.4 * 2 * math.sqrt(0.915) + 1.0


def test_measured_cable_errors(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p")  # 800 MHz to 1.03 GHz
    f = np.linspace(850e6, 1.2e9, 11)
    s = np.zeros((11, 2, 2), dtype=complex)
    s[:, 1, 0] = s[:, 0, 1] = 0.9
    short = _cable_file(tmp_path / "short.s2p", f, s)
    _one_error(cli("feedline", a, "--cable", short, "--toward", "antenna"), "short.s2p", "covers")
    one = tmp_path / "one.s1p"
    one.write_text(s1p_text(f, np.zeros(11, complex)))
    _one_error(cli("feedline", a, "--cable", one, "--toward", "antenna"), "one.s1p", "2-port")
    bad = tmp_path / "bad.s2p"
    bad.write_text("# Hz S RI R 50\n1e9 0 0 1 0 1 0\n")
    _one_error(cli("feedline", a, "--cable", bad, "--toward", "antenna"), "bad.s2p", "line 2")


def test_two_port_input_moves_one_port_keeps_the_other(cli, tmp_path):
    rng = np.random.default_rng(5)
    f = np.linspace(800e6, 1e9, 41)
    s = (rng.normal(size=(41, 2, 2)) + 1j * rng.normal(size=(41, 2, 2))) * 0.3
    p = tmp_path / "dut.s2p"
    p.write_text(touchstone_text(f, s, 50.0))
    out = tmp_path / "moved.s2p"
    r = cli("feedline", p, "--port", "2", "--length", "1m", "--velocity-factor", "0.8", "--loss-db-per-m", "0.5",
            "--cable-z0", "75", "--toward", "radio", "--out", out)
    assert r.code == 0, r.err
    freq = skrf.Frequency.from_f(f, unit="Hz")
    alpha = 0.5 * np.sqrt(f / 1e9) / (20 / math.log(10))
    line = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=75.0,
                                     gamma=alpha + 2j * np.pi * f / (0.8 * C0)).line(1.0, unit="m")
    ref = skrf.network.connect(skrf.Network(frequency=freq, s=s, z0=50), 1, line, 1)  # dut port 2 to line port 2
    got = skrf.Network(str(out))
    assert got.nports == 2
    np.testing.assert_allclose(got.s, ref.s, atol=1e-10)
    r = cli("feedline", p, "--port", "2", *MODEL, "--toward", "radio", "--out", tmp_path / "x.s1p")
    _one_error(r, "x.s1p", ".s2p")


def test_z0_option_is_the_system_impedance_output_keeps_the_file_reference(cli, tmp_path):
    """A matched 75-ohm cable in a 75-ohm system is the same physical network as a 75-ohm cable in
    a 50-ohm system: both outputs, at the file's 50 ohm, must agree."""
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=60.0)
    o1, o2 = tmp_path / "a75.s1p", tmp_path / "b75.s1p"
    assert cli("feedline", a, *MODEL, "--z0", "75", "--toward", "radio", "--out", o1).code == 0
    assert cli("feedline", a, *MODEL, "--cable-z0", "75", "--toward", "radio", "--out", o2).code == 0
    n1, n2 = skrf.Network(str(o1)), skrf.Network(str(o2))
    assert np.allclose(n1.z0, 50.0)
    np.testing.assert_allclose(n1.s, n2.s, atol=1e-10)


def test_nonphysical_result_is_flagged_not_silent(cli, tmp_path):
    p = tmp_path / "meas.s1p"
    f = np.linspace(900e6, 930e6, 11)
    p.write_text(s1p_text(f, np.full(f.size, 0.5 + 0j)))
    out = tmp_path / "ant.s1p"
    r = cli("feedline", p, "--length", "10m", "--velocity-factor", "0.66", "--loss-db-per-m", "0.6",
            "--toward", "antenna", "--out", out, "--json")
    assert r.code == 0
    doc = r.json()
    assert doc["nonphysical_points"] == 11 and doc["band"]["nonphysical_points"] >= 11
    assert any("non-physical" in w for w in doc["warnings"]) and "non-physical" in r.err
    assert any("two-way loss" in w for w in doc["warnings"])
    assert "WARNING" in out.read_text()
    assert "Infinity" not in r.out and "NaN" not in r.out


def test_json_never_holds_infinity(cli, tmp_path):
    p = tmp_path / "m.s1p"
    p.write_text("# MHz S RI R 50\n900 0.5 0\n915 0 0\n930 0.5 0\n")
    r = cli("feedline", p, "--delay", "100ps", "--toward", "radio", "--at", "915MHz", "--json")
    assert r.code == 0
    doc = json.loads(r.out)
    assert doc["at"][0]["radio"]["return_loss_db"] is None and doc["at"][0]["antenna"]["vswr"] == 1.0
    assert "Infinity" not in r.out and "NaN" not in r.out and "null" in r.err
    assert doc["at"][0]["matched_loss_db"] is None
    assert not any("matched_loss_db" in w for w in doc["warnings"])  # a delay has none; nothing to warn


def test_band_report_and_terminal_view(cli, tmp_path):
    f = np.linspace(800e6, 1.03e9, 401)
    p = tmp_path / "ant.s1p"
    p.write_text(s1p_text(f, gamma_of(series_rlc_z(f, 40.0, 40e-9, 915e6))))
    r = cli("feedline", p, *MODEL, "--toward", "radio", "--band", "902MHz:928MHz", "--json")
    b = r.json()["band"]
    assert b["f_low_hz"] == 902e6 and b["f_high_hz"] == 928e6 and b["whole_sweep"] is False
    assert b["one_way_loss_max_db"] == pytest.approx(0.8 * math.sqrt(0.928), abs=1e-9)
    assert b["worst_return_loss_radio_db"] > b["worst_return_loss_antenna_db"]
    r = cli("feedline", p, *MODEL, "--toward", "radio", "--at", "915MHz")
    assert r.code == 0 and "of which 2 x" in r.out and "radio end" in r.out and "915.000 MHz" in r.out


def test_refuses_overwrite_and_leaves_the_file(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p")
    out = tmp_path / "o.s1p"
    out.write_text("keep me\n")
    _one_error(cli("feedline", a, *MODEL, "--toward", "radio", "--out", out), "o.s1p", "--force")
    assert out.read_text() == "keep me\n"
    assert cli("feedline", a, *MODEL, "--toward", "radio", "--out", out, "--force").code == 0
    assert skrf.Network(str(out)).nports == 1


@pytest.mark.parametrize("args, words", [
    (MODEL, "--toward"),
    ([*MODEL, "--toward", "sideways"], "radio or antenna"),
    (["--toward", "radio"], "no cable"),
    ([*MODEL, "--delay", "1ns", "--toward", "radio"], "only one"),
    (["--length", "1m", "--loss-db-per-m", "0.1", "--toward", "radio"], "--velocity-factor"),
    (["--length", "1m", "--velocity-factor", "0.7", "--toward", "radio"], "--loss-db-per-m"),
    (["--delay", "1ns", "--velocity-factor", "0.7", "--toward", "radio"], "cable model"),
    ([*MODEL, "--flip-cable", "--toward", "radio"], "--flip-cable"),
    (["--length", "1 furlong", "--velocity-factor", "0.7", "--loss-db-per-m", "0", "--toward", "radio"], "unit"),
    (["--length", "1m", "--velocity-factor", "1.5", "--loss-db-per-m", "0", "--toward", "radio"],
     "--velocity-factor 1.5"),
    (["--length", "-1m", "--velocity-factor", "0.7", "--loss-db-per-m", "0", "--toward", "radio"], "--length -1m:"),
    (["--length", "-3 ft", "--velocity-factor", "0.7", "--loss-db-per-m", "0", "--toward", "radio"], "--length -3 ft:"),
    ([*MODEL, "--dielectric-loss-db-per-m", "-1", "--toward", "radio"], "--dielectric-loss-db-per-m -1"),
    ([*MODEL, "--cable-z0", "0", "--toward", "radio"], "--cable-z0 0"),
    ([*MODEL, "--toward", "radio", "--at", "5GHz"], "outside the sweep"),
    ([*MODEL, "--toward", "radio", "--band", "700MHz:900MHz"], "not inside the sweep"),
    ([*MODEL, "--toward", "radio", "--port", "2"], "port 2"),
    ([*MODEL, "--toward", "radio", "--z0", "-5"], "--z0"),
    ([*MODEL, "--toward", "radio", "--out", "x.txt"], "x.txt"),
    ([*MODEL, "--toward", "radio", "--out", "x.ts"], ".sNp"),
    ([*MODEL, "--toward", "radio", "--out", "/nonexistent-dir/x.s1p"], "does not exist"),
    (["--delay=-5ps", "--toward", "radio"], "--delay -5ps: must be zero or more"),
    ([*MODEL, "--loss-ref", "0Hz", "--toward", "radio"], "--loss-ref"),
])
def test_bad_arguments_one_line(cli, tmp_path, args, words):
    a = write_rlc(tmp_path / "ant.s1p")
    _one_error(cli("feedline", a, *args), words)


def test_missing_input(cli, tmp_path):
    _one_error(cli("feedline", tmp_path / "nope.s1p", *MODEL, "--toward", "radio"), "nope.s1p")


def test_measured_cable_without_transmission_names_the_file(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p")
    f = np.linspace(700e6, 1.2e9, 11)
    s = np.zeros((11, 2, 2), dtype=complex)
    s[:, 1, 0] = s[:, 0, 1] = 0.9
    s[5] = 0.0  # an open circuit in the middle of the cable data
    dead = _cable_file(tmp_path / "dead.s2p", f, s)
    _one_error(cli("feedline", a, "--cable", dead, "--toward", "antenna"), "dead.s2p", "transmits")


def test_degenerate_deembedding_is_flagged(cli, tmp_path):
    """A measured Gamma at the pole of the de-embedding, S21 S12 + S22 (G - S11) = 0: the result
    explodes and must be flagged as non-physical (or refused when not finite), never passed on quietly."""
    p = tmp_path / "m.s1p"
    f = np.array([1e9, 1.1e9])
    from matchtool.feedline import CableModel

    cab = CableModel(length_m=0.1, velocity_factor=0.7, loss_db_per_m=0.0, z0_ohm=100.0)
    t = cab.s_params(f, 50.0)
    g = t[:, 0, 0] - t[:, 1, 0] * t[:, 0, 1] / t[:, 1, 1]  # makes the de-embedding denominator zero
    p.write_text(s1p_text(f, g))
    out = tmp_path / "o.s1p"
    r = cli("feedline", p, "--length", "0.1m", "--velocity-factor", "0.7", "--loss-db-per-m", "0",
            "--cable-z0", "100", "--toward", "antenna", "--out", out)
    assert r.code == 0  # 12-digit rounding in the file leaves a huge but finite value
    assert "non-physical" in r.err and "WARNING" in out.read_text()
    assert np.all(np.abs(skrf.Network(str(out)).s) > 1e6)


def test_per_port_references_are_kept_and_the_moved_port_uses_its_own(cli, tmp_path):
    """A version 2 two-port with references 50 and 75 ohm: moving port 2 takes the cable in 75 ohm;
    the output keeps [Reference] 50 75 and agrees with scikit-rf's connect."""
    rng = np.random.default_rng(2)
    f = np.linspace(1e9, 2e9, 21)
    s = (rng.normal(size=(21, 2, 2)) + 1j * rng.normal(size=(21, 2, 2))) * 0.3
    p = tmp_path / "v2.s2p"
    p.write_text(touchstone_text(f, s, np.array([50.0, 75.0])))
    out = tmp_path / "o.s2p"
    r = cli("feedline", p, "--port", "2", "--length", "1m", "--velocity-factor", "0.7", "--loss-db-per-m", "0.2",
            "--toward", "radio", "--out", out, "--json")
    assert r.code == 0 and r.json()["z0_ohm"] == 75.0
    a, b = skrf.Network(str(p)), skrf.Network(str(out))
    np.testing.assert_allclose(b.z0[0], [50.0, 75.0])
    alpha = 0.2 * np.sqrt(f / 1e9) / (20 / math.log(10))
    line = skrf.media.DefinedGammaZ0(a.frequency, z0_port=75.0, z0=75.0,
                                     gamma=alpha + 2j * np.pi * f / (0.7 * C0)).line(1.0, unit="m")
    np.testing.assert_allclose(b.s, skrf.network.connect(a, 1, line, 1).s, atol=1e-10)


def test_python_api_move_sweep(tmp_path):
    from matchtool import feedline as fl
    from matchtool.sweep import load

    a = write_rlc(tmp_path / "ant.s1p", r_ohm=35.0)
    sw = load(a)
    cab = fl.CableModel(length_m=2.0, velocity_factor=0.66, loss_db_per_m=0.4)
    moved = fl.move_sweep(sw, cab, "radio")
    assert isinstance(moved.network, skrf.Network) and moved.network.nports == 1
    np.testing.assert_allclose(moved.network.s[:, 0, 0], sw.gamma * _gamma_l(sw.f_hz, 2.0, 0.66, 0.4), atol=1e-12)


def test_active_cable_file_is_warned_about(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p")
    f = np.linspace(700e6, 1.2e9, 11)
    s = np.zeros((11, 2, 2), dtype=complex)
    s[:, 1, 0] = s[:, 0, 1] = 1.05  # gain: not a cable
    cab = _cable_file(tmp_path / "gain.s2p", f, s)
    r = cli("feedline", a, "--cable", cab, "--toward", "radio", "--json")
    assert r.code == 0
    assert any("gain.s2p" in w and "passive" in w for w in r.json()["warnings"])


def test_band_masking_sentence_at_the_worst_radio_point(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    doc = cli("feedline", a, *MODEL, "--toward", "radio", "--band", "902MHz:928MHz", "--json").json()
    b = doc["band"]
    f_w = b["worst_return_loss_radio_f_hz"]
    one_way = 0.8 * math.sqrt(f_w / 1e9)  # 2 m x 0.4 dB/m at 1 GHz, sqrt(f) (matched cable)
    assert f"of which 2 x {one_way:.1f} dB" in b["masking"]
    assert f"{b['worst_return_loss_radio_db']:.1f} dB return loss at the radio end" in b["masking"]


def test_core_and_command_import_discipline(tmp_path):
    """The core module needs neither typer, rich nor matplotlib; the command never draws."""
    import subprocess
    import sys

    from helpers import ROOT

    a = write_rlc(tmp_path / "ant.s1p")
    code = ("import sys\nimport matchtool.feedline\nprint(' '.join(sys.modules))")
    mods = set(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT,
                              check=True).stdout.split())
    assert not {"typer", "rich", "matplotlib"} & mods
    argv = ["feedline", str(a), *MODEL, "--toward", "radio", "--at", "915MHz"]
    code = (f"import sys\nfrom matchtool.cli import main\nmain({argv!r})\nprint(' '.join(sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True).stdout
    assert "matplotlib" not in out.split()


def test_cable_file_at_another_reference_is_renormalised(cli, tmp_path):
    """The same physical cable saved at R 75 and at R 50 must give the same result."""
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=45.0)
    f = np.linspace(700e6, 1.2e9, 801)
    freq = skrf.Frequency.from_f(f, unit="Hz")
    alpha = 0.3 * np.sqrt(f / 1e9) / (20 / math.log(10))
    line = skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=60.0,
                                     gamma=alpha + 2j * np.pi * f / (0.7 * C0)).line(1.2, unit="m")
    c50 = tmp_path / "c50.s2p"
    c50.write_text(touchstone_text(f, line.s, 50.0))
    c75 = tmp_path / "c75.s2p"
    c75.write_text(touchstone_text(f, skrf.network.renormalize_s(line.s, 50.0, 75.0), 75.0))
    o50, o75 = tmp_path / "o50.s1p", tmp_path / "o75.s1p"
    assert cli("feedline", a, "--cable", c50, "--toward", "antenna", "--out", o50).code == 0
    assert cli("feedline", a, "--cable", c75, "--toward", "antenna", "--out", o75).code == 0
    np.testing.assert_allclose(skrf.Network(str(o75)).s, skrf.Network(str(o50)).s, atol=1e-9)


def test_lossless_75_ohm_line_masking_uses_dissipative_loss(cli, tmp_path):
    """A lossless line dissipates nothing (|S11|^2 + |S21|^2 = 1): the sentence must say 2 x 0.0 dB."""
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    doc = cli("feedline", a, "--length", "3m", "--velocity-factor", "0.66", "--cable-z0", "75",
              "--loss-db-per-m", "0", "--toward", "radio", "--at", "915MHz", "--json").json()
    pt = doc["at"][0]
    assert pt["one_way_loss_db"] > 0.05 and pt["dissipative_loss_db"] == 0.0 and pt["cable_share_db"] == 0.0
    assert "of which 2 x 0.0 dB is the cable" in pt["masking"]
    assert "of which 2 x 0.0 dB is the cable" in doc["band"]["masking"]


def test_pure_delay_prints_no_negative_zero(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    r = cli("feedline", a, "--delay", "250ps", "--toward", "radio", "--at", "915MHz")
    assert r.code == 0 and "2 x 0.0 dB" in r.out
    assert "-0.0" not in r.out, r.out
    doc = cli("feedline", a, "--delay", "250ps", "--toward", "radio", "--at", "915MHz", "--json").json()
    assert "-0.0" not in json.dumps(doc)


def test_total_feed_loss_is_labelled_as_matched_radio_into_antenna(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    r = cli("feedline", a, *MODEL, "--toward", "radio")
    assert r.code == 0 and "total feed loss, matched radio into the antenna" in r.out
    assert "mismatch at the radio end" not in r.out


@pytest.mark.parametrize(("opt", "value", "hint"), [
    ("--delay", "250", "a bare number is seconds: did you mean 250ps?"),
    ("--delay", "2us", "at most 1us"),
    ("--loss-ref", "1000", "a bare number is Hz: did you mean 1000MHz?"),
    ("--loss-ref", "10kHz", "at least 1MHz"),
])
def test_implausible_delay_or_loss_reference_is_refused_with_a_hint(cli, tmp_path, opt, value, hint):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    cable = ["--delay", value] if opt == "--delay" else [*MODEL, "--loss-ref", value]
    _one_error(cli("feedline", a, *cable, "--toward", "radio"), opt, hint)


def test_plausible_delay_and_loss_reference_are_accepted(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p", r_ohm=40.0)
    assert cli("feedline", a, "--delay", "1us", "--toward", "radio").code == 0
    assert cli("feedline", a, *MODEL, "--loss-ref", "1MHz", "--toward", "radio").code == 0


def test_live_feed_caution_in_text_and_json(cli, tmp_path):
    a = write_rlc(tmp_path / "ant.s1p")
    r = cli("feedline", a, *MODEL, "--toward", "radio")
    assert r.code == 0 and "live transmitter feeds" in " ".join(r.out.split())
    j = cli("feedline", a, *MODEL, "--toward", "radio", "--json")
    assert "live transmitter feeds" in j.json()["caution"]


@pytest.mark.parametrize("width", [80, 100, 120])
def test_at_table_is_never_truncated(tmp_path, width):
    """Every cell of the --at table appears whole at 80, 100 and 120 columns (rich Console(width=))."""
    import io

    from rich.console import Console

    from matchtool import feedline as fl
    from matchtool.render.text.feedline import render

    a = write_rlc(tmp_path / "ant.s1p")
    cab = fl.CableModel(length_m=2.0, velocity_factor=0.66, loss_db_per_m=0.4)
    res = fl.analyze(str(a), cab, "radio", at_hz=[902e6, 915e6, 928e6])
    buf = io.StringIO()
    render(res, con=Console(file=buf, width=width, color_system=None, force_terminal=False))
    text = buf.getvalue()
    assert "\u2026" not in text  # rich's ellipsis: a cut cell
    assert all(len(line) <= width for line in text.splitlines()), text
    for f in ("902.000 MHz", "915.000 MHz", "928.000 MHz"):
        assert f in text
    for word in ("S21 loss", "RL antenna", "VSWR", "total loss"):
        assert word in text
    # every number of the table, whole: the total feed loss at 902 MHz, 3 decimals
    assert f"{res.feed_at.total_feed_loss_db[0]:.3f}" in text

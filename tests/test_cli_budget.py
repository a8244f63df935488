"""CLI tests of ``matchtool budget``: exit status, JSON keys, one-line errors, help cautions."""

from __future__ import annotations

import math
import re
import shutil
from pathlib import Path

import pytest
from helpers import ROOT, write_rlc

LINK = """f_hz = "915 MHz"
distance_m = 500
tx_power_dbm = 14
tx_gain_dbi = 2
tx_cable_loss_db = 0.5
rx_gain_dbi = 2
rx_cable_loss_db = 0.5
polarization_angle_deg = 10
rx_sensitivity_dbm = -110
tx_sweep = "tx.s1p"
rx_sweep = "rx.s1p"
"""


@pytest.fixture
def link(tmp_path) -> Path:
    write_rlc(tmp_path / "tx.s1p", r_ohm=50.0)
    write_rlc(tmp_path / "rx.s1p", r_ohm=30.0)
    p = tmp_path / "link.toml"
    p.write_text(LINK)
    return p


def test_json_contract_keys(cli, link):
    r = cli("budget", link, "--json")
    assert r.code == 0, r.err
    doc = r.json()
    for k in ("rows", "received_power_dbm", "margin_db", "path_loss_db", "max_range_m", "eirp_dbm",
              "zero_margin_range_m", "frequencies", "warnings"):
        assert k in doc
    assert all(set(row) >= {"name", "value_db"} for row in doc["rows"])
    assert math.fsum(row["value_db"] for row in doc["rows"]) == pytest.approx(doc["received_power_dbm"])
    assert doc["margin_db"] == pytest.approx(doc["received_power_dbm"] + 110)
    # ITU-R P.525, exact constant: 32.4478 + 20 log 915 + 20 log 0.5
    assert doc["path_loss_db"] == pytest.approx(20 * math.log10(4 * math.pi * 1e9 / 299792458) + 20 * math.log10(915)
                                                + 20 * math.log10(0.5), abs=1e-9)
    # no fade margin: the required margin is zero, so both ranges agree
    assert doc["max_range_m"] == pytest.approx(doc["zero_margin_range_m"])
    # R = 30 ohm at resonance: |Gamma| = 0.25, mismatch 1 - 1/16 (Pozar 4th ed. eq. 2.37)
    assert doc["rx"]["mismatch_loss_db"] == pytest.approx(-10 * math.log10(1 - 1 / 16), abs=1e-6)
    assert len(doc["frequencies"]) == 1 and r.out.count("\n{") == 0


def test_fade_margin_sets_max_range(cli, link):
    link.write_text(LINK + "fade_margin_db = 20\n")
    doc = cli("budget", link, "--json").json()
    assert doc["zero_margin_range_m"] / doc["max_range_m"] == pytest.approx(10 ** (20 / 20))


def test_table_output(cli, link):
    r = cli("budget", link)
    assert r.code == 0
    for word in ("transmit power", "path loss", "polarization loss", "receive mismatch loss", "running total",
                 "EIRP", "margin", "range", "not a coverage prediction"):
        assert word in r.out


def test_margin_not_met_exits_1(cli, link):
    link.write_text(LINK.replace("distance_m = 500", "distance_m = 5e7"))
    r = cli("budget", link, "--json")
    assert r.code == 1 and r.json()["pass"] is False and r.json()["margin_db"] < 0


def test_band_table(cli, link):
    link.write_text(LINK.replace('f_hz = "915 MHz"', 'f_low = "902 MHz"\nf_high = "928 MHz"\npoints = 5'))
    doc = cli("budget", link, "--json").json()
    assert [p["f_hz"] for p in doc["frequencies"]] == [902e6, 908.5e6, 915e6, 921.5e6, 928e6]
    assert doc["margin_db"] == min(p["margin_db"] for p in doc["frequencies"])
    assert cli("budget", link).out.count("MHz") >= 5


@pytest.mark.parametrize("edit,key", [
    (("distance_m = 500", "distance_m = -500"), "distance_m"),
    (("rx_sensitivity_dbm = -110", "rx_sensitivity_dbm = 30"), "rx_sensitivity_dbm"),
    (('f_hz = "915 MHz"', 'f_hz = "2.45 GHz"'), "tx_sweep"),
    (("tx_gain_dbi = 2", "tx_gain_dbi = 2\ntx_gain_db = 2"), "tx_gain_db"),
    (("tx_gain_dbi = 2", 'tx_gain_dbi = "two"'), "tx_gain_dbi"),
    (("tx_gain_dbi = 2", "tx_gain_dbi = nan"), "tx_gain_dbi"),
    (("tx_gain_dbi = 2", "tx_gain_dbi = inf"), "tx_gain_dbi"),
    (("polarization_angle_deg = 10", "polarization_angle_deg = 10\npolarization_loss_db = 1"), "polarization_loss_db"),
])
def test_bad_file_exit_2_one_line(cli, link, edit, key):
    link.write_text(LINK.replace(*edit))
    r = cli("budget", link, "--json")
    assert r.code == 2 and r.out == ""
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: ")
    assert str(link) in r.err and f"key '{key}'" in r.err and "Traceback" not in r.err
    if key == "tx_gain_db":
        assert "did you mean 'tx_gain_dbi'" in r.err


def test_bad_sweep_text_does_not_leak(cli, link):
    (link.parent / "tx.s1p").write_text("not a touchstone file\n1 2 3\n")
    r = cli("budget", link)
    assert r.code == 2 and len(r.err_lines) == 1 and "tx_sweep" in r.err and str(link) in r.err


def test_eirp_limit_warning(cli, link):
    link.write_text(LINK + "eirp_limit_dbm = 10\n")
    r = cli("budget", link, "--json")
    # an exceeded EIRP limit is a failed requirement: exit 1, though the link itself closes
    assert r.code == 1 and r.json()["eirp_over_limit"] is True and r.json()["pass"] is False
    assert r.json()["link_closes"] is True
    assert any("EIRP" in w for w in r.json()["warnings"]) and "warning:" in r.err


BAND = LINK.replace('f_hz = "915 MHz"\n', 'f_low = "900 MHz"\nf_high = "960 MHz"\nstep = "10 MHz"\n')


def test_eirp_line_is_the_highest_over_the_band(cli, link):
    # Both antennas resonate at 900 MHz: the transmit end is a series RLC with R = 50 ohm = Z0, so
    # Gamma = 0 there and EIRP(900 MHz) = 14 - 0.5 - 0 + 2 = 15.5 dBm (derived). Away from 900 MHz the
    # mismatch grows and the path loss rises, so the worst margin is at 960 MHz, where the EIRP is
    # lower: X(960 MHz) = 2 pi 960e6 40e-9 (1 - (900/960)^2) = 29.2 ohm, |Gamma|^2 = 29.2^2 /
    # (100^2 + 29.2^2) = 0.079, mismatch 0.355 dB, EIRP 15.14 dBm (derived). A limit of 15.3 dBm is met
    # at the worst-margin frequency and exceeded at 900 MHz.
    write_rlc(link.parent / "tx.s1p", f0_hz=900e6, r_ohm=50.0)
    write_rlc(link.parent / "rx.s1p", f0_hz=900e6, r_ohm=30.0)
    link.write_text(BAND + "eirp_limit_dbm = 15.3\n")
    r = cli("budget", link, "--json")
    d = r.json()
    assert d["worst_f_hz"] == pytest.approx(960e6)
    assert d["eirp_dbm"] == pytest.approx(15.14, abs=0.01)  # the worst-margin point's own EIRP
    assert d["max_eirp_f_hz"] == pytest.approx(900e6) and d["max_eirp_dbm"] == pytest.approx(15.5, abs=1e-3)
    assert d["eirp_over_limit"] is True and d["pass"] is False and r.code == 1
    t = cli("budget", link)
    assert t.code == 1
    line = next(x for x in t.out.splitlines() if x.startswith("EIRP"))
    assert "15.50 dBm" in line and "900.000 MHz" in line and "EXCEEDED" in line, line
    link.write_text(BAND + "eirp_limit_dbm = 15.6\n")  # above the highest EIRP: met, exit 0
    t = cli("budget", link)
    line = next(x for x in t.out.splitlines() if x.startswith("EIRP"))
    assert t.code == 0 and "met" in line and "EXCEEDED" not in line


@pytest.mark.parametrize("vswr, caution", [(3.5, True), (2.9, False)])
def test_amplifier_caution_above_vswr_3(cli, link, vswr, caution):
    # caution threshold VSWR 3, i.e. |Gamma| = 0.5, mismatch loss -10 log10(1 - 0.25) = 1.25 dB
    # (derived; the threshold itself is common practice, no source)
    link.write_text(LINK.replace('tx_sweep = "tx.s1p"\n', f"tx_vswr = {vswr}\n"))
    r = cli("budget", link, "--json")
    assert r.json()["tx_vswr_caution"] is caution
    assert any("damage the transmitter's amplifier" in w for w in r.json()["warnings"]) is caution
    t = cli("budget", link)
    assert ("CAUTION: transmit VSWR" in t.out) is caution


def test_amplifier_caution_from_a_sweep(cli, link):
    # a 200 ohm resistive antenna at resonance: VSWR 200/50 = 4 (Pozar, Microwave Engineering, 4th ed., eq. 2.41)
    write_rlc(link.parent / "tx.s1p", r_ohm=200.0)
    t = cli("budget", link)
    assert "CAUTION: transmit VSWR 4" in t.out and "amplifier" in t.err


def test_bare_f_hz_outside_the_sweep_names_f_hz(cli, link):
    link.write_text(LINK.replace('f_hz = "915 MHz"', "f_hz = 915"))
    r = cli("budget", link)
    assert r.code == 2 and len(r.err_lines) == 1
    assert "key 'f_hz'" in r.err and "key 'tx_sweep'" not in r.err, r.err


def test_toml_cut_off_at_the_end_gives_a_line(cli, link):
    link.write_text('f_hz = "915 MHz"\ndistance_m = 500\ntx_power_dbm = ')
    r = cli("budget", link)
    assert r.code == 2 and len(r.err_lines) == 1
    assert f"{link} line 3" in r.err and "ends early" in r.err, r.err


def test_help_has_cautions(cli):
    r = cli("budget", "--help")
    text = " ".join(r.out.split())
    assert "not a coverage prediction" in text and "local regulation" in text and "RF exposure" in text


def test_sample_budget_file(cli, tmp_path):
    # the shipped example, pointed at sweeps generated here with the same names
    shutil.copy(ROOT / "sample_sweeps" / "link_915.toml", tmp_path / "link_915.toml")
    write_rlc(tmp_path / "ant_r3.s1p", lo_hz=700e6, hi_hz=1100e6)
    write_rlc(tmp_path / "ant_r2.s1p", r_ohm=35.0, lo_hz=700e6, hi_hz=1100e6)
    r = cli("budget", tmp_path / "link_915.toml", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["tx"]["source"] == "sweep" and doc["rx"]["source"] == "sweep"
    assert doc["fade_margin_db"] > 0 and doc["max_range_m"] < doc["zero_margin_range_m"]


@pytest.mark.skipif(not (ROOT / "sample_sweeps" / "ant_r3.s1p").exists(), reason="sample antennas not generated yet")
def test_shipped_sample_runs(cli):
    r = cli("budget", ROOT / "sample_sweeps" / "link_915.toml", "--json")
    assert r.code in (0, 1) and "received_power_dbm" in r.json()


def test_core_imports_no_ui_libraries():
    # design.md: the core never imports typer, rich or matplotlib
    code = ("import sys, matchtool.budget; bad = [m for m in ('matplotlib', 'typer', 'rich') if m in sys.modules]; "
            "print(bad); sys.exit(1 if bad else 0)")
    import subprocess
    import sys

    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert p.returncode == 0, p.stdout + p.stderr


def test_budget_in_subprocess(cli_subprocess, link):
    r = cli_subprocess("budget", link, "--json")
    assert r.code == 0 and r.json()["margin_db"] > 0


def test_infinite_mismatch_is_null_in_json(cli, link):
    # VSWR 1e300 rounds to |Gamma| = 1: nothing is delivered (Pozar 4th ed. eq. 2.37), an infinite loss
    link.write_text(LINK.replace('tx_sweep = "tx.s1p"\n', "tx_vswr = 1e300\n"))
    r = cli("budget", link, "--json")
    doc = r.json()
    assert r.code == 1 and doc["received_power_dbm"] is None and doc["margin_db"] is None
    assert doc["max_range_m"] == 0.0 and doc["matched_range_m"] > 0
    assert any("received_power_dbm" in w and "null" in w for w in doc["warnings"])
    assert "Infinity" not in r.out and "NaN" not in r.out
    t = cli("budget", link)
    assert t.code == 1 and "-inf" in t.out


@pytest.mark.parametrize("angle", ["90", "-90", "90.0"])
def test_cross_polarised_antennas_have_no_link_not_a_324_db_row(cli, link, angle):
    """Balanis, Antenna Theory, 3rd ed., sec. 2.12.2: PLF = cos^2(psi) is 0 at psi = 90 deg (orthogonal
    linear polarizations); cos(pi/2) in floating point is 6e-17, which must not become -324 dB."""
    link.write_text(LINK.replace("polarization_angle_deg = 10", f"polarization_angle_deg = {angle}"))
    r = cli("budget", link, "--json")
    assert r.code == 1, r.err
    doc = r.json()
    assert doc["polarization_loss_db"] is None
    (row,) = [x for x in doc["rows"] if x["name"] == "polarization loss"]
    assert row["value_db"] is None
    assert any("cross-polarised" in w and "no link" in w for w in doc["warnings"])
    t = cli("budget", link)
    assert t.code == 1 and "324" not in t.out and "cross-polarised" in t.out
    assert "costs 0.0 m of range" not in t.out


def test_polarization_near_90_deg_is_still_a_finite_loss(cli, link):
    # 89 deg: -10 log10(cos^2 89 deg) = 35.16 dB (arithmetic on Balanis's PLF), a real, finite number
    link.write_text(LINK.replace("polarization_angle_deg = 10", "polarization_angle_deg = 89"))
    doc = cli("budget", link, "--json").json()
    assert doc["polarization_loss_db"] == pytest.approx(-10 * math.log10(math.cos(math.radians(89)) ** 2))
    assert not any("cross-polarised" in w for w in doc["warnings"])


def test_no_fade_margin_prints_the_range_once(cli, link):
    r = cli("budget", link)
    assert r.code == 0, r.err
    (line,) = [x for x in r.out.splitlines() if "free-space range" in x]
    assert "at zero margin" in line and len(re.findall(r"\d [k]?m\b", line)) == 1 and ";" not in line
    link.write_text(LINK + "fade_margin_db = 10\n")
    r = cli("budget", link)
    (line,) = [x for x in r.out.splitlines() if "free-space range" in x]
    assert "margin 10 dB:" in line and "; at zero margin:" in line


def test_footer_names_the_path_loss_model(cli, link):
    r = cli("budget", link)
    assert "A free-space estimate" in r.out
    link.write_text(LINK + "path_loss_exponent = 3.0\nreference_distance_m = 10\n")
    r = cli("budget", link)
    assert r.code in (0, 1), r.err
    assert "free-space estimate" not in r.out and "A log-distance estimate (exponent 3 beyond 10 m" in r.out


def test_bare_frequency_says_exactly_what_to_write(cli, link):
    link.write_text(LINK.replace('f_hz = "915 MHz"', "f_hz = 915"))
    r = cli("budget", link)  # 915 Hz is outside the sweeps: refused, naming the fix
    assert r.code == 2 and len(r.err_lines) == 1
    assert 'f_hz = "915 MHz"' in r.err, r.err
    text = LINK.replace('f_hz = "915 MHz"', "f_hz = 915").replace('tx_sweep = "tx.s1p"\nrx_sweep = "rx.s1p"\n', "")
    link.write_text(text)
    r = cli("budget", link, "--json")
    assert r.code in (0, 1), r.err
    assert any('write f_hz = "915 MHz"' in w for w in r.json()["warnings"]), r.json()["warnings"]


@pytest.mark.parametrize("width", [80, 100, 120])
def test_band_budget_never_cuts_a_cell(link, width):
    """rich Console(width=...): the per-frequency table and the EIRP / caution lines stay whole."""
    import io

    from rich.console import Console

    from matchtool.budget import evaluate
    from matchtool.render.text.budget import render

    write_rlc(link.parent / "tx.s1p", f0_hz=900e6, r_ohm=200.0)  # VSWR 4 at resonance: the caution
    link.write_text(BAND + "eirp_limit_dbm = 10\n")
    buf = io.StringIO()
    render(evaluate(link), con=Console(file=buf, width=width, color_system=None))
    text = buf.getvalue()
    assert "\u2026" not in text and all(len(x) <= width for x in text.splitlines())
    assert "EXCEEDED" in text and "CAUTION: transmit VSWR" in text and "960.000 MHz" in text

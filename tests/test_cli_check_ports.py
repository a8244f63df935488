"""check with multi-port specs: every requirement carries its port or ports in JSON, CSV and
JUnit; JUnit names stay unique; a four-port file checked on port 1 only says so.

Isolation = -20 log10 |S21| (Pozar, Microwave Engineering, 4th ed., sec. 4.3).
"""

from __future__ import annotations

import csv
import io
import xml.etree.ElementTree as ET

import numpy as np
import pytest
import skrf
from helpers import series_rlc_z

from matchtool.sweep import touchstone_text

F = np.linspace(2.3e9, 2.6e9, 61)

SPEC = """
[[band]]
name = "wifi"
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_return_loss_db = 6
[[band]]
name = "wifi"
port = 4
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_return_loss_db = 6
[[isolation]]
name = "main to aux"
ports = [1, 2]
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_isolation_db = 10
[[correlation]]
name = "mimo"
ports = [1, 3]
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
max_ecc = 0.5
"""


def board(tmp_path, f4=2.9e9):
    z = np.zeros((F.size, 4, 4), dtype=complex)
    for k, f0 in enumerate((2.44e9, 2.45e9, 2.46e9, f4)):
        z[:, k, k] = series_rlc_z(F, 50.0, 10e-9, f0)
    for a in range(4):
        for b in range(a + 1, 4):
            z[:, a, b] = z[:, b, a] = (10 + 25j) / (b - a)
    s = skrf.network.z2s(z, np.full(4, 50.0))
    p = tmp_path / "board.s4p"
    p.write_text(touchstone_text(F, s, 50.0))
    return p, s


def test_requirements_carry_port_or_ports_everywhere(cli, tmp_path):
    p, s = board(tmp_path)
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    junit, out_csv = tmp_path / "r.xml", tmp_path / "r.csv"
    r = cli("check", p, "--spec", spec, "--json", "--junit", junit, "--csv", out_csv)
    assert r.code == 1  # port 4 resonates at 2.9 GHz and misses its band
    reqs = r.json()["files"][0]["requirements"]
    by = {q["name"]: q for q in reqs}
    assert by["wifi (port 1)"]["port"] == 1 and by["wifi (port 4)"]["port"] == 4
    assert by["wifi (port 4)"]["pass"] is False and by["wifi (port 1)"]["pass"] is True
    assert by["main to aux"]["ports"] == [1, 2] and by["mimo"]["ports"] == [1, 3]
    assert "port" not in by["main to aux"] and "S21" in by["main to aux"]["checked"]
    inb = (F >= 2.4e9) & (F <= 2.4835e9)
    s21 = s[:, 1, 0]
    edge = np.interp(2.4835e9, F, s21.real) + 1j * np.interp(2.4835e9, F, s21.imag)
    expect = -20 * np.log10(np.max(np.abs(np.append(s21[inb], edge))))
    assert by["main to aux"]["worst"] == pytest.approx(expect, rel=1e-9)
    assert by["mimo"]["margin_db"] is None and by["mimo"]["margin_ecc"] == pytest.approx(0.5 - by["mimo"]["worst"])
    rows = list(csv.DictReader(io.StringIO(out_csv.read_text())))
    assert [(x["requirement"], x["port"], x["ports"]) for x in rows] == [
        ("wifi (port 1)", "1", ""), ("wifi (port 4)", "4", ""), ("main to aux", "", "1,2"), ("mimo", "", "1,3")]
    cases = ET.fromstring(junit.read_text()).findall(".//testcase")
    names = [c.get("name") for c in cases]
    assert len(names) == len(set(names)) == 4
    fail = next(c for c in cases if c.get("name") == "wifi (port 4)").find("failure")
    assert fail is not None and "(port 4)" in fail.get("message")
    text = " ".join(cli("check", p, "--spec", spec).out.split())  # the footer wraps at the terminal width
    assert "main to aux" in text and "dB of isolation" in text and "ECC" in text


def test_port_one_spec_on_four_port_file_warns_that_ports_2_to_4_were_not_checked(cli, tmp_path):
    p, _ = board(tmp_path)
    spec = tmp_path / "one.toml"
    spec.write_text('[[band]]\nname = "wifi"\nf_low = "2.4 GHz"\nf_high = "2.4835 GHz"\nmin_return_loss_db = 6\n')
    r = cli("check", p, "--spec", spec, "--json")
    assert r.code == 0
    assert any("ports 2..4 not checked" in w for w in r.json()["warnings"])
    assert "ports 2..4 not checked" in r.err


def test_spec_naming_port_five_is_an_error_for_that_file(cli, tmp_path):
    p, _ = board(tmp_path)
    spec = tmp_path / "five.toml"
    spec.write_text(SPEC.replace("port = 4", "port = 5"))
    r = cli("check", p, "--spec", spec)
    assert r.code == 2
    errors = [ln for ln in r.err_lines if ln.startswith("error:")]
    assert len(errors) == 1 and "names port 5" in errors[0] and "key 'band[2].port'" in errors[0]
    assert "PASS" not in r.out

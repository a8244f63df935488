"""CLI layer for inspect: exit status, JSON per the contract, one stderr line on errors."""

import math

import pytest
from helpers import write_rlc


def test_inspect_json_contract(cli, tmp_path):
    p = write_rlc(tmp_path / "u.s1p", r_ohm=50.0, n=2301)
    r = cli("inspect", p, "--json", "--at", "915MHz", "--at", "0.9 GHz")
    assert r.code == 0
    doc = r.json()
    for k in ("file", "port", "z0_ohm", "points", "f_start_hz", "f_stop_hz", "threshold_return_loss_db",
              "best", "bands", "at", "warnings"):
        assert k in doc
    assert doc["points"] == 2301 and doc["threshold_return_loss_db"] == 10
    band = doc["bands"][0]
    assert band["bandwidth_hz"] == pytest.approx((2 / 3) * 50 / (2 * math.pi * 40e-9), rel=1e-4)
    assert doc["at"][1]["f_hz"] == 0.9e9
    assert doc["best"]["f_hz"] == pytest.approx(915e6)


def test_perfect_sample_gives_null_not_infinity(cli, tmp_path):
    p = tmp_path / "m.s1p"
    p.write_text("# MHz S RI R 50\n900 0.5 0\n915 0 0\n930 0.5 0\n")
    r = cli("inspect", p, "--json")
    doc = r.json()
    assert doc["best"]["return_loss_db"] is None and doc["best"]["vswr"] == 1.0
    assert any("null" in w for w in doc["warnings"]) and "null" in r.err
    assert "Infinity" not in r.out and "NaN" not in r.out


def test_thresholds_equivalent(cli, tmp_path):
    p = write_rlc(tmp_path / "u.s1p", r_ohm=40.0)
    a = cli("inspect", p, "--json", "--max-vswr", "2").json()
    b = cli("inspect", p, "--json", "--min-return-loss", str(20 * math.log10(3))).json()
    c = cli("inspect", p, "--json", "--max-s11-db", str(-20 * math.log10(3))).json()
    assert a["bands"] == b["bands"] == c["bands"]


@pytest.mark.parametrize("args, words", [
    (["--at", "5GHz"], "outside the sweep"),
    (["--min-return-loss", "-10"], "positive"),
    (["--max-vswr", "2", "--max-s11-db", "-10"], "only one"),
    (["--port", "2"], "port 2"),
    (["--at", "915 furlongs"], "unknown unit"),
])
def test_bad_arguments_one_line(cli, tmp_path, args, words):
    p = write_rlc(tmp_path / "u.s1p")
    r = cli("inspect", p, *args)
    assert r.code == 2
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: ")
    assert words in r.err
    assert "Traceback" not in r.err


def test_missing_and_broken_files(cli, tmp_path):
    r = cli("inspect", tmp_path / "nope.s1p")
    assert r.code == 2 and "nope.s1p" in r.err and len(r.err_lines) == 1
    b = tmp_path / "broken.s1p"
    b.write_text("# MHz S RI R 50\n900 0.1 0.2\n910 0.1\n")
    r = cli("inspect", b)
    assert r.err_lines == [f"error: {b} line 3: expected 3 numbers for a 1-port row, found 2"]


def test_terminal_table(cli, tmp_path):
    p = write_rlc(tmp_path / "u.s1p", r_ohm=45.0)
    r = cli("inspect", p, "--at", "915MHz")
    assert r.code == 0
    assert "Best match" in r.out and "return loss" in r.out and "915.000 MHz" in r.out


def test_debug_shows_traceback(cli_subprocess, tmp_path):
    r = cli_subprocess("inspect", tmp_path / "nope.s1p", "--debug")
    assert r.code != 0 and "Traceback" in r.err


def test_bare_number_outside_sweep_hints_at_the_unit(cli, tmp_path):
    p = write_rlc(tmp_path / "u.s1p")
    r = cli("inspect", p, "--at", "915")
    assert r.code == 2 and "did you mean 915MHz" in r.err and len(r.err_lines) == 1


def test_broken_pipe_is_one_line_and_status_2(cli, tmp_path, monkeypatch):
    import matchtool.commands.inspect as insp

    def closed(*a, **k):
        raise BrokenPipeError(32, "Broken pipe")

    monkeypatch.setattr(insp, "emit_json", closed)
    r = cli("inspect", write_rlc(tmp_path / "u.s1p"), "--json")
    assert r.code == 2 and len(r.err_lines) == 1 and "broken pipe" in r.err and "Traceback" not in r.err


def test_port_two_is_labelled_s22(cli, tmp_path):
    p = tmp_path / "t.s2p"
    p.write_text("# GHz S RI R 50\n1 0.1 0 0.2 0 0.2 0 0.4 0\n2 0.1 0 0.2 0 0.2 0 0.5 0\n")
    r = cli("inspect", p, "--port", "2", "--at", "1.5GHz")
    assert "S22" in r.out and "S11" not in r.out

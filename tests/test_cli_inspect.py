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


# ------------------------------------------------------------------------------- N-port files

def _four_port(tmp_path):
    """Four series-RLC antennas (our own model) resonating at 880, 900, 915 and 940 MHz, uncoupled."""
    import numpy as np
    from helpers import gamma_of, series_rlc_z

    from matchtool.sweep import touchstone_text

    f = np.linspace(800e6, 1030e6, 461)
    s = np.zeros((f.size, 4, 4), dtype=complex)
    for k, f0 in enumerate((880e6, 900e6, 915e6, 940e6)):
        s[:, k, k] = gamma_of(series_rlc_z(f, 50.0, 40e-9, f0))
    p = tmp_path / "board.s4p"
    p.write_text(touchstone_text(f, s, 50.0))
    return p


def test_n_port_without_port_lists_every_port_and_says_which_details(cli, tmp_path):
    p = _four_port(tmp_path)
    r = cli("inspect", p)
    assert r.code == 0
    for k in range(1, 5):
        assert f"port {k}: best" in r.out
    assert "Details for port 1" in r.out
    doc = cli("inspect", p, "--json").json()
    assert doc["port"] == 1 and doc["nports"] == 4  # the one-port document of port 1, plus the overview
    assert [q["port"] for q in doc["port_summary"]] == [1, 2, 3, 4]
    # each port's best sample lies at its own resonance (series RLC: |Gamma| = 0 at f0; 0.5 MHz grid)
    assert [q["best"]["f_hz"] for q in doc["port_summary"]] == pytest.approx([880e6, 900e6, 915e6, 940e6])


def test_port_all_gives_the_one_port_keys_per_port(cli, tmp_path):
    p = _four_port(tmp_path)
    r = cli("inspect", p, "--port", "all", "--json", "--at", "915MHz")
    assert r.code == 0
    doc = r.json()
    assert [q["port"] for q in doc["ports"]] == [1, 2, 3, 4]
    one = cli("inspect", p, "--port", "3", "--json", "--at", "915MHz").json()
    third = doc["ports"][2]
    for k in ("file", "port", "z0_ohm", "points", "f_start_hz", "f_stop_hz", "threshold_return_loss_db", "best",
              "bands", "at"):
        assert third[k] == one[k], k
    assert "ports" not in one and "port_summary" not in one  # one port analysed: the document as it was
    # -10 dB band of a series RLC with R = Z0: width (2/3) R / (2 pi L) (derived, references.md)
    assert third["bands"][0]["bandwidth_hz"] == pytest.approx((2 / 3) * 50 / (2 * math.pi * 40e-9), rel=1e-3)
    text = cli("inspect", p, "--port", "all")
    assert text.out.count("Best match") == 4


@pytest.mark.parametrize("value, words", [("5", "port 5 does not exist"), ("x", "--port x"), ("0", "--port 0")])
def test_bad_port_values(cli, tmp_path, value, words):
    r = cli("inspect", _four_port(tmp_path), "--port", value)
    assert r.code == 2 and len(r.err_lines) == 1 and words in r.err


def _spiky(tmp_path):
    """101 points 800-1000 MHz (2 MHz steps), return loss 5 dB except a 20 dB band on 900-920 MHz
    and one 12 dB sample at 850 MHz: a one-sample poke above the 10 dB threshold."""
    import numpy as np
    from helpers import s1p_text

    f = np.linspace(800e6, 1000e6, 101)
    rl = np.full(f.size, 5.0)
    rl[(f >= 900e6) & (f <= 920e6)] = 20.0
    rl[np.isclose(f, 850e6)] = 12.0
    p = tmp_path / "spiky.s1p"
    p.write_text(s1p_text(f, 10 ** (-rl / 20) + 0j))
    return p


def test_noise_level_crossing_is_listed_apart_from_the_bands(cli, tmp_path):
    p = _spiky(tmp_path)
    doc = cli("inspect", p, "--json").json()
    # derived: edges interpolate the dB curve linearly; 10 dB lies (10-5)/(20-5) = 1/3 of a 2 MHz step
    # inside the 20 dB run, and (10-5)/(12-5) = 5/7 of a step towards the 12 dB sample
    assert len(doc["bands"]) == 1
    assert doc["bands"][0]["f_low_hz"] == pytest.approx(898e6 + 2e6 / 3)
    assert doc["bands"][0]["f_high_hz"] == pytest.approx(922e6 - 2e6 / 3)
    (n,) = doc["noise_crossings"]
    assert n["f_low_hz"] == pytest.approx(848e6 + 2e6 * 5 / 7) and n["f_high_hz"] == pytest.approx(852e6 - 2e6 * 5 / 7)
    assert doc["min_band_width_hz"] == pytest.approx(0.2e6)  # 0.1 % of the 200 MHz span (bands.MIN_BAND_FRACTION)
    r = cli("inspect", p)
    assert r.code == 0 and "Noise-level crossings, not bands" in r.out and "849.429 MHz" in r.out


def test_min_band_width_moves_a_band_to_the_noise_crossings(cli, tmp_path):
    p = _spiky(tmp_path)
    # the band is 22.667 MHz wide (derived above): a 30 MHz minimum turns it into a noise crossing
    doc = cli("inspect", p, "--min-band-width", "30MHz", "--json").json()
    assert doc["bands"] == [] and len(doc["noise_crossings"]) == 2
    assert doc["min_band_width_hz"] == 30e6
    r = cli("inspect", p, "--min-band-width", "30MHz")
    assert "none wide enough to count" in r.out and "never reaches" not in r.out
    doc = cli("inspect", p, "--min-band-width", "10MHz", "--json").json()
    assert len(doc["bands"]) == 1 and len(doc["noise_crossings"]) == 1


def test_min_band_width_errors_are_one_line_exit_2(cli, tmp_path):
    p = _spiky(tmp_path)
    for bad, needle in (("-1MHz", "--min-band-width"), ("wide", "--min-band-width")):
        r = cli("inspect", p, "--min-band-width", bad, "--json")
        assert r.code == 2 and r.out == "" and len(r.err_lines) == 1 and needle in r.err, r.err


def test_summarize_takes_an_skrf_network(tmp_path):
    import skrf

    import matchtool

    p = _spiky(tmp_path)
    s = matchtool.summarize(skrf.Network(str(p)))
    assert len(s.bands) == 1 and len(s.noise_crossings) == 1
    assert s.best.return_loss_db == pytest.approx(20.0)  # the 20 dB samples written above


def test_console_honours_columns_and_keeps_140_only_without_it(monkeypatch):
    from matchtool.render.text import NO_TERMINAL_COLUMNS, console

    monkeypatch.delenv("COLUMNS", raising=False)
    assert console().width == NO_TERMINAL_COLUMNS == 140  # stdout is captured: not a terminal
    monkeypatch.setenv("COLUMNS", "80")
    assert console().width == 80
    monkeypatch.setenv("COLUMNS", "wide")  # not a number: ignored
    assert console().width == 140


@pytest.mark.parametrize("argv", [
    ["inspect", "sample_sweeps/ant_r1.s1p", "--at", "902MHz", "--at", "928MHz"],
    ["match", "sample_sweeps/ant_r1.s1p", "--band", "902MHz:928MHz", "--q-inductor", "40", "--q-capacitor", "200",
     "--tolerance", "5"],
])
def test_columns_80_renders_at_80(cli, monkeypatch, argv):
    from helpers import ROOT

    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.chdir(ROOT)  # relative paths as typed: the checkout's own path must not decide the width
    r = cli(*argv)
    assert r.code == 0, r.err
    lines = r.out.splitlines()
    assert lines and max(len(ln) for ln in lines) <= 80, max(lines, key=len)
    assert "…" not in r.out  # nothing cut

"""CLI layer for qfactor: exit status, JSON per the contract, one stderr line on errors, 80 columns."""

from __future__ import annotations

import math
import sys

import numpy as np
import pytest
from helpers import ROOT, gamma_of, s1p_text, series_rlc_z, write_rlc

C0 = 299_792_458.0
CONTRACT = ("f0_hz", "q", "fractional_bandwidth_potential", "vswr", "measured_fractional_bandwidth", "ka",
            "chu_q_min", "q_over_chu", "efficiency", "warnings")


def test_json_contract_on_a_series_rlc(cli, tmp_path):
    p = write_rlc(tmp_path / "a.s1p", r_ohm=50.0, l_h=40e-9, n=2301)
    r = cli("qfactor", p, "--json", "--radius", "3cm")
    assert r.code == 0, r.err
    doc = r.json()
    for k in CONTRACT:
        assert k in doc
    # Yaghjian & Best 2005: series RLC, Q_Z = w0 L / R at resonance
    w0 = 2 * math.pi * 915e6
    assert doc["q"] == pytest.approx(w0 * 40e-9 / 50.0, rel=1e-4)
    assert doc["f0_hz"] == pytest.approx(915e6, rel=1e-5)
    # 10 dB return loss <-> VSWR 1.9250 (Pozar 4th ed. eqs. 2.38-2.41)
    assert doc["vswr"] == pytest.approx(1.9250, abs=1e-4)
    # derived: (s - 1)/(Q sqrt s) = (2/3)/Q at 10 dB
    assert doc["fractional_bandwidth_potential"] == pytest.approx(2 / 3 / doc["q"], rel=1e-4)
    assert doc["ka"] == pytest.approx(2 * math.pi * doc["f0_hz"] * 0.03 / C0, rel=1e-9)
    ka = doc["ka"]
    assert doc["chu_q_min"] == pytest.approx(1 / ka**3 + 1 / ka, rel=1e-9)  # McLean 1996
    assert doc["efficiency"] is None and doc["measured_fractional_bandwidth"] > 0
    assert doc["fit"]["points"] >= 7 and doc["fit"]["degree"] == 3


def test_without_radius_the_bound_keys_are_null(cli, tmp_path):
    p = write_rlc(tmp_path / "a.s1p")
    doc = cli("qfactor", p, "--json").json()
    assert doc["ka"] is None and doc["chu_q_min"] is None and doc["q_over_chu"] is None


def test_capped_sweep_gives_the_efficiency(cli, tmp_path):
    # Wheeler 1959: series R_rad + R_loss + L + C antenna, capped: R_loss + L + C; 30 / (30 + 6)
    free = write_rlc(tmp_path / "free.s1p", r_ohm=36.0, l_h=60e-9, n=801)
    cap = write_rlc(tmp_path / "cap.s1p", r_ohm=6.0, l_h=60e-9, n=801)
    r = cli("qfactor", free, "--capped", cap, "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["efficiency"] == pytest.approx(30 / 36, rel=0.01)
    assert doc["efficiency_model"] == "series" and doc["efficiency_in_range"] is True
    text = cli("qfactor", free, "--capped", cap)
    assert text.code == 0 and "radiation efficiency" in text.out and "83.3 %" in text.out
    assert "RF exposure" in text.out and "radiansphere" in text.out


def test_efficiency_out_of_range_is_flagged_in_text_and_json(cli, tmp_path):
    free = write_rlc(tmp_path / "free.s1p", r_ohm=10.0, l_h=60e-9)
    cap = write_rlc(tmp_path / "cap.s1p", r_ohm=12.0, l_h=60e-9)
    r = cli("qfactor", free, "--capped", cap, "--json")
    doc = r.json()
    assert r.code == 0 and doc["efficiency_in_range"] is False
    assert any("outside 0..1" in w for w in doc["warnings"]) and "outside 0..1" in r.err
    t = cli("qfactor", free, "--capped", cap)
    assert "INVALID" in t.out and "outside 0..1" in t.err


def test_at_and_threshold_options(cli, tmp_path):
    p = write_rlc(tmp_path / "a.s1p", r_ohm=20.0, l_h=60e-9, n=2301)
    doc = cli("qfactor", p, "--at", "880MHz", "--max-vswr", "2", "--json").json()
    assert doc["f0_hz"] == 880e6 and doc["f0_choice"] == "at"
    # derived: series RLC tuned below resonance, Q = 1/(w C R); C from L and f0 = 915 MHz
    c = 1 / ((2 * math.pi * 915e6) ** 2 * 60e-9)
    assert doc["q"] == pytest.approx(1 / (2 * math.pi * 880e6 * c * 20.0), rel=1e-4)
    assert doc["vswr"] == pytest.approx(2.0, rel=1e-12)
    assert doc["fractional_bandwidth_potential"] == pytest.approx(1 / (doc["q"] * math.sqrt(2)), rel=1e-9)
    same = cli("qfactor", p, "--at", "880MHz", "--min-return-loss", str(20 * math.log10(3)), "--json").json()
    assert same["vswr"] == pytest.approx(2.0, rel=1e-9)


def test_nan_never_reaches_json(cli, tmp_path):
    # a band that runs past the sweep: tuned width unknown -> null, not NaN
    p = write_rlc(tmp_path / "a.s1p", r_ohm=50.0, l_h=4e-9, lo_hz=880e6, hi_hz=950e6, n=201)
    r = cli("qfactor", p, "--json")
    assert r.code == 0 and "NaN" not in r.out and "Infinity" not in r.out
    assert r.json()["tuned_fractional_bandwidth"] is None


@pytest.mark.parametrize("args, words", [
    (["--radius", "-3cm"], "--radius"),
    (["--radius", "3 furlongs"], "unknown unit"),
    (["--at", "5GHz"], "outside the sweep"),
    (["--max-vswr", "2", "--min-return-loss", "10"], "only one"),
    (["--capped", "missing.s1p"], "missing.s1p"),
    (["--port", "2"], "port 2"),
])
def test_bad_arguments_one_line(cli, tmp_path, args, words):
    p = write_rlc(tmp_path / "a.s1p")
    r = cli("qfactor", p, *[str(tmp_path / a) if a == "missing.s1p" else a for a in args])
    assert r.code == 2
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: ") and words in r.err
    assert "Traceback" not in r.err and r.out == ""


def test_too_few_points_is_one_line(cli, tmp_path):
    p = tmp_path / "few.s1p"
    f = np.linspace(900e6, 930e6, 4)
    p.write_text(s1p_text(f, gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))))
    r = cli("qfactor", p)
    assert r.code == 2 and len(r.err_lines) == 1 and "at least 7" in r.err


def test_table_is_legible_at_80_columns(cli, tmp_path, monkeypatch):
    from rich.console import Console

    import matchtool.render.text.qfactor as view

    monkeypatch.setattr(view, "console", lambda: Console(file=sys.stdout, width=80, highlight=False))
    free = write_rlc(tmp_path / "free.s1p", r_ohm=36.0, l_h=60e-9)
    cap = write_rlc(tmp_path / "cap.s1p", r_ohm=6.0, l_h=60e-9)
    r = cli("qfactor", free, "--capped", cap, "--radius", "2.5cm")
    assert r.code == 0
    lines = r.out.splitlines()
    assert all(len(ln) <= 80 for ln in lines) and "\u2026" not in r.out
    for label in ("Q (Yaghjian-Best Q_Z)", "Chu-McLean minimum Q", "radiation efficiency (cap)", "Bode-Fano"):
        assert label in r.out


def test_help_has_examples(cli):
    r = cli("qfactor", "--help")
    assert r.code == 0 and "--radius" in r.out and "--capped" in r.out and "matchtool qfactor" in r.out


def test_report_section_is_self_contained(tmp_path):
    from matchtool.antenna import qfactor
    from matchtool.render.report_qfactor import section_html

    free = write_rlc(tmp_path / "free<1>.s1p", r_ohm=36.0, l_h=60e-9)
    cap = write_rlc(tmp_path / "cap.s1p", r_ohm=6.0, l_h=60e-9)
    html = section_html(qfactor(free, radius_m=0.03, capped=cap))
    assert html.startswith("<div") and html.rstrip().endswith("</div>")
    assert "free&lt;1&gt;.s1p" in html and "<script" not in html and "http" not in html
    assert "Chu-McLean minimum Q" in html and "radiation efficiency" in html and "RF exposure" in html


def test_unrelated_capped_sample_sweep_is_unreliable(cli):
    # the reviewer's case: ant_r1 is not ant_r3 in a cap; its resonance (871.5 MHz) lies outside
    # ant_r3's half-power band f0 +- f0/(2Q) = 915.0 +- 39.1 MHz (Q 11.7; rule derived from f0/Q)
    a, b = ROOT / "sample_sweeps" / "ant_r3.s1p", ROOT / "sample_sweeps" / "ant_r1.s1p"
    r = cli("qfactor", a, "--capped", b, "--json")
    assert r.code == 0 and r.json()["efficiency_reliable"] is False
    assert any("UNRELIABLE" in w and "half-power band" in w for w in r.json()["warnings"])
    t = cli("qfactor", a, "--capped", b)
    line = next(x for x in t.out.splitlines() if "radiation efficiency" in x)
    assert "UNRELIABLE" in line and "UNRELIABLE" in t.err


def test_point_far_from_resonance_is_not_called_a_resonance(cli):
    # ant_r1 at 915 MHz: Z = 21.95 - j36.54 ohm (the sample's own reading); |X| > 0.1 R, so not a
    # resonance: series-type, tuned by +j36.54 ohm (an inductor; -X, derived)
    a = ROOT / "sample_sweeps" / "ant_r1.s1p"
    r = cli("qfactor", a, "--at", "915MHz", "--json")
    assert r.json()["at_resonance"] is False
    assert r.json()["tuning_reactance_ohm"] == pytest.approx(-r.json()["x_ohm"])
    t = cli("qfactor", a, "--at", "915MHz")
    text = " ".join(t.out.split())
    assert "series resonance" not in text and "series-type" in text and "+j36.54" in text, t.out
    t = cli("qfactor", a)  # at its own X = 0 crossing it is a resonance
    assert "resonance" in t.out and "-type" not in t.out


@pytest.mark.parametrize("width", [80, 100, 120])
def test_table_never_cuts_a_cell(width):
    """rich Console(width=...): no ellipsis, no line wider than the console, the values whole."""
    import io

    from rich.console import Console

    from matchtool.antenna import qfactor
    from matchtool.render.text.qfactor import render

    res = qfactor(str(ROOT / "sample_sweeps" / "ant_r3.s1p"), capped=str(ROOT / "sample_sweeps" / "ant_r1.s1p"))
    buf = io.StringIO()
    render(res, con=Console(file=buf, width=width, color_system=None))
    text = buf.getvalue()
    assert "\u2026" not in text and all(len(x) <= width for x in text.splitlines())
    assert "UNRELIABLE" in text and "915.036 MHz" in text and "871.463 MHz" in text

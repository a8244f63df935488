"""CLI layer for locate: JSON contract keys, the gated sweep read back by scikit-rf, exit status,
one-line errors naming the flag."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import skrf
from helpers import ROOT

from matchtool import locate as lc
from matchtool.sweep import touchstone_text

C0 = 299_792_458.0
VF = 0.7


def _one_error(r, *words):
    assert r.code == 2, (r.code, r.out, r.err)
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: "), r.err
    for w in words:
        assert w in r.err, r.err
    assert "Traceback" not in r.err


def _media(f, loss=0.0):
    freq = skrf.Frequency.from_f(f, unit="Hz")
    alpha = loss * np.sqrt(f / 1e9) / (20 / math.log(10))
    return skrf.media.DefinedGammaZ0(freq, z0_port=50.0, z0=50.0, gamma=alpha + 2j * np.pi * f / (VF * C0))


def _cable_file(path, f=None, loss=0.3):
    """A 50-ohm cable of VF 0.7: a 15-ohm series resistor (a bad connector) at 1.2 m and a 100-ohm
    load at 4 m (Gamma 1/3, derived), written with scikit-rf's own cascade."""
    f = np.arange(1, 601) * 5e6 if f is None else f
    m = _media(f, loss)
    net = m.line(1.2, "m") ** m.resistor(15.0) ** m.line(2.8, "m") ** m.load(1 / 3)
    path.write_text(touchstone_text(f, net.s, 50.0))
    return path


def test_json_contract_keys_and_peaks(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p")
    r = cli("locate", p, "--velocity-factor", "0.7", "--loss-db-per-m", "0.3", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    for key in ("velocity_factor", "resolution_m", "max_range_m", "window", "mode", "peaks", "distance_m",
                "reflection_db", "warnings"):
        assert key in doc
    assert doc["velocity_factor"] == 0.7 and doc["window"] == "kaiser" and doc["mode"] == "lowpass-impulse"
    assert doc["max_range_m"] == pytest.approx(C0 * 0.7 / (2 * 5e6))  # c0 VF / (2 step), common practice
    assert len(doc["distance_m"]) == len(doc["reflection_db"]) <= lc.TRACE_POINTS
    peaks = doc["peaks"]
    assert [p["reflection_mag"] for p in peaks] == sorted((p["reflection_mag"] for p in peaks), reverse=True)
    for pk in peaks:
        assert set(pk) >= {"distance_m", "return_loss_db", "reflection_mag"}
    dists = sorted(round(pk["distance_m"], 2) for pk in peaks[:2])
    assert dists == [1.2, 4.0]
    # series 15 ohm: Gamma = 15 / 115 (derived), RL 17.7 dB, within 1 dB after compensation
    near = next(pk for pk in peaks if abs(pk["distance_m"] - 1.2) < 0.05)
    assert near["return_loss_db"] == pytest.approx(-20 * math.log10(15 / 115), abs=1.0)
    assert "likely the antenna" in doc["reading"] or "before the far end" in doc["reading"]
    assert any("velocity factor" in c for c in doc["cautions"]) and any("mast" in c for c in doc["cautions"])
    assert "Infinity" not in r.out and "NaN" not in r.out
    assert "gate" not in doc


def test_text_view_states_window_resolution_mode_and_cautions(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p", f=np.linspace(500.5e6, 3e9, 1000))
    r = cli("locate", p, "--velocity-factor", "0.7", "--window", "rect")
    assert r.code == 0, r.err
    assert "band-pass" in r.out and "magnitude only" in r.out
    assert "-13.3 dB" in r.out and "range resolution" in r.out and "alias-free range" in r.out
    assert "largest reflection at 4.00 m" in r.out
    assert "velocity factor" in r.out and "dangerous" in r.out
    assert "not loss-compensated" in r.out


def test_gate_writes_the_gated_sweep_read_back_by_scikit_rf(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p")
    out = tmp_path / "ant.s1p"
    r = cli("locate", p, "--velocity-factor", "0.7", "--loss-db-per-m", "0.3", "--gate", "3.5m:4.6m",
            "--band", "1GHz:2GHz", "--out", out, "--json")
    assert r.code == 0, r.err
    doc = r.json()
    g = doc["gate"]
    assert g["start_m"] == 3.5 and g["stop_m"] == 4.6
    assert g["band"]["f_low_hz"] == 1e9 and g["band"]["f_high_hz"] == 2e9
    # the load alone: |Gamma| 1/3 behind the resistor's two-way transmission (100/115)^2 (derived),
    # i.e. 9.54 + 2.43 = 11.97 dB once the cable's loss is taken out
    assert g["band"]["worst_return_loss_after_compensated_db"] == pytest.approx(
        -20 * math.log10(1 / 3 * (100 / 115) ** 2), abs=1.0)
    back = skrf.Network(str(out))
    assert back.nports == 1
    api = lc.analyze(str(p), cable=lc.CableModel(length_m=0, velocity_factor=0.7, loss_db_per_m=0.3),
                     gate_m=(3.5, 4.6), band=(1e9, 2e9))
    np.testing.assert_allclose(back.s, api.gate.network.s, atol=1e-10)
    # the same gate in round-trip time
    t1, t2 = 2 * 3.5 / (0.7 * C0) * 1e9, 2 * 4.6 / (0.7 * C0) * 1e9
    r2 = cli("locate", p, "--velocity-factor", "0.7", "--gate", f"{t1:.9f}ns:{t2:.9f}ns", "--json")
    assert r2.json()["gate"]["start_m"] == pytest.approx(3.5, rel=1e-8)


def test_out_is_atomic_and_not_replaced_without_force(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p")
    out = tmp_path / "o.s1p"
    out.write_text("keep me\n")
    _one_error(cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", out), "o.s1p", "--force")
    assert out.read_text() == "keep me\n"
    assert cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", out, "--force").code == 0
    assert skrf.Network(str(out)).nports == 1
    _one_error(cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", p, "--force"), "input")


def test_uncompensated_on_request(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p")
    doc = cli("locate", p, "--velocity-factor", "0.7", "--loss-db-per-m", "0.3", "--uncompensated", "--json").json()
    raw, comp = np.array(doc["reflection_uncompensated_db"]), np.array(doc["reflection_db"])
    assert raw.shape == comp.shape and np.all(comp >= raw - 1e-9)
    pk = doc["peaks"][0]
    assert pk["raw_return_loss_db"] - pk["return_loss_db"] == pytest.approx(pk["two_way_loss_db"], abs=1e-9)


def test_step_mode_names_the_kind(cli, tmp_path):
    p = _cable_file(tmp_path / "feed.s1p")
    r = cli("locate", p, "--velocity-factor", "0.7", "--mode", "lowpass-step")
    assert r.code == 0 and "higher Z (step up)" in r.out, r.out
    doc = cli("locate", p, "--velocity-factor", "0.7", "--mode", "lowpass-step", "--json").json()
    assert doc["mode"] == "lowpass-step" and doc["peaks"][0]["kind"] == "higher_impedance"


@pytest.mark.parametrize("args, words", [
    ([], "--velocity-factor"),
    (["--velocity-factor", "1.5"], "--velocity-factor 1.5"),
    (["--velocity-factor", "0"], "--velocity-factor 0"),
    (["--velocity-factor", "0.7", "--loss-db-per-m", "-1"], "--loss-db-per-m -1"),
    (["--velocity-factor", "0.7", "--dielectric-loss-db-per-m", "nan"], "--dielectric-loss-db-per-m"),
    (["--velocity-factor", "0.7", "--loss-ref", "1000"], "did you mean 1000MHz"),
    (["--velocity-factor", "0.7", "--window", "triangle"], "--window"),
    (["--velocity-factor", "0.7", "--mode", "sideways"], "--mode"),
    (["--velocity-factor", "0.7", "--max-distance", "-3m"], "--max-distance"),
    (["--velocity-factor", "0.7", "--gate", "4m"], "--gate"),
    (["--velocity-factor", "0.7", "--gate", "4m:3m"], "--gate"),
    (["--velocity-factor", "0.7", "--gate", "4m:30ns"], "mixes"),
    (["--velocity-factor", "0.7", "--gate", "4 furlongs:5m"], "--gate"),
    (["--velocity-factor", "0.7", "--gate", "4m:5km"], "alias-free range"),
    (["--velocity-factor", "0.7", "--gate", "3m:5m", "--band", "1MHz:2GHz"], "not inside the sweep"),
    (["--velocity-factor", "0.7", "--band", "1GHz:2GHz"], "--gate"),
    (["--velocity-factor", "0.7", "--out", "x.s1p"], "--gate"),
    (["--velocity-factor", "0.7", "--gate", "3m:5m", "--out", "x.s2p"], ".s1p"),
    (["--velocity-factor", "0.7", "--floor", "-3"], "--floor"),
    (["--velocity-factor", "0.7", "--port", "2"], "port 2"),
])
def test_bad_arguments_one_line(cli, tmp_path, args, words):
    p = _cable_file(tmp_path / "feed.s1p")
    _one_error(cli("locate", p, *args), words)


def test_unusable_sweeps_are_refused_in_one_line(cli, tmp_path):
    p = tmp_path / "uneven.s1p"
    f = np.array([1e9, 1.1e9, 1.15e9, 1.3e9, 1.4e9, 1.5e9, 1.6e9, 1.7e9, 1.8e9])
    p.write_text(touchstone_text(f, np.full(f.size, 0.2 + 0j), 50.0))
    _one_error(cli("locate", p, "--velocity-factor", "0.7"), "uneven.s1p", "evenly spaced")
    q = tmp_path / "non_harmonic.s1p"
    fq = np.linspace(800.3e6, 1e9, 101)
    q.write_text(touchstone_text(fq, np.full(fq.size, 0.2 + 0j), 50.0))
    _one_error(cli("locate", q, "--velocity-factor", "0.7", "--mode", "lowpass-step"), "--mode", "harmonic")
    _one_error(cli("locate", tmp_path / "nope.s1p", "--velocity-factor", "0.7"), "nope.s1p")


def test_json_has_no_infinity_for_a_perfect_match(cli, tmp_path):
    p = tmp_path / "match.s1p"
    f = np.arange(1, 201) * 10e6
    p.write_text(touchstone_text(f, np.zeros(f.size, complex), 50.0))
    r = cli("locate", p, "--velocity-factor", "0.7", "--json")
    assert r.code == 0, r.err
    json.loads(r.out)
    assert "Infinity" not in r.out and "NaN" not in r.out
    assert r.json()["peaks"] == []


def test_distance_picture_and_report_section(tmp_path):
    """The picture for 'plot --kind distance' and the report section: peaks labelled, gate shaded,
    inline SVG without external references."""
    import io

    from matchtool.render.plot_locate import distance_figure, draw_distance
    from matchtool.render.report_locate import section_html

    p = _cable_file(tmp_path / "feed.s1p")
    r = lc.analyze(str(p), velocity_factor=0.7, gate_m=(3.5, 4.6))
    fig = distance_figure(r, "return-loss")
    gids = {a.get_gid() for a in fig.axes[0].get_children()} | {ln.get_gid() for ln in fig.axes[0].lines}
    assert {"distance:trace", "distance:peak:1", "distance:gate"} <= gids
    buf = io.BytesIO()
    draw_distance(r, buf, "png")
    assert buf.getvalue()[:8] == b"\x89PNG\r\n\x1a\n"
    out = tmp_path / "d.svg"
    draw_distance(r, out, "svg")
    assert "<svg" in out.read_text()
    with pytest.raises(Exception, match="exists"):
        draw_distance(r, out, "svg")
    html = section_html(r)
    assert html.startswith("<section") and "<svg" in html and "4.000" in html and "mast" in html
    assert "http://" not in html.replace("http://www.w3.org", "")


def test_reading_names_the_reference_plane_and_an_open_line(cli, tmp_path):
    """A bare load at the reference plane is read as such; an open cable end (|Gamma| = 1, RL 0 dB)
    as a total reflection (a broken or disconnected line)."""
    f = np.arange(1, 401) * 5e6
    bare = tmp_path / "bare.s1p"
    bare.write_text(touchstone_text(f, np.full(f.size, 0.5 + 0j), 50.0))
    r = cli("locate", bare, "--velocity-factor", "0.7", "--json")
    assert "reference plane" in r.json()["reading"], r.json()["reading"]
    m = _media(f)
    opened = tmp_path / "open.s1p"
    opened.write_text(touchstone_text(f, (m.line(6.0, "m") ** m.open()).s, 50.0))
    doc = cli("locate", opened, "--velocity-factor", "0.7", "--json").json()
    assert doc["peaks"][0]["distance_m"] == pytest.approx(6.0, abs=doc["resolution_m"] / 4)
    assert "open or a short" in doc["reading"]


def test_a_gate_too_short_for_the_sweep_is_warned_about(cli, tmp_path):
    """Edge regions 2 / T_gate wide at each end (T_gate the round trip through the gate): a 0.5 m gate
    at VF 0.7 is 4.76 ns, 420 MHz per end, more than half of a 700 MHz sweep (derived)."""
    f = np.linspace(800.5e6, 1.5e9, 701)
    m = _media(f)
    p = tmp_path / "narrow.s1p"
    p.write_text(touchstone_text(f, (m.line(2.0, "m") ** m.load(0.3)).s, 50.0))
    r = cli("locate", p, "--velocity-factor", "0.7", "--gate", "1.75m:2.25m", "--json")
    assert r.code == 0
    doc = r.json()
    assert doc["gate"]["edge_hz"] == pytest.approx(2 / (2 * 0.5 / (0.7 * C0)), rel=1e-9)
    assert any("too short" in w for w in doc["warnings"]) and "too short" in r.err


def test_gated_sweep_is_ready_for_inspect_and_feedline(cli, tmp_path):
    """The gated file is an ordinary sweep: inspect reads it, and feedline moves it to the antenna,
    where the 100-ohm load's return loss behind the resistor (two-way transmission (100/115)^2,
    derived) is 9.54 + 2.43 = 11.97 dB within 1 dB in the middle of the band."""
    p = _cable_file(tmp_path / "feed.s1p", loss=0.0)
    gated = tmp_path / "gated.s1p"
    assert cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", gated).code == 0
    assert cli("inspect", gated, "--json").code == 0
    ant = tmp_path / "ant.s1p"
    r = cli("feedline", gated, "--length", "4m", "--velocity-factor", "0.7", "--loss-db-per-m", "0",
            "--toward", "antenna", "--band", "1GHz:2GHz", "--json", "--out", ant)
    assert r.code == 0, r.err
    want = -20 * math.log10(1 / 3 * (100 / 115) ** 2)
    assert r.json()["band"]["worst_return_loss_antenna_db"] == pytest.approx(want, abs=1.0)


def _uncalibrated(path):
    """A lossless 50-ohm line (VF 0.7) into a 'load' reflecting 1.5: |S11| = 1.5 everywhere (derived:
    a lossless matched line only turns the phase), as an uncalibrated analyzer might record."""
    f = np.arange(1, 601) * 5e6
    m = _media(f)
    net = m.line(4.0, "m") ** m.load(1.5)
    path.write_text(touchstone_text(f, net.s, 50.0))
    return path


def test_nonphysical_gated_sweep_is_not_written(cli, tmp_path):
    p = _uncalibrated(tmp_path / "raw.s1p")
    out = tmp_path / "g.s1p"
    r = cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", out)
    _one_error(r, "non-physical", "|Gamma| up to 1.5", "--force-nonphysical", str(out))
    assert not out.exists()
    r = cli("locate", p, "--velocity-factor", "0.7", "--gate", "3.5m:4.6m", "--out", out, "--force-nonphysical")
    assert r.code == 0 and out.exists()
    # the reviewer's case: a VF 0.66 / 0.66 dB/m gate on the sample sweep (|Gamma| up to 3.08)
    s = ROOT / "sample_sweeps" / "ant_r3_via_cable.s1p"
    out2 = tmp_path / "g2.s1p"
    r = cli("locate", s, "--velocity-factor", "0.66", "--loss-db-per-m", "0.66", "--gate", "2.5m:4m", "--out", out2)
    _one_error(r, "non-physical", "widen the gate")
    assert not out2.exists()


def test_no_loss_blamed_when_no_loss_was_given(cli, tmp_path):
    p = _uncalibrated(tmp_path / "raw.s1p")
    r = cli("locate", p, "--velocity-factor", "0.7", "--json")
    ws = [w for w in r.json()["warnings"] if "|Gamma| = 1" in w]
    assert ws and not any("loss given" in w for w in ws), ws
    r = cli("locate", p, "--velocity-factor", "0.7", "--loss-db-per-m", "0.1", "--json")
    assert any("loss given" in w for w in r.json()["warnings"])


def test_lowpass_far_from_dc_is_refused(cli):
    # ant_r3 starts at 700 MHz in 0.25 MHz steps: 2800 of 4401 points (64 %) would be guessed
    s = ROOT / "sample_sweeps" / "ant_r3.s1p"
    r = cli("locate", s, "--velocity-factor", "0.66", "--mode", "lowpass-step")
    _one_error(r, "--mode lowpass-step", "2800 of 4401", "10 %", "--mode bandpass")


def test_listing_floor_is_never_a_negative_return_loss(tmp_path):
    import dataclasses

    from matchtool.render.text.locate import listing_text

    f = np.arange(1, 601) * 5e6
    m = _media(f)
    res = lc.analyze(m.line(4.0, "m") ** m.load(0.3), velocity_factor=VF)
    assert "return loss" in listing_text(res)
    odd = dataclasses.replace(res, floor_mag=19.3)  # a floor above total reflection
    text = listing_text(odd)
    assert "return loss -" not in text and "|Gamma| 19.3" in text and "not physical" in text


@pytest.mark.parametrize("width", [80, 100, 120])
def test_reflection_table_never_cuts_a_cell(width):
    """rich Console(width=...): the widest table (loss compensated, low-pass step kinds) stays whole."""
    import io

    from rich.console import Console

    from matchtool.render.text.locate import render

    f = np.arange(1, 601) * 5e6
    m = _media(f, 0.1)
    net = m.line(1.2, "m") ** m.resistor(15.0) ** m.line(2.8, "m") ** m.load(1 / 3)
    res = lc.analyze(net, cable=lc.CableModel(length_m=0, velocity_factor=VF, loss_db_per_m=0.1),
                     mode="lowpass-step")
    buf = io.StringIO()
    render(res, uncompensated=True, con=Console(file=buf, width=width, color_system=None))
    text = buf.getvalue()
    assert "\u2026" not in text and all(len(x) <= width for x in text.splitlines())
    assert "higher Z (step up)" in text and f"{res.peaks[0].distance_m:.3f}" in text

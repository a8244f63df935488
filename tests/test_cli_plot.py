"""`matchtool plot --match`: the before/after view draws exactly what `matchtool match` designs."""

from __future__ import annotations

import numpy as np
import pytest
from helpers import ROOT

from matchtool import matching as mt
from matchtool import reflection as rf
from matchtool.proposal import MatchRequest, propose
from matchtool.render import plots
from matchtool.render.plots import match_traces
from matchtool.render.words import network_text
from matchtool.sweep import load

R1 = str(ROOT / "sample_sweeps" / "ant_r1.s1p")


def by_gid(fig, gid):
    found = [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]
    assert found, f"no artist with gid {gid!r}"
    return found[0]


def _elements(doc_candidate):
    return tuple(mt.Element(e["kind"], e["connection"], e["value"]) for e in doc_candidate["elements"])


@pytest.mark.parametrize("target,pick", [(("--band", "902MHz:928MHz"), 1), (("--at", "915MHz"), 2)])
def test_matched_curve_is_matchings_evaluation_of_matchs_network(cli, target, pick):
    opts = [*target, "--q-inductor", "40", "--q-capacitor", "300", "--series", "E12"]
    doc = cli("match", R1, *opts, "--json").json()
    elements = _elements(doc["candidates"][pick - 1])
    sw = load(R1)
    at = 915e6 if target[0] == "--at" else None
    band = (902e6, 928e6) if target[0] == "--band" else None
    pm = propose(sw, MatchRequest(f0_hz=at, band_hz=band, series="E12", q=mt.PartQ(40.0, 300.0), pick=pick), 10.0)
    assert pm.candidate.elements == elements  # the same network as `matchtool match` ranks there
    q = mt.PartQ(40.0, 300.0)
    expected = mt.evaluate(sw.f_hz, sw.gamma, sw.z0_ohm, [(e.kind, e.connection) for e in elements],
                           [e.value for e in elements], q).gamma_in
    traces = match_traces(pm, 10.0, "ant_r1.s1p")
    fig = plots.figure(traces, ["return-loss", "smith"], 10.0)
    before = by_gid(fig, f"return-loss:trace:{traces[0].label}")
    after = by_gid(fig, f"return-loss:trace:{traces[1].label}")
    np.testing.assert_allclose(before.get_ydata(), rf.return_loss_db(sw.gamma))
    np.testing.assert_allclose(after.get_ydata(), rf.return_loss_db(expected), rtol=1e-12)
    smith = by_gid(fig, f"smith:trace:{traces[1].label}")
    np.testing.assert_allclose(smith.get_xdata(), expected.real)
    np.testing.assert_allclose(smith.get_ydata(), expected.imag)
    # the legend names the network, in match's own part notation
    assert network_text(pm.candidate.elements) in traces[1].label
    assert doc["candidates"][pick - 1]["worst_return_loss_db"] == pytest.approx(pm.candidate.worst_return_loss_db)


def test_exact_l_network_at_one_frequency_is_a_perfect_match_there():
    # A lossless L-section with exact values transforms the load to Z0 at the design frequency
    # (Pozar, Microwave Engineering, 4th ed., sec. 5.1): the matched return loss there is very high.
    sw = load(R1)
    pm = propose(sw, MatchRequest(f0_hz=915e6, series="exact"), 10.0)
    g = complex(np.interp(915e6, sw.f_hz, pm.gamma_after.real) + 1j * np.interp(915e6, sw.f_hz, pm.gamma_after.imag))
    assert 915e6 in sw.f_hz  # on a sample: no interpolation error
    assert float(rf.return_loss_db(abs(g))) > 40.0


def test_plot_match_cli_writes_svg_naming_the_network(cli, tmp_path):
    out = tmp_path / "m.svg"
    r = cli("plot", R1, "--match", "--band", "ism=902MHz:928MHz", "--q-inductor", "40", "--out", out)
    assert r.code == 0, r.err
    svg = out.read_text()
    doc = cli("match", R1, "--band", "902MHz:928MHz", "--q-inductor", "40", "--json").json()
    best = _elements(doc["candidates"][0])
    assert network_text(best) in svg and "ant_r1.s1p measured" in svg and "Proposed match" in svg
    assert "Smith chart" in svg and "Return loss" in svg  # default kinds with --match


def test_plot_match_usage_errors_are_one_line_exit_2(cli, tmp_path):
    out = tmp_path / "m.png"
    cases = [
        (("plot", R1, R1, "--match", "--band", "902MHz:928MHz", "--out", out), "one SWEEP"),
        (("plot", R1, "--match", "--out", out), "--at FREQ"),
        (("plot", R1, "--match", "--band", "902MHz:928MHz", "--band", "b=880MHz:890MHz", "--out", out), "--at FREQ"),
        (("plot", R1, "--at", "915MHz", "--out", out), "--match"),
        (("plot", R1, "--match", "--at", "915MHz", "--pick", "99", "--out", out), "--pick"),
        (("plot", R1, "--match", "--at", "5GHz", "--out", out), "ant_r1.s1p"),
        (("plot", R1, "--match", "--at", "915MHz", "--q-inductor", "-3", "--out", out), "--q-inductor"),
    ]
    for args, must in cases:
        r = cli(*args)
        assert r.code == 2 and len(r.err_lines) == 1 and must in r.err, (args, r.err)
        assert not out.exists()


def test_plot_spec_prints_its_verdict_and_exits_as_the_readme_says(cli, tmp_path):
    # README exit-status table: plot given --spec exits 1 when a requirement fails (r1 and r2 fail
    # the sample spec, as `check` reports), 0 when every file passes (r3)
    spec = ROOT / "sample_sweeps" / "spec_915.toml"
    files = [ROOT / "sample_sweeps" / f"ant_r{k}.s1p" for k in (1, 2, 3)]
    out = tmp_path / "revisions.png"
    r = cli("plot", *files, "--spec", spec, "--out", out)
    chk = cli("check", *files, "--spec", spec)
    assert r.code == chk.code == 1 and out.exists()
    words = " ".join(r.out.split())  # the verdict line wraps at the terminal width after a long spec path
    assert "wrote" in r.out and "Verdict: FAIL - 2 of 3 files fail the spec: ant_r1.s1p, ant_r2.s1p" in words
    doc = cli("plot", *files, "--spec", spec, "--out", tmp_path / "j.svg", "--json").json()
    assert doc["pass"] is False and [p.split("/")[-1] for p in doc["failing_files"]] == ["ant_r1.s1p", "ant_r2.s1p"]
    r = cli("plot", files[2], "--spec", spec, "--out", tmp_path / "r3.png")
    assert r.code == 0 and "Verdict: PASS" in r.out
    r = cli("plot", files[0], "--out", tmp_path / "nospec.png", "--json")
    assert r.code == 0 and r.json()["pass"] is None


def test_a_figure_kind_of_another_capability_is_one_registry_line(cli, tmp_path, monkeypatch):
    # the registry other plot kinds (distance, isolation, ecc, tarc) join: one FigureKind line
    import sys
    import types

    mod = types.ModuleType("fake_kind")
    seen = {}

    def compute(sweep, velocity_factor=None):
        seen["points"] = sweep.f_hz.size
        seen["vf"] = velocity_factor
        return types.SimpleNamespace(warnings=("from the fake kind",))

    def draw(result, fileobj, fmt="png"):
        fileobj.write(b"picture:" + fmt.encode())

    mod.compute, mod.draw = compute, draw
    monkeypatch.setitem(sys.modules, "fake_kind", mod)
    monkeypatch.setitem(plots.FIGURE_KINDS, "fake", plots.FigureKind("fake_kind:compute", "fake_kind:draw",
                                                                     compute_options=("velocity_factor",)))
    out = tmp_path / "f.svg"
    r = cli("plot", R1, "--kind", "fake", "--out", out)
    assert r.code == 0 and out.read_bytes() == b"picture:svg" and seen["points"] == load(R1).f_hz.size
    assert seen["vf"] is None  # an option not given is not passed
    assert "from the fake kind" in r.err
    r = cli("plot", R1, "--kind", "fake,smith", "--out", tmp_path / "g.svg")
    assert r.code == 2 and "alone" in r.err


PAIR = str(ROOT / "sample_sweeps" / "wifi_pair.s2p")
PAIR_SPEC = str(ROOT / "sample_sweeps" / "spec_wifi_pair.toml")
VIA_CABLE = str(ROOT / "sample_sweeps" / "ant_r3_via_cable.s1p")


@pytest.mark.parametrize("kind", ["isolation", "ecc", "tarc"])
def test_coupling_kinds_draw_a_two_port_and_judge_the_spec(cli, tmp_path, kind):
    out = tmp_path / f"{kind}.svg"
    r = cli("plot", PAIR, "--kind", kind, "--spec", PAIR_SPEC, "--out", out, "--json")
    # the sample misses its 10 dB isolation limit (about 8.5 dB, spec_wifi_pair.toml): exit 1
    assert r.code == 1, r.err
    doc = r.json()
    assert doc["kinds"] == [kind] and doc["pass"] is False and doc["failing_files"] == [PAIR]
    svg = out.read_text()
    assert {"isolation": 'id="isolation:mask:A to B"', "ecc": 'id="ecc:mask:MIMO ECC"',
            "tarc": 'id="tarc:worst"'}[kind] in svg


def test_isolation_picture_draws_scikit_rfs_s21(tmp_path):
    # |S21| in dB straight from scikit-rf (Network.s_db), independent of matchtool's coupling code
    import skrf

    from matchtool.coupling import analyze_coupling
    from matchtool.render.plot_coupling import isolation_figure

    net = skrf.Network(PAIR)
    fig = isolation_figure(analyze_coupling(load(PAIR, port=1)))
    line = by_gid(fig, "isolation:trace:S21")
    np.testing.assert_allclose(line.get_ydata(), net.s_db[:, 1, 0], atol=1e-9)


@pytest.mark.parametrize("kind", ["isolation", "ecc", "tarc"])
def test_multi_port_kinds_refuse_a_one_port_file_in_one_line(cli, tmp_path, kind):
    out = tmp_path / "x.png"
    r = cli("plot", R1, "--kind", kind, "--out", out)
    assert r.code == 2 and len(r.err_lines) == 1
    assert f"--kind {kind} needs a multi-port file" in r.err and "ant_r1.s1p" in r.err
    assert not out.exists()


def test_distance_kind_draws_locates_reflections_with_the_gate(cli, tmp_path):
    out = tmp_path / "d.svg"
    r = cli("plot", VIA_CABLE, "--kind", "distance", "--velocity-factor", "0.66", "--gate", "2.5m:4m",
            "--max-distance", "10m", "--out", out, "--json")
    assert r.code == 0, r.err
    assert r.json()["kinds"] == ["distance"] and r.json()["pass"] is None
    svg = out.read_text()
    assert 'id="distance:gate"' in svg and 'id="distance:peak:1"' in svg
    loc = cli("locate", VIA_CABLE, "--velocity-factor", "0.66", "--max-distance", "10m", "--json").json()
    # the strongest reflection the picture labels is the one 'matchtool locate' lists first
    assert f"{loc['peaks'][0]['distance_m']:.2f} m" in svg


@pytest.mark.parametrize("args,needle", [
    (["--kind", "distance"], "--velocity-factor: is needed to turn time into distance"),
    (["--kind", "distance", "--velocity-factor", "0.66", "--gate", "4m:2m"], "must start at 0 or later"),
    (["--kind", "distance", "--velocity-factor", "0.66", "--band", "902MHz:928MHz"], "--band is not drawn"),
    (["--kind", "return-loss", "--velocity-factor", "0.66"], "--velocity-factor applies to the distance picture"),
    (["--kind", "distance", "--velocity-factor", "0.66", "--title", "T"], "carries its own title"),
])
def test_distance_kind_usage_errors_are_one_line_exit_2(cli, tmp_path, args, needle):
    out = tmp_path / "d.png"
    r = cli("plot", VIA_CABLE, *args, "--out", out)
    assert r.code == 2 and len(r.err_lines) == 1 and needle in r.err, r.err
    assert not out.exists()


def test_spec_bands_of_another_port_are_not_drawn_on_this_ports_curve(cli, tmp_path):
    # spec_wifi_pair.toml: "wifi" on port 1 and on port 2; the curve drawn is S11, so one band
    out = tmp_path / "rl.svg"
    r = cli("plot", PAIR, "--spec", PAIR_SPEC, "--out", out)
    assert r.code == 1, r.err  # the isolation requirement fails
    assert out.read_text().count('id="return-loss:bandbracket:wifi"') == 1

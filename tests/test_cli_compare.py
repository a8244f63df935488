"""CLI layer of `matchtool compare`: exit status, JSON contract, one-line errors, no matplotlib."""

from __future__ import annotations

import json
import math
import subprocess
import sys

from helpers import ROOT, write_rlc


def three(tmp_path):
    return [write_rlc(tmp_path / "r1.s1p", f0_hz=900e6), write_rlc(tmp_path / "r2.s1p", f0_hz=915e6),
            write_rlc(tmp_path / "r3.s1p", f0_hz=921e6, l_h=30e-9)]


def test_json_contract_one_row_per_input_baseline_first(cli, tmp_path):
    r1, r2, r3 = three(tmp_path)
    r = cli("compare", r1, r2, r3, "--band", "ism=902MHz:928MHz", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["baseline"] == str(r1)
    assert [row["file"] for row in doc["rows"]] == [str(r1), str(r2), str(r3)]
    base = doc["rows"][0]
    assert base["delta_best_f_hz"] == 0 and base["delta_bandwidth_hz"] == 0
    for row in doc["rows"]:
        for k in ("best_f_hz", "best_return_loss_db", "bandwidth_hz", "delta_best_f_hz", "delta_bandwidth_hz"):
            assert isinstance(row[k], float), k
        assert row["delta_best_f_hz"] == row["best_f_hz"] - base["best_f_hz"]
        assert row["delta_bandwidth_hz"] == row["bandwidth_hz"] - base["bandwidth_hz"]
        (b,) = row["bands"]
        assert b["name"] == "ism" and b["f_low_hz"] == 902e6 and b["f_high_hz"] == 928e6
        # mismatch loss from the worst return loss: -10 log10(1 - |G|^2) (Pozar 4th ed. eq. 2.37)
        g = 10 ** (-b["worst_return_loss_db"] / 20)
        assert math.isclose(b["worst_mismatch_loss_db"], -10 * math.log10(1 - g * g), rel_tol=1e-9)
    # RLC on a 0.575 MHz grid starting at 800 MHz: resonances 900/915 MHz sit on or next to samples
    assert abs(doc["rows"][1]["delta_best_f_hz"] - 15e6) <= 0.575e6
    worst = [row["bands"][0]["worst_return_loss_db"] for row in doc["rows"]]
    best_row = doc["rows"][worst.index(max(worst))]
    assert len(doc["band_verdicts"]) == 1 and doc["band_verdicts"][0]["best_file"] == best_row["file"]
    assert doc["band_verdicts"][0]["passing_files"] == [str(r1), str(r2), str(r3)]


def test_baseline_option_moves_it_first_without_duplicating(cli, tmp_path):
    r1, r2, r3 = three(tmp_path)
    doc = cli("compare", r1, r2, r3, "--baseline", r2, "--json").json()
    assert doc["baseline"] == str(r2)
    assert [row["file"] for row in doc["rows"]] == [str(r2), str(r1), str(r3)]
    assert doc["rows"][0]["delta_best_f_hz"] == 0
    doc = cli("compare", r1, r3, "--baseline", r2, "--json").json()
    assert [row["file"] for row in doc["rows"]] == [str(r2), str(r1), str(r3)]


def test_missed_threshold_gives_null_bandwidth_and_no_infinity(cli, tmp_path):
    good = write_rlc(tmp_path / "good.s1p")
    poor = write_rlc(tmp_path / "poor.s1p", r_ohm=200.0)  # |G| >= 0.6 everywhere: never 10 dB
    r = cli("compare", good, poor, "--json")
    assert r.code == 0
    assert "Infinity" not in r.out and "NaN" not in r.out
    row = r.json()["rows"][1]
    assert row["bandwidth_hz"] is None and row["delta_bandwidth_hz"] is None
    assert isinstance(row["delta_best_f_hz"], float)


def test_perfect_sample_infinite_return_loss_is_null_with_warning(cli, tmp_path):
    p = write_rlc(tmp_path / "exact.s1p", f0_hz=915e6, lo_hz=815e6, hi_hz=1015e6, n=201)  # 915 MHz on grid
    r = cli("compare", p, "--json")
    doc = r.json()
    if doc["rows"][0]["best_return_loss_db"] is None:  # Gamma exactly 0 after 12-digit rounding
        assert any("best_return_loss_db" in w for w in doc["warnings"])
        assert any("best_return_loss_db" in ln for ln in r.err_lines)
    else:
        assert doc["rows"][0]["best_return_loss_db"] > 100


def test_table_output_names_files_and_verdict(cli, tmp_path):
    r1, r2, r3 = three(tmp_path)
    r = cli("compare", r1, r2, r3, "--band", "902MHz:928MHz", "--band", "hi=1000MHz:1100MHz")
    assert r.code == 0
    for name in ("r1.s1p", "r2.s1p", "r3.s1p", "902-928 MHz", "best is", "not covered"):
        assert name in r.out, name
    assert any("does not cover" in ln for ln in r.err_lines)


def test_errors_are_one_line_exit_2(cli, tmp_path):
    r1, *_ = three(tmp_path)
    bad = tmp_path / "bad.s1p"
    bad.write_text("# Hz S RI R 50\n1e9 0.1\n")
    cases = [
        (("compare", r1, bad), "bad.s1p"),
        (("compare", r1, tmp_path / "missing.s1p"), "missing.s1p"),
        (("compare", r1, "--band", "928MHz:902MHz"), "928MHz:902MHz"),
        (("compare", r1, "--band", "a=902MHz:928MHz", "--band", "a=1GHz:1.01GHz"), "twice"),
        (("compare", r1, "--min-return-loss", "10", "--max-vswr", "2"), "only one"),
        (("compare", r1, "--spec", tmp_path / "s.toml"), "s.toml"),
    ]
    for args, must in cases:
        r = cli(*args)
        assert r.code == 2, args
        assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: "), r.err
        assert must in r.err, (must, r.err)
        assert r.out == ""


def test_compare_does_not_import_matplotlib(tmp_path):
    r1, r2, _ = three(tmp_path)
    spec = str(ROOT / "sample_sweeps" / "spec_915.toml")
    for argv in (["compare", str(r1), str(r2), "--json"], ["compare", str(r1), str(r2), "--band", "902MHz:928MHz"],
                 ["compare", str(r1), str(r2), "--spec", spec]):
        code = (f"import sys; sys.argv = ['matchtool'] + {argv!r}\nfrom matchtool.cli import main\nrc = main()\n"
                "import json; print(json.dumps([rc, 'matplotlib' in sys.modules]), file=sys.stderr)")
        p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
        rc, has_mpl = json.loads(p.stderr.strip().splitlines()[-1])
        assert rc in (0, 1) and has_mpl is False, argv


SAMPLES = ROOT / "sample_sweeps"


def _spec_with_everything(tmp_path):
    """A spec using every requirement kind: the three reflection limit keys, mismatch loss,
    the resonance window and a golden unit (the on-target sample revision r3)."""
    import shutil

    shutil.copy(SAMPLES / "ant_r3.s1p", tmp_path / "golden.s1p")
    spec = tmp_path / "all.toml"
    spec.write_text(
        '[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'
        'max_mismatch_loss_db = 0.5\n'
        '[[band]]\nname = "guard"\nf_low = "895 MHz"\nf_high = "935 MHz"\nmax_vswr = 3\n'
        '[[band]]\nname = "low"\nf_low = "880 MHz"\nf_high = "890 MHz"\nmax_s11_db = -6\n'
        '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n'
        '[golden]\nfile = "golden.s1p"\nband = "ism"\nmax_deviation_db = 3\nrl_ceiling_db = 25\n')
    return spec


def test_spec_requirements_are_exactly_what_check_reports(cli, tmp_path):
    spec = _spec_with_everything(tmp_path)
    files = [str(SAMPLES / f"ant_r{k}.s1p") for k in (1, 2, 3)]
    chk = cli("check", *files, "--spec", spec, "--json")
    cmp_ = cli("compare", *files, "--spec", spec, "--json")
    assert chk.code == cmp_.code == 1, (chk.err, cmp_.err)  # r1 and r2 fail some requirement
    cdoc, doc = chk.json(), cmp_.json()
    assert doc["pass"] is False and doc["spec"] == str(spec)
    assert len(doc["rows"]) == len(cdoc["files"]) == 3
    keys = set()
    for row, unit in zip(doc["rows"], cdoc["files"], strict=True):
        assert row["file"] == unit["file"] and row["spec_pass"] == unit["pass"]
        mine = [{k: v for k, v in q.items() if k != "delta_margin"} for q in row["requirements"]]
        assert mine == unit["requirements"]  # same names, verdicts, worst, where, limit, margin
        keys |= {q["key"] for q in mine}
        # the plain per-band worst values are there for every spec band too
        assert [b["name"] for b in row["bands"]] == ["ism", "guard", "low"]
    assert keys == {"min_return_loss_db", "max_mismatch_loss_db", "max_vswr", "max_s11_db", "resonance",
                    "max_deviation_db"}
    # best revision per requirement: the largest margin in check's own numbers
    for k, v in enumerate(doc["spec_verdicts"]):
        margins = [(u["requirements"][k]["margin_db"] if u["requirements"][k]["margin_db"] is not None
                    else u["requirements"][k]["margin_hz"], u["file"]) for u in cdoc["files"]]
        assert v["best_file"] == max(margins, key=lambda m: m[0])[1], v
        assert v["passing_files"] == [u["file"] for u in cdoc["files"] if u["requirements"][k]["pass"]]
        assert v["verdict"].startswith(v["name"] + ": best is ")
    # delta_margin is this file's margin minus the baseline's
    base = doc["rows"][0]["requirements"]
    for row in doc["rows"]:
        for q, b in zip(row["requirements"], base, strict=True):
            m, mb = (q["margin_db"], b["margin_db"]) if q["margin_db"] is not None else (q["margin_hz"], b["margin_hz"])
            assert q["delta_margin"] == m - mb


def test_spec_pass_exit_0_and_a_passing_revision_only(cli, tmp_path):
    r3 = str(SAMPLES / "ant_r3.s1p")
    spec = str(SAMPLES / "spec_915.toml")
    assert cli("check", r3, "--spec", spec).code == 0
    r = cli("compare", r3, "--spec", spec, "--json")
    assert r.code == 0 and r.json()["pass"] is True


def test_vswr_limit_met_exactly_passes_with_zero_margin(cli, tmp_path):
    # A 100 ohm resistor on 50 ohm: |Gamma| = 1/3, VSWR = 2, return loss 9.542 dB
    # (Pozar, Microwave Engineering, 4th ed., eqs. 2.35 and 2.38). Limits are inclusive.
    import numpy as np
    from helpers import s1p_text

    f = np.linspace(800e6, 1000e6, 41)
    p = tmp_path / "r100.s1p"
    p.write_text(s1p_text(f, np.full(f.size, 1 / 3 + 0j)))
    spec = tmp_path / "v.toml"
    spec.write_text('[[band]]\nname = "b"\nf_low = "850 MHz"\nf_high = "950 MHz"\nmax_vswr = 2\n')
    r = cli("compare", p, "--spec", spec, "--json")
    assert r.code == 0, r.err
    (q,) = r.json()["rows"][0]["requirements"]
    assert q["pass"] is True and math.isclose(q["worst"], 2.0, rel_tol=1e-9) and abs(q["margin_db"]) < 1e-9
    assert math.isclose(r.json()["rows"][0]["bands"][0]["worst_return_loss_db"], 20 * math.log10(3), rel_tol=1e-9)
    spec.write_text('[[band]]\nname = "b"\nf_low = "850 MHz"\nf_high = "950 MHz"\nmax_vswr = 1.9\n')
    assert cli("compare", p, "--spec", spec).code == 1


def test_band_options_inform_but_do_not_gate(cli, tmp_path):
    r1, r2, _ = three(tmp_path)
    r = cli("compare", r1, r2, "--band", "902MHz:928MHz", "--min-return-loss", "30", "--json")
    assert r.code == 0 and r.json()["rows"][1]["bands"][0]["pass"] is False
    assert r.json()["pass"] is None


def test_spec_errors_exit_2_over_1(cli, tmp_path):
    spec = str(SAMPLES / "spec_915.toml")
    r1 = str(SAMPLES / "ant_r1.s1p")  # fails the spec (status 1 alone)
    bad = tmp_path / "bad.s1p"
    bad.write_text("# Hz S RI R 50\n1e9 0.1\n")
    broken = tmp_path / "broken.toml"
    broken.write_text('[[band]]\nname = "b"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = -10\n')
    for args, must in (((r1, bad, "--spec", spec), "bad.s1p"), ((r1, "--spec", broken), "broken.toml"),
                       ((r1, "--spec", spec, "--port", "2"), "--port"), ((r1, "--spec", spec, "--z0", "75"), "--z0")):
        r = cli("compare", *args)
        assert r.code == 2 and r.out == "" and len(r.err_lines) == 1 and must in r.err, (args, r.err)


def test_spec_table_shows_verdict_lines(cli, tmp_path):
    files = [str(SAMPLES / f"ant_r{k}.s1p") for k in (1, 2, 3)]
    r = cli("compare", *files, "--spec", str(SAMPLES / "spec_915.toml"))
    assert r.code == 1
    for must in ("ism: best is ant_r3.s1p", "resonance: best is ant_r3.s1p", "FAIL", "Verdict: FAIL"):
        assert must in r.out, must


def test_band_edge_a_rounding_below_the_first_sample_is_covered_as_check_says(cli, tmp_path):
    # A band edge a fraction of a hertz outside the sweep (the rounding of a file's frequency unit:
    # 0.902 GHz may read back a hair off 902 MHz) is inside for check, and so it must be for the
    # per-band values of compare (one rule for both).
    import numpy as np
    from helpers import gamma_of, s1p_text, series_rlc_z

    f = np.linspace(0.902e9, 0.928e9, 27)
    p = tmp_path / "ghz.s1p"
    p.write_text(s1p_text(f, gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6)), unit="GHz"))
    lo = 902e6 - 0.05  # Hz
    spec = tmp_path / "s.toml"
    spec.write_text(f'[[band]]\nname = "ism"\nf_low = {lo!r}\nf_high = "928 MHz"\nmin_return_loss_db = 10\n')
    chk = cli("check", p, "--spec", spec, "--json").json()["files"][0]["requirements"][0]
    doc = cli("compare", p, "--spec", spec, "--band", f"x={lo!r}Hz:928MHz", "--json").json()
    row = doc["rows"][0]
    assert chk["reason"] is None and row["requirements"][0]["worst"] == chk["worst"]
    assert len(row["bands"]) == 2
    for b in row["bands"]:
        assert b["covered"] is True and b["f_low_hz"] == lo and b["f_high_hz"] == 928e6
        assert math.isclose(b["worst_return_loss_db"], chk["worst_return_loss_db"], rel_tol=1e-12)
    # a whole hertz outside is outside for both
    spec.write_text('[[band]]\nname = "ism"\nf_low = 901999990.0\nf_high = "928 MHz"\nmin_return_loss_db = 10\n')
    assert cli("check", p, "--spec", spec, "--json").json()["files"][0]["requirements"][0]["reason"]
    assert cli("compare", p, "--spec", spec, "--json").json()["rows"][0]["bands"][0]["covered"] is False


def _render_at(width, render, result):
    import io

    from rich.console import Console

    buf = io.StringIO()
    render(result, Console(file=buf, width=width, highlight=False, soft_wrap=False, color_system=None))
    return buf.getvalue()


def _assert_fits(text, width, must):
    for ln in text.splitlines():
        assert len(ln) <= width, (width, ln)
    assert "…" not in text and "..." not in text  # rich's marks of a cut cell
    for m in must:
        assert m in text, (width, m)


def test_every_table_fits_80_100_and_120_columns_without_cutting_a_cell(monkeypatch):
    from matchtool.compare import BandOfInterest, revisions
    from matchtool.render.text.compare import render
    from matchtool.render.words import margin
    from matchtool.spec import load_spec
    from matchtool.sweep import load

    # relative paths, as a user types them: a path longer than the terminal is one word no layout
    # can break, and the checkout's own path must not decide the test
    monkeypatch.chdir(SAMPLES.parent)
    sweeps = [load(f"sample_sweeps/ant_r{k}.s1p") for k in (1, 2, 3)]
    c = revisions(sweeps, 10.0, [BandOfInterest("ism", 902e6, 928e6, 10.0)], spec=load_spec("sample_sweeps/spec_915.toml"))
    must = [f"{b.worst_return_loss_db:.2f}" for r in c.rows for b in r.bands[:c.adhoc_bands]]
    must += ["ant_r1.s1p", "ism guard", "Verdict"]
    must += [margin(q.margin_db, 2, "dB", q.passed) for r in c.rows for q in r.spec.requirements if q.margin_db is not None]
    for width in (80, 100, 120):
        _assert_fits(_render_at(width, render, c), width, must)


def test_budget_tables_fit_80_100_and_120_columns(tmp_path):
    import shutil

    from matchtool.budget import evaluate
    from matchtool.render.text.budget import render

    for n in ("link_915.toml", "ant_r2.s1p", "ant_r3.s1p"):
        shutil.copy(SAMPLES / n, tmp_path / n)
    text = (tmp_path / "link_915.toml").read_text()
    text = "\n".join(ln for ln in text.splitlines() if not ln.startswith("f_hz"))
    (tmp_path / "link_915.toml").write_text('f_low = "902 MHz"\nf_high = "928 MHz"\npoints = 5\n' + text + "\n")
    res = evaluate(tmp_path / "link_915.toml")
    must = ["running total dBm", "902.000 MHz", "928.000 MHz"] + [f"{r.total_dbm:.2f}" for r in res.worst.rows]
    for width in (80, 100, 120):
        _assert_fits(_render_at(width, render, res), width, must)


def test_dual_band_antenna_shows_both_bands_without_spec_or_band(cli):
    # the sample dual-band Wi-Fi antenna meets 10 dB around 2.4 GHz and around 5 GHz
    path = SAMPLES / "dualband_wifi.s1p"
    doc = cli("compare", path, "--json").json()
    (row,) = doc["rows"]
    bands = row["threshold_bands"]
    assert len(bands) == 2 and bands[0]["f_high_hz"] < 3e9 < bands[1]["f_low_hz"]
    assert [b["holds_best"] for b in bands].count(True) == 1
    out = cli("compare", path).out
    for b in bands:
        assert f"{b['f_low_hz'] / 1e6:.3f}-{b['f_high_hz'] / 1e6:.3f}" in out


def test_noise_sliver_is_listed_apart_never_as_a_band(cli, tmp_path):
    import numpy as np
    from helpers import s1p_text

    # derived: |Gamma| of a 20 dB Lorentzian dip at 2.44 GHz (10 dB crossings at +-50 MHz), plus one
    # noisy sample just above 10 dB at 2.6 GHz (|Gamma| = 10^(-10.3/20))
    f = np.linspace(2.0e9, 3.0e9, 1601)
    x = (f - 2.44e9) / 50e6
    rl = 20.0 / (1.0 + x * x)
    rl[int(np.argmin(abs(f - 2.6e9)))] = 10.3
    p = tmp_path / "noisy.s1p"
    p.write_text(s1p_text(f, 10 ** (-rl / 20) + 0j))
    doc = cli("compare", p, "--json").json()
    (row,) = doc["rows"]
    assert len(row["threshold_bands"]) == 1 and len(row["noise_crossings"]) == 1
    assert abs(row["bandwidth_hz"] - 100e6) < 1e3
    r = cli("compare", p)
    assert "noise-level crossings" in r.out and "2599." in r.out
    assert any("noise-level" in w for w in doc["warnings"])
    # --min-band-width 0 with 1 sample minimum is not offered; a wider minimum moves the sliver only
    doc = cli("compare", p, "--min-band-width", "10kHz", "--json").json()
    assert len(doc["rows"][0]["noise_crossings"]) == 1
    assert cli("compare", p, "--min-band-width", "-1MHz").code == 2


def test_spec_bands_of_another_port_are_not_measured_on_the_analysed_port(cli):
    # spec_wifi_pair.toml has a "wifi" band on port 1 and one on port 2; the sweep is loaded at the
    # spec's port (1), so only port 1's band gets an informational row - port 2's is judged by the
    # spec requirement on S22 itself
    import numpy as np
    import pytest
    import skrf

    pair, spec = ROOT / "sample_sweeps" / "wifi_pair.s2p", ROOT / "sample_sweeps" / "spec_wifi_pair.toml"
    r = cli("compare", pair, "--spec", spec, "--json")
    assert r.code == 1  # the isolation requirement fails (spec_wifi_pair.toml says so)
    row = r.json()["rows"][0]
    net = skrf.Network(str(pair))
    inside = (net.f >= 2400e6) & (net.f <= 2483.5e6)  # 0.5 MHz steps: both edges are samples
    rl = [-float(np.max(net.s_db[inside, p, p])) for p in (0, 1)]  # scikit-rf's own dB (return loss = -S_pp dB)
    assert [b["name"] for b in row["bands"]] == ["wifi"]
    assert row["bands"][0]["worst_return_loss_db"] == pytest.approx(rl[0], abs=1e-9)
    reqs = {q["name"]: q for q in row["requirements"]}
    assert reqs["wifi (port 2)"]["worst"] == pytest.approx(rl[1], abs=1e-9)  # judged on S22 itself
    text = cli("compare", pair, "--spec", spec).out
    assert "MIMO ECC: best is wifi_pair.s2p" in text and "no revision could be evaluated" not in text

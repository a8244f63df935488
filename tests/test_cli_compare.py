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
    for argv in (["compare", str(r1), str(r2), "--json"], ["compare", str(r1), str(r2), "--band", "902MHz:928MHz"]):
        code = (f"import sys; sys.argv = ['matchtool'] + {argv!r}\nfrom matchtool.cli import main\nrc = main()\n"
                "import json; print(json.dumps([rc, 'matplotlib' in sys.modules]), file=sys.stderr)")
        p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
        rc, has_mpl = json.loads(p.stderr.strip().splitlines()[-1])
        assert rc == 0 and has_mpl is False, argv


def test_spec_bands_gate_the_exit_status_band_options_do_not(cli, tmp_path, monkeypatch):
    # The spec reader belongs to `matchtool check`; a minimal stand-in with its interface
    # (load_spec(path).bands[i].name / f_low_hz / f_high_hz / min_return_loss_db) tests the adapter here.
    import types

    class Band:
        def __init__(self, name, lo, hi, rl):
            self.name, self.f_low_hz, self.f_high_hz, self.min_return_loss_db = name, lo, hi, rl

    fake = types.ModuleType("matchtool.spec")
    limits = {"loose.toml": 6.0, "tight.toml": 30.0}
    fake.load_spec = lambda path: types.SimpleNamespace(bands=[Band("ism", 902e6, 928e6, limits[path.split("/")[-1]])])
    monkeypatch.setitem(sys.modules, "matchtool.spec", fake)
    r1, r2, _ = three(tmp_path)
    r = cli("compare", r1, r2, "--spec", str(tmp_path / "loose.toml"), "--json")
    assert r.code == 0, r.err
    (b,) = r.json()["rows"][0]["bands"]
    assert b["limit_return_loss_db"] == 6.0 and b["pass"] is True
    r = cli("compare", r1, r2, "--spec", str(tmp_path / "tight.toml"), "--json")
    assert r.code == 1 and r.json()["rows"][1]["bands"][0]["pass"] is False
    # the same limit given as a --band threshold informs but does not gate
    r = cli("compare", r1, r2, "--band", "902MHz:928MHz", "--min-return-loss", "30", "--json")
    assert r.code == 0 and r.json()["rows"][1]["bands"][0]["pass"] is False

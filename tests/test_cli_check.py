"""CLI layer for check: exit statuses, JSON per the contract, JUnit and CSV read back with real parsers."""

from __future__ import annotations

import csv
import xml.etree.ElementTree as ET

import pytest
from helpers import write_rlc

from matchtool import batch

SPEC = ('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'
        'max_mismatch_loss_db = 0.5\n'
        '[[band]]\nname = "guard"\nf_low = "890 MHz"\nf_high = "940 MHz"\nmax_vswr = 3\n')


@pytest.fixture
def lot(tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    good = write_rlc(tmp_path / "good.s1p", r_ohm=50.0)
    bad = write_rlc(tmp_path / "detuned.s1p", r_ohm=50.0, f0_hz=980e6)
    broken = tmp_path / "broken.s1p"
    broken.write_text("# MHz S RI R 50\n900 0.1 0.2\n910 0.1\n")
    return tmp_path, spec, good, bad, broken


def test_json_contract_and_exit_statuses(cli, lot):
    d, spec, good, bad, broken = lot
    r = cli("check", good, "--spec", spec, "--json")
    assert r.code == 0
    doc = r.json()
    assert doc["pass"] is True and len(doc["files"]) == 1
    f = doc["files"][0]
    assert f["file"] == str(good) and f["pass"] is True and f["error"] is None
    assert [q["name"] for q in f["requirements"]] == ["ism", "ism mismatch loss", "guard"]
    for q in f["requirements"]:
        for k in ("name", "pass", "limit", "worst", "worst_f_hz", "margin_db"):
            assert k in q
        assert q["margin_db"] > 0
    assert f["requirements"][2]["limit"] == 3 and 1 <= f["requirements"][2]["worst"] < 3  # a ratio
    r = cli("check", good, bad, "--spec", spec, "--json")
    assert r.code == 1 and r.json()["pass"] is False
    assert "summary" in r.json() and r.json()["summary"]["units"] == 2


def test_exit_2_wins_and_reports_still_written(cli, lot):
    d, spec, good, bad, broken = lot
    junit, table = d / "r.xml", d / "r.csv"
    r = cli("check", good, bad, broken, "--spec", spec, "--json", "--junit", junit, "--csv", table)
    assert r.code == 2
    doc = r.json()  # stdout holds exactly one JSON document
    assert [f["file"] for f in doc["files"]] == [str(good), str(bad), str(broken)]
    assert doc["files"][2]["error"].startswith(f"{broken} line 3") and doc["files"][2]["requirements"] == []
    assert doc["files"][1]["pass"] is False and doc["files"][0]["pass"] is True
    assert any(ln.startswith(f"error: {broken} line 3") for ln in r.err_lines)

    root = ET.parse(junit).getroot()
    cases = root.findall(".//testcase")
    assert len(cases) == 3 + 3 + 1  # one per file and requirement, one error case for the broken file
    assert int(root.get("tests")) == 7 and int(root.get("errors")) == 1
    err = [c for c in cases if c.find("error") is not None]
    assert len(err) == 1 and err[0].get("classname") == str(broken)
    fails = [c for c in cases if c.find("failure") is not None]
    assert fails and all(c.get("classname") == str(bad) for c in fails)
    assert int(root.get("failures")) == len(fails)
    det = next(q for q in doc["files"][1]["requirements"] if q["name"] == "ism")
    msg = next(c for c in fails if c.get("name") == "ism").find("failure").get("message")
    assert f"worst {det['worst']:.2f}" in msg and f"margin {det['margin_db']:+.2f} dB" in msg

    with open(table, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == 7
    cols = rows[0].keys()
    assert {"file", "requirement", "pass", "limit", "worst", "worst_f_hz", "margin_db", "band_f_low_hz"} <= set(cols)
    row = next(x for x in rows if x["file"] == str(bad) and x["requirement"] == "ism")
    assert float(row["worst"]) == pytest.approx(det["worst"], rel=1e-12) and row["pass"] == "false"
    assert float(row["worst_f_hz"]) == det["worst_f_hz"] and row["unit"] == "dB return loss"
    assert next(x for x in rows if x["file"] == str(broken))["error"].startswith(str(broken))


def test_existing_reports_are_not_replaced_without_force(cli, lot):
    d, spec, good, *_ = lot
    junit, table = d / "r.xml", d / "r.csv"
    table.write_text("keep me")
    r = cli("check", good, "--spec", spec, "--junit", junit, "--csv", table)
    assert r.code == 2 and "r.csv" in r.err and "--force" in r.err and len(r.err_lines) == 1
    assert not junit.exists() and table.read_text() == "keep me"  # nothing written at all
    r = cli("check", good, "--spec", spec, "--junit", junit, "--csv", table, "--force")
    assert r.code == 0 and table.read_text().startswith("file,") and ET.parse(junit).getroot().tag == "testsuites"


def test_same_output_twice_refused(cli, lot):
    d, spec, good, *_ = lot
    r = cli("check", good, "--spec", spec, "--junit", d / "x", "--csv", d / "x")
    assert r.code == 2 and "same file" in r.err and not (d / "x").exists()


def test_bad_spec_one_line_nothing_written(cli, lot):
    d, spec, good, *_ = lot
    badspec = d / "bad.toml"
    badspec.write_text('[[band]]\nname = "x"\nf_low = "928 MHz"\nf_high = "902 MHz"\nmin_return_loss_db = 10\n')
    r = cli("check", good, "--spec", badspec, "--junit", d / "r.xml", "--json")
    assert r.code == 2 and r.out == ""
    assert r.err_lines == [f"error: {badspec} key 'band[1].f_high': reversed band: f_high 9.02e+08 Hz is below "
                           "f_low 9.28e+08 Hz; expected f_high above f_low"]
    assert not (d / "r.xml").exists()


def test_interrupt_leaves_no_report(cli, lot, monkeypatch):
    d, spec, good, bad, _ = lot
    seen = []

    def interrupted(path, spec):
        seen.append(path)
        if len(seen) == 2:
            raise KeyboardInterrupt
        return real(path, spec)

    real = batch.check_file
    monkeypatch.setattr(batch, "check_file", interrupted)
    r = cli("check", good, bad, "--spec", spec, "--junit", d / "r.xml", "--csv", d / "r.csv")
    assert r.code == 130 and len(seen) == 2
    assert not (d / "r.xml").exists() and not (d / "r.csv").exists()
    assert not [p for p in d.iterdir() if p.name.endswith(".part")]


def test_directory_and_jobs_give_identical_json(cli, tmp_path, monkeypatch):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    lot = tmp_path / "lot"
    lot.mkdir()
    for k in range(12):
        write_rlc(lot / f"unit{k}.s1p", f0_hz=880e6 + 6e6 * k, l_h=150e-9, n=231)
    monkeypatch.setattr(batch, "IN_PROCESS_MAX", 2)
    one = cli("check", lot, "--spec", spec, "--json", "--jobs", "1")
    many = cli("check", lot, "--spec", spec, "--json", "--jobs", "3")
    assert one.code == many.code == 1 and one.out == many.out
    files = [f["file"] for f in one.json()["files"]]
    assert files == [str(lot / f"unit{k}.s1p") for k in range(12)]  # natural order
    s = one.json()["summary"]
    assert s["resonance_f_hz"]["min"] == pytest.approx(880e6) and s["resonance_f_hz"]["max"] == pytest.approx(946e6)
    assert s["yield"][0]["name"] == "ism" and 0 < s["yield"][0]["passed"] < 12
    assert "checking" not in one.err  # no progress bar when stderr is not a terminal


def test_terminal_table_and_summary(cli, lot):
    d, spec, good, bad, _ = lot
    r = cli("check", good, bad, "--spec", spec)
    assert r.code == 1
    assert "good.s1p" in r.out and "detuned.s1p" in r.out and "FAIL" in r.out and "margin" in r.out
    assert "Lot: 2 units, 1 passed, 1 failed" in r.out and "yield 50.0 %" in r.out


@pytest.mark.parametrize("args, words", [
    (["--jobs", "0"], "--jobs"),
    ([], "Missing option"),
])
def test_bad_arguments(cli, lot, args, words):
    d, spec, good, *_ = lot
    extra = ["--spec", spec] if args else []
    r = cli("check", good, *extra, *args)
    assert r.code == 2 and len(r.err_lines) == 1 and words in r.err


def test_pattern_that_matches_nothing_is_a_per_file_error(cli, lot):
    d, spec, good, *_ = lot
    r = cli("check", good, str(d / "none*.s1p"), "--spec", spec, "--json")
    assert r.code == 2
    files = r.json()["files"]
    assert files[0]["pass"] is True and "matches no file" in files[1]["error"]


def test_core_and_check_imports_are_lean(tmp_path):
    import subprocess
    import sys

    from helpers import ROOT

    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    p = write_rlc(tmp_path / "u.s1p")
    lib = ("import matchtool.spec, matchtool.batch, matchtool.render.junit, matchtool.render.csvout\n"
           "import sys; print(' '.join(sys.modules))")
    mods = set(subprocess.run([sys.executable, "-c", lib], capture_output=True, text=True, cwd=ROOT,
                              check=True).stdout.split())
    assert not {"typer", "rich", "matplotlib"} & mods
    run = (f"from matchtool.cli import main\nmain(['check', {str(p)!r}, '--spec', {str(spec)!r}])\n"
           "import sys; print(' '.join(sys.modules))")
    out = subprocess.run([sys.executable, "-c", run], capture_output=True, text=True, cwd=ROOT).stdout
    assert "guard" in out and "matplotlib" not in out.split()


def test_progress_bar_only_on_a_terminal(cli, tmp_path, monkeypatch):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    for k in range(20):
        write_rlc(tmp_path / f"u{k}.s1p", n=101)
    quiet = cli("check", tmp_path, "--spec", spec, "--json")
    assert "checking" not in quiet.err
    import sys

    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    monkeypatch.setenv("FORCE_COLOR", "1")
    loud = cli("check", tmp_path, "--spec", spec, "--json")
    assert "checking" in loud.err and loud.json() == quiet.json()


def test_report_may_not_overwrite_an_input(cli, lot):
    d, spec, good, *_ = lot
    before = good.read_text()
    r = cli("check", good, "--spec", spec, "--csv", good, "--force")
    assert r.code == 2 and "overwrite one of the inputs" in r.err and good.read_text() == before
    r = cli("check", good, "--spec", spec, "--junit", spec, "--force")
    assert r.code == 2 and spec.read_text() == SPEC


def test_interrupt_in_a_worker_process_stops_the_lot(cli, tmp_path, monkeypatch):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    for k in range(8):
        write_rlc(tmp_path / f"u{k}.s1p", n=101)
    monkeypatch.setattr(batch, "IN_PROCESS_MAX", 2)
    monkeypatch.setattr(batch, "POOL_MIN_S", 0.0)
    real = batch._check_one

    def work(path, spec, hashes):  # runs in the forked workers
        if path.endswith("u5.s1p"):
            raise KeyboardInterrupt
        return real(path, spec, hashes)

    monkeypatch.setattr(batch, "_check_one", work)
    r = cli("check", tmp_path, "--spec", spec, "--jobs", "2", "--csv", tmp_path / "r.csv")
    assert r.code == 130 and not (tmp_path / "r.csv").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]


def test_reports_survive_hostile_file_names(cli, tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    odd = write_rlc(tmp_path / 'a&b <"c">\x1b, =1+1.s1p', n=101)
    junit, table = tmp_path / "r.xml", tmp_path / "r.csv"
    r = cli("check", odd, "--spec", spec, "--junit", junit, "--csv", table)
    assert r.code == 0
    cases = ET.parse(junit).getroot().findall(".//testcase")
    assert len(cases) == 3 and cases[0].get("classname") == str(odd).replace("\x1b", "\ufffd")
    assert 'a&b <"c">' in cases[0].get("classname")
    with open(table, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    assert len(rows) == 4 and all(len(x) == len(rows[0]) for x in rows) and 'a&b <"c">' in rows[1][0]


def test_file_names_are_never_truncated_a_common_folder_is_named_once(cli, tmp_path):
    from helpers import ROOT

    samples = ROOT / "sample_sweeps"
    r = cli("check", samples, "--spec", samples / "spec_915.toml")
    assert r.code == 1
    assert "…" not in r.out and "..." not in r.out
    # the title may wrap at the terminal width (between words: a long checkout path moves it)
    assert f"(files in {samples}/)" in " ".join(r.out.split())
    for name in ("ant_r2_coarse.s1p", "ant_r3_via_cable.s1p", "dualband_wifi.s1p", "module_port2.s2p"):
        assert any(ln.startswith(f"{name}: ") for ln in r.out.splitlines()), name


def test_a_long_single_file_name_is_wrapped_not_cut(cli, tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    deep = tmp_path / ("lot_" + "x" * 60) / ("unit_" + "y" * 70 + ".s1p")
    deep.parent.mkdir()
    write_rlc(deep, r_ohm=50.0)
    r = cli("check", deep, "--spec", spec)
    assert r.code == 0, r.err
    assert "…" not in r.out
    assert "y" * 70 in "".join(line.split("│")[0].strip() for line in r.out.splitlines())


def test_limit_has_its_unit_and_the_footer_names_every_margin_unit(cli, tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC + '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n')
    good = write_rlc(tmp_path / "good.s1p", r_ohm=50.0)
    r = cli("check", good, "--spec", spec)
    assert r.code == 0, r.err
    assert ">= 10.00 dB" in r.out  # the limit with its direction and unit, not a bare 10.00
    # VSWR in "ratio", the unit every other view and the JSON give it
    assert "<= 0.50 dB" in r.out and "<= 3.000 ratio" in r.out and "VSWR " not in r.out.split("Margins")[0]
    footer = " ".join(r.out[r.out.index("Margins are"):r.out.index("Verdict")].split())
    assert "dB of return loss" in footer and "(a VSWR limit converted to it)" in footer
    assert "dB of mismatch loss" in footer and "resonance margin in MHz" in footer
    assert "Margins are in dB of return loss" not in r.out


def test_worst_units_lists_only_failing_units(cli, lot):
    d, spec, good, bad, broken = lot
    other = write_rlc(d / "good2.s1p", r_ohm=45.0)
    r = cli("check", good, bad, other, "--spec", spec)
    assert r.code == 1
    lines = r.out.splitlines()
    k = next(i for i, x in enumerate(lines) if x.startswith("Worst unit of each failing requirement"))
    listed = [x.strip() for x in lines[k + 1:] if x.startswith("  ")]
    assert listed and all("detuned.s1p" in x for x in listed)
    r = cli("check", good, other, "--spec", spec)
    assert r.code == 0
    assert "Worst unit" not in r.out and "failing units" not in r.out
    lines = r.out.splitlines()
    k = next(i for i, x in enumerate(lines) if x.startswith("Closest to failing"))
    assert "relative to the limit" in lines[k]
    assert next(x for x in lines[k + 1:] if x.startswith("  ")).strip().startswith("good")


SPEC_RES = SPEC + '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n'


@pytest.fixture
def spread_lot(tmp_path):
    """u7 misses every requirement by most (far above the window), u4 and u8 miss the window by
    less and the dB limits a little: the reviewer's generated lot in miniature."""
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC_RES)
    d = tmp_path / "lot"
    d.mkdir()
    write_rlc(d / "u1.s1p", r_ohm=50.0, f0_hz=915e6, l_h=150e-9, n=921)
    write_rlc(d / "u4.s1p", r_ohm=50.0, f0_hz=897.25e6, l_h=150e-9, n=921)
    write_rlc(d / "u7.s1p", r_ohm=50.0, f0_hz=947.75e6, l_h=150e-9, n=921)
    write_rlc(d / "u8.s1p", r_ohm=50.0, f0_hz=932.25e6, l_h=150e-9, n=921)
    return tmp_path, spec, d


def _own_worst(doc):
    """Per requirement, (most negative margin in its own unit, file), computed from the per-unit
    JSON rows (independent of the summary)."""
    worst = {}
    for f in doc["files"]:
        for q in f["requirements"]:
            if not q["pass"]:
                m = q["margin_hz"] if q["key"] == "resonance" else q["margin_db"]
                worst[q["name"]] = min(worst.get(q["name"], (m, f["file"])), (m, f["file"]))
    return worst


def test_each_failing_requirement_shows_its_own_worst_unit_and_margin(cli, spread_lot):
    tmp, spec, d = spread_lot
    doc = cli("check", d, "--spec", spec, "--json").json()
    own = _own_worst(doc)
    assert set(own) == {"ism", "ism mismatch loss", "guard", "resonance"}
    assert own["resonance"][1].endswith("u7.s1p") and own["resonance"][0] == pytest.approx(-22.75e6)  # 947.75 - 925
    # JSON: one "requirement" entry per failing requirement, with that requirement's own margin
    per = {w["requirement"]: w for w in doc["summary"]["worst_units"] if w["ranked_by"] == "requirement"}
    assert set(per) == set(own)
    for name, (m, f) in own.items():
        got = per[name]["margin_hz"] if name == "resonance" else per[name]["margin_db"]
        assert per[name]["file"] == f and got == pytest.approx(m)
    rest = [w for w in doc["summary"]["worst_units"] if w["ranked_by"] == "relative_margin"]
    assert {w["file"] for w in rest} == {str(d / "u4.s1p"), str(d / "u8.s1p")}
    # text: the resonance line names u7 with its MHz margin, not u4's 7.75 MHz
    r = cli("check", d, "--spec", spec)
    text = " ".join(r.out.split())
    assert "resonance: u7.s1p, margin -22.750 MHz from the window" in text
    assert f"ism: u7.s1p, margin {own['ism'][0]:.2f} dB" in text
    assert "ranked by" in text or "worst first by margin relative to the limit" in text
    # JUnit per lot: each case quotes its own worst unit and its own margin, in its own unit
    junit = tmp / "l.xml"
    cli("check", d, "--spec", spec, "--junit-level", "lot", "--junit", junit)
    for case in ET.parse(junit).getroot().iter("testcase"):
        fail = case.find("failure")
        m, f = own[case.get("name")]
        want = f"{m / 1e6:.3f} MHz" if case.get("name") == "resonance" else f"{m:.2f} dB"
        assert f"worst unit {f} (margin {want}" in fail.get("message"), fail.get("message")


def test_resonance_window_and_tiny_margins_keep_their_digits(cli, tmp_path):
    # grid of 0.25 MHz steps (800 to 1030 MHz, 921 points): the best match lies exactly at 914.75 MHz
    unit = write_rlc(tmp_path / "u.s1p", r_ohm=50.0, f0_hz=914.75e6, n=921)
    spec = tmp_path / "tight.toml"
    spec.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'
                    '[resonance]\nf_low = "914.75 MHz"\nf_high = "925 MHz"\n')
    doc = cli("check", unit, "--spec", spec, "--json").json()
    res = doc["files"][0]["requirements"][1]
    assert res["worst"] == 914.75e6 and res["margin_hz"] == 0.0  # precondition: on the edge exactly
    r = cli("check", unit, "--spec", spec)
    row = " ".join(next(ln for ln in r.out.splitlines() if ln.strip().startswith("resonance")).split())
    assert "914.75 to 925 MHz" in row and "914.8" not in row and "+0.000 MHz" in row  # exactly zero
    worst = doc["files"][0]["requirements"][0]["worst"]
    # a limit 1e-10 dB above the worst (10 decimals): worst and limit never print the same
    spec.write_text(f'[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\n'
                    f'min_return_loss_db = {worst + 1e-10:.10f}\n')
    r = cli("check", unit, "--spec", spec)
    cells = next(ln for ln in r.out.splitlines() if ln.strip().startswith("ism")).split()
    assert r.code == 1 and cells[2] != cells[6].lstrip(">= "), cells
    assert "0.000 dB" not in " ".join(cells) and "e-" not in " ".join(cells)
    junit = tmp_path / "j.xml"
    cli("check", unit, "--spec", spec, "--junit", junit)
    msg = ET.parse(junit).getroot().find(".//failure").get("message")
    w = msg.split("worst ")[1].split(" ")[0]
    lim = msg.split("limit ")[1].split(" ")[0]
    assert w != lim and float(w) < float(lim), msg
    # a passing margin of 1e-7 dB does not read "+0.00": only an exact zero does
    spec.write_text(f'[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\n'
                    f'min_return_loss_db = {worst - 1e-7!r}\n')
    r = cli("check", unit, "--spec", spec)
    row = next(ln for ln in r.out.splitlines() if ln.strip().startswith("ism"))
    assert r.code == 0 and "+0.00" not in row and "above" in row, row


def test_check_and_compare_print_a_tiny_margin_alike(cli, tmp_path):
    unit = write_rlc(tmp_path / "u.s1p", r_ohm=50.0)
    spec = tmp_path / "s.toml"
    spec.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n')
    worst = cli("check", unit, "--spec", spec, "--json").json()["files"][0]["requirements"][0]["worst"]
    spec.write_text(f'[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\n'
                    f'min_return_loss_db = {worst + 4.8e-5!r}\n')
    check = cli("check", unit, "--spec", spec).out
    compare = cli("compare", unit, unit, "--spec", spec).out
    assert "-0.00005 dB" in check and "-0.00005 dB" in compare and "e-05" not in check


def test_a_limit_keeps_its_unit_on_its_line_at_80_columns(cli, lot, monkeypatch):
    d, spec, good, bad, broken = lot
    monkeypatch.setenv("COLUMNS", "80")
    r = cli("check", bad, "--spec", spec)
    row = next(ln for ln in r.out.splitlines() if ln.strip().startswith("guard"))
    assert "<= 3.000 ratio" in row, r.out


# ----------------------------------------------------------------- layout, margins, errors, JUnit

@pytest.mark.parametrize("width", [80, 100, 120])
def test_tables_fit_and_no_word_is_broken(cli, lot, monkeypatch, width):
    from matchtool.render.text.check import requirement_cells

    d, spec, good, bad, broken = lot
    s2 = d / "spec2.toml"
    s2.write_text(SPEC + '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n')
    monkeypatch.setenv("COLUMNS", str(width))
    r = cli("check", good, bad, "--spec", s2)
    assert r.code == 1
    lines = r.out.splitlines()
    assert all(len(ln) <= width for ln in lines if not ln.startswith("Check against")), width
    words = set(r.out.split())
    doc = cli("check", good, bad, "--spec", s2, "--json").json()
    from matchtool.spec import RequirementResult

    for f in doc["files"]:
        for q in f["requirements"]:
            rr = RequirementResult(name=q["name"], key=q["key"], passed=q["pass"], limit=q["limit"], worst=q["worst"],
                                   worst_f_hz=q["worst_f_hz"], margin_db=q["margin_db"], f_low_hz=q["f_low_hz"],
                                   f_high_hz=q["f_high_hz"], margin_hz=q["margin_hz"])
            for cell in (q["name"], *requirement_cells(rr)):
                for word in cell.split():
                    assert word in words, (width, word)  # every word of every cell shown whole
    for word in ("requirement", "verdict", "margin", "905", "925"):
        assert word in words


def test_a_failing_margin_never_reads_zero(cli, lot, tmp_path):
    d, spec, good, *_ = lot
    one = tmp_path / "one.toml"
    one.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n')
    worst = cli("check", good, "--spec", one, "--json").json()["files"][0]["requirements"][0]["worst"]
    # a limit 0.004 dB above the unit's worst return loss: it fails by 0.004 dB
    one.write_text(f'[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = {worst + 0.004!r}\n')
    r = cli("check", good, "--spec", one)
    assert r.code == 1
    row = next(ln for ln in r.out.splitlines() if ln.strip().startswith("ism"))
    assert "FAIL" in row and "-0.004 dB" in row and "0.00 dB" not in row.replace("-0.004", "")
    cells = row.split()
    w, lim = cells[2], cells[6]  # worst and limit must differ in the digits shown
    assert w != lim
    junit = tmp_path / "r.xml"
    cli("check", good, "--spec", one, "--junit", junit)
    msg = ET.parse(junit).getroot().find(".//failure").get("message")
    assert "margin -0.004 dB" in msg


def test_margins_carry_their_sign():
    from matchtool.render.text.check import signed

    assert signed(1.234) == "+1.23" and signed(-1.234) == "-1.23" and signed(0.0) == "+0.00"
    assert signed(-0.004) == "-0.004" and signed(-0.0004) == "-0.0004"
    # the rule of render/words.margin (compare, report): digits, never scientific notation
    assert signed(-0.000048, 2, "dB") == "-0.00005 dB" and signed(-4e-9) == "< 0.000001 below"
    assert signed(-0.0) == "+0.00"  # a zero margin passes (margin >= 0)
    # a tiny positive margin is never "+0.00": only an exact zero reads so
    assert signed(0.0004) == "+0.0004" and signed(4e-9, 3, "MHz") == "< 0.0000001 MHz above"


def test_a_missing_file_is_an_error_not_a_fail(cli, lot):
    d, spec, good, *_ = lot
    missing = d / "nope.s1p"
    r = cli("check", good, missing, "--spec", spec)
    assert r.code == 2
    assert "Verdict: ERROR (1 file could not be read)" in r.out and "Verdict: FAIL" not in r.out
    row = next(ln for ln in r.out.splitlines() if ln.startswith("nope.s1p") or "nope.s1p:" in ln)
    assert "ERROR" in row and "no such file" not in r.out  # the reason is on stderr, not in a margin column
    assert any("nope.s1p" in ln and ln.startswith("error:") for ln in r.err_lines)


def test_junit_times_and_timestamp(cli, lot):
    from datetime import datetime

    d, spec, good, bad, broken = lot
    junit = d / "r.xml"
    cli("check", good, bad, broken, "--spec", spec, "--junit", junit)
    root = ET.parse(junit).getroot()
    suites = root.findall("testsuite")
    for s in suites:
        datetime.fromisoformat(s.get("timestamp"))  # ISO 8601
        assert float(s.get("time")) >= 0
        assert float(s.get("time")) == pytest.approx(sum(float(c.get("time")) for c in s.findall("testcase")), abs=1e-5)
    assert all(float(c.get("time")) >= 0 for c in root.iter("testcase"))


def test_junit_lot_level(cli, lot):
    d, spec, good, bad, broken = lot
    junit = d / "r.xml"
    r = cli("check", good, bad, broken, "--spec", spec, "--junit", junit, "--junit-level", "lot", "--lot", "L7",
            "--json")
    assert r.code == 2
    root = ET.parse(junit).getroot()
    (suite,) = root.findall("testsuite")
    cases = suite.findall("testcase")
    assert [c.get("name") for c in cases] == ["ism", "ism mismatch loss", "guard", "unreadable files"]
    assert all(c.get("classname") == "L7" for c in cases)
    y = {q["name"]: q for q in r.json()["summary"]["yield"]}
    for c in cases[:3]:
        fail = c.find("failure")
        q = y[c.get("name")]
        assert (fail is not None) == (q["passed"] < q["evaluated"])
        if fail is not None:
            assert f"({q['passed']} of {q['evaluated']} units passed" in fail.get("message")
            assert "detuned.s1p" in fail.get("message")
    assert cases[3].find("error") is not None and "broken.s1p" in cases[3].find("error").get("message")
    assert suite.get("timestamp") and int(root.get("errors")) == 1


def test_bad_new_options(cli, lot):
    d, spec, good, *_ = lot
    for args, words in ((["--shard", "4/3"], "--shard"), (["--junit-level", "file"], "--junit-level"),
                        (["--store", str(d / "r.db")], "--store needs --lot"),
                        (["--jobs", "2", "--scheduler", "tcp://127.0.0.1:1"], "--scheduler")):
        r = cli("check", good, "--spec", spec, *args)
        assert r.code == 2 and len(r.err_lines) == 1 and words in r.err, (args, r.err)


def test_an_unreachable_scheduler_is_one_line(cli, lot):
    pytest.importorskip("distributed", reason="the optional Dask extra is not installed")
    import socket

    d, spec, good, *_ = lot
    with socket.socket() as s:  # a port on this machine that nothing listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    r = cli("check", good, "--spec", spec, "--scheduler", f"tcp://127.0.0.1:{port}")
    assert r.code == 2 and len(r.err_lines) == 1 and "--scheduler" in r.err and "Dask scheduler" in r.err


def test_jobs_two_is_the_same_lot(cli, tmp_path, monkeypatch):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    for k in range(12):
        write_rlc(tmp_path / f"u{k}.s1p", n=101, f0_hz=880e6 + 6e6 * k)
    one = cli("check", tmp_path, "--spec", spec, "--json", "--jobs", "1").json()
    monkeypatch.setattr(batch, "IN_PROCESS_MAX", 2)
    monkeypatch.setattr(batch, "POOL_MIN_S", 0.0)  # worker processes take over after the first files
    two = cli("check", tmp_path, "--spec", spec, "--json", "--jobs", "2").json()
    assert one == two

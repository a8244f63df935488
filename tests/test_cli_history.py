"""CLI: check --store then history, end to end; the store's lot summary equals check --json's for
one run, for shards (separate stores or one), for --jobs and on a Dask cluster; errors are one
line and the reports are still written."""

from __future__ import annotations

import csv
import json
import sqlite3

import numpy as np
import pytest
from helpers import write_rlc
from pgserver import pg_database

from matchtool import batch

SPEC = ('name = "ant915"\n[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n'
        '[[band]]\nname = "guard"\nf_low = "890 MHz"\nf_high = "940 MHz"\nmax_vswr = 3\n'
        '[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n')


@pytest.fixture
def lot(tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text(SPEC)
    d = tmp_path / "lot"
    d.mkdir()
    rng = np.random.default_rng(12)
    for k, f0 in enumerate(rng.uniform(885e6, 945e6, 23)):
        write_rlc(d / f"u{k}.s1p", f0_hz=float(f0), r_ohm=float(rng.uniform(35, 70)), n=201)
    write_rlc(d / "open.s1p", f0_hz=915e6, r_ohm=600.0, n=201)  # near-open: about 1.5 dB return loss
    (d / "broken.s1p").write_text("# MHz S RI R 50\n900 0.1\n")
    return tmp_path, spec, d


def same_summary(check_doc: dict, lot_doc: dict) -> None:
    """The store's lot equals check --json's summary: the same numbers."""
    s = check_doc["summary"]
    for k in ("units", "passed", "failed", "errors", "yield_fraction"):
        assert lot_doc[k] == s[k], k
    req = {q["name"]: q for q in lot_doc["requirements"]}
    for y in s["yield"]:
        q = req[y["name"]]
        assert (q["passed"], q["evaluated"], q["yield_fraction"]) == (y["passed"], y["evaluated"], y["yield_fraction"])
    res = lot_doc["resonance_f_hz"]
    assert (res["min"], res["max"]) == (s["resonance_f_hz"]["min"], s["resonance_f_hz"]["max"])
    f = [x["best_f_hz"] for x in check_doc["files"] if x["error"] is None]
    assert res["mean"] == pytest.approx(np.mean(f), rel=1e-12) and res["n"] == len(f)
    worst = [(w["file"], w["requirement"]) for w in s["worst_units"]]
    assert [(w["file"], w["requirement"]) for w in lot_doc["worst_units"]] == worst
    # each requirement's mean worst value against numpy on check's own values
    for name, q in req.items():
        vals = [r["worst"] for x in check_doc["files"] for r in x["requirements"] if r["name"] == name and r["worst"] is not None]
        assert q["mean"] == pytest.approx(np.mean(vals), rel=1e-9)
        assert q["std"] == pytest.approx(np.std(vals, ddof=1), rel=1e-6)


def merged(check_docs: list[dict]) -> dict:
    """The check --json document of one run built from shard runs (files re-ordered as one run)."""
    files = [f for d in check_docs for f in d["files"]]
    return files


def test_one_run_store_equals_check_json(cli, lot):
    d, spec, folder = lot
    db = d / "r.db"
    r = cli("check", folder, "--spec", spec, "--json", "--store", db, "--lot", "lot12", "--station", "bench-1")
    assert r.code == 2  # the broken file
    doc = r.json()
    assert doc["store"]["added"] == 25 and doc["store"]["lot"] == "lot12" and doc["store"]["error"] is None
    assert all(len(f["sha256"]) == 64 for f in doc["files"] if f["error"] is None)
    h = cli("history", "--store", db, "--json")
    assert h.code == 0
    (lt,) = h.json()["lots"]
    assert lt["lot"] == "lot12" and lt["stations"] == ["bench-1"] and lt["specs"] == ["ant915"]
    same_summary(doc, lt)
    assert lt["worst_units"][0]["file"].endswith("open.s1p")
    # the same check again adds nothing
    again = cli("check", folder, "--spec", spec, "--json", "--store", db, "--lot", "lot12", "--station", "bench-1")
    assert again.json()["store"]["added"] == 0 and again.json()["store"]["duplicates"] == 25
    assert cli("history", "--store", db, "--json").json()["lots"][0]["units"] == 25


@pytest.mark.parametrize("n", [2, 3, 5])
def test_shards_in_separate_stores_and_in_one(cli, lot, n):
    d, spec, folder = lot
    single = cli("check", folder, "--spec", spec, "--json").json()
    one = d / f"one{n}.db"
    for k in range(1, n + 1):
        part = d / f"s{n}_{k}.db"
        r = cli("check", folder, "--spec", spec, "--json", "--shard", f"{k}/{n}", "--store", part, "--lot", "L")
        assert r.code in (1, 2) and r.json()["shard"] == {"k": k, "n": n, "inputs_total": 25}
        cli("check", folder, "--spec", spec, "--shard", f"{k}/{n}", "--store", one, "--lot", "L")
    sep = cli("history", *[a for k in range(1, n + 1) for a in ("--store", d / f"s{n}_{k}.db")], "--json").json()
    same_summary(single, sep["lots"][0])
    same_summary(single, cli("history", "--store", one, "--json").json()["lots"][0])
    assert not sep["warnings"]


def test_jobs_and_dask_give_the_same_store(cli, lot, monkeypatch):
    distributed = pytest.importorskip("distributed", reason="the optional Dask extra is not installed")
    d, spec, folder = lot
    single = cli("check", folder, "--spec", spec, "--json").json()
    monkeypatch.setattr(batch, "IN_PROCESS_MAX", 2)
    monkeypatch.setattr(batch, "POOL_MIN_S", 0.0)
    two = cli("check", folder, "--spec", spec, "--json", "--jobs", "2", "--store", d / "j.db", "--lot", "L").json()
    assert two["files"] == [dict(f, sha256=g["sha256"]) for f, g in zip(single["files"], two["files"], strict=True)]
    same_summary(single, cli("history", "--store", d / "j.db", "--json").json()["lots"][0])
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cl:
        dk = cli("check", folder, "--spec", spec, "--json", "--scheduler", cl.scheduler_address, "--store", d / "k.db",
                 "--lot", "L").json()
    assert dk["files"] == two["files"] and dk["summary"] == single["summary"]
    same_summary(single, cli("history", "--store", d / "k.db", "--json").json()["lots"][0])


def test_shards_to_one_postgresql_store(cli, lot):
    url = pg_database()
    d, spec, folder = lot
    single = cli("check", folder, "--spec", spec, "--json").json()
    for k in (1, 2, 3):
        r = cli("check", folder, "--spec", spec, "--shard", f"{k}/3", "--store", url, "--lot", "pg-lot", "--json")
        assert r.json()["store"]["error"] is None and r.json()["store"]["url"].startswith("postgresql://")
    h = cli("history", "--store", url, "--json")
    assert h.code == 0
    same_summary(single, h.json()["lots"][0])


def test_concurrent_check_processes_to_one_store(cli_subprocess, lot, tmp_path):
    import subprocess
    import sys

    from helpers import ROOT

    d, spec, folder = lot
    db = d / "c.db"
    procs = [subprocess.Popen([sys.executable, "-m", "matchtool", "check", str(folder), "--spec", str(spec),
                               "--shard", f"{k}/3", "--store", str(db), "--lot", "L", "--station", f"s{k}"],
                              cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL) for k in (1, 2, 3)]
    assert sorted(p.wait(300) for p in procs) == [1, 1, 2]  # one shard holds the broken file
    with sqlite3.connect(db) as c:
        assert c.execute("select count(*) from units").fetchone()[0] == 25


def test_unwritable_store_is_exit_2_and_reports_still_written(cli, lot):
    d, spec, folder = lot
    table, junit = d / "r.csv", d / "r.xml"
    r = cli("check", folder / "u1.s1p", folder / "u2.s1p", "--spec", spec, "--json", "--csv", table, "--junit", junit,
            "--store", d / "no" / "such" / "dir.db", "--lot", "L")
    assert r.code == 2
    doc = r.json()
    assert doc["store"]["error"] and len(doc["files"]) == 2
    errs = [ln for ln in r.err_lines if ln.startswith("error:")]
    assert len(errs) == 1 and "does not exist" in errs[0]
    with open(table, newline="") as fh:
        assert len(list(csv.DictReader(fh))) == 2 * 3  # two units, three requirements each
    assert junit.exists()
    junk = d / "junk.db"
    junk.write_bytes(b"definitely not a database" * 50)
    r = cli("check", folder / "u1.s1p", "--spec", spec, "--store", junk, "--lot", "L")
    assert r.code == 2 and "cannot open the results store" in r.err and "Verdict" in r.out


def test_history_views_and_errors(cli, lot):
    d, spec, folder = lot
    db = d / "r.db"
    cli("check", folder, "--spec", spec, "--store", db, "--lot", "lot11")
    cli("check", *sorted(folder.glob("u1*.s1p")), "--spec", spec, "--store", db, "--lot", "lot12")
    t = cli("history", "--store", db)
    assert t.code == 0 and "Lot lot11" in t.out and "Lot lot12" in t.out and "Cpk" in t.out
    assert "certifies nothing" in t.out
    only = cli("history", "--store", db, "--lot", "lot12", "--json").json()
    assert [x["lot"] for x in only["lots"]] == ["lot12"]
    for out in ("trend.png", "trend.svg"):
        r = cli("history", "--store", db, "--out", d / out)
        assert r.code == 0 and f"wrote {d / out}" in r.out.splitlines()  # as plot says it
        head = (d / out).read_bytes()[:200]
        assert head.startswith(b"\x89PNG") if out.endswith("png") else b"<svg" in (d / out).read_bytes()[:2000]
    r = cli("history", "--store", db, "--out", d / "trend.png")
    assert r.code == 2 and "--force" in r.err
    for args, words in ((["--store", d / "none.db"], "no such store"), (["--store", db, "--since", "soon"], "--since"),
                        (["--store", db, "--out", d / "t.pdf"], ".png or .svg")):
        r = cli("history", *args)
        assert r.code == 2 and len(r.err_lines) == 1 and words in r.err, (args, r.err)
    with sqlite3.connect(db) as c:
        c.execute("update matchtool_schema set version = version + 1")
    r = cli("history", "--store", db)
    assert r.code == 2 and len(r.err_lines) == 1 and "newer than this matchtool" in r.err
    json.loads(cli("history", "--store", d / "r.db", "--json").out or "{}")  # nothing half-printed on stdout


def test_an_unknown_lot_is_exit_2_naming_the_lots_present(cli, lot):
    d, spec, folder = lot
    db = d / "r.db"
    empty = d / "empty.db"
    from matchtool import store

    store.Store(str(empty)).close()  # a store with the tables and no unit
    r = cli("history", "--store", empty, "--lot", "nope")
    assert r.code == 2 and len(r.err_lines) == 1 and "nope" in r.err and "empty" in r.err, r.err
    cli("check", *sorted(folder.glob("u1*.s1p")), "--spec", spec, "--store", db, "--lot", "lot2")
    cli("check", *sorted(folder.glob("u2*.s1p")), "--spec", spec, "--store", db, "--lot", "lot10")
    r = cli("history", "--store", db, "--lot", "nope")
    assert r.code == 2 and len(r.err_lines) == 1 and r.out == ""
    assert "--lot nope" in r.err and "lot2, lot10" in r.err, r.err
    # a lot that exists but has no unit in the other filters is not an error
    r = cli("history", "--store", db, "--lot", "lot2", "--since", "2999-01-01")
    assert r.code == 0 and "No units" in r.out


def test_trend_figure_style(cli, lot):
    from matplotlib.colors import to_hex

    from matchtool.history import history
    from matchtool.render import plots
    from matchtool.render.plot_history import trend_figure

    d, spec, folder = lot
    db = d / "r.db"
    cli("check", *sorted(folder.glob("u1*.s1p")), "--spec", spec, "--store", db, "--lot", "a")
    cli("check", *sorted(folder.glob("u2*.s1p")), "--spec", spec, "--store", db, "--lot", "b")
    fig = trend_figure(history([str(db)], series=True))
    fig.canvas.draw()
    palette = {c for _, c in plots.PALETTE}
    trends = [ln for ax in fig.axes for ln in ax.get_lines() if (ln.get_gid() or "").startswith("trend:")
              and ":lot:" in ln.get_gid()]
    assert trends
    for ln in trends:
        assert to_hex(ln.get_markeredgecolor()) in palette and to_hex(ln.get_markerfacecolor()) == "#ffffff"
        assert ln.get_marker() in plots.MARKERS and ln.get_marker() != "v" and ln.get_markersize() >= 5
    assert len({ln.get_marker() for ln in trends if ln.get_gid().startswith("trend:ism:")}) == 2  # one per lot
    hists = [ax for ax in fig.axes if ax.get_xlabel() == "number of units"]
    assert len(hists) == 3  # one per requirement of the spec
    for ax in fig.axes:
        for t in ax.get_xticks():
            lo, hi = ax.get_xlim()
            if lo <= t <= hi:
                assert float(t).is_integer(), (ax.get_xlabel(), t)  # unit counts and numbers are whole
        for p in ax.patches:
            assert not p.get_hatch()
            if hasattr(p, "get_edgecolor") and p.get_gid():
                assert to_hex(p.get_edgecolor()) in palette


def test_report_section_and_trend_of_the_store(cli, lot):
    from matchtool.history import history
    from matchtool.render.report_history import section_html

    d, spec, folder = lot
    db = d / "r.db"
    cli("check", folder, "--spec", spec, "--store", db, "--lot", "lot<7>")
    page = section_html(history([str(db)], series=True))
    assert "Lot lot&lt;7&gt;" in page and "<svg" in page and "http" not in page.split("<svg")[0]
    assert page.count("<tr>") == 3 + 1  # header and three requirements


@pytest.mark.parametrize("width", [80, 100, 120])
def test_history_text_fits_the_width(cli, lot, monkeypatch, width):
    d, spec, folder = lot
    db = d / "r.db"
    cli("check", folder, "--spec", spec, "--store", db, "--lot", "lot12")
    monkeypatch.setenv("COLUMNS", str(width))
    r = cli("history", "--store", db)
    assert r.code == 0
    assert all(len(ln) <= width for ln in r.out.splitlines()), [ln for ln in r.out.splitlines() if len(ln) > width]
    words = set(r.out.split())
    doc = cli("history", "--store", db, "--json").json()["lots"][0]
    for q in doc["requirements"]:
        assert q["name"] in words and (q["cpk"] is None or f"{q['cpk']:.2f}" in words)
    for w in ("requirement", "yield", "passed", "mean", "limit", "Cpk"):
        assert w in words


def test_station_defaults_to_the_host_name_and_url_forms(cli, lot):
    import socket

    d, spec, folder = lot
    r = cli("check", folder / "u1.s1p", folder / "u2.s1p", "--spec", spec, "--json", "--store", f"sqlite:///{d}/u.db",
            "--lot", "L")
    assert r.json()["store"]["station"] == socket.gethostname() and r.json()["store"]["added"] == 2
    h = cli("history", "--store", d / "u.db", "--json").json()  # the same file as a bare path
    assert h["lots"][0]["stations"] == [socket.gethostname()] and h["lots"][0]["units"] == 2
    r = cli("check", folder / "u1.s1p", "--spec", spec, "--store", "mysql://u@h/db", "--lot", "L")
    assert r.code == 2 and "--store" in r.err and "unknown kind of store" in r.err


def test_history_limits_keep_the_digits_the_spec_gave(cli, lot):
    d, spec, folder = lot
    tight = d / "tight.toml"
    tight.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 15.7531\n'
                     '[resonance]\nf_low = "914.75 MHz"\nf_high = "925 MHz"\n')
    db = d / "r.db"
    cli("check", *sorted(folder.glob("u1*.s1p")), "--spec", tight, "--store", db, "--lot", "t")
    text = " ".join(cli("history", "--store", db).out.split())
    assert ">= 15.7531 dB" in text and "914.75 to 925 MHz" in text and "914.8" not in text

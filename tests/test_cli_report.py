"""`matchtool report` with --spec, --match-band/--match-at and --budget: the page shows the same
results as `check`, `match` and `budget` for the same inputs, and stays self-contained."""

from __future__ import annotations

import html
import re
import shutil
from html.parser import HTMLParser

import pytest
from helpers import ROOT
from test_report import assert_self_contained

from matchtool import matching as mt
from matchtool.render.text.match import schematic

SAMPLES = ROOT / "sample_sweeps"


class Tables(HTMLParser):
    """Rows of every table, keyed by the table's class, as lists of cell texts."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tables: dict[str, list[list[str]]] = {}
        self.cls = None
        self.row: list[str] | None = None
        self.cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "table":
            self.cls = a.get("class", "")
            self.tables.setdefault(self.cls, [])
        elif tag == "tr":
            self.row = []
        elif tag in ("td", "th"):
            self.cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self.cell is not None:
            self.row.append("".join(self.cell).strip())
            self.cell = None
        elif tag == "tr" and self.row is not None:
            self.tables[self.cls].append(self.row)
            self.row = None

    def handle_data(self, data):
        if self.cell is not None:
            self.cell.append(data)


def tables(text: str) -> dict[str, list[list[str]]]:
    p = Tables()
    p.feed(text)
    return p.tables


@pytest.fixture()
def bench(tmp_path):
    """The sample revisions, spec and budget copied into a temporary directory."""
    for name in ("ant_r1.s1p", "ant_r2.s1p", "ant_r3.s1p", "spec_915.toml", "link_915.toml"):
        shutil.copy(SAMPLES / name, tmp_path / name)
    return tmp_path


def _full_report(cli, d, *extra):
    files = [str(d / f"ant_r{k}.s1p") for k in (1, 2, 3)]
    out = d / "bench.html"
    r = cli("report", *files, "--spec", d / "spec_915.toml", "--budget", d / "link_915.toml", "--match-band",
            "902MHz:928MHz", "--q-inductor", "40", "--kind", "return-loss", "--out", out, *extra)
    return r, out, files


def test_spec_verdicts_are_checks_results(cli, bench):
    r, out, files = _full_report(cli, bench)
    chk = cli("check", *files, "--spec", bench / "spec_915.toml", "--json")
    assert r.code == chk.code == 1, r.err  # r1 and r2 fail: exit 1, page still written
    text = out.read_text()
    assert_self_contained(text)
    rows = tables(text)["spec"][1:]  # without the header
    expected = []
    for u in chk.json()["files"]:
        for k, q in enumerate(u["requirements"]):
            margin = (f"{q['margin_db']:+.2f} dB" if q["margin_db"] is not None
                      else f"{q['margin_hz'] / 1e6:+.3f} MHz")
            where = f"{q['worst_f_hz'] / 1e6:.3f} MHz"
            expected.append([u["file"].split("/")[-1] if k == 0 else "", q["name"], "pass" if q["pass"] else "FAIL",
                             where, margin])
    assert [[c[0], c[1], c[2], c[4], c[6]] for c in rows] == expected
    # worst in the units of the limit key: the VSWR row shows a ratio, the return-loss row dB
    guard = [c for c in rows if c[1] == "ism guard"]
    assert all(c[3].endswith("ratio") for c in guard) and all(c[5] == "3.000 ratio" for c in guard)  # the limit with its unit


def test_match_section_holds_matchs_schematic_and_before_after_picture(cli, bench):
    r, out, files = _full_report(cli, bench)
    doc = cli("match", files[0], "--band", "902MHz:928MHz", "--q-inductor", "40", "--json").json()
    best = doc["candidates"][0]
    elements = tuple(mt.Element(e["kind"], e["connection"], e["value"]) for e in best["elements"])
    text = out.read_text()
    assert html.escape(schematic(elements, doc["z0_ohm"])) in text
    match_html = text[text.index('<section id="match"'):text.index('<section id="budget"')]
    assert match_html.count("<svg") == 2 and "ant_r1.s1p measured" in match_html
    ranked = tables(text)["candidates"][1:]
    assert ranked[0][3] == f"{best['worst_return_loss_db']:.2f}"
    assert len(ranked) == len(doc["candidates"])


def test_budget_rows_are_budgets(cli, bench):
    r, out, _ = _full_report(cli, bench)
    b = cli("budget", bench / "link_915.toml", "--json").json()
    rows = tables(out.read_text())["budget"][1:]
    assert [[c[0], c[1], c[2]] for c in rows] == [[x["name"], f"{x['value_db']:.3f}", f"{x['total_dbm']:.2f}"]
                                                    for x in b["rows"]]
    assert f"{b['margin_db']:.2f} dB" in out.read_text()


def test_cautions_and_traceability_of_every_input(cli, bench):
    r, out, _ = _full_report(cli, bench)
    text = out.read_text()
    for must in ("can damage a transmitter", "RF exposure", "set by local regulation", "does not certify"):
        assert must in text, must
    hashed = [row[0] for row in tables(text)["hash"][1:]]
    assert {"ant_r1.s1p", "spec_915.toml", "link_915.toml"} <= {p.split("/")[-1] for p in hashed}
    assert len({p.split("/")[-1] for p in hashed}) == len(hashed)  # r2, r3 named by the budget too: once each


def test_budget_sweeps_are_hashed(cli, bench):
    import hashlib

    out = bench / "b.html"
    r = cli("report", bench / "ant_r1.s1p", "--budget", bench / "link_915.toml", "--kind", "vswr", "--out", out)
    assert r.code == 0, r.err
    rows = {row[0].split("/")[-1]: row[2] for row in tables(out.read_text())["hash"][1:]}
    for name in ("ant_r3.s1p", "ant_r2.s1p"):  # tx_sweep and rx_sweep of link_915.toml
        assert rows[name] == hashlib.sha256((bench / name).read_bytes()).hexdigest()


def test_passing_inputs_exit_0_and_match_at(cli, bench):
    out = bench / "r3.html"
    r = cli("report", bench / "ant_r3.s1p", "--spec", bench / "spec_915.toml", "--budget", bench / "link_915.toml",
            "--match-at", "915MHz", "--series", "exact", "--out", out)
    assert r.code == 0, r.err
    assert "Proposed match for ant_r3.s1p at 915 MHz" in out.read_text()


def test_budget_that_misses_its_margin_exits_1(cli, bench):
    text = (bench / "link_915.toml").read_text().replace("distance_m = 1000", "distance_m = 1e9")
    (bench / "far.toml").write_text(text)
    out = bench / "far.html"
    r = cli("report", bench / "ant_r3.s1p", "--budget", bench / "far.toml", "--out", out)
    assert r.code == 1 and "NOT MET" in out.read_text()


def test_refusals_write_nothing(cli, bench):
    out = bench / "x.html"
    r3 = bench / "ant_r3.s1p"
    cases = [
        (("--match-band", "902MHz:928MHz", "--match-at", "915MHz"), "--match-at"),
        (("--match-at", "5GHz"), "ant_r3.s1p"),
        (("--match-at", "915MHz", "--pick", "50"), "--pick"),
        (("--budget", bench / "missing.toml"), "missing.toml"),
        (("--spec", bench / "spec_915.toml", "--port", "2"), "--port"),
    ]
    for extra, must in cases:
        r = cli("report", r3, "--out", out, *extra)
        assert r.code == 2 and len(r.err_lines) == 1 and must in r.err, (extra, r.err)
        assert not out.exists()
    out.write_text("keep")
    r = cli("report", r3, "--out", out)
    assert r.code == 2 and out.read_text() == "keep"


def test_report_and_plot_say_what_they_wrote_and_take_json(cli, tmp_path):
    from helpers import write_rlc

    p = write_rlc(tmp_path / "u.s1p")
    r = cli("report", p, "--out", tmp_path / "r.html")
    assert r.code == 0 and r.out.strip() == f"wrote {tmp_path / 'r.html'} (no spec or budget to judge)"
    r = cli("plot", p, "--out", tmp_path / "p.svg", "--json")
    doc = r.json()
    assert r.code == 0 and doc["out"] == str(tmp_path / "p.svg") and doc["kinds"] == ["return-loss"]
    r = cli("report", p, "--out", tmp_path / "r2.html", "--json")
    assert r.code == 0 and r.json()["pass"] is None and r.json()["judged"] is False and (tmp_path / "r2.html").exists()


def test_log_distance_budget_headline_names_its_model_and_never_mixes_two(cli, bench):
    # a log-distance budget (n = 3 beyond 10 m): the report's range headline is the log-distance
    # range that `budget --json` gives as max_range_model_m, and every range names its model
    link = bench / "link_915.toml"
    link.write_text(link.read_text().replace("[tx_cable]", "path_loss_exponent = 3\nreference_distance_m = 10\n[tx_cable]"))
    b = cli("budget", link, "--json").json()
    assert b["path_loss_model"]["kind"] == "log-distance" and b["max_range_model_m"] < b["max_range_m"]
    out = bench / "ld.html"
    r = cli("report", bench / "ant_r1.s1p", "--budget", link, "--kind", "return-loss", "--out", out)
    assert r.code in (0, 1), r.err
    text = html.unescape(out.read_text())
    summary = text[text.index('<section id="summary"'):text.index('<section id="sweeps"')]

    def shown(m):
        return f"{m / 1000:.2f} km" if m >= 10_000 else f"{m:.1f} m"

    assert f"{shown(b['max_range_model_m'])} (log-distance, n = 3 beyond 10 m model)" in summary
    assert shown(b["max_range_m"]) not in summary  # the free-space figure is not a headline
    section = text[text.index('<section id="budget"'):text.index('<section id="traceability"')]
    for sentence in re.split(r"</d[dt]>|</p>|</li>", section):
        assert not ("free-space" in sentence and "log-distance" in sentence), sentence
    assert "for comparison only: free-space range" in section
    assert "in the log-distance, n = 3 beyond 10 m model" in section  # the mismatch's range cost
    assert shown(b["max_range_model_m"]) in r.out and "log-distance" in r.out


def test_match_sweep_chooses_which_input_is_matched(cli, bench):
    files = [str(bench / f"ant_r{k}.s1p") for k in (1, 2, 3)]
    out = bench / "m.html"
    r = cli("report", *files, "--match-band", "902MHz:928MHz", "--match-sweep", files[2], "--kind", "return-loss",
            "--out", out)
    assert r.code == 0, r.err
    doc = cli("match", files[2], "--band", "902MHz:928MHz", "--json").json()
    best = doc["candidates"][0]
    text = out.read_text()
    match_html = text[text.index('<section id="match"'):text.index('<section id="traceability"')]
    assert "For ant_r3.s1p over 902-928 MHz" in html.unescape(match_html)
    assert tables(text)["candidates"][1][3] == f"{best['worst_return_loss_db']:.2f}"
    r = cli("report", *files, "--match-band", "902MHz:928MHz", "--match-sweep", bench / "other.s1p", "--out",
            bench / "x.html")
    assert r.code == 2 and "--match-sweep" in r.err and not (bench / "x.html").exists()


# --- further capabilities: coupling (multi-port input), --locate, --qfactor, --store ------------------

PAIR = SAMPLES / "wifi_pair.s2p"
PAIR_SPEC = SAMPLES / "spec_wifi_pair.toml"


def test_multi_port_input_gets_its_coupling_section_with_scikit_rfs_isolation(cli, tmp_path):
    import numpy as np
    import skrf

    out = tmp_path / "pair.html"
    r = cli("report", PAIR, "--spec", PAIR_SPEC, "--out", out, "--json")
    assert r.code == 1, r.err  # the sample misses its 10 dB isolation limit (spec_wifi_pair.toml)
    doc = r.json()
    assert "coupling" in doc["sections"] and "locate" not in doc["sections"] and "qfactor" not in doc["sections"]
    text = out.read_text()
    assert_self_contained(text)
    # isolation over the spec's isolation band (2400-2483.5 MHz, both edges on the 0.5 MHz grid) =
    # -max |S21| dB there, straight from scikit-rf (Network.s_db): the band the verdict speaks of,
    # not the whole sweep
    net = skrf.Network(str(PAIR))
    inb = (net.f >= 2.4e9 - 1) & (net.f <= 2.4835e9 + 1)
    iso = -float(np.max(net.s_db[inb, 1, 0]))
    page = " ".join(html.unescape(text).replace("\u00a0", " ").split())
    assert f"2.400 GHz to 2.4835 GHz {iso:.2f} dB (S21)" in " ".join(re.sub("<[^>]+>", " ", page).split())
    chk = cli("check", PAIR, "--spec", PAIR_SPEC, "--json").json()
    worst = next(q["worst"] for q in chk["files"][0]["requirements"] if q.get("ports") == [1, 2]
                 and q["key"] == "min_isolation_db")
    assert worst == pytest.approx(iso, abs=0.005)  # the same number check reports
    assert 'id="iso-wifi-pair-s2p-' in text and "A to B: isolation &gt;= 10 dB" in text  # the spec's mask drawn


def test_one_port_input_has_no_coupling_section(cli, tmp_path):
    doc = cli("report", SAMPLES / "ant_r1.s1p", "--out", tmp_path / "a.html", "--json").json()
    assert doc["sections"] == ["summary", "sweeps", "plots", "traceability"]


def test_locate_and_qfactor_sections_hold_the_commands_numbers(cli, tmp_path):
    out = tmp_path / "p.html"
    sweep = SAMPLES / "ant_r3_via_cable.s1p"
    r = cli("report", sweep, "--locate", "--velocity-factor", "0.66", "--max-distance", "10m", "--qfactor",
            "--radius", "3cm", "--out", out, "--json")
    assert r.code == 0, r.err
    assert [s for s in r.json()["sections"] if s in ("locate", "qfactor")] == ["locate", "qfactor"]
    loc = cli("locate", sweep, "--velocity-factor", "0.66", "--max-distance", "10m", "--json").json()
    q = cli("qfactor", sweep, "--radius", "3cm", "--json").json()
    rows = tables(out.read_text())["locate"]
    assert rows[1][1] == f"{loc['peaks'][0]['distance_m']:.3f}"  # first listed reflection, as locate lists it
    text = html.unescape(out.read_text())
    assert f"{q['q']:.2f}" in text and "Chu" in text
    assert_self_contained(out.read_text())


def test_two_locate_sections_do_not_share_svg_ids(cli, tmp_path):
    out = tmp_path / "two.html"
    r = cli("report", SAMPLES / "ant_r1.s1p", SAMPLES / "ant_r3_via_cable.s1p", "--locate", "--velocity-factor",
            "0.66", "--out", out)
    assert r.code == 0, r.err
    ids = re.findall(r'\bid="([^"]+)"', out.read_text())
    assert len(ids) == len(set(ids))
    assert any(i.startswith("locate1-") for i in ids) and any(i.startswith("locate2-") for i in ids)


@pytest.mark.parametrize("args,needle", [
    (["--velocity-factor", "0.7"], "--velocity-factor belongs to --locate"),
    (["--radius", "3cm"], "--radius belongs to --qfactor"),
    (["--lot", "L7"], "--lot belongs to --store"),
    (["--locate"], "--velocity-factor: is needed to turn time into distance"),
    (["--kind", "distance"], "the report's plots are the sweep panels"),
])
def test_capability_option_errors_are_one_line_exit_2(cli, tmp_path, args, needle):
    out = tmp_path / "x.html"
    r = cli("report", SAMPLES / "ant_r1.s1p", *args, "--out", out)
    assert r.code == 2 and len(r.err_lines) == 1 and needle in r.err, r.err
    assert not out.exists()


def test_capped_sweep_belongs_to_one_antenna(cli, tmp_path):
    out = tmp_path / "x.html"
    r = cli("report", SAMPLES / "ant_r1.s1p", SAMPLES / "ant_r2.s1p", "--qfactor", "--capped", SAMPLES / "ant_r3.s1p",
            "--out", out)
    assert r.code == 2 and len(r.err_lines) == 1 and "--capped" in r.err and "one SWEEP" in r.err, r.err
    assert not out.exists()


def test_store_adds_the_lot_page_with_the_stores_counts(cli, tmp_path):
    db = tmp_path / "r.db"
    files = [SAMPLES / f"ant_r{k}.s1p" for k in (1, 2, 3)]
    checked = cli("check", *files, "--spec", SAMPLES / "spec_915.toml", "--store", db, "--lot", "L7", "--json").json()
    passed = sum(f["pass"] for f in checked["files"])
    out = tmp_path / "lot.html"
    r = cli("report", files[2], "--store", db, "--lot", "L7", "--out", out, "--json")
    assert r.code == 0, r.err
    assert "history" in r.json()["sections"]
    text = html.unescape(out.read_text())
    assert f"3 units: {passed} passed, {3 - passed} failed" in text
    assert "<svg" in text  # the trend picture, inline
    assert_self_contained(out.read_text())
    r = cli("report", files[2], "--store", tmp_path / "none.db", "--out", tmp_path / "n.html")
    assert r.code == 2 and len(r.err_lines) == 1 and "none.db" in r.err


def test_sweeps_section_honours_min_band_width(cli, tmp_path):
    # 101 points 800-1000 MHz; RL 5 dB but 20 dB on 900-920 MHz (a band 22.667 MHz wide, derived in
    # test_cli_inspect) and one 12 dB sample at 850 MHz (a noise-level crossing)
    import numpy as np
    from helpers import s1p_text

    f = np.linspace(800e6, 1000e6, 101)
    rl = np.where((f >= 900e6) & (f <= 920e6), 20.0, np.where(np.isclose(f, 850e6), 12.0, 5.0))
    p = tmp_path / "spiky.s1p"
    p.write_text(s1p_text(f, 10 ** (-rl / 20) + 0j))
    for width, bands, noise in (("1MHz", 1, 1), ("30MHz", 0, 2)):
        out = tmp_path / f"r{width}.html"
        assert cli("report", p, "--min-band-width", width, "--kind", "return-loss", "--out", out).code == 0
        text = html.unescape(out.read_text())
        sweeps = text[text.index('<section id="sweeps">'):text.index('<section id="plots">')]
        assert sweeps.count("wide)") == noise and "Noise-level crossings, not bands" in sweeps
        assert ("none wide enough to count" in sweeps) == (bands == 0)
        assert "never reaches the threshold" not in sweeps  # it does reach it, if only for noise


def test_report_budget_eirp_is_the_highest_in_the_band_and_an_exceeded_limit_fails(cli, bench, tmp_path):
    # a 30 dBm transmitter with a 6 dBi antenna into ant_r1 (badly matched in 902-928 MHz): the EIRP
    # is highest where the mismatch is smallest; 'budget --json' gives that highest EIRP and its
    # frequency, and the report must state that value (not the one at the worst-margin frequency)
    link = bench / "band.toml"
    link.write_text('f_low = "902 MHz"\nf_high = "928 MHz"\nstep = "2 MHz"\ndistance_m = 1000\ntx_power_dbm = 30\n'
                    'tx_gain_dbi = 6\ntx_sweep = "ant_r1.s1p"\nrx_gain_dbi = 2.15\nrx_sweep = "ant_r2.s1p"\n'
                    'rx_sensitivity_dbm = -100.0\nfade_margin_db = 10.0\npath_loss_exponent = 3.0\n'
                    'reference_distance_m = 10\neirp_limit_dbm = 34.5\n')
    b = cli("budget", link, "--json")
    doc = b.json()
    assert b.code == 1 and doc["eirp_over_limit"] is True
    out = tmp_path / "r.html"
    r = cli("report", bench / "ant_r1.s1p", "--budget", link, "--out", out)
    assert r.code == 1, r.err  # an exceeded EIRP limit is a failed requirement, as in 'budget'
    page = " ".join(out.read_text().split())
    assert f"{doc['max_eirp_dbm']:.2f} dBm, the highest, at" in page
    assert "EXCEEDS your limit of 34.5 dBm" in page and "CAUTION: transmit VSWR" in page

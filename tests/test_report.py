"""render/html.py and `matchtool report`: one self-contained page with the metrics, plots and hashes."""

from __future__ import annotations

import hashlib
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from helpers import write_rlc

import matchtool
from matchtool.render import html as h


class Tags(HTMLParser):
    """Collects every start tag with its attributes (a real HTML parser, not regexes)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str]]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, {k: v or "" for k, v in attrs}))

    handle_startendtag = handle_starttag

    def handle_data(self, data):
        self.text.append(data)


def parse(text: str) -> Tags:
    p = Tags()
    p.feed(text)
    p.close()
    return p


def assert_self_contained(text: str) -> Tags:
    p = parse(text)
    names = [t for t, _ in p.tags]
    assert "link" not in names and "script" not in names and "iframe" not in names and "object" not in names
    for tag, attrs in p.tags:
        for k, v in attrs.items():
            if k in ("src",):
                assert v.startswith("data:"), (tag, k, v[:60])
            if k in ("href", "xlink:href"):
                assert v.startswith("#"), (tag, k, v)
            if k.startswith("xmlns"):
                continue  # namespace names, never fetched
            assert not re.search(r"(?i)\b(https?|ftp):|//[a-z0-9.-]+\.[a-z]{2,}/", v), (tag, k, v[:80])
    body = re.sub(r'\sxmlns(:\w+)?="[^"]*"', "", text)
    assert not re.search(r"(?i)https?://", body)
    assert "@import" not in text and not re.search(r"url\((?!#)", text)
    return p


def make_report(cli, tmp_path, *extra, monkeypatch=None):
    r1 = write_rlc(tmp_path / "r1.s1p", f0_hz=900e6, lo_hz=800e6, hi_hz=1030e6, n=461)
    r2 = write_rlc(tmp_path / "r2.s1p", f0_hz=915e6, lo_hz=800e6, hi_hz=1030e6, n=461)
    out = tmp_path / "bench.html"
    r = cli("report", r1, r2, "--band", "ism=902MHz:928MHz", "--out", out, *extra)
    return r, out, (r1, r2)


def test_report_is_self_contained_with_metrics_plots_and_hashes(cli, tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")  # 2026-01-01 00:00:00 UTC
    r, out, (r1, r2) = make_report(cli, tmp_path)
    assert r.code == 0, r.err
    text = out.read_text(encoding="utf-8")
    p = assert_self_contained(text)
    assert text.startswith("<!DOCTYPE html>") and "<style>" in text
    words = " ".join(p.text)
    for f in (r1, r2):  # SHA-256 of the bytes, computed here independently
        assert hashlib.sha256(f.read_bytes()).hexdigest() in words
        assert str(f) in words
    assert "2026-01-01 00:00:00 UTC" in words and f"matchtool {matchtool.__version__}" in words
    # metrics: resonances on the 0.5 MHz grid -> best match exactly there
    assert "900.000 MHz" in words and "915.000 MHz" in words
    assert "+15.000" in words  # resonance shift r2 - r1 in MHz
    # four inline SVG plots with their labels kept as text
    svgs = [t for t, _ in p.tags if t == "svg"]
    assert len(svgs) == 4
    for label in ("Return loss (dB, positive)", "VSWR", "Smith chart", "Impedance", "Frequency (MHz)", "ism",
                  "r1.s1p", "r2.s1p"):
        assert label in words, label
    for sid in ("summary", "sweeps", "compare", "plots", "traceability"):
        assert f'<section id="{sid}">' in text
    # ids are unique on the page and every internal reference resolves
    ids = [a["id"] for _, a in p.tags if "id" in a]
    assert len(ids) == len(set(ids))
    refs = set(re.findall(r"url\(#([^)]+)\)", text)) | {a.get("xlink:href", a.get("href", ""))[1:]
                                                         for _, a in p.tags if a.get("xlink:href", a.get("href"))}
    assert refs <= set(ids)


def test_report_escapes_file_names(cli, tmp_path):
    odd = write_rlc(tmp_path / "a<b>&x.s1p")
    out = tmp_path / "r.html"
    r = cli("report", odd, "--kind", "return-loss", "--out", out)
    assert r.code == 0, r.err
    text = out.read_text()
    assert "<b>" not in text and "a&lt;b&gt;&amp;x.s1p" in text
    assert_self_contained(text)


def test_report_refusals_write_nothing(cli, tmp_path):
    r, out, (r1, _) = make_report(cli, tmp_path)
    assert r.code == 0
    before = out.read_bytes()
    cases = [
        (("report", r1, "--out", out), "--force"),
        (("report", r1, "--out", tmp_path / "x.pdf"), ".pdf"),
        (("report", r1, tmp_path / "gone.s1p", "--out", tmp_path / "y.html"), "gone.s1p"),
        (("report", r1, "--kind", "polar", "--out", tmp_path / "y.html"), "polar"),
        (("report", r1, "--spec", tmp_path / "s.toml", "--out", tmp_path / "y.html"), "s.toml"),
    ]
    for args, must in cases:
        res = cli(*args)
        assert res.code == 2 and len(res.err_lines) == 1 and must in res.err, (args, res.err)
    assert out.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bench.html", "r1.s1p", "r2.s1p"]
    assert cli("report", r1, "--out", out, "--force").code == 0 and out.read_bytes() != before


def test_sections_are_ordered_and_extensible():
    secs = [h.Section("traceability", "T", ""), h.Section("plots", "P", ""), h.Section("summary", "S", ""),
            h.Section("spec", "Spec", ""), h.Section("extra", "X", ""), h.Section("budget", "B", "")]
    assert [s.id for s in h.ordered(secs)] == ["summary", "spec", "plots", "budget", "extra", "traceability"]
    with pytest.raises(ValueError):
        h.ordered([h.Section("a", "A", ""), h.Section("a", "A2", "")])
    page = h.render_page(h.Page("T <1>", "sub", secs))
    assert "<title>T &lt;1&gt;</title>" in page and '<a href="#spec">Spec</a>' in page


def test_inline_svg_prefixes_ids_and_references():
    svg = ('<?xml version="1.0"?>\n<!DOCTYPE svg PUBLIC "-//W3C//DTD SVG 1.1//EN" "x.dtd">\n'
           '<svg xmlns="http://www.w3.org/2000/svg"><metadata><rdf:RDF about="http://purl.org/x"/></metadata>'
           '<defs><path id="m1"/><clipPath id="c1"/></defs><use xlink:href="#m1"/><g clip-path="url(#c1)"/></svg>')
    out = h.inline_svg(svg, "f7")
    assert out.startswith("<svg") and "metadata" not in out and "purl.org" not in out
    assert 'id="f7-m1"' in out and 'xlink:href="#f7-m1"' in out and "url(#f7-c1)" in out
    assert 'id="m1"' not in out
    quoted = h.inline_svg("<svg><g id='a\"b'/><use href='#a\"b'/></svg>", "p")
    assert "id='p-a\"b'" in quoted and "href='#p-a\"b'" in quoted


def test_table_escapes_every_cell():
    t = h.table(["a<", "b"], [["<script>", 1.5]], [False, True])
    assert "<script>" not in t and "&lt;script&gt;" in t and '<td class="num">1.5</td>' in t


def test_report_exit_status_follows_spec_bands(cli, tmp_path):
    spec = tmp_path / "s.toml"
    spec.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 40\n')
    r1 = write_rlc(tmp_path / "r1.s1p")
    out = tmp_path / "r.html"
    r = cli("report", r1, "--spec", spec, "--kind", "return-loss", "--out", out)
    assert r.code == 1 and out.exists()  # failing spec: still written, exit 1
    assert "FAIL" in out.read_text()


def test_text_cells_keep_a_number_with_its_unit_and_numeric_cells_never_wrap():
    t = h.table(["band", "width"], [["2.000 GHz to 2.4835 GHz", "12.3 MHz"]], [False, True])
    assert "2.000&nbsp;GHz to 2.4835&nbsp;GHz" in t and '<td class="num">12.3 MHz</td>' in t
    assert "td.num, th { white-space: nowrap; }" in h.CSS


def test_no_command_imports_another_command():
    import ast
    from pathlib import Path

    commands = Path(matchtool.__file__).parent / "commands"
    shared = {"options", "common", "__init__"}
    names = {p.stem for p in commands.glob("*.py")} - shared
    for stem in ("compare", "budget", "plot", "report"):
        tree = ast.parse((commands / f"{stem}.py").read_text())
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level == 1:
                assert (node.module or "").split(".")[0] not in names, (stem, node.module)


def test_a_report_section_of_another_capability_is_one_registry_line(cli, tmp_path, monkeypatch):
    import sys
    import types

    from matchtool.render import report as page

    mod = types.ModuleType("matchtool.render.report_fake")
    mod.section_html = lambda result: f"<p>{h.esc(result)}</p>"
    monkeypatch.setitem(sys.modules, "matchtool.render.report_fake", mod)
    monkeypatch.setattr(page, "SECTIONS", [*page.SECTIONS, page.from_extra("fake", "Fake capability")])
    import matchtool.report as core

    real = core.build_report

    def with_extra(*a, **k):
        import dataclasses

        return dataclasses.replace(real(*a, **k), extras={"fake": "q = 42 <ok>"})

    monkeypatch.setattr("matchtool.commands.report.build_report", with_extra)
    out = tmp_path / "x.html"
    r1 = write_rlc(tmp_path / "r1.s1p")
    assert cli("report", r1, "--kind", "return-loss", "--out", out).code == 0
    text = out.read_text()
    assert '<section id="fake"><h2>Fake capability</h2>' in text and "q = 42 &lt;ok&gt;" in text
    assert text.index('id="fake"') < text.index('id="traceability"')


def test_build_report_is_the_core_of_the_page(tmp_path):
    # the core computes; render/report only formats: the context holds the comparison and hashes
    import dataclasses

    from matchtool.proposal import MatchRequest
    from matchtool.report import build_report
    from matchtool.sweep import load

    r1 = load(write_rlc(tmp_path / "r1.s1p", f0_hz=900e6))
    r2 = load(write_rlc(tmp_path / "r2.s1p", f0_hz=915e6))
    ctx = build_report([r1, r2], 10.0, match_request=MatchRequest(f0_hz=915e6), match_index=1)
    assert ctx.match.sweep is r2 and ctx.comparison.rows[1].file == r2.path
    assert [f.sha256 for f in ctx.inputs] == [hashlib.sha256(open(p, "rb").read()).hexdigest()
                                              for p in (r1.path, r2.path)]
    assert not ctx.failed and not ctx.judged
    with pytest.raises(dataclasses.FrozenInstanceError):
        ctx.match_index = 0
    with pytest.raises(matchtool.errors.UsageError):
        build_report([r1], 10.0, match_index=3)


def test_build_report_puts_coupling_of_multi_port_sweeps_and_asked_capabilities_in_extras():
    # coupling only for the multi-port input; locate / qfactor one result per sweep, when asked
    from matchtool.report import build_report
    from matchtool.sweep import load

    root = Path(__file__).resolve().parents[1] / "sample_sweeps"
    one, two = load(root / "ant_r3_via_cable.s1p"), load(root / "wifi_pair.s2p")
    ctx = build_report([one, two], locate={"velocity_factor": 0.66}, qfactor={"radius_m": 0.03})
    assert [r.nports for r in ctx.extras["coupling"]] == [2]
    assert [r.path for r in ctx.extras["locate"]] == [one.path, two.path]
    assert [r.path for r in ctx.extras["qfactor"]] == [one.path, two.path]
    assert "history" not in ctx.extras
    bare = build_report([one, two], coupling=False)
    assert "coupling" not in bare.extras and "locate" not in bare.extras

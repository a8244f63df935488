"""Hostile spec files through ``matchtool check``: every one exits 2 with exactly one stderr line
that names the spec file (and the key, where one is at fault), no traceback, no report written.

The malformed files are generated here from one valid spec (a dict written out as TOML by
:func:`toml_text`), by replacing, adding or removing one key at a time, so every key at every
level is hit with every wrong kind of value; nothing is hand-copied.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import pytest
from helpers import write_rlc

from matchtool import spec as sp

# ----------------------------------------------------------------------------------- generator


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float) and math.isnan(v):
        return "nan"
    if isinstance(v, float) and math.isinf(v):
        return "inf" if v > 0 else "-inf"
    if isinstance(v, int | float):
        return repr(v)
    if isinstance(v, str):
        text = v.replace("\\", "\\\\").replace('"', '\\"')
        return '"' + "".join(f"\\u{ord(c):04x}" if ord(c) < 32 or ord(c) == 127 else c for c in text) + '"'
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(v)


def toml_text(doc: dict) -> str:
    """TOML for a spec dict: plain keys first, then [[band]] tables, then other tables."""
    lines = [f"{k} = {_value(v)}" for k, v in doc.items() if not isinstance(v, dict) and k != "band"]
    if "band" in doc:
        bands = doc["band"]
        if isinstance(bands, list) and all(isinstance(b, dict) for b in bands) and bands:
            for b in bands:
                lines.append("[[band]]")
                lines += [f"{k} = {_value(v)}" for k, v in b.items()]
        else:
            lines.insert(0, f"band = {_value(bands)}")
    for k, v in doc.items():
        if isinstance(v, dict) and k != "band":
            lines.append(f"[{k}]")
            lines += [f"{kk} = {_value(vv)}" for kk, vv in v.items()]
    return "\n".join(lines) + "\n"


def valid_doc() -> dict:
    return {
        "name": "hostile",
        "port": 1,
        "band": [{"name": "ism", "f_low": "902 MHz", "f_high": "928 MHz", "min_return_loss_db": 10,
                  "max_mismatch_loss_db": 0.5}],
        "resonance": {"f_low": "905 MHz", "f_high": "925 MHz"},
        "golden": {"file": "golden.s1p", "band": "ism", "max_deviation_db": 3},
    }


WRONG_TYPES = {"string": "ten", "list": [10], "table": {"a": 1}, "bool": True, "date-like": "1979-05-27"}
NUMBER_KEYS = [("band", "min_return_loss_db"), ("band", "max_mismatch_loss_db"), ("golden", "max_deviation_db"),
               (None, "z0_ohm")]
FREQ_KEYS = [("band", "f_low"), ("band", "f_high"), ("resonance", "f_low"), ("resonance", "f_high")]


def _set(doc: dict, table: str | None, key: str, value) -> dict:
    if table is None:
        doc[key] = value
    elif table == "band":
        doc["band"][0][key] = value
    else:
        doc[table][key] = value
    return doc


def _dotted(table: str | None, key: str) -> str:
    return key if table is None else (f"band[1].{key}" if table == "band" else f"{table}.{key}")


def hostile_cases() -> list[tuple[str, str, str | None]]:
    """(case id, spec text, key the error must name or None)."""
    out: list[tuple[str, str, str | None]] = []

    def add(cid, doc, key):
        out.append((cid, toml_text(doc), key))

    for table, key in NUMBER_KEYS:
        for label, bad in {**WRONG_TYPES, "nan": math.nan, "inf": math.inf, "-inf": -math.inf}.items():
            if label == "date-like":
                continue
            add(f"{_dotted(table, key)}={label}", _set(valid_doc(), table, key, bad), _dotted(table, key))
    for table, key in FREQ_KEYS:
        for label, bad in {"list": [1], "table": {"a": 1}, "bool": True, "nan": math.nan, "inf": math.inf,
                           "furlongs": "915 furlongs", "empty": "", "blank": "   ", "text-nan": "nan",
                           "negative": "-5 MHz", "two-numbers": "902 928 MHz", "band-syntax": "902MHz:928MHz",
                           "overflow": "1e400 Hz"}.items():
            add(f"{_dotted(table, key)}={label}", _set(valid_doc(), table, key, bad), _dotted(table, key))
    # unknown keys at every level, and wrong table shapes
    add("unknown top key", {**valid_doc(), "bands": 1}, "bands")
    for table in ("band", "resonance", "golden"):
        d = valid_doc()
        _set(d, table, "colour", "red")
        add(f"unknown key in {table}", d, _dotted(table, "colour"))
    add("band as a single table", {**valid_doc(), "band": {"name": "x"}}, "band")
    add("band as a string", {**valid_doc(), "band": "ism"}, "band")
    add("band as a list of numbers", {**valid_doc(), "band": [1, 2]}, "band[1]")
    add("resonance as a number", {**valid_doc(), "resonance": 3}, "resonance")
    add("golden as a string", {**valid_doc(), "golden": "golden.s1p"}, "golden")
    for key, bad in (("port", 0), ("port", -1), ("port", "1"), ("port", 1.0), ("port", True), ("name", 3)):
        add(f"{key}={bad!r}", {**valid_doc(), key: bad}, key)
    for key, bad in (("z0_ohm", 0), ("z0_ohm", -50)):
        add(f"{key}={bad!r}", {**valid_doc(), key: bad}, key)
    # bands: reversed, zero width, limits two or none, limits out of their physical range
    add("reversed band", _set(_set(valid_doc(), "band", "f_low", "928 MHz"), "band", "f_high", "902 MHz"),
        "band[1].f_high")
    add("zero-width band", _set(valid_doc(), "band", "f_high", "902 MHz"), "band[1].f_high")
    add("zero-width band at 0 Hz", _set(_set(valid_doc(), "band", "f_low", 0), "band", "f_high", 0), "band[1].f_high")
    add("reversed resonance", _set(_set(valid_doc(), "resonance", "f_low", "925 MHz"), "resonance", "f_high",
                                   "905 MHz"), "resonance.f_high")
    for k in ("f_low", "f_high"):
        d = valid_doc()
        del d["band"][0][k]
        add(f"band without {k}", d, f"band[1].{k}")
        d = valid_doc()
        del d["resonance"][k]
        add(f"resonance without {k}", d, f"resonance.{k}")
    d = valid_doc()
    del d["band"][0]["min_return_loss_db"]
    add("band without a limit", d, "band[1].min_return_loss_db")
    for extra in ("max_vswr", "max_s11_db"):
        d = valid_doc()
        d["band"][0][extra] = 2 if extra == "max_vswr" else -10
        add(f"two limits (+{extra})", d, f"band[1].{extra}")
    for key, bad in (("min_return_loss_db", -10), ("min_return_loss_db", -0.5), ("max_vswr", 1), ("max_vswr", 0.99),
                     ("max_vswr", 0), ("max_vswr", -2), ("max_s11_db", 0.1), ("max_s11_db", 10)):
        d = valid_doc()
        del d["band"][0]["min_return_loss_db"]
        d["band"][0][key] = bad
        add(f"{key}={bad}", d, f"band[1].{key}")
    add("negative mismatch loss", _set(valid_doc(), "band", "max_mismatch_loss_db", -1), "band[1].max_mismatch_loss_db")
    d = valid_doc()
    d["band"].append(dict(d["band"][0]))
    add("duplicate band names", d, "band[2].name")
    d = valid_doc()
    d["band"][0]["name"] = "resonance"
    d["golden"]["band"] = "resonance"
    add("band named like the resonance requirement", d, "band[1].name")
    for bad in ("", "  ", 3, "ism\x00", "ism\x1b[31m", "i\x08sm", "ism\x7f"):
        add(f"band name {bad!r}", _set(valid_doc(), "band", "name", bad), "band[1].name")
    for bad in ("suite\x00", "suite\x1b[2J", "a\nb"):
        add(f"spec name {bad!r}", {**valid_doc(), "name": bad}, "name")
    # golden: missing keys, missing / directory / junk file, a band that does not exist
    for k in ("file", "band", "max_deviation_db"):
        d = valid_doc()
        del d["golden"][k]
        add(f"golden without {k}", d, f"golden.{k}")
    add("golden file missing", _set(valid_doc(), "golden", "file", "nope.s1p"), "golden.file")
    add("golden file is a directory", _set(valid_doc(), "golden", "file", "."), "golden.file")
    add("golden file is junk", _set(valid_doc(), "golden", "file", "junk.s1p"), "golden.file")
    add("golden file is empty text", _set(valid_doc(), "golden", "file", ""), "golden.file")
    add("golden band does not exist", _set(valid_doc(), "golden", "band", "lte"), "golden.band")
    add("golden band is a list", _set(valid_doc(), "golden", "band", ["ism"]), "golden.band")
    add("golden port beyond the file", _set(valid_doc(), "golden", "port", 2), "golden.file")
    add("golden max_deviation_db = 0", _set(valid_doc(), "golden", "max_deviation_db", 0), "golden.max_deviation_db")
    add("golden sweep does not cover the band", _set(_set(_set(valid_doc(), "band", "f_high", "2 GHz"),
                                                          "resonance", "f_high", "1.9 GHz"), "golden", "band", "ism"),
        "golden.file")
    # no requirement at all
    add("no requirement", {"name": "empty"}, "band")
    return out


CASES = hostile_cases()


@pytest.fixture
def workdir(tmp_path) -> Path:
    write_rlc(tmp_path / "golden.s1p")
    write_rlc(tmp_path / "unit.s1p", f0_hz=918e6)
    (tmp_path / "junk.s1p").write_bytes(bytes(range(256)) * 4)
    return tmp_path


def _check_refused(cli, workdir: Path, spec: Path, key: str | None) -> str:
    junit = workdir / "out.xml"
    r = cli("check", workdir / "unit.s1p", "--spec", spec, "--junit", junit, "--csv", workdir / "out.csv")
    assert r.code == 2, (r.code, r.err)
    assert len(r.err_lines) == 1, r.err
    line = r.err_lines[0]
    assert line.startswith(f"error: {spec}"), line
    assert "Traceback" not in r.err and "internal error" not in r.err
    if key is not None:
        assert f"key '{key}'" in line, line
    assert r.out == ""
    assert not junit.exists() and not (workdir / "out.csv").exists()
    assert not [p for p in workdir.iterdir() if p.name.startswith(".")], "temporary file left behind"
    return line


def test_generated_corpus_is_large_and_the_base_spec_is_valid(cli, workdir):
    assert len(CASES) >= 100
    assert len({c[0] for c in CASES}) == len(CASES)
    spec = workdir / "spec.toml"
    spec.write_text(toml_text(valid_doc()))
    r = cli("check", workdir / "unit.s1p", "--spec", spec, "--json")
    assert r.code in (0, 1), r.err
    assert [q["name"] for q in r.json()["files"][0]["requirements"]] == [
        "ism", "ism mismatch loss", "resonance", "ism deviation from golden"]


@pytest.mark.parametrize(("text", "key"), [(t, k) for _, t, k in CASES], ids=[c[0] for c in CASES])
def test_malformed_spec_is_one_line_exit_2(cli, workdir, text, key):
    spec = workdir / "spec.toml"
    spec.write_text(text, encoding="utf-8")
    _check_refused(cli, workdir, spec, key)


SYNTAX = {
    "missing value": "name = \n",
    "unclosed string": 'name = "abc\n',
    "unclosed table header": "[[band]\n",
    "key twice": 'name = "a"\nname = "b"\n',
    "garbage line": "this is not toml\n",
    "nested thousands deep": "name = " + "[" * 5000 + "]" * 5000 + "\n",
    "inline table thousands deep": "name = " + "{a = " * 3000 + "1" + "}" * 3000 + "\n",
}


@pytest.mark.parametrize("text", list(SYNTAX.values()), ids=list(SYNTAX))
def test_toml_syntax_errors(cli, workdir, text):
    spec = workdir / "spec.toml"
    spec.write_text(text, encoding="utf-8")
    line = _check_refused(cli, workdir, spec, None)
    assert "TOML" in line


def test_syntax_error_names_the_line(cli, workdir):
    spec = workdir / "spec.toml"
    spec.write_text(toml_text(valid_doc()) + "\n\nbroken = \n")
    line = _check_refused(cli, workdir, spec, None)
    n = toml_text(valid_doc()).count("\n") + 3
    assert f"line {n}" in line, line


ENCODED = {
    "empty": b"",
    "whitespace only": b"  \n\t\n",
    "UTF-16 without BOM": toml_text(valid_doc()).encode("utf-16-le"),
    "binary junk": bytes((i * 37 + 11) % 256 for i in range(4000)),
    "Latin-1 comment": ("# r\xe9sum\xe9\n" + toml_text(valid_doc())).encode("latin-1"),
    "NUL in the middle": toml_text(valid_doc()).encode()[:40] + b"\x00" + toml_text(valid_doc()).encode()[40:],
    "huge file": toml_text(valid_doc()).encode() + b"# " + b"x" * (sp.MAX_SPEC_BYTES + 10) + b"\n",
}


@pytest.mark.parametrize("raw", list(ENCODED.values()), ids=list(ENCODED))
def test_badly_encoded_or_oversized_spec(cli, workdir, raw):
    spec = workdir / "spec.toml"
    spec.write_bytes(raw)
    _check_refused(cli, workdir, spec, None)


@pytest.mark.parametrize("encoding", ["utf-8-sig", "utf-16"], ids=["UTF-8 BOM", "UTF-16 with BOM"])
def test_byte_order_marks_are_accepted_with_the_same_verdict(cli, workdir, encoding):
    plain = workdir / "plain.toml"
    plain.write_text(toml_text(valid_doc()), encoding="utf-8")
    marked = workdir / "marked.toml"
    marked.write_bytes(toml_text(valid_doc()).replace("\n", "\r\n").encode(encoding))
    a = cli("check", workdir / "unit.s1p", "--spec", plain, "--json")
    b = cli("check", workdir / "unit.s1p", "--spec", marked, "--json")
    assert a.code == b.code and a.code in (0, 1)
    assert a.json()["files"][0]["requirements"] == b.json()["files"][0]["requirements"]


def test_missing_directory_and_unreadable_spec(cli, workdir):
    for spec in (workdir / "nope.toml", workdir):
        _check_refused(cli, workdir, spec, None)
    if os.geteuid() != 0:  # root reads anything
        p = workdir / "locked.toml"
        p.write_text(toml_text(valid_doc()))
        p.chmod(0)
        try:
            _check_refused(cli, workdir, p, None)
        finally:
            p.chmod(0o600)


def test_huge_spec_is_not_read_whole(workdir, monkeypatch):
    # the size limit is enforced by reading at most MAX_SPEC_BYTES + 1 bytes, not the whole file
    p = workdir / "spec.toml"
    with p.open("wb") as fh:
        fh.write(toml_text(valid_doc()).encode())
        fh.seek(50 * sp.MAX_SPEC_BYTES)
        fh.write(b"\n")
    seen = []
    real_read_bytes = Path.read_bytes
    monkeypatch.setattr(Path, "read_bytes", lambda self: seen.append(self) or real_read_bytes(self))
    with pytest.raises(sp.SpecError, match="larger than"):
        sp.load_spec(p)
    assert p not in seen



@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_golden_file_that_is_a_fifo_is_named_and_never_opened(cli, workdir):
    os.mkfifo(workdir / "pipe.s1p")  # opening it for reading would block for ever
    spec = workdir / "spec.toml"
    spec.write_text(toml_text(_set(valid_doc(), "golden", "file", "pipe.s1p")))
    line = _check_refused(cli, workdir, spec, "golden.file")
    assert "not a regular file" in line


def test_golden_file_that_is_a_directory_says_so(cli, workdir):
    spec = workdir / "spec.toml"
    spec.write_text(toml_text(_set(valid_doc(), "golden", "file", ".")))
    assert "is a directory" in _check_refused(cli, workdir, spec, "golden.file")


# ------------------------------------------------------------------ multi-port tables, hostile

PAIR_TABLES = {
    "isolation": {"name": "iso", "ports": [1, 2], "f_low": "902 MHz", "f_high": "928 MHz", "min_isolation_db": 15},
    "correlation": {"name": "ecc", "ports": [1, 2], "f_low": "902 MHz", "f_high": "928 MHz", "max_ecc": 0.5},
}


def _pair_text(table: str, **changes) -> str:
    t = dict(PAIR_TABLES[table])
    for k, v in changes.items():
        if v is None:
            t.pop(k, None)
        else:
            t[k] = v
    body = "\n".join(f"{k} = {_value(v)}" for k, v in t.items())
    return toml_text({"band": valid_doc()["band"]}) + f"[[{table}]]\n{body}\n"


def pair_cases() -> list[tuple[str, str, str]]:
    out = []
    for table, limit in (("isolation", "min_isolation_db"), ("correlation", "max_ecc")):
        key = f"{table}[1]."
        for label, bad in {**WRONG_TYPES, "nan": math.nan, "inf": math.inf, "negative": -1, "zero": 0}.items():
            if label != "date-like":
                out.append((f"{table}.{limit}={label}", _pair_text(table, **{limit: bad}), key + limit))
        for label, bad in {"one port": [1], "three ports": [1, 2, 3], "same port": [2, 2], "zero": [0, 1],
                           "strings": ["1", "2"], "floats": [1.0, 2.0], "bools": [True, False], "number": 1,
                           "table": {"a": 1}}.items():
            out.append((f"{table}.ports={label}", _pair_text(table, ports=bad), key + "ports"))
        for k in ("name", "ports", "f_low", "f_high", limit):
            out.append((f"{table} without {k}", _pair_text(table, **{k: None}), key + k))
        out.append((f"{table} unknown key", _pair_text(table, colour="red"), key + "colour"))
        out.append((f"{table} reversed", _pair_text(table, f_low="928 MHz", f_high="902 MHz"), key + "f_high"))
        out.append((f"{table} name clash", _pair_text(table, name="ism"), "band[1].name"))  # names both keys
    out.append(("correlation max_ecc = 1", _pair_text("correlation", max_ecc=1), "correlation[1].max_ecc"))
    doc = valid_doc()
    doc["band"][0]["port"] = 0
    out.append(("band port 0", toml_text(doc), "band[1].port"))
    doc = valid_doc()
    doc["band"][0]["port"] = "2"
    out.append(("band port as text", toml_text(doc), "band[1].port"))
    return out


PAIR_CASES = pair_cases()


@pytest.mark.parametrize(("text", "key"), [(t, k) for _, t, k in PAIR_CASES], ids=[c[0] for c in PAIR_CASES])
def test_malformed_multi_port_table_is_one_line_exit_2(cli, workdir, text, key):
    spec = workdir / "spec.toml"
    spec.write_text(text, encoding="utf-8")
    _check_refused(cli, workdir, spec, key)


def test_spec_naming_a_port_the_file_lacks_exits_2_in_one_line_and_never_passes(cli, workdir):
    spec = workdir / "spec.toml"
    spec.write_text(_pair_text("isolation"))
    junit = workdir / "out.xml"
    r = cli("check", workdir / "unit.s1p", "--spec", spec, "--json", "--junit", junit)
    assert r.code == 2
    doc = r.json()
    assert doc["pass"] is False and "names port 2" in doc["files"][0]["error"]
    errors = [ln for ln in r.err_lines if ln.startswith("error: ")]
    assert len(errors) == 1 and "unit.s1p" in errors[0] and "key 'isolation[1].ports'" in errors[0]
    assert "<error" in junit.read_text()  # the report is still written, with the file as an error

"""The hostile-input corpus (tests/corpus.py): every case ends as a correct load, a load with a
named warning, or one error line naming the file (and line) - through the library and the CLI.

The expected numbers are those the corpus generator wrote; the policy is docs/input-policy.md.
"""

from __future__ import annotations

import errno
import pickle
import re

import numpy as np
import pytest
from corpus import Case, cases, pickle_payload

from matchtool import inputs as inputs_mod
from matchtool.errors import MatchtoolError, TouchstoneError
from matchtool.sweep import load

ALL = cases(__import__("pathlib").Path("/nonexistent"))  # names only; real cases are built per test


def _build(tmp_path, case_name: str) -> tuple[Case, str]:
    case = next(c for c in cases(tmp_path) if c.name == case_name)
    p = tmp_path / case.filename
    if case.make is not None:
        case.make(p)
    else:
        p.write_bytes(case.data)
    return case, str(p)


def test_corpus_is_large_and_mixed():
    kinds = [c.outcome for c in ALL]
    assert len(ALL) >= 40
    assert {"ok", "warn", "error"} <= set(kinds)
    assert len({c.name for c in ALL}) == len(ALL)


@pytest.mark.parametrize("name", [c.name for c in ALL])
def test_library_outcome(tmp_path, name):
    case, path = _build(tmp_path, name)
    if case.outcome == "error":
        with pytest.raises(TouchstoneError) as ei:
            load(path)
        msg = str(ei.value)
        assert "\n" not in msg
        assert len(msg) < len(path) + 300, msg[:400]  # a hostile token is shown shortened
        assert msg.startswith(path), msg
        assert re.search(case.match, msg, re.I), msg
        if case.line is not None:
            assert ei.value.line == case.line, msg
            assert f"line {case.line}:" in msg
        return
    sw = load(path)
    joined = " | ".join(sw.warnings)
    if case.outcome == "warn":
        assert re.search(case.match, joined, re.I), joined
        assert all(path in w for w in sw.warnings)
    else:
        assert sw.warnings == [], joined
    if case.f_hz is not None:
        assert np.allclose(sw.f_hz, case.f_hz, rtol=1e-12, atol=0)
        if case.s11 is not None:
            assert np.allclose(sw.gamma, case.s11, atol=1e-9)
        assert sw.z0_ohm == case.z0_ohm
    if case.check is not None:
        assert case.check(sw)
    assert np.all(np.isfinite(sw.network.s)) and np.all(np.diff(sw.f_hz) > 0)


def _outcome(path: str):
    try:
        sw = load(path)
    except MatchtoolError as exc:
        return ("error", str(exc), getattr(exc, "line", None))
    return ("ok", sw.f_hz.tobytes(), np.asarray(sw.network.s).tobytes(), np.asarray(sw.z0_ports_ohm).tobytes(),
            tuple(sw.warnings))


@pytest.mark.parametrize("name", [c.name for c in ALL])
def test_the_json_reader_changes_no_outcome(tmp_path, monkeypatch, name):
    """With the numbers read by the JSON reader (a lot's setting) or by np.fromstring alone (a
    single small file's), every case ends alike: the same bits, warnings, or error and line."""
    import orjson

    import matchtool.touchstone.numbers as nm

    case, path = _build(tmp_path, name)
    monkeypatch.setattr(nm, "_json_reader", lambda size: orjson)
    with_reader = _outcome(path)
    monkeypatch.setattr(nm, "_json_reader", lambda size: None)
    assert _outcome(path) == with_reader


@pytest.mark.parametrize("name", [c.name for c in ALL])
def test_cli_outcome(tmp_path, cli, name):
    case, path = _build(tmp_path, name)
    r = cli("inspect", path, "--json")
    assert "Traceback" not in r.err
    if case.outcome == "error":
        assert r.code == 2
        assert r.out == ""
        assert len(r.err_lines) == 1, r.err
        line = r.err_lines[0]
        assert line.startswith(f"error: {path}"), line
        if case.line is not None:
            assert f"{path} line {case.line}:" in line
        return
    assert r.code == 0, r.err
    doc = r.json()
    # stderr holds the document's warnings, one 'warning:' line each, and nothing else
    assert r.err_lines == [f"warning: {' '.join(w.split())}" for w in doc["warnings"]]
    assert doc["points"] == len(case.f_hz) if case.f_hz is not None else doc["points"] > 0
    if case.outcome == "warn":
        assert any(re.search(case.match, w, re.I) for w in doc["warnings"]), doc["warnings"]


@pytest.mark.parametrize("protocol", [0, 1, 2, 3, 4, 5])
def test_pickle_is_never_unpickled(tmp_path, protocol):
    marker = tmp_path / "MARKER"
    payload = pickle_payload(marker, protocol)
    # the payload is live: unpickling it does create the marker (so the check below can fail)
    pickle.loads(payload)
    assert marker.exists()
    marker.unlink()
    p = tmp_path / "evil.s1p"
    p.write_bytes(payload)
    with pytest.raises(TouchstoneError):
        load(p)
    assert not marker.exists()


def test_unreadable_file(tmp_path, monkeypatch, cli):
    # tests run as root, so chmod 000 would not stop the read: simulate the refusal instead
    p = tmp_path / "locked.s1p"
    p.write_text("# MHz S RI R 50\n100 0.1 0.2\n")

    def refuse(*a, **k):
        raise PermissionError(errno.EACCES, "Permission denied", str(p))

    monkeypatch.setattr(inputs_mod, "open", refuse, raising=False)
    with pytest.raises(TouchstoneError, match="Permission denied"):
        load(p)
    r = cli("inspect", p)
    assert r.code == 2 and len(r.err_lines) == 1
    assert r.err_lines[0].startswith(f"error: {p}: cannot read")


def test_size_limit_library_and_env(tmp_path, monkeypatch, cli):
    p = tmp_path / "big.s1p"
    p.write_text("# MHz S RI R 50\n" + "".join(f"{100 + k} 0.1 0.2\n" for k in range(50_000)))
    assert len(load(p).f_hz) == 50_000
    with pytest.raises(TouchstoneError, match="over the input limit"):
        load(p, max_bytes=100_000)
    monkeypatch.setenv("MATCHTOOL_MAX_INPUT_MB", "0.1")
    r = cli("inspect", p)
    assert r.code == 2 and len(r.err_lines) == 1
    assert r.err_lines[0].startswith(f"error: {p}: file is") and "MATCHTOOL_MAX_INPUT_MB" in r.err_lines[0]
    for bad in ("lots", "inf", "nan", "-5", "0"):
        monkeypatch.setenv("MATCHTOOL_MAX_INPUT_MB", bad)
        r = cli("inspect", p)
        assert r.code == 2 and len(r.err_lines) == 1 and "MATCHTOOL_MAX_INPUT_MB" in r.err_lines[0], r.err
    monkeypatch.setenv("MATCHTOOL_MAX_INPUT_MB", "2")
    assert cli("inspect", p).code == 0


def test_nul_in_path_is_our_error():
    with pytest.raises(TouchstoneError, match="NUL"):
        load("bad\x00name.s1p")


def test_errors_are_matchtool_errors_and_value_errors(tmp_path):
    case, path = _build(tmp_path, "text in numbers")
    with pytest.raises(ValueError):
        load(path)
    with pytest.raises(MatchtoolError):
        load(path)


SUBPROCESS_CASES = ["single point", "zero frequency", "|S11| > 1", "DB overflow", "Z equal to -R (no S equivalent)",
                    "pickle protocol 4", "binary junk", "two option lines", "v2 matrix format Lower", "FIFO"]


@pytest.mark.parametrize("name", SUBPROCESS_CASES)
def test_cli_subprocess_stderr_is_clean(tmp_path, cli_subprocess, name):
    # a real interpreter with the default warning filters: no numpy/scikit-rf warning or traceback
    # may add lines to stderr
    case, path = _build(tmp_path, name)
    r = cli_subprocess("inspect", path, "--json")
    assert "Traceback" not in r.err and "Warning" not in r.err, r.err
    if case.outcome == "error":
        assert r.code == 2 and len(r.err_lines) == 1 and r.err_lines[0].startswith(f"error: {path}")
    else:
        assert r.code == 0
        assert all(ln.startswith("warning: ") for ln in r.err_lines), r.err

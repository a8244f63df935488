"""Outputs are never lost: atomic writes, refusal without force, failures mid-write, Ctrl-C.

Tests run as root, so a read-only directory would not stop a write: failures are simulated by
patching os.fsync / os.replace / os.link, the calls where a full disk or a permission error shows.
"""

from __future__ import annotations

import errno
import os
import stat

import numpy as np
import pytest
from helpers import write_rlc

from matchtool import outputs
from matchtool.errors import OutputError
from matchtool.outputs import atomic_write, atomic_write_many, check_output
from matchtool.sweep import load, write_touchstone


def _leftovers(d) -> list[str]:
    return sorted(n for n in os.listdir(d) if n.endswith(".part"))


def _disk_full(*a, **k):
    raise OSError(errno.ENOSPC, "No space left on device")


def test_new_file_is_written_whole(tmp_path):
    p = tmp_path / "r.json"
    assert atomic_write(p, "{}\n") == p
    assert p.read_text() == "{}\n"
    assert _leftovers(tmp_path) == []


def test_refuses_to_replace_without_force(tmp_path):
    p = tmp_path / "r.json"
    p.write_text("yesterday")
    with pytest.raises(OutputError, match="exists already.*--force") as ei:
        atomic_write(p, "today")
    assert str(ei.value).startswith(str(p))
    assert p.read_text() == "yesterday"
    assert _leftovers(tmp_path) == []
    atomic_write(p, "today", force=True)
    assert p.read_text() == "today"


def test_check_output_before_work(tmp_path):
    (tmp_path / "d").mkdir()
    with pytest.raises(OutputError, match="is a directory"):
        check_output(tmp_path / "d")
    with pytest.raises(OutputError, match="does not exist"):
        check_output(tmp_path / "nowhere" / "r.json")
    (tmp_path / "x").write_text("1")
    with pytest.raises(OutputError, match="exists already"):
        check_output(tmp_path / "x")
    assert check_output(tmp_path / "x", force=True) == tmp_path / "x"


@pytest.mark.parametrize("where", ["fsync", "replace", "write"])
def test_failure_mid_write_keeps_old_file(tmp_path, monkeypatch, where):
    p = tmp_path / "r.csv"
    p.write_text("old,report\n")
    if where == "write":  # the data write itself fails (disk full while writing)
        real_fdopen = os.fdopen

        class Full:
            def __init__(self, fh):
                self.fh = fh

            def __enter__(self):
                return self

            def __exit__(self, *a):
                self.fh.close()

            def write(self, b):
                self.fh.write(b[: len(b) // 2])
                _disk_full()

        monkeypatch.setattr(outputs.os, "fdopen", lambda fd, mode: Full(real_fdopen(fd, mode)))
    else:
        monkeypatch.setattr(outputs.os, where, _disk_full)
    with pytest.raises(OutputError, match="No space left") as ei:
        atomic_write(p, "new,report\n" * 1000, force=True)
    assert str(ei.value).startswith(str(p))
    assert p.read_text() == "old,report\n"
    assert _leftovers(tmp_path) == []


def test_failure_without_force_keeps_nothing(tmp_path, monkeypatch):
    monkeypatch.setattr(outputs.os, "link", _disk_full)
    monkeypatch.setattr(outputs.os, "replace", _disk_full)
    p = tmp_path / "new.json"
    with pytest.raises(OutputError):
        atomic_write(p, "x")
    assert not p.exists() and _leftovers(tmp_path) == []


def test_ctrl_c_mid_write_keeps_old_file(tmp_path, monkeypatch):
    p = tmp_path / "r.xml"
    p.write_text("<old/>")

    def interrupt(fd):
        raise KeyboardInterrupt

    monkeypatch.setattr(outputs.os, "fsync", interrupt)
    with pytest.raises(KeyboardInterrupt):
        atomic_write(p, "<new/>", force=True)
    assert p.read_text() == "<old/>"
    assert _leftovers(tmp_path) == []


def test_target_that_appears_during_the_write_is_not_replaced(tmp_path, monkeypatch):
    p = tmp_path / "race.json"
    real_fsync = os.fsync

    def fsync_then_someone_writes(fd):
        real_fsync(fd)
        p.write_text("written by someone else")

    monkeypatch.setattr(outputs.os, "fsync", fsync_then_someone_writes)
    with pytest.raises(OutputError, match="exists already"):
        atomic_write(p, "ours")
    assert p.read_text() == "written by someone else"
    assert _leftovers(tmp_path) == []


def test_many_refuses_all_when_one_exists(tmp_path):
    a, b = tmp_path / "a.json", tmp_path / "b.xml"
    b.write_text("old")
    with pytest.raises(OutputError, match="exists already"):
        atomic_write_many([(a, "A"), (b, "B")])
    assert not a.exists() and b.read_text() == "old"


def test_many_failure_while_staging_replaces_nothing(tmp_path, monkeypatch):
    a, b = tmp_path / "a.json", tmp_path / "b.xml"
    a.write_text("old a")
    b.write_text("old b")
    real_fsync = os.fsync
    calls = []

    def second_fails(fd):
        calls.append(fd)
        if len(calls) == 2:
            _disk_full()
        real_fsync(fd)

    monkeypatch.setattr(outputs.os, "fsync", second_fails)
    with pytest.raises(OutputError, match="No space left"):
        atomic_write_many([(a, "new a"), (b, "new b")], force=True)
    assert a.read_text() == "old a" and b.read_text() == "old b"
    assert _leftovers(tmp_path) == []
    monkeypatch.setattr(outputs.os, "fsync", real_fsync)
    atomic_write_many([(a, "new a"), (b, "new b")], force=True)
    assert a.read_text() == "new a" and b.read_text() == "new b"


def test_many_same_target_twice_is_refused(tmp_path):
    with pytest.raises(OutputError, match="twice"):
        atomic_write_many([(tmp_path / "a", "1"), (tmp_path / "a", "2")])
    assert not (tmp_path / "a").exists()


def test_written_file_has_the_usual_mode(tmp_path):
    old = os.umask(0o022)
    try:
        p = atomic_write(tmp_path / "r.txt", "x")
    finally:
        os.umask(old)
    assert stat.S_IMODE(p.stat().st_mode) == 0o644  # not mkstemp's 0600


def test_write_touchstone_round_trip_and_refusal(tmp_path):
    src = write_rlc(tmp_path / "a.s1p", n=21)
    sw = load(src)
    out = tmp_path / "b.s1p"
    write_touchstone(out, sw.network)
    back = load(out)
    assert np.allclose(back.f_hz, sw.f_hz, rtol=1e-12) and np.allclose(back.gamma, sw.gamma, atol=1e-11)
    before = out.read_bytes()
    with pytest.raises(OutputError, match="exists already"):
        write_touchstone(out, sw.network)
    assert out.read_bytes() == before
    assert _leftovers(tmp_path) == []


def _interrupted_inspect(tmp_path, monkeypatch, cli):
    import matchtool.commands.inspect as insp

    p = write_rlc(tmp_path / "a.s1p", n=21)

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(insp, "summarize", interrupted)
    return cli("inspect", p, "--json")


def test_ctrl_c_during_inspect_exits_130(tmp_path, monkeypatch, cli):
    r = _interrupted_inspect(tmp_path, monkeypatch, cli)
    assert r.code == 130
    assert r.out == ""
    assert "Traceback" not in r.err and len(r.err_lines) == 1


def test_ctrl_c_during_inspect_prints_one_line(tmp_path, monkeypatch, cli):
    r = _interrupted_inspect(tmp_path, monkeypatch, cli)
    assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: interrupted")


@pytest.mark.parametrize("name", ["out.ts", "out.s1p", "OUT.S1P"])
def test_written_touchstone_loads_back_under_its_name(tmp_path, name):
    # a .ts file must carry version 2 keywords: only they tell a reader the port count
    sw = load(write_rlc(tmp_path / "a.s1p", n=11))
    out = write_touchstone(tmp_path / name, sw.network)
    back = load(out)
    assert np.allclose(back.gamma, sw.gamma, atol=1e-11) and back.z0_ohm == sw.z0_ohm
    assert back.warnings == []


def test_written_two_and_three_port_load_back(tmp_path):
    import skrf

    rng = np.random.default_rng(5)
    for n in (2, 3):
        s = rng.uniform(-0.4, 0.4, (4, n, n)) + 1j * rng.uniform(-0.4, 0.4, (4, n, n))
        net = skrf.Network(frequency=skrf.Frequency.from_f([1e9, 2e9, 3e9, 4e9], unit="Hz"), s=s, z0=50)
        for name in (f"x.s{n}p", f"x{n}.ts"):
            back = load(write_touchstone(tmp_path / name, net))
            assert np.allclose(back.network.s, s, atol=1e-11)

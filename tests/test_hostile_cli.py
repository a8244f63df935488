"""Hostile use of every command from outside (in-process through the ``cli`` fixture):

- argument errors: exit 2, exactly one stderr line, no traceback, no output file;
- outputs never lost: an existing file is refused without --force and left byte-identical; a
  failure or Ctrl-C during the write (os.replace / os.fsync patched to raise) leaves the old file
  intact and no temporary file; an output naming an input is refused even with --force;
- Ctrl-C inside each command's core: exit 130, one line, nothing written;
- awkward but legal sweeps (1 and 2 points, |S11| > 1, a perfect sample, 75 ohm, N-port --port):
  no crash, JSON without Infinity / NaN.
"""

from __future__ import annotations

import errno
import json
import os
from pathlib import Path

import numpy as np
import pytest
from helpers import ROOT, gamma_of, s1p_text, series_rlc_z, write_rlc

SAMPLES = ROOT / "sample_sweeps"
SPEC = '[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmax_vswr = 2\n'
FEED = ("--toward", "radio", "--length", "1m", "--velocity-factor", "0.66", "--loss-db-per-m", "0.3")


@pytest.fixture
def work(tmp_path) -> Path:
    write_rlc(tmp_path / "a.s1p", r_ohm=25.0)
    write_rlc(tmp_path / "b.s1p", r_ohm=40.0, f0_hz=920e6)
    (tmp_path / "spec.toml").write_text(SPEC)
    (tmp_path / "link.toml").write_text(
        'f_hz = "915 MHz"\ndistance_m = 100\ntx_power_dbm = 14\ntx_gain_dbi = 2\nrx_gain_dbi = 2\n'
        'rx_sensitivity_dbm = -100\ntx_sweep = "a.s1p"\n')
    return tmp_path


def one_error(r, code: int = 2) -> str:
    assert r.code == code, (r.code, r.err)
    errors = [ln for ln in r.err_lines if not ln.startswith("warning: ")]
    assert len(errors) == 1, r.err
    assert errors[0].startswith("error: "), r.err
    assert "Traceback" not in r.err and "internal error" not in r.err, r.err
    return errors[0]


def leftovers(d: Path) -> list[str]:
    return sorted(p.name for p in d.iterdir() if p.name.startswith(".") or p.name.endswith(".part"))


# ------------------------------------------------------------------------------- writers

def writers(w: Path) -> dict[str, tuple[tuple, Path]]:
    """Every command that writes a file: (arguments without the output, the output path)."""
    a = w / "a.s1p"
    return {
        "check --junit": (("check", a, "--spec", w / "spec.toml", "--junit"), w / "out.xml"),
        "check --csv": (("check", a, "--spec", w / "spec.toml", "--csv"), w / "out.csv"),
        "match --write-network": (("match", a, "--at", "915MHz", "--write-network"), w / "net.s2p"),
        "match --write-matched": (("match", a, "--at", "915MHz", "--write-matched"), w / "matched.s1p"),
        "feedline --out": (("feedline", a, *FEED, "--out"), w / "moved.s1p"),
        "plot --out": (("plot", a, "--out"), w / "pic.png"),
        "report --out": (("report", a, "--out"), w / "page.html"),
    }


WRITERS = list(writers(Path(".")))
SENTINEL = b"yesterday's report \x00\xff - must survive\n"


@pytest.mark.parametrize("name", WRITERS)
def test_writer_works_then_refuses_to_replace_without_force(cli, work, name):
    args, out = writers(work)[name]
    r = cli(*args, out)
    assert r.code in (0, 1), r.err
    assert out.stat().st_size > 0
    out.write_bytes(SENTINEL)
    line = one_error(cli(*args, out))
    assert str(out) in line and "--force" in line
    assert out.read_bytes() == SENTINEL
    assert leftovers(work) == []
    r = cli(*args, out, "--force")
    assert r.code in (0, 1), r.err
    assert out.read_bytes() != SENTINEL


@pytest.mark.parametrize("fail", ["os.replace", "os.fsync"])
@pytest.mark.parametrize("name", WRITERS)
def test_failure_mid_write_keeps_the_old_file(cli, work, monkeypatch, name, fail):
    args, out = writers(work)[name]
    out.write_bytes(SENTINEL)

    def disk_full(*a, **k):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(fail, disk_full)
    line = one_error(cli(*args, out, "--force"))
    assert str(out) in line
    assert out.read_bytes() == SENTINEL
    assert leftovers(work) == []


@pytest.mark.parametrize("name", WRITERS)
def test_ctrl_c_during_the_write_keeps_the_old_file(cli, work, monkeypatch, name):
    args, out = writers(work)[name]
    out.write_bytes(SENTINEL)

    def interrupt(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr("os.replace", interrupt)
    one_error(cli(*args, out, "--force"), code=130)
    assert out.read_bytes() == SENTINEL
    assert leftovers(work) == []


@pytest.mark.parametrize("name", WRITERS)
def test_output_into_a_missing_directory_or_onto_a_directory(cli, work, name):
    args, out = writers(work)[name]
    for target in (work / "no such dir" / out.name, work):
        before = sorted(p.name for p in work.iterdir())
        one_error(cli(*args, target, "--force"))
        assert sorted(p.name for p in work.iterdir()) == before


@pytest.mark.parametrize("name", WRITERS)
def test_output_onto_an_input_is_refused_even_with_force(cli, work, name):
    args, _ = writers(work)[name]
    inputs = [Path(x) for x in args if isinstance(x, Path)]
    for target in inputs:
        before = target.read_bytes()
        r = cli(*args, target, "--force")
        one_error(r)
        assert target.read_bytes() == before


def test_output_onto_an_input_through_another_spelling(cli, work):
    a = work / "a.s1p"
    before = a.read_bytes()
    os.link(a, work / "hard.s1p")
    for target in (work / "." / "a.s1p", work / "sub" / ".." / "a.s1p", work / "hard.s1p"):
        (work / "sub").mkdir(exist_ok=True)
        one_error(cli("feedline", a, *FEED, "--out", target, "--force"))
        one_error(cli("match", a, "--at", "915MHz", "--write-matched", target, "--force"))
    assert a.read_bytes() == before


def test_feedline_out_onto_the_cable_file_is_refused(cli, tmp_path):
    cable = tmp_path / "cable.s2p"
    cable.write_bytes((SAMPLES / "cable_3m.s2p").read_bytes())
    sweep = tmp_path / "module.s2p"
    sweep.write_bytes((SAMPLES / "module_port2.s2p").read_bytes())
    before = cable.read_bytes()
    r = cli("feedline", sweep, "--port", "2", "--toward", "antenna", "--cable", cable, "--out", cable, "--force")
    one_error(r)
    assert cable.read_bytes() == before


UNKNOWN_EXT = {
    "check --junit": "out.csv", "check --csv": "out.xml",
    "match --write-network": "net.txt", "match --write-matched": "matched.s2p", "feedline --out": "moved.txt",
    "plot --out": "pic.bmp", "report --out": "page.txt",
}


@pytest.mark.parametrize("name", list(UNKNOWN_EXT))
def test_unknown_output_extension(cli, work, name):
    args, _ = writers(work)[name]
    out = work / UNKNOWN_EXT[name]
    one_error(cli(*args, out))
    assert not out.exists()


# ------------------------------------------------------------------------------- Ctrl-C in the core

CORES = {
    "inspect": ("matchtool.commands.inspect.summarize", lambda w: ("inspect", w / "a.s1p")),
    "check": ("matchtool.spec.evaluate_arrays", lambda w: ("check", w / "a.s1p", w / "b.s1p", "--spec", w / "spec.toml",
                                                           "--junit", w / "o.xml", "--csv", w / "o.csv", "--jobs", "1")),
    "match": ("matchtool.matching.propose", lambda w: ("match", w / "a.s1p", "--at", "915MHz",
                                                         "--write-network", w / "n.s2p")),
    "match --band": ("matchtool.matching.propose", lambda w: ("match", w / "a.s1p", "--band", "902MHz:928MHz",
                                                                      "--write-matched", w / "m.s1p")),
    "feedline": ("matchtool.feedline.move_sweep", lambda w: ("feedline", w / "a.s1p", *FEED, "--out", w / "o.s1p")),
    "budget": ("matchtool.commands.budget.budget", lambda w: ("budget", w / "link.toml", "--json")),
    "compare": ("matchtool.commands.compare.compare", lambda w: ("compare", w / "a.s1p", w / "b.s1p", "--json")),
    "plot": ("matchtool.render.plots.figure_bytes", lambda w: ("plot", w / "a.s1p", "--out", w / "o.png")),
    "report": ("matchtool.render.html.render_page", lambda w: ("report", w / "a.s1p", "--out", w / "o.html")),
}


@pytest.mark.parametrize("name", CORES)
def test_ctrl_c_in_the_core_exits_130_and_writes_nothing(cli, work, monkeypatch, name):
    target, argv = CORES[name]
    calls = []

    def interrupt(*a, **k):
        calls.append(1)
        raise KeyboardInterrupt

    monkeypatch.setattr(target, interrupt)
    before = sorted(p.name for p in work.iterdir())
    r = cli(*argv(work))
    assert calls, "the patched function was not reached"
    one_error(r, code=130)
    assert r.out == "" or "--json" not in argv(work)
    assert sorted(p.name for p in work.iterdir()) == before


# ------------------------------------------------------------------------------- awkward sweeps

def _awkward(d: Path) -> dict[str, tuple[Path, tuple]]:
    f = np.linspace(800e6, 1030e6, 47)
    g = gamma_of(series_rlc_z(f, 40.0, 40e-9, 915e6))
    perfect = g.copy()
    perfect[int(np.argmin(abs(f - 915e6)))] = 0.0
    hot = g.copy()
    hot[:5] = 1.08 * np.exp(1j * np.angle(hot[:5]))
    files = {
        "1 point": s1p_text(np.array([915e6]), np.array([0.2 + 0.1j])),
        "2 points": s1p_text(np.array([900e6, 930e6]), np.array([0.2 + 0.1j, 0.1 - 0.3j])),
        "|S11| > 1": s1p_text(f, hot),
        "perfect sample": s1p_text(f, perfect),
        "all perfect": s1p_text(f, np.zeros_like(g)),
        "short circuit": s1p_text(f, -np.ones_like(g)),
        "75 ohm": s1p_text(f, gamma_of(series_rlc_z(f, 75.0, 40e-9, 915e6), 75.0), z0=75.0),
    }
    out = {}
    for k, text in files.items():
        p = d / (k.replace(" ", "_").replace("|", "").replace(">", "gt") + ".s1p")
        p.write_text(text)
        out[k] = (p, ())
    out["N-port --port 2"] = (SAMPLES / "module_port2.s2p", ("--port", "2"))
    return out


AWKWARD = ["1 point", "2 points", "|S11| > 1", "perfect sample", "all perfect", "short circuit", "75 ohm",
           "N-port --port 2"]


def _commands(p: Path, port: tuple, d: Path) -> dict[str, tuple]:
    spec = d / "spec.toml"
    if port:
        spec.write_text("port = 2\n" + SPEC)
    link = d / "awk.toml"
    link.write_text(f'f_hz = "915 MHz"\ndistance_m = 100\ntx_power_dbm = 14\ntx_gain_dbi = 2\nrx_gain_dbi = 2\n'
                    f'rx_sensitivity_dbm = -100\ntx_sweep = "{p}"\n' + ("tx_sweep_port = 2\n" if port else ""))
    return {
        "inspect": ("inspect", p, "--json", "--at", "915MHz", *port),
        "check": ("check", p, "--spec", spec, "--json"),
        "match --at": ("match", p, "--at", "915MHz", "--json", *port),
        "match --band": ("match", p, "--band", "902MHz:928MHz", "--json", *port),
        "feedline radio": ("feedline", p, *FEED, "--json", *port),
        "feedline antenna": ("feedline", p, "--toward", "antenna", "--length", "1m", "--velocity-factor", "0.66",
                             "--loss-db-per-m", "0.3", "--json", *port),
        "feedline delay": ("feedline", p, "--toward", "antenna", "--delay", "250ps", "--json", *port),
        "budget": ("budget", link, "--json"),
        "compare": ("compare", p, p, "--json", *port),
    }


CMDS = ["inspect", "check", "match --at", "match --band", "feedline radio", "feedline antenna", "feedline delay",
        "budget", "compare"]


@pytest.mark.parametrize("cmd", CMDS)
@pytest.mark.parametrize("kind", AWKWARD)
def test_awkward_sweeps_never_crash_and_json_is_finite(cli, tmp_path, kind, cmd):
    (tmp_path / "spec.toml").write_text(SPEC)
    p, port = _awkward(tmp_path)[kind]
    argv = _commands(p, port, tmp_path)[cmd]
    r = cli(*argv)
    assert "Traceback" not in r.err and "internal error" not in r.err, r.err
    stray = [ln for ln in r.err_lines if not ln.startswith(("warning: ", "error: "))]
    assert stray == [], r.err
    if r.code == 2:
        one_error(r)
        assert r.out == ""
    else:
        assert r.code in (0, 1), r.err
        assert "Infinity" not in r.out and "NaN" not in r.out
        json.loads(r.out)


@pytest.mark.parametrize("kind", AWKWARD)
def test_awkward_sweeps_draw_and_report(cli, tmp_path, kind):
    p, port = _awkward(tmp_path)[kind]
    for args in (("plot", p, "--out", tmp_path / "rl.png", *port),
                 ("plot", p, "--out", tmp_path / "smith.svg", "--kind", "smith", *port),
                 ("report", p, "--out", tmp_path / "r.html", *port)):
        r = cli(*args)
        assert "Traceback" not in r.err and "internal error" not in r.err, r.err
        assert r.code in (0, 1) or len(r.err_lines) == 1, r.err


def test_nonphysical_sweep_is_named_in_a_warning(cli, tmp_path):
    p, _ = _awkward(tmp_path)["|S11| > 1"]
    for argv in (("inspect", p, "--json"), ("check", p, "--spec", tmp_path / "spec.toml", "--json")):
        (tmp_path / "spec.toml").write_text(SPEC)
        r = cli(*argv)
        assert r.code in (0, 1), r.err
        assert any("|S11| > 1" in w and str(p) in w for w in r.json()["warnings"]), r.json()["warnings"]


def test_match_on_a_load_already_at_z0(cli, tmp_path):
    # a perfect sample at the target: the answer is "no part needed", not "no network matches"
    p, _ = _awkward(tmp_path)["perfect sample"]
    r = cli("match", p, "--at", "915MHz", "--json", "--tolerance", "5%")
    assert r.code == 0, r.err
    best = r.json()["candidates"][0]
    assert best["topology"] == "direct" and best["elements"] == []
    assert best["yield_fraction"] == 1.0


# ------------------------------------------------------------------------------- argument errors

BAD_FREQ = ["915 furlongs", "928MHz:902MHz", "nan", "inf", "-5MHz", "", "  ", "1e400", "5GHz", "915MHz 916MHz"]
BAD_BAND = ["928MHz:902MHz", "902MHz:902MHz", "nan:928MHz", "902MHz", "902MHz:928MHz:950MHz", "", ":",
            "-5MHz:928MHz", "902 furlongs:928MHz", "1e400:1e401"]


def _freq_users(w: Path, v: str) -> list[tuple]:
    a = w / "a.s1p"
    return [("inspect", a, "--at", v), ("match", a, "--at", v), ("feedline", a, *FEED, "--at", v)]


def _band_users(w: Path, v: str) -> list[tuple]:
    a, b = w / "a.s1p", w / "b.s1p"
    return [("match", a, "--band", v), ("feedline", a, *FEED, "--band", v), ("compare", a, b, "--band", v),
            ("plot", a, "--out", w / "p.png", "--band", v), ("report", a, "--out", w / "r.html", "--band", v)]


def test_band_outside_the_sweep_is_refused_by_match_and_feedline(cli, work):
    a = work / "a.s1p"
    for argv in (("match", a, "--band", "5GHz:6GHz"), ("feedline", a, *FEED, "--band", "5GHz:6GHz"),
                 ("feedline", a, *FEED, "--band", "950MHz:2GHz"), ("inspect", a, "--at", "2GHz")):
        line = one_error(cli(*argv))
        assert line.startswith(f"error: {a}: ") and "sweep" in line, line


@pytest.mark.parametrize("cmd", ["compare", "plot", "report"])
def test_band_outside_the_sweep_in_compare_plot_report(cli, work, cmd):
    argv = [x for x in _band_users(work, "5GHz:6GHz") if x[0] == cmd][0]
    one_error(cli(*argv))
    assert not (work / "p.png").exists() and not (work / "r.html").exists()


@pytest.mark.parametrize("value", BAD_FREQ)
def test_bad_frequency_arguments(cli, work, value):
    for argv in _freq_users(work, value):
        one_error(cli(*argv))


@pytest.mark.parametrize("value", BAD_BAND)
def test_bad_band_arguments(cli, work, value):
    for argv in _band_users(work, value):
        one_error(cli(*argv))
        assert not (work / "p.png").exists() and not (work / "r.html").exists()


COMMON = {
    "inspect": lambda w: ("inspect", w / "a.s1p"),
    "match": lambda w: ("match", w / "a.s1p", "--at", "915MHz"),
    "feedline": lambda w: ("feedline", w / "a.s1p", *FEED),
    "compare": lambda w: ("compare", w / "a.s1p", w / "b.s1p"),
    "plot": lambda w: ("plot", w / "a.s1p", "--out", w / "p.png"),
    "report": lambda w: ("report", w / "a.s1p", "--out", w / "r.html"),
}
PORT_Z0 = [("--port", "0"), ("--port", "2"), ("--port", "-1"), ("--port", "x"), ("--port", ""), ("--z0", "0"),
           ("--z0", "-50"), ("--z0", "nan"), ("--z0", "inf"), ("--z0", "abc")]
THRESHOLDS = [("--min-return-loss", "-3"), ("--min-return-loss", "nan"), ("--min-return-loss", "inf"),
              ("--max-vswr", "1"), ("--max-vswr", "0.5"), ("--max-vswr", "nan"), ("--max-s11-db", "3"),
              ("--max-s11-db", "nan"), ("--min-return-loss", "10", "--max-vswr", "2")]


@pytest.mark.parametrize("cmd", list(COMMON))
def test_bad_port_and_impedance(cli, work, cmd):
    for opt in PORT_Z0:
        one_error(cli(*COMMON[cmd](work), *opt))
        assert not (work / "p.png").exists() and not (work / "r.html").exists()


@pytest.mark.parametrize("cmd", ["inspect", "match", "compare", "plot", "report"])
def test_bad_thresholds(cli, work, cmd):
    for opt in THRESHOLDS:
        one_error(cli(*COMMON[cmd](work), *opt))


MATCH_BAD = [("--series", "E7"), ("--series", ""), ("--q-inductor", "-5"), ("--q-inductor", "0"),
             ("--q-inductor", "nan"), ("--q-capacitor", "-1"), ("--tolerance", "-5%"), ("--tolerance", "nan"),
             ("--tolerance", "abc"), ("--tolerance", ""), ("--tolerance", "150%"), ("--tolerance-inductor", "-1"),
             ("--tolerance-capacitor", "inf"), ("--tolerance", "5%", "--trials", "0"),
             ("--tolerance", "5%", "--trials", "-1"), ("--tolerance", "5%", "--seed", "-1"),
             ("--c-range", "1pF:0.1pF"), ("--c-range", "x"), ("--c-range", "-1pF:1nF"), ("--l-range", "nan:1"),
             ("--l-range", "0:10nH"), ("--candidates", "0"), ("--candidates", "-1"),
             ("--pick", "0", "--write-network", "PLACEHOLDER"), ("--band", "902MHz:928MHz")]


def test_bad_match_arguments(cli, work):
    for opt in MATCH_BAD:
        opt = tuple(str(work / "n.s2p") if o == "PLACEHOLDER" else o for o in opt)
        one_error(cli("match", work / "a.s1p", "--at", "915MHz", *opt))
        assert not (work / "n.s2p").exists()
    one_error(cli("match", work / "a.s1p"))


FEED_BAD = [("--length", "915 furlongs"), ("--length", "-5m"), ("--length", "nan"), ("--length", ""),
            ("--length", "inf"), ("--velocity-factor", "0"), ("--velocity-factor", "1.5"),
            ("--velocity-factor", "nan"), ("--loss-db-per-m", "-1"), ("--loss-db-per-m", "nan"),
            ("--dielectric-loss-db-per-m", "-1"), ("--loss-ref", "0"), ("--loss-ref", "-1GHz"),
            ("--loss-ref", "abc"), ("--cable-z0", "0"), ("--cable-z0", "-50"), ("--cable-z0", "nan"),
            ("--delay", "250ps"), ("--toward", "sideways")]


def test_bad_feedline_arguments(cli, work):
    for opt in FEED_BAD:
        one_error(cli("feedline", work / "a.s1p", *FEED, *opt, "--out", work / "o.s1p"))
        assert not (work / "o.s1p").exists()
    for opt in (("--delay", "-5ps"), ("--delay", "nan"), ("--delay", "furlongs"), ("--delay", "")):
        one_error(cli("feedline", work / "a.s1p", "--toward", "radio", *opt))
    one_error(cli("feedline", work / "a.s1p", "--toward", "radio"))
    one_error(cli("feedline", work / "a.s1p", "--toward", "radio", "--cable", work / "nope.s2p"))


def test_bad_check_arguments(cli, work):
    base = ("check", work / "a.s1p", "--spec", work / "spec.toml")
    for opt in (("--jobs", "0"), ("--jobs", "-2"), ("--jobs", "x"), ("--junit", work / "j.xml", "--csv", work / "j.xml")):
        one_error(cli(*base, *opt))
    assert sorted(p.name for p in work.iterdir()) == ["a.s1p", "b.s1p", "link.toml", "spec.toml"]
    one_error(cli("check", work / "a.s1p"))  # no --spec
    one_error(cli("check", "--spec", work / "spec.toml"))  # no sweep


def test_missing_inputs_for_every_command(cli, work):
    nope = work / "nope.s1p"
    for argv in (("inspect", nope), ("match", nope, "--at", "915MHz"), ("feedline", nope, *FEED),
                 ("compare", nope, work / "a.s1p"), ("plot", nope, "--out", work / "p.png"),
                 ("report", nope, "--out", work / "r.html"), ("budget", work / "nope.toml"),
                 ("inspect", work)):
        line = one_error(cli(*argv))
        assert "nope" in line or str(work) in line or "''" in line or "empty" in line, line
    assert not (work / "p.png").exists() and not (work / "r.html").exists()


def test_empty_sweep_path_is_named_in_the_error(cli, work):
    line = one_error(cli("inspect", ""))
    assert "''" in line or "empty" in line, line


ABSURD = {
    "delay 1e300 s": ("feedline", SAMPLES / "ant_r2.s1p", "--toward", "radio", "--delay", "1e300s", "--json"),
    "loss reference 1e-300 Hz": ("feedline", SAMPLES / "ant_r2.s1p", *FEED, "--loss-ref", "1e-300", "--json"),
    "inductor Q 1e-300": ("match", SAMPLES / "ant_r2.s1p", "--at", "915MHz", "--q-inductor", "1e-300", "--json"),
}


@pytest.mark.parametrize("argv", list(ABSURD.values()), ids=list(ABSURD))
def test_absurd_finite_options_leave_no_numpy_warning_text(cli, argv):
    # numpy's "RuntimeWarning: overflow encountered ..." plus a source line is not a message for the user
    import warnings

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")  # on the command line each one is printed to stderr
        r = cli(*argv)
    assert [str(w.message) for w in caught if issubclass(w.category, RuntimeWarning)] == []
    assert "RuntimeWarning" not in r.err, r.err
    assert [ln for ln in r.err_lines if not ln.startswith(("warning: ", "error: "))] == [], r.err
    if r.code in (0, 1):
        assert "Infinity" not in r.out and "NaN" not in r.out
        json.loads(r.out)


@pytest.fixture
def deadline():
    """Fail instead of hanging: SIGALRM after 30 s (a FIFO opened for reading blocks for ever)."""
    import signal

    def boom(*_):
        raise TimeoutError("the command hung")

    old = signal.signal(signal.SIGALRM, boom)
    signal.alarm(30)
    yield
    signal.alarm(0)
    signal.signal(signal.SIGALRM, old)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_fifo_in_a_lot_is_a_per_file_error_not_a_hang(cli, work, deadline):
    lot = work / "lot"
    lot.mkdir()
    (lot / "a.s1p").write_bytes((work / "a.s1p").read_bytes())
    os.mkfifo(lot / "pipe.s1p")
    r = cli("check", lot, "--spec", work / "spec.toml", "--json")
    assert r.code == 2
    files = {Path(f["file"]).name: f for f in r.json()["files"]}
    assert files["a.s1p"]["error"] is None and "not a regular file" in files["pipe.s1p"]["error"]
    line = one_error(cli("check", lot / "pipe.s1p", "--spec", work / "spec.toml"), code=2)
    assert "pipe.s1p" in line


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_fifo_as_a_budget_sweep_is_refused_not_read(cli, work, deadline):
    os.mkfifo(work / "pipe.s1p")
    (work / "link.toml").write_text((work / "link.toml").read_text().replace("a.s1p", "pipe.s1p"))
    line = one_error(cli("budget", work / "link.toml"))
    assert "tx_sweep" in line and "not a regular file" in line


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
@pytest.mark.parametrize("name", WRITERS)
def test_output_onto_a_fifo_is_refused_even_with_force(cli, work, deadline, name):
    import stat

    args, out = writers(work)[name]
    fifo = out.with_name("pipe" + out.suffix)
    os.mkfifo(fifo)
    line = one_error(cli(*args, fifo, "--force"))
    assert str(fifo) in line
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    assert leftovers(work) == []


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_endless_spec_or_budget_is_refused_at_the_size_limit(cli, work, deadline):
    # /dev/zero never ends: the readers must stop at their size limit, not read it whole (or, per
    # the one input policy of matchtool/inputs.py, refuse the device before opening it)
    for argv in (("check", work / "a.s1p", "--spec", "/dev/zero"), ("budget", "/dev/zero")):
        line = one_error(cli(*argv))
        assert "larger than" in line or "is not a regular file (a FIFO, socket or device)" in line, line


def test_short_circuit_reports_zero_return_loss_not_minus_zero(cli, tmp_path):
    # |Gamma| = 1: RL = -20 log10(1) = 0 dB; IEEE arithmetic gives -0.0, which no report should show
    p, _ = _awkward(tmp_path)["short circuit"]
    (tmp_path / "spec.toml").write_text(SPEC)
    r = cli("check", p, "--spec", tmp_path / "spec.toml", "--json", "--csv", tmp_path / "r.csv")
    assert r.code == 1, r.err
    req = r.json()["files"][0]["requirements"][0]
    assert req["worst_return_loss_db"] == 0.0 and "-0.0" not in r.out
    assert "-0.0" not in (tmp_path / "r.csv").read_text()
    for argv in (("inspect", p, "--json", "--at", "915MHz"), ("inspect", p, "--at", "915MHz")):
        r = cli(*argv)
        assert r.code == 0 and "-0.0" not in r.out, r.out


@pytest.mark.parametrize("how", [("--delay", "1ns"), ("--length", "1m", "--velocity-factor", "0.66",
                                                       "--loss-db-per-m", "0")])
def test_short_through_a_lossless_line_stays_physical(cli, tmp_path, how):
    # a lossless line only rotates Gamma: |Gamma| = 1 stays 1 (Pozar 4th ed. eq. 2.42, Gamma(l) =
    # Gamma_L e^{-2j beta l}); rounding to 1 + 1e-16 must not be reported as non-physical, and the
    # return loss of 0 dB must not print as -0.0
    p, _ = _awkward(tmp_path)["short circuit"]
    r = cli("feedline", p, "--toward", "radio", *how, "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["nonphysical_points"] == 0 and "-0.0" not in r.out
    assert not any("|Gamma| > 1" in w for w in doc["warnings"]), doc["warnings"]

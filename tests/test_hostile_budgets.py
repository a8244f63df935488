"""Hostile link-budget files through ``matchtool budget``: each exits 2 with exactly one stderr
line naming the budget file and the key at fault (and, for a broken sweep, the sweep file and its
line), no traceback; valid but extreme budgets give finite JSON and no stray stderr text.

The files are generated from one valid budget (a dict written out as TOML) by changing one key
at a time; every key gets every wrong kind of value.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from helpers import s1p_text, write_rlc
from test_hostile_specs import toml_text

from matchtool import budget as bd


def valid_budget() -> dict:
    return {
        "f_hz": "915 MHz", "distance_m": 500, "tx_power_dbm": 14.0, "rx_sensitivity_dbm": -110.0,
        "tx_gain_dbi": 2.0, "rx_gain_dbi": 2.0, "tx_sweep": "tx.s1p", "rx_sweep": "rx.s1p",
        "polarization_angle_deg": 10.0, "fade_margin_db": 10.0, "rx_cable_loss_db": 0.5,
        "tx_cable": {"length_m": 1.0, "loss_db_per_m": 0.3, "loss_ref_hz": "1 GHz"},
    }


NUMBER_KEYS = ["tx_power_dbm", "rx_sensitivity_dbm", "tx_gain_dbi", "rx_gain_dbi", "polarization_angle_deg",
               "fade_margin_db", "rx_cable_loss_db", "eirp_limit_dbm", "rx_vswr", "path_loss_exponent",
               "polarization_loss_db", "tx_aperture_m2"]
QUANTITY_KEYS = ["f_hz", "distance_m"]
WRONG = {"string": "ten", "list": [10], "table": {"a": 1}, "bool": True, "nan": math.nan, "inf": math.inf,
         "-inf": -math.inf}


def _variant(**changes) -> dict:
    d = valid_budget()
    for k, v in changes.items():
        if v is _DROP:
            d.pop(k, None)
        else:
            d[k] = v
    if "rx_vswr" in changes and changes["rx_vswr"] is not _DROP:
        d.pop("rx_sweep", None)
    if "polarization_loss_db" in changes:
        d.pop("polarization_angle_deg")
    if "tx_aperture_m2" in changes:
        d.pop("tx_gain_dbi")
    if "path_loss_exponent" in changes:
        d["reference_distance_m"] = 10
    return d


_DROP = object()


def cases() -> list[tuple[str, dict, str]]:
    out = []
    for k in NUMBER_KEYS:
        for label, bad in WRONG.items():
            out.append((f"{k}={label}", _variant(**{k: bad}), k))
    for k in QUANTITY_KEYS:
        for label, bad in {**WRONG, "furlongs": "915 furlongs", "empty": "", "text-nan": "nan"}.items():
            if label == "list" and k == "f_hz":
                bad = ["915 MHz", [1]]  # a list of frequencies is allowed; a list in it is not
                k_at = "f_hz[1]"
            else:
                k_at = k
            out.append((f"{k}={label}", _variant(**{k: bad}), k_at))
        out.append((f"{k} missing", _variant(**{k: _DROP}), k))
    for key in ("tx_power_dbm", "rx_sensitivity_dbm"):
        out.append((f"{key} missing", _variant(**{key: _DROP}), key))
    for k in ("length_m", "loss_db_per_m", "loss_ref_hz", "dielectric_loss_db_per_m"):
        for label, bad in WRONG.items():
            d = valid_budget()
            d["tx_cable"][k] = bad
            out.append((f"tx_cable.{k}={label}", d, f"tx_cable.{k}"))
        d = valid_budget()
        d["tx_cable"][k] = -1
        out.append((f"tx_cable.{k} negative", d, f"tx_cable.{k}"))
    d = valid_budget()
    d["tx_cable"]["colour"] = "blue"
    out += [("unknown key in tx_cable", d, "tx_cable.colour")]
    d = valid_budget()
    del d["tx_cable"]["length_m"]
    out += [("tx_cable without length", d, "tx_cable.length_m")]
    out += [
        ("unknown top key", _variant(distance=3), "distance"),
        ("unknown table", _variant(antenna={"a": 1}), "antenna"),
        ("tx_cable as a string", _variant(tx_cable="RG58"), "tx_cable"),
        ("negative distance", _variant(distance_m=-5), "distance_m"),
        ("negative distance with unit", _variant(distance_m="-5 m"), "distance_m"),
        ("zero distance", _variant(distance_m=0), "distance_m"),
        ("zero frequency", _variant(f_hz=0), "f_hz"),
        ("negative frequency", _variant(f_hz="-915 MHz"), "f_hz"),
        ("sensitivity above transmit power", _variant(rx_sensitivity_dbm=20.0), "rx_sensitivity_dbm"),
        ("frequency outside the tx sweep", _variant(f_hz="2.4 GHz"), "tx_sweep"),
        ("band edge outside the sweep", _variant(f_hz=_DROP, f_low="902 MHz", f_high="1.1 GHz"), "tx_sweep"),
        ("polarization both ways", {**valid_budget(), "polarization_loss_db": 3.0}, "polarization_loss_db"),
        ("polarization angle 270", _variant(polarization_angle_deg=270.0), "polarization_angle_deg"),
        ("negative polarization loss", _variant(polarization_loss_db=-3.0), "polarization_loss_db"),
        ("negative fade margin", _variant(fade_margin_db=-1.0), "fade_margin_db"),
        ("negative fixed cable loss", _variant(rx_cable_loss_db=-0.5), "rx_cable_loss_db"),
        ("fixed and modelled cable", _variant(tx_cable_loss_db=1.0), "tx_cable"),
        ("gain and aperture", {**valid_budget(), "tx_aperture_m2": 0.1}, "tx_aperture_m2"),
        ("no gain", _variant(rx_gain_dbi=_DROP), "rx_gain_dbi"),
        ("zero aperture", _variant(tx_aperture_m2=0.0), "tx_aperture_m2"),
        ("vswr below 1", _variant(rx_vswr=0.5), "rx_vswr"),
        ("vswr and sweep", {**valid_budget(), "rx_vswr": 2.0}, "rx_vswr"),
        ("missing sweep file", _variant(tx_sweep="nope.s1p"), "tx_sweep"),
        ("sweep is a directory", _variant(tx_sweep="."), "tx_sweep"),
        ("sweep path empty", _variant(tx_sweep=""), "tx_sweep"),
        ("sweep path a number", _variant(tx_sweep=3), "tx_sweep"),
        ("sweep port beyond the file", _variant(tx_sweep_port=2), "tx_sweep"),
        ("sweep port zero", _variant(tx_sweep_port=0), "tx_sweep_port"),
        ("sweep port as text", _variant(tx_sweep_port="1"), "tx_sweep_port"),
        ("sweep port without a sweep", _variant(rx_sweep=_DROP, rx_sweep_port=1), "rx_sweep_port"),
        ("exponent without reference distance", {**valid_budget(), "path_loss_exponent": 3.0}, "reference_distance_m"),
        ("reference distance without exponent", {**valid_budget(), "reference_distance_m": 10}, "reference_distance_m"),
        ("zero exponent", _variant(path_loss_exponent=0.0), "path_loss_exponent"),
        ("f_hz and a band", _variant(f_low="902 MHz", f_high="928 MHz"), "f_hz"),
        ("empty f_hz list", _variant(f_hz=[]), "f_hz"),
        ("bad item in f_hz list", _variant(f_hz=["915 MHz", "915 furlongs"]), "f_hz[1]"),
        ("reversed band", _variant(f_hz=_DROP, f_low="928 MHz", f_high="902 MHz"), "f_high"),
        ("band without f_high", _variant(f_hz=_DROP, f_low="902 MHz"), "f_high"),
        ("zero step", _variant(f_hz=_DROP, f_low="902 MHz", f_high="928 MHz", step="0 Hz"), "step"),
        ("tiny step", _variant(f_hz=_DROP, f_low="902 MHz", f_high="928 MHz", step="1e-300 Hz"), "step"),
        ("one point", _variant(f_hz=_DROP, f_low="902 MHz", f_high="928 MHz", points=1), "points"),
        ("points as float", _variant(f_hz=_DROP, f_low="902 MHz", f_high="928 MHz", points=5.0), "points"),
        ("step and points", _variant(f_hz=_DROP, f_low="902 MHz", f_high="928 MHz", points=5, step="1 MHz"), "step"),
        ("step without a band", _variant(step="1 MHz"), "step"),
    ]
    return out


CASES = cases()


@pytest.fixture
def workdir(tmp_path) -> Path:
    write_rlc(tmp_path / "tx.s1p", r_ohm=50.0)
    write_rlc(tmp_path / "rx.s1p", r_ohm=30.0)
    return tmp_path


def _refused(cli, budget: Path, key: str | None) -> str:
    r = cli("budget", budget, "--json")
    assert r.code == 2, (r.code, r.err)
    assert len(r.err_lines) == 1, r.err
    line = r.err_lines[0]
    assert line.startswith(f"error: {budget}"), line
    assert "Traceback" not in r.err and "internal error" not in r.err
    if key is not None:
        assert f"key '{key}'" in line, line
    assert r.out == ""
    return line


def test_base_budget_is_valid_and_the_corpus_is_large(cli, workdir):
    assert len(CASES) >= 100 and len({c[0] for c in CASES}) == len(CASES)
    p = workdir / "link.toml"
    p.write_text(toml_text(valid_budget()))
    r = cli("budget", p, "--json")
    assert r.code == 0, r.err
    assert math.isfinite(r.json()["received_power_dbm"])


@pytest.mark.parametrize(("doc", "key"), [(d, k) for _, d, k in CASES], ids=[c[0] for c in CASES])
def test_malformed_budget_is_one_line_exit_2(cli, workdir, doc, key):
    p = workdir / "link.toml"
    p.write_text(toml_text(doc))
    _refused(cli, p, key)


BROKEN_SWEEPS = {
    "text in a number": ("# MHz S RI R 50\n900 0.1 0.1\n910 0.1 0.1\n915 abc 0.2\n", 4),
    "odd column count": ("# MHz S RI R 50\n900 0.1 0.1\n910 0.1 0.1 0.3\n", 3),
    "decreasing frequency": ("# MHz S RI R 50\n920 0.1 0.1\n910 0.1 0.1\n", 3),
}


@pytest.mark.parametrize(("text", "line"), list(BROKEN_SWEEPS.values()), ids=list(BROKEN_SWEEPS))
def test_broken_sweep_names_the_sweep_file_and_line(cli, workdir, text, line):
    (workdir / "tx.s1p").write_text(text)
    p = workdir / "link.toml"
    p.write_text(toml_text(valid_budget()))
    msg = _refused(cli, p, "tx_sweep")
    assert f"{workdir / 'tx.s1p'} line {line}" in msg, msg


def test_binary_sweep_is_refused(cli, workdir):
    (workdir / "rx.s1p").write_bytes(bytes(range(256)) * 8)
    p = workdir / "link.toml"
    p.write_text(toml_text(valid_budget()))
    msg = _refused(cli, p, "rx_sweep")
    assert str(workdir / "rx.s1p") in msg


SYNTAX = {
    "missing value": "f_hz = \n",
    "garbage": "not a budget\n",
    "nested thousands deep": "f_hz = " + "[" * 5000 + "]" * 5000 + "\n",
    "inline tables thousands deep": "f_hz = " + "{a = " * 3000 + "1" + "}" * 3000 + "\n",
}


@pytest.mark.parametrize("text", list(SYNTAX.values()), ids=list(SYNTAX))
def test_toml_syntax_errors(cli, workdir, text):
    p = workdir / "link.toml"
    p.write_text(text)
    assert "TOML" in _refused(cli, p, None)


@pytest.mark.parametrize("raw", [b"", toml_text(valid_budget()).encode("utf-16-le"), bytes(range(256)) * 8,
                                 b"# " + b"x" * (bd.MAX_FILE_BYTES + 1)],
                         ids=["empty", "UTF-16 without BOM", "binary", "huge"])
def test_unreadable_budget_bytes(cli, workdir, raw):
    p = workdir / "link.toml"
    p.write_bytes(raw)
    _refused(cli, p, None)


def test_missing_and_directory_budget(cli, workdir):
    _refused(cli, workdir / "nope.toml", None)
    _refused(cli, workdir, None)


@pytest.mark.parametrize("encoding", ["utf-8-sig", "utf-16"], ids=["UTF-8 BOM", "UTF-16 with BOM"])
def test_byte_order_mark_budget_is_accepted(cli, workdir, encoding):
    # one decoding rule for every input file (docs/input-policy.md): a byte-order mark is honoured
    plain = workdir / "plain.toml"
    plain.write_text(toml_text(valid_budget()))
    p = workdir / "link.toml"
    p.write_bytes(toml_text(valid_budget()).replace("\n", "\r\n").encode(encoding))
    r = cli("budget", p, "--json")
    assert r.code == 0, r.err
    assert r.json()["rows"] == cli("budget", plain, "--json").json()["rows"]


EXTREME = {
    "huge cable": {"tx_cable": {"length_m": 1e300, "loss_db_per_m": 1e300}},
    "huge gain": {"tx_gain_dbi": 1e308},
    "huge transmit power": {"tx_power_dbm": 1e308},
    "huge fade margin": {"fade_margin_db": 1e308},
    "tiny distance": {"distance_m": 1e-300},
    "huge distance": {"distance_m": 1e300},
    "vswr 1e308": {"rx_vswr": 1e308, "rx_sweep": _DROP},
}


@pytest.mark.parametrize("change", list(EXTREME.values()), ids=list(EXTREME))
def test_extreme_but_valid_budgets_give_finite_json_and_no_stray_text(cli, workdir, change):
    p = workdir / "link.toml"
    p.write_text(toml_text(_variant(**change)))
    r = cli("budget", p, "--json")
    assert r.code in (0, 1), r.err
    assert "Infinity" not in r.out and "NaN" not in r.out
    json.loads(r.out)
    stray = [ln for ln in r.err_lines if not ln.startswith("warning: ")]
    assert stray == [], r.err  # numpy's RuntimeWarning lines must not reach the user


def test_sweep_reflecting_more_than_it_receives_is_refused(cli, workdir):
    # |Gamma| > 1 gives 1 - |Gamma|^2 < 0: the mismatch loss -10 log10(1 - |Gamma|^2) is undefined,
    # so every row after it would be NaN; the budget is refused instead of printing a NaN verdict
    f = np.linspace(900e6, 930e6, 31)
    (workdir / "tx.s1p").write_text(s1p_text(f, 1.2 * np.exp(1j * np.linspace(0, 1, 31))))
    p = workdir / "link.toml"
    p.write_text(toml_text(valid_budget()))
    line = _refused(cli, p, "tx_sweep")
    assert "> 1" in line and str(workdir / "tx.s1p") in line


def test_short_circuit_antenna_gives_no_link_not_an_error(cli, workdir):
    # |Gamma| = 1: no power crosses (mismatch loss infinite); the link does not close (status 1)
    f = np.linspace(900e6, 930e6, 31)
    (workdir / "tx.s1p").write_text(s1p_text(f, -np.ones(31, dtype=complex)))
    p = workdir / "link.toml"
    p.write_text(toml_text(valid_budget()))
    r = cli("budget", p, "--json")
    assert r.code == 1, r.err
    assert r.json()["received_power_dbm"] is None and "Infinity" not in r.out


@pytest.mark.parametrize(("change", "key"), [({"f_hz": 915}, "f_hz"), ({"f_hz": [915, 2.45e9]}, "f_hz[0]"),
                                             ({"f_hz": _DROP, "f_low": 902, "f_high": 928}, "f_low"),
                                             ({"tx_cable": {"length_m": 1, "loss_db_per_m": 0.3, "loss_ref_hz": 1}},
                                              "tx_cable.loss_ref_hz")])
def test_bare_number_frequency_below_100_khz_is_named_in_a_warning(cli, workdir, change, key):
    # "f_hz = 915" is 915 Hz (bare numbers are SI); a budget at 915 Hz is nearly always 915 MHz meant,
    # and it must not pass silently (the spec reader warns the same way)
    p = workdir / "link.toml"
    p.write_text(toml_text(_variant(tx_sweep=_DROP, rx_sweep=_DROP, **change)))
    r = cli("budget", p, "--json")
    assert r.code in (0, 1), r.err
    assert any(w.startswith(f"{p}: {key} = ") and "read as" in w for w in r.json()["warnings"]), r.json()["warnings"]

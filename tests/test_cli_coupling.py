"""CLI layer for coupling: exit status, the JSON contract, the terminal table, one-line errors.

Numbers are checked against the formulas written out here: isolation = -20 log10 |S21| (Pozar,
Microwave Engineering, 4th ed., sec. 4.3); ECC, S. Blanch, J. Romeu, I. Corbella, Electronics
Letters 39(9), 2003, pp. 705-707; TARC, M. Manteghi, Y. Rahmat-Samii, IEEE Trans. Antennas
Propag. 53(1), 2005, pp. 466-474.
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from helpers import series_rlc_z

from matchtool.sweep import touchstone_text

F = np.linspace(2.3e9, 2.6e9, 121)


def board(tmp_path, n=4, name=None, mutual=10 + 25j):
    """An n-antenna board (our own model): series RLC antennas, mutual impedances, S by skrf z2s."""
    z = np.zeros((F.size, n, n), dtype=complex)
    for k in range(n):
        z[:, k, k] = series_rlc_z(F, 50.0, 10e-9, 2.44e9 + 10e6 * k)
    for a in range(n):
        for b in range(a + 1, n):
            z[:, a, b] = z[:, b, a] = mutual / (b - a)
    s = skrf.network.z2s(z, np.full(n, 50.0))
    p = tmp_path / (name or f"board.s{n}p")
    p.write_text(touchstone_text(F, s, 50.0))
    return p, s


def test_json_contract_for_every_pair_and_the_array(cli, tmp_path):
    p, s = board(tmp_path)
    r = cli("coupling", p, "--json", "--band", "2.4GHz:2.4835GHz", "--band", "2.3GHz:2.35GHz")
    assert r.code == 0, r.err
    doc = r.json()
    assert [q["ports"] for q in doc["pairs"]] == [[1, 2], [1, 3], [1, 4], [2, 3], [2, 4], [3, 4]]
    for q in doc["pairs"]:
        assert len(q["bands"]) == 2
        for b in q["bands"]:
            for k in ("f_low_hz", "f_high_hz", "min_isolation_db", "f_min_isolation_hz", "max_ecc", "f_max_ecc_hz"):
                assert b[k] is not None
    t = doc["tarc"]
    assert t["ports"] == [1, 2, 3, 4] and len(t["f_hz"]) == len(t["worst_db"]) == len(t["best_db"]) == F.size
    assert isinstance(t["bands_10db"], list) and "warnings" in doc
    assert all(w >= b - 1e-12 for w, b in zip(t["worst_db"], t["best_db"], strict=True))
    # isolation of 1,2 over 2.3-2.35 GHz: the samples (edges are samples here), -20 log10 max |S21|
    band = (F >= 2.3e9) & (F <= 2.35e9)
    b = doc["pairs"][0]["bands"][1]
    assert b["min_isolation_db"] == pytest.approx(-20 * np.log10(np.abs(s[band, 1, 0]).max()), rel=1e-9)
    assert any("lossless" in n and "optimistic" in n for n in doc["notes"])


def test_pair_option_and_two_port_tarc_against_brute_force(cli, tmp_path):
    p, s = board(tmp_path, n=2, mutual=15 + 30j)
    doc = cli("coupling", p, "--pair", "2,1", "--json").json()
    assert [q["ports"] for q in doc["pairs"]] == [[1, 2]] and doc["tarc"]["ports"] == [1, 2]
    theta = np.deg2rad(np.arange(0, 360, 0.1))
    a = np.stack([np.ones_like(theta), np.exp(1j * theta)])
    tarc = np.sqrt(np.sum(abs(np.einsum("fij,jt->fti", s, a)) ** 2, axis=2) / 2)
    np.testing.assert_allclose(doc["tarc"]["worst_db"], 20 * np.log10(tarc.max(axis=1)), atol=1e-4)
    np.testing.assert_allclose(doc["tarc"]["best_db"], 20 * np.log10(tarc.min(axis=1)), atol=1e-3)
    # ECC of the pair over the whole sweep: Blanch 2003 written out
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    rho = abs(np.conj(s11) * s12 + np.conj(s21) * s22) ** 2 / (
        (1 - abs(s11) ** 2 - abs(s21) ** 2) * (1 - abs(s22) ** 2 - abs(s12) ** 2))
    # (the file holds 12 significant digits, hence 1e-9)
    assert doc["pairs"][0]["bands"][0]["max_ecc"] == pytest.approx(rho.max(), rel=1e-9)
    np.testing.assert_allclose(doc["pairs"][0]["ecc"], rho, rtol=1e-9)


def test_terminal_view_fits_and_states_the_assumptions(cli, tmp_path, monkeypatch):
    p, _ = board(tmp_path, n=3)
    r = cli("coupling", p, "--band", "2.4GHz:2.4835GHz")
    assert r.code == 0
    assert "min isolation" in r.out and "max ECC" in r.out and "TARC" in r.out
    assert "lossless antennas" in r.out and "Excitation:" in r.out and "grid" in r.out
    assert "\u2026" not in r.out  # no truncated cell


@pytest.mark.parametrize("args, words", [
    (["--pair", "1,5"], "port 5 does not exist"),
    (["--pair", "1"], "--pair"),
    (["--pair", "2,2"], "same port"),
    (["--band", "1GHz:2GHz"], "outside the sweep"),
    (["--band", "2.5GHz:2.4GHz"], "high edge"),
    (["--phase-step", "0"], "--phase-step"),
])
def test_bad_arguments_are_one_line(cli, tmp_path, args, words):
    p, _ = board(tmp_path, n=4)
    r = cli("coupling", p, *args)
    assert r.code == 2 and len(r.err_lines) == 1 and r.err_lines[0].startswith("error: "), r.err
    assert words in r.err and r.out == ""


def test_one_port_file_is_refused_in_one_line(cli, tmp_path):
    from helpers import write_rlc

    p = write_rlc(tmp_path / "u.s1p")
    r = cli("coupling", p)
    assert r.code == 2 and len(r.err_lines) == 1 and "at least two" in r.err and str(p) in r.err


def test_ecc_undefined_is_warned_and_json_has_no_nan(cli, tmp_path):
    # a lossless line (scikit-rf media) radiates nothing: 1 - |S11|^2 - |S21|^2 = 0 (energy conservation)
    line = skrf.media.DefinedGammaZ0(frequency=skrf.Frequency.from_f(F, unit="Hz"), z0=50.0).line(40, "deg", z0=60.0)
    p = tmp_path / "line.s2p"
    p.write_text(touchstone_text(F, line.s, 50.0))
    r = cli("coupling", p, "--json")
    assert r.code == 0 and "NaN" not in r.out and "Infinity" not in r.out
    doc = r.json()
    assert any("ECC undefined" in w for w in doc["warnings"]) and "ECC undefined" in r.err
    assert doc["pairs"][0]["bands"][0]["max_ecc"] == 1.0

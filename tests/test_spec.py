"""Spec files: validation refusals, and the evaluation of sweeps against them.

Outside sources: Pozar, Microwave Engineering, 4th ed., eqs. 2.37-2.41 (RL, SWR, delivered power)
and the VSWR table derived from them (tests/REFERENCES.md; VSWR 2: |G| = 1/3, RL 9.5424 dB, mismatch loss
0.51153 dB, all re-derived here from the equations).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from helpers import gamma_of, series_rlc_z, write_rlc

from matchtool import spec as sp
from matchtool.errors import SpecError
from matchtool.sweep import gamma_at, load, load_reflection, sweep_from_arrays

BAND = '[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\n'


def write_spec(tmp_path: Path, text: str, name: str = "spec.toml") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def rlc_sweep(r_ohm=50.0, l_h=40e-9, f0_hz=915e6, f=None, path="<rlc>"):
    f = np.linspace(800e6, 1030e6, 461) if f is None else np.asarray(f, dtype=float)
    return sweep_from_arrays(f, gamma_of(series_rlc_z(f, r_ohm, l_h, f0_hz)), 50.0, path=path)


# ------------------------------------------------------------------------------ equivalent limits

@pytest.mark.parametrize("r_ohm", [18.0, 22.0, 25.0, 30.0, 40.0, 50.0, 70.0, 90.0, 100.0, 110.0, 140.0])
@pytest.mark.parametrize("l_h", [20e-9, 60e-9, 150e-9])
def test_vswr_2_and_return_loss_9_5424_give_the_same_verdict(tmp_path, r_ohm, l_h):
    # Pozar 4th ed. eq. 2.40: SWR 2 <=> |G| = 1/3 <=> RL = 20 log10(3) = 9.5424 dB (eq. 2.38).
    assert 20 * math.log10(3) == pytest.approx(9.5424, abs=1e-4)
    sw = rlc_sweep(r_ohm, l_h)
    by_vswr = sp.parse_spec(BAND + "max_vswr = 2\n", tmp_path / "a.toml")
    by_rl = sp.parse_spec(BAND + "min_return_loss_db = 9.5424\n", tmp_path / "b.toml")
    by_s11 = sp.parse_spec(BAND + "max_s11_db = -9.5424\n", tmp_path / "c.toml")
    a, b, c = (sp.evaluate(sw, s).requirements[0] for s in (by_vswr, by_rl, by_s11))
    assert a.passed == b.passed == c.passed
    assert a.margin_db == pytest.approx(b.margin_db, abs=1e-4) and b.margin_db == pytest.approx(c.margin_db, abs=1e-12)
    assert a.worst_f_hz == b.worst_f_hz == c.worst_f_hz
    # the units of limit and worst follow the key
    assert a.limit == 2 and b.limit == 9.5424 and c.limit == -9.5424
    assert c.worst == pytest.approx(-b.worst)
    g = 10 ** (-b.worst / 20)
    assert a.worst == pytest.approx((1 + g) / (1 - g))  # Pozar eq. 2.40


def test_verdicts_cover_both_outcomes():
    # the parametrised test above must see passing and failing units, or it proves nothing
    spec = sp.parse_spec(BAND + "max_vswr = 2\n", "s.toml")
    verdicts = {sp.evaluate(rlc_sweep(r, lh), spec).passed for r in (18.0, 50.0, 140.0) for lh in (20e-9, 150e-9)}
    assert verdicts == {True, False}


def test_flat_100_ohm_load_is_vswr_2_and_its_mismatch_loss():
    # A 100 ohm resistor on 50 ohm: G = 1/3 (Pozar eq. 2.35), SWR 2, RL 9.5424 dB,
    # mismatch loss -10 log10(1 - 1/9) = 0.51153 dB (eq. 2.37; references table).
    f = np.linspace(880e6, 950e6, 71)
    sw = sweep_from_arrays(f, np.full(f.size, (100 - 50) / (100 + 50), dtype=complex), 50.0, path="r100")
    text = BAND + "max_vswr = 2.0001\nmax_mismatch_loss_db = 0.5\n"
    res = sp.evaluate(sw, sp.parse_spec(text, "s.toml"))
    vs, ml = res.requirements
    assert vs.key == "max_vswr" and vs.worst == pytest.approx(2.0, abs=1e-12) and vs.passed
    assert vs.worst_return_loss_db == pytest.approx(9.5424, abs=1e-4)
    # margin of a VSWR limit is in dB of return loss: RL(worst) - RL(limit)
    rl_lim = 20 * math.log10(3.0001 / 1.0001)
    assert vs.margin_db == pytest.approx(9.542425 - rl_lim, abs=1e-5) and vs.margin_db > 0
    assert ml.key == "max_mismatch_loss_db" and ml.worst == pytest.approx(0.51153, abs=1e-5)
    assert not ml.passed and ml.margin_db == pytest.approx(0.5 - 0.51153, abs=1e-5)
    assert ml.limit == 0.5 and not res.passed


# ------------------------------------------------------------------------- worst case and edges

def test_coarse_sweep_fails_on_interpolated_band_edge():
    # Samples at 895, 915, 935 MHz: inside the 902-928 MHz band only the 915 MHz sample, a perfect
    # match. Every in-band sample passes 12 dB, but the band edges do not.
    f = np.array([895e6, 915e6, 935e6])
    sw = rlc_sweep(50.0, 200e-9, 915e6, f=f)
    spec = sp.parse_spec(BAND + "min_return_loss_db = 12\n", "s.toml")
    inside = (f >= 902e6) & (f <= 928e6)
    assert np.all(-20 * np.log10(np.maximum(np.abs(sw.gamma[inside]), 1e-300)) >= 12)  # samples alone would pass
    res = sp.evaluate(sw, spec)
    r = res.requirements[0]
    assert not r.passed and r.worst_f_hz in (902e6, 928e6)
    # the worst value is the contract's between-samples value (linear in complex Gamma)
    expect = -20 * math.log10(abs(gamma_at(sw, r.worst_f_hz)))
    assert r.worst == pytest.approx(expect, abs=1e-9) and r.margin_db == pytest.approx(expect - 12)
    # and the physical model itself fails at that edge (series RLC, exact)
    g_true = abs(gamma_of(series_rlc_z(np.array([r.worst_f_hz]), 50.0, 200e-9, 915e6))[0])
    assert -20 * math.log10(g_true) < 12
    assert any("1 sample" in w for w in res.warnings)  # fewer than three samples in the band


def test_worst_matches_dense_truth_on_a_fine_sweep():
    # On a fine sweep the worst in-band return loss approaches the analytic worst of the series RLC,
    # which for a resonance inside the band lies at the edge farther from f0 (|X| grows away from f0).
    sw = rlc_sweep(40.0, 40e-9, 910e6, f=np.linspace(850e6, 980e6, 13001))
    r = sp.evaluate(sw, sp.parse_spec(BAND + "min_return_loss_db = 1\n", "s.toml")).requirements[0]
    edges = np.array([902e6, 928e6])
    rl_true = -20 * np.log10(np.abs(gamma_of(series_rlc_z(edges, 40.0, 40e-9, 910e6))))
    assert r.worst_f_hz == 928e6 and r.worst == pytest.approx(rl_true.min(), abs=1e-4)
    assert r.samples >= 3


def test_band_not_covered_fails_with_reason_and_others_still_evaluated():
    sw = rlc_sweep(f=np.linspace(905e6, 1000e6, 96))
    text = BAND + "min_return_loss_db = 10\n" + '[[band]]\nname = "upper"\nf_low = 940e6\nf_high = 960e6\nmax_vswr = 5\n'
    res = sp.evaluate(sw, sp.parse_spec(text, "s.toml"))
    ism, upper = res.requirements
    assert not ism.passed and ism.worst is None and ism.margin_db is None
    assert "does not cover" in ism.reason and "902" in ism.reason
    assert upper.passed and upper.worst is not None
    assert not res.passed


def test_resonance_window():
    sw = rlc_sweep(45.0, 40e-9, 915e6, f=np.linspace(800e6, 1030e6, 231))  # 1 MHz grid holds 915 MHz
    inside = sp.evaluate(sw, sp.parse_spec('[resonance]\nf_low = "905 MHz"\nf_high = "925 MHz"\n', "s.toml"))
    outside = sp.evaluate(sw, sp.parse_spec('[resonance]\nf_low = "930 MHz"\nf_high = "960 MHz"\n', "s.toml"))
    (a,), (b,) = inside.requirements, outside.requirements
    assert a.passed and a.worst == pytest.approx(915e6) and a.margin_hz == pytest.approx(10e6)
    assert not b.passed and b.margin_hz == pytest.approx(-15e6) and b.reason
    assert inside.passed and not outside.passed


def test_port_and_z0_from_spec(tmp_path):
    # A 75 ohm resistor measured on 50 ohm is matched once renormalised to 75 ohm (Pozar eq. 2.35).
    f = np.linspace(880e6, 950e6, 71)
    s = np.zeros((f.size, 2, 2), dtype=complex)
    s[:, 0, 0] = 0.6
    s[:, 1, 1] = (75 - 50) / (75 + 50)
    p = tmp_path / "two.s2p"
    from matchtool.sweep import touchstone_text

    p.write_text(touchstone_text(f, s, 50.0))
    plain = sp.load_spec(write_spec(tmp_path, BAND + "min_return_loss_db = 10\nmax_mismatch_loss_db = 0.3\n", "a.toml"))
    port2 = sp.load_spec(write_spec(tmp_path, "port = 2\n" + BAND + "min_return_loss_db = 10\n", "b.toml"))
    z75 = sp.load_spec(write_spec(tmp_path, "port = 2\nz0_ohm = 75\n" + BAND + "min_return_loss_db = 30\n", "c.toml"))
    r1 = sp.check_file(p, plain).requirements[0]
    assert r1.worst == pytest.approx(-20 * math.log10(0.6))
    r2 = sp.check_file(p, port2).requirements[0]
    assert r2.worst == pytest.approx(20 * math.log10(5))  # |G| = 25/125 = 0.2 -> 13.98 dB
    r3 = sp.check_file(p, z75).requirements[0]
    assert r3.passed and r3.worst >= 100


def test_golden_deviation(tmp_path):
    (tmp_path / "gold").mkdir()
    gold = write_rlc(tmp_path / "gold" / "g.s1p", r_ohm=45.0)
    same = write_rlc(tmp_path / "same.s1p", r_ohm=45.0)
    shifted = write_rlc(tmp_path / "shift.s1p", r_ohm=45.0, f0_hz=935e6)
    text = BAND + 'min_return_loss_db = 3\n[golden]\nfile = "gold/g.s1p"\nband = "ism"\nmax_deviation_db = 2\n'
    spec = sp.load_spec(write_spec(tmp_path, text))
    assert spec.golden.path == str(tmp_path / "gold" / "g.s1p") and gold.exists()
    a = sp.check_file(same, spec).requirements[-1]
    b = sp.check_file(shifted, spec).requirements[-1]
    assert a.key == "max_deviation_db" and a.passed and a.worst == pytest.approx(0, abs=1e-9)
    assert not b.passed and b.worst > 2 and b.margin_db == pytest.approx(2 - b.worst)
    # independent: deviation of the analytic curves at the reported frequency
    fq = np.array([b.worst_f_hz])
    rl = [-20 * np.log10(np.abs(gamma_of(series_rlc_z(fq, 45.0, 40e-9, f0))))[0] for f0 in (915e6, 935e6)]
    assert b.worst == pytest.approx(abs(rl[0] - rl[1]), rel=2e-2)


# ------------------------------------------------------------------------------------ validation

GOOD_LIMIT = "min_return_loss_db = 10\n"


@pytest.mark.parametrize("text, key, words", [
    ("colour = 3\n" + BAND + GOOD_LIMIT, "colour", "unknown key"),
    (BAND + GOOD_LIMIT + "minimum = 3\n", "band[1].minimum", "unknown key"),
    (BAND + GOOD_LIMIT + "[extras]\nx = 1\n", "extras", "unknown key"),
    ('[[band]]\nname = "x"\nf_low = "928 MHz"\nf_high = "902 MHz"\n' + GOOD_LIMIT, "band[1].f_high", "reversed"),
    ('[[band]]\nname = "x"\nf_low = "915 MHz"\nf_high = 915e6\n' + GOOD_LIMIT, "band[1].f_high", "zero-width"),
    ('[[band]]\nname = "x"\nf_low = -5e6\nf_high = "928 MHz"\n' + GOOD_LIMIT, "band[1].f_low", "negative"),
    (BAND + "min_return_loss_db = 10\nmax_vswr = 2\n", "band[1].", "two limits"),
    (BAND, "band[1].min_return_loss_db", "no limit"),
    (BAND + 'min_return_loss_db = "10"\n', "band[1].min_return_loss_db", "not a number"),
    (BAND + "min_return_loss_db = true\n", "band[1].min_return_loss_db", "not a number"),
    (BAND + "min_return_loss_db = nan\n", "band[1].min_return_loss_db", "finite"),
    (BAND + "max_vswr = inf\n", "band[1].max_vswr", "finite"),
    (BAND + "min_return_loss_db = -10\n", "band[1].min_return_loss_db", "negative return loss"),
    (BAND + "max_s11_db = 10\n", "band[1].max_s11_db", "positive S11"),
    (BAND + "max_vswr = 0.5\n", "band[1].max_vswr", "below 1"),
    (BAND + "max_vswr = 1\n", "band[1].max_vswr", "perfect match"),
    (BAND + GOOD_LIMIT + "max_mismatch_loss_db = -0.5\n", "band[1].max_mismatch_loss_db", "negative"),
    (BAND + GOOD_LIMIT + BAND + GOOD_LIMIT, "band[2].name", "duplicate"),
    ('[[band]]\nf_low = "902 MHz"\nf_high = "928 MHz"\n' + GOOD_LIMIT, "band[1].name", "name"),
    ('[[band]]\nname = "x"\nf_low = "902 furlongs"\nf_high = "928 MHz"\n' + GOOD_LIMIT, "band[1].f_low", "unit"),
    ('[[band]]\nname = "x"\nf_high = "928 MHz"\n' + GOOD_LIMIT, "band[1].f_low", "missing"),
    ('[band]\nname = "x"\nf_low = "902 MHz"\nf_high = "928 MHz"\n' + GOOD_LIMIT, "band", "[[band]]"),
    ("port = 0\n" + BAND + GOOD_LIMIT, "port", "port"),
    ("z0_ohm = -50\n" + BAND + GOOD_LIMIT, "z0_ohm", "positive"),
    ('name = "only a name"\n', "band", "no requirement"),
    ('[resonance]\nf_low = "930 MHz"\nf_high = "910 MHz"\n', "resonance.f_high", "reversed"),
    (BAND + GOOD_LIMIT + '[golden]\nfile = "missing.s1p"\nband = "ism"\nmax_deviation_db = 2\n', "golden.file",
     "does not exist"),
    (BAND + GOOD_LIMIT + '[golden]\nfile = "missing.s1p"\nband = "other"\nmax_deviation_db = 2\n', "golden.band",
     "not the name"),
])
def test_spec_refusals_are_one_line_naming_file_and_key(tmp_path, text, key, words):
    p = write_spec(tmp_path, text)
    with pytest.raises(SpecError) as ei:
        sp.load_spec(p)
    msg = str(ei.value)
    assert "\n" not in msg and msg.startswith(str(p))
    assert f"key '{key}" in msg and words in msg


def test_toml_syntax_error_names_the_line(tmp_path):
    p = write_spec(tmp_path, BAND + "min_return_loss_db = = 10\n")
    with pytest.raises(SpecError, match=r"spec\.toml line 5: not valid TOML"):
        sp.load_spec(p)


@pytest.mark.parametrize("raw", [b"", b"   \n\n", b"# only a comment\n"])
def test_empty_spec_never_passes(tmp_path, raw):
    p = tmp_path / "empty.toml"
    p.write_bytes(raw)
    with pytest.raises(SpecError, match="empty spec|spec file is empty"):
        sp.load_spec(p)


def test_encodings(tmp_path):
    text = BAND + GOOD_LIMIT
    bom = tmp_path / "bom.toml"
    bom.write_bytes(b"\xef\xbb\xbf" + text.encode())
    u16 = tmp_path / "u16.toml"
    u16.write_bytes(text.encode("utf-16"))  # with its byte-order mark
    ref = sp.load_spec(write_spec(tmp_path, text)).bands
    assert sp.load_spec(bom).bands == ref and sp.load_spec(u16).bands == ref
    raw16 = tmp_path / "raw16.toml"
    raw16.write_bytes(text.encode("utf-16-le"))  # no byte-order mark
    with pytest.raises(SpecError, match="UTF-16"):
        sp.load_spec(raw16)
    latin = tmp_path / "latin.toml"
    latin.write_bytes(("# caf\u00e9\n" + text).encode("latin-1"))
    with pytest.raises(SpecError, match="line 1.*not UTF-8"):
        sp.load_spec(latin)
    with pytest.raises(SpecError, match="no such file; expected a TOML spec file"):
        sp.load_spec(tmp_path / "nope.toml")


def test_frequencies_as_numbers_and_strings_agree(tmp_path):
    a = sp.parse_spec('[[band]]\nname = "x"\nf_low = 902000000\nf_high = 928e6\n' + GOOD_LIMIT, "a.toml")
    b = sp.parse_spec('[[band]]\nname = "x"\nf_low = "902 MHz"\nf_high = "0.928GHz"\n' + GOOD_LIMIT, "b.toml")
    assert a.bands == b.bands and a.bands[0].f_low_hz == 902e6 and a.bands[0].f_high_hz == 928e6


def test_sample_spec_file_loads():
    from helpers import ROOT

    spec = sp.load_spec(ROOT / "sample_sweeps" / "spec_915.toml")
    assert spec.bands[0].f_low_hz == 902e6 and spec.bands[0].f_high_hz == 928e6
    assert spec.resonance is not None


def test_check_file_reports_unreadable_file_instead_of_raising(tmp_path):
    bad = tmp_path / "bad.s1p"
    bad.write_text("# MHz S RI R 50\n900 0.1\n")
    spec = sp.parse_spec(BAND + GOOD_LIMIT, "s.toml")
    res = sp.check_file(bad, spec)
    assert not res.passed and res.requirements == () and "bad.s1p line 2" in res.error
    res2 = sp.check_file(write_rlc(tmp_path / "ok.s1p"), spec)
    assert res2.error is None and len(res2.requirements) == 1
    assert isinstance(load(tmp_path / "ok.s1p").gamma, np.ndarray)


@pytest.mark.parametrize("rl_db, ok", [(10.001, True), (10.0, True), (9.999, False)])
def test_limit_is_inclusive_and_sharp(rl_db, ok):
    # a flat load whose return loss sits a thousandth of a dB either side of the limit
    f = np.linspace(880e6, 950e6, 8)
    g = np.full(f.size, 10 ** (-rl_db / 20) * np.exp(0.3j))
    res = sp.evaluate(sweep_from_arrays(f, g, 50.0), sp.parse_spec(BAND + GOOD_LIMIT, "s.toml"))
    r = res.requirements[0]
    assert r.passed is ok and (r.margin_db >= 0) is ok
    assert r.margin_db == pytest.approx(rl_db - 10, abs=1e-9)


def test_fast_loader_agrees_with_sweep_load(tmp_path):
    # check_file reads each file once without an skrf.Network; it must see what sweep.load sees
    from matchtool.sweep import touchstone_text

    f = np.linspace(880e6, 950e6, 71)
    s = np.zeros((f.size, 2, 2), dtype=complex)
    s[:, 0, 0] = gamma_of(series_rlc_z(f, 30.0, 40e-9, 915e6))
    s[:, 1, 1] = 0.2 + 0.1j
    s[:, 0, 1] = s[:, 1, 0] = 0.5
    two = tmp_path / "two.s2p"
    two.write_text(touchstone_text(f, s, 50.0))
    hot = tmp_path / "hot.s1p"
    hot.write_text("# MHz S RI R 50\n900 0.5 0\n915 1.2 0\n930 0.5 0\n")
    for path, port, z0 in ((two, 1, None), (two, 2, None), (two, 2, 75.0), (hot, 1, None)):
        fh, g, w = load_reflection(path, port, z0)
        ref = load(path, port=port, z0_ohm=z0)
        assert np.array_equal(fh, ref.f_hz) and np.allclose(g, ref.gamma, rtol=0, atol=1e-15) and w == ref.warnings
    assert any("> 1" in x for x in load_reflection(hot, 1, None)[2])
    with pytest.raises(Exception, match="port 3"):
        load_reflection(two, 3, None)


def test_sweep_in_ghz_exactly_spanning_the_band_is_covered(tmp_path):
    # 0.902 GHz read from a file need not be 902e6 to the last bit; the band is still covered
    f = np.linspace(902e6, 928e6, 27)
    g = gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))
    from helpers import s1p_text

    p = tmp_path / "ghz.s1p"
    p.write_text(s1p_text(f, g, unit="GHz"))
    r = sp.check_file(p, sp.parse_spec(BAND + GOOD_LIMIT, "s.toml")).requirements[0]
    assert r.reason == "" and r.passed and r.worst_f_hz in (902e6, 928e6)
    short = sweep_from_arrays(np.linspace(902.5e6, 928e6, 27), g, 50.0)
    assert "does not cover" in sp.evaluate(short, sp.parse_spec(BAND + GOOD_LIMIT, "s.toml")).requirements[0].reason


@pytest.mark.parametrize("text", [
    '[[band]]\nname = "resonance"\nf_low = 9e8\nf_high = 9.3e8\nmax_vswr = 2\n[resonance]\nf_low = 9e8\nf_high = 9.3e8\n',
    BAND + GOOD_LIMIT + "max_mismatch_loss_db = 1\n"
    + '[[band]]\nname = "ism mismatch loss"\nf_low = 9e8\nf_high = 9.3e8\nmax_vswr = 2\n',
])
def test_requirement_names_must_be_unique(text):
    with pytest.raises(SpecError, match="two requirements"):
        sp.parse_spec(text, "s.toml")


from hypothesis import given  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@given(st.integers(min_value=2, max_value=40), st.integers(min_value=0, max_value=2**32 - 1),
       st.floats(min_value=0.0, max_value=1.0), st.floats(min_value=0.0, max_value=1.0))
def test_worst_is_the_worst_of_samples_and_interpolated_edges(n, seed, a, b):
    # Independent reference: the contract's between-samples rule (sweep.gamma_at) at both edges,
    # and the raw samples strictly inside the band.
    rng = np.random.default_rng(seed)
    f = np.sort(rng.choice(np.arange(800, 1030), size=n, replace=False)).astype(float) * 1e6
    g = rng.uniform(0, 0.95, n) * np.exp(2j * np.pi * rng.uniform(0, 1, n))
    sw = sweep_from_arrays(f, g, 50.0)
    lo = f[0] + min(a, b) * (f[-1] - f[0])
    hi = f[0] + max(a, b) * (f[-1] - f[0])
    if hi - lo < 1e3:
        return
    text = f'[[band]]\nname = "b"\nf_low = {float(lo)!r}\nf_high = {float(hi)!r}\nmin_return_loss_db = 6\n'
    r = sp.evaluate(sw, sp.parse_spec(text, "s.toml")).requirements[0]
    cand = [abs(gamma_at(sw, lo)), abs(gamma_at(sw, hi))] + list(np.abs(g[(f > lo) & (f < hi)]))
    assert r.worst == pytest.approx(-20 * math.log10(max(cand)), abs=1e-9)
    assert r.passed == (r.worst >= 6) == (r.margin_db >= 0)


def test_bare_small_frequency_warns_that_it_is_hz():
    s = sp.parse_spec('[[band]]\nname = "x"\nf_low = 902\nf_high = 928\nmin_return_loss_db = 10\n', "s.toml")
    assert s.bands[0].f_low_hz == 902.0 and any("902 Hz" in w and "MHz" in w for w in s.warnings)
    assert sp.parse_spec(BAND + GOOD_LIMIT, "s.toml").warnings == ()


@pytest.mark.parametrize("vswr, rl_db, ml_db", [
    # VSWR / return loss / mismatch loss table (Pozar 4th ed. eqs. 2.37-2.41; T. S. Bird, IEEE Antennas
    # Propag. Mag. 51(2), 2009), as transcribed in tests/REFERENCES.md
    (1.1, 26.444, 0.00986), (1.2, 20.828, 0.03604), (1.5, 13.979, 0.17729),
    (2.0, 9.5424, 0.51153), (3.0, 6.0206, 1.24939), (5.0, 3.5218, 2.55273),
])
def test_resistive_loads_reproduce_the_vswr_table(vswr, rl_db, ml_db):
    # a resistor of VSWR x 50 ohm on a 50 ohm system has exactly that VSWR at every frequency
    f = np.linspace(880e6, 950e6, 15)
    r_ohm = 50.0 * vswr
    sw = sweep_from_arrays(f, np.full(f.size, (r_ohm - 50) / (r_ohm + 50), dtype=complex), 50.0)
    text = (BAND + f"max_vswr = {vswr}\nmax_mismatch_loss_db = {ml_db}\n"
            + '[[band]]\nname = "rl"\nf_low = 9e8\nf_high = 9.3e8\n' + f"min_return_loss_db = {rl_db}\n")
    v, ml, rl = sp.evaluate(sw, sp.parse_spec(text, "s.toml")).requirements
    assert v.worst == pytest.approx(vswr, rel=1e-12) and v.margin_db == pytest.approx(0, abs=1e-9)
    assert rl.worst == pytest.approx(rl_db, abs=5e-4) and abs(rl.margin_db) < 5e-4
    assert ml.worst == pytest.approx(ml_db, abs=5e-6)


def test_evaluate_refuses_a_sweep_loaded_for_another_port_or_impedance(tmp_path):
    from matchtool.errors import UsageError

    p = write_rlc(tmp_path / "u.s1p")
    with pytest.raises(UsageError, match="75 ohm"):
        sp.evaluate(load(p), sp.parse_spec("z0_ohm = 75\n" + BAND + GOOD_LIMIT, "s.toml"))
    with pytest.raises(UsageError, match="port 2"):
        sp.evaluate(load(p), sp.parse_spec("port = 2\n" + BAND + GOOD_LIMIT, "s.toml"))
    assert sp.evaluate(load(p, z0_ohm=75), sp.parse_spec("z0_ohm = 75\n" + BAND + GOOD_LIMIT, "s.toml")).requirements


def test_golden_ceiling_ignores_null_depth(tmp_path):
    # Two units resonating at the same frequency with different null depth (R 48 vs 50 ohm):
    # their return losses differ by tens of dB at f0 only; a 20 dB ceiling makes them agree.
    gold = write_rlc(tmp_path / "g.s1p", r_ohm=50.0, n=461)
    unit = write_rlc(tmp_path / "u.s1p", r_ohm=48.0, n=461)
    base = BAND + 'min_return_loss_db = 3\n[golden]\nfile = "g.s1p"\nband = "ism"\nmax_deviation_db = 1\n'
    raw = sp.check_file(unit, sp.load_spec(write_spec(tmp_path, base, "a.toml"))).requirements[-1]
    capped = sp.check_file(unit, sp.load_spec(write_spec(tmp_path, base + "rl_ceiling_db = 20\n", "b.toml")))
    assert not raw.passed and raw.worst > 10 and raw.worst_f_hz == pytest.approx(915e6)
    c = capped.requirements[-1]
    assert c.passed and c.worst < 1
    assert gold.exists()
    with pytest.raises(SpecError, match="rl_ceiling_db"):
        sp.load_spec(write_spec(tmp_path, base + "rl_ceiling_db = -3\n", "c.toml"))


# ----------------------------------------------------------------------------- multi-port specs
# Isolation = -20 log10 |S_ij| (Pozar, Microwave Engineering, 4th ed., sec. 4.3); ECC from
# S-parameters, S. Blanch, J. Romeu, I. Corbella, Electronics Letters 39(9), 2003, pp. 705-707.

F4 = np.linspace(2.3e9, 2.6e9, 61)  # 5 MHz steps


def four_port(tmp_path, name="board.s4p", detune4=2.9e9):
    """A 4-antenna board (our own model, derived): series RLC antennas on the diagonal, a mutual
    impedance between each pair, S from scikit-rf's z2s. Port 4 resonates far off (``detune4``)."""
    import skrf

    from matchtool.sweep import touchstone_text

    z = np.zeros((F4.size, 4, 4), dtype=complex)
    for k, f0 in enumerate((2.44e9, 2.45e9, 2.46e9, detune4)):
        z[:, k, k] = series_rlc_z(F4, 50.0, 10e-9, f0)
    for a in range(4):
        for b in range(a + 1, 4):
            z[:, a, b] = z[:, b, a] = (10 + 25j) / (b - a)
    s = skrf.network.z2s(z, np.full(4, 50.0))
    p = tmp_path / name
    p.write_text(touchstone_text(F4, s, 50.0))
    return p, s


MULTI = """
[[band]]
name = "wifi"
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_return_loss_db = 6
[[band]]
name = "wifi"
port = 4
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_return_loss_db = 6
[[isolation]]
name = "1 to 2"
ports = [1, 2]
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
min_isolation_db = 10
[[correlation]]
name = "mimo 1-3"
ports = [1, 3]
f_low = "2.4 GHz"
f_high = "2.4835 GHz"
max_ecc = 0.3
"""


def test_multi_port_spec_reads_each_port_and_pair(tmp_path):
    p, s = four_port(tmp_path)
    spec = sp.parse_spec(MULTI, "multi.toml")
    u = sp.check_file(p, spec)
    assert u.error is None, u.error
    by = {r.name: r for r in u.requirements}
    assert set(by) == {"wifi (port 1)", "wifi (port 4)", "1 to 2", "mimo 1-3"}
    assert by["wifi (port 1)"].port == 1 and by["wifi (port 4)"].port == 4
    assert by["wifi (port 1)"].passed and not by["wifi (port 4)"].passed and not u.passed
    # port 4 worst return loss, independently: samples of S44 in the band (edges are samples here)
    inb = (F4 >= 2.4e9) & (F4 <= 2.4835e9)
    edge = np.interp(2.4835e9, F4, s[:, 3, 3].real) + 1j * np.interp(2.4835e9, F4, s[:, 3, 3].imag)
    worst44 = np.max(np.abs(np.append(s[inb, 3, 3], edge)))
    assert by["wifi (port 4)"].worst == pytest.approx(-20 * np.log10(worst44), rel=1e-9)
    iso = by["1 to 2"]
    s21 = np.append(s[inb, 1, 0], np.interp(2.4835e9, F4, s[:, 1, 0].real) + 1j * np.interp(
        2.4835e9, F4, s[:, 1, 0].imag))
    assert iso.ports == (1, 2) and iso.key == "min_isolation_db" and iso.unit == "dB isolation"
    assert iso.worst == pytest.approx(-20 * np.log10(np.max(np.abs(s21))), rel=1e-9)
    assert iso.margin_db == pytest.approx(iso.worst - 10) and "S21" in iso.checked
    ecc = by["mimo 1-3"]
    # the band's samples plus its upper edge (2.4835 GHz lies between samples), S interpolated in complex
    lo_i = int(np.flatnonzero(F4 > 2.4835e9)[0])
    t = (2.4835e9 - F4[lo_i - 1]) / (F4[lo_i] - F4[lo_i - 1])
    sb = np.concatenate([s[inb], (s[lo_i - 1] + t * (s[lo_i] - s[lo_i - 1]))[None]])
    # Thaysen-Jakobsen N-port form (Microwave Opt. Technol. Lett. 48(5), 2006), sums over all 4 ports
    num = np.abs(np.sum(np.conj(sb[:, :, 0]) * sb[:, :, 2], axis=1)) ** 2
    den = (1 - np.sum(abs(sb[:, :, 0]) ** 2, axis=1)) * (1 - np.sum(abs(sb[:, :, 2]) ** 2, axis=1))
    assert ecc.worst == pytest.approx(np.max(num / den), rel=1e-12) and ecc.worst > 1e-3
    assert ecc.margin_db is None and ecc.margin_ecc == pytest.approx(0.3 - ecc.worst)
    # ports 1, 3 and 4 are read by the spec, port 2 by the isolation: every port checked, no warning
    assert not any("not checked" in w for w in u.warnings)


def test_spec_naming_a_port_the_file_lacks_is_an_error_for_that_file(tmp_path):
    from matchtool.sweep import touchstone_text

    two = tmp_path / "pair.s2p"
    s = np.zeros((F4.size, 2, 2), dtype=complex)
    s[:, 0, 0] = s[:, 1, 1] = 0.1
    two.write_text(touchstone_text(F4, s, 50.0))
    u = sp.check_file(two, sp.parse_spec(MULTI, "multi.toml"))
    assert not u.passed and not u.requirements
    assert "names port 3" in u.error and "key 'correlation[1].ports'" in u.error and "2 ports" in u.error
    assert "\n" not in u.error
    u = sp.check_file(two, sp.parse_spec("port = 2\n" + BAND.replace("902 MHz", "2.4 GHz").replace(
        "928 MHz", "2.48 GHz") + "min_return_loss_db = 10\n", "p2.toml"))
    assert u.error is None and u.requirements[0].port == 2


def test_port_one_only_spec_on_a_four_port_warns_about_the_others(tmp_path):
    p, _ = four_port(tmp_path)
    band = '[[band]]\nname = "wifi"\nf_low = "2.4 GHz"\nf_high = "2.4835 GHz"\nmin_return_loss_db = 6\n'
    u = sp.check_file(p, sp.parse_spec(band, "one.toml"))
    assert u.passed
    assert any("4-port file" in w and "ports 2..4 not checked" in w for w in u.warnings), u.warnings


def test_evaluate_accepts_an_skrf_network_and_refuses_one_reflection_for_a_pair_spec(tmp_path):
    import skrf

    from matchtool.errors import UsageError

    p, s = four_port(tmp_path)
    net = skrf.Network(frequency=skrf.Frequency.from_f(F4, unit="Hz"), s=s, z0=50.0, name="board")
    spec = sp.parse_spec(MULTI, "multi.toml")
    a = sp.evaluate(net, spec)
    b = sp.check_file(p, spec)
    assert [r.name for r in a.requirements] == [r.name for r in b.requirements]
    for x, y in zip(a.requirements, b.requirements, strict=True):
        assert x.worst == pytest.approx(y.worst, rel=1e-9)
    with pytest.raises(UsageError) as ei:
        sp.evaluate_arrays(F4, s[:, 0, 0], spec)
    assert ei.value.parameter == "gamma"


def test_registry_exposes_units_and_descriptions():
    spec = sp.parse_spec(MULTI, "multi.toml")
    assert set(sp.KINDS) == {"band", "isolation", "correlation", "resonance", "golden"}
    assert sp.limit_info("min_isolation_db").unit == "dB isolation" and sp.limit_info("max_ecc").digits == 3
    assert all(r.describe() for r in spec.requirements)
    assert spec.ports == (1, 2, 3, 4) and spec.needs_matrix
    assert not sp.parse_spec(BAND + GOOD_LIMIT, "s.toml").needs_matrix


@pytest.mark.parametrize("text, key, words", [
    (MULTI.replace("ports = [1, 2]", "ports = [1, 1]"), "isolation[1].ports", "twice"),
    (MULTI.replace("ports = [1, 2]", "ports = [1]"), "isolation[1].ports", "two port numbers"),
    (MULTI.replace("ports = [1, 2]", 'ports = ["1", "2"]'), "isolation[1].ports", "two port numbers"),
    (MULTI.replace("ports = [1, 2]", "ports = [0, 2]"), "isolation[1].ports", "two port numbers"),
    (MULTI.replace("ports = [1, 2]\n", ""), "isolation[1].ports", "missing"),
    (MULTI.replace("min_isolation_db = 10", "min_isolation_db = -10"), "isolation[1].min_isolation_db", "positive"),
    (MULTI.replace("min_isolation_db = 10", "max_isolation_db = 10"), "isolation[1].max_isolation_db", "unknown"),
    (MULTI.replace("max_ecc = 0.3", "max_ecc = 1.5"), "correlation[1].max_ecc", "between 0 and 1"),
    (MULTI.replace("max_ecc = 0.3", "max_ecc = 0"), "correlation[1].max_ecc", "above 0"),
    (MULTI.replace("max_ecc = 0.3\n", ""), "correlation[1].max_ecc", "no limit"),
    (MULTI.replace("port = 4", "port = 1"), "band[2].name", "duplicate band name 'wifi' for port 1"),
    (MULTI.replace("port = 4", "port = 0"), "band[2].port", "port"),
    (MULTI.replace('name = "mimo 1-3"', 'name = "1 to 2"'), "isolation[1].name", "two requirements"),
    (MULTI.replace("[[isolation]]", "[isolation]"), "isolation", "[[isolation]]"),
])
def test_multi_port_spec_refusals(text, key, words):
    with pytest.raises(SpecError) as ei:
        sp.parse_spec(text, "multi.toml")
    msg = str(ei.value)
    assert "\n" not in msg and f"key '{key}'" in msg and words in msg, msg

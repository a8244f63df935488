"""L-network synthesis, evaluation, band optimisation, part Q, Bode-Fano and yield.

Sources are named beside each check. Loads are physical RLC models built in the tests.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import skrf
from helpers import gamma_of, series_rlc_z
from hypothesis import given, settings
from hypothesis import strategies as st
from skrf.media import DefinedGammaZ0

from matchtool import eseries
from matchtool import matching as m
from matchtool.errors import NoSolutionError, OutOfRangeError, UsageError
from matchtool.sweep import sweep_from_arrays

W = 2 * math.pi


def _gin_exact(net: m.LNetwork, z_load: complex, f_hz: float, z0: float) -> complex:
    r = m.evaluate(np.array([f_hz]), np.array([gamma_of(np.array([z_load]), z0)[0]]), z0, net.pattern,
                   [e.value for e in net.elements])
    return complex(r.gamma_in[0])


def _values(nets, pattern):
    return [tuple(e.value for e in n.elements) for n in nets if n.pattern == pattern]


# ---------------------------------------------------------------- closed form, published cases

def test_pozar_example_5_1():
    # Pozar, Microwave Engineering, 4th ed., Example 5.1: 200 - j100 ohm to 100 ohm at 500 MHz.
    # Exact closed form: shunt C 0.923 pF + series L 38.98 nH, or shunt L 46.14 nH + series C 2.599 pF
    # (the book's chart-read values: 0.92 pF / 38.8 nH and 46.1 nH / 2.61 pF).
    nets = m.synthesize_at(200 - 100j, 500e6, 100.0)
    assert len(nets) == 2 and all(n.topology == "shunt-at-antenna" for n in nets)
    (l1, c1), = _values(nets, (("inductor", "series"), ("capacitor", "shunt")))
    (c2, l2), = _values(nets, (("capacitor", "series"), ("inductor", "shunt")))
    assert c1 == pytest.approx(0.923e-12, rel=1e-3) and l1 == pytest.approx(38.98e-9, rel=1e-3)
    assert l2 == pytest.approx(46.14e-9, rel=1e-3) and c2 == pytest.approx(2.599e-12, rel=1e-3)
    # the book's chart values agree to chart accuracy (1 %)
    assert c1 == pytest.approx(0.92e-12, rel=0.01) and l1 == pytest.approx(38.8e-9, rel=0.01)
    assert l2 == pytest.approx(46.1e-9, rel=0.01) and c2 == pytest.approx(2.61e-12, rel=0.01)
    # elements are listed radio side first: the shunt part sits at the antenna (last)
    assert all(n.elements[-1].connection == "shunt" for n in nets)


@pytest.mark.parametrize("z_load", [20 - 30j, 10 + 45j, 35 + 5j])
def test_pozar_eqs_5_6_series_at_load(z_load):
    # Pozar 4th ed. eqs. 5.6a-b (R_L < Z0; the formulas as written here are from memory):
    # B = +-sqrt((Z0 - R_L)/R_L)/Z0, X = +-sqrt(R_L (Z0 - R_L)) - X_L
    z0, f = 50.0, 900e6
    rl, xl = z_load.real, z_load.imag
    nets = [n for n in m.synthesize_at(z_load, f, z0) if n.topology == "series-at-antenna"]
    key = lambda pair: (pair[0].kind, pair[1].kind, pair[0].value)  # noqa: E731
    got = sorted(((n.elements[0], n.elements[1]) for n in nets), key=key)
    want = []
    for s in (+1, -1):
        b = s * math.sqrt((z0 - rl) / rl) / z0
        x = s * math.sqrt(rl * (z0 - rl)) - xl
        want.append((m.element_from_reactance("shunt", b, f), m.element_from_reactance("series", x, f)))
    want = sorted(want, key=key)
    assert len(got) == 2
    for (gs, gx), (ws, wx) in zip(got, want, strict=True):
        assert (gs.kind, gx.kind) == (ws.kind, wx.kind)
        assert gs.value == pytest.approx(ws.value, rel=1e-9) and gx.value == pytest.approx(wx.value, rel=1e-9)


def test_pozar_eqs_5_3_shunt_at_load():
    # Pozar 4th ed. eqs. 5.3a-b (R_L > Z0; the formulas as written here are from memory):
    # B = (X_L +- sqrt(R_L/Z0) sqrt(R_L^2 + X_L^2 - Z0 R_L)) / (R_L^2 + X_L^2),
    # X = 1/B + X_L Z0/R_L - Z0/(B R_L)
    z0, f, rl, xl = 50.0, 2.4e9, 150.0, 60.0
    nets = [n for n in m.synthesize_at(complex(rl, xl), f, z0) if n.topology == "shunt-at-antenna"]
    assert len(nets) == 2
    want = set()
    for s in (+1, -1):
        b = (xl + s * math.sqrt(rl / z0) * math.sqrt(rl * rl + xl * xl - z0 * rl)) / (rl * rl + xl * xl)
        x = 1 / b + xl * z0 / rl - z0 / (b * rl)
        want.add((round(m.element_from_reactance("series", x, f).value, 20),
                  round(m.element_from_reactance("shunt", b, f).value, 20)))
    got = {(round(n.elements[0].value, 20), round(n.elements[1].value, 20)) for n in nets}
    for g, w in zip(sorted(got), sorted(want), strict=True):
        assert g == pytest.approx(w, rel=1e-9)


def test_bowick_example_4_1_q_method():
    # Bowick, RF Circuit Design, 2nd ed., Example 4-1 (eqs. 4-1..4-3): 100 ohm source to a 1000 ohm
    # load at 100 MHz with a DC path: Q = sqrt(Rp/Rs - 1) = 3, Xs = Q Rs = 300 ohm, Xp = Rp/Q = 333 ohm,
    # i.e. series L 477 nH and shunt C 4.8 pF (book values from memory).
    rs, rp, f = 100.0, 1000.0, 100e6
    q = math.sqrt(rp / rs - 1)
    assert q == pytest.approx(3.0)
    nets = m.synthesize_at(complex(rp, 0), f, rs)
    dc = [n for n in nets if m.passes_dc(n.elements)]
    assert len(dc) == 1
    (ls, cp), = [tuple(e.value for e in n.elements) for n in dc]
    assert ls == pytest.approx(q * rs / (W * f), rel=1e-9) and ls == pytest.approx(477e-9, rel=0.01)
    assert cp == pytest.approx(1 / (W * f * rp / q), rel=1e-9) and cp == pytest.approx(4.8e-12, rel=0.01)
    assert m.filter_character(dc[0].elements) == "low-pass"


@given(r=st.floats(1.0, 2000.0), x=st.floats(-2000.0, 2000.0), z0=st.sampled_from([50.0, 75.0, 100.0]))
def test_exact_parts_give_zero_reflection(r, x, z0):
    # identity: exact closed-form parts give |Gamma_in(f0)| ~ 0; 2 or 4 solutions for R_L > 0
    f = 915e6
    nets = m.synthesize_at(complex(r, x), f, z0)
    assert 1 <= len(nets) <= 4
    for n in nets:
        assert abs(_gin_exact(n, complex(r, x), f, z0)) < 1e-6


def test_no_solution_for_reactive_load():
    assert m.synthesize_at(0 + 50j, 1e9, 50.0) == []
    assert m.synthesize_at(-5 + 50j, 1e9, 50.0) == []


def test_single_part_where_one_suffices():
    # R_L = Z0: one series capacitor cancelling +j30 ohm matches exactly
    nets = m.synthesize_at(50 + 30j, 1e9, 50.0, single_part_rl_db=10)
    singles = [n for n in nets if len(n.elements) == 1]
    assert any(n.elements[0] == m.Element("capacitor", "series", 1 / (W * 1e9 * 30)) or
               (n.elements[0].kind == "capacitor" and n.elements[0].value == pytest.approx(1 / (W * 1e9 * 30)))
               for n in singles)
    for n in singles:
        if n.topology == "series":
            assert abs(_gin_exact(n, 50 + 30j, 1e9, 50.0)) < 1e-9


def test_dc_and_filter_character():
    sl = m.Element("inductor", "series", 10e-9)
    sc = m.Element("capacitor", "series", 1e-12)
    pl = m.Element("inductor", "shunt", 10e-9)
    pc = m.Element("capacitor", "shunt", 1e-12)
    assert m.passes_dc([sl, pc]) and m.filter_character([sl, pc]) == "low-pass"
    assert not m.passes_dc([sc, pl]) and m.filter_character([sc, pl]) == "high-pass"
    assert not m.passes_dc([sl, pl]) and m.filter_character([sl, pl]) == "band-pass"
    assert sl.unit == "H" and pc.unit == "F"
    with pytest.raises(UsageError):
        m.Element("resistor", "series", 1.0)


# ---------------------------------------------------------------- evaluation vs scikit-rf

def _skrf_ladder(media, elements, q: m.PartQ):
    parts = []
    w = W * media.frequency.f
    for e in elements:
        qq = q.inductor if e.kind == "inductor" else q.capacitor
        z = m.part_impedance(e.kind, e.value, w, qq)
        if e.connection == "series":
            parts.append(media.resistor(z))  # a series impedance (complex allowed)
        else:
            parts.append(media.shunt(media.load((z - 50) / (z + 50), nports=1)))
    net = parts[0]
    for p in parts[1:]:
        net = net ** p
    return net


@pytest.mark.parametrize("q", [m.PartQ(), m.PartQ(30, 150)])
def test_evaluate_matches_skrf_cascade(q):
    # reference: scikit-rf 2.2 DefinedGammaZ0 lumped elements cascaded with **
    f = np.linspace(800e6, 1000e6, 101)
    freq = skrf.Frequency.from_f(f, unit="Hz")
    media = DefinedGammaZ0(freq, z0=50)
    z_load = series_rlc_z(f, 25.0, 40e-9, 900e6)
    load = media.load(gamma_of(z_load), nports=1)
    elems = (m.Element("inductor", "series", 12e-9), m.Element("capacitor", "shunt", 2.2e-12))
    for els in (elems, elems[::-1], (m.Element("capacitor", "series", 3.3e-12), m.Element("inductor", "shunt", 8.2e-9))):
        ref = _skrf_ladder(media, els, q)
        got = m.evaluate(f, gamma_of(z_load), 50.0, [(e.kind, e.connection) for e in els], [e.value for e in els], q)
        assert np.allclose(got.gamma_in, (ref ** load).s[:, 0, 0], atol=1e-10)
        assert np.allclose(m.s_parameters(f, els, 50.0, q), ref.s, atol=1e-10)
        # delivered power: transducer gain with a matched source, |S21|^2 (1-|GL|^2)/|1-S22 GL|^2
        # (Pozar 4th ed. sec. 12.1; equation number from memory)
        s = ref.s
        gl = gamma_of(z_load)
        gt = np.abs(s[:, 1, 0]) ** 2 * (1 - np.abs(gl) ** 2) / np.abs(1 - s[:, 1, 1] * gl) ** 2
        assert np.allclose(got.delivered, gt, atol=1e-10)


def test_lossless_network_conserves_power():
    # identity: a lossless reciprocal 2-port has |S11|^2 + |S21|^2 = 1 and S12 = S21
    f = np.linspace(100e6, 6e9, 301)
    els = (m.Element("capacitor", "shunt", 1.5e-12), m.Element("inductor", "series", 22e-9))
    s = m.s_parameters(f, els, 50.0)
    assert np.allclose(np.abs(s[:, 0, 0]) ** 2 + np.abs(s[:, 1, 0]) ** 2, 1.0, atol=1e-12)
    assert np.allclose(s[:, 0, 1], s[:, 1, 0])
    r = m.evaluate(f, gamma_of(series_rlc_z(f, 30, 20e-9, 1e9)), 50.0, [(e.kind, e.connection) for e in els],
                   [e.value for e in els])
    assert np.allclose(r.network_loss_db, 0.0, atol=1e-9)


def test_constant_q_model():
    # the model: R = |X|/Q at every frequency, so Q = |X|/R is the stated value everywhere
    w = W * np.array([0.5e9, 1e9, 2e9])
    for kind, v in (("inductor", 10e-9), ("capacitor", 2e-12)):
        z = m.part_impedance(kind, v, w, 40.0)
        assert np.allclose(np.abs(z.imag) / z.real, 40.0)


def test_finite_q_burns_power_and_lower_q_burns_more():
    f = np.linspace(860e6, 960e6, 201)
    gl = gamma_of(series_rlc_z(f, 15.0, 30e-9, 915e6))
    els = [("inductor", "series"), ("capacitor", "shunt")]
    vals = [5e-9, 6e-12]
    hi = m.evaluate(f, gl, 50.0, els, vals, m.PartQ(100, 1000)).network_loss_db
    lo = m.evaluate(f, gl, 50.0, els, vals, m.PartQ(20, 1000)).network_loss_db
    assert np.all(hi > 0) and np.all(lo > hi)


# ---------------------------------------------------------------- designs on a sweep

def _sweep(z_fn, lo=700e6, hi=1100e6, n=1601, z0=50.0):
    f = np.linspace(lo, hi, n)
    return sweep_from_arrays(f, gamma_of(z_fn(f), z0), z0, path="model.s1p")


def _worst_rl(sw, elements, f_lo, f_hi, q=None):
    q = q or m.PartQ()
    f = np.linspace(f_lo, f_hi, 2001)
    g = m.evaluate(f, np.interp(f, sw.f_hz, sw.gamma.real) + 1j * np.interp(f, sw.f_hz, sw.gamma.imag), sw.z0_ohm,
                   [(e.kind, e.connection) for e in elements], [e.value for e in elements], q).gamma_in
    return float(-20 * np.log10(np.abs(g).max()))


def test_design_at_exact_matches_closed_form_and_ranks():
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6))
    r = m.design_at(sw, 915e6, series="exact")
    two = [c for c in r.candidates if len(c.elements) == 2]
    assert len(two) == 2 and all(c.return_loss_at_f0_db > 60 for c in two)
    # a single part is a candidate of its own; one that misses the threshold says so
    for c in r.candidates:
        assert c.meets_threshold == (c.worst_return_loss_db >= 10)
    d = [c.worst_delivered_fraction for c in r.candidates]
    assert d == sorted(d, reverse=True)
    assert r.before_return_loss_at_f0_db < 10


def test_band_design_beats_single_frequency_design_over_the_band():
    sw = _sweep(lambda f: series_rlc_z(f, 12.0, 25e-9, 850e6))
    lo, hi = 880e6, 960e6
    spot = m.design_at(sw, 920e6, series="exact")
    band = m.design_for_band(sw, lo, hi, series="exact")
    best_spot = max(_worst_rl(sw, c.elements, lo, hi) for c in spot.candidates)
    assert band.candidates[0].worst_return_loss_db >= best_spot - 1e-6
    # the reported worst case is the worst case on a dense independent grid
    assert band.candidates[0].worst_return_loss_db == pytest.approx(_worst_rl(sw, band.candidates[0].elements, lo, hi),
                                                                    abs=0.05)
    assert band.before_worst_return_loss_db < band.candidates[0].worst_return_loss_db


@pytest.mark.parametrize("name", ["E12", "E24", "E96"])
def test_standard_values_come_from_the_series(name):
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6))
    r = m.design_for_band(sw, 902e6, 928e6, series=name)
    table = eseries.series_mantissas(name)
    for c in r.candidates:
        for e in c.elements:
            mant = e.value / 10 ** math.floor(math.log10(e.value) + 1e-12)
            assert np.isclose(mant, table, rtol=1e-9).any()


def test_bounds_are_respected_and_too_tight_bounds_refuse():
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6))
    b = m.ValueBounds(c_min_f=1e-12, c_max_f=10e-12, l_min_h=1e-9, l_max_h=100e-9)
    r = m.design_for_band(sw, 902e6, 928e6, bounds=b)
    assert all(b.admits(e) for c in r.candidates for e in c.elements)
    with pytest.raises(NoSolutionError):
        m.design_at(sw, 915e6, bounds=m.ValueBounds(1e-9, 2e-9, 1e-6, 2e-6))


@pytest.mark.parametrize("kind, q_load, r_ohm, lo, hi", [
    ("series", 12.0, 50.0, 870e6, 960e6),
    ("parallel", 12.0, 150.0, 870e6, 960e6),
    ("series", 4.0, 15.0, 800e6, 1030e6),
    ("parallel", 25.0, 400.0, 900e6, 930e6),
    ("series", 30.0, 8.0, 905e6, 925e6),
])
def test_no_l_network_beats_bode_fano(kind, q_load, r_ohm, lo, hi):
    # Pozar 4th ed. sec. 5.9, eqs. 5.79-5.80: no lossless network beats the bound on an RLC load
    f0 = 915e6
    if kind == "series":
        l_h = q_load * r_ohm / (W * f0)
        z_fn = lambda f: series_rlc_z(f, r_ohm, l_h, f0)  # noqa: E731
    else:
        c_f = q_load / (W * f0 * r_ohm)
        l_h = 1 / ((W * f0) ** 2 * c_f)
        z_fn = lambda f: 1 / (1 / r_ohm + 1j * W * f * c_f + 1 / (1j * W * f * l_h))  # noqa: E731
    sw = _sweep(z_fn)
    r = m.design_for_band(sw, lo, hi, series="exact")
    assert r.bound is not None and r.bound.model == f"{kind} RLC"
    assert r.bound.fit_rms_rel < 1e-6
    assert all(c.worst_return_loss_db <= r.bound.best_return_loss_db + 1e-9 for c in r.candidates)
    # narrow-band form: Gm >= exp(-pi/(Q B)), Q of the load at f0, B fractional bandwidth (within 5 %)
    b = (hi - lo) / f0
    approx_db = -20 * math.log10(math.exp(-math.pi / (q_load * b)))
    assert r.bound.best_return_loss_db == pytest.approx(approx_db, rel=0.05)


def test_band_optimum_agrees_with_a_brute_force_grid():
    # independent minimax: a dense grid over both part values of each shape found
    sw = _sweep(lambda f: series_rlc_z(f, 12.0, 25e-9, 850e6), n=401)
    lo, hi = 860e6, 960e6
    r = m.design_for_band(sw, lo, hi, series="exact")
    from matchtool.bands import band_samples
    fb, gb = band_samples(sw.f_hz, sw.gamma, lo, hi)
    for c in r.candidates:
        if len(c.elements) != 2:
            continue
        a = np.exp(np.linspace(-1.0, 1.0, 161))
        v0 = c.elements[0].value * a[:, None, None]
        v1 = c.elements[1].value * a[None, :, None]
        g = m.evaluate(fb, gb, 50.0, [(e.kind, e.connection) for e in c.elements], [v0, v1]).gamma_in
        grid_best = float(-20 * np.log10(np.abs(g).max(axis=-1).min()))
        assert c.worst_return_loss_db >= grid_best - 0.05


@pytest.mark.parametrize("x0", [(-1.2, 1.0), (0.5, 3.0), (-2.0, -1.5)])
def test_nelder_mead_finds_rosenbrock_minimum_like_scipy(x0):
    # Rosenbrock's function (Computer Journal 3 (1960) 175) has its only minimum 0 at (1, 1); the
    # reference is scipy.optimize.minimize(method="Nelder-Mead") with the same tolerances
    from scipy.optimize import minimize, rosen

    x, f = m.nelder_mead(rosen, np.array(x0), xatol=1e-8, fatol=1e-12, maxiter=4000)
    ref = minimize(rosen, x0, method="Nelder-Mead", options={"xatol": 1e-8, "fatol": 1e-12, "maxiter": 4000})
    assert ref.success
    assert f == pytest.approx(rosen(x), abs=0)
    assert np.allclose(x, [1.0, 1.0], atol=1e-5)
    assert np.allclose(x, ref.x, atol=1e-5)
    assert f <= max(ref.fun, 1e-14) * 10


def test_nelder_mead_respects_maxiter_and_tolerance():
    # a quadratic bowl with minimum at (3, -2): loose tolerances stop early, a tiny maxiter stops
    # before convergence (scipy's semantics: maxiter counts simplex iterations)
    calls = []

    def bowl(x):
        calls.append(1)
        return float((x[0] - 3.0) ** 2 + 10 * (x[1] + 2.0) ** 2)

    x, f = m.nelder_mead(bowl, np.array([1.0, 1.0]), xatol=1e-6, fatol=1e-12, maxiter=2000)
    assert np.allclose(x, [3.0, -2.0], atol=1e-5)
    n_tight = len(calls)
    calls.clear()
    x_short, f_short = m.nelder_mead(bowl, np.array([1.0, 1.0]), maxiter=3)
    assert len(calls) <= 3 + 3 * 2 + 2  # initial simplex + at most 2 (or a shrink's 2) evaluations per step
    assert f_short > f
    calls.clear()
    m.nelder_mead(bowl, np.array([1.0, 1.0]), xatol=1e-1, fatol=1e-2, maxiter=2000)
    assert len(calls) < n_tight


def test_match_path_does_not_import_scipy_optimize():
    # start-up budget (benchmark P3): the band optimisation must not pull in scipy.optimize
    import subprocess
    import sys

    code = ("import sys, numpy as np\n"
            "from matchtool import matching as m\n"
            "from matchtool.sweep import sweep_from_arrays\n"
            "f = np.linspace(800e6, 1000e6, 201)\n"
            "w, w0 = 2 * np.pi * f, 2 * np.pi * 850e6\n"
            "z = 12 + 1j * (w * 25e-9 - w0 ** 2 * 25e-9 / w)  # series RLC resonant at 850 MHz\n"
            "g = (z - 50) / (z + 50)\n"
            "sw = sweep_from_arrays(f, g, 50.0)\n"
            "r = m.design_for_band(sw, 860e6, 960e6)\n"
            "assert r.candidates\n"
            "print(any(k.startswith('scipy.optimize') for k in sys.modules))\n")
    root = str(Path(__file__).resolve().parents[1])
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=root)
    assert out.stdout.strip() == "False"


def test_renormalised_system_impedance_is_matched():
    # matching goes to the system impedance: with a 75 ohm system the exact parts null Gamma at 75 ohm
    f = np.linspace(800e6, 1000e6, 201)
    sw = sweep_from_arrays(f, gamma_of(series_rlc_z(f, 30.0, 20e-9, 900e6), 50.0), 50.0, z0_ohm=75.0)
    assert sw.z0_ohm == 75.0
    r = m.design_at(sw, 900e6, series="exact")
    zl = complex(series_rlc_z(np.array([900e6]), 30.0, 20e-9, 900e6)[0])
    for c in r.candidates:
        if len(c.elements) == 2:
            assert abs(_gin_exact(m.LNetwork(c.topology, c.elements), zl, 900e6, 75.0)) < 1e-6


def test_yield_is_seeded_vectorised_and_matches_a_loop():
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6))
    ys = m.YieldSettings(0.10, 0.10, 400, 7)
    r1 = m.design_for_band(sw, 902e6, 928e6, yield_settings=ys)
    r2 = m.design_for_band(sw, 902e6, 928e6, yield_settings=ys)
    c = r1.candidates[0]
    assert c.yield_fraction == r2.candidates[0].yield_fraction
    # the same draws, one build at a time
    rng = np.random.default_rng(7)
    draws = [rng.uniform(-1, 1, size=(400, 1)) for _ in c.elements]
    from matchtool.bands import band_samples
    fb, gb = band_samples(sw.f_hz, sw.gamma, 902e6, 928e6)
    ok = 0
    for t in range(400):
        vals = [e.value * (1 + 0.10 * d[t, 0]) for e, d in zip(c.elements, draws, strict=True)]
        g = m.evaluate(fb, gb, 50.0, [(e.kind, e.connection) for e in c.elements], vals).gamma_in
        ok += bool(-20 * np.log10(np.abs(g).max()) >= 10.0)
    assert c.yield_fraction == pytest.approx(ok / 400)
    zero = m.design_for_band(sw, 902e6, 928e6, yield_settings=m.YieldSettings(0.0, 0.0, 50, 1))
    assert zero.candidates[0].yield_fraction == (1.0 if zero.candidates[0].worst_return_loss_db >= 10 else 0.0)


def test_errors_outside_sweep_and_narrow_band():
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6), n=101)  # 4 MHz steps
    with pytest.raises(OutOfRangeError):
        m.design_for_band(sw, 600e6, 928e6)
    with pytest.raises(OutOfRangeError):
        m.design_at(sw, 1.2e9)
    with pytest.raises(UsageError):
        m.design_for_band(sw, 902e6, 905e6)


def test_band_sample_minimum_is_the_one_of_bands():
    # one definition of the minimum (matchtool.bands); 4 MHz steps (derived: 400 MHz / 100)
    from matchtool import bands

    assert m.MIN_BAND_SAMPLES is bands.MIN_BAND_SAMPLES
    assert "MIN_BAND_SAMPLES =" not in (Path(m.__file__).parent / "propose.py").read_text()
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6), n=101)
    n = bands.MIN_BAND_SAMPLES
    lo = 900e6 - 1e6  # samples at 900, 904, ... MHz: a band from 899 MHz holds n of them up to 899 + 4 n
    with pytest.raises(UsageError, match=f"holds only {n - 1} measured sample"):
        m.design_for_band(sw, lo, lo + 4e6 * (n - 1))
    assert m.design_for_band(sw, lo, lo + 4e6 * n).candidates


def test_reactive_load_has_no_solution():
    sw = _sweep(lambda f: 1j * W * f * 10e-9)
    with pytest.raises(NoSolutionError):
        m.design_at(sw, 915e6)
    with pytest.raises(NoSolutionError):
        m.design_for_band(sw, 902e6, 928e6)


@settings(max_examples=15, deadline=None)
@given(r_ohm=st.floats(5.0, 300.0), q_load=st.floats(2.0, 40.0), f0=st.floats(860e6, 980e6),
       bw=st.floats(5e6, 120e6), parallel=st.booleans())
def test_band_design_properties_on_random_rlc(r_ohm, q_load, f0, bw, parallel):
    # identities on any RLC load: the band result is no worse over the band than the exact match at the
    # centre, and no L-network beats the Bode-Fano bound (Pozar 4th ed. sec. 5.9)
    if parallel:
        c_f = q_load / (W * f0 * r_ohm)
        l_h = 1 / ((W * f0) ** 2 * c_f)
        z_fn = lambda f: 1 / (1 / r_ohm + 1j * W * f * c_f + 1 / (1j * W * f * l_h))  # noqa: E731
    else:
        z_fn = lambda f: series_rlc_z(f, r_ohm, q_load * r_ohm / (W * f0), f0)  # noqa: E731
    sw = _sweep(z_fn, n=801)
    lo, hi = 915e6 - bw / 2, 915e6 + bw / 2
    band = m.design_for_band(sw, lo, hi, series="exact")
    spot = m.design_at(sw, 915e6, series="exact")
    best_spot = max(_worst_rl(sw, c.elements, lo, hi) for c in spot.candidates)
    # the best network with parts (a direct connection may be listed first when the load already
    # meets the threshold and no network gains a meaningful amount over it)
    best_band = max(c.worst_return_loss_db for c in band.candidates)
    assert best_band >= best_spot - 0.05
    assert band.bound is not None
    assert all(c.worst_return_loss_db <= band.bound.best_return_loss_db + 1e-9 for c in band.candidates)


def test_skrf_capacitor_q_is_not_constant_q_but_ours_is():
    # scikit-rf 2.2 behaviour (measured on scikit-rf 2.2.0 itself): capacitor_q's Q scales with frequency
    freq = skrf.Frequency(500, 2000, 4, "MHz")
    media = DefinedGammaZ0(freq, z0=50)
    z = media.capacitor_q(C=2e-12, f_0=1e9, q_factor=50).a[:, 0, 1]
    q_skrf = np.abs(z.imag) / z.real
    assert q_skrf[1] == pytest.approx(50) and q_skrf[3] == pytest.approx(100)
    ours = m.part_impedance("capacitor", 2e-12, W * freq.f, 50.0)
    assert np.allclose(np.abs(ours.imag) / ours.real, 50.0)


def test_skrf_network_helpers_cascade():
    f = np.linspace(850e6, 950e6, 51)
    sw = sweep_from_arrays(f, gamma_of(series_rlc_z(f, 20.0, 30e-9, 880e6)), 50.0)
    els = (m.Element("capacitor", "shunt", 4.3e-12), m.Element("inductor", "series", 2e-9))
    q = m.PartQ(40, 200)
    net = m.network_2port(f, els, 50.0, q)
    assert np.allclose((net ** sw.network).s[:, 0, 0], m.matched_network(sw, els, q).s[:, 0, 0], atol=1e-12)


@pytest.mark.parametrize("z0", [50.0, 75.0])
def test_load_already_at_z0_needs_no_part(z0):
    # identity: a load equal to Z0 reflects nothing (Gamma = (Z - Z0) / (Z + Z0) = 0), so the only
    # network is a direct connection; it must not be reported as "no network matches"
    nets = m.synthesize_at(complex(z0, 0.0), 915e6, z0)
    assert [(n.topology, n.elements) for n in nets] == [("direct", ())]
    assert abs(_gin_exact(nets[0], complex(z0, 0.0), 915e6, z0)) == 0.0
    assert m.filter_character(()) == "all-pass"


# ---------------------------------------------------------------- an antenna that needs no network

def _resistive(r_ohm):
    return lambda f: np.full(f.shape, complex(r_ohm))


def test_antenna_that_meets_threshold_gets_direct_first():
    # series RLC, R = Z0 = 50 ohm, L = 5 nH resonant at 915 MHz: over 902-928 MHz the reactance stays
    # below 1 ohm, |Gamma| = |jX / (2 Z0 + jX)| < 0.01 (40 dB), far above a 10 dB threshold. No
    # network can gain more than the 0.0004 dB mismatch loss left (Pozar 4th ed. eq. 2.53 style:
    # delivered = 1 - |Gamma|^2), so the partless connection must be listed first.
    sw = _sweep(lambda f: series_rlc_z(f, 50.0, 5e-9, 915e6))
    r = m.design_for_band(sw, 902e6, 928e6)
    assert r.before_meets_threshold and r.no_network_needed
    first = r.candidates[0]
    assert first.topology == "direct" and first.elements == ()
    f = np.linspace(902e6, 928e6, 2001)
    g = gamma_of(series_rlc_z(f, 50.0, 5e-9, 915e6), 50.0)
    assert first.worst_return_loss_db == pytest.approx(float(-20 * np.log10(np.abs(g).max())), abs=0.01)
    assert first.worst_delivered_fraction == pytest.approx(float((1 - np.abs(g) ** 2).min()), abs=1e-6)
    assert first.network_loss_db == 0.0
    # nothing listed that does no better than a wire
    assert all(c.worst_delivered_fraction > first.worst_delivered_fraction for c in r.candidates[1:])
    spot = m.design_at(sw, 915e6)
    assert spot.no_network_needed and spot.candidates[0].elements == ()


def test_meaningful_gain_puts_networks_above_direct():
    # a flat 95 ohm load: |Gamma| = 45/145 = 0.310, return loss 10.16 dB, delivered 90.4 %: meets
    # 10 dB, but an L-section matches a resistance over a narrow band almost exactly (Pozar 4th ed.
    # sec. 5.1), gaining 10 log10(1/0.904) = 0.44 dB > 0.2 dB, so networks come first, then direct
    sw = _sweep(_resistive(95.0))
    r = m.design_for_band(sw, 910e6, 920e6)
    assert r.before_meets_threshold and not r.no_network_needed
    assert r.before_worst_return_loss_db == pytest.approx(-20 * math.log10(45 / 145), abs=1e-9)
    assert r.candidates[0].elements
    gain = 10 ** (m.MEANINGFUL_GAIN_DB / 10)
    kinds = [bool(c.elements) for c in r.candidates]
    k = kinds.index(False)  # the direct connection is listed
    floor = r.candidates[k].worst_delivered_fraction
    assert floor == pytest.approx(1 - (45 / 145) ** 2, rel=1e-9)
    assert all(c.worst_delivered_fraction > floor * gain for c in r.candidates[:k])
    assert all(floor < c.worst_delivered_fraction <= floor * gain for c in r.candidates[k + 1:])


def test_verdict_does_not_depend_on_how_many_networks_are_listed():
    # series RLC, R = Z0, L = 40 nH at 915 MHz: over 902-928 MHz X = w L - 1/(w C) stays within
    # +-6.6 ohm (derived: 2 L dw = 2 x 40 nH x 2 pi x 13 MHz = 6.5 ohm), |Gamma| <= 0.066, 23.6 dB: it
    # meets 10 dB and at most 10 log10(1 / (1 - 0.066^2)) = 0.019 dB is left to gain (Pozar 4th ed.
    # eq. 2.53: delivered = 1 - |Gamma|^2), below MEANINGFUL_GAIN_DB. Many small L-sections gain a
    # trace over the wire, which once filled the few networks kept for --candidates 1.
    sw = _sweep(lambda f: series_rlc_z(f, 50.0, 40e-9, 915e6))
    f = np.linspace(902e6, 928e6, 2001)
    g_max = float(np.abs(gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))).max())
    assert -10 * math.log10(1 - g_max ** 2) < m.MEANINGFUL_GAIN_DB
    full = m.design_for_band(sw, 902e6, 928e6, max_candidates=6)
    assert full.no_network_needed and sum(bool(c.elements) for c in full.candidates) >= 2
    for n in (1, 2, 3, 6, 9):
        r = m.design_for_band(sw, 902e6, 928e6, max_candidates=n)
        assert r.no_network_needed, n
        assert r.candidates[0].topology == "direct" and r.candidates[0].elements == ()
        assert r.candidates[0].worst_return_loss_db == pytest.approx(-20 * math.log10(g_max), abs=0.01)
        assert len(r.candidates) <= n
        # the list for n is the first n of the same ranking
        short = [(c.topology, tuple(e.value for e in c.elements)) for c in r.candidates]
        ref = [(c.topology, tuple(e.value for e in c.elements)) for c in full.candidates][:len(short)]
        if n <= 6:
            assert short == ref, n
    spot = m.design_at(sw, 902e6, max_candidates=1)  # |Gamma| 0.066 at the band edge: meets too
    assert spot.no_network_needed and spot.candidates[0].elements == ()


def test_antenna_missing_threshold_gets_no_direct_option():
    sw = _sweep(_resistive(150.0))  # |Gamma| = 0.5, 6.02 dB: misses 10 dB
    r = m.design_for_band(sw, 910e6, 920e6)
    assert not r.before_meets_threshold and not r.no_network_needed
    assert all(c.elements for c in r.candidates)


# ---------------------------------------------------------------- practicality of parts

@pytest.mark.parametrize(("kind", "conn", "value", "role"), [
    ("capacitor", "series", 750e-12, "wire"),   # X = 1/(w C) = 0.232 ohm at 915 MHz
    ("capacitor", "series", 240e-12, "wire"),   # 0.725 ohm
    ("inductor", "shunt", 910e-9, "open"),      # X = w L = 5.23 kohm
    ("capacitor", "shunt", 0.1e-12, "open"),    # 1.74 kohm
    ("inductor", "series", 0.51e-9, "part"),    # 2.93 ohm
    ("capacitor", "shunt", 0.22e-12, "part"),   # 791 ohm
    ("capacitor", "series", 0.05e-12, "blocking"),  # 3.48 kohm in series
    ("capacitor", "shunt", 10e-9, "shorting"),  # 0.0174 ohm to ground
])
def test_part_role_by_reactance_at_centre(kind, conn, value, role):
    # X = w L, X = 1/(w C) at 915 MHz (definitions); limits relative to Z0 = 50 ohm: series
    # |X| < 2 ohm is a wire, shunt |X| > 1250 ohm an open (common practice, no source)
    w = W * 915e6
    x = w * value if kind == "inductor" else 1 / (w * value)
    e = m.Element(kind, conn, value)
    assert m.part_role(e, 915e6, 50.0) == role
    if role == "wire":
        assert x < m.SERIES_WIRE_X_PER_Z0 * 50.0
    if role == "open":
        assert x > m.SHUNT_OPEN_X_PER_Z0 * 50.0


def test_practical_reduces_to_the_part_that_matters():
    big_c = m.Element("capacitor", "series", 240e-12)
    open_l = m.Element("inductor", "shunt", 910e-9)
    shunt_c = m.Element("capacitor", "shunt", 2e-12)
    assert m.practical(m.LNetwork("shunt-at-antenna", (big_c, open_l)), 915e6, 50.0) == m.LNetwork("direct", ())
    assert m.practical(m.LNetwork("shunt-at-antenna", (big_c, shunt_c)), 915e6, 50.0) == m.LNetwork("shunt", (shunt_c,))
    net = m.LNetwork("series-at-antenna", (shunt_c, m.Element("inductor", "series", 10e-9)))
    assert m.practical(net, 915e6, 50.0) is net
    assert m.practical(m.LNetwork("series", (m.Element("capacitor", "series", 0.05e-12),)), 915e6, 50.0) is None
    # a wire-like part changes the match by little: removing it moves |Gamma_in| by < 0.02 here
    z = 30 - 20j
    g = gamma_of(np.array([z]), 50.0)
    with_c = m.evaluate(np.array([915e6]), g, 50.0, [("capacitor", "series")], [240e-12]).gamma_in
    assert abs(with_c[0] - g[0]) < 0.02


def test_band_design_proposes_no_wire_or_open_parts():
    # a load close to Z0 (the r3 situation): every listed part does something at the band centre
    sw = _sweep(lambda f: series_rlc_z(f, 52.0, 8e-9, 912e6))
    for r in (m.design_for_band(sw, 902e6, 928e6), m.design_at(sw, 915e6)):
        for c in r.candidates:
            assert all(m.part_role(e, 915e6, 50.0) == "part" for e in c.elements), c


def test_absolute_tolerances_and_small_capacitors():
    # a capacitor below 10 pF with a percentage tolerance varies by +-0.1 pF (common practice, no
    # source); an absolute tolerance replaces the percentage for every part of that kind
    ys = m.YieldSettings(0.05, 0.05, 10, 1, small_c_tolerance_f=0.1e-12)
    assert ys.half_width(m.Element("capacitor", "shunt", 2.2e-12)) == pytest.approx(0.1e-12)
    assert ys.half_width(m.Element("capacitor", "shunt", 22e-12)) == pytest.approx(1.1e-12)
    assert ys.half_width(m.Element("inductor", "series", 10e-9)) == pytest.approx(0.5e-9)
    ab = m.YieldSettings(0.05, 0.05, 10, 1, tolerance_l_h=0.1e-9, tolerance_c_f=0.05e-12)
    assert ab.half_width(m.Element("capacitor", "shunt", 22e-12)) == pytest.approx(0.05e-12)
    assert ab.half_width(m.Element("inductor", "shunt", 100e-9)) == pytest.approx(0.1e-9)
    # the yield with absolute tolerances equals a loop over the same draws
    sw = _sweep(lambda f: series_rlc_z(f, 20.0, 30e-9, 880e6))
    ys = m.YieldSettings(0.0, 0.0, 300, 5, tolerance_l_h=0.2e-9, tolerance_c_f=0.25e-12)
    r = m.propose(sw, bands=[(902e6, 928e6)], tolerance=ys)
    c = r.candidates[0]
    rng = np.random.default_rng(5)
    draws = [rng.uniform(-1, 1, size=(300, 1)) for _ in c.elements]
    from matchtool.bands import band_samples
    fb, gb = band_samples(sw.f_hz, sw.gamma, 902e6, 928e6)
    ok = 0
    for t in range(300):
        vals = [e.value + (0.2e-9 if e.kind == "inductor" else 0.25e-12) * d[t, 0]
                for e, d in zip(c.elements, draws, strict=True)]
        g = m.evaluate(fb, gb, 50.0, [(e.kind, e.connection) for e in c.elements], vals).gamma_in
        ok += bool(-20 * np.log10(np.abs(g).max()) >= 10.0)
    assert c.yield_fraction == pytest.approx(ok / 300)


def test_propose_takes_an_skrf_network_and_gives_networks_back():
    f = np.linspace(850e6, 980e6, 261)
    z = series_rlc_z(f, 20.0, 30e-9, 880e6)
    ntw = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=gamma_of(z).reshape(-1, 1, 1), z0=50)
    r = m.propose(ntw, bands=[(902e6, 928e6)], network="pi")
    c = r.candidates[0]
    two = c.network_2port()
    assert isinstance(two, skrf.Network) and two.nports == 2
    # the matched antenna is the 2-port cascaded with the antenna (scikit-rf **)
    assert np.allclose((two ** ntw).s[:, 0, 0], c.matched_network().s[:, 0, 0], atol=1e-12)
    assert isinstance(r.warnings, tuple)
    with pytest.raises(UsageError) as e:
        m.propose(ntw, bands=[(902e6, 928e6)], network="ladder")
    assert e.value.parameter == "network"

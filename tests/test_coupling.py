"""Core checks of matchtool.coupling: isolation, envelope correlation (ECC) and TARC.

Sources: ECC from S-parameters, S. Blanch, J. Romeu, I. Corbella, Electronics Letters 39(9), 2003,
pp. 705-707 (two ports) and J. Thaysen, K. B. Jakobsen, Microwave Opt. Technol. Lett. 48(5), 2006
(N ports); TARC, M. Manteghi, Y. Rahmat-Samii, IEEE Trans. Antennas Propag. 53(1), 2005,
pp. 466-474; isolation = -20 log10 |S21|, Pozar, Microwave Engineering, 4th ed., sec. 4.3.
Networks are built with scikit-rf (z2s, media lines) and the formulas are written out again
here, term by term, rather than taken from the code under test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import skrf
from helpers import series_rlc_z

from matchtool import coupling as cp
from matchtool.errors import OutOfRangeError, UsageError

F = np.linspace(2.3e9, 2.6e9, 301)


def _net(s: np.ndarray, f: np.ndarray = F, z0: float = 50.0) -> skrf.Network:
    return skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=s, z0=z0, name="dut")


def _coupled_pair(f: np.ndarray = F, r_m: float = 4.0, x_m: float = 12.0) -> skrf.Network:
    """Two series-RLC antennas (radiation resistance 50 ohm) with a mutual impedance R_m + jX_m,
    turned into S by scikit-rf's z2s (our own model, derived)."""
    z11 = series_rlc_z(f, 50.0, 8e-9, 2.45e9)
    z22 = series_rlc_z(f, 45.0, 8e-9, 2.47e9)
    z = np.zeros((f.size, 2, 2), dtype=complex)
    z[:, 0, 0], z[:, 1, 1] = z11, z22
    z[:, 0, 1] = z[:, 1, 0] = r_m + 1j * x_m
    return _net(skrf.network.z2s(z, np.full(2, 50.0)), f)


def _blanch(s: np.ndarray) -> np.ndarray:
    """Blanch et al. 2003, eq. as printed: |S11* S12 + S21* S22|^2 / ((1-|S11|^2-|S21|^2)(1-|S22|^2-|S12|^2))."""
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    num = np.abs(np.conj(s11) * s12 + np.conj(s21) * s22) ** 2
    den = (1 - abs(s11) ** 2 - abs(s21) ** 2) * (1 - abs(s22) ** 2 - abs(s12) ** 2)
    return num / den


# ----------------------------------------------------------------------------------------------- ECC

def test_identical_uncoupled_matched_antennas_give_zero_ecc():
    # Blanch 2003: with S12 = S21 = 0 the numerator vanishes (check named in the issue)
    s = np.zeros((F.size, 2, 2), dtype=complex)
    s[:, 0, 0] = s[:, 1, 1] = 0.05 + 0.02j
    rho, undefined, clipped = cp.envelope_correlation(s, 1, 2)
    assert np.all(rho == 0) and not undefined.any() and not clipped.any()


def test_reciprocal_pair_without_transmission_gives_zero_ecc():
    # a reciprocal pair with S21 = S12 = 0 and mismatched ports (|S11| = 0.3, |S22| = 0.5): still 0
    s = np.zeros((F.size, 2, 2), dtype=complex)
    s[:, 0, 0], s[:, 1, 1] = 0.3j, -0.5
    assert np.all(cp.envelope_correlation(s, 1, 2)[0] == 0)


def test_ecc_of_coupled_pair_matches_blanch_formula():
    net = _coupled_pair()
    rho = cp.envelope_correlation(net.s, 1, 2)[0]
    ref = _blanch(net.s)
    assert np.all(ref > 0) and ref.max() < 1
    np.testing.assert_allclose(rho, ref, rtol=1e-12, atol=0)
    # more mutual coupling correlates more (physical expectation, common practice, no source)
    assert cp.envelope_correlation(_coupled_pair(x_m=30.0).s, 1, 2)[0].max() > rho.max()


def test_ecc_of_three_ports_matches_thaysen_jakobsen_form():
    # Thaysen & Jakobsen 2006: rho(i,j) = |sum_n S_in* S_nj|^2 / prod_{k=i,j} (1 - sum_n |S_kn|^2), written for a
    # reciprocal network; here it is evaluated with explicit loops on a reciprocal 3-port built by z2s
    z = np.zeros((F.size, 3, 3), dtype=complex)
    for k, (r, f0) in enumerate(((50.0, 2.45e9), (48.0, 2.44e9), (52.0, 2.46e9))):
        z[:, k, k] = series_rlc_z(F, r, 8e-9, f0)
    for (a, b), zm in {(0, 1): 5 + 10j, (0, 2): 2 - 6j, (1, 2): 3 + 4j}.items():
        z[:, a, b] = z[:, b, a] = zm
    s = skrf.network.z2s(z, np.full(3, 50.0))
    for i, j in ((1, 2), (1, 3), (2, 3)):
        ref = np.empty(F.size)
        for q in range(F.size):
            num = sum(np.conj(s[q, i - 1, n]) * s[q, n, j - 1] for n in range(3))
            den = 1.0
            for k in (i, j):
                den *= 1 - sum(abs(s[q, k - 1, n]) ** 2 for n in range(3))
            ref[q] = abs(num) ** 2 / den
        np.testing.assert_allclose(cp.envelope_correlation(s, i, j)[0], ref, rtol=1e-10)


def test_ecc_denominator_at_or_below_zero_is_conservative_and_warned():
    # a lossless reciprocal 2-port (a 50-ohm lossless line, scikit-rf media) radiates nothing:
    # 1 - |S11|^2 - |S21|^2 = 0 exactly (energy conservation), so the ECC is undefined
    line = skrf.media.DefinedGammaZ0(frequency=skrf.Frequency.from_f(F, unit="Hz"), z0=50.0).line(
        30, "deg", z0=70.0)
    rho, undefined, _ = cp.envelope_correlation(line.s, 1, 2)
    assert undefined.all() and np.all(rho == 1)
    res = cp.analyze_coupling(line)
    assert any("ECC undefined" in w and "set to 1" in w for w in res.warnings)
    # noisy data: |S11|^2 + |S21|^2 slightly above 1 at a few points
    s = _coupled_pair().s.copy()
    s[:5, 1, 0] = s[:5, 0, 1] = 0.999
    rho, undefined, _ = cp.envelope_correlation(s, 1, 2)
    assert undefined[:5].all() and np.all(rho[:5] == 1) and not undefined[5:].any()


# ---------------------------------------------------------------------------------------------- TARC

def test_uncoupled_identical_ports_give_tarc_equal_to_s11_for_every_phase():
    # Manteghi & Rahmat-Samii 2005: with S12 = S21 = 0 and S11 = S22, |b| = |S11| |a| for every theta
    g = (series_rlc_z(F, 50.0, 8e-9, 2.45e9) - 50) / (series_rlc_z(F, 50.0, 8e-9, 2.45e9) + 50)
    s = np.zeros((F.size, 2, 2), dtype=complex)
    s[:, 0, 0] = s[:, 1, 1] = g
    for theta in np.deg2rad([0, 37, 90, 180, 271]):
        np.testing.assert_allclose(cp.tarc_at_phase(s, [1, 2], [0, theta]), np.abs(g), rtol=1e-12)
    worst, best, _, _ = cp.tarc_extremes(s, [1, 2])
    np.testing.assert_allclose(worst, np.abs(g), rtol=1e-12)
    np.testing.assert_allclose(best, np.abs(g), rtol=1e-12)
    # so the -10 dB TARC band is the -10 dB S11 band: width (2/3) R / (2 pi L) for a series RLC with R = Z0
    # (derived: |X| = (2/3) Z0 at |Gamma| = 1/sqrt(10); references.md "Exact test vectors")
    f = np.linspace(2.2e9, 2.7e9, 5001)
    z = series_rlc_z(f, 50.0, 20e-9, 2.45e9)
    s2 = np.zeros((f.size, 2, 2), dtype=complex)
    s2[:, 0, 0] = s2[:, 1, 1] = (z - 50) / (z + 50)
    (band,) = cp.analyze_coupling(_net(s2, f)).tarc.bands_10db
    assert band.bandwidth_hz == pytest.approx((2 / 3) * 50 / (2 * math.pi * 20e-9), rel=1e-4)


def test_two_port_tarc_extremes_against_brute_force_and_closed_form():
    s = _coupled_pair(x_m=25.0).s
    worst, best, step, n = cp.tarc_extremes(s, [1, 2])
    assert step == 1.0 and n == 360
    # brute force: a = [1, e^{j theta}] at 0.05-degree steps, b = S a, TARC = |b| / |a| (Manteghi 2005)
    theta = np.deg2rad(np.arange(0, 360, 0.05))
    a = np.stack([np.ones_like(theta), np.exp(1j * theta)])  # (2, T)
    b = np.einsum("fij,jt->fti", s, a)
    tarc = np.sqrt(np.sum(abs(b) ** 2, axis=2) / 2)
    assert np.all(worst >= tarc.max(axis=1) - 1e-12) and np.all(best <= tarc.min(axis=1) + 1e-12)
    np.testing.assert_allclose(worst, tarc.max(axis=1), rtol=1e-6)
    np.testing.assert_allclose(best, tarc.min(axis=1), rtol=1e-6)
    # derived closed form: |S a|^2 = P1 + P2 + 2 Re(C e^{j theta}) with P_k = sum_n |S_nk|^2 and
    # C = sum_n S_n1* S_n2, so the extremes are (P1 + P2 +- 2|C|) / 2
    p1 = abs(s[:, 0, 0]) ** 2 + abs(s[:, 1, 0]) ** 2
    p2 = abs(s[:, 0, 1]) ** 2 + abs(s[:, 1, 1]) ** 2
    c = np.conj(s[:, 0, 0]) * s[:, 0, 1] + np.conj(s[:, 1, 0]) * s[:, 1, 1]
    np.testing.assert_allclose(worst, np.sqrt((p1 + p2 + 2 * abs(c)) / 2), rtol=1e-9)
    np.testing.assert_allclose(best, np.sqrt(np.maximum(p1 + p2 - 2 * abs(c), 0) / 2), rtol=1e-6, atol=1e-9)


def test_lossless_network_reflects_everything_for_every_excitation():
    # energy conservation: a unitary S (a lossless 4-port: two lossless lines side by side) gives
    # |b| = |a| for any a, so TARC = 1 (0 dB) for every phase
    media = skrf.media.DefinedGammaZ0(frequency=skrf.Frequency.from_f(F, unit="Hz"), z0=50.0)
    a, b = media.line(20, "deg", z0=35.0), media.line(75, "deg", z0=90.0)
    s = np.zeros((F.size, 4, 4), dtype=complex)
    s[:, :2, :2], s[:, 2:, 2:] = a.s, b.s
    worst, best, _, _ = cp.tarc_extremes(s, [1, 2, 3, 4])
    np.testing.assert_allclose(worst, 1.0, rtol=1e-9)
    np.testing.assert_allclose(best, 1.0, rtol=1e-9)


@pytest.mark.parametrize("k", [3, 4, 5])
def test_multi_port_tarc_is_never_beaten_by_random_phases_and_respects_singular_values(k):
    rng = np.random.default_rng(7 + k)
    f = F[:40]
    s = (rng.normal(size=(f.size, k, k)) + 1j * rng.normal(size=(f.size, k, k))) * 0.12
    s = (s + s.transpose(0, 2, 1)) / 2  # reciprocal
    ports = list(range(1, k + 1))
    worst, best, step, n = cp.tarc_extremes(s, ports)
    assert n <= cp.DEFAULT_MAX_EXCITATIONS and step > 1
    phases = np.concatenate([np.zeros((20000, 1)), rng.uniform(0, 2 * np.pi, size=(20000, k - 1))], axis=1)
    a = np.exp(1j * phases)  # (E, k)
    tarc = np.sqrt(np.sum(abs(np.einsum("fij,ej->fei", s, a)) ** 2, axis=2) / k)
    # the documented accuracy for more than two ports: never beaten by more than 0.01 dB (docs/coupling.md)
    assert np.all(20 * np.log10(tarc.max(axis=1) / worst) <= 0.01)
    assert np.all(20 * np.log10(best / tarc.min(axis=1)) <= 0.01)
    # a finer grid (the API's max_excitations) keeps that accuracy
    worst_f, best_f, step_f, _ = cp.tarc_extremes(s, ports, max_excitations=4096)
    assert step_f < step and np.all(20 * np.log10(tarc.max(axis=1) / worst_f) <= 0.01)
    assert np.all(20 * np.log10(best_f / tarc.min(axis=1)) <= 0.01)
    # |S a| / |a| lies between the smallest and largest singular values of S (linear algebra)
    sv = np.linalg.svd(s, compute_uv=False)
    assert np.all(worst <= sv[:, 0] + 1e-12) and np.all(best >= sv[:, -1] - 1e-12)


# ----------------------------------------------------------------------------------------- isolation

def test_isolation_is_minus_s21_db_and_band_worst_includes_interpolated_edges():
    net = _coupled_pair()
    iso = cp.isolation_db(net.s[:, 1, 0])
    np.testing.assert_allclose(iso, -net.s_db[:, 1, 0], rtol=1e-12)  # scikit-rf's own s_db
    coarse = net[::25]  # 13 samples, 25 MHz apart: the band edges fall between samples
    lo, hi = 2.4123e9, 2.4711e9
    pb = cp.pair_band(coarse.f, coarse.s, 1, 2, lo, hi)
    fc, s21 = coarse.f, coarse.s[:, 1, 0]
    edges = np.interp([lo, hi], fc, s21.real) + 1j * np.interp([lo, hi], fc, s21.imag)
    inside = s21[(fc > lo) & (fc < hi)]
    expect = -20 * np.log10(np.max(np.abs(np.concatenate([edges, inside]))))
    assert pb.min_isolation_db == pytest.approx(expect, rel=1e-12)
    assert lo <= pb.f_min_isolation_hz <= hi and pb.samples == inside.size


def test_non_reciprocal_file_reads_both_directions():
    s = _coupled_pair().s.copy()
    s[:, 0, 1] *= 2.0  # S12 twice S21: 6.02 dB less isolation in that direction
    res = cp.analyze_coupling(_net(s))
    (pair,) = res.pairs
    assert not pair.reciprocal and pair.bands[0].isolation_direction == (1, 2)
    np.testing.assert_allclose(pair.isolation_db, pair.isolation_ij_db)
    assert pair.bands[0].min_isolation_db == pytest.approx(
        -20 * np.log10(np.abs(s[:, 0, 1]).max()), rel=1e-12)
    assert cp.analyze_coupling(_coupled_pair()).pairs[0].reciprocal


def test_entry_point_pairs_bands_and_refusals():
    rng = np.random.default_rng(3)
    s = (rng.normal(size=(F.size, 3, 3)) + 1j * rng.normal(size=(F.size, 3, 3))) * 0.1
    net = _net(s)
    res = cp.analyze_coupling(net, bands=[(2.4e9, 2.5e9), (2.35e9, 2.4e9)])
    assert [p.ports for p in res.pairs] == [(1, 2), (1, 3), (2, 3)] and res.tarc.ports == (1, 2, 3)
    assert len(res.pairs[0].bands) == 2 and res.nports == 3
    one = cp.analyze_coupling(net, pair=(3, 2))
    assert [p.ports for p in one.pairs] == [(2, 3)] and one.tarc.ports == (2, 3)
    with pytest.raises(OutOfRangeError):
        cp.analyze_coupling(net, bands=[(2.5e9, 2.7e9)])
    with pytest.raises(UsageError) as ei:
        cp.analyze_coupling(net, pair=(1, 4))
    assert ei.value.parameter == "pair"
    with pytest.raises(UsageError):
        cp.analyze_coupling(net, pair=(2, 2))
    with pytest.raises(UsageError):
        cp.analyze_coupling(_net(np.zeros((F.size, 1, 1), dtype=complex)))
    with pytest.raises(UsageError) as ei:
        cp.analyze_coupling(net, phase_step_deg=0)
    assert ei.value.parameter == "phase_step_deg"

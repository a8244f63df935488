"""Multi-antenna devices: isolation between ports, envelope correlation (ECC) and the total active
reflection coefficient (TARC), from one measured N-port S-matrix.

Conventions (all frequencies in Hz, ports numbered from 1 as in the Touchstone file):

- Isolation between ports i and j is ``-20 log10 |S_ij|`` in positive dB (Pozar, Microwave
  Engineering, 4th ed., sec. 4.3). Both directions are read: the curve is the smaller of the two
  isolations at each frequency (``S_ij`` and ``S_ji``); for a file whose data are reciprocal
  (``S_ij == S_ji``, e.g. a symmetric ``[Matrix Format]``) the two are the same curve.
- ECC of ports i and j from S-parameters (S. Blanch, J. Romeu, I. Corbella, Electronics Letters
  39(9), 2003, pp. 705-707, for two ports; J. Thaysen, K. B. Jakobsen, Microwave Opt. Technol.
  Lett. 48(5), 2006, for N ports):
  ``rho_e = |sum_n S_ni* S_nj|^2 / ((1 - sum_n |S_ni|^2) (1 - sum_n |S_nj|^2))``, i.e.
  ``|M_ij|^2 / ((1 - M_ii)(1 - M_jj))`` with ``M = S^H S``. For two ports this is Blanch's
  ``|S11* S12 + S21* S22|^2 / ((1 - |S11|^2 - |S21|^2)(1 - |S22|^2 - |S12|^2))``. It assumes
  lossless antennas: ``1 - M_ii`` stands for the power port i radiates. As the radiation efficiency
  drops the formula reads the correlation low (optimistic); a measured pattern is needed then (P.
  Hallbjorner, IEEE Antennas Wireless Propag. Lett. 4, 2005). Where a factor of the denominator is
  zero or negative (noise, calibration error, |S| > 1) the ECC is undefined; it is set to 1 (fully
  correlated, the conservative value) there, values above 1 are clipped to 1, and a warning says
  how many samples were touched.
- TARC (M. Manteghi, Y. Rahmat-Samii, IEEE Trans. Antennas Propag. 53(1), 2005, pp. 466-474):
  ``sqrt(sum_i |b_i|^2) / sqrt(sum_i |a_i|^2)`` with ``b = S a``. The excited ports carry unit
  amplitudes ``a = [1, e^{j theta_2}, ..., e^{j theta_K}]`` (the first excited port is the phase
  reference); ports not excited are terminated in the reference impedance and the power they absorb
  counts in ``b`` (it is not radiated). The relative phases are swept on a grid of ``phase_step_deg``
  (all combinations; with K ports that is (360 / step)^(K-1) excitations); when that exceeds
  ``max_excitations`` the step is widened to the finest grid within the budget (the result's
  ``phase_step_deg`` says which step was used).
  At every frequency grid excitations are then polished: exact one-phase-at-a-time optimisation
  (with the other phases held, TARC^2 is ``c + 2 Re(e^{-j theta_k} z_k)``, extreme at
  ``theta_k = arg z_k`` or opposite it), then Newton's steps on the phases kept only where they
  improve; each step only moves toward the extreme (starts: :data:`POLISH_STARTS`). For
  two ports this gives the exact worst and best over all phases. Results are in dB
  (``20 log10 TARC``); the -10 dB TARC bandwidth is where the worst case over phase stays at or below
  -10 dB.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import skrf

from .bands import CAP_DB, MIN_BAND_SAMPLES, Band, band_samples, find_bands, sweep_covers, worst_in_band
from .errors import OutOfRangeError, UsageError
from .sweep import Sweep, as_sweep

DEFAULT_PHASE_STEP_DEG = 1.0
DEFAULT_MAX_EXCITATIONS = 1024
"""Budget of excitations on the TARC phase grid (per frequency). With the default 1-degree step two
ports use 360; three ports a 32 x 32 grid (11.25 degrees); four ports 10^3 (36 degrees), each then
polished to the exact local extreme."""
POLISH_SWEEPS = 12
POLISH_STARTS = 6
KEEP_STARTS = 2
"""Of the starts, this many per frequency and direction go on to Newton's steps after three sweeps."""
"""For three or more ports the polish starts from this many grid excitations per frequency and
direction: the extreme of each sector of port 2's phase, the most extreme sectors first (starts in
different basins: the best TARC can have several local minima)."""
ECC_DENOMINATOR_FLOOR = 1e-12
"""A denominator factor ``1 - sum |S_ni|^2`` at or below this counts as zero (no radiated power)."""
TARC_FLOOR_DB = -CAP_DB
"""TARC of exactly zero (a perfect, uncoupled match) is written as this many dB, not as -inf."""


# ------------------------------------------------------------------------------------- pure arrays

def _gram(s: np.ndarray, cols: Sequence[int] | None = None) -> np.ndarray:
    """``M = S[:, :, cols]^H S[:, :, cols]`` per frequency (shape (n, K, K), Hermitian); ``cols``
    0-based (default: every port). ``M_kk`` is the power leaving all ports for unit excitation of
    port k; ``1 - M_kk`` the power a lossless antenna radiates."""
    s = np.asarray(s, dtype=complex)
    sc = s if cols is None else s[:, :, list(cols)]
    return np.einsum("fnk,fnl->fkl", sc.conj(), sc)


def isolation_db(s_ij: np.ndarray) -> np.ndarray:
    """Isolation ``-20 log10 |S_ij|`` in positive dB, capped at :data:`matchtool.bands.CAP_DB`
    where ``S_ij = 0`` (Pozar, Microwave Engineering, 4th ed., sec. 4.3)."""
    mag = np.abs(np.asarray(s_ij, dtype=complex))
    with np.errstate(divide="ignore"):
        return np.minimum(-20.0 * np.log10(mag), CAP_DB)


def envelope_correlation(s: np.ndarray, i: int, j: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """ECC of ports ``i`` and ``j`` (1-based) of ``s`` (shape (n, N, N)) from S-parameters.

    Returns ``(ecc, undefined, clipped)``: the ECC per frequency (dimensionless, 0..1), a mask of the
    frequencies where a denominator factor ``1 - sum_n |S_nk|^2`` is <= :data:`ECC_DENOMINATOR_FLOOR`
    (the ECC is set to 1 there, the conservative value), and a mask of those where the formula gave
    more than 1 (clipped to 1). Thaysen-Jakobsen N-port form; Blanch et al. for two ports. Assumes
    lossless antennas (see the module docstring).
    """
    m = _gram(s, [i - 1, j - 1])
    num = np.abs(m[:, 0, 1]) ** 2
    di, dj = 1.0 - m[:, 0, 0].real, 1.0 - m[:, 1, 1].real
    undefined = (di <= ECC_DENOMINATOR_FLOOR) | (dj <= ECC_DENOMINATOR_FLOOR)
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = np.where(undefined, 1.0, num / np.where(undefined, 1.0, di * dj))
    clipped = ~undefined & (rho > 1.0)
    return np.clip(rho, 0.0, 1.0), undefined, clipped


def same_both_ways(s: np.ndarray, i: int, j: int) -> bool:
    """Whether S_ij and S_ji (1-based) of ``s`` (n, N, N) are the same curve (to 1e-12 relative):
    a reciprocal file (a symmetric ``[Matrix Format]`` stores them once) or a reciprocal model."""
    s = np.asarray(s)
    return bool(np.allclose(s[:, i - 1, j - 1], s[:, j - 1, i - 1], rtol=1e-12, atol=1e-15))


def _phase_grid(k: int, step_deg: float, max_excitations: int) -> tuple[np.ndarray, float]:
    """All relative phases (radians, shape (E, k)) with the first port at 0, on a grid of
    ``step_deg`` widened if needed so that E <= max_excitations; returns (phases, step used)."""
    per = max(1, int(round(360.0 / step_deg)))
    if k > 1 and per ** (k - 1) > max_excitations:
        per = max(2, int(math.floor(max_excitations ** (1.0 / (k - 1)) + 1e-9)))
    step = 360.0 / per
    axis = np.deg2rad(np.arange(per) * step)
    rest = np.array(list(itertools.product(axis, repeat=k - 1)), dtype=float).reshape(-1, k - 1)
    return np.concatenate([np.zeros((rest.shape[0], 1)), rest], axis=1), step


def _quadratic(m: np.ndarray, a: np.ndarray) -> np.ndarray:
    """``Re(a^H M a)`` per frequency for excitations ``a`` (n, K) and Gram matrices ``m`` (n, K, K)."""
    ma = np.sum(m * a[:, None, :], axis=2)  # broadcasting beats a batched matmul of tiny matrices
    return np.sum(a.conj() * ma, axis=1).real


def _coordinate_sweep(m: np.ndarray, a: np.ndarray, maximise: bool) -> None:
    """One sweep of exact one-phase-at-a-time optimisation, in place (port 1's phase held)."""
    for q in range(1, a.shape[1]):
        z = np.sum(m[:, q, :] * a, axis=1) - m[:, q, q] * a[:, q]
        mag = np.abs(z)
        unit = np.where(mag > 0, z / np.where(mag > 0, mag, 1.0), a[:, q])
        a[:, q] = unit if maximise else -unit


def _newton_step(m: np.ndarray, a: np.ndarray) -> np.ndarray:
    """Newton's step on the free phases of ``f = a^H M a`` (derived: with ``c_pq = conj(a_p) M_pq a_q``
    and ``r_k = sum_q c_kq``, df/dtheta_k = 2 Im(r_k); d2f/dtheta_k dtheta_l = 2 Re(c_kl) for k != l and
    -2 Re(r_k - c_kk) on the diagonal). Returns the phase step (rows, K - 1)."""
    c = a.conj()[:, :, None] * m * a[:, None, :]
    r = np.sum(c, axis=2)
    g = 2.0 * r.imag[:, 1:]
    h = 2.0 * c.real[:, 1:, 1:]
    k = a.shape[1] - 1
    diag = -2.0 * (r.real - np.einsum("fkk->fk", c.real))[:, 1:]
    h[:, np.arange(k), np.arange(k)] = diag
    det_ok = np.abs(np.linalg.det(h)) > 1e-300
    step = np.zeros_like(g)
    if det_ok.any():
        step[det_ok] = -np.linalg.solve(h[det_ok], g[det_ok][:, :, None])[:, :, 0]
    return step


def _polish(m: np.ndarray, a: np.ndarray, maximise: bool, group: int = 1) -> np.ndarray:
    """Move each excitation ``a`` (rows, K; port 1's phase held at 0) to a local extreme of
    ``a^H M a``: exact one-phase-at-a-time sweeps (each never moves away from the extreme), then
    Newton steps on the phases, each kept only where it improves the value (coordinate ascent alone
    converges slowly on some networks; Newton's method near the extreme converges fast).

    With ``group`` > 1 the rows are ``group`` starts per frequency, one frequency after another; after
    the first sweeps only the :data:`KEEP_STARTS` most extreme of each group are carried on, and the
    result has ``KEEP_STARTS`` rows per frequency."""
    a = a.copy()
    k = a.shape[1]
    _coordinate_sweep(m, a, maximise)
    if k == 2:  # one free phase: the single step above is already the exact extreme
        return a
    for _ in range(2):
        _coordinate_sweep(m, a, maximise)
    if group > 1:  # of each frequency's starts, carry on with the KEEP_STARTS most extreme only
        n = a.shape[0] // group
        v = _quadratic(m, a).reshape(n, group)
        keep = np.argsort((-1.0 if maximise else 1.0) * v, axis=1)[:, :min(KEEP_STARTS, group)]
        pick = (np.arange(n)[:, None] * group + keep).reshape(-1)
        m, a = m[pick], a[pick]
    sign = 1.0 if maximise else -1.0
    rows = np.arange(a.shape[0])
    value = _quadratic(m, a)
    for _ in range(POLISH_SWEEPS):
        mm, aa = m[rows], a[rows]
        step = _newton_step(mm, aa)
        trial = aa.copy()
        trial[:, 1:] *= np.exp(1j * step)
        new = _quadratic(mm, trial)
        better = sign * (new - value[rows]) > 0
        aa[better] = trial[better]
        # where Newton did not help, take a coordinate sweep instead (never worse)
        if (~better).any():
            sub = aa[~better]
            _coordinate_sweep(mm[~better], sub, maximise)
            aa[~better] = sub
        a[rows] = aa
        after = _quadratic(mm, aa)
        moving = np.abs(after - value[rows]) > 1e-11 * np.maximum(np.abs(value[rows]), 1e-30)
        value[rows] = after
        rows = rows[moving]
        if rows.size == 0:
            break
    return a


def tarc_extremes(s: np.ndarray, ports: Sequence[int], phase_step_deg: float = DEFAULT_PHASE_STEP_DEG,
                  max_excitations: int = DEFAULT_MAX_EXCITATIONS) -> tuple[np.ndarray, np.ndarray, float, int]:
    """Worst (largest) and best (smallest) TARC over the excitation phases, per frequency.

    ``s`` (n, N, N); ``ports`` the excited ports (1-based, at least two). Returns
    ``(worst, best, step_deg_used, excitations)`` with TARC as a ratio (0..1 for a passive
    network). See the module docstring for the sweep of the phases.
    """
    s = np.asarray(s, dtype=complex)
    cols = [p - 1 for p in ports]
    k = len(cols)
    m = _gram(s, cols)
    phases, step = _phase_grid(k, phase_step_deg, max_excitations)
    a_grid = np.exp(1j * phases)  # (E, K)
    n = s.shape[0]
    diag = np.einsum("fkk->f", m).real
    pairs = [(p, q) for p in range(k) for q in range(p + 1, k)]
    pm = np.stack([a_grid[:, p].conj() * a_grid[:, q] for p, q in pairs], axis=1)  # (E, P)
    mp = np.stack([m[:, p, q] for p, q in pairs], axis=1)  # (n, P)
    e = pm.shape[0]
    per = int(round(360.0 / step))
    rest = e // per if k > 2 else 1
    starts = 1 if k == 2 else min(POLISH_STARTS, per)  # two ports: one polish is already exact
    hi_idx = np.empty((n, starts), dtype=int)
    lo_idx = np.empty((n, starts), dtype=int)
    chunk = max(1, int(2_000_000 // max(1, e)))
    for start in range(0, n, chunk):
        sl = slice(start, start + chunk)
        # Re(M_pq conj(a_p) a_q) summed over p < q, as real matrix products
        q_val = diag[sl, None] + 2.0 * (mp[sl].real @ pm.real.T - mp[sl].imag @ pm.imag.T)
        if k == 2:
            hi_idx[sl, 0], lo_idx[sl, 0] = np.argmax(q_val, axis=1), np.argmin(q_val, axis=1)
            continue
        # starts in different basins: the extreme of each sector of port 2's phase, then the most
        # extreme sectors (the grid runs over port 2's phase slowest)
        sectors = q_val.reshape(q_val.shape[0], per, rest)
        for idx, arg, pick in ((hi_idx, np.argmax, -1), (lo_idx, np.argmin, 1)):
            inner = arg(sectors, axis=2)
            val = np.take_along_axis(sectors, inner[:, :, None], axis=2)[:, :, 0]
            order = np.argsort(pick * val, axis=1)[:, :starts]
            idx[sl] = order * rest + np.take_along_axis(inner, order, axis=1)
    m_rep = np.repeat(m, starts, axis=0)  # every start of every frequency polished in one call
    kept = min(KEEP_STARTS, starts) if k > 2 else starts
    m_kept = np.repeat(m, kept, axis=0)
    a_hi = _polish(m_rep, a_grid[hi_idx.reshape(-1)], maximise=True, group=starts)
    a_lo = _polish(m_rep, a_grid[lo_idx.reshape(-1)], maximise=False, group=starts)
    q_hi = _quadratic(m_kept, a_hi).reshape(n, kept).max(axis=1)
    q_lo = _quadratic(m_kept, a_lo).reshape(n, kept).min(axis=1)
    worst = np.sqrt(np.maximum(q_hi, 0.0) / k)
    best = np.sqrt(np.maximum(q_lo, 0.0) / k)
    return worst, best, step, int(e)


def tarc_at_phase(s: np.ndarray, ports: Sequence[int], phases_rad: Sequence[float]) -> np.ndarray:
    """TARC (a ratio) per frequency for one excitation: unit amplitudes on ``ports`` (1-based) with
    phases ``phases_rad`` (radians, one per excited port), the other ports terminated."""
    s = np.asarray(s, dtype=complex)
    a = np.zeros(s.shape[1], dtype=complex)
    a[[p - 1 for p in ports]] = np.exp(1j * np.asarray(phases_rad, dtype=float))
    b = s @ a
    return np.sqrt(np.sum(np.abs(b) ** 2, axis=1) / np.sum(np.abs(a) ** 2))


def _db20(x: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return np.maximum(20.0 * np.log10(np.asarray(x, dtype=float)), TARC_FLOOR_DB)


# ------------------------------------------------------------------------------------------ results

@dataclass(frozen=True)
class PairBand:
    """One pair's worst case over one band (Hz). ``min_isolation_db`` is the smallest isolation
    (positive dB) over the band and both directions, at ``f_min_isolation_hz``, read from
    ``isolation_direction`` (``(i, j)`` for S_ij); ``max_ecc`` the largest ECC, at ``f_max_ecc_hz``.
    Band edges are interpolated linearly in complex S between the bracketing samples."""

    f_low_hz: float
    f_high_hz: float
    min_isolation_db: float
    f_min_isolation_hz: float
    isolation_direction: tuple[int, int]
    max_ecc: float
    f_max_ecc_hz: float
    samples: int


@dataclass(frozen=True, eq=False)
class PairCoupling:
    """Coupling of two ports ``ports = (i, j)`` (1-based, i < j) over the sweep.

    ``isolation_db`` (n,) is the smaller of ``isolation_ij_db`` (from S_ij) and ``isolation_ji_db``
    (from S_ji) at each frequency, positive dB; ``reciprocal`` says the file's S_ij and S_ji are
    equal (then only one direction is in effect checked). ``ecc`` (n,) is the envelope correlation
    (0..1); ``ecc_undefined`` / ``ecc_clipped`` count the samples set to 1 / clipped to 1.
    """

    ports: tuple[int, int]
    isolation_db: np.ndarray
    isolation_ij_db: np.ndarray
    isolation_ji_db: np.ndarray
    reciprocal: bool
    ecc: np.ndarray
    ecc_undefined: int
    ecc_clipped: int
    bands: tuple[PairBand, ...]


@dataclass(frozen=True, eq=False)
class TarcResult:
    """TARC of the excited ``ports`` over the sweep: ``worst_db`` / ``best_db`` (n,) are the largest
    and smallest TARC over the excitation phases in dB (20 log10 TARC, <= 0 for a passive network);
    ``bands_10db`` where ``worst_db`` <= -10 dB. ``phase_step_deg`` is the grid step used,
    ``excitations`` the number of grid points, ``polished`` always True (see the module docstring)."""

    ports: tuple[int, ...]
    f_hz: np.ndarray
    worst_db: np.ndarray
    best_db: np.ndarray
    bands_10db: tuple[Band, ...]
    phase_step_deg: float
    requested_phase_step_deg: float
    excitations: int
    band_worst_db: tuple[float, ...] = ()
    """The worst TARC (dB) over phase and over each of the result's ``bands`` (edges included, S
    interpolated in complex values there), at ``band_worst_f_hz``."""
    band_worst_f_hz: tuple[float, ...] = ()
    polished: bool = True


@dataclass(frozen=True, eq=False)
class CouplingResult:
    """Everything ``matchtool coupling`` reports of one N-port file.

    ``bands`` are the (f_low_hz, f_high_hz) ranges the worst cases are taken over (the whole sweep
    when none was asked for); ``pairs`` one entry per port pair, in order (1,2), (1,3), ... (2,3) ...;
    ``tarc`` the active reflection of the pair asked for or of the whole array.
    """

    path: str
    nports: int
    z0_ohm: float
    f_hz: np.ndarray
    bands: tuple[tuple[float, float], ...]
    pairs: tuple[PairCoupling, ...]
    tarc: TarcResult | None
    warnings: tuple[str, ...] = ()


# --------------------------------------------------------------------------------------- entry point

def _pair(pair: Sequence[int], nports: int) -> tuple[int, int]:
    try:
        i, j = (int(x) for x in pair)
    except (TypeError, ValueError):
        raise UsageError(f"{pair!r} is not two port numbers", parameter="pair", value=pair,
                         expected="two different ports such as (1, 2)") from None
    if i == j:
        raise UsageError("names the same port twice", parameter="pair", value=f"{i},{j}",
                         expected="two different ports")
    for p in (i, j):
        if not 1 <= p <= nports:
            raise UsageError(f"port {p} does not exist in a {nports}-port file", parameter="pair",
                             value=f"{i},{j}", expected=f"ports from 1 to {nports}")
    return (min(i, j), max(i, j))


def pair_band(f_hz: np.ndarray, s: np.ndarray, i: int, j: int, f_low_hz: float, f_high_hz: float) -> PairBand:
    """The worst isolation and ECC of ports ``i``, ``j`` (1-based) of ``s`` (n, N, N) over one band
    inside the sweep (edges interpolated in complex S). Raises OutOfRangeError outside the sweep."""
    f = np.asarray(f_hz, dtype=float)
    w_ij = worst_in_band(f, s[:, i - 1, j - 1], f_low_hz, f_high_hz)
    w_ji = worst_in_band(f, s[:, j - 1, i - 1], f_low_hz, f_high_hz)
    w, direction = (w_ij, (i, j)) if w_ij.magnitude >= w_ji.magnitude else (w_ji, (j, i))
    fb, sb = band_samples(f, s, max(f_low_hz, f[0]), min(f_high_hz, f[-1]))
    fb[0], fb[-1] = f_low_hz, f_high_hz
    rho = envelope_correlation(sb, i, j)[0]
    k = int(np.argmax(rho))
    return PairBand(f_low_hz=float(f_low_hz), f_high_hz=float(f_high_hz),
                    min_isolation_db=float(isolation_db(w.magnitude)), f_min_isolation_hz=w.worst_f_hz,
                    isolation_direction=direction, max_ecc=float(rho[k]), f_max_ecc_hz=float(fb[k]),
                    samples=w.samples)


def analyze_coupling(network: skrf.Network | Sweep | str | Path, pair: Sequence[int] | None = None,
                     bands: Iterable[tuple[float, float]] = (), z0_ohm: float | None = None,
                     phase_step_deg: float = DEFAULT_PHASE_STEP_DEG,
                     max_excitations: int = DEFAULT_MAX_EXCITATIONS, tarc_ports: Sequence[int] | None = None,
                     ) -> CouplingResult:
    """Isolation, ECC and TARC of a multi-port antenna (an ``skrf.Network``, a loaded Sweep or a path).

    ``pair`` (1-based ``(i, j)``) restricts the pairs and the TARC to those two ports; otherwise every
    pair is reported and the TARC covers every port (``tarc_ports`` overrides the excited ports).
    ``bands`` are (f_low_hz, f_high_hz) ranges inside the sweep (never extrapolated: OutOfRangeError);
    none means one band over the whole sweep. ``z0_ohm`` renormalises every port (ohms). See the
    module docstring for the formulas and the TARC phase sweep.
    """
    sw = as_sweep(network, z0_ohm=z0_ohm)
    f = np.asarray(sw.f_hz, dtype=float)
    s = np.asarray(sw.network.s, dtype=complex)
    n = s.shape[1]
    if n < 2:
        raise UsageError(f"has {n} port; isolation, ECC and TARC need at least two", path=sw.path,
                         expected="a multi-port file (.s2p, .s4p, ...)")
    if f.size < 2:
        raise UsageError("holds a single frequency", path=sw.path, expected="a sweep of at least two frequencies")
    if not (math.isfinite(phase_step_deg) and 0 < phase_step_deg <= 180):
        raise UsageError("must lie in (0, 180] degrees", parameter="phase_step_deg", value=phase_step_deg,
                         expected="a phase step such as 1 or 5 degrees")
    if isinstance(max_excitations, bool) or int(max_excitations) < 4:
        raise UsageError("is too small", parameter="max_excitations", value=max_excitations, expected="at least 4")
    warnings = list(sw.warnings)
    band_list: list[tuple[float, float]] = []
    for lo, hi in bands:
        lo, hi = float(lo), float(hi)
        if not hi > lo:
            raise UsageError(f"{lo:g} Hz to {hi:g} Hz is empty or reversed", parameter="band",
                             value=f"{lo:g}:{hi:g}", expected="LOW below HIGH")
        if not sweep_covers(f, lo, hi):
            raise OutOfRangeError(f"{lo / 1e6:.6g} to {hi / 1e6:.6g} MHz lies outside the sweep "
                                  f"({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz)", path=sw.path,
                                  parameter="band", expected="a band inside the sweep (never extrapolated)")
        band_list.append((lo, hi))
    if not band_list:
        band_list = [(float(f[0]), float(f[-1]))]
    for lo, hi in band_list:
        inside = int(np.count_nonzero((f >= lo) & (f <= hi)))
        if inside < MIN_BAND_SAMPLES:
            warnings.append(f"{sw.path}: band {lo / 1e6:.6g} to {hi / 1e6:.6g} MHz holds {inside} sample(s); "
                            f"its worst cases lean on interpolation (measure at least {MIN_BAND_SAMPLES} points)")
    if pair is not None:
        pairs = [_pair(pair, n)]
    else:
        pairs = [(i, j) for i in range(1, n + 1) for j in range(i + 1, n + 1)]
    out: list[PairCoupling] = []
    for i, j in pairs:
        s_ij, s_ji = s[:, i - 1, j - 1], s[:, j - 1, i - 1]
        iso_ij, iso_ji = isolation_db(s_ij), isolation_db(s_ji)
        rho, undefined, clipped = envelope_correlation(s, i, j)
        if undefined.any():
            warnings.append(f"{sw.path}: ports {i},{j}: ECC undefined at {int(undefined.sum())} of {f.size} "
                            f"frequencies (1 - sum |S_n{i}|^2 or 1 - sum |S_n{j}|^2 <= 0: the data show no "
                            "radiated power; noise, calibration or |S| > 1); set to 1 there (fully correlated, "
                            "the conservative value)")
        if clipped.any():
            warnings.append(f"{sw.path}: ports {i},{j}: the ECC formula gave more than 1 at {int(clipped.sum())} "
                            "frequencies (inconsistent data); clipped to 1")
        pb = tuple(pair_band(f, s, i, j, lo, hi) for lo, hi in band_list)
        out.append(PairCoupling(ports=(i, j), isolation_db=np.minimum(iso_ij, iso_ji), isolation_ij_db=iso_ij,
                                isolation_ji_db=iso_ji, reciprocal=same_both_ways(s, i, j), ecc=rho,
                                ecc_undefined=int(undefined.sum()), ecc_clipped=int(clipped.sum()), bands=pb))
    if tarc_ports is not None:
        ports_t = tuple(sorted({int(p) for p in tarc_ports}))
        if len(ports_t) < 2 or not all(1 <= p <= n for p in ports_t):
            raise UsageError(f"{tarc_ports!r}", parameter="tarc_ports",
                             expected=f"at least two different ports from 1 to {n}")
    elif pair is not None:
        ports_t = pairs[0]
    else:
        ports_t = tuple(range(1, n + 1))
    worst, best, step, n_exc = tarc_extremes(s, ports_t, phase_step_deg, int(max_excitations))
    worst_db, best_db = _db20(worst), _db20(best)
    b_worst, b_f = [], []
    for lo, hi in band_list:
        fb, sb = band_samples(f, s, max(lo, f[0]), min(hi, f[-1]))
        fb[0], fb[-1] = lo, hi
        inside = (f > lo) & (f < hi)
        edge_worst = tarc_extremes(sb[[0, -1]], ports_t, phase_step_deg, int(max_excitations))[0]
        wb = _db20(np.concatenate([edge_worst[:1], worst[inside], edge_worst[1:]]))
        k = int(np.argmax(wb))
        b_worst.append(float(wb[k]))
        b_f.append(float(fb[k]))
    tarc = TarcResult(ports=ports_t, f_hz=f.copy(), worst_db=worst_db, best_db=best_db,
                      bands_10db=tuple(find_bands(f, -worst_db, 10.0)), phase_step_deg=float(step),
                      requested_phase_step_deg=float(phase_step_deg), excitations=n_exc,
                      band_worst_db=tuple(b_worst), band_worst_f_hz=tuple(b_f))
    return CouplingResult(path=sw.path, nports=n, z0_ohm=float(sw.z0_ohm), f_hz=f.copy(), bands=tuple(band_list),
                          pairs=tuple(out), tarc=tarc, warnings=tuple(warnings))

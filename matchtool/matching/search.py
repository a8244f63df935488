"""Exhaustive search over standard part values for a ladder footprint (L, pi, tee).

The problem
-----------
A footprint is a ladder of positions, radio side first, each "series" or "shunt". Every position
holds one option: a part (inductor or capacitor of a value from the allowed list) or nothing. An
empty shunt position is not fitted; an empty series position is a 0-ohm link. The load is given by
its reflection on the target samples (all bands concatenated), each sample with a weight
``w = 10**(limit_db / 10)`` so that the cost

    cost = max over samples of  w * (1 - delivered)

is minimised exactly when the smallest margin over the bands, ``-10 log10(1 - worst delivered) -
limit``, is maximised (for one band: when the worst in-band delivered power is maximised; for ideal
parts ``1 - delivered = |Gamma_in|^2``, so this is the worst in-band return loss).

The search (why it is complete)
-------------------------------
Written by hand because no library does a bounded enumeration of ladder values. The antenna-side
positions (2..k) are enumerated as every combination ("rows"), walking voltage and current from the
load (``v = 1 + Gamma``, ``i = 1 - Gamma``, normalised to Z0). The radio-side position 1 only adds
an immittance with a non-negative real part at one node, so for every row an upper bound of the
delivered power at each sample follows in closed form:

* position 1 shunt: ``a = v (1 + y_b + y_1)`` with ``y_b = i / v``; ``|a|^2 >= |v|^2 (1 + g_b)^2``
* position 1 series: ``a = i (1 + z_b + z_1)`` with ``z_b = v / i``; ``|a|^2 >= |i|^2 (1 + r_b)^2``

and delivered ``= 4 (1 - |Gamma_L|^2) / |a|^2`` (normalised transducer gain), hence a lower bound
of every cost the row can reach. Rows are visited in increasing lower bound; every option of
position 1 is evaluated for a visited row; a row whose bound is no better than the ``keep``-th best
network found so far (counting each distinct circuit once) cannot change the ``keep`` best, and
neither can any row after it. So the ``keep`` best circuits returned are those of a full
enumeration (up to exact ties), not of a neighbourhood.

Parts are given to the search as immittance arrays over the samples (one row per option), so any
part model (ideal, constant Q, a library part's measured or modelled impedance) plugs in unchanged.
A position may instead give every option as a normalised ABCD matrix per sample (``Options.abcd``: a
measured part in series is its whole measured 2-port, pads and all). The antenna-side positions are
walked through any 2-port; the closed-form bound above needs position 1 to add an immittance at one
node, so when position 1 holds 2-ports the rows get no bound and every (row, option) pair is judged
(on the screening samples first, then on all: a maximum over fewer samples is still a lower bound,
so this stays exact). The bound also allows a small negative real part of a measured part
(measurement noise): it uses ``1 + Re(node) + min(0, min Re(option))``, floored at 0.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .network import TWO_PI, PartQ, unit_impedance

NONE, INDUCTOR, CAPACITOR = 0, 1, 2
KIND_NAMES = ("none", "inductor", "capacitor")
EVAL_BLOCK = 2_000_000  # float64 elements per evaluated block (about 16 MB per temporary)


@dataclass(frozen=True)
class Footprint:
    """A ladder of positions, radio side first: ``name`` ("l", "pi", "tee") and ``connections``."""

    name: str
    connections: tuple[str, ...]


FOOTPRINTS: dict[str, tuple[Footprint, ...]] = {
    "l": (Footprint("l", ("series", "shunt")), Footprint("l", ("shunt", "series"))),
    "pi": (Footprint("pi", ("shunt", "series", "shunt")),),
    "tee": (Footprint("tee", ("series", "shunt", "series")),),
}


@dataclass(frozen=True, eq=False)
class Options:
    """The options of one position: ``kinds`` (NONE / INDUCTOR / CAPACITOR codes), ``values`` (H or F,
    NaN for none) and ``imm`` (options x samples): impedance / Z0 for a series position, admittance
    x Z0 for a shunt position (0 for none)."""

    connection: str
    kinds: np.ndarray
    values: np.ndarray
    imm: np.ndarray
    abcd: np.ndarray | None = None  # (options, samples, 2, 2): [[A, B / Z0], [C Z0, D]] per option, or None


@dataclass(frozen=True, eq=False)
class Problem:
    """Target samples: ``f_hz``, load reflection ``gamma`` at ``z0_ohm``, per-sample ``weight``."""

    f_hz: np.ndarray
    gamma: np.ndarray
    weight: np.ndarray
    z0_ohm: float
    q: PartQ


@dataclass(frozen=True)
class Found:
    """One circuit found: ``cost`` (see the module text), the ``footprint``, and per position the
    option ``kinds`` and ``values`` (NaN for an empty position)."""

    cost: float
    footprint: Footprint
    kinds: tuple[int, ...]
    values: tuple[float, ...]
    index: tuple[int, ...] = ()  # per position, the option's row in its Options table


def options_for(connection: str, l_values_h: np.ndarray, c_values_f: np.ndarray, problem: Problem) -> Options:
    """Options of a position: nothing, every inductor value, every capacitor value (constant-Q model)."""
    w = TWO_PI * problem.f_hz
    z0 = problem.z0_ohm
    ku = unit_impedance("inductor", w, problem.q.inductor)
    kc = unit_impedance("capacitor", w, problem.q.capacitor)
    lv = np.asarray(l_values_h, dtype=float)
    cv = np.asarray(c_values_f, dtype=float)
    z = np.concatenate([np.zeros((1, w.size), dtype=complex), lv[:, None] * ku[None, :], kc[None, :] / cv[:, None]])
    imm = z / z0 if connection == "series" else np.divide(z0, z, out=np.zeros_like(z), where=z != 0)
    kinds = np.concatenate([[NONE], np.full(lv.size, INDUCTOR), np.full(cv.size, CAPACITOR)]).astype(np.int64)
    values = np.concatenate([[math.nan], lv, cv])
    return Options(connection, kinds, values, imm)


def canonical(connections: Sequence[str], kinds: Sequence[int], values: Sequence[float] | None = None) -> tuple:
    """A key naming the circuit, so that equal circuits on different footprints count once: empty
    positions and links removed, neighbouring parts of the same connection (parallel shunt parts,
    or series parts in a row) sorted. With ``values`` the key includes them."""
    groups: list[tuple[str, list]] = []
    for j, (conn, kind) in enumerate(zip(connections, kinds, strict=True)):
        if kind == NONE:
            continue
        item = (kind,) if values is None else (kind, float(values[j]))
        if groups and groups[-1][0] == conn:
            groups[-1][1].append(item)
        else:
            groups.append((conn, [item]))
    return tuple((conn, tuple(sorted(items))) for conn, items in groups)


def _walk_rows(g: np.ndarray, imms: Sequence, connections: Sequence[str],
               idx: Sequence[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Normalised (v, i) at the input of position 2 for rows given by option indices of positions
    2..k (``imms`` their immittance tables on the samples of ``g``, or (imm, abcd) pairs)."""
    v = np.broadcast_to(1.0 + g, (idx[0].size, g.size)).astype(complex)
    i = np.broadcast_to(1.0 - g, (idx[0].size, g.size)).astype(complex)
    for imm, conn, ix in zip(reversed(imms), reversed(list(connections)), reversed(idx), strict=True):
        if isinstance(imm, tuple):
            imm, mat = imm
            if mat is not None:
                m = mat[ix]
                v, i = m[..., 0, 0] * v + m[..., 0, 1] * i, m[..., 1, 0] * v + m[..., 1, 1] * i
                continue
        m = imm[ix]
        if conn == "series":
            v = v + m * i
        else:
            i = i + m * v
    return v, i


def _node(first: str, v: np.ndarray, i: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(re, im, k): the node seen by position 1 (admittance x Z0 for a shunt position 1, impedance / Z0
    for a series one) and ``k`` with delivered = k / |1 + node + option|^2 (times 1 - |Gamma_L|^2 / ...)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        if first == "shunt":
            node = i / v
            k = 1.0 / (v.real ** 2 + v.imag ** 2)
        else:
            node = v / i
            k = 1.0 / (i.real ** 2 + i.imag ** 2)
    bad = ~np.isfinite(node)
    if bad.any():  # a node at a short (shunt) or an open (series): nothing reaches the antenna
        node = np.where(bad, 0.0, node)
        k = np.where(bad, 0.0, k)
    return node.real, node.imag, k


def search(problem: Problem, footprints: Sequence[Footprint], options: dict[Footprint, Sequence[Options]],
           keep: int, simpler_gain: float = 1.0) -> list[Found]:
    """The ``keep`` best distinct circuits (by cost, best first) over every option combination of
    every footprint (see the module text). Bounds and screens use subsets of the samples (the band
    edges and centres, then about 32 evenly spaced samples): a maximum over fewer samples is a lower
    bound of the maximum over all, so they prune without losing the optimum.

    ``simpler_gain`` (>= 1): a circuit of n parts counts only when its cost is below the best cost of
    every circuit with fewer parts divided by this factor (it must beat every simpler circuit by that
    margin). The best circuit returned is then within that factor of the best of a full enumeration.
    """
    pl4 = 4.0 * (1.0 - np.abs(problem.gamma) ** 2)  # 4 x power at the antenna (normalised)
    w = problem.weight
    n = problem.f_hz.size
    probe = _probe_samples(problem)
    stride = max(1, n // 32)
    probe2 = np.union1d(probe, np.arange(0, n, stride)) if n > 4 * probe.size else probe
    best: dict[tuple, Found] = {}
    max_parts = max(len(fp.connections) for fp in footprints)
    best_by_n = np.full(max_parts + 1, math.inf)  # best cost of any circuit with n parts

    def t_keep() -> float:
        costs = sorted(f.cost for f in best.values())
        return costs[keep - 1] if len(costs) >= keep else math.inf

    def t_parts(n_parts: np.ndarray | int, tk: float) -> np.ndarray:
        prefix = np.minimum.accumulate(np.r_[math.inf, best_by_n])  # prefix[k] = best with < k parts
        return np.minimum(tk, prefix[n_parts] / simpler_gain)

    for fp in footprints:
        opts = list(options[fp])
        first, rest = opts[0], opts[1:]
        shape = tuple(o.kinds.size for o in rest)
        n_rows = int(np.prod(shape))
        keys = {combo: canonical(fp.connections, combo) for combo in itertools.product(range(3), repeat=len(opts))}
        conns = [o.connection for o in rest]
        full_imm = [(o.imm, o.abcd) for o in rest]
        sub_imm = [(o.imm[:, probe2], None if o.abcd is None else o.abcd[:, probe2]) for o in rest]
        g_sub = problem.gamma[probe2]
        pl4_sub, w_sub = pl4[probe2], w[probe2]
        general = first.abcd is not None  # position 1 holds 2-ports: no closed-form bound
        if general:
            # a = (A + C) v + (B + D) i at the radio (normalised); delivered = pl4 / |a|^2
            pq_full = (first.abcd[..., 0, 0] + first.abcd[..., 1, 0], first.abcd[..., 0, 1] + first.abcd[..., 1, 1])
            pq_sub = (pq_full[0][:, probe2], pq_full[1][:, probe2])
        first_sub = first.imm[:, probe2]
        r1min = np.minimum(0.0, first_sub.real.min(axis=0))  # noise can give a part a tiny negative R
        at_probe = np.searchsorted(probe2, probe)  # the first screen's samples inside the second
        # stage 1: a lower bound of the cost of every row (from the screening samples: a maximum
        # over fewer samples is still a lower bound), and its number of fitted parts
        lb = np.empty(n_rows)
        n_rest = np.zeros(n_rows, dtype=np.int64)
        spread = 4 if any(o.abcd is not None for o in rest) else 1  # a 2x2 matrix per sample: 4x the memory
        chunk = max(1, EVAL_BLOCK // max(probe2.size * spread, 1))
        for start in range(0, n_rows, chunk):
            flat = np.arange(start, min(start + chunk, n_rows))
            idx = np.unravel_index(flat, shape)
            if general:
                lb[start:start + flat.size] = -math.inf
            else:
                v, i = _walk_rows(g_sub, sub_imm, conns, idx)
                re, _, k = _node(first.connection, v, i)
                with np.errstate(divide="ignore"):
                    ub = pl4_sub * k / np.maximum(1.0 + re + r1min, 0.0) ** 2
                lb[start:start + flat.size] = np.max(w_sub * (1.0 - ub), axis=1)
            n_rest[start:start + flat.size] = sum((o.kinds[ix] != NONE).astype(np.int64)
                                                  for o, ix in zip(rest, idx, strict=True))
        # stage 2: rows with fewer parts first (they set the bar for the larger circuits), each group
        # in order of its bound; every option of position 1 for a visited row. A (row, option) pair is
        # first judged on a few samples (each band's edges and centre), then on an evenly spaced
        # subset: the cost there is a lower bound of its cost over all samples, so a pair already no
        # better than its bar is dropped before the full evaluation (exact, only faster).
        n1 = first.kinds.size
        fitted1 = (first.kinds != NONE).astype(np.int64)
        rchunk = max(1, EVAL_BLOCK // max(probe2.size * n1, 1))
        for group in range(len(rest) + 1):
            members = np.flatnonzero(n_rest == group)
            order = members[np.argsort(lb[members], kind="stable")]
            pos = 0
            while pos < order.size:
                tk = t_keep()
                t_row = float(t_parts(group, tk))
                step = rchunk if math.isfinite(t_row) else 16  # a few rows first, to set the bar
                rows = order[pos:pos + step]
                rows = rows[lb[rows] < t_row]
                if rows.size == 0:
                    break
                pos += step
                idx = np.unravel_index(rows, shape)
                bar = t_parts(group + fitted1, tk)  # per option of position 1
                if np.isfinite(bar).any():
                    v, i = _walk_rows(g_sub, sub_imm, conns, idx)
                    pr = at_probe
                    if general:
                        cp = _cost_vi(v[:, None, pr], i[:, None, pr], pl4_sub[pr], pq_sub[0][None, :, pr],
                                      pq_sub[1][None, :, pr], w_sub[pr])
                    else:
                        re, im, k = _node(first.connection, v, i)
                        pk = pl4_sub * k
                        cp = _cost(re[:, None, pr], im[:, None, pr], pk[:, None, pr], first_sub[None, :, pr],
                                   w_sub[pr])
                    rr, jj = np.nonzero(cp < bar[None, :])
                    if rr.size and probe2.size > probe.size:
                        c2 = np.empty(rr.size)
                        pchunk = max(1, EVAL_BLOCK // probe2.size)
                        for s0 in range(0, rr.size, pchunk):
                            r_, j_ = rr[s0:s0 + pchunk], jj[s0:s0 + pchunk]
                            if general:
                                c2[s0:s0 + r_.size] = _cost_vi(v[r_], i[r_], pl4_sub, pq_sub[0][j_], pq_sub[1][j_],
                                                               w_sub)
                            else:
                                c2[s0:s0 + r_.size] = _cost(re[r_], im[r_], pk[r_], first_sub[j_], w_sub)
                        ok = c2 < bar[jj]
                        rr, jj = rr[ok], jj[ok]
                else:
                    rr, jj = np.divmod(np.arange(rows.size * n1), n1)
                if rr.size == 0:
                    continue
                # the full evaluation, for the rows that still hold a pair
                live, rr = np.unique(rr, return_inverse=True)
                rows = rows[live]
                idx = tuple(ix[live] for ix in idx)
                v, i = _walk_rows(problem.gamma, full_imm, conns, idx)
                if not general:
                    re, im, k = _node(first.connection, v, i)
                    pk = pl4 * k
                cost = np.empty(rr.size)
                pchunk = max(1, EVAL_BLOCK // max(n, 1))
                for s0 in range(0, rr.size, pchunk):
                    r_, j_ = rr[s0:s0 + pchunk], jj[s0:s0 + pchunk]
                    if general:
                        cost[s0:s0 + r_.size] = _cost_vi(v[r_], i[r_], pl4, pq_full[0][j_], pq_full[1][j_], w)
                    else:
                        cost[s0:s0 + r_.size] = _cost(re[r_], im[r_], pk[r_], first.imm[j_], w)
                parts = group + fitted1[jj]
                for m_ in np.unique(parts):
                    best_by_n[m_] = min(best_by_n[m_], float(cost[parts == m_].min()))
                # per pattern of kinds, the cheapest pair of this block
                code_rows = np.zeros(rows.size, dtype=np.int64)
                for o, ix in zip(rest, idx, strict=True):
                    code_rows = code_rows * 3 + o.kinds[ix]
                codes = first.kinds[jj] * (3 ** len(rest)) + code_rows[rr]
                srt = np.lexsort((cost, codes))
                u, first_at = np.unique(codes[srt], return_index=True)
                for code, at in zip(u, first_at, strict=True):
                    p_ = int(srt[at])
                    r, j = int(rr[p_]), int(jj[p_])
                    combo = _decode(int(code), len(opts))
                    key = keys[combo]
                    c = float(cost[p_])
                    if key not in best or c < best[key].cost:
                        vals = (float(first.values[j]),) + tuple(float(o.values[ix[r]]) for o, ix in
                                                                 zip(rest, idx, strict=True))
                        index = (j,) + tuple(int(ix[r]) for ix in idx)
                        best[key] = Found(c, fp, combo, vals, index)
    prefix = np.minimum.accumulate(np.r_[math.inf, best_by_n])
    kept = [f for f in best.values() if f.cost < prefix[sum(k != NONE for k in f.kinds)] / simpler_gain]
    return sorted(kept, key=lambda f: f.cost)[:keep]


def _probe_samples(problem: Problem) -> np.ndarray:
    """Indices of the first, last and middle sample of every run of equal weight and rising frequency
    (the band edges and centres)."""
    f = problem.f_hz
    starts = np.flatnonzero(np.r_[True, (np.diff(f) <= 0) | (np.diff(problem.weight) != 0)])
    ends = np.r_[starts[1:], f.size] - 1
    return np.unique(np.concatenate([starts, ends, (starts + ends) // 2]))


def _cost(re: np.ndarray, im: np.ndarray, pk: np.ndarray, imm: np.ndarray, w: np.ndarray) -> np.ndarray:
    """max over the last axis of w (1 - delivered), delivered = pk / |1 + node + option|^2."""
    den = (1.0 + re + imm.real) ** 2 + (im + imm.imag) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        d = pk / den
    d = np.where(np.isfinite(d), d, 0.0)
    return np.max(w * (1.0 - d), axis=-1)


def _cost_vi(v: np.ndarray, i: np.ndarray, pl4: np.ndarray, p: np.ndarray, q: np.ndarray,
             w: np.ndarray) -> np.ndarray:
    """max over the last axis of w (1 - delivered), delivered = pl4 / |p v + q i|^2 (position 1 a 2-port)."""
    a = p * v + q * i
    with np.errstate(divide="ignore", invalid="ignore"):
        d = pl4 / (a.real ** 2 + a.imag ** 2)
    d = np.where(np.isfinite(d), d, 0.0)
    return np.max(w * (1.0 - d), axis=-1)


def _decode(code: int, k: int) -> tuple[int, ...]:
    out = []
    for _ in range(k):
        code, r = divmod(code, 3)
        out.append(r)
    return tuple(reversed(out))


def cost_of(problem: Problem, connections: Sequence[str], kinds: Sequence[int], values: Sequence[float]) -> float:
    """The cost of one circuit (same formula as the search; used to refine exact values)."""
    v = (1.0 + problem.gamma).astype(complex)
    i = (1.0 - problem.gamma).astype(complex)
    w = TWO_PI * problem.f_hz
    for conn, kind, val in zip(reversed(list(connections)), reversed(list(kinds)), reversed(list(values)),
                               strict=True):
        if kind == NONE:
            continue
        name = KIND_NAMES[kind]
        u = unit_impedance(name, w, problem.q.inductor if kind == INDUCTOR else problem.q.capacitor)
        z = val * u if kind == INDUCTOR else u / val
        if conn == "series":
            v = v + z / problem.z0_ohm * i
        else:
            i = i + problem.z0_ohm / z * v
    a = v + i
    d = 4.0 * (1.0 - np.abs(problem.gamma) ** 2) / (a.real ** 2 + a.imag ** 2)
    return float(np.max(problem.weight * (1.0 - d)))

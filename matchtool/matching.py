"""L-network matching: closed-form synthesis, evaluation on a measured sweep, band optimisation,
standard part values, finite part Q, network loss, the Bode-Fano bound and a tolerance yield.

Conventions
-----------
* A network is a ladder of :class:`Element` listed from the radio (source) side to the antenna
  (load) side. Port 1 of a written 2-port is the radio side, port 2 the antenna side.
* The system impedance ``z0_ohm`` is real; the radio is a source of that impedance.
* Reactance X and susceptance B are positive for inductive / capacitive parts respectively
  (X = w L for a series inductor, B = w C for a shunt capacitor), with w = 2 pi f.
* Finite Q (model): a part of quality factor Q has a series resistance R = |X(f)| / Q at every
  frequency, so its Q is the stated value at the target frequency (and at every other frequency).
  This is a constant-Q model; scikit-rf's ``capacitor_q`` / ``inductor_q`` are not (their Q scales
  with frequency away from the reference frequency).
* ``delivered`` is the power reaching the antenna as a fraction of the power available from the
  radio; ``network_loss_db`` is 10 log10(P_in / P_antenna), the power accepted at the network
  input that does not reach the antenna (0 dB for ideal parts).
* Candidates are ranked by the worst in-band delivered power (which includes part losses).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from . import eseries
from .bands import Band, band_samples, find_bands
from .errors import NoSolutionError, UsageError
from .reflection import impedance_ohm, return_loss_db
from .sweep import Sweep, gamma_at_many

TWO_PI = 2.0 * math.pi


# --------------------------------------------------------------------------- elements and models

@dataclass(frozen=True)
class Element:
    """One part: ``kind`` "inductor"|"capacitor", ``connection`` "series"|"shunt", ``value`` in H or F."""

    kind: str
    connection: str
    value: float

    def __post_init__(self) -> None:
        if self.kind not in ("inductor", "capacitor"):
            raise UsageError(f"element kind {self.kind!r}", expected="inductor or capacitor")
        if self.connection not in ("series", "shunt"):
            raise UsageError(f"element connection {self.connection!r}", expected="series or shunt")
        if not (self.value > 0 and math.isfinite(self.value)):
            raise UsageError(f"element value {self.value!r}", expected="a positive finite value in H or F")

    @property
    def unit(self) -> str:
        """"H" for an inductor, "F" for a capacitor."""
        return "H" if self.kind == "inductor" else "F"

    def with_value(self, value: float) -> Element:
        return replace(self, value=float(value))


@dataclass(frozen=True)
class PartQ:
    """Quality factors of the parts at the target frequency (``inf`` = ideal, lossless)."""

    inductor: float = math.inf
    capacitor: float = math.inf

    def __post_init__(self) -> None:
        for name, q in (("--q-inductor", self.inductor), ("--q-capacitor", self.capacitor)):
            if not q > 0:
                raise UsageError(f"quality factor {q!r}", key=name, expected="a positive Q (inf for ideal)")


@dataclass(frozen=True)
class ValueBounds:
    """Sensible part values (defaults 0.1 pF to 100 nF, 0.5 nH to 10 uH)."""

    c_min_f: float = 0.1e-12
    c_max_f: float = 100e-9
    l_min_h: float = 0.5e-9
    l_max_h: float = 10e-6

    def __post_init__(self) -> None:
        if not (0 < self.c_min_f < self.c_max_f and 0 < self.l_min_h < self.l_max_h):
            raise UsageError("part value bounds", expected="0 < minimum < maximum for L and C")

    def limits(self, kind: str) -> tuple[float, float]:
        return (self.l_min_h, self.l_max_h) if kind == "inductor" else (self.c_min_f, self.c_max_f)

    def admits(self, e: Element) -> bool:
        lo, hi = self.limits(e.kind)
        return lo * (1 - 1e-9) <= e.value <= hi * (1 + 1e-9)


def element_from_reactance(connection: str, x_or_b: float, f_hz: float) -> Element | None:
    """The part that gives reactance X (series, ohm) or susceptance B (shunt, siemens) at ``f_hz``.

    Positive X is an inductor, positive B a capacitor. Returns None for zero (a wire or nothing).
    """
    w = TWO_PI * f_hz
    if x_or_b == 0 or not math.isfinite(x_or_b):
        return None
    if connection == "series":
        return Element("inductor", "series", x_or_b / w) if x_or_b > 0 else Element("capacitor", "series", -1 / (w * x_or_b))
    return Element("capacitor", "shunt", x_or_b / w) if x_or_b > 0 else Element("inductor", "shunt", -1 / (w * x_or_b))


def unit_impedance(kind: str, w: np.ndarray, q: float) -> np.ndarray:
    """Per-unit impedance k such that Z = value * k (inductor, value in H) or Z = k / value
    (capacitor, value in F), with constant quality factor ``q`` (series resistance |X|/q)."""
    loss = 0.0 if math.isinf(q) else 1.0 / q
    if kind == "inductor":
        return w * (loss + 1j)
    return (loss - 1j) / w


def part_impedance(kind: str, value: np.ndarray | float, w: np.ndarray, q: float) -> np.ndarray:
    """Impedance (ohm) of an inductor (value in H) or capacitor (F) at angular frequencies ``w``
    with constant quality factor ``q``: Z = |X|/q + jX."""
    v = np.asarray(value, dtype=float)
    k = unit_impedance(kind, w, q)
    return v * k if kind == "inductor" else k / v


@dataclass(frozen=True)
class Response:
    """Network with load: ``gamma_in`` seen by the radio, ``delivered`` fraction of available power
    reaching the antenna, ``efficiency`` = P_antenna / P_in (1 for ideal parts)."""

    gamma_in: np.ndarray
    delivered: np.ndarray

    @property
    def accepted(self) -> np.ndarray:
        return 1.0 - np.abs(self.gamma_in) ** 2

    @property
    def network_loss_db(self) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            return 10 * np.log10(self.accepted / self.delivered)


def evaluate(f_hz: np.ndarray, gamma_load: np.ndarray, z0_ohm: float, pattern: Sequence[tuple[str, str]],
             values: Sequence[np.ndarray | float], q: PartQ = PartQ()) -> Response:
    """Evaluate a ladder on a load, vectorised.

    ``pattern`` is ((kind, connection), ...) radio side first; ``values`` the matching values, each a
    scalar or an array broadcastable against ``f_hz`` (e.g. shape (trials, 1) for Monte Carlo).
    The load is given by its reflection ``gamma_load`` at ``z0_ohm``. Voltage and current are walked
    from the antenna to the radio (V = 1 + G, I = (1 - G)/Z0 at the load), which handles open and
    short loads without division by zero.
    """
    w = TWO_PI * np.asarray(f_hz, dtype=float)
    units = [unit_impedance(k, w, q.inductor if k == "inductor" else q.capacitor) for k, _ in pattern]
    return _walk(np.asarray(gamma_load, dtype=complex), z0_ohm, pattern, units, values)


def _walk(gl: np.ndarray, z0_ohm: float, pattern: Sequence[tuple[str, str]], units: Sequence[np.ndarray],
          values: Sequence[np.ndarray | float]) -> Response:
    """Core of :func:`evaluate` with the per-unit impedances precomputed (hot loop of the optimiser)."""
    v = 1.0 + gl
    i = (1.0 - gl) / z0_ohm
    for (kind, conn), k, val in zip(reversed(list(pattern)), reversed(list(units)), reversed(list(values)),
                                    strict=True):
        if conn == "series":
            v = v + (val * k if kind == "inductor" else k / val) * i
        else:
            i = i + v * (1.0 / (val * k) if kind == "inductor" else val / k)
    a = v + z0_ohm * i
    gin = (v - z0_ohm * i) / a
    delivered = 4.0 * (1.0 - (gl.real ** 2 + gl.imag ** 2)) / (a.real ** 2 + a.imag ** 2)
    return Response(gin, delivered)


def abcd(f_hz: np.ndarray, elements: Sequence[Element], q: PartQ = PartQ()) -> np.ndarray:
    """ABCD matrices (n, 2, 2) of the ladder, port 1 at the radio, port 2 at the antenna."""
    w = TWO_PI * np.asarray(f_hz, dtype=float)
    m = np.broadcast_to(np.eye(2, dtype=complex), (w.size, 2, 2)).copy()
    for e in elements:
        z = part_impedance(e.kind, e.value, w, q.inductor if e.kind == "inductor" else q.capacitor)
        t = np.broadcast_to(np.eye(2, dtype=complex), (w.size, 2, 2)).copy()
        if e.connection == "series":
            t[:, 0, 1] = z
        else:
            t[:, 1, 0] = 1.0 / z
        m = m @ t
    return m


def s_parameters(f_hz: np.ndarray, elements: Sequence[Element], z0_ohm: float, q: PartQ = PartQ()) -> np.ndarray:
    """S-parameters (n, 2, 2) of the ladder at reference ``z0_ohm`` on both ports (Pozar 4th ed.
    Table 4.2, ABCD to S)."""
    m = abcd(f_hz, elements, q)
    a, b, c, d = m[:, 0, 0], m[:, 0, 1], m[:, 1, 0], m[:, 1, 1]
    den = a + b / z0_ohm + c * z0_ohm + d
    s = np.empty_like(m)
    s[:, 0, 0] = (a + b / z0_ohm - c * z0_ohm - d) / den
    s[:, 0, 1] = 2 * (a * d - b * c) / den
    s[:, 1, 0] = 2 / den
    s[:, 1, 1] = (-a + b / z0_ohm - c * z0_ohm + d) / den
    return s


def passes_dc(elements: Sequence[Element]) -> bool:
    """True when DC flows from radio to antenna: no series capacitor and no shunt inductor."""
    return not any((e.kind == "capacitor") == (e.connection == "series") for e in elements)


def dc_words(elements: Sequence[Element]) -> str:
    """How the network treats DC (bias on the feed): 'passes DC', 'DC blocked (series C)',
    'DC shorted (shunt L: to ground)' or both."""
    blocked = any(e.kind == "capacitor" and e.connection == "series" for e in elements)
    shorted = any(e.kind == "inductor" and e.connection == "shunt" for e in elements)
    if blocked and shorted:
        return "DC blocked + shorted"
    if blocked:
        return "DC blocked (series C)"
    if shorted:
        return "DC shorted (shunt L)"
    return "passes DC"


def filter_character(elements: Sequence[Element]) -> str:
    """"low-pass" (series L / shunt C only), "high-pass" (series C / shunt L only), "all-pass" (no
    part: a direct connection), else "band-pass"."""
    if not elements:
        return "all-pass"
    low = [(e.kind == "inductor") == (e.connection == "series") for e in elements]
    if all(low):
        return "low-pass"
    if not any(low):
        return "high-pass"
    return "band-pass"


# --------------------------------------------------------------------------- closed form

@dataclass(frozen=True)
class LNetwork:
    """A network shape with exact values: ``topology`` and ``elements`` (radio side first)."""

    topology: str  # "shunt-at-antenna", "series-at-antenna", "series", "shunt", "direct" (no part)
    elements: tuple[Element, ...]

    @property
    def pattern(self) -> tuple[tuple[str, str], ...]:
        return tuple((e.kind, e.connection) for e in self.elements)


def _single(topology: str, conn: str, x: float, f_hz: float) -> LNetwork | None:
    e = element_from_reactance(conn, x, f_hz)
    return LNetwork(topology, (e,)) if e else None


def synthesize_at(z_load_ohm: complex, f_hz: float, z0_ohm: float, single_part_rl_db: float | None = None,
                  ) -> list[LNetwork]:
    """All lossless L-sections that match ``z_load_ohm`` to the real ``z0_ohm`` at ``f_hz`` exactly.

    Two topologies (elements listed radio side first):
    * "shunt-at-antenna": series part toward the radio, shunt part at the antenna; needs
      G_L <= 1/Z0 (always true for R_L > Z0; Pozar 4th ed. eqs. 5.3a-b).
    * "series-at-antenna": shunt part toward the radio, series part at the antenna; needs
      R_L <= Z0 (Pozar 4th ed. eqs. 5.6a-b).
    Each gives two solutions, so 0 to 4 in all (0 when R_L <= 0); a load that is Z0 already gives
    the single partless network ``LNetwork("direct", ())``. A solution whose part would have
    zero reactance degenerates to a single part ("series" or "shunt" topology). With
    ``single_part_rl_db`` set, a single series part that cancels X_L or a single shunt part that
    cancels B_L is added when it alone reaches that return loss at ``f_hz``.
    """
    z = complex(z_load_ohm)
    r, x = z.real, z.imag
    if not (r > 0 and math.isfinite(r) and math.isfinite(x) and z0_ohm > 0 and f_hz > 0):
        return []
    out: list[LNetwork] = []
    matched = False  # a solution needs no part at all: the load is Z0 already
    y = 1 / z
    g, b_l = y.real, y.imag
    tol = 1e-12
    # shunt part at the antenna: Y' = G + jB', Re(1/Y') = Z0
    disc = g / z0_ohm - g * g
    if disc >= -tol * g / z0_ohm:
        root = math.sqrt(max(disc, 0.0))
        for bp in ((root, -root) if root > 0 else (0.0,)):
            b_shunt = bp - b_l
            x_series = bp * z0_ohm / g  # cancels X' = -B' Z0 / G
            parts = [element_from_reactance("series", x_series, f_hz), element_from_reactance("shunt", b_shunt, f_hz)]
            parts = [p for p in parts if p is not None]
            topo = "shunt-at-antenna" if len(parts) == 2 else (parts[0].connection if parts else "none")
            if parts:
                out.append(LNetwork(topo, tuple(parts)))
            else:
                matched = True
    # series part at the antenna: Z' = R + jX', Re(1/Z') = 1/Z0
    disc = r * (z0_ohm - r)
    if disc >= -tol * r * z0_ohm:
        root = math.sqrt(max(disc, 0.0))
        for xp in ((root, -root) if root > 0 else (0.0,)):
            x_series = xp - x
            b_shunt = xp / (r * z0_ohm)  # cancels B' = -X' / (R Z0)
            parts = [element_from_reactance("shunt", b_shunt, f_hz), element_from_reactance("series", x_series, f_hz)]
            parts = [p for p in parts if p is not None]
            topo = "series-at-antenna" if len(parts) == 2 else (parts[0].connection if parts else "none")
            if parts:
                out.append(LNetwork(topo, tuple(parts)))
            else:
                matched = True
    if single_part_rl_db is not None:
        g_lim = 10 ** (-single_part_rl_db / 20)
        if abs((r - z0_ohm) / (r + z0_ohm)) <= g_lim:
            s = _single("series", "series", -x, f_hz)
            if s:
                out.append(s)
        if abs((1 / g - z0_ohm) / (1 / g + z0_ohm)) <= g_lim:
            s = _single("shunt", "shunt", -b_l, f_hz)
            if s:
                out.append(s)
    # remove duplicates (same pattern, values equal to 1e-9)
    uniq: list[LNetwork] = []
    for n in out:
        if not any(m.pattern == n.pattern and all(abs(a.value / b.value - 1) < 1e-9
                                                   for a, b in zip(m.elements, n.elements, strict=True))
                   for m in uniq):
            uniq.append(n)
    if matched and not uniq:
        uniq.append(LNetwork("direct", ()))  # no part: connect the load straight to the radio
    return uniq


# --------------------------------------------------------------------------- Bode-Fano

@dataclass(frozen=True)
class BodeFanoBound:
    """Resonator fitted around the band and the Bode-Fano limit for it.

    ``model`` "series RLC" or "parallel RLC"; ``gamma_min`` the smallest flat in-band |Gamma| any
    lossless passive network can reach over the band, ``best_return_loss_db`` = -20 log10 of it.
    """

    model: str
    r_ohm: float
    l_h: float
    c_f: float
    fit_rms_rel: float
    gamma_min: float
    best_return_loss_db: float


def _lstsq(a: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.linalg.lstsq(a, y, rcond=None)[0]


def bode_fano_bound(f_hz: np.ndarray, z_ohm: np.ndarray, f_low_hz: float, f_high_hz: float) -> BodeFanoBound | None:
    """Fit a series and a parallel RLC to ``z_ohm`` (samples over the band) and return the bound of the
    better fit, or None when neither fit is a physical resonator.

    Pozar 4th ed. sec. 5.9: parallel RC, int ln(1/|G|) dw <= pi/(RC) (eq. 5.79), so for a flat
    in-band |G| = Gm over w1..w2, Gm >= exp(-pi/(R C (w2 - w1))) (eq. 5.80). The other forms of the
    same section (from memory for the figure number): series RC, int w^-2 ln(1/|G|) dw <= pi R C;
    series RL, int ln(1/|G|) dw <= pi R / L; parallel RL, int w^-2 ln(1/|G|) dw <= pi L / R. For an
    RLC load either reactive part may be absorbed into the network, so both forms hold and the
    tighter (larger Gm) is reported.
    """
    f = np.asarray(f_hz, dtype=float)
    z = np.asarray(z_ohm, dtype=complex)
    w = TWO_PI * f
    w1, w2 = TWO_PI * f_low_hz, TWO_PI * f_high_hz
    fits: list[BodeFanoBound] = []
    # series RLC: Z = R + j(wL - 1/(wC))
    wc = math.sqrt(w1 * w2)  # scale the columns: w and 1/w differ by ~1e19
    lc = _lstsq(np.column_stack([w / wc, -wc / w]), z.imag) * np.array([1 / wc, wc])
    r = float(np.mean(z.real))
    model_z = r + 1j * (w * lc[0] - lc[1] / w)
    rel = float(np.sqrt(np.mean(np.abs(model_z - z) ** 2)) / np.sqrt(np.mean(np.abs(z) ** 2)))
    lns = []
    if r > 0 and lc[1] > 0:
        lns.append(math.pi * r / lc[1] / (1 / w1 - 1 / w2))  # series RC (C = 1/lc[1])
    if r > 0 and lc[0] > 0:
        lns.append(math.pi * r / lc[0] / (w2 - w1))  # series RL
    if lns:
        g = math.exp(-min(lns))
        fits.append(BodeFanoBound("series RLC", r, float(lc[0]), float(1 / lc[1]) if lc[1] > 0 else math.inf, rel, g,
                                  -20 * math.log10(g) if g > 0 else math.inf))
    # parallel RLC: Y = G + j(wC - 1/(wL))
    y = 1 / z
    cl = _lstsq(np.column_stack([w / wc, -wc / w]), y.imag) * np.array([1 / wc, wc])
    gg = float(np.mean(y.real))
    model_y = gg + 1j * (w * cl[0] - cl[1] / w)
    rel_p = float(np.sqrt(np.mean(np.abs(1 / model_y - z) ** 2)) / np.sqrt(np.mean(np.abs(z) ** 2)))
    lnp = []
    if gg > 0 and cl[0] > 0:
        lnp.append(math.pi * gg / cl[0] / (w2 - w1))  # parallel RC: pi/(R C dw)
    if gg > 0 and cl[1] > 0:
        lnp.append(math.pi * (1 / cl[1]) * gg / (1 / w1 - 1 / w2))  # parallel RL: pi L/R over int w^-2
    if lnp:
        g = math.exp(-min(lnp))
        fits.append(BodeFanoBound("parallel RLC", 1 / gg, float(1 / cl[1]) if cl[1] > 0 else math.inf,
                                  float(cl[0]), rel_p, g, -20 * math.log10(g) if g > 0 else math.inf))
    if not fits:
        return None
    return min(fits, key=lambda b: b.fit_rms_rel)


# --------------------------------------------------------------------------- results

@dataclass(frozen=True)
class Candidate:
    """One ranked network with its performance on the measured sweep."""

    topology: str
    elements: tuple[Element, ...]
    worst_return_loss_db: float  # over the target band (at f0 for a single frequency)
    return_loss_at_f0_db: float
    network_loss_db: float  # largest over the target (0 for ideal parts)
    worst_delivered_fraction: float  # ranking key: worst in-band power reaching the antenna
    passes_dc: bool
    filter: str
    bands: tuple[Band, ...]  # threshold bands of the matched sweep
    yield_fraction: float | None = None


@dataclass(frozen=True)
class YieldSettings:
    """Monte Carlo settings: part values uniform within +-tolerance (common practice, no source)."""

    tolerance_l: float  # fraction, e.g. 0.05
    tolerance_c: float
    trials: int = 2000
    seed: int = 1

    def __post_init__(self) -> None:
        for name, t in (("inductor tolerance", self.tolerance_l), ("capacitor tolerance", self.tolerance_c)):
            if not (0 <= t < 1):
                raise UsageError(f"{name} {t!r}", expected="a fraction from 0 to below 1 (0.05 for 5 %)")
        if self.trials < 1 or self.seed < 0:
            raise UsageError(f"{self.trials} trials with seed {self.seed}", expected="1 or more trials, a seed >= 0")


@dataclass
class MatchResult:
    """Everything ``matchtool match`` reports; candidates are best first."""

    path: str
    z0_ohm: float
    f0_hz: float
    f_low_hz: float | None
    f_high_hz: float | None
    series: str
    q: PartQ
    bounds: ValueBounds
    threshold_return_loss_db: float
    before_worst_return_loss_db: float
    before_return_loss_at_f0_db: float
    before_bands: tuple[Band, ...]
    candidates: list[Candidate]
    bound: BodeFanoBound | None
    yield_settings: YieldSettings | None
    warnings: list[str] = field(default_factory=list)
    rank_by: str = "worst in-band power delivered to the antenna (includes part losses)"
    before_meets_threshold: bool = False  # the antenna alone meets the threshold over the target

    @property
    def no_network_needed(self) -> bool:
        """True when the antenna meets the threshold and no network beats a direct connection by
        more than MEANINGFUL_GAIN_DB (the first candidate is the direct connection)."""
        return self.before_meets_threshold and bool(self.candidates) and not self.candidates[0].elements


# --------------------------------------------------------------------------- helpers

def _target_samples(sweep: Sweep, f_low_hz: float, f_high_hz: float) -> tuple[np.ndarray, np.ndarray]:
    f = sweep.f_hz
    gamma_at_many(f, sweep.gamma, np.array([f_low_hz, f_high_hz]), sweep.path)  # raises outside the sweep
    return band_samples(f, sweep.gamma, f_low_hz, f_high_hz)


def _worst(resp: Response) -> tuple[np.ndarray, np.ndarray]:
    """(worst delivered, worst |Gamma_in|^2) over the last axis."""
    return resp.delivered.min(axis=-1), (np.abs(resp.gamma_in) ** 2).max(axis=-1)


def _snap_options(e: Element, series: str, bounds: ValueBounds) -> np.ndarray:
    lo, hi = bounds.limits(e.kind)
    if series == "exact":
        return np.array([e.value]) if bounds.admits(e) else np.array([])
    vals = eseries.neighbours(e.value, series, 2)
    return vals[(vals >= lo * (1 - 1e-9)) & (vals <= hi * (1 + 1e-9))]


def _best_standard(net: LNetwork, fb: np.ndarray, gb: np.ndarray, z0: float, series: str, q: PartQ,
                   bounds: ValueBounds) -> LNetwork | None:
    """Best neighbouring combination of standard values, judged by worst delivered power on (fb, gb)."""
    opts = [_snap_options(e, series, bounds) for e in net.elements]
    if any(o.size == 0 for o in opts):
        return None
    grids = np.meshgrid(*opts, indexing="ij")
    flat = [g.reshape(-1, 1) for g in grids]
    worst_del, _ = _worst(evaluate(fb, gb, z0, net.pattern, flat, q))
    k = int(np.argmax(worst_del))
    return LNetwork(net.topology, tuple(e.with_value(float(v[k, 0])) for e, v in zip(net.elements, flat, strict=True)))


CHUNK_POINTS = 65_536


def _yield(net: LNetwork, fb: np.ndarray, gb: np.ndarray, z0: float, q: PartQ, ys: YieldSettings,
           threshold_db: float) -> float:
    """Fraction of Monte Carlo builds whose worst return loss over (fb) meets ``threshold_db``."""
    rng = np.random.default_rng(ys.seed)
    g_lim2 = 10 ** (-threshold_db / 10)
    if not net.elements:  # a direct connection has no part to vary: every build is the load itself
        return 1.0 if float(np.max(np.abs(gb) ** 2)) <= g_lim2 else 0.0
    tols = [ys.tolerance_l if e.kind == "inductor" else ys.tolerance_c for e in net.elements]
    draws = [e.value * (1 + t * rng.uniform(-1, 1, size=(ys.trials, 1))) for e, t in zip(net.elements, tols, strict=True)]
    w = TWO_PI * fb
    units = [unit_impedance(k, w, q.inductor if k == "inductor" else q.capacitor) for k, _ in net.pattern]
    chunk = max(1, CHUNK_POINTS // max(fb.size, 1))  # small blocks stay in cache
    passed = 0
    for start in range(0, ys.trials, chunk):
        vals = [d[start:start + chunk] for d in draws]
        gin = _walk(gb, z0, net.pattern, units, vals).gamma_in
        worst_g2 = (gin.real ** 2 + gin.imag ** 2).max(axis=-1)
        passed += int(np.count_nonzero(worst_g2 <= g_lim2))
    return passed / ys.trials


def _candidate(net: LNetwork, sweep: Sweep, z0: float, fb: np.ndarray, gb: np.ndarray, f0: float, g0: complex,
               q: PartQ, threshold_db: float, ys: YieldSettings | None) -> Candidate:
    vals = [e.value for e in net.elements]
    rb = evaluate(fb, gb, z0, net.pattern, vals, q)
    r0 = evaluate(np.array([f0]), np.array([g0]), z0, net.pattern, vals, q)
    rf = evaluate(sweep.f_hz, sweep.gamma, z0, net.pattern, vals, q)
    worst_del, worst_g2 = _worst(rb)
    with np.errstate(divide="ignore"):
        worst_rl = float(-10 * np.log10(worst_g2))
    loss = float(np.nanmax(rb.network_loss_db)) if np.isfinite(rb.network_loss_db).any() else math.nan
    loss = max(loss, 0.0) if math.isinf(q.inductor) and math.isinf(q.capacitor) and abs(loss) < 1e-9 else loss
    bands = tuple(find_bands(sweep.f_hz, return_loss_db(rf.gamma_in), threshold_db))
    yf = _yield(net, fb, gb, z0, q, ys, threshold_db) if ys is not None else None
    return Candidate(net.topology, net.elements, worst_rl, float(return_loss_db(r0.gamma_in)[0]), loss,
                     float(worst_del), passes_dc(net.elements), filter_character(net.elements), bands, yf)


def _check_common(series: str, threshold_db: float) -> str:
    s = eseries.normalize_series_name(series)
    if not (threshold_db >= 0 and math.isfinite(threshold_db)):
        raise UsageError(f"threshold {threshold_db!r} dB", expected="a positive return loss in dB")
    return s


def _z0(sweep: Sweep) -> float:
    return float(sweep.z0_ohm)


# Practicality of a part, judged by its reactance at the target centre relative to the system
# impedance Z0 (common practice, no source; the limits are this tool's choice). A part that alone,
# inserted in a Z0 line, would reflect less than |Gamma| ~ 0.02 (return loss above ~34 dB) does
# nothing a technician could measure: a series part with |X| < 0.04 Z0 (2 ohm at 50 ohm) is a wire,
# a shunt part with |X| > 25 Z0 (1.25 kohm) is an open; such parts are also far past a real part's
# self-resonance at that frequency (a 240 pF capacitor or a 910 nH inductor at 915 MHz, from memory
# of typical chip-part data). They are removed and the network reduced to the parts that matter.
# At the other extreme a series part with |X| > 50 Z0 blocks the signal and a shunt part with
# |X| < 0.02 Z0 shorts it; a network that relies on one is dropped.
SERIES_WIRE_X_PER_Z0 = 0.04
SHUNT_OPEN_X_PER_Z0 = 25.0
SERIES_BLOCK_X_PER_Z0 = 50.0
SHUNT_SHORT_X_PER_Z0 = 0.02
# A network must raise the worst in-band delivered power by more than this over a direct connection
# to be listed above it when the antenna already meets the threshold (a choice, no source: about 5 %
# more power, comparable to what 5 % parts and pad parasitics move).
MEANINGFUL_GAIN_DB = 0.2


def part_role(e: Element, f_hz: float, z0_ohm: float) -> str:
    """How a part acts at ``f_hz`` in a ``z0_ohm`` system: "part" (does something), "wire" (a series
    part with |X| < 0.04 Z0), "open" (a shunt part with |X| > 25 Z0), "blocking" (series |X| > 50 Z0)
    or "shorting" (shunt |X| < 0.02 Z0). Limits: common practice, no source (see the module text)."""
    x_ohm = abs(float(part_impedance(e.kind, e.value, np.array([TWO_PI * f_hz]), math.inf)[0].imag))
    ratio = x_ohm / z0_ohm
    if e.connection == "series":
        if ratio < SERIES_WIRE_X_PER_Z0:
            return "wire"
        if ratio > SERIES_BLOCK_X_PER_Z0:
            return "blocking"
    else:
        if ratio > SHUNT_OPEN_X_PER_Z0:
            return "open"
        if ratio < SHUNT_SHORT_X_PER_Z0:
            return "shorting"
    return "part"


def practical(net: LNetwork, f_hz: float, z0_ohm: float) -> LNetwork | None:
    """``net`` without its wire-like / open-like parts (see :func:`part_role`), or None when a part
    blocks or shorts the signal. A network left with no part is ``LNetwork("direct", ())``."""
    roles = [part_role(e, f_hz, z0_ohm) for e in net.elements]
    if any(r in ("blocking", "shorting") for r in roles):
        return None
    keep = tuple(e for e, r in zip(net.elements, roles, strict=True) if r == "part")
    if len(keep) == len(net.elements):
        return net
    if not keep:
        return LNetwork("direct", ())
    return LNetwork(keep[0].connection if len(keep) == 1 else net.topology, keep)


def _finish(sweep: Sweep, nets: list[LNetwork], fb: np.ndarray, gb: np.ndarray, f0: float, f_low: float | None,
            f_high: float | None, series: str, q: PartQ, bounds: ValueBounds, threshold_db: float,
            ys: YieldSettings | None, bound: BodeFanoBound | None, warnings: list[str], max_candidates: int,
            ) -> MatchResult:
    z0 = _z0(sweep)
    g0 = complex(gamma_at_many(sweep.f_hz, sweep.gamma, np.array([f0]), sweep.path)[0])
    before_g2 = float(np.max(np.abs(gb) ** 2))
    with np.errstate(divide="ignore"):
        before = float(-10 * np.log10(before_g2))
    meets = bool(before >= threshold_db)
    snapped: list[LNetwork] = []
    dropped = 0
    impractical = 0
    reduced = 0
    for n in nets:
        s = _best_standard(n, fb, gb, z0, series, q, bounds)
        if s is None:
            dropped += 1
            continue
        p = practical(s, f0, z0)
        if p is None:
            impractical += 1
            continue
        if p is not s:
            reduced += 1
        if not any(m.pattern == p.pattern and m.elements == p.elements for m in snapped):
            snapped.append(p)
    direct = LNetwork("direct", ())
    if not snapped and not meets:
        detail = []
        if dropped:
            detail.append(f"{dropped} fell outside the bounds")
        if impractical:
            detail.append(f"{impractical} needed a part that blocks or shorts the signal")
        raise NoSolutionError(
            f"no L-network with practical part values inside the bounds matches this load"
            f"{' (' + '; '.join(detail) + ')' if detail else ''}",
            path=sweep.path, expected=f"C {bounds.c_min_f:.3g}..{bounds.c_max_f:.3g} F, "
                                      f"L {bounds.l_min_h:.3g}..{bounds.l_max_h:.3g} H (see --c-range, --l-range)")
    if dropped:
        warnings.append(f"{sweep.path}: {dropped} network(s) left out: a part value falls outside the bounds")
    if impractical:
        warnings.append(f"{sweep.path}: {impractical} network(s) left out: a part would block or short the signal "
                        f"at {f0 / 1e6:.6g} MHz (series |X| > {SERIES_BLOCK_X_PER_Z0:g} Z0 or shunt |X| < "
                        f"{SHUNT_SHORT_X_PER_Z0:g} Z0)")
    if reduced:
        warnings.append(f"{sweep.path}: {reduced} network(s) reduced: a part that acts as a wire (series |X| < "
                        f"{SERIES_WIRE_X_PER_Z0:g} Z0) or an open (shunt |X| > {SHUNT_OPEN_X_PER_Z0:g} Z0) "
                        f"at {f0 / 1e6:.6g} MHz was removed")
    if meets and not any(not n.elements for n in snapped):
        snapped.append(direct)
    cands = [_candidate(n, sweep, z0, fb, gb, f0, g0, q, threshold_db, None) for n in snapped]
    cands.sort(key=lambda c: -c.worst_delivered_fraction)
    rank_by = MatchResult.rank_by
    direct_c = next((c for c in cands if not c.elements), None)
    if direct_c is not None and meets:
        # no part that does not beat a plain connection; a direct connection above the marginal ones
        floor = direct_c.worst_delivered_fraction
        better = [c for c in cands if c.elements and c.worst_delivered_fraction > floor * (1 + 1e-12)]
        gain = 10 ** (MEANINGFUL_GAIN_DB / 10)
        cands = ([c for c in better if c.worst_delivered_fraction > floor * gain] + [direct_c]
                 + [c for c in better if c.worst_delivered_fraction <= floor * gain])
        rank_by = (f"{rank_by}; the antenna already meets the threshold, so the direct connection (no part) is "
                   f"listed above every network that gains less than {MEANINGFUL_GAIN_DB:g} dB over it, and "
                   "networks that gain nothing are left out")
    cands = cands[:max_candidates]
    if ys is not None:
        cands = [replace(c, yield_fraction=_yield(LNetwork(c.topology, c.elements), fb, gb, z0, q, ys, threshold_db))
                 for c in cands]
    return MatchResult(sweep.path, z0, f0, f_low, f_high, series, q, bounds, threshold_db, before,
                       float(return_loss_db(g0)), tuple(find_bands(sweep.f_hz, return_loss_db(sweep.gamma), threshold_db)),
                       cands, bound, ys, warnings, rank_by=rank_by, before_meets_threshold=meets)


# --------------------------------------------------------------------------- public design entry points

def design_at(sweep: Sweep, f0_hz: float, series: str = "E24", q: PartQ = PartQ(),
              bounds: ValueBounds = ValueBounds(), threshold_db: float = 10.0,
              yield_settings: YieldSettings | None = None, max_candidates: int = 6) -> MatchResult:
    """Closed-form L-sections for the measured load at ``f0_hz`` (Hz), snapped to ``series`` and
    ranked by delivered power at f0. Raises OutOfRangeError outside the sweep, NoSolutionError when
    no network fits (load with R <= 0, or every solution outside ``bounds``)."""
    series = _check_common(series, threshold_db)
    z0 = _z0(sweep)
    g0 = complex(gamma_at_many(sweep.f_hz, sweep.gamma, np.array([f0_hz]), sweep.path)[0])
    zl = complex(impedance_ohm(g0, z0))
    if not (abs(g0) < 1 - LOSSLESS_TOL):
        raise NoSolutionError(f"the load at {f0_hz / 1e6:.6g} MHz has |Gamma| = {abs(g0):.4f} >= 1 "
                              "(no resistance to match)", path=sweep.path, expected="a lossy passive load")
    nets = synthesize_at(zl, f0_hz, z0, single_part_rl_db=threshold_db)
    if not nets:
        raise NoSolutionError(f"no L-network matches {zl.real:.4g}{zl.imag:+.4g}j ohm at {f0_hz / 1e6:.6g} MHz",
                              path=sweep.path)
    fb, gb = np.array([f0_hz]), np.array([g0])
    warnings = list(sweep.warnings)
    return _finish(sweep, nets, fb, gb, f0_hz, None, None, series, q, bounds, threshold_db, yield_settings, None,
                   warnings, max_candidates)


MIN_BAND_SAMPLES = 3
ROUGH_FIT = 0.1  # relative rms misfit of the resonator model above which the bound is flagged
LOSSLESS_TOL = 1e-9  # |Gamma| within this of 1 counts as a lossless (unmatchable) load


def nelder_mead(cost, x0: np.ndarray, step: float = 0.05, xatol: float = 1e-4, fatol: float = 1e-9,
                maxiter: int | None = None) -> tuple[np.ndarray, float]:
    """Minimise ``cost(x) -> float`` from ``x0`` with the Nelder-Mead simplex; returns (x, cost(x)).

    Standard coefficients (reflection 1, expansion 2, contraction 0.5, shrink 0.5; Nelder & Mead,
    Computer Journal 7 (1965) 308). Initial simplex as scipy's: each vertex moves one coordinate
    by ``step`` (5 %) of its value, or by 0.00025 where the coordinate is 0. Stops, like scipy's
    ``minimize(method="Nelder-Mead")``, when every vertex is within ``xatol`` of the best in every
    coordinate and every vertex cost within ``fatol`` of the best, or after ``maxiter`` iterations
    (default 200 per dimension, scipy's default). Small and dependency-free so that ``match`` does
    not pay for importing scipy.optimize.
    """
    x0 = np.asarray(x0, dtype=float).ravel()
    n = x0.size
    if maxiter is None:
        maxiter = 200 * n
    simplex = np.empty((n + 1, n))
    simplex[0] = x0
    for i in range(n):
        v = x0.copy()
        v[i] = (1 + step) * v[i] if v[i] != 0 else 0.00025
        simplex[i + 1] = v
    fs = np.array([cost(p) for p in simplex], dtype=float)
    for _ in range(maxiter):
        order = np.argsort(fs, kind="stable")
        simplex, fs = simplex[order], fs[order]
        if np.max(np.abs(simplex[1:] - simplex[0])) <= xatol and np.max(np.abs(fs[1:] - fs[0])) <= fatol:
            break
        centroid = simplex[:-1].mean(axis=0)
        xr = 2.0 * centroid - simplex[-1]
        fr = cost(xr)
        if fr < fs[0]:
            xe = 3.0 * centroid - 2.0 * simplex[-1]
            fe = cost(xe)
            simplex[-1], fs[-1] = (xe, fe) if fe < fr else (xr, fr)
        elif fr < fs[-2]:
            simplex[-1], fs[-1] = xr, fr
        else:
            outside = fr < fs[-1]
            xc = centroid + 0.5 * ((xr if outside else simplex[-1]) - centroid)
            fc = cost(xc)
            if (fc <= fr) if outside else (fc < fs[-1]):  # scipy's acceptance rules
                simplex[-1], fs[-1] = xc, fc
            else:
                simplex[1:] = simplex[0] + 0.5 * (simplex[1:] - simplex[0])
                fs[1:] = [cost(p) for p in simplex[1:]]
    k = int(np.argmin(fs))
    return simplex[k].copy(), float(fs[k])


def _optimise(net: LNetwork, fb: np.ndarray, gb: np.ndarray, z0: float, q: PartQ, bounds: ValueBounds) -> LNetwork:
    """Refine values to maximise the worst in-band delivered power (minimax, Nelder-Mead in log values)."""
    x0 = np.log([e.value for e in net.elements])
    lo = np.log([bounds.limits(e.kind)[0] for e in net.elements])
    hi = np.log([bounds.limits(e.kind)[1] for e in net.elements])
    pattern = net.pattern
    w = TWO_PI * fb
    units = [unit_impedance(k, w, q.inductor if k == "inductor" else q.capacitor) for k, _ in pattern]

    def cost(x: np.ndarray) -> float:
        xc = np.minimum(np.maximum(x, lo), hi)
        r = _walk(gb, z0, pattern, units, np.exp(xc))
        return float(-r.delivered.min() + np.sum((x - xc) ** 2))

    xbest, fbest = nelder_mead(cost, x0, xatol=1e-4, fatol=1e-9, maxiter=300 * len(x0))
    x = np.clip(xbest, lo, hi) if fbest <= cost(x0) else np.clip(x0, lo, hi)
    return LNetwork(net.topology, tuple(e.with_value(float(v)) for e, v in zip(net.elements, np.exp(x), strict=True)))


def design_for_band(sweep: Sweep, f_low_hz: float, f_high_hz: float, series: str = "E24", q: PartQ = PartQ(),
                    bounds: ValueBounds = ValueBounds(), threshold_db: float = 10.0,
                    yield_settings: YieldSettings | None = None, max_candidates: int = 6,
                    start_points: int = 5) -> MatchResult:
    """Networks that maximise the worst in-band delivered power over [f_low_hz, f_high_hz] on the
    measured sweep. Starts from the closed-form solutions at ``start_points`` frequencies across the
    band, refines each shape by a minimax search, snaps to ``series`` (best neighbouring combination
    on the sweep), and reports the Bode-Fano bound of a resonator fitted over the band.
    """
    series = _check_common(series, threshold_db)
    if not (f_high_hz > f_low_hz):
        raise UsageError("band edges", expected="f_low < f_high")
    z0 = _z0(sweep)
    fb, gb = _target_samples(sweep, f_low_hz, f_high_hz)
    inside = int(np.count_nonzero((sweep.f_hz >= f_low_hz) & (sweep.f_hz <= f_high_hz)))
    if inside < MIN_BAND_SAMPLES:
        step = float(np.median(np.diff(sweep.f_hz))) if sweep.f_hz.size > 1 else math.nan
        raise UsageError(f"band {f_low_hz / 1e6:.6g} to {f_high_hz / 1e6:.6g} MHz holds only {inside} measured "
                         f"sample(s) (sweep step {step / 1e6:.4g} MHz)", path=sweep.path,
                         expected=f"a band holding at least {MIN_BAND_SAMPLES} samples, or --at FREQ")
    if not np.any(np.abs(gb) < 1 - LOSSLESS_TOL):
        raise NoSolutionError("the load has no resistance anywhere in the band (|Gamma| = 1), nothing to match",
                              path=sweep.path, expected="a lossy passive load")
    f0 = 0.5 * (f_low_hz + f_high_hz)
    starts = np.linspace(f_low_hz, f_high_hz, max(start_points, 1)) if start_points > 1 else np.array([f0])
    gs = gamma_at_many(sweep.f_hz, sweep.gamma, starts, sweep.path)
    seeds: list[LNetwork] = []
    for fs, g in zip(starts, gs, strict=True):
        if abs(g) >= 1 - LOSSLESS_TOL:
            continue
        for n in synthesize_at(complex(impedance_ohm(g, z0)), float(fs), z0, single_part_rl_db=None):
            seeds.append(n)
    # single parts: cancel the reactance (series) or susceptance (shunt) at the centre
    gc = complex(gamma_at_many(sweep.f_hz, sweep.gamma, np.array([f0]), sweep.path)[0])
    if abs(gc) < 1 - LOSSLESS_TOL:
        zc = complex(impedance_ohm(gc, z0))
        for s in (_single("series", "series", -zc.imag, f0), _single("shunt", "shunt", -(1 / zc).imag, f0)):
            if s:
                seeds.append(s)
    if not seeds:
        raise NoSolutionError("no L-network matches this load over the band (no resistance to match)",
                              path=sweep.path)
    # per shape, refine from the two best starting points (the minimax is usually unimodal per shape)
    by_shape: dict[tuple, list[tuple[float, LNetwork]]] = {}
    for n in seeds:
        clipped = LNetwork(n.topology, tuple(e.with_value(min(max(e.value, bounds.limits(e.kind)[0]),
                                                                  bounds.limits(e.kind)[1])) for e in n.elements))
        v = float(evaluate(fb, gb, z0, clipped.pattern, [e.value for e in clipped.elements], q).delivered.min())
        by_shape.setdefault((n.topology, n.pattern), []).append((v, clipped))
    best: dict[tuple, LNetwork] = {}
    best_val: dict[tuple, float] = {}
    for key, starts_ in by_shape.items():
        starts_.sort(key=lambda t: -t[0])
        for _, n in starts_[:2]:
            o = _optimise(n, fb, gb, z0, q, bounds)
            v = float(evaluate(fb, gb, z0, o.pattern, [e.value for e in o.elements], q).delivered.min())
            if key not in best or v > best_val[key]:
                best[key], best_val[key] = o, v
    nets = list(best.values())
    # a single part is offered only where it suffices (reaches the threshold over the band)
    lim = 1 - 10 ** (-threshold_db / 10)
    nets = [n for n in nets if len(n.elements) == 2 or best_val[(n.topology, n.pattern)] >= lim * 0.999]
    warnings = list(sweep.warnings)
    zb = impedance_ohm(gb, z0)
    ok = np.abs(gb) < 1
    bound = bode_fano_bound(fb[ok], zb[ok], f_low_hz, f_high_hz) if ok.sum() >= MIN_BAND_SAMPLES else None
    if bound is None:
        warnings.append(f"{sweep.path}: no resonator model fits the band; Bode-Fano bound not given")
    elif bound.fit_rms_rel > ROUGH_FIT:
        warnings.append(f"{sweep.path}: the {bound.model} model fits the band only roughly "
                        f"({100 * bound.fit_rms_rel:.0f} % rms); the Bode-Fano bound is indicative")
    return _finish(sweep, nets, fb, gb, f0, f_low_hz, f_high_hz, series, q, bounds, threshold_db, yield_settings,
                   bound, warnings, max_candidates)


def network_2port(f_hz: np.ndarray, elements: Sequence[Element], z0_ohm: float, q: PartQ = PartQ(),
                  name: str = "matching network"):
    """The ladder as an ``skrf.Network`` 2-port (port 1 radio, port 2 antenna) at ``z0_ohm``."""
    import skrf

    freq = skrf.Frequency.from_f(np.asarray(f_hz, dtype=float), unit="Hz")
    return skrf.Network(frequency=freq, s=s_parameters(f_hz, elements, z0_ohm, q), z0=z0_ohm, name=name)


def matched_network(sweep: Sweep, elements: Sequence[Element], q: PartQ = PartQ()):
    """The antenna seen through the network, as an ``skrf.Network`` 1-port at the sweep's Z0."""
    import skrf

    freq = skrf.Frequency.from_f(sweep.f_hz, unit="Hz")
    g = gamma_matched(sweep, elements, q)
    return skrf.Network(frequency=freq, s=g.reshape(-1, 1, 1), z0=_z0(sweep), name=f"{sweep.name} matched")


def gamma_matched(sweep: Sweep, elements: Sequence[Element], q: PartQ = PartQ()) -> np.ndarray:
    """Gamma seen by the radio over the whole sweep with the network in place (at the sweep's Z0)."""
    pattern = tuple((e.kind, e.connection) for e in elements)
    return evaluate(sweep.f_hz, sweep.gamma, _z0(sweep), pattern, [e.value for e in elements], q).gamma_in


__all__ = ["Element", "PartQ", "ValueBounds", "LNetwork", "Response", "Candidate", "MatchResult", "YieldSettings",
           "BodeFanoBound", "synthesize_at", "evaluate", "abcd", "s_parameters", "passes_dc", "dc_words", "filter_character",
           "bode_fano_bound", "design_at", "design_for_band", "gamma_matched", "element_from_reactance",
           "part_impedance", "unit_impedance", "network_2port", "matched_network", "nelder_mead", "part_role",
           "practical"]

"""Ladder networks: parts, the constant-Q part model, evaluation on a load, ABCD / S-parameters,
closed-form L-sections and the practicality of a part.

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
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from ..errors import UsageError
from ..sweep import Sweep

TWO_PI = 2.0 * math.pi


# --------------------------------------------------------------------------- elements and models

@dataclass(frozen=True)
class Element:
    """One part: ``kind`` "inductor"|"capacitor", ``connection`` "series"|"shunt", ``value`` in H or F;
    ``position`` the footprint position (1 = radio side) or None for a free-standing ladder; ``label``
    the parts library's name of the part when it comes from one (None otherwise)."""

    kind: str
    connection: str
    value: float
    position: int | None = field(default=None, compare=False)  # placement, not part of the part's identity
    label: str | None = field(default=None, compare=False)  # a library part's name (None: an ideal part)

    def __post_init__(self) -> None:
        if self.kind not in ("inductor", "capacitor"):
            raise UsageError("unknown part kind", parameter="kind", value=self.kind, expected="inductor or capacitor")
        if self.connection not in ("series", "shunt"):
            raise UsageError("unknown connection", parameter="connection", value=self.connection,
                             expected="series or shunt")
        if not (self.value > 0 and math.isfinite(self.value)):
            raise UsageError("part value", parameter="value", value=self.value,
                             expected="a positive finite value in H or F")

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
        for name, q in (("q_inductor", self.inductor), ("q_capacitor", self.capacitor)):
            if not q > 0:
                raise UsageError("quality factor must be positive", parameter=name, value=q,
                                 expected="a positive Q (inf for ideal)")


@dataclass(frozen=True)
class ValueBounds:
    """Sensible part values (defaults 0.1 pF to 100 nF, 0.5 nH to 10 uH)."""

    c_min_f: float = 0.1e-12
    c_max_f: float = 100e-9
    l_min_h: float = 0.5e-9
    l_max_h: float = 10e-6

    def __post_init__(self) -> None:
        if not (0 < self.c_min_f < self.c_max_f):
            raise UsageError("capacitor value range", parameter="c_range_f", value=(self.c_min_f, self.c_max_f),
                             expected="0 < minimum < maximum")
        if not (0 < self.l_min_h < self.l_max_h):
            raise UsageError("inductor value range", parameter="l_range_h", value=(self.l_min_h, self.l_max_h),
                             expected="0 < minimum < maximum")

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


def dc_path(elements: Sequence[Element]) -> str:
    """What the network does to DC from the radio to the antenna (bias on the feed): "passes",
    "blocked" (a series capacitor), "shorted" (a shunt inductor to ground) or "blocked+shorted"."""
    blocked = any(e.kind == "capacitor" and e.connection == "series" for e in elements)
    shorted = any(e.kind == "inductor" and e.connection == "shunt" for e in elements)
    if blocked and shorted:
        return "blocked+shorted"
    if blocked:
        return "blocked"
    if shorted:
        return "shorted"
    return "passes"


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
    return skrf.Network(frequency=freq, s=g.reshape(-1, 1, 1), z0=float(sweep.z0_ohm), name=f"{sweep.name} matched")


def gamma_matched(sweep: Sweep, elements: Sequence[Element], q: PartQ = PartQ()) -> np.ndarray:
    """Gamma seen by the radio over the whole sweep with the network in place (at the sweep's Z0)."""
    pattern = tuple((e.kind, e.connection) for e in elements)
    return evaluate(sweep.f_hz, sweep.gamma, float(sweep.z0_ohm), pattern, [e.value for e in elements], q).gamma_in


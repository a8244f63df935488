"""Where along the feed the reflection sits: the time-domain view of a reflection sweep.

The inverse Fourier transform of S11(f) is the reflection versus round-trip time; scaled by the
cable's velocity factor it is the reflection versus one-way distance from the analyzer's reference
plane. Time gating keeps the reflections inside a distance window and drops the rest (connector and
fixture echoes), giving back a sweep.

Conventions and relations
-------------------------
- Distances in metres, one way from the reference plane: d = VF c0 t / 2, t the round-trip time.
- Range resolution: c0 VF / (2 B) times the window's widening factor, with B the span the
  transform sees (f_stop - f_start in band-pass mode; 2 f_stop in low-pass mode, whose spectrum
  is mirrored about 0 Hz). Alias-free range: c0 VF / (2 df), df the frequency step. (The time
  relations of the discrete Fourier transform: Oppenheim & Schafer, Discrete-Time Signal
  Processing, 3rd ed., ch. 8; applied to distance as common practice.)
- Window widening factor: the window's -6 dB main-lobe width over the rectangular window's
  (1.21 bins; Harris, Proc. IEEE 66(1), 1978, Table 1). Both the width and the highest sidelobe are
  measured here on the window itself (:func:`window_info`), not copied from a table.
- ``reflection_mag`` is |Gamma| of a reflection alone, as if it were the only one: the transform is
  scaled by the window's coherent gain, and compensated for the cable's two-way loss at its
  distance (``raw_reflection_mag`` is without that compensation). A reflection behind another one
  is also dimmed by the earlier one's transmission (1 - |Gamma_1|^2); that is not compensated.
- Band-pass mode (a sweep that does not start near 0 Hz) gives magnitude only. Low-pass mode needs a
  harmonic grid (f_start a whole number of steps); the missing points down to 0 Hz are extrapolated
  with ``skrf.Network.extrapolate_to_dc`` and the response is real, so its sign means something:
  in ``lowpass-step`` mode a step up is a higher impedance, a dip a shunt capacitance, a bump a
  series inductance (common practice, no source; derived: a small shunt C has
  Gamma ~ -j omega C Z0 / 2, whose step response is a negative pulse).

scikit-rf does the transforms (``Network.impulse_response``, ``step_response``,
``extrapolate_to_dc``, ``skrf.time.time_gate``, ``skrf.time.indexes``). Windows are numpy's
(``np.kaiser``, ``np.hanning``), passed to scikit-rf as callables: ``scipy.signal``, which scikit-rf
would otherwise call for a named window, costs more start-up time than the whole command.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .bands import band_samples, sweep_covers
from .errors import OutOfRangeError, UsageError
from .feedline import C0_M_PER_S, CableModel
from .numeric import median

MODES = ("auto", "bandpass", "lowpass-impulse", "lowpass-step")
"""``auto`` picks low-pass on a harmonic sweep from near 0 Hz, band-pass otherwise."""

MAX_EXTRAPOLATED_FRACTION = 0.10
"""Low-pass modes are refused when the points extrapolated down to 0 Hz would be more than this
fraction of the transform's points (sweep plus extrapolation): beyond it the view is mostly a guess
(our choice; common practice, no source)."""

AUTO_LOWPASS_MAX_START = 0.05
"""``auto`` uses low-pass when the sweep is harmonic and starts below this fraction of its stop."""

PAD_FACTOR = 4
"""The transform is zero-padded to this many times the sweep's length (smoother trace, peaks to a
quarter of a sample); padding adds no resolution."""

TRACE_POINTS = 1000
"""At most this many points in the sampled trace (peak-preserving) that JSON and pictures use."""

NOISE_MARGIN_DB = 10.0
"""Default noise floor: this far above the median of the uncompensated trace."""

SIDELOBE_MARGIN_DB = 10.0
"""A reflection is listed only this far above the window sidelobes (at its distance) of every stronger
one: a reflection whose spectrum is not flat (a reactive one rises with f, a lossy cable tilts it)
raises them (checked in the tests)."""

DYNAMIC_RANGE_DB = 40.0
"""Without ``floor_return_loss_db``, nothing more than this below the strongest reflection (at the
analyzer) is listed: the time-domain dynamic range a calibrated analyzer sweep usually has
(common practice, no source); a given floor replaces it."""

PROMINENCE_DB = 3.0
"""A listed reflection stands at least this far (dB, at the analyzer) above the lowest point between it
and the nearest stronger response on either side (its topographic prominence); ripples on the skirt or
the dispersive tail of a stronger reflection do not (checked in the tests)."""

WRAP_GUARD = 3.0
"""No reflection is listed within this many resolutions below the alias-free range (see above)."""

NONPHYSICAL_TOL = 1e-3
"""A compensated |Gamma| above 1 + this is not listed (a passive feed cannot reflect more than it receives)."""

_RECT_6DB_BINS = 1.2067  # -6 dB main-lobe width of the rectangular window, DFT bins (measured below)


@dataclass(frozen=True)
class WindowInfo:
    """A frequency-domain window for the transform. ``sidelobe_db``: highest sidelobe relative to the
    main lobe (negative dB); ``mainlobe_6db_bins``: -6 dB main-lobe width in DFT bins;
    ``widening``: that width over the rectangular window's (the factor on the range resolution)."""

    name: str
    label: str
    sidelobe_db: float
    mainlobe_6db_bins: float
    widening: float


_WINDOWS: dict[str, tuple[str, Callable[[int], np.ndarray]]] = {
    "kaiser": ("Kaiser, beta 6", lambda n: np.kaiser(n, 6.0)),
    "kaiser13": ("Kaiser, beta 13", lambda n: np.kaiser(n, 13.0)),
    "hann": ("Hann", np.hanning),
    "rect": ("rectangular (no window)", np.ones),
}
WINDOWS = tuple(_WINDOWS)
DEFAULT_WINDOW = "kaiser"


def _window_fn(name: str) -> Callable[[int], np.ndarray]:
    key = str(name).strip().lower()
    if key not in _WINDOWS:
        raise UsageError("is not a window of this tool", parameter="window", value=name,
                         expected=", ".join(WINDOWS))
    return _WINDOWS[key][1]


@functools.cache
def window_info(name: str) -> WindowInfo:
    """Measure a window's highest sidelobe and -6 dB main-lobe width on its own transform
    (256 samples, zero-padded 64 times; derived, not from a table)."""
    key = str(name).strip().lower()
    w = _window_fn(key)(256)
    over = 64
    spec = np.abs(np.fft.rfft(w, 256 * over))
    spec = spec / spec[0]
    # main lobe: from 0 up to the first minimum; its -6 dB half-width, interpolated
    d = np.diff(spec)
    first_min = int(np.argmax(d > 0)) if np.any(d > 0) else spec.size - 1
    k = int(np.argmax(spec < 0.5))
    half = (k - 1) + (spec[k - 1] - 0.5) / (spec[k - 1] - spec[k])
    width_bins = 2 * half / over
    side = spec[first_min:]
    side_db = 20 * math.log10(max(float(side.max()), 1e-300)) if side.size else -math.inf
    return WindowInfo(name=key, label=_WINDOWS[key][0], sidelobe_db=float(side_db), mainlobe_6db_bins=float(width_bins),
                      widening=float(width_bins / _RECT_6DB_BINS))


@functools.cache
def _sidelobe_envelope(name: str) -> tuple[np.ndarray, np.ndarray]:
    """(offset in DFT bins, dB): the highest sidelobe of the window's transform at that offset from
    the main lobe's centre, half a bin nearer, or beyond (0 dB inside the main lobe). Measured like
    :func:`window_info`."""
    w = _window_fn(name)(256)
    over = 64
    spec = np.abs(np.fft.rfft(w, 256 * over))
    spec = spec / spec[0]
    d = np.diff(spec)
    first_min = int(np.argmax(d > 0)) if np.any(d > 0) else spec.size - 1
    level = spec.copy()
    level[:first_min] = 1.0
    env = np.maximum.accumulate(level[::-1])[::-1]  # the largest value at this offset or beyond
    # and up to half a bin nearer, so a point between two sidelobes gets the nearer (higher) one
    # (outside the main lobe: just past its first null a point gets the first sidelobe, not the lobe)
    shifted = np.concatenate([np.full(over // 2, env[first_min]), env[:-(over // 2)]])
    env = np.where(np.arange(env.size) < first_min, 1.0, np.maximum(env, np.minimum(shifted, env[first_min])))
    return np.arange(spec.size) / over, 20 * np.log10(np.maximum(env, 1e-15))


@dataclass(frozen=True)
class Peak:
    """One reflection. ``distance_m`` one way from the reference plane; ``reflection_mag`` |Gamma| of
    this reflection alone, compensated for the two-way cable loss ``two_way_loss_db`` at that
    distance; ``return_loss_db`` = -20 log10 reflection_mag (positive). ``raw_*``: as seen at the
    analyzer. In ``lowpass-step`` mode ``kind`` is one of ``higher_impedance``, ``lower_impedance``,
    ``capacitive``, ``inductive`` and ``step_change`` the lasting change of the step level across
    the peak (reflection-coefficient units); otherwise both are None."""

    distance_m: float
    round_trip_s: float
    reflection_mag: float
    return_loss_db: float
    raw_reflection_mag: float
    raw_return_loss_db: float
    two_way_loss_db: float
    kind: str | None = None
    step_change: float | None = None


@dataclass(frozen=True, eq=False)
class GateResult:
    """A gate from ``start_m`` to ``stop_m`` (round trip ``start_s`` .. ``stop_s``), flat with
    raised-cosine edges of ``taper_m`` each. ``edge_hz``: near each end of the sweep, within this
    many hertz, the gated sweep is unreliable (the gate's own spectral width smears the band edge).
    Band metrics over [f_low_hz, f_high_hz]: worst (smallest) return loss before and after gating,
    positive dB; ``*_compensated_db`` adds back the two-way cable loss to ``compensated_at_m``
    (the strongest reflection inside the gate). ``network``: the gated sweep (1-port, at the
    sweep's reference impedance, at the analyzer's plane)."""

    start_m: float
    stop_m: float
    start_s: float
    stop_s: float
    taper_m: float
    edge_hz: float
    f_low_hz: float
    f_high_hz: float
    worst_return_loss_before_db: float
    worst_return_loss_before_f_hz: float
    worst_return_loss_after_db: float
    worst_return_loss_after_f_hz: float
    worst_return_loss_after_compensated_db: float
    compensated_at_m: float
    band_in_edge: bool
    network: object
    f_hz: np.ndarray
    return_loss_before_db: np.ndarray
    return_loss_after_db: np.ndarray

    @property
    def max_gamma_mag(self) -> float:
        """The largest |Gamma| of the gated sweep over all its frequencies."""
        return float(np.max(np.abs(self.network.s[:, 0, 0])))

    @property
    def nonphysical_points(self) -> int:
        """How many frequencies of the gated sweep have |Gamma| > 1 (beyond NONPHYSICAL_TOL)."""
        return int(np.sum(np.abs(self.network.s[:, 0, 0]) > 1.0 + NONPHYSICAL_TOL))


@dataclass(frozen=True, eq=False)
class LocateResult:
    """The time-domain view of one sweep. Arrays: ``distance_m`` (one way, m), ``reflection_mag``
    (|Gamma| per distance, loss compensated), ``raw_reflection_mag`` (uncompensated), ``step``
    (signed step response in reflection-coefficient units, ``lowpass-step`` only). ``trace_*``: the
    same sampled to at most :data:`TRACE_POINTS` points keeping every local maximum's bucket peak.
    ``floor_mag``: nothing below it (at the analyzer, uncompensated) is listed as a peak: the larger
    of ``noise_floor_mag`` and ``sidelobe_floor_mag`` (:data:`DYNAMIC_RANGE_DB` below the strongest;
    not applied when a floor is given). A listed peak also clears the window sidelobes of every
    stronger one at its distance by :data:`SIDELOBE_MARGIN_DB` and stands
    :data:`PROMINENCE_DB` out of its surroundings."""

    path: str
    port: int
    z0_ohm: float
    points: int
    f_start_hz: float
    f_stop_hz: float
    f_step_hz: float
    velocity_factor: float
    cable: CableModel
    loss_compensated: bool
    mode: str
    mode_requested: str
    window: WindowInfo
    transform_span_hz: float
    resolution_base_m: float
    resolution_m: float
    max_range_m: float
    view_max_m: float
    extrapolated_points: int
    distance_m: np.ndarray
    reflection_mag: np.ndarray
    raw_reflection_mag: np.ndarray
    step: np.ndarray | None
    trace_distance_m: np.ndarray
    trace_reflection_mag: np.ndarray
    trace_raw_reflection_mag: np.ndarray
    peaks: tuple[Peak, ...]
    min_separation_m: float
    noise_floor_mag: float
    sidelobe_floor_mag: float
    floor_mag: float
    gate: GateResult | None
    warnings: tuple[str, ...] = ()

    @property
    def reflection_db(self) -> np.ndarray:
        """20 log10 reflection_mag (negative dB; the return loss is its negative)."""
        return _db(self.reflection_mag)

    @property
    def name(self) -> str:
        from pathlib import Path

        return Path(self.path).name


def _db(mag: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return 20.0 * np.log10(np.asarray(mag, dtype=float))


def _cable(cable: CableModel | None, velocity_factor: float | None) -> CableModel:
    if cable is None:
        if velocity_factor is None:
            raise UsageError("is needed to turn time into distance", parameter="velocity_factor",
                             expected="the cable's velocity factor (solid PE 0.66, PTFE 0.69, foam PE ~0.85)")
        return CableModel(length_m=0.0, velocity_factor=velocity_factor)
    if not isinstance(cable, CableModel):
        raise UsageError(f"expected a feedline.CableModel, got {type(cable).__name__}", parameter="cable")
    if velocity_factor is not None:
        cable = CableModel(length_m=cable.length_m, velocity_factor=velocity_factor,
                           loss_db_per_m=cable.loss_db_per_m, loss_ref_hz=cable.loss_ref_hz,
                           dielectric_loss_db_per_m=cable.dielectric_loss_db_per_m, z0_ohm=cable.z0_ohm)
    if cable.velocity_factor is None:
        raise UsageError("is needed to turn time into distance", parameter="velocity_factor",
                         expected="the cable's velocity factor (solid PE 0.66, PTFE 0.69, foam PE ~0.85)")
    return cable


def _grid(f: np.ndarray, path: str) -> tuple[float, bool, int]:
    """(step, harmonic, steps below the start) of an evenly spaced sweep; UsageError otherwise."""
    if f.size < 8:
        raise UsageError(f"{f.size} point(s) are too few for a time-domain view", path=path,
                         expected="a sweep of at least 8 evenly spaced points (hundreds give a useful range)")
    d = np.diff(f)
    step = float((f[-1] - f[0]) / (f.size - 1))
    if np.max(np.abs(d - step)) > 1e-6 * step:
        raise UsageError("frequencies are not evenly spaced; a time-domain view needs a linear sweep", path=path,
                         expected="a linear (evenly stepped) sweep, as a network analyzer records for this")
    k = f[0] / step
    harmonic = abs(k - round(k)) < 1e-3
    return step, harmonic, int(round(k)) if harmonic else -1


def _choose_mode(mode: str, f: np.ndarray, harmonic: bool, path: str) -> str:
    m = str(mode).strip().lower()
    if m not in MODES:
        raise UsageError("is not a mode of this tool", parameter="mode", value=mode, expected=", ".join(MODES))
    if m == "auto":
        return "lowpass-impulse" if harmonic and f[0] <= AUTO_LOWPASS_MAX_START * f[-1] else "bandpass"
    if m.startswith("lowpass") and not harmonic:
        raise UsageError("needs a harmonic sweep: a start frequency that is a whole number of steps "
                         f"(this one starts at {f[0] / (f[1] - f[0]):.3f} steps)", parameter="mode", value=m,
                         path=path, expected="bandpass for this sweep, or a sweep from k x step")
    return m


def _smooth_size(n: int, odd: bool) -> int:
    """The smallest length >= n whose prime factors are all small (3, 5, 7 for an odd length, 2, 3, 5
    otherwise), so the FFT stays fast; zero padding to any length is equally valid."""
    primes = (3, 5, 7) if odd else (2, 3, 5)
    best = None
    stack = [1]
    seen = set()
    while stack:
        v = stack.pop()
        if v >= n:
            if best is None or v < best:
                best = v
            continue
        for p in primes:
            w = v * p
            if w not in seen and (best is None or w < best * p):
                seen.add(w)
                stack.append(w)
    return int(best)


def _coherent_gain(w: np.ndarray, lowpass: bool, n: int) -> float:
    """Factor that makes a lone, frequency-flat reflection Gamma peak at |Gamma| in the transform:
    n / sum(w) for the complex band-pass transform, n / (w0 + 2 sum(w[1:])) for the real low-pass
    one (numpy's inverse FFT divides by n; derived)."""
    s = float(w[0] + 2.0 * np.sum(w[1:])) if lowpass else float(np.sum(w))
    return n / s


def _compensation(f: np.ndarray, w: np.ndarray, cable: CableModel, d: np.ndarray, lowpass: bool) -> np.ndarray:
    """Two-way loss compensation per distance (amplitude factor >= 1).

    Written by hand (scikit-rf has no loss compensation): at distance d a lone reflection's
    spectrum is Gamma exp(-2 alpha(f) d); at its peak the transform sums w_k exp(-2 alpha_k d), so
    the factor sum(w) / sum(w exp(-2 alpha d)) restores |Gamma| exactly for a frequency-flat
    reflection (derived). Evaluated on 129 distances and interpolated in dB (a smooth function)."""
    if cable.lossless or d.size == 0:
        return np.ones_like(d)
    wk = w.copy()
    if lowpass:
        wk[1:] *= 2.0
    stride = max(1, f.size // 2000)  # both sums are smooth in f: every stride-th sample is enough
    fk, wk = f[::stride], wk[::stride]
    alpha = cable.alpha_np_per_m(fk)
    grid = np.linspace(0.0, float(d.max()), 129)
    # log of sum(w exp(-2 alpha d)) without underflow on a long lossy cable (a log-sum-exp)
    expo = np.log(np.maximum(wk, 1e-300))[None, :] - 2.0 * np.outer(grid, alpha)
    top = expo.max(axis=1)
    log_sum = top + np.log(np.sum(np.exp(expo - top[:, None]), axis=1))
    factor_db = (20 / math.log(10)) * (math.log(float(np.sum(wk))) - log_sum)
    return 10 ** (np.interp(d, grid, factor_db) / 20)


def _trace(d: np.ndarray, *ys: np.ndarray, points: int = TRACE_POINTS) -> tuple[np.ndarray, ...]:
    """Peak-preserving sampling: per bucket of samples, the one where the first curve is largest."""
    n = d.size
    if n <= points:
        return (d, *ys)
    edges = np.linspace(0, n, points + 1).astype(int)
    idx = np.array([a + int(np.argmax(ys[0][a:b])) for a, b in zip(edges[:-1], edges[1:], strict=True) if b > a])
    return (d[idx], *(y[idx] for y in ys))


def _prominence_db(y_db: np.ndarray, i: int) -> float:
    """Topographic prominence of sample ``i`` of the periodic trace ``y_db`` (dB): its height over the
    higher of the two lowest points met on the way, left and right, to a higher sample (or half a
    period away). Hand-written with numpy: scipy.signal.peak_prominences costs scipy.signal's start-up."""
    n = y_db.size
    c = n // 2
    r = np.roll(y_db, c - i)
    top = r[c]
    left, right = r[:c][::-1], r[c + 1:]
    lows = []
    for side in (left, right):
        higher = np.flatnonzero(side > top)
        stretch = side[:higher[0]] if higher.size else side
        lows.append(float(stretch.min()) if stretch.size else top)
    return float(top - max(lows))


def _classify(step: np.ndarray, k: int, half: int) -> tuple[str, float]:
    """From the step response around sample ``k`` (``half`` samples each side, about 1.5 resolution
    cells): a lasting level change is an impedance step, a pulse that returns is reactive."""
    n = step.size
    a, b = max(k - half, 0), min(k + half, n - 1)
    before, after = float(step[a]), float(step[b])
    change = after - before
    seg = step[a:b + 1] - before
    ext = float(seg[int(np.argmax(np.abs(seg)))]) if seg.size else 0.0
    if abs(change) >= 0.5 * abs(ext):
        return ("higher_impedance" if change > 0 else "lower_impedance"), change
    return ("capacitive" if ext < 0 else "inductive"), change


def _gate_window(taper_frac: float) -> Callable[[int], np.ndarray]:
    """A flat gate with raised-cosine (Tukey) edges, each ``taper_frac`` of the gate long (numpy only)."""
    def win(n: int) -> np.ndarray:
        w = np.ones(n)
        m = int(round(taper_frac * (n - 1)))
        if m >= 1:
            x = np.arange(m) / m
            ramp = 0.5 * (1 - np.cos(np.pi * x))
            w[:m] = ramp
            w[n - m:] = ramp[::-1]
        return w
    return win


def analyze(sweep_or_network, cable: CableModel | None = None, velocity_factor: float | None = None,
            window: str = DEFAULT_WINDOW, mode: str = "auto", max_distance_m: float | None = None,
            gate_m: tuple[float, float] | None = None, gate_s: tuple[float, float] | None = None,
            band: tuple[float, float] | None = None, port: int | None = None,
            floor_return_loss_db: float | None = None,
            min_separation_m: float | None = None, max_peaks: int = 10) -> LocateResult:
    """Reflections versus one-way distance along the feed, and optionally a gated sweep.

    ``sweep_or_network``: a :class:`matchtool.sweep.Sweep`, an ``skrf.Network`` or a Touchstone path
    (``port`` chooses S_pp). ``cable``: a :class:`matchtool.feedline.CableModel` (its velocity
    factor and loss per metre are used, its length is not), or just ``velocity_factor``.
    ``window``: one of :data:`WINDOWS`; ``mode``: one of :data:`MODES`. ``max_distance_m`` cuts the
    view (default: the alias-free range). ``gate_m`` (start, stop) in metres, or ``gate_s`` in
    round-trip seconds. ``band`` (f_low_hz, f_high_hz) for the gated return loss (default: the sweep
    without its edge regions). ``floor_return_loss_db``: no peak weaker than this return loss is listed
    (positive dB; default: 10 dB above the median of the uncompensated trace). ``min_separation_m``: peaks closer than this
    are one (default: the resolution).
    """
    import skrf

    from .sweep import as_sweep

    sw = as_sweep(sweep_or_network, port=port)
    cab = _cable(cable, velocity_factor)
    vf = float(cab.velocity_factor)
    win_fn = _window_fn(window)
    info = window_info(window)
    f = np.asarray(sw.f_hz, dtype=float)
    step, harmonic, k0 = _grid(f, sw.path)
    the_mode = _choose_mode(mode, f, harmonic, sw.path)
    lowpass = the_mode != "bandpass"
    warnings = list(sw.warnings)
    g = np.asarray(sw.gamma, dtype=complex)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=g.reshape(-1, 1, 1), z0=sw.z0_ohm,
                       name=sw.network.name)

    extrapolated = 0
    work = net
    if lowpass and k0 > MAX_EXTRAPOLATED_FRACTION * (f.size + k0):
        # the transform would be mostly guessed: refused, not warned (a view built on a guess misleads)
        f_ok = math.floor(MAX_EXTRAPOLATED_FRACTION * f.size / (1 - MAX_EXTRAPOLATED_FRACTION)) * step
        raise UsageError(f"would extrapolate {k0} of {f.size + k0} points ({100 * k0 / (f.size + k0):.0f} %) down to "
                         f"0 Hz, more than {100 * MAX_EXTRAPOLATED_FRACTION:g} %", parameter="mode", value=the_mode,
                         path=sw.path, expected=f"--mode bandpass for this sweep, or a sweep starting at or below "
                         f"{f_ok / 1e6:.6g} MHz in steps of {step / 1e6:.6g} MHz")
    if lowpass and f[0] > 0:
        # the DC value of a passive 1-port is real: the real part of the straight line through the
        # first two points, kept within the unit circle
        dc = float(np.clip((g[0] - f[0] * (g[1] - g[0]) / (f[1] - f[0])).real, -1.0, 1.0))
        if k0 == 1:
            # the sweep starts one step above 0 Hz: adding the 0 Hz point needs no interpolation, and
            # skrf.Network.extrapolate_to_dc would import scipy.interpolate (0.4 s of start-up) for nothing
            work = skrf.Network(frequency=skrf.Frequency.from_f(np.concatenate(([0.0], f)), unit="Hz"),
                                s=np.concatenate(([dc], g)).reshape(-1, 1, 1), z0=sw.z0_ohm, name=net.name)
        else:
            work = net.extrapolate_to_dc(points=f.size + k0, dc_sparam=np.array([[dc]]), kind="cubic")
        extrapolated = k0
        if f[0] > AUTO_LOWPASS_MAX_START * f[-1]:
            warnings.append(f"{sw.name}: low-pass mode extrapolates {k0} of {f.size + k0} points down to 0 Hz; "
                            "the view below the sweep's start is a guess - band-pass mode is safer here")
    n_freq = work.frequency.npoints
    if lowpass:  # skrf's low-pass transform has 2 (m + pad) - 1 points
        pad = (_smooth_size(2 * PAD_FACTOR * n_freq - 1, odd=True) + 1) // 2 - n_freq
    else:
        pad = _smooth_size(PAD_FACTOR * n_freq, odd=False) - n_freq
    t, h = work.impulse_response(window=win_fn, pad=pad, bandpass=not lowpass)
    n = t.size
    dt = float(t[1] - t[0])
    # skrf centres t = 0; the transform is periodic over 1/df, so read it from 0 to 1/df instead
    h = np.fft.ifftshift(h)
    tt = np.arange(n) * dt
    wv = win_fn(2 * n_freq)[n_freq:] if lowpass else win_fn(n_freq)
    gain = _coherent_gain(wv, lowpass, n)
    step_trace = None
    offset = 0.0
    if lowpass:
        # the 0 Hz sample is a guess; an error in it adds the same constant to every time sample. A
        # feed's response is sparse (most of the time axis holds no reflection), so that constant is
        # the median of the real response: remove it (derived; it makes the guess of the 0 Hz value
        # harmless); a measured 0 Hz point is kept as it is
        offset = median(np.real(h)) if extrapolated else 0.0
        h = np.real(h) - offset
        # the envelope of the real response (its analytic signal, as scipy.signal.hilbert forms it;
        # written with numpy because importing scipy.signal costs more than the whole command)
        spec = np.fft.fft(h)
        spec[1:(n + 1) // 2] *= 2.0
        spec[(n + 1) // 2:] = 0.0
        raw = np.abs(np.fft.ifft(spec)) * gain
        if the_mode == "lowpass-step":
            t_st, st = work.step_response(window=win_fn, pad=pad)
            st = np.real(st)
            # skrf integrates from t = -T/2; re-start the integral at t = 0 and carry it on past T/2
            # (the transform is periodic), then scale so that a lone step of Gamma settles at Gamma
            # (the pulse's area is w0 Gamma, the DC bin; derived)
            i0 = int(np.argmin(np.abs(t_st)))
            pos = st[i0:] - st[i0]
            neg = st[:i0] + (st[-1] - st[i0])
            # the constant removed above, integrated over k samples, is offset x k
            step_trace = (np.concatenate([pos, neg]) - offset * np.arange(n)) / float(wv[0])
    else:
        raw = np.abs(h) * gain
    dist = cab.distance_m(tt)
    max_range = cab.distance_m(1.0 / step)
    span = 2.0 * float(work.frequency.f[-1]) if lowpass else float(f[-1] - f[0])
    base_res = C0_M_PER_S * vf / (2.0 * span)
    res = base_res * info.widening
    view_max = max_range
    if max_distance_m is not None:
        md = float(max_distance_m)
        if not (math.isfinite(md) and md > 0):
            raise UsageError("out of range", parameter="max_distance_m", value=md, expected="a positive distance")
        if md > max_range:
            warnings.append(f"{sw.name}: the view is cut at the alias-free range {max_range:.3g} m, not at "
                            f"{md:.3g} m (a finer frequency step reaches further)")
        view_max = min(md, max_range)
    # the whole period [0, 1/df) is searched for peaks (it is periodic: a reflection at 0 m has its
    # neighbours at both ends), then the view is cut at view_max
    comp_full = _compensation(work.frequency.f, wv, cab, dist, lowpass)
    mag_full, raw_full, dist_full = raw * comp_full, raw, dist
    keep = dist_full <= view_max * (1 + 1e-12)
    dist, raw, mag, comp = dist_full[keep], raw_full[keep], mag_full[keep], comp_full[keep]
    step_full = step_trace
    if step_trace is not None:
        step_trace = step_trace[keep]
    if not cab.lossless and np.max(comp) > 10 ** (20 / 20):
        warnings.append(f"{sw.name}: the loss compensation reaches {20 * math.log10(np.max(comp)):.0f} dB at "
                        f"{view_max:.3g} m; far reflections there are noise amplified by as much")

    # peaks
    sep = res if min_separation_m is None else float(min_separation_m)
    if not (math.isfinite(sep) and sep >= 0):
        raise UsageError("out of range", parameter="min_separation_m", value=sep, expected="a distance of 0 or more")
    ddist = float(dist_full[1] - dist_full[0])
    # the floors are properties of the measurement, so they apply to the uncompensated trace (loss
    # compensation would otherwise lift the far noise and sidelobes into the list)
    noise = median(raw) * 10 ** (NOISE_MARGIN_DB / 20) if raw.size else 0.0
    if floor_return_loss_db is not None:
        fd = float(floor_return_loss_db)
        if not (math.isfinite(fd) and fd >= 0):
            raise UsageError("out of range", parameter="floor_return_loss_db", value=fd,
                             expected="a return loss of 0 dB or more, e.g. 40")
        noise = 10 ** (-fd / 20)
    peaks: list[Peak] = []
    nf = mag_full.size
    # found and placed on the trace as measured: the compensation rises with distance and would pull a
    # broad (dispersed) reflection's maximum outward; its amplitude is compensated afterwards
    ext = np.concatenate([raw_full[-1:], raw_full, raw_full[:1]])
    idx = np.asarray(skrf.time.indexes(ext, thres=0.0, min_dist=max(int(sep / ddist), 1)), dtype=int) - 1
    idx = idx[(idx >= 0) & (idx < nf)]
    idx = idx[keep[idx]]
    # the last WRAP_GUARD resolutions of the period hold what lies just before 0 m (the transform
    # wraps): leakage of the reflections at the reference plane, not a reflection far away
    idx = idx[dist_full[idx] < max_range - WRAP_GUARD * res]
    # a listing range below the strongest reflection (at the analyzer); with --floor the user sets it
    side = float(np.max(raw_full[idx])) * 10 ** (-DYNAMIC_RANGE_DB / 20) if idx.size else 0.0
    floor = noise if floor_return_loss_db is not None else max(noise, side)
    raw_db = _db(np.maximum(raw_full, 1e-300))
    env_bins, env_db = _sidelobe_envelope(info.name)
    period_m = ddist * nf
    dropped_nonphysical = 0
    listed: list[int] = []
    # strongest at the analyzer first: a candidate must clear the noise floor, stand out from the skirt
    # it sits on, and clear the window sidelobes of every stronger reflection already listed
    for i in sorted((int(i) for i in idx if raw_full[i] > floor), key=lambda i: -raw_full[i]):
        if len(listed) >= max(int(max_peaks), 0):
            break
        if _prominence_db(raw_db, i) < PROMINENCE_DB:
            continue  # a ripple on the skirt or the tail of a stronger reflection, not one of its own
        if listed:
            # the sidelobes of the stronger ones add up (in amplitude, at worst) where this one sits
            gap = np.abs(dist_full[listed] - dist_full[i])
            gap = np.minimum(gap, period_m - gap) / base_res
            lobes = raw_full[listed] * 10 ** (np.interp(gap, env_bins, env_db, right=env_db[-1]) / 20)
            if raw_full[i] < float(np.sum(lobes)) * 10 ** (SIDELOBE_MARGIN_DB / 20):
                continue
        if mag_full[i] > 1.0 + NONPHYSICAL_TOL:
            dropped_nonphysical += 1
            continue
        listed.append(i)
    listed.sort(key=lambda i: -mag_full[i])
    if dropped_nonphysical:
        if cab.lossless:  # no loss given: nothing was compensated, so the loss cannot be blamed
            warnings.append(f"{sw.name}: {dropped_nonphysical} reflection(s) above |Gamma| = 1 were not listed "
                            "(non-physical): the sweep is not calibrated, or the trace is distorted")
        else:
            warnings.append(f"{sw.name}: {dropped_nonphysical} reflection(s) above |Gamma| = 1 after loss "
                            "compensation were not listed (non-physical): the loss given is more than the cable "
                            "has, the sweep is not calibrated, or they are noise lifted by the compensation")
    for i in listed:
        # parabolic interpolation through the three samples around the maximum (hand-written:
        # three lines; it places the peak between samples)
        y0, y1, y2 = raw_full[(i - 1) % nf], raw_full[i], raw_full[(i + 1) % nf]
        den = y0 - 2 * y1 + y2
        p = 0.5 * (y0 - y2) / den if den < 0 else 0.0
        p = float(np.clip(p, -0.5, 0.5))
        d_pk = max(float(dist_full[i] + p * ddist), 0.0)
        raw_pk = float(y1 - 0.25 * (y0 - y2) * p)
        c_pk = float(np.interp(d_pk, dist_full, comp_full))
        m_pk = raw_pk * c_pk
        kind = change = None
        if step_full is not None:
            kind, change = _classify(step_full, i, max(int(1.5 * res / ddist), 2))
        peaks.append(Peak(distance_m=d_pk, round_trip_s=float(cab.round_trip_s(d_pk)), reflection_mag=m_pk,
                          return_loss_db=float(-20 * math.log10(m_pk)), raw_reflection_mag=raw_pk,
                          raw_return_loss_db=float(-20 * math.log10(raw_pk)),
                          two_way_loss_db=float(20 * math.log10(c_pk)), kind=kind, step_change=change))

    trace = _trace(dist, np.maximum(mag, 1e-15), np.maximum(raw, 1e-15))  # -300 dB stands for nothing
    gate = None
    if gate_m is not None or gate_s is not None:
        gate = _gate(net, sw.path, cab, res, step, f, g, gate_m, gate_s, band, peaks, max_range)
        warnings += _gate_warnings(gate, sw.name, cab)

    return LocateResult(
        path=sw.path, port=sw.port, z0_ohm=sw.z0_ohm, points=int(f.size), f_start_hz=float(f[0]),
        f_stop_hz=float(f[-1]), f_step_hz=step, velocity_factor=vf, cable=cab, loss_compensated=not cab.lossless,
        mode=the_mode, mode_requested=str(mode).strip().lower(), window=info, transform_span_hz=span,
        resolution_base_m=base_res, resolution_m=res, max_range_m=max_range, view_max_m=view_max,
        extrapolated_points=extrapolated, distance_m=dist, reflection_mag=mag, raw_reflection_mag=raw,
        step=step_trace, trace_distance_m=trace[0], trace_reflection_mag=trace[1], trace_raw_reflection_mag=trace[2],
        peaks=tuple(peaks), min_separation_m=sep, noise_floor_mag=noise, sidelobe_floor_mag=side, floor_mag=floor,
        gate=gate, warnings=tuple(warnings))


GATE_EDGE_FACTOR = 2.0
"""The gated sweep is unreliable within GATE_EDGE_FACTOR / T_gate of each end of the sweep (T_gate
the gate's round-trip length): the gate's spectrum is about 1 / T_gate wide and smears the
truncated band edge by that much (derived; the factor 2 leaves a margin, checked in the tests)."""


def _gate(net, path: str, cab: CableModel, res: float, step: float, f: np.ndarray, g: np.ndarray,
          gate_m, gate_s, band, peaks, max_range: float) -> GateResult:
    import skrf

    if gate_m is not None and gate_s is not None:
        raise UsageError("give the gate in distance or in time, not both", parameter="gate")
    if gate_m is not None:
        a_m, b_m = (float(x) for x in gate_m)
        a_s, b_s = float(cab.round_trip_s(a_m)), float(cab.round_trip_s(b_m))
    else:
        a_s, b_s = (float(x) for x in gate_s)
        a_m, b_m = float(cab.distance_m(a_s)), float(cab.distance_m(b_s))
    if not (math.isfinite(a_s) and math.isfinite(b_s) and 0 <= a_s < b_s):
        raise UsageError("needs 0 <= START < STOP", parameter="gate", value=f"{a_m:g} m to {b_m:g} m",
                         expected="e.g. 2.5m:4m or 20ns:30ns")
    period = 1.0 / step
    if b_s >= period:
        raise OutOfRangeError(f"the gate ends at {b_m:.4g} m, beyond the alias-free range {max_range:.4g} m",
                              parameter="gate", path=path, expected="a gate inside the alias-free range")
    width_s = b_s - a_s
    taper_m = min(res, (b_m - a_m) / 4)
    taper_frac = taper_m / (b_m - a_m)
    win = _gate_window(taper_frac)
    # skrf gates on t in [-T/2, T/2) (T = 1/df): move the gate's centre to t = 0 first by a linear
    # phase (a circular shift of the periodic response), gate, and move it back (derived; exact)
    centre = 0.5 * (a_s + b_s)
    turn = np.exp(2j * np.pi * f * centre)
    shifted = net.copy()
    shifted.s = net.s * turn.reshape(-1, 1, 1)
    gated = skrf.time.time_gate(shifted, start=a_s - centre, stop=b_s - centre, t_unit="s", mode="bandpass",
                                window=win, method="fft", fft_window=_window_fn("kaiser"))
    gated.s = gated.s / turn.reshape(-1, 1, 1)
    edge = GATE_EDGE_FACTOR / width_s
    if band is None:
        lo, hi = float(f[0] + edge), float(f[-1] - edge)
        if not lo < hi:
            lo, hi = float(f[0]), float(f[-1])
    else:
        lo, hi = (float(x) for x in band)
        if not sweep_covers(f, lo, hi):
            raise OutOfRangeError(f"band {lo / 1e6:.6g} to {hi / 1e6:.6g} MHz is not inside the sweep "
                                  f"({f[0] / 1e6:.6g} to {f[-1] / 1e6:.6g} MHz)", path=path, parameter="band",
                                  expected="a band inside the sweep (never extrapolated)")
    gg = gated.s[:, 0, 0]
    fb, gb = band_samples(f, g, lo, hi)
    _, ga = band_samples(f, gg, lo, hi)
    rl_b, rl_a = -_db(np.abs(gb)), -_db(np.abs(ga))
    inside = [pk for pk in peaks if a_m <= pk.distance_m <= b_m]
    at_m = max(inside, key=lambda pk: pk.reflection_mag).distance_m if inside else 0.5 * (a_m + b_m)
    rl_c = rl_a - 2.0 * cab.loss_db(fb, at_m)
    ib, ia, ic = int(np.argmin(rl_b)), int(np.argmin(rl_a)), int(np.argmin(rl_c))
    return GateResult(
        start_m=a_m, stop_m=b_m, start_s=float(cab.round_trip_s(a_m)), stop_s=float(cab.round_trip_s(b_m)),
        taper_m=taper_m, edge_hz=edge, f_low_hz=lo, f_high_hz=hi,
        worst_return_loss_before_db=float(rl_b[ib]), worst_return_loss_before_f_hz=float(fb[ib]),
        worst_return_loss_after_db=float(rl_a[ia]), worst_return_loss_after_f_hz=float(fb[ia]),
        worst_return_loss_after_compensated_db=float(rl_c[ic]), compensated_at_m=float(at_m),
        band_in_edge=bool(lo < f[0] + edge or hi > f[-1] - edge), network=gated, f_hz=fb,
        return_loss_before_db=rl_b, return_loss_after_db=rl_a)


def _gate_warnings(gate: GateResult, name: str, cab: CableModel) -> list[str]:
    out = []
    f = gate.network.f
    if not f[0] + gate.edge_hz < f[-1] - gate.edge_hz:
        # the edge regions meet: the gate's spectrum (~ 2 / T_gate) is as wide as the sweep
        need_m = float(cab.distance_m(8.0 / (f[-1] - f[0])))  # edges of a quarter of the sweep each
        out.append(f"{name}: the gate ({gate.stop_m - gate.start_m:.3g} m) is too short for this sweep: its edge "
                   f"regions ({gate.edge_hz / 1e6:.3g} MHz at each end) cover the whole sweep, so the gated sweep "
                   f"is unreliable everywhere; make the gate at least {need_m:.3g} m long or sweep wider")
    elif gate.band_in_edge:
        out.append(f"{name}: the band reaches into the gate's edge regions ({gate.edge_hz / 1e6:.3g} MHz at each end "
                   "of the sweep), where the gated return loss is unreliable; a wider sweep or a longer gate helps")
    over = np.abs(gate.network.s[:, 0, 0]) > 1.0 + NONPHYSICAL_TOL
    if over.any():
        out.append(f"{name}: {int(over.sum())} point(s) of the gated sweep have |Gamma| > 1 (up to "
                   f"{float(np.max(np.abs(gate.network.s[:, 0, 0]))):.3g}): gate edge effects, not the antenna; "
                   "do not use those frequencies")
    return out

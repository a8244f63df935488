"""Threshold bands on a sweep: where return loss meets a limit, with interpolated edges.

Band edges are found by linear interpolation of the dB curve between the two bracketing samples
(common practice, no source). A band that runs into either end of the sweep is marked clipped on
that side: its true edge lies outside the measurement.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import OutOfRangeError

CAP_DB = 400.0
"""Stands in for +inf return loss (a perfect sample, |Gamma| = 0) wherever a finite number is needed
(interpolating, ranking); far above anything a network analyzer resolves."""
_CAP_DB = CAP_DB  # the old private name, kept for callers not yet switched
MIN_BAND_SAMPLES = 3
"""A band holding fewer measured samples than this gets a warning: its worst case leans on the
interpolation between samples (common practice, no source)."""


@dataclass(frozen=True)
class Band:
    """A contiguous frequency range meeting a threshold. Frequencies in Hz."""

    f_low_hz: float
    f_high_hz: float
    clipped_low: bool
    clipped_high: bool

    @property
    def f_center_hz(self) -> float:
        """Arithmetic centre of the band edges."""
        return 0.5 * (self.f_low_hz + self.f_high_hz)

    @property
    def bandwidth_hz(self) -> float:
        return self.f_high_hz - self.f_low_hz

    @property
    def fractional_bandwidth(self) -> float:
        """Bandwidth divided by the centre frequency (0 for a zero-width band)."""
        c = self.f_center_hz
        return self.bandwidth_hz / c if c > 0 else 0.0

    def contains(self, f_hz: float) -> bool:
        return self.f_low_hz <= f_hz <= self.f_high_hz


def _crossing(f0: float, f1: float, y0: float, y1: float, level: float) -> float:
    if y1 == y0:
        return 0.5 * (f0 + f1)
    return f0 + (level - y0) * (f1 - f0) / (y1 - y0)


MIN_RUN_SAMPLES = 2
"""A run of fewer samples at or above the threshold is a noise-level crossing, not a band (not to be
confused with MIN_BAND_SAMPLES, the samples a spec or match band should hold)."""
MIN_BAND_FRACTION = 1e-3
"""A run narrower than this fraction of the sweep's span is a noise-level crossing, not a band
(unless ``min_width_hz`` is given, which replaces it). Chosen by us: measurement noise on a
curve that runs along the threshold makes crossings one sample wide; no source."""


@dataclass(frozen=True)
class BandSearch:
    """The threshold crossings of one curve: ``bands`` (wide enough to count) and
    ``noise_crossings`` (runs narrower than the minimum, listed apart and never used as bands)."""

    bands: tuple[Band, ...]
    noise_crossings: tuple[Band, ...]
    min_width_hz: float
    min_samples: int


def search_bands(f_hz: np.ndarray, value_db: np.ndarray, threshold_db: float, min_width_hz: float | None = None,
                 min_samples: int = MIN_RUN_SAMPLES) -> BandSearch:
    """Runs where ``value_db >= threshold_db`` (e.g. return loss in dB against a minimum), with
    interpolated edges, split into bands and noise-level crossings.

    A run counts as a band when it holds at least ``min_samples`` samples and is at least
    ``min_width_hz`` wide (default :data:`MIN_BAND_FRACTION` of the sweep's span); a run that
    spans the whole sweep always counts. The rule acts as hysteresis in frequency: a curve that
    pokes above the threshold for less than the minimum does not open a band. There is no
    hysteresis in dB: every band edge is the exact (interpolated) threshold crossing, so a
    band's edges and width are the same as without the rule. To find where S11 dB stays below a
    maximum, pass ``-s11_db`` and ``-max``.
    """
    f = np.asarray(f_hz, dtype=float)
    y = np.minimum(np.nan_to_num(np.asarray(value_db, dtype=float), nan=-np.inf), _CAP_DB)
    span = float(f[-1] - f[0]) if f.size else 0.0
    min_w = MIN_BAND_FRACTION * span if min_width_hz is None else float(min_width_hz)
    ok = y >= threshold_db
    if not ok.any():
        return BandSearch((), (), min_w, min_samples)
    edges = np.diff(ok.astype(np.int8))
    starts = list(np.flatnonzero(edges == 1) + 1)
    stops = list(np.flatnonzero(edges == -1))
    if ok[0]:
        starts.insert(0, 0)
    if ok[-1]:
        stops.append(len(ok) - 1)
    bands, noise = [], []
    for i, j in zip(starts, stops, strict=True):
        lo = f[0] if i == 0 else _crossing(f[i - 1], f[i], y[i - 1], y[i], threshold_db)
        hi = f[-1] if j == len(ok) - 1 else _crossing(f[j], f[j + 1], y[j], y[j + 1], threshold_db)
        b = Band(float(lo), float(hi), bool(i == 0), bool(j == len(ok) - 1))
        whole = i == 0 and j == len(ok) - 1
        wide = (j - i + 1) >= min_samples and b.bandwidth_hz >= min_w
        (bands if whole or wide else noise).append(b)
    return BandSearch(tuple(bands), tuple(noise), min_w, min_samples)


def find_bands(f_hz: np.ndarray, value_db: np.ndarray, threshold_db: float, min_width_hz: float | None = None,
               min_samples: int = MIN_RUN_SAMPLES) -> list[Band]:
    """Bands where ``value_db >= threshold_db``, without the noise-level crossings (see
    :func:`search_bands` for the minimum-width rule and the crossings themselves).

    To find where S11 dB stays below a maximum, pass ``-s11_db`` and ``-max``.
    """
    return list(search_bands(f_hz, value_db, threshold_db, min_width_hz, min_samples).bands)


def band_containing(bands: list[Band], f_hz: float) -> Band | None:
    """The band that holds ``f_hz``, or None."""
    for b in bands:
        if b.contains(f_hz):
            return b
    return None


def sweep_covers(f_hz: np.ndarray, f_low_hz: float, f_high_hz: float) -> bool:
    """Whether a sweep (at least two samples, Hz) spans [f_low, f_high], allowing for the rounding
    of a file's frequency unit (0.902 GHz * 1e9 may land a fraction of a micro-hertz off 902 MHz)."""
    f = np.asarray(f_hz, dtype=float)
    tol = 1e-9 * max(abs(float(f[-1])), 1.0)
    return bool(f.size >= 2 and f_low_hz >= f[0] - tol and f_high_hz <= f[-1] + tol)


def interpolate(f_hz: np.ndarray, y: np.ndarray, f_query_hz: np.ndarray) -> np.ndarray:
    """``y`` sampled at ``f_hz`` (strictly increasing, Hz) read at ``f_query_hz``, linear between the
    bracketing samples (in complex values for complex ``y``: the contract's rule for any value between
    samples). ``y`` may have trailing axes (an S-matrix per frequency, shape (n, N, N)); the queries
    must lie inside the sweep (held at the end values otherwise; callers check coverage first)."""
    f = np.asarray(f_hz, dtype=float)
    y = np.asarray(y)
    fq = np.atleast_1d(np.asarray(f_query_hz, dtype=float))
    flat = y.reshape(y.shape[0], -1)
    if np.iscomplexobj(flat):
        cols = [np.interp(fq, f, c.real) + 1j * np.interp(fq, f, c.imag) for c in flat.T]
    else:
        cols = [np.interp(fq, f, c) for c in flat.T]
    return np.stack(cols, axis=-1).reshape((fq.size, *y.shape[1:]))


def band_samples(f_hz: np.ndarray, y: np.ndarray, f_low_hz: float, f_high_hz: float) -> tuple[np.ndarray, np.ndarray]:
    """Samples of ``y`` (real or complex, shape (n,) or (n, ...)) over [f_low, f_high], with the edge
    values linearly interpolated and included, so that a worst case over the band never misses the
    edges.

    The band must lie inside the sweep (callers check coverage first).
    """
    f = np.asarray(f_hz, dtype=float)
    y = np.asarray(y)
    inside = (f > f_low_hz) & (f < f_high_hz)
    fe = np.array([f_low_hz, f_high_hz])
    ye = interpolate(f, y, fe)
    return (np.concatenate(([fe[0]], f[inside], [fe[1]])), np.concatenate((ye[:1], y[inside], ye[1:])))


@dataclass(frozen=True)
class BandWorst:
    """The worst case of one curve over one band [f_low_hz, f_high_hz] (Hz).

    ``worst_f_hz`` is where it occurs (a sample, or a band edge); ``value`` the curve there (complex
    for a complex curve such as Gamma or S21, interpolated in complex values at an edge);
    ``magnitude`` is ``abs(value)`` for a complex curve and ``value`` for a real one; ``samples``
    counts the measured samples inside the band, edges included.
    """

    f_low_hz: float
    f_high_hz: float
    worst_f_hz: float
    value: complex | float
    magnitude: float
    samples: int


def worst_in_band(f_hz: np.ndarray, gamma_or_value: np.ndarray, f_low_hz: float, f_high_hz: float,
                  largest: bool = True) -> BandWorst:
    """The worst case of a curve over [f_low_hz, f_high_hz]: the samples inside the band and both
    band edges, interpolated linearly between the bracketing samples (in complex values for a complex
    curve).

    For a complex curve (Gamma, S_ij) the worst is the largest magnitude: |Gamma| of a straight
    segment in the complex plane is largest at one of its ends, so the samples plus the edges give the
    exact worst case of the interpolated curve. For a real curve the worst is the largest value
    (``largest=True``, e.g. an envelope correlation) or the smallest (``largest=False``, e.g. an
    isolation in dB). Raises :class:`OutOfRangeError` when the sweep does not cover the band (it is
    never extrapolated; an edge within the rounding of the sweep's end counts as inside).
    """
    f = np.asarray(f_hz, dtype=float)
    y = np.asarray(gamma_or_value)
    lo, hi = float(f_low_hz), float(f_high_hz)
    if not hi > lo:
        raise OutOfRangeError(f"band {lo:g} Hz to {hi:g} Hz is empty or reversed", parameter="f_high_hz",
                              value=hi, expected="f_high_hz above f_low_hz")
    if not sweep_covers(f, lo, hi):
        raise OutOfRangeError(f"band {lo:g} Hz to {hi:g} Hz lies outside the sweep ({f[0]:g} Hz to {f[-1]:g} Hz)",
                              parameter="f_low_hz", value=lo, expected="a band inside the sweep")
    fb, yb = band_samples(f, y, max(lo, f[0]), min(hi, f[-1]))
    fb[0], fb[-1] = lo, hi  # the band's own edges (they differ from the sweep's by rounding only)
    if np.iscomplexobj(yb):
        mag = np.abs(yb)
        k = int(np.argmax(mag))
        value: complex | float = complex(yb[k])
    else:
        mag = yb.astype(float)
        k = int(np.argmax(mag) if largest else np.argmin(mag))
        value = float(yb[k])
    return BandWorst(f_low_hz=lo, f_high_hz=hi, worst_f_hz=float(fb[k]), value=value, magnitude=float(mag[k]),
                     samples=int(np.count_nonzero((f >= lo) & (f <= hi))))

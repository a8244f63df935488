"""Small numeric helpers that numpy has, without what they import."""

from __future__ import annotations

import math

import numpy as np


def median(x) -> float:
    """``np.median`` of a real array, the same value bit for bit (the mean of the two middle
    values of an even count, NaN if any value is NaN, NaN for no values), without importing
    ``numpy.ma``: ``np.median`` imports it on first use for its NaN check, about 13 ms of a
    command's start-up."""
    a = np.asarray(x, dtype=float).ravel()
    n = a.size
    if n == 0 or np.isnan(a).any():
        return math.nan
    k = n // 2
    if n % 2:
        return float(np.partition(a, k)[k])
    part = np.partition(a, [k - 1, k])
    return float(np.mean(part[k - 1:k + 1]))

"""matchtool.numeric: helpers equal to numpy's own, checked against numpy itself."""

from __future__ import annotations

import math

import numpy as np
import pytest

from matchtool.numeric import median


@pytest.mark.parametrize("n", [1, 2, 3, 4, 7, 10, 1001, 1600])
def test_median_is_numpys_bit_for_bit(n):
    rng = np.random.default_rng(n)
    for x in (rng.normal(size=n), rng.integers(-5, 5, size=n).astype(float), np.full(n, 0.1)):
        assert np.float64(median(x)).tobytes() == np.float64(np.median(x)).tobytes()


def test_median_of_nothing_or_nan_is_nan():
    assert math.isnan(median([]))
    assert math.isnan(median([1.0, float("nan"), 2.0])) and math.isnan(np.median([1.0, float("nan"), 2.0]))
    assert median([3.0, 1.0, 2.0]) == 2.0 and median([4.0, 1.0, 3.0, 2.0]) == 2.5  # by hand


def test_median_does_not_import_numpy_ma():
    import subprocess
    import sys

    code = ("import sys, numpy as np\nfrom matchtool.numeric import median\nmedian(np.arange(10.0))\n"
            "print('numpy.ma' in sys.modules)")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60,
                       cwd=__import__("pathlib").Path(__file__).resolve().parents[1])
    assert p.stdout.strip() == "False", p.stderr

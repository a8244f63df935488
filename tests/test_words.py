"""render/words.py and units.format_frequency: numbers on screens tell the truth at a glance
(a failing margin never reads as zero, a value is told apart from its limit, band edges keep
the digits they were given)."""

from __future__ import annotations

import pytest

from matchtool.render.words import distinct, margin, requirement_cells
from matchtool.spec import RequirementResult
from matchtool.units import format_frequency


@pytest.mark.parametrize("f_hz,text", [
    (2483.5e6, "2.4835 GHz"),   # a spec edge (2.4 GHz ISM upper edge as users write it): every digit kept
    (2482.5e6, "2.4825 GHz"),   # a sample on a 0.5 MHz grid
    (915e6, "915.000 MHz"),     # the usual three decimals stay
    (2.45e9, "2.450 GHz"),
    (433.92e6, "433.920 MHz"),
    (2446123456.789, "2.446 GHz"),  # an interpolated edge: no false precision
])
def test_band_edges_keep_the_digits_they_were_given(f_hz, text):
    assert format_frequency(f_hz) == text


def test_a_failing_margin_never_reads_as_zero():
    # derived: 0.6 - 0.6036 = -0.0036 dB, which two decimals round to -0.00
    assert margin(0.6 - 0.6036) == "-0.004 dB"
    assert margin(-0.00004) == "-0.00004 dB"
    assert margin(-1e-12) == "< 0.000001 dB below"
    assert margin(0.0, passed=False) == "< 0.000001 dB below"
    assert margin(2.314) == "+2.31 dB" and margin(-0.0) == "+0.00 dB" and margin(0.0) == "+0.00 dB"
    assert margin(-6.19, unit="") == "-6.19" and margin(None) == "n/a"


def test_worst_is_told_apart_from_its_limit():
    assert distinct(0.6036, 0.6) == ("0.604", "0.600")
    assert distinct(9.996, 10.0) == ("9.996", "10.000")
    assert distinct(12.31, 10.0) == ("12.31", "10.00")
    assert distinct(10.0, 10.0) == ("10.00", "10.00")  # truly on the limit


def test_requirement_cells_show_fail_below_the_limit_with_units():
    # the mismatch-loss case: 0.6036 dB against a 0.6 dB maximum fails by 0.0036 dB
    q = RequirementResult(name="ism mismatch loss", key="max_mismatch_loss_db", passed=False, limit=0.6,
                          worst=0.6036, worst_f_hz=928e6, margin_db=0.6 - 0.6036, f_low_hz=902e6, f_high_hz=928e6)
    verdict, worst, where, limit, marg = requirement_cells(q)
    assert (verdict, worst, limit, marg) == ("FAIL", "0.604 dB", "0.600 dB", "-0.004 dB")
    # a return-loss limit: 9.996 dB against 10 dB
    q = RequirementResult(name="ism", key="min_return_loss_db", passed=False, limit=10.0, worst=9.996,
                          worst_f_hz=928e6, margin_db=9.996 - 10.0, f_low_hz=902e6, f_high_hz=928e6)
    _, worst, _, limit, marg = requirement_cells(q)
    assert worst == "9.996 dB return loss" and limit == "10.000 dB return loss" and marg == "-0.004 dB"

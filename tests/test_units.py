"""Tests of matchtool.units: quantities with units as the module docstring and README document them.

Documented (README "Conventions", units.py docstring): bare numbers are SI (Hz, m, s); units are
case-insensitive (``mHz`` is MHz); a frequency is never negative; a band LOW:HIGH carries a unit on
both sides or on neither. The SI prefixes and the inch and foot are exact by definition (SI
Brochure, 9th ed., 2019, table 7; the international yard and pound agreement of 1959: 1 in =
25.4 mm exactly).
"""

from __future__ import annotations

import math

import pytest

from matchtool.errors import UsageError
from matchtool.units import (
    format_frequency,
    format_value_si,
    parse_band,
    parse_frequency,
    parse_length,
    parse_time,
)


@pytest.mark.parametrize("text,hz", [
    ("915MHz", 915e6), ("2.45 GHz", 2.45e9), ("868e6", 868e6), ("915 mhz", 915e6), ("915mHz", 915e6),
    (" 915 MHz ", 915e6), ("433.92MHz", 433.92e6), ("13.56 MHz", 13.56e6), ("1e3kHz", 1e6), (".5GHz", 0.5e9),
    ("+915MHz", 915e6), ("915", 915.0), ("0", 0.0), ("0Hz", 0.0), ("1THz", 1e12), (915e6, 915e6), (868, 868.0),
])
def test_frequencies(text, hz):
    # SI prefixes k = 1e3, M = 1e6, G = 1e9, T = 1e12 (SI Brochure 9th ed. table 7); a bare number is Hz
    assert parse_frequency(text) == pytest.approx(hz, rel=1e-15)


@pytest.mark.parametrize("text,words", [
    ("-915MHz", "negative"), ("-1", "negative"), (-868e6, "negative"),
    ("915 furlongs", "unknown unit"), ("9 1 5MHz", "cannot read"), ("MHz", "cannot read"), ("", "cannot read"),
    ("nan", "cannot read"), ("inf GHz", "cannot read"), (math.inf, "not finite"), (math.nan, "not finite"),
    ("1e400Hz", "not finite"), (True, "not a number"), ("915 MHz MHz", "cannot read"), ("915m", "unknown unit"),
])
def test_bad_frequencies_are_one_line_usage_errors(text, words):
    with pytest.raises(UsageError) as e:
        parse_frequency(text)
    assert words in str(e.value) and "\n" not in str(e.value)
    assert isinstance(e.value, ValueError)


@pytest.mark.parametrize("text,m", [
    ("3m", 3.0), ("150cm", 1.5), ("18in", 18 * 0.0254), ("2ft", 2 * 0.3048), ("25 mm", 0.025), ("1.5km", 1500.0),
    ("3", 3.0), ("3CM", 0.03), (0.7, 0.7),
])
def test_lengths(text, m):
    # 1 in = 25.4 mm and 1 ft = 12 in = 0.3048 m exactly (1959 agreement); 1 cm = 1e-2 m (SI)
    assert parse_length(text) == pytest.approx(m, rel=1e-15)


@pytest.mark.parametrize("text", ["3 furlongs", "3 yd", "m", "3 m m"])
def test_bad_lengths(text):
    with pytest.raises(UsageError):
        parse_length(text)


@pytest.mark.parametrize("text,s", [
    ("250ps", 250e-12), ("1.2ns", 1.2e-9), ("3us", 3e-6), ("3\u00b5s", 3e-6), ("2ms", 2e-3), ("1s", 1.0),
    ("10fs", 10e-15), ("1e-9", 1e-9), ("85 PS", 85e-12),
])
def test_times(text, s):
    assert parse_time(text) == pytest.approx(s, rel=1e-15)


def test_bad_time():
    with pytest.raises(UsageError, match="unknown unit"):
        parse_time("3 fortnights")


@pytest.mark.parametrize("text,band", [
    ("902MHz:928MHz", (902e6, 928e6)), ("902 MHz:928 MHz", (902e6, 928e6)), ("902e6:928e6", (902e6, 928e6)),
    ("2.4GHz:2500MHz", (2.4e9, 2.5e9)), ("0Hz:1kHz", (0.0, 1e3)), ("901999999.95Hz:928MHz", (901999999.95, 928e6)),
])
def test_bands(text, band):
    assert parse_band(text) == pytest.approx(band, rel=1e-15)


@pytest.mark.parametrize("text,words", [
    ("902:928MHz", "one side only"),  # would otherwise read as 902 Hz to 928 MHz
    ("902MHz:928", "one side only"),
    ("2.4:2.5 GHz", "one side only"),
    ("928MHz:902MHz", "at or below"), ("915MHz:915MHz", "at or below"),
    ("-5MHz:928MHz", "negative"),
    ("902MHz-928MHz", "cannot read band"), ("902MHz:915MHz:928MHz", "cannot read band"), ("", "cannot read band"),
])
def test_bad_bands(text, words):
    with pytest.raises(UsageError) as e:
        parse_band(text)
    assert words in str(e.value) and "\n" not in str(e.value)


def test_one_sided_band_error_suggests_the_unit_on_both_sides():
    with pytest.raises(UsageError) as e:
        parse_band("902:928MHz")
    assert "902MHz:928MHz" in str(e.value)


@pytest.mark.parametrize("hz,text", [
    (915e6, "915.000 MHz"), (2.45e9, "2.450 GHz"), (13.56e6, "13.560 MHz"), (32.768e3, "32.768 kHz"),
    (50.0, "50.000 Hz"), (math.nan, "n/a"), (math.inf, "n/a"),
])
def test_format_frequency(hz, text):
    assert format_frequency(hz) == text


def test_format_frequency_round_trips():
    for f in (433.92e6, 868.3e6, 2.412e9, 5.8e9):
        assert parse_frequency(format_frequency(f, digits=6)) == pytest.approx(f, rel=1e-12)


@pytest.mark.parametrize("value,unit,digits,text", [
    (38.98e-9, "H", 4, "38.98 nH"), (2.6e-12, "F", 3, "2.6 pF"), (1200.0, "ohm", 3, "1.2 kohm"),
    (4.7e-6, "H", 3, "4.7 uH"), (1.0, "ohm", 3, "1 ohm"), (0.0, "F", 3, "0 F"),
])
def test_format_value_si(value, unit, digits, text):
    assert format_value_si(value, unit, digits) == text

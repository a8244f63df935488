"""IEC 60063 preferred-number series."""

from __future__ import annotations

import numpy as np
import pytest

from matchtool import eseries
from matchtool.errors import UsageError


def test_e12_e24_tables_iec60063():
    # IEC 60063 tables (confirmed; copied in tests/REFERENCES.md)
    assert eseries.E12 == (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
    assert len(eseries.E24) == 24 and list(eseries.E24) == sorted(set(eseries.E24))
    # E12 is every second E24 value (IEC 60063 construction; from memory)
    assert eseries.E24[::2] == eseries.E12


def test_e24_departs_from_rounded_formula_where_the_standard_says():
    # IEC 60063: E24 differs from round(10 * 10^(i/24)) at 2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2
    formula = [int(round(10 * 10 ** (i / 24))) for i in range(24)]
    differ = {t for t, f in zip(eseries.E24, formula, strict=True) if t != f}
    assert differ == {27, 30, 33, 36, 39, 43, 47, 82}


def test_e96_formula_and_e48_is_every_second_e96():
    # IEC 60063: E96 = round(100 * 10^(i/96)) (confirmed against the table)
    assert eseries.E96[0] == 100 and eseries.E96[-1] == 976 and len(eseries.E96) == 96
    # E48 table written from memory; it must be every second E96 value
    assert eseries.E48 == eseries.E96[::2]


@pytest.mark.parametrize("name", ["E12", "E24", "E48", "E96"])
def test_neighbours_bracket_the_value(name):
    rng = np.random.default_rng(3)
    for v in 10 ** rng.uniform(-13, -6, 50):
        nb = eseries.neighbours(v, name, 2)
        assert nb.size == 4
        assert nb[1] <= v * (1 + 1e-9) and nb[2] > v
        mant = nb / 10 ** np.floor(np.log10(nb) + 1e-12)
        table = eseries.series_mantissas(name)
        assert all(np.isclose(m, table).any() for m in mant)


def test_exact_value_is_its_own_neighbour_and_nearest():
    assert eseries.nearest(3.9e-9, "E24") == pytest.approx(3.9e-9)
    assert eseries.nearest(4.0e-9, "E12") == pytest.approx(3.9e-9)
    assert eseries.neighbours(1.234e-12, "exact").tolist() == [1.234e-12]


def test_unknown_series_is_a_usage_error():
    with pytest.raises(UsageError):
        eseries.normalize_series_name("E7")


@pytest.mark.parametrize("name", ["E12", "E24", "E48", "E96"])
def test_values_between_lists_every_decade_of_the_table(name):
    # every series value in [0.1 pF, 100 nF]: the IEC 60063 digits times each power of ten, ends included
    vals = eseries.values_between(0.1e-12, 100e-9, name)
    table = eseries.SERIES[name]
    per_decade = len(table)
    assert vals[0] == 0.1e-12 and vals[-1] == 100e-9
    assert vals.size == 6 * per_decade + 1  # six decades, plus the top end (derived)
    scale = 10 ** (len(str(table[0])) - 1)
    for v in vals:
        mant = float(f"{v:.6e}".split("e")[0]) * scale
        assert int(round(mant)) in table or int(round(mant / 10)) in table
        assert float(repr(float(v))) == v and len(repr(float(v))) <= 9  # the decimal value, e.g. 8.2e-12


def test_values_between_refuses_exact_and_bad_ranges():
    with pytest.raises(UsageError):
        eseries.values_between(1e-12, 1e-9, "exact")
    with pytest.raises(UsageError):
        eseries.values_between(0.0, 1e-9, "E12")

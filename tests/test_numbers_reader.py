"""The JSON reader of Touchstone numbers (``touchstone.numbers``): every value it returns is the
correctly rounded double of the token, bit for bit, and it hands over (returns None) for every
token that is not a JSON number, so the other paths judge it.

Reference: Python's ``float()``, which rounds correctly (CPython converts with David Gay's
``dtoa.c``; Python Language Reference, "Floating point literals", and Python FAQ "floating point
arithmetic"). Hard cases: decimal numbers exactly halfway between two adjacent doubles, and
numbers a hair above and below such a midpoint (the cases of Paxson, "A Program for Testing IEEE
Decimal-Binary Conversion", 1991), subnormals and the ends of the range (IEEE 754-2019, 3.4).
"""

from __future__ import annotations

import random
import struct
from decimal import Decimal, getcontext

import numpy as np
import orjson
import pytest

import matchtool.touchstone.numbers as nm


def _bits(values) -> list[int]:
    return np.asarray(values, dtype=float).view(np.int64).tolist()


def _read(tokens: list[str], sep: str = " ") -> np.ndarray | None:
    got = nm._numbers_json(sep.join(tokens).encode("ascii"), orjson)
    return None if got is None else got[0]


def _midpoints(n: int, seed: int) -> list[str]:
    getcontext().prec = 1200
    rng = random.Random(seed)
    out = []
    for _ in range(n):
        x = struct.unpack("<d", struct.pack("<Q", rng.randint(1, 0x7FEFFFFFFFFFFFFF)))[0]
        mid = (Decimal(x) + Decimal(float(np.nextafter(x, np.inf)))) / 2
        out.append(format(mid, "e"))  # exactly halfway: ties go to even
        out.append(format(mid * (1 + Decimal("1e-35")), ".45e"))
        out.append(format(mid * (1 - Decimal("1e-35")), ".45e"))
    return out


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_halfway_cases_round_like_float(seed):
    tokens = _midpoints(1500, seed)
    got = _read(tokens)
    assert got is not None
    assert _bits(got) == _bits([float(t) for t in tokens])


def test_long_mantissas_and_every_exponent_round_like_float():
    rng = random.Random(7)
    tokens = []
    for _ in range(40000):
        digits = "".join(rng.choice("0123456789") for _ in range(rng.randint(1, 40))).lstrip("0") or "1"
        cut = rng.randint(1, len(digits))
        tokens.append(f"{rng.choice(['', '-'])}{digits[:cut]}.{digits[cut:] or '0'}e{rng.randint(-340, 308 - cut)}")
    got = _read(tokens, sep="\n")
    assert _bits(got) == _bits([float(t) for t in tokens])


def test_ends_of_the_range_and_integers():
    tokens = ["4.9406564584124654e-324", "2.4703282292062327e-324", "2.4703282292062328e-324",
              "2.2250738585072011e-308", "2.2250738585072012e-308", "1.7976931348623157e308",
              "9007199254740993", "9007199254740993.0", "18446744073709551615", "18446744073709551616",
              "123456789012345678901234567890", "-9223372036854775809", "1e-400", "0.1", "700000000"]
    assert _bits(_read(tokens)) == _bits([float(t) for t in tokens])


def test_signed_zeros_keep_their_sign():
    tokens = ["-0", "0", "-0.0", "0.0", "-0e5", "-0E-3", "+0"]
    got = _read(tokens)
    assert np.signbit(got).tolist() == [True, False, True, False, True, True, False]


def test_leading_plus_is_read():
    got = _read(["+1.5", "+2E+05", "-3", "+0.25e-1"])
    assert got.tolist() == [1.5, 2e5, -3.0, 0.025]


@pytest.mark.parametrize("token", [".5", "5.", "007", "1.e5", "-.5", "+-1", "+.5", "+", "-", "1e", "1.2.3", "1-2",
                                   "1e999", "-1e999", "nan", "inf", "true", "null", "[1]", "0x10", "1,5", "1\v2"])
def test_what_json_does_not_read_is_handed_over(token):
    assert _read(["1.0", token, "2.0"]) is None


def test_counts_per_line_and_blocks_agree_with_split(monkeypatch):
    monkeypatch.setattr(nm, "_BLOCK", 64)  # many blocks, each ending at a line end
    rng = random.Random(3)
    lines = [" ".join(repr(rng.uniform(-1, 1)) for _ in range(rng.choice([0, 1, 3, 9]))) for _ in range(400)]
    text = "\n".join(lines) + "\n"
    for data in (text, text.encode("ascii")):
        values, counts = nm._numbers_json(data, orjson)
        assert values.tolist() == [float(t) for t in text.split()]
        assert counts.tolist() == [len(ln.split()) for ln in text.split("\n")]


def test_a_lot_of_files_imports_the_reader(monkeypatch, tmp_path):
    from matchtool import batch

    calls = []
    monkeypatch.setattr(batch, "use_json_reader", lambda: calls.append(1) or True)
    monkeypatch.setattr(batch, "_run_local", lambda todo, *a, **k: [None] * len(todo))
    batch.run_units([], spec=None, jobs=1)
    assert calls == []
    batch.run_units([str(tmp_path / f"u{k}.s1p") for k in range(batch.LOT_READER_MIN_FILES + 1)], spec=None, jobs=1)
    assert calls == [1]

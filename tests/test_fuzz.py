"""Fuzzing the Touchstone loader with near-valid text (hypothesis).

Three properties:
1. Anything near-valid (random option lines in any order, numbers, comments, line endings, BOM,
   truncations, version 2 keywords) either loads with finite, strictly increasing data or raises
   matchtool's own MatchtoolError with a one-line message naming the file - never anything else.
2. Valid files in any harmless layout load with exactly the numbers written (nothing misread).
3. The parser's fast path agrees with its exact path (numbers, counts, or the same error), and
   both with Python's own reading of the text.

At least 1,000 examples per test in the normal run; the long run is
    HYPOTHESIS_PROFILE=long python -m pytest tests/test_fuzz.py
which takes the 'long' profile of tests/conftest.py (10,000 examples per test). Every test here
is marked ``slow``: ``python -m pytest -m "not slow"`` leaves them out of the quick loop.
"""

from __future__ import annotations

import atexit
import cmath
import math
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from matchtool.errors import MatchtoolError
from matchtool.sweep import load

pytestmark = pytest.mark.slow  # the long fuzz: run by default and by .ci/run; skipped by -m "not slow"

N_EXAMPLES = max(1000, settings.default.max_examples)
FUZZ = settings(max_examples=N_EXAMPLES, deadline=None, suppress_health_check=list(HealthCheck))
TMP = Path(tempfile.mkdtemp(prefix="matchtool-fuzz-"))
atexit.register(shutil.rmtree, TMP, True)

UNITS = ["Hz", "kHz", "MHz", "GHz", "hz", "KHZ", "mhz", "THz"]
PARAMS = ["S", "Y", "Z", "H", "G", "s", "z", "T"]
FORMATS = ["RI", "MA", "DB", "ri", "ma", "db", "XY"]
KEYWORDS = ["[Version] 2.0", "[Version] 2.1", "[Number of Ports] 1", "[Number of Ports] 2",
            "[Two-Port Data Order] 12_21", "[Two-Port Data Order] 21_12", "[Number of Frequencies] 3",
            "[Number of Noise Frequencies] 1", "[Reference] 50 75", "[Reference] 50", "[Matrix Format] Full",
            "[Matrix Format] Lower", "[Matrix Format] Upper", "[Begin Information]", "[End Information]",
            "[Network Data]", "[Noise Data]", "[End]", "[Mixed-Mode Order] D1,2", "[Bogus]"]
ENDINGS = ["\n", "\r\n", "\r"]


def rare(draw, k: int) -> bool:
    """True about once in ``k`` draws (the rare choice last: hypothesis favours early ones)."""
    return draw(st.sampled_from([False] * (k - 1) + [True]))


@st.composite
def option_line(draw) -> str:
    parts = []
    if draw(st.booleans()):
        parts.append(draw(st.sampled_from(UNITS)))
    if draw(st.booleans()):
        parts.append(draw(st.sampled_from(PARAMS)))
    if draw(st.booleans()):
        parts.append(draw(st.sampled_from(FORMATS)))
    if draw(st.booleans()):
        r = draw(st.sampled_from(["50", "75", "1e3", "50", "0", "-50", "abc", "nan"]))
        parts.append(f"R {r}")
    if rare(draw, 10):
        parts.append(draw(st.sampled_from(["R", "MHz", "S", "junk", "!x"])))
    parts = draw(st.permutations(parts))
    sep = draw(st.sampled_from([" ", "\t", "  "]))
    return "#" + sep + sep.join(parts)


NUMBER = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.floats(-1e3, 1e3).map(lambda x: f"{x:.6g}"),
    st.integers(-5, 5000).map(str),
    st.sampled_from(["nan", "inf", "-inf", "1e999", "1.2.3", "1-2", "-", ".", "e5", "0x10", "1,5", "1D3"]),
)


@st.composite
def data_line(draw) -> str:
    k = draw(st.integers(0, 11))
    nums = draw(st.lists(NUMBER, min_size=k, max_size=k))
    line = draw(st.sampled_from([" ", "\t", "  "])).join(nums)
    if rare(draw, 6):
        line += " ! comment"
    return line


@st.composite
def ascending_rows(draw, per: int) -> list[str]:
    n = draw(st.integers(1, 6))
    f = sorted(set(draw(st.lists(st.integers(1, 10_000), min_size=n, max_size=n))))
    out = []
    for fi in f:
        vals = draw(st.lists(st.floats(-2, 2).map(lambda x: f"{x:.6g}"), min_size=per - 1, max_size=per - 1))
        out.append(" ".join([str(fi), *vals]))
    return out


@st.composite
def near_valid(draw) -> tuple[bytes, str]:
    lines: list[str] = []
    v2 = draw(st.booleans())
    if v2:
        lines.append(draw(st.sampled_from(["[Version] 2.0", "[Version] 2.1"])))
    if not rare(draw, 8):
        lines.append(draw(option_line()))
    elif draw(st.booleans()):
        lines.append("# MHz S RI R 50")
    per = draw(st.sampled_from([3, 9]))
    if v2:
        nports = 1 if per == 3 else 2
        lines += [f"[Number of Ports] {nports}"] * draw(st.sampled_from([1, 1, 0]))
        if nports == 2:
            lines.append(draw(st.sampled_from(["[Two-Port Data Order] 12_21", "[Two-Port Data Order] 21_12"])))
        lines += draw(st.lists(st.sampled_from(KEYWORDS), max_size=2))
        lines.append("[Network Data]")
    lines += draw(ascending_rows(per))
    junk = st.text(st.characters(codec="utf-8", exclude_categories=["Cc", "Cs"]), max_size=20)
    extra = draw(st.lists(st.one_of(data_line(), st.sampled_from(KEYWORDS), option_line(),
                                    st.just("! a comment"), st.just(""), junk), max_size=3))
    for item in extra:
        lines.insert(draw(st.integers(0, len(lines))), item)
    if v2 and draw(st.booleans()):
        lines.append("[End]")
    end = draw(st.sampled_from(ENDINGS))
    txt = end.join(lines) + draw(st.sampled_from([end, ""]))
    enc = draw(st.sampled_from(["ascii", "utf-8", "latin-1", "utf-8-sig"]))
    raw = txt.encode(enc, errors="replace")
    if rare(draw, 5):
        raw = raw[: draw(st.integers(0, len(raw)))]
    if rare(draw, 20):
        at = draw(st.integers(0, len(raw)))
        raw = raw[:at] + draw(st.binary(min_size=1, max_size=8)) + raw[at:]
    good = "f.s1p" if per == 3 else "f.s2p"
    name = draw(st.sampled_from([good, good, good, "f.ts", "f.s1p", "f.s2p", "f.s3p", "f.txt", "F.S1P"]))
    return raw, name


def _write(raw: bytes, name: str) -> Path:
    p = TMP / name
    p.write_bytes(raw)
    return p


@FUZZ
@given(near_valid())
def test_near_valid_text_loads_cleanly_or_fails_with_our_error(case):
    raw, name = case
    p = _write(raw, name)
    try:
        sw = load(p)
    except MatchtoolError as exc:
        msg = str(exc)
        assert "\n" not in msg and "\r" not in msg
        assert msg.startswith(str(p))
        return
    f = sw.f_hz
    assert f.size >= 1 and np.all(np.isfinite(f)) and np.all(f >= 0)
    assert np.all(np.diff(f) > 0)
    assert np.all(np.isfinite(sw.network.s))
    assert np.all(np.isfinite(sw.gamma))
    z0 = np.real(sw.network.z0)
    assert np.all(np.isfinite(z0)) and np.all(z0 > 0)
    assert all(isinstance(w, str) and "\n" not in w for w in sw.warnings)


@st.composite
def valid_one_port(draw):
    """A valid 1-port file in a random harmless layout, with the values it holds."""
    unit = draw(st.sampled_from([("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9)]))
    fmt = draw(st.sampled_from(["RI", "MA", "DB"]))
    r_ohm = draw(st.sampled_from([50.0, 75.0, 25.5, 300.0]))
    fields = [draw(st.sampled_from([unit[0], unit[0].upper(), unit[0].lower()])), draw(st.sampled_from(["S", "s"])),
              draw(st.sampled_from([fmt, fmt.lower()])), f"{draw(st.sampled_from(['R', 'r']))} {r_ohm:g}"]
    fields = draw(st.permutations(fields))
    n = draw(st.integers(2, 30))
    f_int = sorted(draw(st.sets(st.integers(1, 10**7), min_size=n, max_size=n)))
    mags = draw(st.lists(st.floats(1e-4, 0.999), min_size=n, max_size=n))
    angs = draw(st.lists(st.floats(-179.0, 179.0), min_size=n, max_size=n))
    gamma = [m * cmath.exp(1j * math.radians(a)) for m, a in zip(mags, angs, strict=True)]
    blank = draw(st.sampled_from([" ", "\t", "   ", " \t "]))
    rows = []
    for fi, m, a, g in zip(f_int, mags, angs, gamma, strict=True):
        if fmt == "RI":
            pair = (repr(g.real), repr(g.imag))
        elif fmt == "MA":
            pair = (repr(m), repr(a))
        else:
            pair = (repr(20 * math.log10(m)), repr(a))
        row = blank.join([str(fi), *pair])
        if rare(draw, 5):
            row += " ! note"
        rows.append(row)
    lines = ["! generated"] * draw(st.integers(0, 2)) + ["#" + blank + blank.join(fields)] + rows
    end = draw(st.sampled_from(ENDINGS))
    bom = draw(st.sampled_from([b"", b"\xef\xbb\xbf"]))
    raw = bom + (end.join(lines) + end).encode()
    expect_f = np.array(f_int, dtype=float) * unit[1]
    return raw, expect_f, np.array(gamma), r_ohm


@FUZZ
@given(valid_one_port())
def test_valid_layouts_load_the_numbers_written(case):
    raw, f_hz, gamma, r_ohm = case
    sw = load(_write(raw, "valid.s1p"))
    assert sw.warnings == []
    assert np.allclose(sw.f_hz, f_hz, rtol=1e-15, atol=0)
    assert np.allclose(sw.gamma, gamma, rtol=0, atol=1e-12)
    assert sw.z0_ohm == r_ohm


SEEDS = [
    b"! seed\n# MHz S RI R 50\n100 0.5 0.1\n200 0.2 -0.3\n300 0.05 0.01\n",
    b"# GHz S MA R 50\n1 0.1 0 0.9 10 0.9 10 0.2 45\n2 0.1 5 0.8 20 0.8 20 0.3 50\n1.5 1.2 0.3 45 0.4\n",
    b"[Version] 2.0\n# MHz Z RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 2\n[Reference] 75\n"
    b"[Network Data]\n100 40 10\n200 60 -5\n[End]\n",
    b"[Version] 2.1\n# GHz S DB R 50\n[Number of Ports] 3\n[Matrix Format] Upper\n[Network Data]\n"
    b"1 -3 0 -10 0 -10 0 -3 0 -10 0 -3 0\n2 -4 0 -11 0 -11 0 -4 0 -11 0 -4 0\n",
]


@st.composite
def mutated(draw) -> tuple[bytes, str]:
    """A valid file with a few random byte edits (insert, delete, replace, duplicate a span)."""
    k = draw(st.integers(0, len(SEEDS) - 1))
    raw = bytearray(SEEDS[k])
    for _ in range(draw(st.integers(1, 4))):
        at = draw(st.integers(0, len(raw)))
        op = draw(st.sampled_from(["insert", "delete", "replace", "dup"]))
        piece = draw(st.one_of(st.sampled_from([b" ", b"\n", b"\r", b"-", b".", b"e", b"!", b"#", b"[", b"]", b"0",
                                                b"9", b"\t", b"\xa0", b"\xb5", b"R", b"1e400"]),
                               st.binary(min_size=1, max_size=3)))
        if op == "insert":
            raw[at:at] = piece
        elif op == "delete":
            del raw[at: at + draw(st.integers(1, 5))]
        elif op == "replace":
            raw[at: at + len(piece)] = piece
        else:
            raw[at:at] = raw[at: at + draw(st.integers(1, 40))]
    name = ["m.s1p", "m.s2p", "m.ts", "m.s3p"][k]
    return bytes(raw), name


@FUZZ
@given(mutated())
def test_byte_edits_of_valid_files_load_cleanly_or_fail_with_our_error(case):
    test_near_valid_text_loads_cleanly_or_fails_with_our_error.hypothesis.inner_test(case)


# Property 3: the parser's fast path (one np.fromstring, counts from byte arithmetic) gives exactly
# what the exact path gives, or hands over to it: the same numbers and counts per line, or the
# same error (message and line) for text made of number-like pieces.
_PIECES = ["0", "1", "23", "4.5", ".5", "6.", "-7", "+8", "1e3", "2E-2", "-", "+", ".", "e", "1.2.3", "1-2",
           "nan", "inf", "1e999", "0,5", "x", "0x10", " ", "  ", "\t", "\f", "\v", "\n", "\n\n",
           # what JSON reads differently from strtod, or not at all (the JSON reader must hand over)
           "-0", "-0.0", "007", "1.e5", "-.5", "+-1", "+.5", "+0", "1E+05", "9007199254740993",
           "123456789012345678901234567890", "true", "null", "[1]", ","]


@FUZZ
@given(st.lists(st.sampled_from(_PIECES), min_size=1, max_size=60), st.booleans())
def test_fast_path_agrees_with_the_exact_path(pieces, as_bytes):
    import orjson

    import matchtool.touchstone.numbers as nm
    from matchtool.errors import TouchstoneError

    text = "".join(pieces)
    data = text.encode("ascii") if as_bytes else text

    def run(path: str):
        saved = nm._numbers_fast, nm._json_reader
        if path == "exact":
            nm._numbers_fast = lambda data: None
        else:  # the fast path with the JSON reader, or with np.fromstring alone
            nm._json_reader = (lambda size: orjson) if path == "json" else (lambda size: None)
        try:
            v, c = nm.numbers(data, 10, "f.s1p", "network data")
            return ("ok", [(x, math.copysign(1.0, x)) for x in v.tolist()], c.tolist())
        except TouchstoneError as exc:
            return ("error", str(exc), exc.line)
        finally:
            nm._numbers_fast, nm._json_reader = saved

    exact = run("exact")
    assert run("json") == exact
    assert run("fromstring") == exact
    if exact[0] == "ok":  # and all agree with Python's own reading of the same text, sign of zero too
        assert exact[1] == [(float(t), math.copysign(1.0, float(t))) for t in text.split()]
        assert exact[2] == [len(line.split()) for line in text.split("\n")]

"""Tokens and numbers of Touchstone text: line bookkeeping, control-line scanning, and the
vectorised conversion of data chunks to numbers.

The count of numbers on each line comes from numpy byte arithmetic. The numbers themselves go
through one C-speed conversion: orjson's JSON reader (a correctly rounded decimal-to-binary
conversion, about three times faster than ``np.fromstring`` here) once the blanks between the
tokens are turned into commas, else ``np.fromstring``; anything either does not accept goes
through the exact path, which names the first bad token."""

from __future__ import annotations

import math
import re
import sys

import numpy as np

from ..errors import TouchstoneError

_NOT_NUMERIC = re.compile(r"[^0-9eE+\-. \t\n\v\f]")
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_DATA_BYTES = b"0123456789eE+-. \t\n\v\f"


class Lines:
    """Maps character offsets in the text (a str, or ASCII bytes) to 1-based line numbers
    (monotonic queries are cheap)."""

    def __init__(self, text: str | bytes, base: int = 0) -> None:
        self.text = text
        self.nl = b"\n" if isinstance(text, bytes) else "\n"
        self.base = base  # lines before the text (the head of a file read in two parts)
        self.pos = 0
        self.line = 1 + base

    def at(self, offset: int) -> int:
        if offset < self.pos:
            self.pos, self.line = 0, 1 + self.base
        self.line += self.text.count(self.nl, self.pos, offset)
        self.pos = offset
        return self.line



def show(token: str, limit: int = 40, quote: bool = True) -> str:
    """A file's text for an error message: quoted, at most ``limit`` characters (one line)."""
    t = token if len(token) <= limit else token[:limit] + "..."
    return repr(t) if quote else t


def positive(token: str, path: str, line: int, what: str) -> float:
    if not _NUMBER.fullmatch(token):
        raise TouchstoneError(f"{what} {show(token)} is not a number", path, line)
    value = float(token)
    if not (math.isfinite(value) and value > 0):
        raise TouchstoneError(f"{what} is {show(token)}", path, line, expected="a positive number of ohms")
    return value


def bad_token(chunk: str, first_line: int, path: str, what: str) -> TouchstoneError:
    """Find the first token of ``chunk`` that is not a plain decimal number and describe it."""
    for k, text in enumerate(chunk.split("\n")):
        for tok in re.split(r"[ \t\v\f]+", text):
            if not tok:
                continue
            if not _NUMBER.fullmatch(tok):
                low = tok.lower()
                if low.lstrip("+-") in ("nan", "inf", "infinity"):
                    return TouchstoneError(f"non-finite value {show(tok)} in {what}", path, first_line + k,
                                           expected="finite numbers")
                if low.startswith("["):
                    return TouchstoneError(f"keyword {show(tok)} out of place", path, first_line + k)
                return TouchstoneError(f"expected a number in {what}, found {show(tok)}", path, first_line + k)
    m = _NOT_NUMERIC.search(chunk)
    if m:
        return TouchstoneError(f"unexpected character {m.group()!r} in {what}", path,
                               first_line + chunk.count("\n", 0, m.start()))
    return TouchstoneError(f"unreadable numbers in {what}", path, first_line)


def _token_starts(raw: np.ndarray) -> np.ndarray:
    """Where a token starts in ``raw`` (the bytes of a chunk): a byte above the space after a
    blank, or opening the chunk."""
    filled = raw > 32
    starts = np.empty(raw.size, dtype=bool)
    starts[0] = filled[0]
    np.greater(filled[1:], filled[:-1], out=starts[1:])  # filled here, blank before
    return starts


def _counts_per_line(raw: np.ndarray, starts: np.ndarray | None = None) -> np.ndarray:
    """Tokens on each line of ``raw`` (the bytes of a chunk; ``starts`` from
    :func:`_token_starts`, found here if not given). Summed per line with one ``add.reduceat`` in
    uint8, which cannot overflow while every line is shorter than 511 bytes (a token and its blank
    take two); longer lines are counted through the token positions instead."""
    if starts is None:
        starts = _token_starts(raw)
    newline_at = np.flatnonzero(raw == 10)
    seg = np.empty(newline_at.size + 1, dtype=np.intp)
    seg[0] = 0
    seg[1:] = newline_at + 1
    ends_empty = seg[-1] == raw.size  # the chunk ends with a newline: its last line is empty
    bounds = seg[:-1] if ends_empty else seg
    longest = int(np.diff(seg).max(initial=0)) if seg.size > 1 else raw.size
    if max(longest, raw.size - int(seg[-1])) < 511:
        counts = np.add.reduceat(starts.view(np.uint8), bounds, dtype=np.uint8).astype(np.int64)
    else:
        token_at = np.flatnonzero(starts)
        counts = np.diff(np.searchsorted(token_at, np.append(bounds, raw.size)))
    return np.append(counts, 0) if ends_empty else counts


_BLOCK = 1 << 19  # bytes counted at a time: the temporaries stay small whatever the file's size


def _blocks(data: str | bytes):
    """Yield (bytes of the block as uint8, is the last block, the block's encoded bytes for a
    str, else None) for ``data`` (ASCII bytes, or an ASCII str), about ``_BLOCK`` bytes at a
    time (half a megabyte measured fastest: the temporaries stay in cache), each block but the
    last ending after a newline (so no line is split; a block opens with a line start). A str is
    encoded a block at a time: the whole text is never copied."""
    is_str = isinstance(data, str)
    nl = "\n" if is_str else b"\n"

    def block(a: int, b: int, last: bool):
        if is_str:
            blob = data[a:b].encode("ascii")
            return np.frombuffer(blob, dtype=np.uint8), last, blob
        return np.frombuffer(data, dtype=np.uint8, count=b - a, offset=a), last, None

    size = len(data)
    if size <= 2 * _BLOCK:
        yield block(0, size, True)
        return
    a = 0
    while a < size:
        b = data.rfind(nl, a, a + _BLOCK) + 1
        if b <= a:  # a line longer than a block
            b = data.find(nl, a + _BLOCK) + 1 or size
        yield block(a, b, b >= size)
        a = b


def _counts_in_blocks(data: str | bytes) -> np.ndarray:
    """:func:`_counts_per_line` of ``data``, a block at a time (see :func:`_blocks`)."""
    parts = [c if last else c[:-1]  # the empty line after a block's last newline
             for c, last in ((_counts_per_line(raw), last) for raw, last, _ in _blocks(data))]
    return parts[0] if len(parts) == 1 else np.concatenate(parts)


# --- the JSON reader: the numbers of a block as one JSON array ----------------------------------

JSON_READER_MIN_BYTES = 1 << 20
"""Data of at least this many bytes import orjson for their numbers (about 14 ms, paid back after
about 100,000 numbers); smaller data use it once it is imported: a lot imports it up front
(:func:`use_json_reader`), a single small file does not need it."""

# bytes a block may hold for the JSON reader: digits, sign, point, exponent, space, tab, newline
_JSON_BYTES = b"0123456789eE+-. \t\n"
_COMMA, _SPACE, _PLUS, _MINUS = 44, 32, 43, 45
_DIGIT = np.zeros(256, dtype=bool)
_DIGIT[48:58] = True


def use_json_reader() -> bool:
    """Import the JSON reader now (a lot of files: every file then takes it). False when orjson
    is not installed (the numbers then go through ``np.fromstring``, with the same values)."""
    try:
        import orjson  # noqa: F401
    except ImportError:
        return False
    return True


def _json_reader(size: int):
    mod = sys.modules.get("orjson")
    if mod is None and size >= JSON_READER_MIN_BYTES and use_json_reader():
        mod = sys.modules.get("orjson")
    return mod


def _block_json(raw: np.ndarray, orjson) -> tuple[np.ndarray, np.ndarray] | None:
    """Numbers and counts per line of one block (its bytes, ending at a line end, holding only
    :data:`_JSON_BYTES`), or None.

    Every number token is made a JSON array element: the blank before each token becomes a comma
    and a leading '+' a blank (JSON has no unary plus). Only digits, signs, '.', 'e'/'E' and
    blanks reach the reader, so it can only return numbers; a token that is not a JSON number
    ('.5', '1.', '007', '1e', '+-1') makes it refuse the block, and the caller falls back to
    ``np.fromstring``, so the accepted tokens are a subset of what strtod reads, with the same
    correctly rounded values (checked bit for bit against ``float`` in the tests). JSON's integer
    '-0' loses its sign in the reader and gets it back here."""
    if raw.size == 0:
        return None
    starts = _token_starts(raw)
    counts = _counts_per_line(raw, starts)
    buf = np.empty(raw.size + 2, dtype=np.uint8)
    buf[0], buf[-1] = 91, 93  # '[' and ']'
    body = buf[1:-1]
    # a comma on the blank before every token but the first (a comma, 44, is above every blank
    # and a start is always preceded by one), every other byte as it is
    np.multiply(starts[1:].view(np.uint8), _COMMA, out=body[:-1])
    np.maximum(body[:-1], raw[:-1], out=body[:-1])
    body[-1] = raw[-1]
    first = int(starts.argmax())
    if first:  # blanks before the first token: no comma before it
        body[first - 1] = raw[first - 1]
    plus = np.flatnonzero(starts & (raw == _PLUS))
    if plus.size:
        if plus[-1] + 1 >= raw.size or not _DIGIT[raw[plus + 1]].all():
            return None  # '+' alone, '+-1', '+.5': let the other paths judge them
        body[plus] = _SPACE
    try:
        items = orjson.loads(buf.data)
        values = np.fromiter(items, dtype=float, count=len(items))
    except (ValueError, TypeError, OverflowError):  # orjson.JSONDecodeError is a ValueError
        return None
    if values.size != int(counts.sum()) or not np.isfinite(values).all():
        return None
    zero = np.flatnonzero(values == 0)
    if zero.size:
        values[zero[raw[np.flatnonzero(starts)[zero]] == _MINUS]] = -0.0
    return values, counts


def _numbers_json(data: str | bytes, orjson) -> tuple[np.ndarray, np.ndarray] | None:
    """:func:`_block_json` over the blocks of ``data`` (see :func:`_blocks`); None if any block
    is refused."""
    whole = isinstance(data, bytes)
    if whole and data.translate(None, _JSON_BYTES):
        return None
    vals, cnts = [], []
    for raw, last, blob in _blocks(data):
        if not whole and blob.translate(None, _JSON_BYTES):
            return None
        got = _block_json(raw, orjson)
        if got is None:
            return None
        vals.append(got[0])
        cnts.append(got[1] if last else got[1][:-1])  # the empty line after a block's last newline
    values = vals[0] if len(vals) == 1 else np.concatenate(vals)
    if values.size == 0:
        return None
    return values, cnts[0] if len(cnts) == 1 else np.concatenate(cnts)


def _numbers_fast(data: str | bytes) -> tuple[np.ndarray, np.ndarray] | None:
    """The common case in one C-speed conversion: the JSON reader where it is loaded (see
    :data:`JSON_READER_MIN_BYTES`), else ``np.fromstring`` (from the ASCII bytes or str as it is:
    no copy), with the count per line from byte arithmetic. None whenever anything is unusual (a
    token that is not one plain finite number: the exact path then finds and names it)."""
    orjson = _json_reader(len(data))
    if orjson is not None:
        got = _numbers_json(data, orjson)
        if got is not None:
            return got
    counts = _counts_in_blocks(data)
    total = int(counts.sum())
    if total == 0:
        return None
    try:
        values = np.fromstring(data, dtype=float, sep=" ")
    except ValueError:
        return None
    # 'fromstring' reads only decimal numbers, 'nan' and 'inf' (refused below); a token read as
    # two numbers ('1-2') or not read at all changes the count
    if values.size != total or not np.isfinite(values).all():
        return None
    return values, counts


def numbers(chunk: str | bytes, first_line: int, path: str, what: str) -> tuple[np.ndarray, np.ndarray]:
    """All numbers of a data chunk, and the count of numbers on each of its lines (vectorised).

    Every token must be a plain finite decimal number; anything else raises TouchstoneError with
    the line of the first bad token. Memory stays a few bytes per character of the chunk. The
    common case takes :func:`_numbers_fast`; anything it does not accept goes through the exact
    path below, which finds and names the first bad token (the messages of the hostile corpus).
    """
    if isinstance(chunk, str) and not chunk.isascii():  # (str.isascii is a flag: no scan)
        raise bad_token(chunk, first_line, path, what)
    fast = _numbers_fast(chunk) if chunk else None
    if fast is not None:
        return fast
    if isinstance(chunk, bytes):  # ASCII (read from a plain file)
        data, chunk = chunk, chunk.decode("ascii")
    else:
        data = chunk.encode("ascii")
    if data.translate(None, _DATA_BYTES):  # something other than digits, signs, '.', 'e' and blanks
        raise bad_token(chunk, first_line, path, what)
    raw = np.frombuffer(data, dtype=np.uint8)
    newline_at = np.flatnonzero(raw == 10)
    if raw.size == 0:
        return np.empty(0), np.zeros(1, dtype=np.int64)
    filled = raw > 32  # only digits, signs, '.', 'e'/'E' and blanks are left at this point
    start = filled.copy()
    start[1:] &= ~filled[:-1]
    del filled
    token_at = np.flatnonzero(start)
    del start
    counts = np.bincount(np.searchsorted(newline_at, token_at), minlength=newline_at.size + 1)
    del token_at
    try:
        values = np.fromstring(chunk, dtype=float, sep=" ") if counts.sum() else np.empty(0)
    except ValueError:  # numpy 2 refuses a token it cannot read to its end ('1.2.3', '1e', '1-2')
        raise bad_token(chunk, first_line, path, what) from None
    if values.size != counts.sum():
        raise bad_token(chunk, first_line, path, what)
    if not np.isfinite(values).all():  # '1e999' reads as inf
        k = int(np.argmin(np.isfinite(values)))
        line = first_line + int(np.searchsorted(np.cumsum(counts), k, side="right"))
        raise TouchstoneError(f"number out of range in {what}", path, line,
                              expected="finite numbers (magnitude below 1e308)")
    return values, counts


def controls(body: str | bytes):
    """Yield (line start, line end, stripped text) of every line that begins (after blanks) with
    '#' or '['. Uses str.find (bytes.find for ASCII bytes: the text comes back as str), which is
    far faster than a regex scan of a large file."""
    raw = isinstance(body, bytes)
    nl = b"\n" if raw else "\n"
    blanks = b" \t\f\v" if raw else " \t\f\v"
    found = []
    for ch in (b"#", b"[") if raw else ("#", "["):
        k = body.find(ch)
        while k >= 0:
            found.append(k)
            k = body.find(ch, k + 1)
    found.sort()
    last_end = -1
    prev = -1
    for k in found:
        if k < last_end:  # inside a control line already yielded
            continue
        if prev >= 0 and body.find(nl, prev, k) < 0:
            prev = k
            continue  # same line as an earlier '#'/'[' that is not at its start (keeps this linear)
        prev = k
        start = body.rfind(nl, 0, k) + 1
        if body[start:k].strip(blanks):
            continue  # not at the start of its line: the data checks report it
        end = body.find(nl, k)
        end = len(body) if end < 0 else end
        last_end = end
        ctrl = body[k:end].strip()
        yield start, end, ctrl.decode("ascii") if raw else ctrl


def check_rows(counts: np.ndarray, first_line: int, per: int, path: str, what: str) -> None:
    wrong = np.flatnonzero((counts != 0) & (counts != per))
    if wrong.size:
        k = int(wrong[0])
        raise TouchstoneError(f"expected {per} numbers for a {what}, found {int(counts[k])}", path, first_line + k)


"""Tokens and numbers of Touchstone text: line bookkeeping, control-line scanning, and the
vectorised conversion of data chunks to numbers (one C-speed ``np.fromstring`` per chunk, with
the count of numbers on each line found by numpy byte arithmetic)."""

from __future__ import annotations

import math
import re

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


def _counts_per_line(raw: np.ndarray) -> np.ndarray:
    """Tokens on each line of ``raw`` (the bytes of a chunk): a token starts where a byte above
    the space follows a blank (or opens the chunk). Summed per line with one ``add.reduceat`` in
    uint8, which cannot overflow while every line is shorter than 511 bytes (a token and its blank
    take two); longer lines are counted through the token positions instead."""
    filled = raw > 32
    starts = np.empty(raw.size, dtype=bool)
    starts[0] = filled[0]
    np.greater(filled[1:], filled[:-1], out=starts[1:])  # filled here, blank before
    del filled
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


def _counts_in_blocks(data: str | bytes) -> np.ndarray:
    """:func:`_counts_per_line` of ``data`` (ASCII bytes, or an ASCII str), about ``_BLOCK``
    bytes at a time (half a megabyte measured fastest: the temporaries stay in cache), each block
    ending after a newline (so no line is split; a block opens with a line start). A str is
    encoded a block at a time: the whole text is never copied for the count (its numbers are
    read from the str itself by ``np.fromstring``)."""
    is_str = isinstance(data, str)
    nl = "\n" if is_str else b"\n"

    def block(a: int, b: int) -> np.ndarray:
        if is_str:
            return np.frombuffer(data[a:b].encode("ascii"), dtype=np.uint8)
        return np.frombuffer(data, dtype=np.uint8, count=b - a, offset=a)

    size = len(data)
    if size <= 2 * _BLOCK:
        return _counts_per_line(block(0, size))
    parts = []
    a = 0
    while a < size:
        b = data.rfind(nl, a, a + _BLOCK) + 1
        if b <= a:  # a line longer than a block
            b = data.find(nl, a + _BLOCK) + 1 or size
        part = _counts_per_line(block(a, b))
        parts.append(part[:-1] if b < size else part)  # the empty line after a block's last newline
        a = b
    return np.concatenate(parts)


def _numbers_fast(data: str | bytes) -> tuple[np.ndarray, np.ndarray] | None:
    """The common case in one C-speed conversion: ``np.fromstring`` reads every number (from the
    ASCII bytes or str as it is: no copy) and the count per line comes from byte arithmetic.
    None whenever anything is unusual (a token that is not one plain finite number: the exact
    path then finds and names it)."""
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


"""One policy for reading every input file: sweeps (Touchstone), specs, budgets, parts libraries.

- **Size.** A file over the input limit is refused before it is read. The limit is a parameter
  (``max_bytes``); when a caller gives none, :data:`DEFAULT_MAX_BYTES` applies, or the value the
  command line set with :func:`set_default_max_bytes` (the CLI reads ``MATCHTOOL_MAX_INPUT_MB``;
  the core never reads the environment). TOML files (hand-written settings) have their own,
  smaller limit, :data:`TOML_MAX_BYTES`.
- **Special files.** A FIFO, socket or device (or a link to one) is never opened: reading it can
  block for ever or never end (:func:`is_special_file`, :func:`special_file_error`).
- **Decoding.** UTF-8, with or without a byte-order mark; UTF-16 with a byte-order mark is
  decoded (the same for every kind of file); UTF-16 without one is refused as binary (NUL bytes).
  Latin-1 bytes are accepted only where they cannot change a number: in Touchstone comments (a
  non-ASCII character outside a comment is refused by the Touchstone parser); a TOML file must
  be UTF-8. Line ends are normalised to ``\\n`` for Touchstone text.

Errors are raised as the ``error`` class a caller passes (``TouchstoneError`` by default,
``SpecError`` or ``BudgetError`` for the TOML readers), so each caller's exception type and
message stay its own. See docs/input-policy.md.
"""

from __future__ import annotations

import os
import re
import stat
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from .errors import InputError, TouchstoneError

DEFAULT_MAX_BYTES = 500 * 1024 * 1024
"""Input files larger than this are refused (a parameter of every reader; the CLI may change the
process-wide default with :func:`set_default_max_bytes`)."""

TOML_MAX_BYTES = 1_000_000
"""A spec, budget or parts-library file is hand-written settings: larger ones are refused."""

LIMIT_HINT = "a smaller file, or raise MATCHTOOL_MAX_INPUT_MB"
SPECIAL_FILE = "is not a regular file (a FIFO, socket or device)"

_default_max_bytes = DEFAULT_MAX_BYTES
_BINARY = re.compile(rb"[\x00-\x08\x0e-\x1f\x7f]")
_BINARY_BYTES = bytes(b for b in range(256) if _BINARY.match(bytes([b])))
_KEEP_BINARY = bytes(b for b in range(256) if b not in _BINARY_BYTES)  # delete these, binary remains


def set_default_max_bytes(max_bytes: int | None) -> None:
    """Set the process-wide input limit used when a reader is given no ``max_bytes`` (bytes;
    None restores :data:`DEFAULT_MAX_BYTES`). Called by the CLI from ``MATCHTOOL_MAX_INPUT_MB``;
    worker processes forked by a batch inherit it."""
    global _default_max_bytes
    _default_max_bytes = DEFAULT_MAX_BYTES if max_bytes is None else int(max_bytes)


def default_max_bytes() -> int:
    """The input limit (bytes) that applies when a reader is given none."""
    return _default_max_bytes


def is_special_file(path: str | Path) -> bool:
    """Whether ``path`` exists but is neither a regular file nor a directory (a FIFO, socket or
    device, or a link to one): reading one can block for ever or never end, so it is never opened."""
    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return False  # missing or unreadable: the reader reports it
    return not (stat.S_ISREG(mode) or stat.S_ISDIR(mode))


def special_file_error(path: str | Path) -> str | None:
    """The one-line error for a sweep path that :func:`is_special_file`, else None."""
    return f"{path}: {SPECIAL_FILE}; expected a Touchstone file" if is_special_file(path) else None


def read_bytes(path: str | Path, max_bytes: int | None = None, what: str = "a Touchstone file",
               error: type[InputError] = TouchstoneError, _probe: bool = False) -> bytes:
    """The bytes of the regular file ``path``, refusing a missing path, a directory, a special
    file and a file over ``max_bytes`` (default :func:`default_max_bytes`) before reading it.

    ``what`` names the kind of file expected in messages. Raises ``error`` (an InputError class).
    """
    if not str(path):
        raise error("empty file name", path="''", expected=f"the path of {what}")
    p = Path(path)
    limit = _default_max_bytes if max_bytes is None else int(max_bytes)
    try:
        st = p.stat()
    except FileNotFoundError:
        raise error("no such file", path=path) from None
    except OSError as exc:
        raise error(f"cannot read: {exc.strerror or exc}", path=path) from None
    except ValueError:  # a NUL byte in the name
        raise error("the file name holds a NUL byte", path=repr(str(path))) from None
    if stat.S_ISDIR(st.st_mode):
        raise error("is a directory", path=path, expected=what)
    if not stat.S_ISREG(st.st_mode):  # a FIFO or device would block or never end
        raise error("not a regular file", path=path, expected=what)
    if st.st_size > limit:
        raise error(f"file is {st.st_size / 2**20:.1f} MB, over the input limit of {limit / 2**20:.1f} MB",
                    path=path, expected=LIMIT_HINT)
    if _probe:  # the checks only (read_touchstone reads a large file itself, in two parts)
        return b""
    try:
        with open(p, "rb") as fh:
            # read(limit + 1) would allocate the whole limit up front: read the size stat() gave
            raw, total = _read_on(fh, fh.read(st.st_size + 1), 0, limit)
    except OSError as exc:
        raise error(f"cannot read: {exc.strerror or exc}", path=path) from None
    if total > limit:
        raise error(f"file is over the input limit of {limit / 2**20:.1f} MB", path=path, expected=LIMIT_HINT)
    return raw


def _read_on(fh, first: bytes, before: int, limit: int) -> tuple[bytes, int]:
    """``first`` and whatever follows it in ``fh`` while the total (``before`` + bytes read) is
    within ``limit``: a file that grew after ``stat()`` is read on in small pieces, never past the
    limit. Returns (bytes, total including ``before``)."""
    more, total = [], before + len(first)
    while total <= limit:
        piece = fh.read(1 << 20)
        if not piece:
            break
        more.append(piece)
        total += len(piece)
    return (b"".join([first, *more]) if more else first), total


def _utf16(raw: bytes) -> bool:
    return raw.startswith((b"\xff\xfe", b"\xfe\xff"))


def _decode_utf16(raw: bytes, path: str | Path, error: type[InputError], expected: str) -> str:
    try:
        return raw.decode("utf-16")
    except UnicodeDecodeError:
        raise error("file starts with a UTF-16 byte-order mark but is not valid UTF-16", path=path,
                    expected=expected) from None


def decode_touchstone(raw: bytes, path: str | Path) -> str:
    """Decode the bytes of a Touchstone file; refuse binary content. Line ends become ``\\n``.

    UTF-8 (a byte-order mark is dropped); UTF-16 with a byte-order mark; otherwise the bytes are
    read as Latin-1 (old instruments write Latin-1 comments; the parser refuses any non-ASCII
    character outside a comment, so this can never change a number).
    """
    if _utf16(raw):
        text = _decode_utf16(raw, path, TouchstoneError, "ASCII or UTF-8 text")
        if text.startswith("\ufeff"):
            text = text[1:]
        m = re.search("[\x00-\x08\x0e-\x1f\x7f]", text)
        if m:
            line = text.count("\n", 0, m.start()) + 1
            raise TouchstoneError(f"binary content (character U+{ord(m.group()):04X})", path=path, line=line,
                                  expected="a Touchstone text file")
        return text.replace("\r\n", "\n").replace("\r", "\n")
    if raw.endswith(b"\x1a"):  # a DOS end-of-file mark (Ctrl-Z) written by old instruments
        raw = raw[:-1]
    m = _BINARY.search(raw) if raw.translate(None, _KEEP_BINARY) else None
    if m:
        line = raw.count(b"\n", 0, m.start()) + 1
        raise TouchstoneError(f"binary content (byte 0x{raw[m.start()]:02x})", path=path, line=line,
                              expected="a Touchstone text file")
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        text = raw.decode("latin-1")
    if "\r" in text:  # (two replacements of a large text cost more than this look)
        text = text.replace("\r\n", "\n").replace("\r", "\n")
    return text


def plain_touchstone(raw: bytes, path: str | Path) -> str | bytes:
    """The bytes of a Touchstone file as the parser reads them: ``raw`` itself when it is plain
    ASCII text (no binary content, no CR, no byte-order mark, no Ctrl-Z), so that a large file
    is not decoded into a string only to be encoded again for the number conversion; otherwise
    :func:`decode_touchstone` of it (same refusals and messages)."""
    if _plain(raw):
        return raw
    return decode_touchstone(raw, path)


@dataclass(frozen=True)
class PlainParts:
    """A large plain ASCII Touchstone file in two pieces that join at a line start: ``head``, the
    lines before its first data line (option line, keywords, comments), and ``rest``, read from
    the file by itself, so that the parser converts its numbers without copying them out of one
    buffer holding the whole file (a 45 MB copy costs about 25 ms and as much memory)."""

    head: bytes
    rest: bytes

    def __len__(self) -> int:
        return len(self.head) + len(self.rest)


SPLIT_MIN_BYTES = 1 << 20
"""Files at least this large are read as :class:`PlainParts` (smaller ones in one read)."""
_HEAD_BYTES = 1 << 16
_NOT_DATA_START = (b"!", b"#", b"[")


def _first_data_line(head: bytes) -> int:
    """Offset of the first line of ``head`` that holds something other than a comment, an option
    line or a keyword (the first data line); the start of its last, unfinished line if none."""
    k = 0
    while True:
        end = head.find(b"\n", k)
        if end < 0:
            return k
        text = head[k:end].lstrip(b" \t\v\f")
        if text and text[:1] not in _NOT_DATA_START:
            return k
        k = end + 1


def read_touchstone(path: str | Path, max_bytes: int | None = None,
                    on_bytes: Callable[[bytes], object] | None = None) -> str | bytes | PlainParts:
    """:func:`read_text` of a Touchstone file, with the same refusals and messages, as plain
    ASCII bytes where the file is plain ASCII (see :func:`plain_touchstone`), a large one as
    :class:`PlainParts`; ``matchtool.touchstone.parse_touchstone`` takes each of them.

    ``on_bytes`` is called with the file's bytes as they are read, in order, before any decoding
    (so a file that cannot be decoded is still seen; one refused before reading is not): the
    store hashes what was checked, not a second read of the file."""
    def seen(raw: bytes) -> bytes:
        if on_bytes is not None:
            on_bytes(raw)
        return raw

    if not str(path) or "\x00" in str(path):
        return plain_touchstone(read_bytes(path, max_bytes, "a Touchstone file", TouchstoneError), path)
    try:
        size = Path(path).stat().st_size
    except (OSError, ValueError):
        size = 0
    if size < SPLIT_MIN_BYTES:
        return plain_touchstone(seen(read_bytes(path, max_bytes, "a Touchstone file", TouchstoneError)), path)
    # the checks of read_bytes (missing, directory, special file, over the limit) on a small read
    read_bytes(path, max_bytes, "a Touchstone file", TouchstoneError, _probe=True)
    limit = _default_max_bytes if max_bytes is None else int(max_bytes)
    try:
        with open(path, "rb") as fh:
            head = fh.read(_HEAD_BYTES)
            split = _first_data_line(head)
            head = head[:split]
            fh.seek(split)
            rest, total = _read_on(fh, fh.read(size - split + 1), split, limit)
    except OSError as exc:
        raise TouchstoneError(f"cannot read: {exc.strerror or exc}", path=path) from None
    if total > limit:
        raise TouchstoneError(f"file is over the input limit of {limit / 2**20:.1f} MB", path=path,
                              expected=LIMIT_HINT)
    seen(head)
    seen(rest)
    if _plain(head) and _plain(rest):
        return PlainParts(head, rest)
    return decode_touchstone(head + rest, path)


def _plain(raw: bytes) -> bool:
    return raw.isascii() and b"\r" not in raw and not raw.endswith(b"\x1a") and not raw.translate(None, _KEEP_BINARY)


def decode_toml(raw: bytes, path: str | Path, error: type[InputError] = InputError,
                expected: str = "UTF-8 text (TOML)") -> str:
    """Decode the bytes of a TOML file (spec, budget, parts library): UTF-8 with or without a
    byte-order mark, or UTF-16 with one; NUL bytes and non-UTF-8 bytes are refused (with the line)."""
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    elif _utf16(raw):
        return _decode_utf16(raw, path, error, "UTF-8 text")
    if b"\x00" in raw:
        raise error("file holds NUL bytes (UTF-16 without a byte-order mark, or binary)", path=path,
                    expected=expected)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise error(f"byte 0x{raw[exc.start]:02x} is not UTF-8", path=path, line=line, expected=expected) from None


def read_text(path: str | Path, kind: str = "touchstone", max_bytes: int | None = None,
              what: str | None = None, error: type[InputError] | None = None) -> str:
    """Read and decode an input file of ``kind`` ``"touchstone"`` or ``"toml"``.

    ``max_bytes`` defaults to :func:`default_max_bytes` for Touchstone and to
    :data:`TOML_MAX_BYTES` for TOML (a TOML file over it is refused as "is larger than N bytes").
    ``what`` names the expected kind of file in messages; ``error`` is the InputError subclass
    raised (TouchstoneError for Touchstone, InputError for TOML unless given).
    """
    if kind == "touchstone":
        err = error or TouchstoneError
        raw = read_bytes(path, max_bytes, what or "a Touchstone file", err)
        return decode_touchstone(raw, path)
    if kind != "toml":
        raise ValueError(f"unknown input kind {kind!r}")
    err = error or InputError
    what = what or "a TOML file"
    limit = TOML_MAX_BYTES if max_bytes is None else int(max_bytes)
    p = Path(path)
    if "\x00" in str(path):
        raise err("the file name holds a NUL byte", path=repr(str(path)))
    if is_special_file(p):
        raise err(SPECIAL_FILE, path=path, expected=what)
    if p.is_dir():
        raise err("is a directory", path=path, expected=what)
    try:
        with p.open("rb") as fh:  # never more than the limit into memory
            raw = fh.read(limit + 1)
    except FileNotFoundError:
        raise err("no such file", path=path, expected=what) from None
    except IsADirectoryError:
        raise err("is a directory", path=path, expected=what) from None
    except OSError as exc:
        raise err(f"cannot be read ({exc.strerror or exc})", path=path) from None
    if len(raw) > limit:
        raise err(f"is larger than {limit} bytes", path=path, expected=f"a small {what.removeprefix('a ')}")
    return decode_toml(raw, path, err)

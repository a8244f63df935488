"""Loading and writing Touchstone sweeps.

The text is read and checked here, line by line where it matters, and the numbers are handed to
scikit-rf (``skrf.Network``, ``skrf.network.z2s`` and friends) as arrays. A path is never passed
to ``skrf.Network(path)``, which would first try to unpickle the file.

Loading policy (docs/input-policy.md): harmless layout variation is accepted; anything that would
force a guess that changes a number is refused with a one-line :class:`TouchstoneError` naming
the file and line; a few usable oddities load with a warning.

Conventions: frequencies in Hz (``f_hz``), S-parameters complex and dimensionless, reference
impedances in ohms (``z0_ohm``); ports are numbered from 1 as in the file.
"""

from __future__ import annotations

import math
import os
import re
import stat
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import skrf

from .errors import OutOfRangeError, TouchstoneError, UsageError
from .outputs import atomic_write
from .units import format_frequency

DEFAULT_MAX_BYTES = 500 * 1024 * 1024
"""Files larger than this are refused (override with ``max_bytes`` or MATCHTOOL_MAX_INPUT_MB)."""

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_PARAMS = {"s", "y", "z", "h", "g"}
_FORMATS = {"ri", "ma", "db"}
_KEYWORDS = {
    "version", "number of ports", "two-port data order", "number of frequencies",
    "number of noise frequencies", "reference", "matrix format", "mixed-mode order",
    "begin information", "end information", "network data", "noise data", "end",
}
_COMMENT = re.compile(r"![^\n]*")
_NOT_NUMERIC = re.compile(r"[^0-9eE+\-. \t\n\v\f]")
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_EXT_PORTS = re.compile(r"\.s(\d+)p$", re.I)
_BINARY = re.compile(rb"[\x00-\x08\x0e-\x1f\x7f]")
_BINARY_BYTES = bytes(b for b in range(256) if _BINARY.match(bytes([b])))
_KEEP_BINARY = bytes(b for b in range(256) if b not in _BINARY_BYTES)  # delete these, binary remains
_DATA_BYTES = b"0123456789eE+-. \t\n\v\f"


@dataclass(frozen=True, eq=False)
class Touchstone:
    """The parsed content of a Touchstone file, converted to S-parameters.

    ``f_hz`` (n,), ``s`` (n, N, N) complex at reference ``z0_ohm`` (N,) per port.
    """

    f_hz: np.ndarray
    s: np.ndarray
    z0_ohm: np.ndarray
    version: str
    parameter: str
    noise_points: int
    warnings: list[str] = field(default_factory=list)

    @property
    def nports(self) -> int:
        return int(self.s.shape[1])


@dataclass(frozen=True, eq=False)
class Sweep:
    """A loaded sweep and the port chosen for reflection metrics.

    ``network`` is the whole N-port as an ``skrf.Network`` (renormalised when ``z0_ohm`` was
    asked for); ``gamma`` is S_pp of the chosen port ``port`` (1-based) at ``z0_ohm``.
    """

    network: skrf.Network
    port: int
    path: str
    z0_ohm: float
    warnings: list[str] = field(default_factory=list)
    version: str = "1"

    @property
    def f_hz(self) -> np.ndarray:
        return self.network.frequency.f

    @property
    def gamma(self) -> np.ndarray:
        return self.network.s[:, self.port - 1, self.port - 1]

    @property
    def nports(self) -> int:
        return int(self.network.nports)

    @property
    def name(self) -> str:
        return Path(self.path).name

    @classmethod
    def from_network(cls, network: skrf.Network, port: int = 1, z0_ohm: float | None = None,
                     path: str | None = None) -> Sweep:
        """A Sweep of an ``skrf.Network`` (any number of ports; ``port`` 1-based).

        ``z0_ohm`` renormalises every port to that real impedance (ohms); otherwise the network's own
        reference is kept (a per-port reference must then be real and constant over frequency).
        ``path`` names it in messages (default: the network's name).
        """
        if not isinstance(network, skrf.Network):
            raise UsageError(f"expected an skrf.Network, got {type(network).__name__}", parameter="network")
        z0 = np.asarray(network.z0)
        ref = z0[0] if z0.ndim == 2 else z0
        if z0_ohm is None and not (np.allclose(z0, ref) and np.allclose(np.imag(ref), 0)):
            raise UsageError("reference impedance varies with frequency or is complex", parameter="network",
                             expected="z0_ohm= to renormalise to a real system impedance")
        name = path if path is not None else (network.name or "<network>")
        if z0_ohm is not None and not np.allclose(z0, ref):
            s = skrf.network.renormalize_s(network.s, z0, np.full(network.nports, float(z0_ohm)))
            return sweep_from_arrays(network.f, s, float(z0_ohm), path=name, port=port)
        return sweep_from_arrays(network.f, network.s, np.real(ref), path=name, port=port, z0_ohm=z0_ohm)


def as_sweep(obj: Sweep | skrf.Network | str | Path, port: int | None = None, z0_ohm: float | None = None) -> Sweep:
    """Accept what every core entry point accepts: a loaded Sweep, an ``skrf.Network`` or a path.

    A Sweep is returned as it is unless another ``port`` or a ``z0_ohm`` is asked for.
    """
    if isinstance(obj, Sweep):
        if (port is None or port == obj.port) and (z0_ohm is None or math.isclose(z0_ohm, obj.z0_ohm)):
            return obj
        z0 = np.asarray(obj.network.z0)
        return sweep_from_arrays(obj.f_hz, obj.network.s, np.real(z0[0]), path=obj.path,
                                 port=obj.port if port is None else port, z0_ohm=z0_ohm,
                                 warnings=list(obj.warnings), version=obj.version)
    if isinstance(obj, skrf.Network):
        return Sweep.from_network(obj, port=1 if port is None else port, z0_ohm=z0_ohm)
    if isinstance(obj, str | Path):
        return load(obj, port=1 if port is None else port, z0_ohm=z0_ohm)
    raise UsageError(f"expected a Sweep, an skrf.Network or a path, got {type(obj).__name__}", parameter="sweep")


def _max_bytes(max_bytes: int | None) -> int:
    if max_bytes is not None:
        return int(max_bytes)
    env = os.environ.get("MATCHTOOL_MAX_INPUT_MB")
    if env is not None and env.strip():
        try:
            mb = float(env)
        except ValueError:
            mb = math.nan
        if not (math.isfinite(mb) and mb > 0):
            raise UsageError(f"MATCHTOOL_MAX_INPUT_MB={_show(env)} is not a positive number of megabytes",
                             expected="e.g. MATCHTOOL_MAX_INPUT_MB=2000")
        return int(mb * 1024 * 1024)
    return DEFAULT_MAX_BYTES


def read_text(path: str | Path, max_bytes: int | None = None) -> str:
    """Read an input file as text, refusing directories, oversize and binary content.

    UTF-8 (with or without a byte-order mark) is read as such; other bytes fall back to Latin-1
    (old instruments write Latin-1 comments). Line endings are normalised to ``\\n``.
    """
    if not str(path):
        raise TouchstoneError("empty file name", path="''", expected="the path of a Touchstone file")
    p = Path(path)
    limit = _max_bytes(max_bytes)
    try:
        st = p.stat()
    except FileNotFoundError:
        raise TouchstoneError("no such file", path=path) from None
    except OSError as exc:
        raise TouchstoneError(f"cannot read: {exc.strerror or exc}", path=path) from None
    except ValueError:  # a NUL byte in the name
        raise TouchstoneError("the file name holds a NUL byte", path=repr(str(path))) from None
    if stat.S_ISDIR(st.st_mode):
        raise TouchstoneError("is a directory", path=path, expected="a Touchstone file")
    if not stat.S_ISREG(st.st_mode):  # a FIFO or device would block or never end
        raise TouchstoneError("not a regular file", path=path, expected="a Touchstone file")
    if st.st_size > limit:
        raise TouchstoneError(
            f"file is {st.st_size / 2**20:.1f} MB, over the input limit of {limit / 2**20:.1f} MB",
            path=path, expected="a smaller file, or raise MATCHTOOL_MAX_INPUT_MB")
    try:
        with open(p, "rb") as fh:
            # read(limit + 1) would allocate the whole limit up front: read the size stat() gave
            raw = fh.read(st.st_size + 1)
            more, total = [], len(raw)
            while total <= limit:  # the file grew after stat(): read on in small pieces
                piece = fh.read(1 << 20)
                if not piece:
                    break
                more.append(piece)
                total += len(piece)
    except OSError as exc:
        raise TouchstoneError(f"cannot read: {exc.strerror or exc}", path=path) from None
    if total > limit:
        raise TouchstoneError(f"file is over the input limit of {limit / 2**20:.1f} MB", path=path,
                              expected="a smaller file, or raise MATCHTOOL_MAX_INPUT_MB")
    if more:
        raw = b"".join([raw, *more])
    return decode_text(raw, path)


def decode_text(raw: bytes, path: str | Path) -> str:
    """Decode bytes of a text input file; refuse binary content."""
    if raw.startswith(b"\xff\xfe") or raw.startswith(b"\xfe\xff"):
        raise TouchstoneError("file is UTF-16 text", path=path, expected="ASCII or UTF-8 text")
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
    return text.replace("\r\n", "\n").replace("\r", "\n")


def ports_from_name(path: str | Path) -> int | None:
    """The port count that a ``.sNp`` extension states, or None (``.ts`` and others)."""
    m = _EXT_PORTS.search(str(path))
    return int(m.group(1)) if m else None


class _Lines:
    """Maps character offsets in the text to 1-based line numbers (monotonic queries are cheap)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.pos = 0
        self.line = 1

    def at(self, offset: int) -> int:
        if offset < self.pos:
            self.pos, self.line = 0, 1
        self.line += self.text.count("\n", self.pos, offset)
        self.pos = offset
        return self.line


def _option_line(text: str, path: str, line: int) -> tuple[float, str, str, float]:
    tokens = text[1:].split()
    unit = param = fmt = r = None
    i = 0
    while i < len(tokens):
        t = tokens[i].lower()
        if t in _UNITS:
            if unit is not None:
                raise TouchstoneError(f"option line gives the frequency unit twice ({_show(tokens[i])})", path, line)
            unit = t
        elif t in _PARAMS:
            if param is not None:
                raise TouchstoneError(f"option line gives the parameter twice ({_show(tokens[i])})", path, line)
            param = t
        elif t in _FORMATS:
            if fmt is not None:
                raise TouchstoneError(f"option line gives the format twice ({_show(tokens[i])})", path, line)
            fmt = t
        elif t == "r":
            if r is not None:
                raise TouchstoneError("option line gives R twice", path, line)
            if i + 1 >= len(tokens):
                raise TouchstoneError("option line has R without a value", path, line,
                                      expected="R followed by the reference impedance in ohms")
            r = _positive(tokens[i + 1], path, line, "reference impedance R")
            i += 1
        else:
            raise TouchstoneError(
                f"unknown option-line token {_show(tokens[i])}", path, line,
                expected="a unit (Hz kHz MHz GHz), a parameter (S Y Z H G), a format (RI MA DB) or R <ohms>")
        i += 1
    return (_UNITS[unit or "ghz"], (param or "s").upper(), (fmt or "ma").upper(), 50.0 if r is None else r)


def _show(token: str, limit: int = 40, quote: bool = True) -> str:
    """A file's text for an error message: quoted, at most ``limit`` characters (one line)."""
    t = token if len(token) <= limit else token[:limit] + "..."
    return repr(t) if quote else t


def _positive(token: str, path: str, line: int, what: str) -> float:
    if not _NUMBER.fullmatch(token):
        raise TouchstoneError(f"{what} {_show(token)} is not a number", path, line)
    value = float(token)
    if not (math.isfinite(value) and value > 0):
        raise TouchstoneError(f"{what} is {_show(token)}", path, line, expected="a positive number of ohms")
    return value


def _bad_token(chunk: str, first_line: int, path: str, what: str) -> TouchstoneError:
    """Find the first token of ``chunk`` that is not a plain decimal number and describe it."""
    for k, text in enumerate(chunk.split("\n")):
        for tok in re.split(r"[ \t\v\f]+", text):
            if not tok:
                continue
            if not _NUMBER.fullmatch(tok):
                low = tok.lower()
                if low.lstrip("+-") in ("nan", "inf", "infinity"):
                    return TouchstoneError(f"non-finite value {_show(tok)} in {what}", path, first_line + k,
                                           expected="finite numbers")
                if low.startswith("["):
                    return TouchstoneError(f"keyword {_show(tok)} out of place", path, first_line + k)
                return TouchstoneError(f"expected a number in {what}, found {_show(tok)}", path, first_line + k)
    m = _NOT_NUMERIC.search(chunk)
    if m:
        return TouchstoneError(f"unexpected character {m.group()!r} in {what}", path,
                               first_line + chunk.count("\n", 0, m.start()))
    return TouchstoneError(f"unreadable numbers in {what}", path, first_line)


def _numbers(chunk: str, first_line: int, path: str, what: str) -> tuple[np.ndarray, np.ndarray]:
    """All numbers of a data chunk, and the count of numbers on each of its lines (vectorised).

    Every token must be a plain finite decimal number; anything else raises TouchstoneError with
    the line of the first bad token. Memory stays a few bytes per character of the chunk.
    """
    try:
        data = chunk.encode("ascii")
    except UnicodeEncodeError:
        raise _bad_token(chunk, first_line, path, what) from None
    if data.translate(None, _DATA_BYTES):  # something other than digits, signs, '.', 'e' and blanks
        raise _bad_token(chunk, first_line, path, what)
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
        raise _bad_token(chunk, first_line, path, what) from None
    if values.size != counts.sum():
        raise _bad_token(chunk, first_line, path, what)
    if not np.isfinite(values).all():  # '1e999' reads as inf
        k = int(np.argmin(np.isfinite(values)))
        line = first_line + int(np.searchsorted(np.cumsum(counts), k, side="right"))
        raise TouchstoneError(f"number out of range in {what}", path, line,
                              expected="finite numbers (magnitude below 1e308)")
    return values, counts


def _controls(body: str):
    """Yield (line start, line end, stripped text) of every line that begins (after blanks) with
    '#' or '['. Uses str.find, which is far faster than a regex scan of a large file."""
    found = []
    for ch in "#[":
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
        if prev >= 0 and body.find("\n", prev, k) < 0:
            prev = k
            continue  # same line as an earlier '#'/'[' that is not at its start (keeps this linear)
        prev = k
        start = body.rfind("\n", 0, k) + 1
        if body[start:k].strip(" \t\f\v"):
            continue  # not at the start of its line: the data checks report it
        end = body.find("\n", k)
        end = len(body) if end < 0 else end
        last_end = end
        yield start, end, body[k:end].strip()


@dataclass
class _Chunk:
    text: str
    line: int  # 1-based line number of the chunk's first line
    section: str  # "network", "noise", "reference"
    more: list[str] = field(default_factory=list)  # text after ignored option lines, joined later


def parse_touchstone(text: str, path: str | Path = "<text>", nports: int | None = None) -> Touchstone:
    """Parse Touchstone text (v1 or v2) into S-parameters.

    ``nports`` is the port count that the file name states (``.sNp``); None when the name does not
    say (then a version 2 ``[Number of Ports]`` must). Raises :class:`TouchstoneError`.
    """
    path = str(path)
    warnings: list[str] = []
    body = _COMMENT.sub("", text)
    lines = _Lines(body)
    option = None
    version = "1"
    kw: dict[str, tuple[str, int]] = {}
    chunks: list[_Chunk] = []
    section: str | None = None  # v1: "network" after the option line; v2: by keyword
    in_info = False
    info_line = 0
    ended = False
    prev_end = 0

    def region(start: int, end: int) -> None:
        seg = body[start:end]
        if in_info:
            return
        if repeats["merge"] and chunks and chunks[-1].section == section:
            # only ignored option lines since the last chunk: continue it (an ignored line stays
            # as an empty line, so line numbers hold) instead of starting a chunk per line
            chunks[-1].more.append(seg)
            return
        stripped = seg.lstrip()
        if not stripped:
            return
        first = lines.at(start) + seg[: len(seg) - len(stripped)].count("\n")
        if ended:
            raise TouchstoneError("text after [End]", path, first)
        if option is None:
            later = re.search(r"^[ \t]*#", body[end:], re.M)
            raise TouchstoneError("data before the option line" if later else "no option line before the data",
                                  path, first, expected="'# <unit> <parameter> <format> R <ohms>' first")
        if section is None:
            raise TouchstoneError("data before [Network Data]", path, first)
        chunks.append(_Chunk(seg, lines.at(start), section))

    repeats = {"merge": False, "count": 0, "first": 0}
    for c_start, c_end, ctrl in _controls(body):
        region(prev_end, c_start)
        prev_end = c_end
        ln = lines.at(c_start)
        repeats["merge"] = False
        if ctrl.startswith("#"):
            if in_info:
                continue
            if option is not None:
                repeats["count"] += 1
                repeats["first"] = repeats["first"] or ln
                repeats["merge"] = True
                continue
            if chunks:
                raise TouchstoneError("data before the option line", path, chunks[0].line)
            option = _option_line(ctrl, path, ln)
            if version == "1":
                section = "network"
            continue
        close = ctrl.find("]")
        if close < 0:
            raise TouchstoneError(f"unclosed keyword {_show(ctrl)}", path, ln)
        name = " ".join(ctrl[1:close].lower().split())
        arg = ctrl[close + 1:].strip()
        if in_info:
            if name == "end information":
                in_info = False
            continue
        if name not in _KEYWORDS:
            raise TouchstoneError(f"unknown keyword [{_show(ctrl[1:close], quote=False)}]", path, ln)
        if ended:
            raise TouchstoneError("text after [End]", path, ln)
        if name == "version":
            if kw or option is not None:
                raise TouchstoneError("[Version] must come first", path, ln)
            if arg not in ("2.0", "2.1"):
                raise TouchstoneError(f"unsupported [Version] {_show(arg)}", path, ln, expected="2.0 or 2.1")
            version = arg
        elif version == "1":
            raise TouchstoneError(f"keyword [{_show(ctrl[1:close], quote=False)}] in a version 1 file", path, ln,
                                  expected="[Version] 2.0 as the first line of a file that uses keywords")
        elif name == "begin information":
            in_info = True
            info_line = ln
            continue
        elif name == "network data":
            if option is None:
                raise TouchstoneError("[Network Data] before the option line", path, ln)
            section = "network"
        elif name == "noise data":
            section = "noise"
        elif name == "end":
            ended = True
            section = None
        elif name == "reference":
            section = "reference"
            if arg:
                chunks.append(_Chunk(arg, ln, "reference"))
        elif name == "mixed-mode order":
            raise TouchstoneError("mixed-mode data is not supported", path, ln,
                                  expected="single-ended S-parameters")
        if name in kw and name not in ("end",):
            raise TouchstoneError(f"keyword [{_show(ctrl[1:close], quote=False)}] given twice", path, ln)
        kw[name] = (arg, ln)
        if name not in ("reference", "network data", "noise data", "end", "version"):
            section = None if version != "1" else section
    region(prev_end, len(body))
    for c in chunks:
        if c.more:
            c.text = "".join([c.text, *c.more])
            c.more = []
    if repeats["count"]:
        further = f" ({repeats['count'] - 1} more after it)" if repeats["count"] > 1 else ""
        warnings.append(f"{path} line {repeats['first']}: a second option line is ignored{further} "
                        "(only the first counts)")
    if in_info:
        raise TouchstoneError("[Begin Information] without [End Information]", path, info_line)

    if option is None:
        raise TouchstoneError("no option line", path,
                              expected="'# <unit> <parameter> <format> R <ohms>' before the data")
    unit, param, fmt, r_ohm = option

    # port count
    n_kw = None
    if "number of ports" in kw:
        arg, ln = kw["number of ports"]
        if not re.fullmatch(r"\d+", arg) or int(arg) < 1:
            raise TouchstoneError(f"[Number of Ports] {_show(arg)} is not a positive whole number", path, ln)
        n_kw = int(arg)
    elif version != "1":
        raise TouchstoneError("version 2 file without [Number of Ports]", path)
    if nports is not None and n_kw is not None and nports != n_kw:
        raise TouchstoneError(f"[Number of Ports] is {n_kw} but the file name says {nports} ports", path,
                              kw["number of ports"][1])
    n = n_kw or nports
    if n == 0:
        raise TouchstoneError("the file name says 0 ports", path, expected="a .sNp name with N of 1 or more")
    if n is None:
        raise TouchstoneError("cannot tell the port count", path,
                              expected="a .sNp file name (e.g. .s1p) or a version 2 [Number of Ports]")
    if n * (n + 1) > len(text):  # even one record in Lower/Upper form needs 1 + N(N+1) numbers
        raise TouchstoneError(f"a {n}-port record needs at least {n * (n + 1) + 1} numbers; the file is shorter",
                              path, kw["number of ports"][1] if "number of ports" in kw else None)
    if param in ("H", "G") and n != 2:
        raise TouchstoneError(f"{param}-parameters need a 2-port, this file has {n} ports", path)

    # reference impedances
    z0 = np.full(n, r_ohm)
    ref_chunks = [c for c in chunks if c.section == "reference"]
    if ref_chunks:
        vals = []
        for c in ref_chunks:
            v, _ = _numbers(c.text, c.line, path, "[Reference]")
            vals.extend(v.tolist())
        if len(vals) != n:
            raise TouchstoneError(f"[Reference] gives {len(vals)} impedances for {n} ports", path,
                                  ref_chunks[0].line)
        z0 = np.asarray(vals, dtype=float)
        if not np.all(z0 > 0):
            raise TouchstoneError("[Reference] has a zero or negative impedance", path, ref_chunks[0].line,
                                  expected="positive ohms")

    # layout of one record
    fmt_arg = kw.get("matrix format", ("full", 0))[0].lower()
    if fmt_arg not in ("full", "lower", "upper"):
        raise TouchstoneError(f"unknown [Matrix Format] {_show(fmt_arg)}", path, kw["matrix format"][1],
                              expected="Full, Lower or Upper")
    npairs = n * n if fmt_arg == "full" else n * (n + 1) // 2
    per = 1 + 2 * npairs
    order = "21_12" if version == "1" else None
    if n == 2 and version != "1":
        if "two-port data order" not in kw:
            raise TouchstoneError("version 2 two-port file without [Two-Port Data Order]", path,
                                  expected="[Two-Port Data Order] 12_21 or 21_12")
        order = kw["two-port data order"][0].replace(" ", "")
        if order not in ("12_21", "21_12"):
            raise TouchstoneError(f"[Two-Port Data Order] {_show(order)}", path, kw["two-port data order"][1],
                                  expected="12_21 or 21_12")

    net_chunks = [c for c in chunks if c.section == "network"]
    if not net_chunks:
        raise TouchstoneError("no data", path, expected="at least one frequency row")
    records, rec_lines, noise_rows = _assemble(net_chunks, n, per, version, path)
    noise_chunks = [c for c in chunks if c.section == "noise"]
    if noise_chunks and not (version != "1" and n == 2):
        raise TouchstoneError("[Noise Data] in a file that is not a two-port", path, noise_chunks[0].line)
    for c in noise_chunks:
        v, counts = _numbers(c.text, c.line, path, "noise data")
        _check_rows(counts, c.line, 5, path, "noise row")
        noise_rows += int(v.size // 5)

    f_file = records[:, 0]
    _check_frequencies(f_file, rec_lines, path)
    with np.errstate(over="ignore"):
        f_hz = f_file * unit
    if not np.isfinite(f_hz).all():
        k = int(np.argmin(np.isfinite(f_hz)))
        raise TouchstoneError(f"frequency {f_file[k]:g} is too large in this unit", path, int(rec_lines[k]))
    same = np.flatnonzero(np.diff(f_hz) <= 0)
    if same.size:  # two neighbouring floats can round to one value in Hz
        k = int(same[0]) + 1
        raise TouchstoneError(f"frequency {float(f_file[k])!r} is not distinct from the previous one "
                              f"({float(f_file[k - 1])!r}) once converted to Hz", path, int(rec_lines[k]),
                              expected="strictly increasing frequencies")
    pairs = records[:, 1:].reshape(len(records), npairs, 2)
    a, b = pairs[..., 0], pairs[..., 1]
    with np.errstate(all="ignore"):  # an overflow (DB 1e308) is reported below, by line
        if fmt == "RI":
            vals = a + 1j * b
        elif fmt == "MA":
            vals = a * np.exp(1j * np.deg2rad(b))
        else:
            vals = 10.0 ** (a / 20.0) * np.exp(1j * np.deg2rad(b))
    mat = _to_matrix(vals, n, fmt_arg, order)
    s = _to_s(mat, param, z0, r_ohm, version, path)
    bad = ~np.isfinite(s).all(axis=(1, 2))
    if bad.any():
        i = int(np.argmax(bad))
        what = "values out of range" if param == "S" else f"{param}-parameters with no finite S-parameter equivalent"
        raise TouchstoneError(f"{what} at {f_hz[i]:g} Hz", path, int(rec_lines[i]))

    if "number of frequencies" in kw:
        arg, ln = kw["number of frequencies"]
        if not re.fullmatch(r"\d+", arg) or int(arg) != len(f_hz):
            raise TouchstoneError(f"[Number of Frequencies] is {_show(arg, quote=False)} but the file holds "
                                  f"{len(f_hz)}", path, ln)
    elif version != "1":
        warnings.append(f"{path}: version 2 file without [Number of Frequencies]")
    if version != "1" and not ended:
        warnings.append(f"{path}: version 2 file without [End]; read to the end of the file")
    if "number of noise frequencies" in kw:
        arg, ln = kw["number of noise frequencies"]
        if not re.fullmatch(r"\d+", arg) or int(arg) != noise_rows:
            raise TouchstoneError(f"[Number of Noise Frequencies] is {_show(arg, quote=False)} but the file holds {noise_rows}",
                                  path, ln)
    if len(f_hz) == 1:
        warnings.append(f"{path}: a single frequency point; bands and interpolation need more")
    if f_hz[0] == 0:
        warnings.append(f"{path}: the sweep includes a 0 Hz point")
    return Touchstone(f_hz=f_hz, s=s, z0_ohm=z0, version=version, parameter=param,
                      noise_points=noise_rows, warnings=warnings)


def _check_rows(counts: np.ndarray, first_line: int, per: int, path: str, what: str) -> None:
    wrong = np.flatnonzero((counts != 0) & (counts != per))
    if wrong.size:
        k = int(wrong[0])
        raise TouchstoneError(f"expected {per} numbers for a {what}, found {int(counts[k])}", path, first_line + k)


def _assemble(chunks: list[_Chunk], n: int, per: int, version: str, path: str):
    """Group the numbers of the network-data chunks into records of ``per`` numbers.

    Returns (records (m, per), line of each record, number of v1 noise rows skipped).
    """
    recs, lines_out = [], []
    noise_rows = 0
    last_f = -math.inf
    in_noise = False
    for c in chunks:
        values, counts = _numbers(c.text, c.line, path, "network data")
        line_no = c.line + np.arange(counts.size)
        if n <= 2 and not in_noise:
            if n == 2 and version == "1":
                # a v1 two-port switches to noise data at the first frequency not above the last
                starts = np.concatenate(([0], np.cumsum(counts)[:-1]))
                rows = np.flatnonzero(counts)
                row_f = values[starts[rows]] if values.size else np.empty(0)
                full = counts[rows] == per
                # first row whose frequency is not above the one before (vectorised; a short or
                # long row before it ends the search and is reported by _check_rows below)
                prev_f = np.concatenate(([last_f], row_f[:-1]))
                falls = row_f <= prev_f
                stop = np.flatnonzero(falls | ~full)
                noise_at = int(stop[0]) if stop.size and falls[stop[0]] else None
                prev = float(prev_f[noise_at]) if noise_at is not None else last_f
                if noise_at is not None:
                    after = rows[noise_at:]
                    if np.all(counts[after] == 5):
                        in_noise = True
                        noise_rows += int(after.size)
                        keep = rows[:noise_at]
                        _check_rows(counts[: rows[noise_at]], c.line, per, path, f"{n}-port row")
                        if keep.size:
                            block = values[: starts[rows[noise_at]]].reshape(-1, per)
                            recs.append(block)
                            lines_out.append(line_no[keep])
                            last_f = float(block[-1, 0])
                        continue
                    if counts[rows[noise_at]] == per:
                        k = rows[noise_at]
                        raise TouchstoneError(
                            f"frequency {row_f[noise_at]:g} does not increase (previous {prev:g})",
                            path, int(line_no[k]), expected="strictly increasing frequencies")
                    bad = after[counts[after] != 5]
                    k = int(bad[0]) if bad.size else int(rows[noise_at])
                    raise TouchstoneError(f"expected 5 numbers for a noise row, found {int(counts[k])}",
                                          path, int(line_no[k]))
            _check_rows(counts, c.line, per, path, f"{n}-port row")
            block = values.reshape(-1, per)
            recs.append(block)
            lines_out.append(line_no[counts != 0])
            if block.size:
                last_f = float(block[-1, 0])
        elif in_noise:
            _check_rows(counts, c.line, 5, path, "noise row")
            noise_rows += int(np.count_nonzero(counts))
        else:
            # N >= 3: a record may wrap over several lines; no line may hold parts of two records
            nz = np.flatnonzero(counts)
            cum = np.cumsum(counts[nz])
            before = cum - counts[nz]  # numbers of this chunk before each line
            straddle = np.flatnonzero(before // per != (cum - 1) // per)
            if straddle.size:
                k = int(straddle[0])
                past = int(cum[k] - (before[k] // per + 1) * per)
                raise TouchstoneError(f"a {n}-port record needs {per} numbers; line ends {past} past the record",
                                      path, int(line_no[nz[k]]))
            heads = nz[before % per == 0]  # lines that begin a record
            if cum.size and cum[-1] % per:
                raise TouchstoneError(f"incomplete {n}-port record ({int(cum[-1] % per)} of {per} numbers)", path,
                                      int(line_no[heads[-1]]))
            lines_out.append(line_no[heads])
            recs.append(values.reshape(-1, per))
    records = np.concatenate(recs) if recs else np.empty((0, per))
    if records.shape[0] == 0:
        raise TouchstoneError("no data", path, expected="at least one frequency row")
    return records, np.concatenate(lines_out), noise_rows


def _check_frequencies(f: np.ndarray, rec_lines: np.ndarray, path: str) -> None:
    neg = np.flatnonzero(f < 0)
    if neg.size:
        raise TouchstoneError(f"negative frequency {f[neg[0]]:g}", path, int(rec_lines[neg[0]]))
    if f.size > 1:
        step = np.diff(f)
        bad = np.flatnonzero(step <= 0)
        if bad.size:
            k = int(bad[0]) + 1
            what = "repeats" if step[k - 1] == 0 else "decreases"
            raise TouchstoneError(f"frequency {f[k]:g} {what} (previous {f[k - 1]:g})", path, int(rec_lines[k]),
                                  expected="strictly increasing frequencies")


def _to_matrix(vals: np.ndarray, n: int, layout: str, order: str | None) -> np.ndarray:
    m = len(vals)
    if layout == "full":
        mat = vals.reshape(m, n, n)
        if n == 2 and order == "21_12":
            mat = mat.transpose(0, 2, 1)
        return mat.copy()
    mat = np.zeros((m, n, n), dtype=complex)
    rows, cols = np.tril_indices(n) if layout == "lower" else np.triu_indices(n)
    mat[:, rows, cols] = vals
    mat[:, cols, rows] = vals
    return mat


def _to_s(mat: np.ndarray, param: str, z0: np.ndarray, r_ohm: float, version: str, path: str) -> np.ndarray:
    """Convert file parameters to S at ``z0``. Version 1 Z/Y/H/G data are normalised to R.

    A frequency whose matrix has no S equivalent (e.g. Z = -R, where Z + R is singular) comes back
    as NaN, so that the caller can name its line.
    """
    if param == "S":
        return mat
    try:
        return _convert(mat, param, z0, r_ohm, version)
    except np.linalg.LinAlgError:  # find the singular frequencies one by one (rare path)
        out = np.empty_like(mat, dtype=complex)
        for k in range(len(mat)):
            try:
                out[k] = _convert(mat[k:k + 1], param, z0, r_ohm, version)[0]
            except np.linalg.LinAlgError:
                out[k] = np.nan
        return out


def _convert(mat: np.ndarray, param: str, z0: np.ndarray, r_ohm: float, version: str) -> np.ndarray:
    v1 = version == "1"
    with np.errstate(all="ignore"):
        if param == "Z":
            return skrf.network.z2s(mat * r_ohm if v1 else mat, z0)
        if param == "Y":
            return np.asarray(skrf.network.y2s(mat / r_ohm if v1 else mat, z0))
        scale = np.array([[r_ohm, 1.0], [1.0, 1.0 / r_ohm]])
        if param == "H":
            return skrf.network.h2s(mat * scale if v1 else mat, z0)
        return skrf.network.g2s(mat * scale.T[::-1, ::-1] if v1 else mat, z0)


def load(path: str | Path, port: int = 1, z0_ohm: float | None = None, max_bytes: int | None = None) -> Sweep:
    """Load a Touchstone sweep and choose the port whose reflection S_pp is analysed.

    ``port`` is 1-based; ``z0_ohm`` renormalises every port to that real impedance (ohms);
    otherwise the file's reference impedance is kept. Raises TouchstoneError or UsageError.
    """
    text = read_text(path, max_bytes)
    ts = parse_touchstone(text, path, ports_from_name(path))
    return sweep_from_arrays(ts.f_hz, ts.s, ts.z0_ohm, path=str(path), port=port, z0_ohm=z0_ohm,
                             warnings=ts.warnings, version=ts.version)


def load_reflection(path: str | Path, port: int, z0_ohm: float | None) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """(f_hz, gamma of ``port`` (1-based), warnings) of a file, read once.

    Same checks and results as :func:`matchtool.sweep.load`, without building an ``skrf.Network``
    in the common case (no renormalisation, nothing to warn about |Gamma| > 1): for a lot of a
    thousand sweeps the Network objects cost more than the evaluation itself.
    """
    ts = parse_touchstone(read_text(path), path, ports_from_name(path))
    n = ts.s.shape[1]
    fast = (not isinstance(port, bool) and isinstance(port, int) and 1 <= port <= n
            and (z0_ohm is None or np.allclose(ts.z0_ohm, z0_ohm)))
    if fast:
        g = ts.s[:, port - 1, port - 1]
        if not (np.abs(g) > 1.0).any():
            return ts.f_hz, g, list(ts.warnings)
    sw = sweep_from_arrays(ts.f_hz, ts.s, ts.z0_ohm, path=str(path), port=port, z0_ohm=z0_ohm,
                           warnings=ts.warnings, version=ts.version)
    return sw.f_hz, sw.gamma, list(sw.warnings)


def sweep_from_arrays(f_hz: np.ndarray, s: np.ndarray, z0_file_ohm: np.ndarray | float, path: str = "<arrays>",
                      port: int = 1, z0_ohm: float | None = None, warnings: list[str] | None = None,
                      version: str = "1") -> Sweep:
    """Build a Sweep from arrays: ``f_hz`` (n,), ``s`` (n,) or (n, N, N), reference ``z0_file_ohm``."""
    f_hz = np.asarray(f_hz, dtype=float)
    s = np.asarray(s, dtype=complex)
    if s.ndim == 1:
        s = s.reshape(-1, 1, 1)
    if f_hz.ndim != 1 or f_hz.size == 0 or s.ndim != 3 or s.shape[0] != f_hz.size or s.shape[1] != s.shape[2]:
        raise UsageError(f"arrays of shapes {f_hz.shape} and {s.shape} do not describe a sweep", path=path,
                         expected="f_hz (n,) and s (n,) or (n, N, N)")
    if not (np.isfinite(f_hz).all() and np.isfinite(s).all()):
        raise UsageError("non-finite frequency or S-parameter", path=path, expected="finite numbers")
    if np.any(f_hz < 0) or np.any(np.diff(f_hz) <= 0):
        raise UsageError("frequencies are negative or do not strictly increase", path=path)
    n = s.shape[1]
    warnings = list(warnings or [])
    if isinstance(port, bool) or not isinstance(port, int | np.integer) or not 1 <= port <= n:
        raise UsageError(f"port {port} does not exist", path=path, expected=f"a port from 1 to {n}")
    z0_file = np.broadcast_to(np.asarray(z0_file_ohm, dtype=float), (n,)).copy()
    if not (np.isfinite(z0_file).all() and np.all(z0_file > 0)):
        raise UsageError("reference impedance must be positive and finite", path=path)
    if z0_ohm is not None:
        if not (math.isfinite(z0_ohm) and z0_ohm > 0):
            raise UsageError("not a usable system impedance", parameter="z0_ohm", value=f"{z0_ohm:g} ohm",
                             expected="a positive, finite impedance")
        if not np.allclose(z0_file, z0_ohm):
            s = skrf.network.renormalize_s(s, z0_file, np.full(n, float(z0_ohm)))
        z0_file = np.full(n, float(z0_ohm))
    freq = skrf.Frequency.from_f(f_hz, unit="Hz")
    # a (nports,) z0 would be read by scikit-rf as one value per frequency when nfreq == nports
    z0_full = np.broadcast_to(z0_file, (len(f_hz), n)).copy()
    net = skrf.Network(frequency=freq, s=s, z0=z0_full, name=Path(path).stem)
    g = np.abs(s[:, port - 1, port - 1])
    over = g > 1.0
    if over.any():
        k = int(np.argmax(g))
        sign = ("; most points are above 0 dB: does the file hold return loss (positive) where S11 in dB "
                "(negative) belongs?") if over.mean() > 0.5 else ""
        warnings.append(
            f"{path}: {int(over.sum())} point(s) with |S{port}{port}| > 1 (up to {g[k]:.4f} at "
            f"{format_frequency(float(f_hz[k]))}): a passive antenna cannot reflect more than it receives; "
            f"check the calibration or de-embedding{sign}")
    return Sweep(network=net, port=int(port), path=str(path), z0_ohm=float(z0_file[port - 1]),
                 warnings=warnings, version=version)


def gamma_at(sweep: Sweep, f_hz: float) -> complex:
    """Reflection coefficient at ``f_hz``, linear in complex Gamma between the bracketing samples.

    A frequency outside the sweep raises OutOfRangeError (never extrapolated).
    """
    return complex(gamma_at_many(sweep.f_hz, sweep.gamma, np.array([f_hz]), sweep.path)[0])


def gamma_at_many(f_hz: np.ndarray, gamma: np.ndarray, f_query_hz: np.ndarray, path: str = "") -> np.ndarray:
    """Vectorised :func:`gamma_at` over the sweep arrays ``f_hz`` and ``gamma``."""
    q = np.asarray(f_query_hz, dtype=float)
    lo, hi = float(f_hz[0]), float(f_hz[-1])
    out = (q < lo) | (q > hi) | ~np.isfinite(q)
    if out.any():
        bad = float(q[np.argmax(out)])
        hint = ""
        for unit, scale in (("MHz", 1e6), ("GHz", 1e9), ("kHz", 1e3)):
            if 0 < bad < 1e6 and lo <= bad * scale <= hi:  # a bare number is Hz: '915' is 915 Hz
                hint = f" (a bare number is Hz: did you mean {bad:g}{unit}?)"
                break
        raise OutOfRangeError(f"{bad / 1e6:.6g} MHz is outside the sweep ({lo / 1e6:.6g} to {hi / 1e6:.6g} MHz){hint}",
                              path=path or None, expected="a frequency inside the sweep (never extrapolated)")
    return np.interp(q, f_hz, gamma.real) + 1j * np.interp(q, f_hz, gamma.imag)


def touchstone_text(f_hz: np.ndarray, s: np.ndarray, z0_ohm: np.ndarray | float, comments: list[str] = (),
                    version2: bool = False) -> str:
    """Touchstone text (RI, Hz) for ``s`` of shape (n, N, N) at reference ``z0_ohm``.

    Version 1 when all ports share one reference impedance (and ``version2`` is false), version
    2.0 with [Number of Ports] and [Reference] otherwise (a ``.ts`` name needs version 2: only
    the keywords tell the port count).
    """
    s = np.asarray(s, dtype=complex)
    if s.ndim == 1:
        s = s.reshape(-1, 1, 1)
    m, n, _ = s.shape
    z0 = np.broadcast_to(np.asarray(z0_ohm, dtype=float), (n,))
    out = [f"! {c}" for c in comments]
    one_ref = bool(np.all(z0 == z0[0])) and not version2
    if one_ref:
        out.append(f"# Hz S RI R {z0[0]:.12g}")
    else:
        out += ["[Version] 2.0", "# Hz S RI R 50", f"[Number of Ports] {n}"]
        if n == 2:
            out.append("[Two-Port Data Order] 21_12")
        out += [f"[Number of Frequencies] {m}", "[Reference] " + " ".join(f"{z:.12g}" for z in z0),
                "[Network Data]"]
    cols = s.transpose(0, 2, 1) if n == 2 else s  # two-port rows are N11 N21 N12 N22
    flat = cols.reshape(m, n * n)
    ri = np.empty((m, 2 * n * n))
    ri[:, 0::2], ri[:, 1::2] = flat.real, flat.imag
    if n <= 2:
        data = np.column_stack([f_hz, ri])
        out += [" ".join(f"{v:.12g}" for v in row) for row in data]
    else:
        for k in range(m):
            for i in range(n):
                row = ri[k, 2 * n * i: 2 * n * (i + 1)]
                for j in range(0, 2 * n, 8):
                    lead = f"{f_hz[k]:.12g} " if (i == 0 and j == 0) else "  "
                    out.append(lead + " ".join(f"{v:.12g}" for v in row[j: j + 8]))
    if not one_ref:
        out.append("[End]")
    return "\n".join(out) + "\n"


def write_touchstone(path: str | Path, network: skrf.Network, force: bool = False,
                     comments: list[str] = ()) -> Path:
    """Write ``network`` to ``path`` atomically (no overwrite without ``force``).

    The extension must be ``.sNp`` with N the network's port count (or ``.ts``).
    """
    p = Path(path)
    n = int(network.nports)
    want = ports_from_name(p)
    if want is None and p.suffix.lower() != ".ts":
        raise UsageError(f"cannot tell the Touchstone kind from the name {p.name!r}", path=p,
                         expected=f"a .s{n}p file name")
    if want is not None and want != n:
        raise UsageError(f"a {n}-port network cannot be written as .s{want}p", path=p, expected=f".s{n}p")
    z0 = np.asarray(network.z0)[0].real
    text = touchstone_text(network.f, network.s, z0, comments, version2=p.suffix.lower() == ".ts")
    return atomic_write(p, text, force=force)

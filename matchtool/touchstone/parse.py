"""Parsing Touchstone text (version 1, 1.1 and 2.0 / 2.1) into S-parameters.

The text is scanned once for control lines (``#`` option lines and ``[Keyword]`` lines); each
keyword has its own small handler that updates a :class:`_State`; the data between control lines
are kept as chunks and converted to numbers in bulk (:func:`matchtool.touchstone.numbers.numbers`).
The checks that need the whole file (port count, record layout, frequencies, counts) run after
the scan, one small function each.

Loading policy (docs/input-policy.md): harmless layout variation is accepted; anything that would
force a guess that changes a number is refused with a one-line :class:`TouchstoneError` naming
the file and line; a few usable oddities load with a warning.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import TouchstoneError
from ..inputs import PlainParts, plain_touchstone
from .comments import PortImpedances, port_impedances, renormalisation_statement
from .numbers import _NUMBER, Lines, check_rows, controls, numbers, positive, show

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_PARAMS = {"s", "y", "z", "h", "g"}
_FORMATS = {"ri", "ma", "db"}
_COMMENT = re.compile(r"![^\n]*")
_NOT_BLANK = re.compile(r"[^ \t\n\r\v\f]")
_NOT_BLANK_B = re.compile(rb"[^ \t\n\r\v\f]")
_OPTION_LATER = re.compile(r"^[ \t]*#", re.M)
_OPTION_LATER_B = re.compile(rb"^[ \t]*#", re.M)


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
    port_z0_ohm: np.ndarray | None = None
    """(n, N) complex: the impedances the data are really at, per frequency and port, where the
    file's comments give them and say the data are not renormalised (else None: ``z0_ohm``)."""
    s_def: str = "power"
    """Wave definition of ``port_z0_ohm`` where it is complex (scikit-rf's names)."""

    @property
    def nports(self) -> int:
        return int(self.s.shape[1])


@dataclass(frozen=True)
class _Option:
    """The option line: frequency multiplier to Hz, parameter (S Y Z H G), format (RI MA DB), R
    (one value, or one per port: Touchstone 2.1, the "version 1.1" option line)."""

    unit: float
    param: str
    fmt: str
    r_ports: tuple[float, ...]
    line: int

    @property
    def r_ohm(self) -> float:
        return self.r_ports[0]


@dataclass
class _Chunk:
    text: str | bytes  # bytes (ASCII) where the file was read as bytes and the region holds no comment
    line: int  # 1-based line number of the chunk's first line
    section: str  # "network", "noise", "reference"
    more: list[str] = field(default_factory=list)  # text after ignored option lines, joined later


@dataclass
class _State:
    """What the scan of the control lines has found so far."""

    path: str
    body: str | bytes  # the text (a str, or ASCII bytes); comments are removed per region
    lines: Lines
    option: _Option | None = None
    version: str = "1"
    kw: dict[str, tuple[str, int]] = field(default_factory=dict)
    chunks: list[_Chunk] = field(default_factory=list)
    section: str | None = None  # v1: "network" after the option line; v2: by keyword
    in_info: bool = False
    info_line: int = 0
    ended: bool = False
    merge: bool = False  # only ignored option lines since the last chunk
    repeats: int = 0  # ignored (second, third ...) option lines
    first_repeat: int = 0
    warnings: list[str] = field(default_factory=list)
    comments: bool = False  # the text holds comments
    comment_end: int = 0  # ... none after this offset (of the part being scanned)
    comment_text: list[str | bytes] = field(default_factory=list)  # the text up to its last comment (in parts)


# ------------------------------------------------------------------------------- the option line

def _option_line(text: str, path: str, line: int) -> _Option:
    tokens = text[1:].split()
    unit = param = fmt = r = None
    i = 0
    while i < len(tokens):
        t = tokens[i].lower()
        if t in _UNITS:
            if unit is not None:
                raise TouchstoneError(f"option line gives the frequency unit twice ({show(tokens[i])})", path, line)
            unit = t
        elif t in _PARAMS:
            if param is not None:
                raise TouchstoneError(f"option line gives the parameter twice ({show(tokens[i])})", path, line)
            param = t
        elif t in _FORMATS:
            if fmt is not None:
                raise TouchstoneError(f"option line gives the format twice ({show(tokens[i])})", path, line)
            fmt = t
        elif t == "r":
            if r is not None:
                raise TouchstoneError("option line gives R twice", path, line)
            if i + 1 >= len(tokens):
                raise TouchstoneError("option line has R without a value", path, line,
                                      expected="R followed by the reference impedance in ohms")
            r = [positive(tokens[i + 1], path, line, "reference impedance R")]
            i += 1
            while i + 1 < len(tokens) and _NUMBER.fullmatch(tokens[i + 1]):  # one R per port
                r.append(positive(tokens[i + 1], path, line, "reference impedance R"))
                i += 1
        else:
            raise TouchstoneError(
                f"unknown option-line token {show(tokens[i])}", path, line,
                expected="a unit (Hz kHz MHz GHz), a parameter (S Y Z H G), a format (RI MA DB) or R <ohms>")
        i += 1
    return _Option(_UNITS[unit or "ghz"], (param or "s").upper(), (fmt or "ma").upper(),
                   (50.0,) if r is None else tuple(r), line)


def _on_option_line(st: _State, ctrl: str, ln: int) -> None:
    if st.in_info:
        return
    if st.option is not None:  # the specification: only the first option line counts
        st.repeats += 1
        st.first_repeat = st.first_repeat or ln
        st.merge = True
        return
    if st.chunks:
        raise TouchstoneError("data before the option line", st.path, st.chunks[0].line)
    st.option = _option_line(ctrl, st.path, ln)
    if st.version == "1":
        st.section = "network"


# ------------------------------------------------------------------ keywords, one handler each
# A handler returns True when the keyword is not recorded (and not checked for repetition).

def _kw_version(st: _State, arg: str, ln: int) -> bool:
    if st.kw or st.option is not None:
        raise TouchstoneError("[Version] must come first", st.path, ln)
    if arg not in ("2.0", "2.1"):
        raise TouchstoneError(f"unsupported [Version] {show(arg)}", st.path, ln, expected="2.0 or 2.1")
    st.version = arg
    return False


def _kw_begin_information(st: _State, arg: str, ln: int) -> bool:
    st.in_info = True
    st.info_line = ln
    return True


def _kw_network_data(st: _State, arg: str, ln: int) -> bool:
    if st.option is None:
        raise TouchstoneError("[Network Data] before the option line", st.path, ln)
    st.section = "network"
    return False


def _kw_noise_data(st: _State, arg: str, ln: int) -> bool:
    st.section = "noise"
    return False


def _kw_end(st: _State, arg: str, ln: int) -> bool:
    st.ended = True
    st.section = None
    return False


def _kw_reference(st: _State, arg: str, ln: int) -> bool:
    st.section = "reference"  # the impedances may continue on the next lines
    if arg:
        st.chunks.append(_Chunk(arg, ln, "reference"))
    return False


def _kw_mixed_mode_order(st: _State, arg: str, ln: int) -> bool:
    raise TouchstoneError("mixed-mode data is not supported", st.path, ln, expected="single-ended S-parameters")


def _kw_recorded(st: _State, arg: str, ln: int) -> bool:
    """Keywords whose argument is checked after the scan ([Number of Ports] ...)."""
    return False


_KEYWORDS: dict[str, Callable[[_State, str, int], bool]] = {
    "version": _kw_version,
    "number of ports": _kw_recorded,
    "two-port data order": _kw_recorded,
    "number of frequencies": _kw_recorded,
    "number of noise frequencies": _kw_recorded,
    "reference": _kw_reference,
    "matrix format": _kw_recorded,
    "mixed-mode order": _kw_mixed_mode_order,
    "begin information": _kw_begin_information,
    "end information": _kw_recorded,
    "network data": _kw_network_data,
    "noise data": _kw_noise_data,
    "end": _kw_end,
}
_SECTION_KEYWORDS = ("reference", "network data", "noise data", "end", "version")  # keep the section


def _on_keyword(st: _State, ctrl: str, ln: int) -> None:
    close = ctrl.find("]")
    if close < 0:
        raise TouchstoneError(f"unclosed keyword {show(ctrl)}", st.path, ln)
    shown = show(ctrl[1:close], quote=False)
    name = " ".join(ctrl[1:close].lower().split())
    arg = ctrl[close + 1:].strip()
    if st.in_info:
        if name == "end information":
            st.in_info = False
        return
    handler = _KEYWORDS.get(name)
    if handler is None:
        raise TouchstoneError(f"unknown keyword [{shown}]", st.path, ln)
    if st.ended:
        raise TouchstoneError("text after [End]", st.path, ln)
    if name != "version" and st.version == "1":
        raise TouchstoneError(f"keyword [{shown}] in a version 1 file", st.path, ln,
                              expected="[Version] 2.0 as the first line of a file that uses keywords")
    if handler(st, arg, ln):
        return
    if name in st.kw and name != "end":
        raise TouchstoneError(f"keyword [{shown}] given twice", st.path, ln)
    st.kw[name] = (arg, ln)
    if name not in _SECTION_KEYWORDS and st.version != "1":
        st.section = None


def _on_region(st: _State, start: int, end: int) -> None:
    """The text between two control lines: data of the current section, or an error.

    The common region (no comment, not continuing an earlier chunk) is taken as one slice of the
    text, bytes when the text is bytes (the number conversion reads bytes: no decode and
    re-encode); the others are taken as str with their comments removed."""
    if st.in_info:
        return
    body = st.body
    raw = isinstance(body, bytes)
    has_comment = start < st.comment_end and body.find(b"!" if raw else "!", start, end) >= 0
    merge = st.merge and st.chunks and st.chunks[-1].section == st.section
    if has_comment or merge:
        seg = body[start:end]
        if raw:
            seg = seg.decode("ascii")
        if has_comment:
            seg = _COMMENT.sub("", seg)
        if merge:
            # only ignored option lines since the last chunk: continue it (an ignored line stays
            # as an empty line, so line numbers hold) instead of starting a chunk per line
            last = st.chunks[-1]
            if isinstance(last.text, bytes):
                last.text = last.text.decode("ascii")
            last.more.append(seg)
            return
        lead = _NOT_BLANK.search(seg)  # (no copy of a large region, unlike lstrip)
        if lead is None:
            return
        blank_lines = seg.count("\n", 0, lead.start())
    else:
        seg = None
        lead = (_NOT_BLANK_B if raw else _NOT_BLANK).search(body, start, end)
        if lead is None:
            return
        blank_lines = body.count(b"\n" if raw else "\n", start, lead.start())
    first = st.lines.at(start) + blank_lines
    if st.ended:
        raise TouchstoneError("text after [End]", st.path, first)
    if st.option is None:
        later = (_OPTION_LATER_B if raw else _OPTION_LATER).search(body, end)
        raise TouchstoneError("data before the option line" if later else "no option line before the data",
                              st.path, first, expected="'# <unit> <parameter> <format> R <ohms>' first")
    if st.section is None:
        raise TouchstoneError("data before [Network Data]", st.path, first)
    st.chunks.append(_Chunk(body[start:end] if seg is None else seg, st.lines.at(start), st.section))


def _scan(text: str | bytes | PlainParts, path: str) -> _State:
    """One pass over the control lines of ``text`` (a str, or ASCII bytes); the data between them
    become chunks.

    Comments ('!' to the end of the line) are removed from each control line and each data
    region as it is taken (line numbers hold), not from the whole text: a sweep's comments are
    mostly at its top, and a copy of a large file costs time and memory."""
    parts = (text.head, text.rest) if isinstance(text, PlainParts) else (text,)
    st = _State(path=path, body=parts[0], lines=Lines(parts[0]))
    base = 0
    for i, body in enumerate(parts):  # a file read in two parts is scanned as if it were one text
        raw = isinstance(body, bytes)
        last = body.rfind(b"!" if raw else "!")
        st.body, st.lines = body, Lines(body, base)
        st.comment_end = 0 if last < 0 else (body.find(b"\n" if raw else "\n", last) + 1 or len(body))
        if last >= 0:
            st.comments = True
            st.comment_text = [*parts[:i], body[: st.comment_end]]
        prev_end = 0
        for c_start, c_end, ctrl in controls(body):
            _on_region(st, prev_end, c_start)
            prev_end = c_end
            ln = st.lines.at(c_start)
            st.merge = False
            if "!" in ctrl:
                ctrl = ctrl.partition("!")[0].rstrip()
            if ctrl.startswith("#"):
                _on_option_line(st, ctrl, ln)
            else:
                _on_keyword(st, ctrl, ln)
        _on_region(st, prev_end, len(body))
        if i < len(parts) - 1:  # lines before the next part (the head is small)
            base += body.count(b"\n")
    for c in st.chunks:
        if c.more:
            c.text = "".join([c.text, *c.more])
            c.more = []
    if st.repeats:
        further = f" ({st.repeats - 1} more after it)" if st.repeats > 1 else ""
        st.warnings.append(f"{path} line {st.first_repeat}: a second option line is ignored{further} "
                           "(only the first counts)")
    st.body, st.lines = "", Lines("")  # the scan is done: a copy of the text need not live on
    if st.in_info:
        raise TouchstoneError("[Begin Information] without [End Information]", path, st.info_line)
    if st.option is None:
        raise TouchstoneError("no option line", path,
                              expected="'# <unit> <parameter> <format> R <ohms>' before the data")
    return st


# ------------------------------------------------------------------ checks after the scan

def _port_count(st: _State, nports: int | None, text_len: int) -> int:
    """The port count from [Number of Ports] and the file name, which must agree."""
    path, kw = st.path, st.kw
    n_kw = None
    if "number of ports" in kw:
        arg, ln = kw["number of ports"]
        if not re.fullmatch(r"\d+", arg) or int(arg) < 1:
            raise TouchstoneError(f"[Number of Ports] {show(arg)} is not a positive whole number", path, ln)
        n_kw = int(arg)
    elif st.version != "1":
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
    if n * (n + 1) > text_len:  # even one record in Lower/Upper form needs 1 + N(N+1) numbers
        raise TouchstoneError(f"a {n}-port record needs at least {n * (n + 1) + 1} numbers; the file is shorter",
                              path, kw["number of ports"][1] if "number of ports" in kw else None)
    if st.option.param in ("H", "G") and n != 2:
        raise TouchstoneError(f"{st.option.param}-parameters need a 2-port, this file has {n} ports", path)
    return n


def _references(st: _State, n: int) -> np.ndarray:
    """Reference impedance of each port (ohms): [Reference] if given, else the option line's R
    (one value for every port, or one per port)."""
    opt = st.option
    if len(opt.r_ports) not in (1, n):
        raise TouchstoneError(f"option line gives {len(opt.r_ports)} reference impedances for {n} port"
                              f"{'s' if n > 1 else ''}", st.path, opt.line,
                              expected=f"R and one impedance for all ports, or {n} (one per port)")
    z0 = np.full(n, opt.r_ohm) if len(opt.r_ports) == 1 else np.array(opt.r_ports, dtype=float)
    if st.version == "1" and opt.param != "S" and len(set(opt.r_ports)) > 1:
        raise TouchstoneError(f"per-port R with version 1 {opt.param}-parameters (normalised to R) is not read",
                              st.path, opt.line, expected="S-parameters, or one R for every port")
    ref_chunks = [c for c in st.chunks if c.section == "reference"]
    if ref_chunks:
        vals = []
        for c in ref_chunks:
            v, _ = numbers(c.text, c.line, st.path, "[Reference]")
            vals.extend(v.tolist())
        if len(vals) != n:
            raise TouchstoneError(f"[Reference] gives {len(vals)} impedances for {n} ports", st.path,
                                  ref_chunks[0].line)
        z0 = np.asarray(vals, dtype=float)
        if not np.all(z0 > 0):
            raise TouchstoneError("[Reference] has a zero or negative impedance", st.path, ref_chunks[0].line,
                                  expected="positive ohms")
    return z0


def _matrix_format(st: _State) -> str:
    fmt_arg = st.kw.get("matrix format", ("full", 0))[0].lower()
    if fmt_arg not in ("full", "lower", "upper"):
        raise TouchstoneError(f"unknown [Matrix Format] {show(fmt_arg)}", st.path, st.kw["matrix format"][1],
                              expected="Full, Lower or Upper")
    return fmt_arg


def _two_port_order(st: _State, n: int) -> str | None:
    """'21_12' (version 1 two-ports always), '12_21', or None where the order does not matter."""
    if st.version == "1":
        return "21_12"
    if n != 2:
        return None
    if "two-port data order" not in st.kw:
        raise TouchstoneError("version 2 two-port file without [Two-Port Data Order]", st.path,
                              expected="[Two-Port Data Order] 12_21 or 21_12")
    arg, ln = st.kw["two-port data order"]
    order = arg.replace(" ", "")
    if order not in ("12_21", "21_12"):
        raise TouchstoneError(f"[Two-Port Data Order] {show(order)}", st.path, ln, expected="12_21 or 21_12")
    return order


def _noise_rows(st: _State, n: int) -> int:
    """Rows of a version 2 [Noise Data] section (counted and checked, not used)."""
    noise_chunks = [c for c in st.chunks if c.section == "noise"]
    if noise_chunks and not (st.version != "1" and n == 2):
        raise TouchstoneError("[Noise Data] in a file that is not a two-port", st.path, noise_chunks[0].line)
    rows = 0
    for c in noise_chunks:
        v, counts = numbers(c.text, c.line, st.path, "noise data")
        check_rows(counts, c.line, 5, st.path, "noise row")
        rows += int(v.size // 5)
    return rows


def _frequencies_hz(f_file: np.ndarray, unit: float, rec_lines: np.ndarray, path: str) -> np.ndarray:
    _check_frequencies(f_file, rec_lines, path)
    if unit == 1.0:  # Hz already: strictly increasing as checked
        return np.array(f_file)
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
    return f_hz


def _complex_values(pairs: np.ndarray, fmt: str) -> np.ndarray:
    if fmt == "RI":  # the pairs are already (re, im) in memory: one copy, no arithmetic
        return np.ascontiguousarray(pairs).view(np.complex128)[..., 0]
    a, b = pairs[..., 0], pairs[..., 1]
    with np.errstate(all="ignore"):  # an overflow (DB 1e308) is reported by the caller, by line
        if fmt == "MA":
            return a * np.exp(1j * np.deg2rad(b))
        return 10.0 ** (a / 20.0) * np.exp(1j * np.deg2rad(b))


def _count_keywords(st: _State, points: int, noise_rows: int) -> None:
    """[Number of Frequencies] / [Number of Noise Frequencies] against the rows; [End] present."""
    path, kw = st.path, st.kw
    if "number of frequencies" in kw:
        arg, ln = kw["number of frequencies"]
        if not re.fullmatch(r"\d+", arg) or int(arg) != points:
            raise TouchstoneError(f"[Number of Frequencies] is {show(arg, quote=False)} but the file holds "
                                  f"{points}", path, ln)
    elif st.version != "1":
        st.warnings.append(f"{path}: version 2 file without [Number of Frequencies]")
    if st.version != "1" and not st.ended:
        st.warnings.append(f"{path}: version 2 file without [End]; read to the end of the file")
    if "number of noise frequencies" in kw:
        arg, ln = kw["number of noise frequencies"]
        if not re.fullmatch(r"\d+", arg) or int(arg) != noise_rows:
            raise TouchstoneError(f"[Number of Noise Frequencies] is {show(arg, quote=False)} but the file holds "
                                  f"{noise_rows}", path, ln)


def _comment_reference(text: str | bytes | PlainParts, st: _State, n: int, m: int, z0: np.ndarray) -> PortImpedances | None:
    """The port impedances of simulator comments, where the data are at them and not at the
    file's reference ``z0`` (see :mod:`matchtool.touchstone.comments`); None otherwise.

    A file that says its data are renormalised, or whose comment impedances equal its reference,
    loads at its reference; Z/Y/H/G data do not depend on a reference, so their comments are
    ignored; a file that says its data are not renormalised but gives no impedances is refused.
    """
    if not st.comments:
        return None
    # every comment lies in it (line numbers hold: the prefix of the text up to its last comment)
    region = "".join(p.decode("ascii") if isinstance(p, bytes) else p for p in st.comment_text)
    low = region.lower()
    if "mpedance" not in low and "normali" not in low:
        return None  # no comment about the reference
    stated, stated_line = renormalisation_statement(region)
    pz = port_impedances(region, st.path, n, m)
    if pz is None:
        if stated is False and st.option.param == "S":
            raise TouchstoneError("the file says its data are not renormalised but gives no port impedances",
                                  st.path, stated_line,
                                  expected="data exported renormalised to one reference impedance (e.g. 50 ohm), "
                                           "or 'Port Impedance' comments")
        return None
    if st.option.param != "S" or stated is True:
        return None
    if np.allclose(pz.z_ohm, z0[None, :], rtol=1e-9, atol=0):
        return None
    mag = np.abs(pz.z_ohm)
    ref = "[Reference]" if "reference" in st.kw else f"the option line's R {st.option.r_ohm:g}"
    st.warnings.append(f"{st.path}: the data are not renormalised: they are at the port impedances of the "
                       f"file's 'Port Impedance' comments (|Z| {mag.min():.4g} to {mag.max():.4g} ohm), "
                       f"not at {ref}")
    return pz


def parse_touchstone(text: str | bytes | PlainParts, path: str | Path = "<text>", nports: int | None = None, *,
                     checked: bool = False) -> Touchstone:
    """Parse Touchstone text (v1 or v2) into S-parameters.

    ``text`` is a str, or the file's bytes (plain ASCII bytes are read as they are; any other
    bytes are decoded by the one input policy, :func:`matchtool.inputs.plain_touchstone`).
    ``checked`` says that ``text`` comes from :func:`matchtool.inputs.read_touchstone` (or
    ``plain_touchstone``) and is not checked again. ``nports`` is the port count that the file
    name states (``.sNp``); None when the name does not say (then a version 2
    ``[Number of Ports]`` must). Raises :class:`TouchstoneError`.
    """
    path = str(path)
    if isinstance(text, bytes | bytearray | memoryview) and not (checked and isinstance(text, bytes)):
        text = plain_touchstone(bytes(text), path)
    elif isinstance(text, PlainParts) and not checked:
        text = plain_touchstone(text.head + text.rest, path)
    st = _scan(text, path)
    opt = st.option
    n = _port_count(st, nports, len(text))
    z0 = _references(st, n)
    layout = _matrix_format(st)
    npairs = n * n if layout == "full" else n * (n + 1) // 2
    per = 1 + 2 * npairs
    order = _two_port_order(st, n)

    net_chunks = [c for c in st.chunks if c.section == "network"]
    if not net_chunks:
        raise TouchstoneError("no data", path, expected="at least one frequency row")
    records, rec_lines, noise_rows = _assemble(net_chunks, n, per, st.version, path,
                                               from_name="number of ports" not in st.kw)
    noise_rows += _noise_rows(st, n)

    f_hz = _frequencies_hz(records[:, 0], opt.unit, rec_lines, path)
    m = len(records)
    pairs = records[:, 1:].reshape(m, npairs, 2)
    if opt.fmt == "RI" and layout == "full":
        # the common case: the (re, im) pairs of each record already lie in memory as complex
        # numbers do, so the S-matrix is a view of the records (strided, aligned): no copy
        mat = records[:, 1:].view(np.complex128).reshape(m, n, n)
        if n == 2 and order == "21_12":
            mat = mat.transpose(0, 2, 1)
    else:
        mat = _to_matrix(_complex_values(pairs, opt.fmt), n, layout, order)
    s = _to_s(mat, opt.param, z0, opt.r_ohm, st.version)
    # finite numbers stay finite as RI or MA S-parameters; DB and the conversions can overflow
    bad = np.zeros(len(s), dtype=bool) if opt.param == "S" and opt.fmt != "DB" else ~np.isfinite(s).all(axis=(1, 2))
    if bad.any():
        i = int(np.argmax(bad))
        what = "values out of range" if opt.param == "S" else \
            f"{opt.param}-parameters with no finite S-parameter equivalent"
        raise TouchstoneError(f"{what} at {f_hz[i]:g} Hz", path, int(rec_lines[i]))

    port_z = _comment_reference(text, st, n, len(f_hz), z0)
    _count_keywords(st, len(f_hz), noise_rows)
    if len(f_hz) == 1:
        st.warnings.append(f"{path}: a single frequency point; bands and interpolation need more")
    if f_hz[0] == 0:
        st.warnings.append(f"{path}: the sweep includes a 0 Hz point")
    return Touchstone(f_hz=f_hz, s=s, z0_ohm=z0, version=st.version, parameter=opt.param,
                      noise_points=noise_rows, warnings=st.warnings,
                      port_z0_ohm=None if port_z is None else port_z.z_ohm,
                      s_def="power" if port_z is None else port_z.s_def)


# ------------------------------------------------------------------ records of network data

def _row_error(counts: np.ndarray, first_line: int, per: int, n: int, path: str, from_name: bool) -> None:
    """Raise for the first line whose count is not ``per`` (one record per line); when the port
    count came from the file name and the count fits another port count, say so."""
    wrong = np.flatnonzero((counts != 0) & (counts != per))
    if not wrong.size:
        return
    k = int(wrong[0])
    found = int(counts[k])
    hint = ""
    other = math.isqrt(max(found - 1, 0) // 2)
    if from_name and other >= 1 and other != n and found == 1 + 2 * other * other:
        hint = f" (a row of {found} numbers is {other}-port data: is this a .s{other}p file?)"
    raise TouchstoneError(f"expected {per} numbers for a {n}-port row, found {found}{hint}", path, first_line + k)


def _join_split_two_port_records(values: np.ndarray, counts: np.ndarray, last_f: float) -> None:
    """A version 1 two-port record may be written over two lines, split after the first two pairs
    (frequency N11 N21 / N12 N22: 5 then 4 numbers, as circuit simulators write it): count the
    pair as one 9-number row on its first line (the numbers themselves are already in order).
    From the first frequency that does not rise (where the noise block starts) nothing is joined:
    noise rows hold 5 numbers too."""
    if not (counts == 4).any():
        return
    nz = np.flatnonzero(counts)
    c = counts[nz]
    pair = (c[:-1] == 5) & (c[1:] == 4)
    if not pair.any():
        return
    heads, conts = nz[:-1][pair], nz[1:][pair]
    counts[heads] = 9
    counts[conts] = 0
    starts = np.concatenate(([0], np.cumsum(counts)[:-1]))
    rows = np.flatnonzero(counts)
    row_f = values[starts[rows]]
    falls = np.flatnonzero(row_f <= np.concatenate(([last_f], row_f[:-1])))
    if falls.size:
        undo = heads >= rows[falls[0]]
        counts[heads[undo]] = 5
        counts[conts[undo]] = 4


def _wrapped_records(values: np.ndarray, counts: np.ndarray, line_no: np.ndarray, n: int, per: int,
                     path: str) -> np.ndarray:
    """Records that may wrap over several lines (version 1 N >= 3, every version 2 record); no
    line may hold parts of two records. Returns the line of each record's first number."""
    nz = np.flatnonzero(counts)
    c = counts[nz]
    if n <= 2 and c.size and (np.any(c == per) or np.all(c == c[0])) and np.any(c != per):
        # one record per line is what this file does (or every line is of one wrong width): the
        # offending line is reported as a row, as for version 1
        _row_error(counts, int(line_no[0]), per, n, path, from_name=False)
    cum = np.cumsum(c)
    before = cum - c  # numbers of this chunk before each line
    straddle = np.flatnonzero(before // per != (cum - 1) // per)
    heads = nz[before % per == 0]  # lines that begin a record
    if straddle.size:
        k = int(straddle[0])
        past = int(cum[k] - (before[k] // per + 1) * per)
        start = heads[np.searchsorted(heads, nz[k], side="right") - 1] if heads.size else nz[k]
        since = f" that starts on line {int(line_no[start])}" if start != nz[k] else ""
        raise TouchstoneError(f"a {n}-port record needs {per} numbers; line ends {past} past the record{since}",
                              path, int(line_no[nz[k]]))
    if cum.size and cum[-1] % per:
        raise TouchstoneError(f"incomplete {n}-port record ({int(cum[-1] % per)} of {per} numbers)", path,
                              int(line_no[heads[-1]]))
    return line_no[heads]


def _v1_noise_start(values: np.ndarray, counts: np.ndarray, line_no: np.ndarray, per: int, last_f: float,
                    path: str) -> int | None:
    """The line (index in the chunk) where a version 1 two-port's noise block starts: the first
    frequency not above the one before (Touchstone 1.1), accepted only when every row from there
    on holds the five noise numbers. None when the chunk holds network rows only."""
    if values.size and values.size % per == 0 and np.all((counts == per) | (counts == 0)):
        f = values[::per]  # every line a whole record: the common case, decided without the row index
        if f[0] > last_f and np.all(f[1:] > f[:-1]):
            return None
    starts = np.concatenate(([0], np.cumsum(counts)[:-1]))
    rows = np.flatnonzero(counts)
    row_f = values[starts[rows]] if values.size else np.empty(0)
    full = counts[rows] == per
    # first row whose frequency is not above the one before (vectorised; a short or long row
    # before it ends the search and is reported by _row_error)
    prev_f = np.concatenate(([last_f], row_f[:-1]))
    falls = row_f <= prev_f
    stop = np.flatnonzero(falls | ~full)
    if not (stop.size and falls[stop[0]]):
        return None
    noise_at = int(stop[0])
    after = rows[noise_at:]
    if np.all(counts[after] == 5):
        return int(rows[noise_at])
    if counts[rows[noise_at]] == per:
        raise TouchstoneError(f"frequency {row_f[noise_at]:g} does not increase (previous {prev_f[noise_at]:g})",
                              path, int(line_no[rows[noise_at]]), expected="strictly increasing frequencies")
    bad = after[counts[after] != 5]
    k = int(bad[0]) if bad.size else int(rows[noise_at])
    raise TouchstoneError(f"expected 5 numbers for a noise row, found {int(counts[k])}", path, int(line_no[k]))


def _chunk_numbers(c: _Chunk, path: str) -> tuple[np.ndarray, np.ndarray]:
    """Numbers and counts per line of a network-data chunk (the chunk lets go of its text: peak
    memory of a large file)."""
    text, c.text = c.text, ""
    return numbers(text, c.line, path, "network data")


def _assemble(chunks: list[_Chunk], n: int, per: int, version: str, path: str, from_name: bool = False):
    """Group the numbers of the network-data chunks into records of ``per`` numbers.

    Version 1 one- and two-ports hold one record per line (Touchstone 1.1; a two-port record may
    be split after its first two pairs, common practice of circuit simulators); version 1 N-ports
    with N >= 3 and every version 2 record may wrap (Touchstone 2.0, network data).
    Returns (records (m, per), line of each record, number of v1 noise rows skipped).
    """
    recs, lines_out = [], []
    noise_rows = 0
    last_f = -math.inf
    in_noise = False
    for c in chunks:
        values, counts = _chunk_numbers(c, path)
        line_no = c.line + np.arange(counts.size)
        if in_noise:
            check_rows(counts, c.line, 5, path, "noise row")
            noise_rows += int(np.count_nonzero(counts))
            continue
        if not (version == "1" and n <= 2):
            lines_out.append(_wrapped_records(values, counts, line_no, n, per, path))
            recs.append(values.reshape(-1, per))
            continue
        if n == 2:
            _join_split_two_port_records(values, counts, last_f)
            cut = _v1_noise_start(values, counts, line_no, per, last_f, path)
            if cut is not None:
                in_noise = True
                noise_rows += int(np.count_nonzero(counts[cut:]))
                values, counts, line_no = values[: int(counts[:cut].sum())], counts[:cut], line_no[:cut]
        _row_error(counts, c.line, per, n, path, from_name)
        if values.size:
            block = values.reshape(-1, per)
            recs.append(block)
            lines_out.append(line_no if counts.all() else line_no[counts != 0])
            last_f = float(block[-1, 0])
    records = (recs[0] if len(recs) == 1 else np.concatenate(recs)) if recs else np.empty((0, per))
    if records.shape[0] == 0:
        raise TouchstoneError("no data", path, expected="at least one frequency row")
    return records, lines_out[0] if len(lines_out) == 1 else np.concatenate(lines_out), noise_rows


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


def _to_s(mat: np.ndarray, param: str, z0: np.ndarray, r_ohm: float, version: str) -> np.ndarray:
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
    import skrf  # only for Z/Y/H/G data: S-parameter files are read without scikit-rf

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

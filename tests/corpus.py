"""A generated corpus of malformed and awkward Touchstone inputs, each with its expected outcome.

Every case is built by code here (no hand-copied files). The outcome of a case is one of
  "ok"    - loads, and the loaded frequencies / S-parameters equal the numbers written here,
  "warn"  - loads like "ok" and the warnings hold a message matching ``match``,
  "error" - refused with a one-line TouchstoneError whose text matches ``match`` (and names the
            line ``line`` when that is not None).
The expected numbers are the ones the generator wrote, never values computed by matchtool.
The policy the outcomes follow is the loading policy in docs/input-policy.md.
"""

from __future__ import annotations

import os
import pickle
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

F_MHZ = np.array([100.0, 200.0, 300.0, 400.0, 500.0])
S11 = np.array([0.5 + 0.1j, 0.2 - 0.3j, 0.05 + 0.01j, -0.25 + 0.2j, 0.6 - 0.1j])


@dataclass
class Case:
    name: str
    filename: str
    data: bytes | None  # None: ``make`` builds the path itself
    outcome: str  # "ok", "warn", "error"
    match: str = ""  # regular expression searched in the error text or the joined warnings
    line: int | None = None  # line number the error must name
    f_hz: np.ndarray | None = None  # expected frequencies (ok / warn)
    s11: np.ndarray | None = None  # expected S11 (ok / warn)
    z0_ohm: float | None = None  # expected reference impedance (ok / warn)
    make: Callable[[Path], None] | None = None  # builds a non-regular path (dir, fifo, ...)
    check: Callable | None = None  # extra check on the loaded Sweep


def rows_ri(f=F_MHZ, s=S11, sep=" ") -> list[str]:
    return [sep.join(f"{v:.12g}" for v in (fi, si.real, si.imag)) for fi, si in zip(f, s, strict=True)]


def text(*lines: str, end: str = "\n") -> bytes:
    return (end.join(lines) + end).encode("ascii")


GOOD_HEAD = "# MHz S RI R 50"
GOOD = [GOOD_HEAD, *rows_ri()]


def _ok(name, filename, data, z0=50.0, f=F_MHZ, s=S11, **kw) -> Case:
    return Case(name, filename, data, "ok", f_hz=f * 1e6, s11=s, z0_ohm=z0, **kw)


def _warn(name, filename, data, match, z0=50.0, f=F_MHZ, s=S11, **kw) -> Case:
    return Case(name, filename, data, "warn", match=match, f_hz=f * 1e6, s11=s, z0_ohm=z0, **kw)


def _err(name, filename, data, match, line=None, **kw) -> Case:
    return Case(name, filename, data, "error", match=match, line=line, **kw)


class _Marker:
    """Unpickling this object creates the file ``path`` (proves whether code ran)."""

    def __init__(self, path: str) -> None:
        self.path = path

    def __reduce__(self):
        return (open, (self.path, "w"))


def pickle_payload(marker: Path, protocol: int) -> bytes:
    return pickle.dumps(_Marker(str(marker)), protocol=protocol)


def two_port_rows(n=4, f0=1.0) -> tuple[list[str], np.ndarray]:
    """v1 two-port rows (N11 N21 N12 N22) and the matrices they hold, at f0, f0+1, ... GHz."""
    rng = np.random.default_rng(7)
    s = (rng.uniform(-0.5, 0.5, (n, 2, 2)) + 1j * rng.uniform(-0.5, 0.5, (n, 2, 2))).round(6)
    out = []
    for k in range(n):
        vals = [s[k, 0, 0], s[k, 1, 0], s[k, 0, 1], s[k, 1, 1]]
        out.append(f"{f0 + k:g} " + " ".join(f"{v.real:.6g} {v.imag:.6g}" for v in vals))
    return out, s


def three_port(n=3) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(11)
    a = rng.uniform(-0.4, 0.4, (n, 3, 3)) + 1j * rng.uniform(-0.4, 0.4, (n, 3, 3))
    a = (a + a.transpose(0, 2, 1)) / 2  # reciprocal, so Lower/Upper describe it fully
    return np.arange(1, n + 1, dtype=float), a.round(6)


def _tri_rows(f, s, lower: bool) -> list[str]:
    out = []
    for k in range(len(f)):
        idx = np.tril_indices(3) if lower else np.triu_indices(3)
        vals = s[k][idx]
        out.append(f"{f[k]:g} " + " ".join(f"{v.real:.6g} {v.imag:.6g}" for v in vals))
    return out


def cases(tmp: Path) -> list[Case]:
    """All corpus cases; ``tmp`` is where the pickle marker would appear."""
    c: list[Case] = []
    g = GOOD
    # -- empty and missing structure
    c.append(_err("empty", "empty.s1p", b"", "no option line"))
    c.append(_err("comments only", "comments.s1p", text("! only", "! comments", "!"), "no option line"))
    c.append(_err("blank lines only", "blank.s1p", b"\n \n\t\n", "no option line"))
    c.append(_err("no option line", "noopt.s1p", text("! header", *rows_ri()), "no option line", line=2))
    c.append(_err("data before option line", "late_opt.s1p", text(rows_ri()[0], GOOD_HEAD, *rows_ri()[1:]),
                  "data before the option line", line=1))
    c.append(_err("option line only", "optonly.s1p", text(GOOD_HEAD), "no data"))
    c.append(_warn("two option lines", "twoopt.s1p", text(*g[:3], "# GHz S MA R 75", *g[3:]),
                   "second option line"))
    # -- option line variants
    c.append(_err("unknown unit", "thz.s1p", text("# THz S RI R 50", *rows_ri()), "unknown option-line token", 1))
    c.append(_err("unknown parameter", "t.s1p", text("# MHz T RI R 50", *rows_ri()), "unknown option-line token", 1))
    c.append(_err("unknown format", "xy.s1p", text("# MHz S XY R 50", *rows_ri()), "unknown option-line token", 1))
    c.append(_ok("option fields reordered", "order.s1p", text("# RI R 75 MHz S", *rows_ri()), z0=75.0))
    c.append(_ok("option fields lowercase with tabs", "tabs_opt.s1p", text("#\tmhz\tri\ts\tr\t75", *rows_ri()),
                 z0=75.0))
    c.append(_ok("option line defaults (GHz MA R 50)", "defaults.s1p",
                 text("#", *[f"{f / 1000:.12g} {abs(s):.12g} {np.degrees(np.angle(s)):.12g}"
                              for f, s in zip(F_MHZ, S11, strict=True)])))
    c.append(_ok("option line with comment", "optcomment.s1p", text("# MHz S RI R 50 ! the VNA", *rows_ri())))
    c.append(_err("R without value", "r_noval.s1p", text("# MHz S RI R", *rows_ri()), "R without a value", 1))
    c.append(_err("R zero", "r0.s1p", text("# MHz S RI R 0", *rows_ri()), "reference impedance", 1))
    c.append(_err("R negative", "rneg.s1p", text("# MHz S RI R -50", *rows_ri()), "reference impedance", 1))
    c.append(_err("R not a number", "rtext.s1p", text("# MHz S RI R fifty", *rows_ri()), "not a number", 1))
    c.append(_err("duplicate unit", "dupunit.s1p", text("# MHz GHz S RI R 50", *rows_ri()), "twice", 1))
    c.append(_err("duplicate format", "dupfmt.s1p", text("# MHz S RI MA R 50", *rows_ri()), "twice", 1))
    c.append(_err("duplicate R", "dupr.s1p", text("# MHz S RI R 50 R 75", *rows_ri()), "twice", 1))
    # -- numbers
    r = rows_ri()
    c.append(_err("row with too few numbers", "few.s1p", text(GOOD_HEAD, r[0], "200 0.2", *r[2:]),
                  "expected 3 numbers.*found 2", 3))
    c.append(_err("row with too many numbers", "many.s1p", text(GOOD_HEAD, r[0], r[1] + " 0.7", *r[2:]),
                  "expected 3 numbers.*found 4", 3))
    c.append(_err("text in numbers", "text.s1p", text(GOOD_HEAD, r[0], "200 0.2 abc", *r[2:]), "abc", 3))
    c.append(_err("decimal comma", "comma.s1p", text(GOOD_HEAD, r[0], "200 0,2 0.3", *r[2:]), "0,2", 3))
    c.append(_err("NaN", "nan.s1p", text(GOOD_HEAD, r[0], "200 NaN 0.3", *r[2:]), "non-finite", 3))
    c.append(_err("inf", "inf.s1p", text(GOOD_HEAD, r[0], r[1], "300 -inf 0", *r[3:]), "non-finite", 4))
    c.append(_err("overflow to inf", "ovf.s1p", text(GOOD_HEAD, r[0], r[1], r[2], "400 1e999 0", r[4]),
                  "out of range", 5))
    c.append(_err("two decimal points", "dots.s1p", text(GOOD_HEAD, r[0], "200 0.2.3 0.1", *r[2:]), "0.2.3", 3))
    c.append(_err("sign inside a number", "sign.s1p", text(GOOD_HEAD, r[0], "200 0.2-0.3 0.1", *r[2:]),
                  "0.2-0.3", 3))
    c.append(_err("Fortran D exponent", "dexp.s1p", text(GOOD_HEAD, r[0], "2.0D+02 0.2 0.1", *r[2:]), "2.0D", 3))
    c.append(_err("lone minus", "minus.s1p", text(GOOD_HEAD, r[0], "200 - 0.2 0.1", *r[2:]), "'-'", 3))
    c.append(_ok("plain number spellings", "spell.s1p",
                 text(GOOD_HEAD, "+1.0E+02 .5 +.1", "2E2 0.2 -0.3", "3.e2 5e-2 1e-2", "400. -.25 .2", "5e+2 .6 -.1")))
    c.append(_err("Z equal to -R (no S equivalent)", "zneg.s1p", text("# MHz Z RI R 50", "100 0.5 0", "200 -1 0"),
                  "no finite S-parameter", 3))
    c.append(_err("Y of -1/R (no S equivalent)", "yneg.s1p", text("# MHz Y RI R 50", "100 0.5 0", "200 -1 0"),
                  "no finite S-parameter", 3))
    c.append(_err("DB overflow", "dbovf.s1p", text("# MHz S DB R 50", "100 -3 10", "200 1e308 0"), "out of range", 3))
    # -- frequencies
    c.append(_err("decreasing frequency", "dec.s1p", text(GOOD_HEAD, r[0], r[2], r[1], *r[3:]), "decreases", 4))
    c.append(_err("duplicated frequency", "dup.s1p", text(GOOD_HEAD, r[0], r[1], r[1], *r[2:]), "repeats", 4))
    c.append(_warn("single point", "one.s1p", text(GOOD_HEAD, r[0]), "single frequency point",
                   f=F_MHZ[:1], s=S11[:1]))
    c.append(_warn("zero frequency", "zero.s1p", text(GOOD_HEAD, "0 0.9 0", *r), "0 Hz",
                   f=np.r_[0.0, F_MHZ], s=np.r_[0.9, S11]))
    c.append(_err("frequency overflows in Hz", "fovf.s1p", text("# GHz S RI R 50", "1 0.1 0", "1e300 0.1 0"),
                  "too large", 3))
    c.append(_err("frequencies equal once in Hz", "fsame.s1p",
                  text("# GHz S RI R 50", "5.843289818973504 0.1 0", f"{float(np.nextafter(5.843289818973504, 9))!r} 0.1 0"),
                  "not distinct", 3))
    c.append(_err("negative frequency", "neg.s1p", text(GOOD_HEAD, "-50 0.9 0", *r), "negative frequency", 2))
    big = S11.copy()
    big[2] = 1.2 + 0.1j
    c.append(_warn("|S11| > 1", "gain.s1p", text(GOOD_HEAD, *rows_ri(s=big)), r"\|S11\| > 1", s=big))
    # -- port count
    r2, s2 = two_port_rows()
    c.append(_err("2-port data in .s1p", "two.s1p", text("# GHz S RI R 50", *r2),
                  r"expected 3 numbers.*found 9 \(a row of 9 numbers is 2-port data: is this a \.s2p file\?\)", 2))
    c.append(_err("1-port data in .s2p", "one.s2p", text(GOOD_HEAD, *r), "expected 9 numbers", 2))
    # -- as instruments and simulators write it (Touchstone 1.1 / 2.0 / 2.1; see tests/test_sweep.py)
    split = [half for row in r2 for half in (" ".join(row.split()[:5]), "   " + " ".join(row.split()[5:]))]
    c.append(Case("v1 two-port record over two lines", "split.s2p", text("# GHz S RI R 50", *split), "ok",
                  check=lambda sw, s2=s2: np.allclose(sw.network.s, s2)))
    c.append(_err("v1 two-port split record with a number missing", "split_bad.s2p",
                  text("# GHz S RI R 50", *split[:4], split[4].rsplit(" ", 1)[0], *split[5:]),
                  "expected 9 numbers for a 2-port row, found 4", 6))
    c.append(Case("per-port R on the option line", "ppr.s2p", text("# GHz S RI R 50 75", *r2), "ok",
                  check=lambda sw: np.allclose(np.real(sw.network.z0[0]), [50, 75])))
    c.append(_err("per-port R count wrong", "ppr.s1p", text("# MHz S RI R 50 75", *r),
                  "2 reference impedances for 1 port", 1))
    c.append(_err("not renormalised, no port impedances", "notrenorm.s1p",
                  text("! Data is not renormalized", *g), "not renormalised but gives no port impedances", 1))
    c.append(_warn("port impedances in comments", "portz.s1p",
                   text("! Data is not renormalized", GOOD_HEAD,
                        *[ln for row in r for ln in (row, "! Port Impedance 50 0")]).replace(
                       b"! Port Impedance 50 0\n", b"! Port Impedance 75 0\n", 1),
                   "data are not renormalised", s=None))
    c.append(_warn("1 ohm reference", "r1.s1p", text("# MHz S RI R 1", *r), "analysed at a 1 ohm reference",
                   z0=1.0))
    c.append(_warn("reflection never measured", "zeros.s1p",
                   text(GOOD_HEAD, *[f"{f:g} 0 0" for f in F_MHZ]), "port 1 reflection is 0 everywhere",
                   s=np.zeros(5, dtype=complex)))
    c.append(Case("v1 two-port", "good.s2p", text("# GHz S RI R 50", *r2), "ok",
                  check=lambda sw, s2=s2: np.allclose(sw.network.s, s2)))
    noise = ["1.5 1.2 0.3 45 0.4", "2.5 1.4 0.35 50 0.45"]
    c.append(Case("v1 two-port noise block", "noise.s2p", text("# GHz S RI R 50", *r2, *noise), "ok",
                  check=lambda sw, s2=s2: np.allclose(sw.network.s, s2) and len(sw.f_hz) == 4))
    c.append(_err("v1 two-port falling frequency, network rows after", "fall.s2p",
                  text("# GHz S RI R 50", r2[0], r2[2], r2[1], r2[3]), "does not increase", 4))
    c.append(_err("v1 two-port noise block with a short row", "noise_bad.s2p",
                  text("# GHz S RI R 50", *r2, noise[0], "2.5 1.4 0.35 50"), "expected 5 numbers", 7))
    c.append(_err("v1 two-port noise block then network rows", "noise_mix.s2p",
                  text("# GHz S RI R 50", *r2, noise[0], r2[3]), "expected 5 numbers", 7))
    v2_1p = ["[Version] 2.0", GOOD_HEAD, "[Number of Ports] 1", "[Number of Frequencies] 5", "[Network Data]",
             *r, "[End]"]
    c.append(_ok("v2 one-port", "v2.ts", text(*v2_1p)))
    c.append(_err("v2 ports disagree with extension", "v2ports.s2p", text(*v2_1p), r"Number of Ports\] is 1", 3))
    c.append(_err("v2 ports disagree with data", "v2data.ts",
                  text("[Version] 2.0", GOOD_HEAD, "[Number of Ports] 2", "[Two-Port Data Order] 12_21",
                       "[Network Data]", *r, "[End]"), "expected 9 numbers", 6))
    c.append(_err("v2 frequency count disagrees", "v2nf.ts",
                  text(*[ln.replace("Frequencies] 5", "Frequencies] 6") for ln in v2_1p]),
                  r"Number of Frequencies\] is 6", 4))
    c.append(_warn("v2 without [End]", "v2noend.ts", text(*v2_1p[:-1]), r"without \[End\]"))
    c.append(_err("text after [End]", "v2after.ts", text(*v2_1p, "more"), "after", 12))
    c.append(_err("v2 without [Number of Ports]", "v2nop.ts",
                  text("[Version] 2.0", GOOD_HEAD, "[Network Data]", *r), "Number of Ports"))
    c.append(_err("v2 two-port without data order", "v2order.ts",
                  text("[Version] 2.0", "# GHz S RI R 50", "[Number of Ports] 2", "[Network Data]", *r2),
                  "Two-Port Data Order"))
    c.append(_err("keyword in a v1 file", "kwv1.s1p", text(GOOD_HEAD, "[Number of Ports] 1", *r), "version 1", 2))
    c.append(_err("unknown keyword", "kw.ts", text("[Version] 2.0", "[Colour] red", GOOD_HEAD), "unknown keyword", 2))
    c.append(_err("unclosed keyword", "kwopen.ts", text("[Version 2.0", GOOD_HEAD, *r), "unclosed", 1))
    c.append(_err("unsupported version", "v3.ts", text("[Version] 3.0", GOOD_HEAD), "Version", 1))
    c.append(_err("mixed-mode file", "mm.s4p",
                  text("[Version] 2.0", "# GHz S RI R 50", "[Number of Ports] 4",
                       "[Mixed-Mode Order] D2,3 D1,4 C2,3 C1,4", "[Network Data]"), "mixed-mode", 4))
    f3, s3 = three_port()
    head3 = ["[Version] 2.0", "# GHz S RI R 50", "[Number of Ports] 3", "[Number of Frequencies] 3"]
    for lower in (True, False):
        fmt = "Lower" if lower else "Upper"
        c.append(Case(f"v2 matrix format {fmt}", f"{fmt.lower()}.s3p",
                      text(*head3, f"[Matrix Format] {fmt}", "[Network Data]", *_tri_rows(f3, s3, lower), "[End]"),
                      "ok", check=lambda sw, s3=s3: np.allclose(sw.network.s, s3)))
    c.append(Case("v2 [Reference] over several lines", "ref.s3p",
                  text(*head3, "[Reference] 50", "75", "  100", "[Matrix Format] Lower", "[Network Data]",
                       *_tri_rows(f3, s3, True), "[End]"), "ok",
                  check=lambda sw: np.allclose(np.real(sw.network.z0[0]), [50, 75, 100])))
    c.append(_err("v2 [Reference] count wrong", "ref2.s3p",
                  text(*head3, "[Reference] 50 75", "[Matrix Format] Lower", "[Network Data]",
                       *_tri_rows(f3, s3, True), "[End]"), "2 impedances for 3 ports", 5))
    c.append(_err("v2 [Reference] zero", "ref0.s3p",
                  text(*head3, "[Reference] 50 0 50", "[Matrix Format] Lower", "[Network Data]",
                       *_tri_rows(f3, s3, True), "[End]"), "zero or negative", 5))
    c.append(_ok("v2 information block", "info.ts",
                 text(*v2_1p[:3], "[Begin Information]", "anything: 1 2 3", "# not an option line",
                      "[End Information]", *v2_1p[3:])))
    c.append(_err("v2 information block never closed", "infoopen.ts",
                  text(*v2_1p[:3], "[Begin Information]", *v2_1p[3:]), r"End Information", 4))
    # -- line endings and encodings
    c.append(_ok("CRLF", "crlf.s1p", text(*g, end="\r\n")))
    c.append(_ok("lone CR", "cr.s1p", text(*g, end="\r")))
    c.append(_ok("UTF-8 BOM", "bom.s1p", b"\xef\xbb\xbf" + text(*g)))
    c.append(_ok("Latin-1 comment", "latin1.s1p", b"! Messung 25\xb0C, \xb5A\n" + text(*g)))
    c.append(_ok("UTF-8 comment", "utf8.s1p", "! 25 °C, µ, Ω\n".encode() + text(*g)))
    c.append(_ok("UTF-16 with a byte-order mark", "utf16.s1p", "\n".join(g).encode("utf-16")))
    c.append(_err("UTF-16 without BOM", "utf16le.s1p", "\n".join(g).encode("utf-16-le"), "binary", 1))
    c.append(_err("no-break space in data", "nbsp.s1p", text(GOOD_HEAD, r[0]) + b"200\xa00.2 -0.3\n"
                  + text(*r[2:]), "200", 3))
    c.append(_ok("tabs and mixed blanks", "tabs.s1p", text(GOOD_HEAD, *rows_ri(sep="\t"), end=" \t\n")))
    c.append(_ok("form feed and vertical tab blanks", "ff.s1p", text(GOOD_HEAD, *rows_ri(sep="\f \v"))))
    c.append(_ok("comments at ends of rows", "rowcomments.s1p", text(GOOD_HEAD, *[x + " ! row" for x in r])))
    c.append(_err("trailing garbage", "trail.s1p", text(*g, "end of measurement"), "end", 7))
    c.append(_err("truncated last line", "trunc.s1p", text(*g)[:-8], "found 2", 6))
    c.append(_ok("no newline at end", "nonl.s1p", text(*g)[:-1]))
    c.append(_ok("DOS end-of-file mark", "ctrlz.s1p", text(*g) + b"\x1a"))
    c.append(_err("Ctrl-Z inside the data", "ctrlz2.s1p", text(*g[:3]) + b"\x1a" + text(*g[3:]), "binary", 4))
    c.append(_err("absurd port count", "ports.ts", text("[Version] 2.0", GOOD_HEAD, "[Number of Ports] 1000000000",
                                                       "[Network Data]", *r), "needs at least", 3))
    c.append(_err("absurd port count in the name", "a.s99999999p", text(*g), "needs at least"))
    c.append(_err("binary junk", "junk.s1p", bytes(range(256)) * 4, "binary"))
    c.append(_err("NUL after valid data", "nul.s1p", text(*g) + b"\x00\x00", "binary", 7))
    for proto in (0, 2, 4, 5):
        c.append(_err(f"pickle protocol {proto}", f"pickle{proto}.s1p", pickle_payload(tmp / "MARKER", proto),
                      "binary|no option line|option|number"))
    # -- paths
    c.append(_err("directory", "adir.s1p", None, "is a directory", make=lambda p: p.mkdir()))
    c.append(_err("missing path", "missing.s1p", None, "no such file", make=lambda p: None))
    c.append(_err("dangling symlink", "dangling.s1p", None, "no such file",
                  make=lambda p: os.symlink(p.parent / "nowhere.s1p", p)))
    c.append(_err("FIFO", "fifo.s1p", None, "not a regular file", make=lambda p: os.mkfifo(p)))
    c.append(_err("wrong extension", "sweep.txt", text(*g), "port count"))
    c.append(_err("zero-port extension", "a.s0p", text(*g), "0 ports"))
    c.append(_ok("upper-case extension", "UPPER.S1P", text(*g)))
    # -- size
    c.append(_ok("very long comment line", "longcomment.s1p", b"!" + b"x" * 2_000_000 + b"\n" + text(*g)))
    c.append(_err("very long data line", "longdata.s1p", text(GOOD_HEAD, " ".join(["0.1"] * 300_001)),
                  "expected 3 numbers.*found 300001", 2))
    c.append(_err("very long unknown option token", "longopt.s1p", text("# MHz S RI " + "Q" * 500_000, *r),
                  "unknown option-line token 'QQQQ", 1))
    c.append(_err("very long junk token", "longjunk.s1p", text(GOOD_HEAD, r[0], "200 0.2 " + "[#" * 300_000, *r[2:]),
                  "out of place", 3))
    c.append(_err("very long keyword", "longkw.ts", text("[Version] 2.0", "[" + "K" * 100_000 + "]", GOOD_HEAD),
                  "unknown keyword", 2))
    c.append(_ok("very long blank run", "longblank.s1p", text(GOOD_HEAD, r[0] + " " * 1_000_000, *r[1:])))
    return c

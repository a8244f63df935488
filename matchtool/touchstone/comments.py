"""What simulators write in Touchstone comments that changes the meaning of the numbers.

Field solvers that export data *not renormalised* to the option line's ``R`` give each port's
impedance at every frequency in comment blocks (common practice of simulator exports, no
source in the Touchstone specification, which leaves comments free)::

    ! Data is not renormalized
    # GHz S MA R 50
    1.0  0.51 -120.3  0.62 45.1  0.62 45.1  0.44 -80.2
    ! Gamma ! 0.0012 20.9 0.0013 21.0
    ! Port Impedance 29.1 0.4 42.6 -1.2

(some exporters write the first number right after the words: ``! Port Impedance2.91e+001 ...``).
One ``Port Impedance`` block per frequency, in order, after its data record; a block holds one
complex value (re im) per port, or the full N x N matrix (only its diagonal is per port), and may
continue on further comment lines that hold only numbers. This is the layout scikit-rf reads
(``skrf.io.touchstone``), which is the independent reader the tests compare with.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..errors import TouchstoneError
from .numbers import _NUMBER, Lines, show

_PORT_Z = re.compile(r"^[ \t]*![ \t]*port[ \t]+impedance(?![a-z])([^\n]*)", re.I | re.M)
_STATED = re.compile(r"^[ \t]*![^\n]*?\b(not[ \t]+)?re-?normali[sz]ed\b", re.I | re.M)
_S_DEF = re.compile(r"S-parameter uses the (power|pseudo|traveling) definition", re.I)
S_DEF_DEFAULT = "traveling"
"""Wave definition assumed for complex port impedances when the comments do not state one (the
default scikit-rf uses for such exports; common practice, no source)."""


@dataclass(frozen=True)
class PortImpedances:
    """Per-frequency port impedances from the comments: ``z_ohm`` (m, N) complex, the wave
    definition ``s_def`` for complex values, and the line of the first block."""

    z_ohm: np.ndarray
    s_def: str
    line: int


def renormalisation_statement(text: str) -> tuple[bool | None, int | None]:
    """(True if a comment says the data are renormalised, False if it says they are not, None if
    no comment says; the line of that comment)."""
    m = _STATED.search(text)
    if m is None:
        return None, None
    return m.group(1) is None, text.count("\n", 0, m.start()) + 1


def _block_numbers(rest: str, path: str, line: int) -> list[float]:
    out = []
    for tok in rest.split():
        if not _NUMBER.fullmatch(tok):
            raise TouchstoneError(f"'Port Impedance' comment holds {show(tok)}", path, line,
                                  expected="the real and imaginary part of each port's impedance")
        out.append(float(tok))
    return out


def port_impedances(text: str, path: str, n: int, m: int) -> PortImpedances | None:
    """The ``Port Impedance`` comment blocks of ``text`` for an ``n``-port of ``m`` frequencies,
    or None when there are none. Raises TouchstoneError when they cannot be read one per
    frequency (wrong count of blocks or of values, non-finite values, a real part <= 0)."""
    lines = Lines(text)
    blocks: list[list[float]] = []
    first = 0
    for match in _PORT_Z.finditer(text):
        line = lines.at(match.start())
        vals = _block_numbers(match.group(1).rpartition("!")[2].lstrip(" \t:="), path, line)
        pos = match.end()
        while pos < len(text):  # continuation: comment lines that hold only numbers
            end = text.find("\n", pos + 1)
            end = len(text) if end < 0 else end
            nxt = text[pos + 1:end].strip()
            toks = nxt[1:].split() if nxt.startswith("!") else []
            if not toks or not all(_NUMBER.fullmatch(t) for t in toks):
                break
            vals.extend(float(t) for t in toks)
            pos = end
        if not vals:  # a heading such as '! Port Impedance' over the columns: no values
            continue
        if len(vals) not in (2 * n, 2 * n * n):
            raise TouchstoneError(f"'Port Impedance' comment gives {len(vals)} numbers for a {n}-port", path, line,
                                  expected=f"{2 * n} (re im for each port) or {2 * n * n} (the full matrix)")
        first = first or line
        blocks.append(vals)
    if not blocks:
        return None
    if len(blocks) != m:
        raise TouchstoneError(f"{len(blocks)} 'Port Impedance' comments for {m} frequencies", path, first,
                              expected="one after each frequency's data")
    sizes = {len(b) for b in blocks}
    if len(sizes) > 1:
        raise TouchstoneError("'Port Impedance' comments differ in length", path, first)
    arr = np.array(blocks, dtype=float)
    z = arr[:, 0::2] + 1j * arr[:, 1::2]
    if z.shape[1] == n * n and n > 1:
        z = np.diagonal(z.reshape(m, n, n), axis1=1, axis2=2).copy()
    bad = ~np.isfinite(z).all(axis=1) | (z.real <= 0).any(axis=1)
    if bad.any():
        k = int(np.argmax(bad))
        raise TouchstoneError(f"'Port Impedance' comment {k + 1} has a non-finite impedance or one whose real "
                              "part is not positive", path, first, expected="passive port impedances")
    sd = _S_DEF.search(text)
    return PortImpedances(z_ohm=z, s_def=sd.group(1).lower() if sd else S_DEF_DEFAULT, line=first)

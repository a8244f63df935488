"""Writing Touchstone files: RI, Hz, version 1 or 2.0 (``[Reference]`` for per-port impedances)."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from ..errors import UsageError
from ..outputs import atomic_write
from .read import ports_from_name

if TYPE_CHECKING:
    import skrf


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

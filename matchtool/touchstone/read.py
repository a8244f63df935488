"""Reading Touchstone files: the file's text through the one input policy (matchtool/inputs.py),
and the port count that a ``.sNp`` name states."""

from __future__ import annotations

import re
from pathlib import Path

from .. import inputs

_EXT_PORTS = re.compile(r"\.s(\d+)p$", re.I)


def read_text(path: str | Path, max_bytes: int | None = None) -> str:
    """Read a Touchstone file as text, refusing directories, special files, oversize and binary
    content (see :mod:`matchtool.inputs`). Line endings are normalised to ``\\n``."""
    return inputs.read_text(path, kind="touchstone", max_bytes=max_bytes)


def decode_text(raw: bytes, path: str | Path) -> str:
    """Decode bytes of a Touchstone file; refuse binary content."""
    return inputs.decode_touchstone(raw, path)


def ports_from_name(path: str | Path) -> int | None:
    """The port count that a ``.sNp`` extension states, or None (``.ts`` and others)."""
    m = _EXT_PORTS.search(str(path))
    return int(m.group(1)) if m else None

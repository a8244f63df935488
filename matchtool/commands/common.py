"""Transitional re-exports: option types live in ``commands/options.py``, terminal helpers in
``render/text``, the JSON writer in ``render/json_contract.py``. New code imports from those."""

from __future__ import annotations

from pathlib import Path

from ..render.json_contract import emit_json
from ..render.text import console, fmt, warn
from .options import (
    ForceOpt,
    JsonOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinRLOpt,
    PortOpt,
    Z0Opt,
    frequencies,
)

__all__ = ["ForceOpt", "JsonOpt", "MaxS11Opt", "MaxVswrOpt", "MinRLOpt", "PortOpt", "Z0Opt", "console",
           "emit_json", "fmt", "frequencies", "same_file", "warn"]


def same_file(a: str | Path, b: str | Path) -> bool:
    """Whether two paths name the same file (after resolving links and ``..``; hard links too)."""
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return pa.samefile(pb)
        return pa.resolve() == pb.resolve()
    except OSError:
        return False

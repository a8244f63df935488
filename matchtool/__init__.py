"""matchtool: antenna match from measured S11 sweeps.

Library use mirrors the CLI::

    import matchtool
    sw = matchtool.load("ant_r2.s1p")            # Sweep: .network (skrf.Network), .gamma, .f_hz
    summary = matchtool.summarize(sw, threshold_return_loss_db=10)

Importing matchtool never imports typer, rich or matplotlib; the names below are loaded on first
use, so ``import matchtool`` itself is cheap.
"""

from __future__ import annotations

from typing import Any

__version__ = "0.1.0"

_LAZY = {
    "load": ("sweep", "load"),
    "Sweep": ("sweep", "Sweep"),
    "summarize": ("summary", "summarize"),
    "MatchtoolError": ("errors", "MatchtoolError"),
}
__all__ = ["MatchtoolError", "Sweep", "__version__", "load", "summarize"]


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        import importlib

        module, attr = _LAZY[name]
        value = getattr(importlib.import_module(f"{__name__}.{module}"), attr)
        globals()[name] = value
        return value
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

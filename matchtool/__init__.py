"""matchtool: antenna match from measured S11 sweeps.

Library use mirrors the CLI::

    import matchtool
    sw = matchtool.load("ant_r2.s1p")            # Sweep: .network (skrf.Network), .gamma, .f_hz
    summary = matchtool.summarize(sw, threshold_return_loss_db=10)
    result = matchtool.propose_match(sw, bands=[(902e6, 928e6)], network="pi", series="E24")

Every capability has one entry point here (see ``__all__``); each accepts an ``skrf.Network`` or a
loaded ``Sweep`` and returns a frozen result dataclass.

Importing matchtool never imports typer, rich or matplotlib; the names below are loaded on first
use, so ``import matchtool`` itself is cheap.
"""

from __future__ import annotations

from typing import Any

__version__ = "0.1.0"

_LAZY = {
    # loading
    "load": ("sweep", "load"),
    "Sweep": ("sweep", "Sweep"),
    "as_sweep": ("sweep", "as_sweep"),
    # one entry point per capability: each takes an skrf.Network or a loaded Sweep (or a path)
    # and returns a frozen result dataclass
    "summarize": ("summary", "summarize"),                   # inspect, one port
    "summarize_ports": ("summary", "summarize_ports"),       # inspect, every port of an N-port
    "load_spec": ("spec", "load_spec"),
    "evaluate_spec": ("spec", "evaluate"),                   # check, one unit
    "check_lot": ("batch", "check_lot"),                     # check, a lot (jobs, shards, Dask)
    "compare_revisions": ("compare", "revisions"),
    "propose_match": ("matching", "propose"),
    "PartsLibrary": ("parts", "PartsLibrary"),
    "CableModel": ("feedline", "CableModel"),
    "analyze_feedline": ("feedline", "analyze"),
    "locate_reflections": ("locate", "analyze"),
    "analyze_coupling": ("coupling", "analyze_coupling"),
    "qfactor": ("antenna", "qfactor"),
    "evaluate_budget": ("budget", "evaluate"),
    "build_report": ("report", "build_report"),
    "Store": ("store", "Store"),
    "lot_history": ("history", "history"),
    # errors and warnings
    "MatchtoolError": ("errors", "MatchtoolError"),
    "MatchtoolWarning": ("errors", "MatchtoolWarning"),
}
__all__ = ["__version__", *_LAZY]


def __dir__() -> list[str]:
    return sorted({"__version__", *_LAZY})


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        import importlib

        module, attr = _LAZY[name]
        value = getattr(importlib.import_module(f"{__name__}.{module}"), attr)
        globals()[name] = value
        return value
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

"""JSON output: one document, never ``Infinity`` or ``NaN`` (written as null with a warning)."""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np

_PLAIN = (str, int, bool, type(None))  # written as they are (exact types: numpy's are made plain below)


def clean(obj: Any, warnings: list[str], where: str = "") -> Any:
    """Return ``obj`` with numpy types made plain and non-finite floats replaced by None.

    Each replacement appends a warning naming the field to ``warnings``. (The path of a field is
    spelt out only for a warning: a lot's document has some hundred thousand fields.)
    """
    return _clean(obj, warnings, where or None)


def _where(at) -> str:
    """The field name of a path (parent, key) built by :func:`_clean`: ``a.b[2].c``."""
    keys = []
    while isinstance(at, tuple):
        at, key = at
        keys.append(key)
    out = "" if at is None else str(at)
    for key in reversed(keys):
        out = f"{out}[{key}]" if type(key) is int else (f"{out}.{key}" if out else str(key))
    return out


def _clean(obj: Any, warnings: list[str], at) -> Any:
    t = type(obj)
    if t is dict:
        out = {}
        for k, v in obj.items():
            tv = type(v)
            if tv is float and math.isfinite(v):
                out[k] = v + 0.0  # -0.0 (e.g. IEEE arithmetic at |Gamma| = 1) is written as 0.0
            elif tv in _PLAIN:
                out[k] = v
            else:
                out[k] = _clean(v, warnings, (at, str(k)))
        return out
    if t is list or t is tuple:
        return [v + 0.0 if type(v) is float and math.isfinite(v) else
                v if type(v) in _PLAIN else _clean(v, warnings, (at, i)) for i, v in enumerate(obj)]
    if isinstance(obj, dict):
        return _clean(dict(obj), warnings, at)
    if isinstance(obj, list | tuple):
        return _clean(list(obj), warnings, at)
    if isinstance(obj, np.ndarray):
        return _clean(obj.tolist(), warnings, at)
    if isinstance(obj, bool | np.bool_):
        return bool(obj)
    if isinstance(obj, int | np.integer):
        return int(obj)
    if isinstance(obj, float | np.floating):
        x = float(obj)
        if not math.isfinite(x):
            word = "infinite" if math.isinf(x) else "undefined"
            warnings.append(f"{_where(at)} is {word} ({x}); written as null")
            return None
        return x + 0.0
    return obj


def dumps(doc: dict[str, Any]) -> str:
    """Serialise a result document. A top-level ``warnings`` list receives the null warnings."""
    warnings = list(doc.get("warnings", []))
    body = clean({k: v for k, v in doc.items() if k != "warnings"}, warnings)
    body["warnings"] = warnings
    return json.dumps(body, indent=2, allow_nan=False)

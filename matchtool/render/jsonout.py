"""JSON output: one document, never ``Infinity`` or ``NaN`` (written as null with a warning)."""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np


def clean(obj: Any, warnings: list[str], where: str = "") -> Any:
    """Return ``obj`` with numpy types made plain and non-finite floats replaced by None.

    Each replacement appends a warning naming the field to ``warnings``.
    """
    if isinstance(obj, dict):
        return {k: clean(v, warnings, f"{where}.{k}" if where else str(k)) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [clean(v, warnings, f"{where}[{i}]") for i, v in enumerate(obj)]
    if isinstance(obj, np.ndarray):
        return clean(obj.tolist(), warnings, where)
    if isinstance(obj, bool | np.bool_):
        return bool(obj)
    if isinstance(obj, int | np.integer):
        return int(obj)
    if isinstance(obj, float | np.floating):
        x = float(obj)
        if not math.isfinite(x):
            word = "infinite" if math.isinf(x) else "undefined"
            warnings.append(f"{where} is {word} ({x}); written as null")
            return None
        return x + 0.0  # -0.0 (e.g. IEEE arithmetic at |Gamma| = 1) is written as 0.0
    return obj


def dumps(doc: dict[str, Any]) -> str:
    """Serialise a result document. A top-level ``warnings`` list receives the null warnings."""
    warnings = list(doc.get("warnings", []))
    body = clean({k: v for k, v in doc.items() if k != "warnings"}, warnings)
    body["warnings"] = warnings
    return json.dumps(body, indent=2, allow_nan=False)

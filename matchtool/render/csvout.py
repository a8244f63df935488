"""CSV of a check: a header row, then one row per file and requirement (SI units in the names).

``limit`` and ``worst`` are in the unit named by the ``unit`` column (that of the limit key);
``worst_return_loss_db`` is always positive dB of return loss; ``margin_db`` is positive when
passing. An unreadable file is one row with ``error`` filled and the requirement columns empty.
``port`` is the port of a one-port requirement, ``ports`` the pair ``i,j`` of a two-port one
(isolation, correlation); ECC has no dB margin (``margin_db`` empty: its margin is limit - worst).
"""

from __future__ import annotations

import csv
import io
import math

from ..spec import UnitResult

COLUMNS = ("file", "requirement", "limit_key", "unit", "pass", "limit", "worst", "worst_f_hz", "margin_db",
           "margin_hz", "worst_return_loss_db", "band_f_low_hz", "band_f_high_hz", "samples_in_band", "reason",
           "error", "port", "ports")


def _cell(x) -> str:
    if x is None:
        return ""
    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, float):
        if not math.isfinite(x):
            return "inf" if x > 0 else ("-inf" if x < 0 else "nan")
        return repr(x + 0.0)  # -0.0 (the return loss of a short, -20 log10 1) is written as 0.0
    return str(x).encode("utf-8", "replace").decode("utf-8")  # a file name that is not valid UTF-8


def csv_text(results: list[UnitResult]) -> str:
    """The CSV document (RFC 4180 quoting, CRLF line ends) for ``results`` (a list of UnitResults
    or a ``batch.LotResult``)."""
    units = getattr(results, "units", None)
    if units is not None:
        results = [c.result for c in units]
    buf = io.StringIO()
    w = csv.writer(buf)
    w.writerow(COLUMNS)
    for u in results:
        if u.error is not None:
            w.writerow([_cell(v) for v in (u.file, "", "", "", False, None, None, None, None, None, None, None, None,
                                           None, "", u.error, None, None)])
            continue
        for r in u.requirements:
            w.writerow([_cell(v) for v in (u.file, r.name, r.key, r.unit, r.passed, r.limit, r.worst, r.worst_f_hz,
                                           r.margin_db, r.margin_hz, r.worst_return_loss_db, r.f_low_hz, r.f_high_hz,
                                           r.samples, r.reason, "", r.port if r.ports is None else None,
                                           None if r.ports is None else f"{r.ports[0]},{r.ports[1]}")])
    return buf.getvalue()

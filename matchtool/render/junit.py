"""JUnit XML of a check, per unit (the default) or per lot.

``level="unit"``: ``<testsuites>`` holding one ``<testsuite>`` per file (``name`` = the file's
path); each test case has ``classname`` = the file's path and ``name`` = the requirement. A failing
requirement carries ``<failure>`` whose message states the worst value, where it occurs and the
margin; an unreadable file is one test case named ``load`` with an ``<error>``.

``level="lot"`` (for lots of tens of thousands of units, where a case per unit is unreadable): one
``<testsuite>`` with one test case per requirement (``classname`` = the lot, or the spec's name),
failing when any unit failed it, its message giving the lot yield and the worst unit; one case
``unreadable files`` with an ``<error>`` when some could not be read. The per-unit detail stays
in the CSV and the store.

Every suite has a ``timestamp`` (the start of the check, UTC, ISO 8601 without zone as the common
JUnit schema has it) and ``time``; each case's ``time`` is its unit's evaluation time shared
equally among the unit's cases (so the times add up to the suite's). Only attributes of the common
JUnit schema are used (as pytest's ``xunit2`` family does).
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

from ..spec import RequirementResult

_XML_BAD = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def _text(s: str) -> str:
    """Make a string safe for XML 1.0 (drop control characters and lone surrogates)."""
    return _XML_BAD.sub("\ufffd", str(s))


def _num(x: float | None, digits: int = 3) -> str:
    if x is None:
        return "n/a"
    return f"{x:.{digits}f}"


def _secs(t: float) -> str:
    return f"{max(0.0, t):.6f}"


def requirement_message(r: RequirementResult) -> str:
    """One line describing a requirement's verdict: worst value, frequency, limit, margin (the
    digits by the rules of the terminal view: a worst value never reads as its limit, a margin
    never as zero unless it is)."""
    from .text.check import GLUE, distinct, signed, window_text

    if r.worst is None:
        return f"{r.name}: not evaluated: {r.reason}"
    if r.key == "resonance":
        worst, window = window_text(r.f_low_hz, r.f_high_hz, r.worst)
        return (f"{r.name}: best match at {worst}, window {window}, margin "
                f"{signed(r.margin_hz / 1e6, 4, 'MHz', r.passed)}").replace(GLUE, " ")
    info = r.info
    w, lim = distinct(r.worst, r.limit, info.digits)
    where = f" (port {r.port})" if r.port is not None and r.ports is None else ""
    where = f" (ports {r.ports[0]},{r.ports[1]})" if r.ports is not None else where
    if r.margin_ecc is not None:
        margin = f"margin {signed(r.margin_ecc, 3, '', r.passed)}"
    elif r.margin_db is not None:
        margin = f"margin {signed(r.margin_db, 2, info.margin_unit, r.passed)}"
    else:
        margin = "margin n/a"
    return (f"{r.name}{where}: worst {w} {r.unit} at {r.worst_f_hz / 1e6:.4f} MHz, limit "
            f"{lim} {r.unit} ({r.key}), {margin}")


def _units(lot_or_results):
    """(results, times) from a batch.LotResult or a plain list of UnitResults."""
    units = getattr(lot_or_results, "units", None)
    if units is not None:
        return [c.result for c in units], [c.time_s for c in units], getattr(lot_or_results, "started_at", "")
    results = list(lot_or_results)
    return results, [0.0] * len(results), ""


def junit_xml(lot, suite_name: str = "matchtool check", level: str = "unit", timestamp: str | None = None,
              lot_name: str | None = None) -> str:
    """The JUnit XML document (UTF-8 text with an XML declaration) of a ``batch.LotResult`` (or a
    list of ``UnitResult``)."""
    results, times, started = _units(lot)
    stamp = timestamp or started or ""
    root = ET.Element("testsuites", name=_text(suite_name))
    tot = {"tests": 0, "failures": 0, "errors": 0}
    total_time = 0.0
    if level == "lot":
        suite, t = _lot_suite(results, times, suite_name, lot_name, stamp)
        root.append(suite)
        for k in tot:
            tot[k] += int(suite.get(k))
        total_time += t
    elif level == "unit":
        for u, t_unit in zip(results, times, strict=True):
            cases = []
            fails = errs = 0
            cls = _text(u.file)
            n_cases = max(1, len(u.requirements) + (u.error is not None))
            if u.error is not None:
                tc = ET.Element("testcase", classname=cls, name="load", time=_secs(t_unit / n_cases))
                ET.SubElement(tc, "error", message=_text(u.error), type="InputError").text = _text(u.error)
                cases.append(tc)
                errs += 1
            for r in u.requirements:
                tc = ET.Element("testcase", classname=cls, name=_text(r.name), time=_secs(t_unit / n_cases))
                if not r.passed:
                    msg = _text(requirement_message(r))
                    ET.SubElement(tc, "failure", message=msg, type="RequirementFailed").text = msg
                    fails += 1
                cases.append(tc)
            attrs = {"name": cls, "tests": str(len(cases)), "failures": str(fails), "errors": str(errs), "skipped": "0",
                     "time": _secs(t_unit)}
            if stamp:
                attrs["timestamp"] = stamp
            suite = ET.SubElement(root, "testsuite", attrs)
            suite.extend(cases)
            tot["tests"] += len(cases)
            tot["failures"] += fails
            tot["errors"] += errs
            total_time += t_unit
    else:
        from ..errors import UsageError

        raise UsageError("must be unit or lot", parameter="junit_level", value=level, expected="unit or lot")
    for k, v in tot.items():
        root.set(k, str(v))
    root.set("time", _secs(total_time))
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


def _lot_suite(results, times, suite_name, lot_name, stamp):
    from ..batch import summarize_lot, worst_of_requirement
    from .text.check import worst_margin

    s = summarize_lot(results)
    cls = _text(lot_name or suite_name)
    total = sum(times)
    per_case = total / max(1, len(s.yields) + (s.errors > 0))
    cases, fails, errs = [], 0, 0
    for y in s.yields:
        tc = ET.Element("testcase", classname=cls, name=_text(y.name), time=_secs(per_case))
        if y.passed < y.evaluated:
            w = worst_of_requirement(s, y.name)  # this requirement's own worst unit and margin
            worst = f"; worst unit {w.file} (margin {worst_margin(w)})" if w is not None else ""
            msg = _text(f"{y.name}: yield {100 * y.yield_fraction:.2f} % ({y.passed} of {y.evaluated} units passed, "
                        f"{y.evaluated - y.passed} failed){worst}")
            ET.SubElement(tc, "failure", message=msg, type="RequirementFailed").text = msg
            fails += 1
        cases.append(tc)
    if s.errors:
        bad = [u for u in results if u.error is not None]
        names = ", ".join(u.file for u in bad[:5]) + (f" and {len(bad) - 5} more" if len(bad) > 5 else "")
        msg = _text(f"{len(bad)} file(s) could not be read: {names}")
        tc = ET.Element("testcase", classname=cls, name="unreadable files", time=_secs(per_case))
        ET.SubElement(tc, "error", message=msg, type="InputError").text = _text(
            "\n".join(u.error for u in bad))
        cases.append(tc)
        errs += 1
    attrs = {"name": cls, "tests": str(len(cases)), "failures": str(fails), "errors": str(errs), "skipped": "0",
             "time": _secs(total)}
    if stamp:
        attrs["timestamp"] = stamp
    suite = ET.Element("testsuite", attrs)
    props = ET.SubElement(suite, "properties")
    for k, v in (("units", s.units), ("passed", s.passed), ("failed", s.failed), ("unreadable", s.errors),
                 ("yield_fraction", f"{s.yield_fraction:.6f}")):
        ET.SubElement(props, "property", name=k, value=str(v))
    suite.extend(cases)
    return suite, total

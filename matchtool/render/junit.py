"""JUnit XML of a check: one ``testcase`` per file and requirement.

Layout (read by the common JUnit consumers): ``<testsuites>`` holding one ``<testsuite>`` per
file (``name`` = the file's path); each test case has ``classname`` = the file's path and
``name`` = the requirement. A failing requirement carries ``<failure>`` whose message states the
worst value, where it occurs and the margin; an unreadable file is one test case named ``load``
with an ``<error>``. Only the attributes of the common JUnit schema are used (as pytest's
``xunit2`` family does); no timestamps, so the same inputs give the same bytes.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

from ..spec import RequirementResult, UnitResult

_XML_BAD = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def _text(s: str) -> str:
    """Make a string safe for XML 1.0 (drop control characters and lone surrogates)."""
    return _XML_BAD.sub("\ufffd", str(s))


def _num(x: float | None, digits: int = 3) -> str:
    if x is None:
        return "n/a"
    return f"{x:.{digits}f}"


def requirement_message(r: RequirementResult) -> str:
    """One line describing a requirement's verdict: worst value, frequency, limit, margin."""
    if r.worst is None:
        return f"{r.name}: not evaluated: {r.reason}"
    if r.key == "resonance":
        return (f"{r.name}: best match at {r.worst / 1e6:.4f} MHz, window {r.f_low_hz / 1e6:.4f} to "
                f"{r.f_high_hz / 1e6:.4f} MHz, margin {_num(r.margin_hz / 1e6, 4)} MHz")
    info = r.info
    digits = info.digits
    where = f" (port {r.port})" if r.port is not None and r.ports is None else ""
    where = f" (ports {r.ports[0]},{r.ports[1]})" if r.ports is not None else where
    if r.margin_ecc is not None:
        margin = f"margin {r.margin_ecc:+.3f}"
    elif r.margin_db is not None:
        margin = f"margin {r.margin_db:+.2f} {info.margin_unit}"
    else:
        margin = "margin n/a"
    return (f"{r.name}{where}: worst {r.worst:.{digits}f} {r.unit} at {r.worst_f_hz / 1e6:.4f} MHz, limit "
            f"{r.limit:.{digits}f} {r.unit} ({r.key}), {margin}")


def junit_xml(results: list[UnitResult], suite_name: str = "matchtool check") -> str:
    """The JUnit XML document (UTF-8 text with an XML declaration) for ``results``."""
    root = ET.Element("testsuites", name=_text(suite_name))
    tot = {"tests": 0, "failures": 0, "errors": 0}
    for u in results:
        cases = []
        fails = errs = 0
        cls = _text(u.file)
        if u.error is not None:
            tc = ET.Element("testcase", classname=cls, name="load")
            ET.SubElement(tc, "error", message=_text(u.error), type="InputError").text = _text(u.error)
            cases.append(tc)
            errs += 1
        for r in u.requirements:
            tc = ET.Element("testcase", classname=cls, name=_text(r.name))
            if not r.passed:
                msg = _text(requirement_message(r))
                ET.SubElement(tc, "failure", message=msg, type="RequirementFailed").text = msg
                fails += 1
            cases.append(tc)
        suite = ET.SubElement(root, "testsuite", name=cls, tests=str(len(cases)), failures=str(fails),
                              errors=str(errs), skipped="0")
        suite.extend(cases)
        tot["tests"] += len(cases)
        tot["failures"] += fails
        tot["errors"] += errs
    for k, v in tot.items():
        root.set(k, str(v))
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"

"""Numbers and sentences for people, shared by the terminal views and the HTML report (plain
strings, no rich, no HTML). The core returns numbers; every reading of them is written here.

Rules every screen follows (docs/compare-plot-report.md):

- A margin always carries its sign, and a margin that fails is never shown as ``-0.00``: more
  digits are shown until it reads negative (``-0.004 dB``), or ``< 0.0001 dB below``.
- A worst value is shown with enough digits to tell it from its limit (``0.604`` against ``0.600``).
- Frequencies keep the digits the user gave (:func:`matchtool.units.format_frequency`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from ..units import format_frequency as ff

MAX_EXTRA_DIGITS = 4


def fixed(x: float | None, digits: int = 2) -> str:
    """Fixed digits; 'n/a' for None/NaN, 'inf'/'-inf'; never '-0.00'."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "n/a"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    text = f"{x:.{digits}f}"
    if text.startswith("-") and float(text) == 0:
        text = text[1:]
    return text


def margin(x: float | None, digits: int = 2, unit: str = "dB", passed: bool | None = None) -> str:
    """A signed margin (positive when passing): ``+2.31 dB``, ``-0.004 dB``, ``-< 0.0001 dB``.

    ``passed`` False (or a negative ``x``) never prints as zero: digits are added (up to
    ``digits + 4``) until the value reads negative; below that the text says ``< ... below``."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "n/a"
    u = f" {unit}" if unit else ""
    if math.isinf(x):
        return ("+inf" if x > 0 else "-inf") + u
    failing = x < 0 or passed is False
    if not failing:
        return f"{x + 0.0:+.{digits}f}{u}"  # + 0.0: no "-0.00" for a negative zero
    for d in range(digits, digits + MAX_EXTRA_DIGITS + 1):
        if round(abs(x), d) > 0:
            return f"-{abs(x):.{d}f}{u}"
    d = digits + MAX_EXTRA_DIGITS
    return f"< {10 ** -d:.{d}f}{u} below"


def distinct(value: float | None, limit: float | None, digits: int = 2) -> tuple[str, str]:
    """``value`` and ``limit`` at the fewest digits (at least ``digits``) that tell them apart."""
    if value is None or limit is None or not (math.isfinite(value) and math.isfinite(limit)):
        return fixed(value, digits), fixed(limit, digits)
    for d in range(digits, digits + MAX_EXTRA_DIGITS + 1):
        a, b = fixed(value, d), fixed(limit, d)
        if a != b or value == limit:
            return a, b
    return fixed(value, digits + MAX_EXTRA_DIGITS), fixed(limit, digits + MAX_EXTRA_DIGITS)


def mhz(f_hz: float) -> str:
    """A frequency in MHz with the digits it has (``2483.5``, ``915``)."""
    return f"{f_hz / 1e6:.10g}"


def span_mhz(f_low_hz: float, f_high_hz: float) -> str:
    return f"{mhz(f_low_hz)}-{mhz(f_high_hz)} MHz"


def _nm(names: Mapping[str, str] | None, path: str) -> str:
    return (names or {}).get(path, path)


# --- compare ----------------------------------------------------------------------------------

def band_verdict_sentence(v: Any, names: Mapping[str, str] | None = None) -> str:
    """One line for a :class:`matchtool.compare.BandVerdict`; ``names`` maps paths to display names."""
    from ..compare import band_name

    span = v.name
    if v.name != band_name(v.f_low_hz, v.f_high_hz):
        span += f" ({mhz(v.f_low_hz)} to {mhz(v.f_high_hz)} MHz)"
    if v.best_file is None:
        return f"{span}: no sweep covers this band"
    text = f"{span}: best is {_nm(names, v.best_file)} (worst return loss {fixed(v.best_worst_return_loss_db)} dB"
    if v.limit_return_loss_db is not None:
        best, lim = distinct(v.best_worst_return_loss_db, v.limit_return_loss_db)
        text = (f"{span}: best is {_nm(names, v.best_file)} (worst return loss {best} dB; limit {lim} dB, "
                f"{len(v.passing_files)} passing")
    text += ")"
    if v.uncovered_files:
        text += f"; not covered by {', '.join(_nm(names, f) for f in v.uncovered_files)}"
    return text


def requirement_unit(q: Any) -> str:
    """The unit to print after a requirement's limit and worst: ``dB return loss``, ``ratio`` ..."""
    return q.unit


def requirement_cells(q: Any, limit_unit: bool = True) -> tuple[str, str, str, str, str]:
    """Cells of one spec requirement (a ``spec.RequirementResult``): verdict, worst (in the limit
    key's unit), where, limit (with its unit unless ``limit_unit`` is False, for a table whose
    header names it), margin (signed, never -0.00 when failing)."""
    verdict = "pass" if q.passed else "FAIL"
    if q.worst is None:
        # not evaluated (e.g. the band is not covered): the reason is in the warnings and the JSON
        lim = "n/a" if q.limit is None else f"{q.limit:g} {q.unit}"
        return verdict, "not evaluated", "n/a", lim, "n/a"
    if q.key == "resonance":
        return (verdict, f"{q.worst / 1e6:.3f} MHz", f"{q.worst_f_hz / 1e6:.3f} MHz",
                f"{mhz(q.f_low_hz)}-{mhz(q.f_high_hz)} MHz", margin(q.margin_hz / 1e6, 3, "MHz", q.passed))
    d = 3 if q.key == "max_vswr" else 2
    worst, lim = distinct(q.worst, q.limit, d)
    return (verdict, f"{worst} {q.unit}", f"{q.worst_f_hz / 1e6:.3f} MHz", f"{lim} {q.unit}" if limit_unit else lim,
            _margin_of(q))


def _margin_of(q: Any) -> str:
    """A requirement's signed margin: dB, or for an ECC limit the ECC below it (dimensionless)."""
    if q.margin_db is None and getattr(q, "margin_ecc", None) is not None:
        return margin(q.margin_ecc, 3, "ECC", q.passed)
    return margin(q.margin_db, 2, "dB", q.passed)


def requirement_verdict_sentence(v: Any, names: Mapping[str, str] | None = None) -> str:
    """One line for a :class:`matchtool.compare.RequirementVerdict`:
    ``ism: best is r3.s1p (worst 12.31 dB return loss at 915 MHz, limit 10.00 dB return loss, margin +2.31 dB); 2 of 3 pass``."""
    n = len(v.passing_files) + len(v.failing_files)
    if v.best is None or v.best_file is None:
        return f"{v.name}: no revision could be evaluated ({'; '.join(_nm(names, f) for f in v.unevaluated_files)})"
    b = v.best
    if v.key == "resonance":
        what = (f"best match at {mhz(b.worst)} MHz, {margin(b.margin_hz / 1e6, 3, 'MHz', b.passed)} from the "
                f"nearer edge of {span_mhz(b.f_low_hz, b.f_high_hz)}")
    else:
        d = 3 if v.key == "max_vswr" else 2
        worst, lim = distinct(b.worst, b.limit, d)
        what = f"worst {worst} {v.unit} at {mhz(b.worst_f_hz)} MHz, limit {lim} {v.unit}, margin {_margin_of(b)}"
    text = f"{v.name}: best is {_nm(names, v.best_file)} ({what}); {len(v.passing_files)} of {n} pass"
    if v.failing_files:
        text += f" (failing: {', '.join(_nm(names, f) for f in v.failing_files)})"
    return text


def spec_verdict_line(c: Any, names: Mapping[str, str] | None = None) -> str:
    """``Verdict: FAIL - 2 of 3 files fail the spec: a, b`` or ``Verdict: PASS - ...`` (no markup)."""
    failing = [_nm(names, f) for f in c.failing_files]
    if failing:
        return f"Verdict: FAIL - {len(failing)} of {len(c.rows)} files fail the spec: {', '.join(failing)}"
    return f"Verdict: PASS - all {len(c.rows)} files meet every requirement"


# --- budget -----------------------------------------------------------------------------------

def range_text(x: float) -> str:
    """A range for people: ``31.7 m``, ``12.35 km``, ``unbounded``."""
    if math.isinf(x):
        return "unbounded"
    if x >= 10_000:
        return f"{x / 1000:.2f} km"
    return f"{x:.1f} m"


def model_words(res: Any) -> str:
    """The path-loss model of a budget result in a few words: ``free space`` or
    ``log-distance, n = 3 beyond 1 m``."""
    if res.path_loss_exponent is None:
        return "free space"
    return f"log-distance, n = {res.path_loss_exponent:g} beyond {res.reference_distance_m:g} m"


def estimate_words(res: Any) -> str:
    """'A free-space estimate' or 'A log-distance estimate (...)', for the budget's footers."""
    if res.path_loss_exponent is None:
        return "A free-space estimate"
    return (f"A log-distance estimate (exponent {res.path_loss_exponent:g} beyond "
            f"{res.reference_distance_m:g} m, an assumed environment)")


def budget_range_lines(res: Any) -> list[tuple[str, str]]:
    """The range headline of a budget: (label, value) pairs, each naming its model, the model in
    use first. Never two models in one line."""
    w = res.worst
    req = res.required_margin_db
    at = f"margin {req:g} dB" if req else "zero margin (no fade margin set)"
    if math.isinf(w.polarization_loss_db):
        return [("range", "none: the antennas are cross-polarised (no link in the ideal model)")]
    out = []
    if res.path_loss_exponent is not None:
        out.append((f"range ({model_words(res)}), {at}", range_text(w.max_range_model_m)))
        if req:
            out.append((f"range ({model_words(res)}), zero margin", range_text(w.zero_margin_range_model_m)))
        out.append((f"for comparison only: free-space range, {at}", range_text(w.max_range_m)))
    else:
        out.append((f"range (free space), {at}", range_text(w.max_range_m)))
        if req:
            out.append(("range (free space), zero margin", range_text(w.zero_margin_range_m)))
    return out


def mismatch_cost_line(res: Any) -> str:
    """What the mismatch costs in range, in the model in use (named)."""
    w = res.worst
    return (f"mismatch (tx {fixed(w.tx.mismatch_loss_db, 3)} dB + rx {fixed(w.rx.mismatch_loss_db, 3)} dB) costs "
            f"{range_text(w.mismatch_range_cost_m)} of range ({fixed(100 * w.mismatch_range_cost_fraction, 1)} %) "
            f"in the {model_words(res)} model; perfectly matched antennas would reach {range_text(w.matched_range_m)}")


# --- match ------------------------------------------------------------------------------------

def part_text(e: Any) -> str:
    """A part's value as 'matchtool match' prints it (render/text/match.py's notation)."""
    from .text.match import part_value_text

    return part_value_text(e)


def schematic(elements: Any, z0_ohm: float) -> str:
    """The text schematic of a network, as 'matchtool match' draws it."""
    from .text.match import schematic as draw

    return draw(elements, z0_ohm)


def network_text(elements: Any) -> str:
    """Parts in order from the radio side: ``series L 12 nH, shunt C 3.3 pF``."""
    return ", ".join(f"{e.connection} {'L' if e.kind == 'inductor' else 'C'} {part_text(e)}" for e in elements)


def q_text(q: float) -> str:
    """A part Q for people: ``40``, or ``ideal`` for a lossless part (infinite Q)."""
    return "ideal" if math.isinf(q) else f"{q:g}"


def target_text(r: Any) -> str:
    """``at 915 MHz`` or ``over 902-928 MHz`` for a ``matching.MatchResult``."""
    if r.f_low_hz is None:
        return f"at {mhz(r.f0_hz)} MHz"
    return f"over {span_mhz(r.f_low_hz, r.f_high_hz)}"


def frequency(f_hz: float) -> str:
    """A frequency given by the user or measured (the digits it has: ``2.4835 GHz``)."""
    return ff(f_hz)


def computed_frequency(f_hz: float) -> str:
    """A computed width or centre: three decimals, never the extra digits of
    :func:`matchtool.units.format_frequency` (they would be false precision here)."""
    return ff(f_hz, max_extra_digits=0)

"""HTML report section of ``qfactor``: the same table as the terminal view, its warnings and the
cautions, as one self-contained fragment (no external assets). The lead wires it into ``report``."""

from __future__ import annotations

from ..antenna import QFactorResult
from .html import bullet_list, esc, paragraph, table
from .text.qfactor import CAUTION, _length, rows


def section_html(result: QFactorResult) -> str:
    """A self-contained HTML fragment of a QFactorResult: table, warnings, cap sizing and cautions."""
    r = result
    parts = [f'<div class="qfactor"><h3>{esc(r.path)}: what the antenna allows</h3>',
             table(("quantity", "value", "note"), rows(r), numeric=(False, True, False),
                   caption=f"port {r.port}, Z0 {r.z0_ohm:g} ohm, {r.points} points")]
    parts.append(paragraph(
        "Q is the Yaghjian-Best Q_Z from the impedance and its slopes (A. D. Yaghjian, S. R. Best, IEEE Trans. "
        "Antennas Propag. 53(4), 2005); the potential band is what a lossless single-resonator match at f0 "
        "could reach, (s - 1) / (Q sqrt(s)); the Chu-McLean minimum is 1/(ka)^3 + 1/(ka) (Chu 1948, McLean 1996)."))
    if r.warnings:
        parts.append(bullet_list(r.warnings, css_class="warnings"))
    if r.capped_path is not None:
        parts.append(paragraph(
            f"Cap method (Wheeler 1959), capped sweep {r.capped_path}. Cap sizing (common practice): larger than the "
            f"radiansphere (radius {_length(r.radiansphere_radius_m)} at f0) yet below the cap's own first "
            f"resonance (a closed sphere resonates at radius {_length(r.sphere_cap_resonance_radius_m)})."))
        parts.append(paragraph(CAUTION, css_class="caution"))
    parts.append("</div>")
    return "\n".join(parts)

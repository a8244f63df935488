"""The HTML report's coupling section for a multi-port input: isolation and ECC per pair and band,
the TARC, the assumptions, and inline SVG pictures (matplotlib through ``plot_coupling``)."""

from __future__ import annotations

from pathlib import Path

from ..units import format_frequency as ff
from .html import esc, figure_svg, paragraph, table
from .json_contract import ECC_NOTE, tarc_note


def _band(lo: float, hi: float) -> str:
    return f"{ff(lo)} to {ff(hi)}"


def section_html(result, masks=None, pictures: bool = True) -> str:
    """A self-contained HTML fragment for a ``coupling.CouplingResult`` (no external assets).

    ``masks`` (a ``spec.Spec``) adds its isolation and correlation limits to the pictures;
    ``pictures`` False leaves the pictures out (no matplotlib needed then).
    """
    name = Path(result.path).name
    rows = []
    for p in result.pairs:
        for b in p.bands:
            rows.append((f"{p.ports[0]},{p.ports[1]}", _band(b.f_low_hz, b.f_high_hz),
                         f"{b.min_isolation_db:.2f} dB (S{b.isolation_direction[0]}{b.isolation_direction[1]})",
                         ff(b.f_min_isolation_hz), f"{b.max_ecc:.4f}", ff(b.f_max_ecc_hz)))
    out = [f'<section class="coupling"><h3>Coupling between the ports of {esc(name)} ({result.nports} ports)</h3>',
           table(("ports", "band", "min isolation", "at", "max ECC", "at"), rows,
                 numeric=(False, False, True, True, True, True),
                 caption="Isolation = -20 log10 |S_ij| (worst of S_ij and S_ji); ECC from S-parameters")]
    t = result.tarc
    if t is not None:
        trow = [(_band(lo, hi), f"{w:.2f} dB", ff(fw))
                for (lo, hi), w, fw in zip(result.bands, t.band_worst_db, t.band_worst_f_hz, strict=True)]
        out.append(table(("band", "worst TARC", "at"), trow, numeric=(False, True, True),
                         caption=f"TARC of ports {', '.join(map(str, t.ports))}, worst over the excitation phases"))
        if t.bands_10db:
            out.append(paragraph("TARC <= -10 dB for every phase: " + "; ".join(
                f"{_band(b.f_low_hz, b.f_high_hz)} ({ff(b.bandwidth_hz)})" for b in t.bands_10db) + "."))
        else:
            out.append(paragraph("TARC <= -10 dB for every phase: nowhere in the sweep."))
        out.append(paragraph(f"Excitation: {tarc_note(t)}.", "note"))
    out.append(paragraph(f"{ECC_NOTE[0].upper()}{ECC_NOTE[1:]}.", "note"))
    for w in result.warnings:
        out.append(paragraph(f"warning: {w}", "warning"))
    if pictures:
        from .plot_coupling import ecc_figure, isolation_figure, svg_text, tarc_figure

        stem = "".join(c if c.isalnum() else "-" for c in name)
        out.append(figure_svg(svg_text(isolation_figure(result, masks)), f"iso-{stem}",
                              "Every |S_ij| in dB (isolation masks where a spec states them)"))
        out.append(figure_svg(svg_text(ecc_figure(result, masks)), f"ecc-{stem}", "Envelope correlation per pair"))
        if t is not None:
            out.append(figure_svg(svg_text(tarc_figure(result)), f"tarc-{stem}",
                                  "TARC, worst and best over the excitation phases"))
    out.append("</section>")
    return "".join(out)

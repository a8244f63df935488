"""The ``locate`` section of the HTML report: the distance picture (inline SVG), the reflections,
the reading, the gate and the cautions. A self-contained fragment (no external assets)."""

from __future__ import annotations

from . import html as h


def section_html(result) -> str:
    """An HTML fragment for a ``locate.LocateResult``."""
    from .plot_locate import distance_figure
    from .plots import figure_bytes
    from .text.locate import CAUTIONS, compensation_text, gate_text, mode_text, reading, resolution_text, window_text

    svg = figure_bytes(distance_figure(result, "reflection"), "svg").decode("utf-8")
    parts = [f"<h2>{h.esc('Where the reflections are: ' + result.name)}</h2>",
             h.figure_svg(svg, "locate", f"Reflection versus distance along the feed, port {result.port}"),
             h.paragraph("Reading: " + reading(result)),
             h.definition_list([("mode", mode_text(result)), ("cable", compensation_text(result)),
                                ("window", window_text(result)), ("range", resolution_text(result))])]
    if result.peaks:
        rows = [(k, f"{p.distance_m:.3f}", f"{p.return_loss_db:.2f}", f"{p.reflection_mag:.4f}",
                 f"{p.raw_return_loss_db:.2f}", p.kind or "-") for k, p in enumerate(result.peaks, 1)]
        parts.append(h.table(["#", "distance m", "return loss dB", "|Gamma|", "at the analyzer dB", "kind"], rows,
                             [True, True, True, True, True, False],
                             caption="Reflections, strongest first (return loss of each alone, positive dB)",
                             css_class="locate"))
    if result.gate is not None:
        parts.append(h.bullet_list(line.strip() for line in gate_text(result)))
    parts.append(h.bullet_list(CAUTIONS, css_class="cautions"))
    return '<section class="locate">' + "".join(parts) + "</section>"

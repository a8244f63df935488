"""Plots: one inline SVG per kind, each with a caption that explains its marks."""

from __future__ import annotations

from .. import html as h

CAPTIONS = {
    "return-loss": "Return loss in positive dB (higher is better) with the threshold line; grey: bands; tinted "
                   "with a limit line: the region below the band's limit; short bars on the threshold: where each "
                   "trace crosses it; open hexagons: the best match of each trace.",
    "s11-db": "S11 in dB (= -return loss; lower is better) with the threshold line; tinted with a limit line: the "
              "region above the band's limit; open hexagons: the best match of each trace.",
    "vswr": "VSWR with the threshold line; tinted with a limit line: the region above the band's limit; open "
            "hexagons: the best match of each trace.",
    "smith": "Impedance Smith chart; dashed circle: the threshold |Γ|; open squares, diamonds...: the edges of each "
             "band, one shape per band, named with their frequencies in the legend; open hexagons: best match.",
    "impedance": "Resistance R (solid) and reactance X (dashed) in ohms; X > 0 is inductive.",
}


def masks(ctx):
    from ..plots import BandMask

    return [BandMask(b.name, b.f_low_hz, b.f_high_hz, b.limit_return_loss_db) for b in ctx.mask_bands]


def section(ctx, names) -> h.Section:
    from .. import plots

    traces = [plots.trace_from_sweep(s, ctx.threshold_return_loss_db, names[s.path]) for s in ctx.sweeps]
    parts = []
    for k, kind in enumerate(ctx.kinds):
        fig = plots.figure(traces, [kind], ctx.threshold_return_loss_db, masks(ctx), explain=False)
        svg = plots.figure_bytes(fig, "svg").decode("utf-8")
        parts.append(h.figure_svg(svg, f"fig{k + 1}", CAPTIONS[kind]))
    return h.Section("plots", "Plots", "\n".join(parts))

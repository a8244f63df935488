"""Traceability: date, versions, the options that shaped the page, and every input's SHA-256."""

from __future__ import annotations

import platform

from ... import __version__
from ...units import format_frequency as ff
from .. import html as h
from ..words import q_text


def options(ctx, names) -> list[tuple[str, str]]:
    """The settings of the run, for people."""
    thr = ctx.threshold_return_loss_db
    out = [("threshold", f"return loss >= {thr:.2f} dB"), ("port", str(ctx.port)),
           ("z0", "from each file" if ctx.z0_ohm is None else f"{ctx.z0_ohm:g} ohm")]
    out += [(f"band {b.name}", f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}") for b in ctx.mask_bands]
    if ctx.spec_path is not None:
        out.append(("spec", ctx.spec_path))
    if ctx.match is not None:
        from ..words import target_text

        pm = ctx.match
        out.append(("match", f"{names[pm.sweep.path]} {target_text(pm.result)}, {pm.result.series}, "
                             f"Q(L) {q_text(pm.result.q.inductor)}, Q(C) {q_text(pm.result.q.capacitor)}, "
                             f"network #{pm.pick}"))
    if ctx.budget_path is not None:
        out.append(("budget", ctx.budget_path))
    return out


def section(ctx, names) -> h.Section:
    import numpy
    import skrf

    items = [("generated", ctx.generated.strftime("%Y-%m-%d %H:%M:%S UTC")), ("matchtool", __version__),
             ("python", platform.python_version()), ("numpy", numpy.__version__), ("scikit-rf", skrf.__version__)]
    try:
        import matplotlib

        items.append(("matplotlib", matplotlib.__version__))
    except ImportError:  # pragma: no cover
        pass
    parts = [h.definition_list(items + options(ctx, names)),
             h.table(["input file", "bytes", "SHA-256"], [[f.path, f.size_bytes, f.sha256] for f in ctx.inputs],
                     [False, True, False], caption="Input files", css_class="hash")]
    return h.Section("traceability", "Traceability", "\n".join(parts))

"""HTML report section of ``history`` (a lot page): per lot the counts and yield, each
requirement's spread and Cpk, the worst units, and the trend figure as inline SVG."""

from __future__ import annotations

import html


def _num(x, fmt: str = "{:.2f}") -> str:
    return "n/a" if x is None else fmt.format(x)


def _unit(key: str) -> str:
    """' dB return loss', ' ratio' ... : the unit of a requirement's worst value and limit."""
    from ..spec import LIMITS

    info = LIMITS.get(key)
    return f" {info.unit}" if info is not None and info.unit else ""


def section_html(result, with_trend: bool = True) -> str:
    """A self-contained HTML fragment for a ``history.HistoryResult`` (computed with
    ``series=True`` for the trend figure); no external assets."""
    e = html.escape
    parts = ['<section class="matchtool-history"><h2>Lot history</h2>',
             f"<p>Stores: {e(', '.join(result.stores))}</p>"]
    if not result.lots:
        parts.append("<p>No units for these filters.</p>")
    for lt in result.lots:
        parts.append(f"<h3>Lot {e(lt.lot)}</h3><p>{lt.units} units: {lt.passed} passed, {lt.failed} failed, "
                     f"{lt.errors} unreadable; yield {100 * lt.yield_fraction:.1f} %. Spec {e(', '.join(lt.specs))}; "
                     f"stations {e(', '.join(lt.stations))}.</p>")
        parts.append("<table><thead><tr><th>requirement</th><th>yield</th><th>passed</th><th>mean worst</th>"
                     "<th>std dev</th><th>limit</th><th>Cpk</th></tr></thead><tbody>")
        for r in lt.requirements:
            scale, unit = (1e-6, " MHz") if r.key == "resonance" else (1.0, _unit(r.key))
            lim = (f"{r.f_low_hz * 1e-6:.1f} to {r.f_high_hz * 1e-6:.1f} MHz" if r.key == "resonance"
                   and r.f_low_hz is not None else _num(r.limit, "{:.3f}") + ("" if r.limit is None else unit))
            mean = None if r.mean is None else r.mean * scale
            std = None if r.std is None else r.std * scale
            cpk = _num(r.cpk) if r.cpk is not None else f"n/a ({e(r.cpk_reason)})"
            parts.append(f"<tr><td>{e(r.name)}</td><td>{100 * r.yield_fraction:.1f} %</td><td>{r.passed}/{r.evaluated}</td>"
                         f"<td>{_num(mean, '{:.3f}')}{unit}</td><td>{_num(std, '{:.3f}')}{unit}</td><td>{e(lim)}</td>"
                         f"<td>{cpk} ({e(r.cpk_side)})</td></tr>")
        parts.append("</tbody></table>")
        if lt.worst:
            label = "Closest to failing" if all(w.passed for w in lt.worst) else "Worst failing units"
            parts.append(f"<p>{label}:</p><ul>")
            for w in lt.worst:
                m = (f"{w.margin_db:+.2f} dB" if w.margin_db is not None else
                     f"{w.margin_hz / 1e6:+.3f} MHz from the window" if w.margin_hz is not None else "not evaluated")
                parts.append(f"<li>{e(w.file)} ({e(w.station)}): {e(w.requirement)}, margin {m}</li>")
            parts.append("</ul>")
    if with_trend and result.series:
        import io

        from .plot_history import draw_trend

        buf = io.BytesIO()
        draw_trend(result, buf, "svg")
        svg = buf.getvalue().decode("utf-8")
        parts.append(svg[svg.index("<svg"):])
    parts.append("<p>Cpk describes the units measured (NIST/SEMATECH e-Handbook sec. 6.1.6); it certifies "
                 "nothing.</p></section>")
    return "\n".join(parts)

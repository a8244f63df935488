"""Terminal view of ``qfactor``: Q, bandwidth potential, small-antenna bound, cap-method efficiency."""

from __future__ import annotations

from ...antenna import QFactorResult
from ...units import format_frequency as ff
from . import console, fmt

CHOICE = {
    "at": "asked for (--at)",
    "resonance": "X = 0 nearest best match",
    "best sample": "best sample; no X = 0",
}

CAUTION = ("Cap measurements: use low drive power; RF exposure limits apply to the transmitting antenna "
           "(local regulation). The tool computes, it does not certify.")


def _pct(x: float | None, digits: int = 2) -> str:
    return "n/a" if x is None else f"{fmt(100 * x, digits)} %"


def _length(m: float) -> str:
    return f"{fmt(100 * m, 2)} cm" if m < 1 else f"{fmt(m, 3)} m"


def _z(r: float, x: float) -> str:
    x = round(x, 2) + 0.0  # no "- j0.00"
    return f"{r:.2f} {'+' if x >= 0 else '-'} j{abs(x):.2f} ohm"


def _kind(r: QFactorResult) -> str:
    """What f0 is: a resonance only where |X| is small against R; else the type and the tuning reactance."""
    if r.at_resonance:
        return f"{r.resonance} resonance"
    slope = "rising" if r.resonance == "series" else "falling"
    xt = r.tuning_reactance_ohm
    return f"{r.resonance}-type (X {slope} with f); tuned by series {'+' if xt >= 0 else '-'}j{abs(xt):.2f} ohm"


def rows(r: QFactorResult) -> list[tuple[str, str, str]]:
    """(quantity, value, note) rows of the table (shared with the HTML section)."""
    fit = r.fit
    out = [
        ("frequency f0", ff(r.f0_hz), CHOICE.get(r.f0_choice, r.f0_choice)),
        ("impedance at f0", _z(r.r_ohm, r.x_ohm), _kind(r)),
        ("Q (Yaghjian-Best Q_Z)", fmt(r.q, 2 if r.q < 100 else 1), f"+-{fmt(100 * r.q_rel_std, 1)} % fit error"),
        ("slope fit (cubic in omega)", f"{fit.points} points", f"{ff(fit.f_low_hz)} to {ff(fit.f_high_hz)}"),
        (f"potential band, VSWR {r.vswr:.3g}", _pct(r.fractional_bandwidth_potential),
         f"{ff(r.bandwidth_potential_hz)}, one resonator"),
        ("  same, found on the sweep", _pct(r.tuned_fractional_bandwidth),
         "ideal tune + transformer" if r.tuned_fractional_bandwidth is not None
         else "runs past the sweep" if r.tuned_band is not None else "no band"),
        (f"today's band, RL {r.threshold_return_loss_db:.3g} dB", _pct(r.measured_fractional_bandwidth),
         "as measured" if r.measured_band is not None else "f0 misses the limit"),
        ("Bode-Fano limit", _pct(r.bode_fano_fractional_bandwidth), "any lossless match"),
    ]
    if r.ka is not None:
        out += [
            ("ka", fmt(r.ka, 3), f"radius {_length(r.radius_m)}"),
            ("Chu-McLean minimum Q", fmt(r.chu_q_min, 2 if r.chu_q_min < 100 else 1), "1/(ka)^3 + 1/(ka)"),
            ("Q / Q_min", fmt(r.q_over_chu, 2), "1 = at the limit"),
        ]
    if r.capped_path is not None:
        if r.efficiency is None:
            out.append(("radiation efficiency", "n/a", "see the warnings"))
        else:
            series = r.efficiency_model == "series"
            k, unit, what = (1.0, "ohm", "R") if series else (1e3, "mS", "G")
            flag = "" if r.efficiency_reliable is not False else " UNRELIABLE"
            flag = flag if r.efficiency_in_range else " INVALID"
            out.append(("radiation efficiency (cap)", _pct(r.efficiency, 1) + flag,
                        f"{what} {r.free_value * k:.4g} -> {r.capped_value * k:.4g} {unit}"))
            why = "X rises with f at f0" if series else "X falls with f at f0"
            out.append(("  capped sweep read at", ff(r.f_cap_hz), f"{r.efficiency_model}: {why}"))
    return out


def render(r: QFactorResult, con=None) -> None:
    """Terminal view of a QFactorResult."""
    from rich.table import Table

    c = con or console()
    c.print(f"[bold]{r.path}[/bold]  port {r.port}, Z0 {r.z0_ohm:g} ohm, {r.points} points")
    t = Table(show_edge=False)
    for col in ("quantity", "value", "note"):
        t.add_column(col, justify="right" if col == "value" else "left", overflow="fold")
    for q, v, n in rows(r):
        t.add_row(q, v, n)
    c.print(t)
    if r.capped_path is not None:
        c.print(f"Cap sizing (common practice): larger than the radiansphere (radius "
                f"{_length(r.radiansphere_radius_m)} at f0) yet below the cap's own first resonance (a closed "
                f"sphere resonates at radius {_length(r.sphere_cap_resonance_radius_m)}).")
        c.print(CAUTION)

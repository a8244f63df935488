"""Terminal view of ``coupling``: isolation and ECC per pair and band, then the TARC."""

from __future__ import annotations

from ...units import format_frequency as ff
from ..json_contract import ECC_NOTE, tarc_note
from . import console, fmt


def _band_text(lo: float, hi: float) -> str:
    """``2.400-2.483 GHz`` when both edges share a unit, else ``900.000 MHz to 1.100 GHz``."""
    a, b = ff(lo).split(" ", 1), ff(hi).split(" ", 1)
    if len(a) == len(b) == 2 and a[1] == b[1]:
        return f"{a[0]}-{b[0]} {a[1]}"
    return f"{ff(lo)} to {ff(hi)}"


def render(r) -> None:
    """Terminal view of a ``coupling.CouplingResult``."""
    from rich.markup import escape
    from rich.table import Table

    c = console()
    c.print(f"[bold]{escape(r.path)}[/bold]  {r.nports} ports, Z0 {r.z0_ohm:g} ohm, {r.f_hz.size} points, "
            f"{ff(r.f_hz[0])} to {ff(r.f_hz[-1])}")
    t = Table(title="Isolation (-20 log10 |S_ij|, worst of both directions) and envelope correlation",
              title_justify="left", show_edge=False)
    for col in ("ports", "band", "min isolation", "at", "max ECC", "at"):
        t.add_column(col, justify="left" if col in ("ports", "band") else "right", overflow="fold")
    for p in r.pairs:
        for k, b in enumerate(p.bands):
            t.add_row(f"{p.ports[0]},{p.ports[1]}" if k == 0 else "", _band_text(b.f_low_hz, b.f_high_hz),
                      f"{fmt(b.min_isolation_db)} dB (S{b.isolation_direction[0]}{b.isolation_direction[1]})",
                      ff(b.f_min_isolation_hz), f"{b.max_ecc:.4f}", ff(b.f_max_ecc_hz))
    c.print(t)
    recip = [p for p in r.pairs if p.reciprocal]
    if recip:
        which = ("every pair" if len(recip) == len(r.pairs) else
                 "pairs " + ", ".join(f"({p.ports[0]},{p.ports[1]})" for p in recip))
        c.print(f"S_ij equals S_ji in the file for {which} (reciprocal data): one direction was in effect checked.")
    c.print(f"Note: {ECC_NOTE}.")
    tr = r.tarc
    if tr is None:
        return
    ports = ", ".join(map(str, tr.ports))
    c.print(f"[bold]TARC[/bold] of ports {ports} (total active reflection; worst and best over the excitation "
            "phases, dB):")
    t = Table(show_edge=False)
    for col in ("band", "worst TARC", "at"):
        t.add_column(col, justify="left" if col == "band" else "right", overflow="fold")
    for (lo, hi), w, fw in zip(r.bands, tr.band_worst_db, tr.band_worst_f_hz, strict=True):
        t.add_row(_band_text(lo, hi), f"{fmt(w)} dB", ff(fw))
    c.print(t)
    if tr.bands_10db:
        parts = []
        for b in tr.bands_10db:
            note = " (runs past the sweep)" if b.clipped_low or b.clipped_high else ""
            parts.append(f"{_band_text(b.f_low_hz, b.f_high_hz)}, {ff(b.bandwidth_hz)} wide{note}")
        c.print("TARC <= -10 dB for every phase: " + "; ".join(parts))
    else:
        c.print("TARC <= -10 dB for every phase: nowhere in the sweep")
    c.print(f"Excitation: {tarc_note(tr)}.")

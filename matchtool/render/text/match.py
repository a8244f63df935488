"""Terminal view of ``matchtool match``: the ranked networks as stacked blocks of short lines (legible
at 80 columns and wider; nothing is cut), the schematic of the best network with its empty positions,
the per-band outcome, the Bode-Fano reading and the yield.

Every sentence for people about a matching result is built here (the core returns facts)."""

from __future__ import annotations

import math
import textwrap
from collections.abc import Sequence

from ...units import format_frequency as ff
from . import console, fmt

RL_DISPLAY_CAP_DB = 60.0  # |Gamma| = 0.001: beyond what a calibrated VNA resolves (common practice, no source)
LOOSE_BOUND_DB = 30.0  # a Bode-Fano limit above this ...
LOOSE_GAP_DB = 10.0  # ... and this far above the proposal does not constrain the band (a reading, no source)


# --------------------------------------------------------------------------- words for facts

def part_value_text(e, digits: int = 3) -> str:
    """A part value as printed on the bench: pF / nF / uF for capacitors, nH / uH for inductors."""
    if e.kind == "capacitor":
        scales = ((1e-6, "uF"), (1e-9, "nF"), (0.0, "pF"))
        base = 1e-12
    else:
        scales = ((1e-6, "uH"), (0.0, "nH"))
        base = 1e-9
    for lim, unit in scales:
        if e.value >= lim * 0.9995:
            scale = {"uF": 1e-6, "nF": 1e-9, "pF": 1e-12, "uH": 1e-6, "nH": 1e-9}[unit]
            return f"{e.value / scale:.{digits}g} {unit}"
    return f"{e.value / base:.{digits}g}"


def rl_text(x: float | None, digits: int = 2) -> str:
    """A return loss for a table: ``>= 60`` from 60 dB up (an exact match gives floating-point
    residue such as 316 dB, or inf), 'n/a' for NaN, else fixed digits. The JSON keeps the raw value."""
    if x is not None and not (isinstance(x, float) and math.isnan(x)) and x >= RL_DISPLAY_CAP_DB:
        return f">= {RL_DISPLAY_CAP_DB:g}"
    return fmt(x, digits)


_DC = {"passes": "passes DC", "blocked": "DC blocked (series C)", "shorted": "DC shorted (shunt L)",
       "blocked+shorted": "DC blocked + shorted"}


def dc_words(elements_or_path) -> str:
    """How the network treats DC (bias on the feed), from a ``dc_path`` fact or a list of elements:
    'passes DC', 'DC blocked (series C)', 'DC shorted (shunt L)' or 'DC blocked + shorted'."""
    if isinstance(elements_or_path, str):
        return _DC[elements_or_path]
    from ...matching import dc_path

    return _DC[dc_path(list(elements_or_path))]


def _named(e) -> bool:
    """Whether a part carries a library name other than its plain description."""
    if not getattr(e, "label", None):
        return False
    from ...parts import default_label

    return e.label != default_label(e.kind, e.value)


def part_text(e) -> str:
    """``series L 12 nH``; a library part with a name: ``shunt shelf C1p0 (C 1 pF)``."""
    sym = "L" if e.kind == "inductor" else "C"
    if _named(e):
        return f"{e.connection} {e.label} ({sym} {part_value_text(e)})"
    return f"{e.connection} {sym} {part_value_text(e)}"


def library_text(lib) -> str:
    """``parts from library '0402 kit' (kit.toml): 14 parts (7 C, 7 L), 6 measured``."""
    n_c, n_l = len(lib.capacitors), len(lib.inductors)
    n_m = sum(p.measured for p in lib.parts)
    name = f"'{lib.name}' " if lib.name else ""
    return (f"parts from library {name}({lib.path or 'built in code'}): {len(lib.parts)} parts ({n_c} C, {n_l} L), "
            f"{n_m} measured, {len(lib.parts) - n_m} modelled")


def ideal_text(c, r) -> str | None:
    """The same values as ideal parts, beside the real parts' figures (None without a library)."""
    i = c.ideal
    if i is None or not c.elements:
        return None
    d = c.worst_return_loss_db - i.worst_return_loss_db
    bands = ", ".join(f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}" for b in i.bands) or "none"
    if len(r.optimised_targets) > 1:
        head = (f"same values as ideal parts: worst RL {rl_text(i.worst_return_loss_db)} dB, smallest margin "
                f"{fmt(i.min_margin_db)} dB")
    else:
        head = f"same values as ideal parts: worst RL {rl_text(i.worst_return_loss_db)} dB"
    return (f"{head} (the real parts {'gain' if d >= 0 else 'lose'} {fmt(abs(d))} dB of worst RL), "
            f"RL >= {r.threshold_return_loss_db:g} dB: {bands}")


def positions_text(c) -> list[str]:
    """One phrase per footprint position: ``1 shunt C 1.2 pF``, ``2 0-ohm link``, ``3 not fitted``."""
    if not c.positions or c.footprint == "l":
        return [part_text(e) for e in c.elements]
    out = []
    for p in c.positions:
        if p.fitted == "part":
            out.append(f"{p.position} {part_text(p.element)}")
        elif p.fitted == "link":
            out.append(f"{p.position} 0-ohm link")
        else:
            out.append(f"{p.position} not fitted")
    return out


def band_text(t) -> str:
    if t.is_point:
        return f"at {ff(t.f_low_hz)}"
    return f"{ff(t.f_low_hz)} to {ff(t.f_high_hz)}"


def _target_text(r) -> str:
    opt = r.optimised_targets
    if len(opt) > 1:
        return "over " + " and ".join(band_text(t.target) for t in opt)
    if r.f_low_hz is None:
        return f"at {ff(r.f0_hz)}"
    return f"over the band {ff(r.f_low_hz)} to {ff(r.f_high_hz)}"


def no_network_text(r) -> str:
    """The advice line for an antenna that needs no network."""
    from ...matching import MEANINGFUL_GAIN_DB

    return (f"no network needed: the antenna already meets {r.threshold_return_loss_db:g} dB return loss "
            f"{_target_text(r)} (worst {fmt(r.before_worst_return_loss_db)} dB) and no network gains more than "
            f"{MEANINGFUL_GAIN_DB:g} dB of delivered power over a direct connection")


def already_meets_text(r) -> str:
    """The line for an antenna that meets the limit but gains from a network: which listed networks
    beat the direct connection (it may lie beyond the listed ones, with a short ``--candidates``)."""
    from ...matching import MEANINGFUL_GAIN_DB

    head = f"The antenna already meets the limit {_target_text(r)}"
    if any(not c.elements for c in r.candidates):
        return (f"{head}; the networks listed above 'direct' gain more than {MEANINGFUL_GAIN_DB:g} dB of delivered "
                "power over it.")
    return (f"{head}; every network listed gains more than {MEANINGFUL_GAIN_DB:g} dB of delivered power over a "
            "direct connection (not listed here: list more networks with --candidates to see it).")


def short_of_threshold_text(r) -> str | None:
    """A warning when no listed network meets the limits over the target (None otherwise)."""
    with_parts = [c for c in r.candidates if c.elements]
    if not with_parts or any(c.meets_threshold for c in with_parts):
        return None
    best = with_parts[0]
    what = {"l": "two-part", "pi": "pi", "tee": "tee"}.get(r.network, "")
    if len(r.optimised_targets) > 1:
        return (f"no {what} network meets every band's limit {_target_text(r)}: the best misses by "
                f"{fmt(-best.min_margin_db)} dB in its worst band; consider a wider-band antenna, another "
                "footprint (--network) or one network per band (see the Bode-Fano limit)")
    return (f"no {what} network reaches {r.threshold_return_loss_db:g} dB return loss {_target_text(r)}: the best "
            f"reaches {fmt(best.worst_return_loss_db)} dB (before: {rl_text(r.before_worst_return_loss_db)} dB); "
            f"consider a wider-band antenna or a higher-order network (see the Bode-Fano limit)")


def bode_fano_text(report, proposal_rl_db: float | None, who: str = "the proposal") -> str | None:
    """The Bode-Fano reading for one band in words a bench engineer uses, or None without a bound;
    ``who`` names the network whose return loss ``proposal_rl_db`` is."""
    b = report.bound
    if b is None:
        return None
    where = band_text(report.target)
    lim = b.best_return_loss_db
    lim_text = f"{RL_DISPLAY_CAP_DB:g}" if lim >= RL_DISPLAY_CAP_DB else fmt(lim)
    text = (f"Bode-Fano limit {where}: no lossless network, however many parts, can hold more than "
            f"{lim_text} dB return loss across the whole band on this antenna (a {b.model} fitted to it, "
            f"R {b.r_ohm:.3g} ohm)")
    if proposal_rl_db is not None:
        text += f"; {who} holds {rl_text(proposal_rl_db)} dB."
    else:
        text += "."
    if lim >= LOOSE_BOUND_DB and (proposal_rl_db is None or lim - proposal_rl_db >= LOOSE_GAP_DB):
        text += (" That limit is far above what a few parts reach, so it does not constrain this band: the part "
                 "count and the part values do.")
    elif proposal_rl_db is not None and lim - proposal_rl_db < 1.0:
        text += " The proposal is within 1 dB of it: more parts cannot help much; change the antenna instead."
    return text


def tolerance_text(ys) -> str:
    """``L +-5 %, C +-5 % (capacitors below 10 pF: +-0.1 pF, the usual tolerance of small chip
    capacitors)`` (or absolute values as given). The +-0.1 pF is common practice, no source (see
    :mod:`matchtool.matching.yield_`); that note stays here, out of the user's text."""
    from ...matching import SMALL_C_LIMIT_F

    lt = (f"+-{ys.tolerance_l_h / 1e-9:g} nH" if ys.tolerance_l_h is not None else f"+-{100 * ys.tolerance_l:g} %")
    if ys.tolerance_c_f is not None:
        ct = f"+-{ys.tolerance_c_f / 1e-12:g} pF"
    else:
        ct = f"+-{100 * ys.tolerance_c:g} %"
        if ys.small_c_tolerance_f is not None:
            ct += (f" (capacitors below {SMALL_C_LIMIT_F / 1e-12:g} pF: +-{ys.small_c_tolerance_f / 1e-12:g} pF, "
                   "the usual tolerance of small chip capacitors)")
    return f"L {lt}, C {ct}"


_NOTE_WORDS = {"range_end": "at the end of the allowed values", "pad_scale": "as small as pad parasitics"}


# --------------------------------------------------------------------------- schematic

def _label(e, i: int) -> str:
    sym = "L" if e.kind == "inductor" else "C"
    return f"{sym}{i} {e.label}" if _named(e) else f"{sym}{i} {part_value_text(e)}"


def schematic(elements, z0_ohm: float, positions: Sequence | None = None) -> str:
    """Text schematic: radio on the left, antenna on the right, shunt parts hang to ground; with
    ``positions`` (a pi / tee footprint) an empty shunt position is drawn dotted and marked
    'not fitted', an empty series position as a 0-ohm link."""
    items = []
    if positions:
        for p in positions:
            if p.fitted == "part":
                items.append((p.connection, _label(p.element, p.position), "part"))
            else:
                items.append((p.connection, f"{p.position}: {'0-ohm link' if p.fitted == 'link' else 'not fitted'}",
                              p.fitted))
    else:
        items = [(e.connection, _label(e, i), "part") for i, e in enumerate(elements, start=1)]
    top = f"RADIO {z0_ohm:g} ohm o"
    drops: list[tuple[int, str, str]] = []
    for conn, lab, fitted in items:
        if conn == "series":
            top += f"--[ {lab} ]--" if fitted == "part" else f"--( {lab} )--"
        else:
            pad = "-" * (len(lab) // 2 + 3)
            top += pad
            drops.append((len(top), lab, fitted))
            top += "+" + pad
    top += "o ANTENNA"
    lines = [top]
    if drops:
        width = len(top) + 20

        def row(make) -> str:
            buf = [" "] * width
            for col, lab, fitted in drops:
                s = make(lab, fitted)
                start = max(col - len(s) // 2, 0)
                buf[start:start + len(s)] = list(s)
            return "".join(buf).rstrip()

        lines += [row(lambda s, f: "|" if f == "part" else ":"),
                  row(lambda s, f: f"[ {s} ]" if f == "part" else f"( {s} )"),
                  row(lambda s, f: "|" if f == "part" else ":"),
                  row(lambda s, f: "GND" if f == "part" else " ")]
    while lines and not lines[-1].strip():
        lines.pop()
    return "\n".join(lines)


# --------------------------------------------------------------------------- the view

def _wrap(text: str, width: int, indent: str = "", first: str = "") -> list[str]:
    return textwrap.wrap(text, width=max(width, 40), initial_indent=first or indent, subsequent_indent=indent,
                         break_long_words=False, break_on_hyphens=False) or [first.rstrip()]


def candidate_lines(i: int, c, r, width: int) -> list[str]:
    """The block of one ranked network."""
    ind = "    "
    opt = r.optimised_targets
    head = f"#{i}  {c.topology}"
    if c.elements:
        head += f"  ({len(c.elements)} part{'s' if len(c.elements) != 1 else ''})"
    else:
        head += "  (no parts: connect the antenna directly)"
    if not c.meets_threshold:
        head += "  BELOW THE LIMIT"
    lines = _wrap(head, width)
    if c.elements:
        lines += _wrap("parts: " + " | ".join(positions_text(c)), width, ind, ind)
    rl = f"worst RL {rl_text(c.worst_return_loss_db)} dB"
    if len(opt) > 1:
        rl += f", smallest margin {fmt(c.min_margin_db)} dB"
    at = f"at {ff(r.f0_hz)} {rl_text(c.return_loss_at_f0_db)} dB" if r.f_low_hz is not None or len(opt) > 1 else ""
    facts = [rl] + ([at] if at else []) + [f"network loss {fmt(c.network_loss_db, 3)} dB",
                                           f"delivered >= {100 * c.worst_delivered_fraction:.1f} %"]
    lines += _wrap(", ".join(facts), width, ind, ind)
    more = [dc_words(c.dc_path), c.filter]
    if c.yield_fraction is not None:
        more.append(f"yield {100 * c.yield_fraction:.1f} %")
    lines += _wrap(", ".join(more), width, ind, ind)
    if len(r.targets) > 1:
        for o in c.per_band:
            tag = "" if o.target.optimised else " (shown only)"
            lines += _wrap(f"{band_text(o.target)}{tag}: worst RL {rl_text(o.worst_return_loss_db)} dB, limit "
                           f"{o.target.limit_return_loss_db:g} dB, margin {fmt(o.margin_db)} dB", width, ind + "  ",
                           ind + "- ")
    bands = ", ".join(f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}" + (" (runs past the sweep)" if b.clipped_low
                                                                   or b.clipped_high else "") for b in c.bands) or "none"
    lines += _wrap(f"RL >= {r.threshold_return_loss_db:g} dB on the matched sweep: {bands}", width, ind, ind)
    it = ideal_text(c, r)
    if it:
        lines += _wrap(it, width, ind, ind)
    for n in c.notes:
        lines += _wrap(f"note: part {n.position} is {_NOTE_WORDS.get(n.flag, n.flag)}", width, ind, ind)
    return lines


def lines_of(r, width: int = 80) -> list[str]:
    """The whole view as lines no longer than ``width`` (at least 40) except the schematic."""
    out: list[str] = []
    q = r.q
    qt = lambda x: "ideal" if math.isinf(x) else f"{x:g}"  # noqa: E731
    lib = getattr(r, "parts_library", None)
    if lib is not None:
        out += _wrap(f"{r.path}: matching to {r.z0_ohm:g} ohm {_target_text(r)}; {r.network} footprint, "
                     f"{library_text(lib)}; every part as measured or modelled there", width)
    else:
        out += _wrap(f"{r.path}: matching to {r.z0_ohm:g} ohm {_target_text(r)}; {r.network} footprint, {r.series} "
                     f"values, part Q: L {qt(q.inductor)}, C {qt(q.capacitor)}", width)
    if len(r.targets) > 1:
        out.append("Before (no network):")
        for t in r.targets:
            tag = "" if t.target.optimised else " (shown only)"
            out += _wrap(f"{band_text(t.target)}{tag}: worst RL {rl_text(t.before_worst_return_loss_db)} dB, limit "
                         f"{t.target.limit_return_loss_db:g} dB", width, "    ", "  - ")
    else:
        s11 = (f"<= -{RL_DISPLAY_CAP_DB:g}" if r.before_worst_return_loss_db >= RL_DISPLAY_CAP_DB
               else fmt(-r.before_worst_return_loss_db))
        out += _wrap(f"Before: worst return loss {rl_text(r.before_worst_return_loss_db)} dB (S11 {s11} dB), at "
                     f"{ff(r.f0_hz)} {rl_text(r.before_return_loss_at_f0_db)} dB", width)
    if r.no_network_needed:
        out += _wrap(no_network_text(r), width)
    elif r.before_meets_threshold:
        out += _wrap(already_meets_text(r), width)
    out.append("")
    out += _wrap(f"Networks, best first, ranked by {r.rank_by}; parts from the radio side (1) to the antenna side:",
                 width)
    for i, c in enumerate(r.candidates, start=1):
        out += candidate_lines(i, c, r, width)
    short = short_of_threshold_text(r)
    if short:
        out.append("")
        out += _wrap(short, width)
    best = r.candidates[0] if r.candidates else None
    if best is not None and best.elements:
        out.append("")
        out.append("Best network (solder from the radio side):")
        out += schematic(best.elements, r.z0_ohm, best.positions if r.network != "l" else None).splitlines()
    elif best is not None:
        out.append("")
        out.append("Best choice: no parts; connect the antenna directly to the radio.")
    with_parts = [c for c in r.candidates if c.elements]
    for t in r.optimised_targets:
        prop = None
        if with_parts:
            o = next((o for o in with_parts[0].per_band if o.target == t.target), None)
            prop = o.worst_return_loss_db if o is not None else with_parts[0].worst_return_loss_db
        who = "the best network with parts" if best is not None and not best.elements else "the proposal"
        text = bode_fano_text(t, prop, who)
        if text and with_parts:
            out.append("")
            out += _wrap(text, width)
    if r.yield_settings is not None and r.candidates:
        ys = r.yield_settings
        tol = "each part within its own tolerance from the library" if lib is not None else tolerance_text(ys)
        out += _wrap(f"Tolerance yield: {ys.trials} builds, {tol}; values drawn uniformly, seed {ys.seed}: "
                     f"{100 * (r.candidates[0].yield_fraction or 0):.1f} % of builds of #1 meet the limit "
                     f"{_target_text(r)}.", width)
    out.append("")
    out += _wrap("Check the built network on the bench before driving it with a transmitter: a high VSWR can "
                 "damage an amplifier. matchtool computes; it does not certify.", width)
    return out


def render(r, con=None) -> None:
    """Print the view of a ``matching.MatchResult`` on ``con`` (default: the stdout console)."""
    from rich.markup import escape

    c = con or console()
    width = min(int(c.width or 80), 120) - 1
    for line in lines_of(r, width):
        c.print(escape(line), soft_wrap=True)

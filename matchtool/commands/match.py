"""``matchtool match SWEEP``: L-networks for a frequency or a band, evaluated on the measured sweep."""

from __future__ import annotations

import math
import re
from pathlib import Path
from typing import Annotated, Any

import typer

from .. import matching as mt
from ..errors import UsageError
from ..outputs import atomic_write_many, check_output
from ..summary import threshold_from_options
from ..sweep import load, touchstone_text
from ..units import format_frequency as ff
from ..units import parse_band, parse_frequency
from .common import (
    ForceOpt,
    JsonOpt,
    MaxS11Opt,
    MaxVswrOpt,
    MinRLOpt,
    PortOpt,
    Z0Opt,
    console,
    emit_json,
    fmt,
    same_file,
    warn,
)

EPILOG = """Examples:

  matchtool match ant_r1.s1p --band 902MHz:928MHz

  matchtool match ant_r1.s1p --at 915MHz --series exact

  matchtool match ant_r1.s1p --band 902MHz:928MHz --q-inductor 40 --q-capacitor 300 --tolerance 5% --json

  matchtool match ant_r1.s1p --band 902MHz:928MHz --write-network net.s2p --write-matched ant_matched.s1p
"""

_PREFIX = {"": 1.0, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3}


# Option types of ``match``, module-level so that other commands can reuse them (e.g. a command
# that designs a network for a spec could import SeriesOpt, QInductorOpt, CRangeOpt...).
AtOpt = Annotated[str | None, typer.Option("--at", metavar="FREQ", help="Match at one frequency, e.g. 915MHz.")]
BandOpt = Annotated[str | None, typer.Option("--band", metavar="LOW:HIGH",
    help="Match over a band, e.g. 902MHz:928MHz.")]
SeriesOpt = Annotated[str, typer.Option("--series", metavar="exact|E12|E24|E48|E96",
    help="Preferred-value series (IEC 60063) or exact values.")]
QInductorOpt = Annotated[float | None, typer.Option("--q-inductor", metavar="Q",
    help="Inductor Q at the target frequency (constant-Q model).")]
QCapacitorOpt = Annotated[float | None, typer.Option("--q-capacitor", metavar="Q",
    help="Capacitor Q at the target frequency (constant-Q model).")]
ToleranceOpt = Annotated[str | None, typer.Option("--tolerance", metavar="PCT",
    help="Part tolerance for the yield, e.g. 5%.")]
ToleranceInductorOpt = Annotated[str | None, typer.Option("--tolerance-inductor", metavar="PCT",
    help="Inductor tolerance (overrides --tolerance).")]
ToleranceCapacitorOpt = Annotated[str | None, typer.Option("--tolerance-capacitor", metavar="PCT",
    help="Capacitor tolerance (overrides --tolerance).")]
TrialsOpt = Annotated[int, typer.Option("--trials", metavar="N", help="Monte Carlo builds for the yield.")]
SeedOpt = Annotated[int, typer.Option("--seed", metavar="N", help="Random seed of the yield (reproducible).")]
CRangeOpt = Annotated[str | None, typer.Option("--c-range", metavar="LOW:HIGH",
    help="Allowed capacitor values [default: 0.1pF:100nF].")]
LRangeOpt = Annotated[str | None, typer.Option("--l-range", metavar="LOW:HIGH",
    help="Allowed inductor values [default: 0.5nH:10uH].")]
CandidatesOpt = Annotated[int, typer.Option("--candidates", metavar="N", help="How many networks to list.")]
PickOpt = Annotated[int, typer.Option("--pick", metavar="N",
    help="Which ranked network the --write-* files hold.")]
WriteNetworkOpt = Annotated[str | None, typer.Option("--write-network", metavar="FILE.s2p",
    help="Write the network as a 2-port (port 1 radio).")]
WriteMatchedOpt = Annotated[str | None, typer.Option("--write-matched", metavar="FILE.s1p",
    help="Write the antenna with the network in place.")]


def parse_part_value(text: str, unit: str, option: str) -> float:
    """``'0.1pF'``, ``'10 uH'``, ``'2.2e-12'`` -> value in SI (F or H)."""
    m = re.fullmatch(rf"\s*([0-9.]+(?:[eE][-+]?\d+)?)\s*([fpnuµm]?)\s*(?:{unit})?\s*", str(text))
    if not m:
        raise UsageError(f"cannot read part value {text!r}", key=option, expected=f"a value such as 2.2p{unit} or 2.2e-12")
    try:
        v = float(m.group(1)) * _PREFIX[m.group(2)]
    except ValueError as exc:
        raise UsageError(f"cannot read part value {text!r}", key=option) from exc
    if not (v > 0 and math.isfinite(v)):
        raise UsageError(f"part value {text!r}", key=option, expected="a positive value")
    return v


def parse_range(text: str | None, unit: str, option: str, default: tuple[float, float]) -> tuple[float, float]:
    """``'0.1pF:100nF'`` -> (low, high) in SI."""
    if text is None:
        return default
    parts = str(text).split(":")
    if len(parts) != 2:
        raise UsageError(f"cannot read range {text!r}", key=option, expected=f"LOW:HIGH, e.g. 0.5n{unit}:10u{unit}")
    lo, hi = (parse_part_value(p, unit, option) for p in parts)
    if not hi > lo:
        raise UsageError(f"range {text!r} has its high end at or below its low end", key=option)
    return lo, hi


def parse_percent(text: str | None, option: str) -> float | None:
    """``'5%'`` or ``'5'`` -> 0.05 (a fraction); None stays None."""
    if text is None:
        return None
    t = str(text).strip().rstrip("%").strip()
    try:
        v = float(t)
    except ValueError:
        raise UsageError(f"cannot read tolerance {text!r}", key=option, expected="a percentage such as 5%") from None
    if not (0 <= v < 100 and math.isfinite(v)):
        raise UsageError(f"tolerance {text!r}", key=option, expected="a percentage from 0 to below 100")
    return v / 100.0


def part_q(value: float | None, option: str) -> float:
    """A --q-inductor / --q-capacitor value: None means an ideal part (infinite Q); Q must be positive."""
    if value is None:
        return math.inf
    if not (value > 0):
        raise UsageError(f"quality factor {value:g}", key=option, expected="a positive Q")
    return float(value)


def _none_if_inf(x: float) -> float | None:
    return None if math.isinf(x) else x


def element_doc(e: mt.Element) -> dict[str, Any]:
    return {"kind": e.kind, "connection": e.connection, "value": e.value, "unit": e.unit}


def band_doc(b) -> dict[str, Any]:
    return {"f_low_hz": b.f_low_hz, "f_high_hz": b.f_high_hz, "f_center_hz": b.f_center_hz,
            "bandwidth_hz": b.bandwidth_hz, "fractional_bandwidth": b.fractional_bandwidth,
            "clipped_low": b.clipped_low, "clipped_high": b.clipped_high}


def result_doc(r: mt.MatchResult, port: int) -> dict[str, Any]:
    """The ``match --json`` document (contract keys plus more)."""
    if r.f_low_hz is None:
        target: dict[str, Any] = {"f_hz": r.f0_hz}
    else:
        target = {"f_low_hz": r.f_low_hz, "f_high_hz": r.f_high_hz, "f_center_hz": r.f0_hz}
    ys = r.yield_settings
    bf = r.bound
    with_parts = [c for c in r.candidates if c.elements]
    best_rl = with_parts[0].worst_return_loss_db if with_parts else None
    return {
        "file": r.path, "port": port, "z0_ohm": r.z0_ohm, "target": target, "series": r.series,
        "q_inductor": _none_if_inf(r.q.inductor), "q_capacitor": _none_if_inf(r.q.capacitor),
        "q_model": "constant Q: series resistance |X|/Q at every frequency",
        "bounds": {"c_min_f": r.bounds.c_min_f, "c_max_f": r.bounds.c_max_f,
                   "l_min_h": r.bounds.l_min_h, "l_max_h": r.bounds.l_max_h},
        "threshold_return_loss_db": r.threshold_return_loss_db, "rank_by": r.rank_by,
        "order": "elements listed from the radio side to the antenna side",
        "no_network_needed": r.no_network_needed,
        "advice": no_network_text(r) if r.no_network_needed else short_of_threshold_text(r),
        "before": {"worst_return_loss_db": r.before_worst_return_loss_db,
                   "return_loss_at_f0_db": r.before_return_loss_at_f0_db,
                   "meets_threshold": r.before_meets_threshold,
                   "bands": [band_doc(b) for b in r.before_bands]},
        "candidates": [{
            "rank": i + 1, "topology": c.topology, "elements": [element_doc(e) for e in c.elements],
            "worst_return_loss_db": c.worst_return_loss_db, "return_loss_at_f0_db": c.return_loss_at_f0_db,
            "network_loss_db": c.network_loss_db, "worst_delivered_fraction": c.worst_delivered_fraction,
            "passes_dc": c.passes_dc, "dc": mt.dc_words(c.elements), "filter": c.filter, "bands": [band_doc(b) for b in c.bands],
            "yield_fraction": c.yield_fraction,
        } for i, c in enumerate(r.candidates)],
        "bode_fano": None if bf is None else {
            "model": bf.model, "r_ohm": bf.r_ohm, "l_h": _none_if_inf(bf.l_h), "c_f": _none_if_inf(bf.c_f),
            "fit_rms_relative": bf.fit_rms_rel, "gamma_min": bf.gamma_min,
            "best_worst_return_loss_db": _none_if_inf(bf.best_return_loss_db),
            "l_network_worst_return_loss_db": best_rl,
        },
        "yield": None if ys is None else {
            "tolerance_inductor_pct": 100 * ys.tolerance_l, "tolerance_capacitor_pct": 100 * ys.tolerance_c,
            "trials": ys.trials, "seed": ys.seed, "distribution": "uniform within +-tolerance",
            "threshold_return_loss_db": r.threshold_return_loss_db,
            "best_fraction": r.candidates[0].yield_fraction if r.candidates else None,
        },
        "warnings": list(r.warnings),
    }


def part_value_text(e: mt.Element, digits: int = 3) -> str:
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


RL_DISPLAY_CAP_DB = 60.0  # |Gamma| = 0.001: beyond what a calibrated VNA resolves (common practice, no source)


def rl_text(x: float | None, digits: int = 2) -> str:
    """A return loss for a table: ``>= 60`` from 60 dB up (an exact match gives floating-point
    residue such as 316 dB, or inf), 'n/a' for NaN, else fixed digits. The JSON keeps the raw value."""
    if x is not None and not (isinstance(x, float) and math.isnan(x)) and x >= RL_DISPLAY_CAP_DB:
        return f">= {RL_DISPLAY_CAP_DB:g}"
    return fmt(x, digits)


def _label(e: mt.Element, i: int) -> str:
    sym = "L" if e.kind == "inductor" else "C"
    return f"{sym}{i} {part_value_text(e)}"


def schematic(elements: tuple[mt.Element, ...], z0_ohm: float) -> str:
    """Text schematic: radio on the left, antenna on the right, shunt parts hang to ground."""
    top = f"RADIO {z0_ohm:g} ohm o"
    drops: list[tuple[int, str]] = []
    for i, e in enumerate(elements, start=1):
        lab = _label(e, i)
        if e.connection == "series":
            top += f"----[ {lab} ]----"
        else:
            pad = "-" * (len(lab) // 2 + 3)
            top += pad
            drops.append((len(top), lab))
            top += "+" + pad
    top += "o ANTENNA"
    lines = [top]
    if drops:
        width = len(top) + 20

        def row(make) -> str:
            buf = [" "] * width
            for col, lab in drops:
                s = make(lab)
                start = max(col - len(s) // 2, 0)
                buf[start:start + len(s)] = list(s)
            return "".join(buf).rstrip()

        lines += [row(lambda s: "|"), row(lambda s: f"[ {s} ]"), row(lambda s: "|"), row(lambda s: "GND")]
    return "\n".join(lines)


def _target_text(r: mt.MatchResult) -> str:
    if r.f_low_hz is None:
        return f"at {ff(r.f0_hz)}"
    return f"over the band {ff(r.f_low_hz)} to {ff(r.f_high_hz)}"


def no_network_text(r: mt.MatchResult) -> str:
    """The advice line for an antenna that needs no network."""
    return (f"no network needed: the antenna already meets {r.threshold_return_loss_db:g} dB return loss "
            f"{_target_text(r)} (worst {fmt(r.before_worst_return_loss_db)} dB) and no network gains more than "
            f"{mt.MEANINGFUL_GAIN_DB:g} dB of delivered power over a direct connection")


def short_of_threshold_text(r: mt.MatchResult) -> str | None:
    """A warning when no listed network reaches the threshold over the target (None otherwise)."""
    with_parts = [c for c in r.candidates if c.elements]
    if not with_parts or max(c.worst_return_loss_db for c in with_parts) >= r.threshold_return_loss_db:
        return None
    best = max(c.worst_return_loss_db for c in with_parts)
    return (f"no two-part network reaches {r.threshold_return_loss_db:g} dB return loss {_target_text(r)}: the best "
            f"reaches {fmt(best)} dB (before: {rl_text(r.before_worst_return_loss_db)} dB); consider a wider-band "
            f"antenna or a higher-order network (see the Bode-Fano limit)")


def render(r: mt.MatchResult) -> None:
    from rich.markup import escape
    from rich.table import Table

    c = console()
    if r.f_low_hz is None:
        tgt = f"at {ff(r.f0_hz)}"
    else:
        tgt = f"over {ff(r.f_low_hz)} to {ff(r.f_high_hz)}"
    c.print(f"[bold]{escape(r.path)}[/bold]  matching to {r.z0_ohm:g} ohm {tgt}; values {r.series}, "
            f"Q(L) {fmt(r.q.inductor, 0)}, Q(C) {fmt(r.q.capacitor, 0)}")
    s11 = ("<= -" + f"{RL_DISPLAY_CAP_DB:g}" if r.before_worst_return_loss_db >= RL_DISPLAY_CAP_DB
           else fmt(-r.before_worst_return_loss_db))
    c.print(f"Before: worst return loss {rl_text(r.before_worst_return_loss_db)} dB "
            f"(S11 {s11} dB), at {ff(r.f0_hz)} {rl_text(r.before_return_loss_at_f0_db)} dB")
    if r.no_network_needed:
        c.print(f"[bold]{escape(no_network_text(r))}[/bold]")
    elif r.before_meets_threshold:
        c.print(f"The antenna already meets {r.threshold_return_loss_db:g} dB {_target_text(r)}; the networks listed "
                f"above 'direct' gain more than {mt.MEANINGFUL_GAIN_DB:g} dB of delivered power over it.")
    t = Table(title=f"Candidates, ranked by {mt.MatchResult.rank_by}; parts radio side first", title_justify="left",
              show_edge=False)
    cols = ["#", "topology", "parts, radio -> antenna", "worst RL dB", "RL f0 dB", "loss dB", "worst deliv.",
            "DC / filter"]
    if r.yield_settings is not None:
        cols.append("yield")
    for col in cols:
        left = col in ("topology", "parts, radio -> antenna", "DC / filter")
        t.add_column(col, justify="left" if left else "right", no_wrap=left)
    for i, cand in enumerate(r.candidates, start=1):
        parts = ", ".join(f"{e.connection} {'L' if e.kind == 'inductor' else 'C'} {part_value_text(e)}"
                          for e in cand.elements) or "none (connect the antenna directly)"
        row = [str(i), cand.topology, parts, rl_text(cand.worst_return_loss_db), rl_text(cand.return_loss_at_f0_db),
               fmt(cand.network_loss_db, 3), f"{100 * cand.worst_delivered_fraction:.1f} %",
               f"{mt.dc_words(cand.elements)}, {cand.filter}"]
        if r.yield_settings is not None:
            row.append("n/a" if cand.yield_fraction is None else f"{100 * cand.yield_fraction:.1f} %")
        t.add_row(*[escape(x) for x in row])
    c.print(t)
    c.print(f"Bands with return loss >= {r.threshold_return_loss_db:g} dB on the matched sweep:")
    for i, cand in enumerate(r.candidates, start=1):
        bands = ", ".join(f"{ff(b.f_low_hz)} to {ff(b.f_high_hz)}"
                          + (" (runs past the sweep)" if b.clipped_low or b.clipped_high else "")
                          for b in cand.bands) or "none"
        c.print(f"  #{i}: {escape(bands)}")
    with_parts = [cand for cand in r.candidates if cand.elements]
    short = short_of_threshold_text(r)
    if short:
        c.print(f"[bold]{escape(short)}[/bold]")
    if r.candidates and r.candidates[0].elements:
        c.print("\nBest network (solder from the radio side):")
        c.print(escape(schematic(r.candidates[0].elements, r.z0_ohm)))
    elif r.candidates:
        c.print("\nBest choice: no parts; connect the antenna directly to the radio.")
    if r.bound is not None and with_parts:
        c.print(f"\nBode-Fano limit ({r.bound.model} fitted over the band, R {r.bound.r_ohm:.3g} ohm): no lossless "
                f"network can hold more than {fmt(r.bound.best_return_loss_db)} dB return loss across the band; "
                f"the best L-network reaches {rl_text(with_parts[0].worst_return_loss_db)} dB.")
    if r.yield_settings is not None and r.candidates:
        ys = r.yield_settings
        c.print(f"Tolerance yield: {ys.trials} builds, L +-{100 * ys.tolerance_l:g} %, C +-{100 * ys.tolerance_c:g} % "
                f"(uniform, seed {ys.seed}): {100 * (r.candidates[0].yield_fraction or 0):.1f} % keep "
                f">= {r.threshold_return_loss_db:g} dB over the target.")
    c.print("Check the built network on the bench before driving it with a transmitter: a high VSWR can "
            "damage an amplifier. matchtool computes; it does not certify.")


def register(app: typer.Typer) -> None:
    @app.command("match", epilog=EPILOG)
    def match_cmd(
        sweep: Annotated[str, typer.Argument(metavar="SWEEP", help="Touchstone file of the antenna.",
                                             show_default=False)],
        at: AtOpt = None,
        band: BandOpt = None,
        series: SeriesOpt = "E24",
        q_inductor: QInductorOpt = None,
        q_capacitor: QCapacitorOpt = None,
        tolerance: ToleranceOpt = None,
        tolerance_l: ToleranceInductorOpt = None,
        tolerance_c: ToleranceCapacitorOpt = None,
        trials: TrialsOpt = 2000,
        seed: SeedOpt = 1,
        c_range: CRangeOpt = None,
        l_range: LRangeOpt = None,
        count: CandidatesOpt = 6,
        pick: PickOpt = 1,
        write_network: WriteNetworkOpt = None,
        write_matched: WriteMatchedOpt = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Two-part matching networks (L-sections) for a frequency or a band, on the measured sweep."""
        if (at is None) == (band is None):
            raise UsageError("give exactly one of --at FREQ or --band LOW:HIGH")
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        q = mt.PartQ(part_q(q_inductor, "--q-inductor"), part_q(q_capacitor, "--q-capacitor"))
        c_lo, c_hi = parse_range(c_range, "F", "--c-range", (0.1e-12, 100e-9))
        l_lo, l_hi = parse_range(l_range, "H", "--l-range", (0.5e-9, 10e-6))
        bounds = mt.ValueBounds(c_lo, c_hi, l_lo, l_hi)
        tol = parse_percent(tolerance, "--tolerance")
        tl = parse_percent(tolerance_l, "--tolerance-inductor")
        tc = parse_percent(tolerance_c, "--tolerance-capacitor")
        ys = None
        if tol is not None or tl is not None or tc is not None:
            if seed < 0:
                raise UsageError(f"--seed {seed}", expected="a seed of 0 or more")
            if trials < 1 or trials > 10_000_000:
                raise UsageError(f"--trials {trials}", expected="a number of builds from 1 to 10000000")
            ys = mt.YieldSettings(tl if tl is not None else (tol or 0.0), tc if tc is not None else (tol or 0.0),
                                  trials, seed)
        if count < 1:
            raise UsageError(f"--candidates {count}", expected="1 or more")
        if write_network and write_matched and Path(write_network).resolve() == Path(write_matched).resolve():
            raise UsageError("--write-network and --write-matched name the same file", path=write_network)
        for path in (write_network, write_matched):
            if path is not None:
                check_output(path, force)
                if same_file(path, sweep):
                    raise UsageError("the output would overwrite the input sweep", path=path,
                                     expected="an output file name that is not the input")
        if write_network is not None and not write_network.lower().endswith(".s2p"):
            raise UsageError("--write-network needs a .s2p file name", path=write_network)
        if write_matched is not None and not write_matched.lower().endswith(".s1p"):
            raise UsageError("--write-matched needs a .s1p file name", path=write_matched)
        sw = load(sweep, port=port, z0_ohm=z0)
        if at is not None:
            r = mt.design_at(sw, parse_frequency(at), series=series, q=q, bounds=bounds, threshold_db=thr,
                             yield_settings=ys, max_candidates=count)
        else:
            lo, hi = parse_band(band)
            r = mt.design_for_band(sw, lo, hi, series=series, q=q, bounds=bounds, threshold_db=thr,
                                   yield_settings=ys, max_candidates=count)
        if write_network or write_matched:
            if not 1 <= pick <= len(r.candidates):
                raise UsageError(f"--pick {pick}", expected=f"a rank from 1 to {len(r.candidates)}")
            chosen = r.candidates[pick - 1]
            desc = "; ".join(f"{e.connection} {e.kind} {part_value_text(e, 6)}" for e in chosen.elements) or "no parts"
            items = []
            notes = [f"matchtool match network for {sw.name} (radio side first): {desc}",
                     f"part Q: L {fmt(q.inductor, 1)}, C {fmt(q.capacitor, 1)}"]
            if write_network:
                s = mt.s_parameters(sw.f_hz, chosen.elements, r.z0_ohm, q)
                items.append((write_network, touchstone_text(sw.f_hz, s, r.z0_ohm,
                                                             notes + ["port 1 = radio side, port 2 = antenna side"])))
            if write_matched:
                g = mt.gamma_matched(sw, chosen.elements, q)
                items.append((write_matched, touchstone_text(sw.f_hz, g, r.z0_ohm,
                                                             notes + [f"antenna {sw.name} seen through the network"])))
            atomic_write_many(items, force)
        if json_out:
            emit_json(result_doc(r, port))
        else:
            render(r)
            warn(r.warnings)
        return 0

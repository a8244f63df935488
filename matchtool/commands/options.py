"""Option types every command shares, and the one table that maps a core parameter name to the
command-line flag that sets it (so an error raised in the core's own terms names the flag the user
typed)."""

from __future__ import annotations

import math
import re
from typing import Annotated

import typer

from ..errors import UsageError
from ..units import parse_frequency

PortOpt = Annotated[int, typer.Option("--port", metavar="N", help="Port N whose reflection S_NN is analysed (1-based).")]
Z0Opt = Annotated[float | None, typer.Option(
    "--z0", metavar="OHM", help="Renormalise to this system impedance in ohms (default: the file's reference).")]
JsonOpt = Annotated[bool, typer.Option("--json", help="Print one JSON document on stdout instead of tables.")]
ForceOpt = Annotated[bool, typer.Option("--force", help="Replace output files that already exist.")]
MinRLOpt = Annotated[float | None, typer.Option(
    "--min-return-loss", metavar="DB", help="Threshold as return loss in positive dB [default: 10, i.e. S11 -10 dB].")]
MaxVswrOpt = Annotated[float | None, typer.Option("--max-vswr", metavar="V", help="Threshold as a VSWR, e.g. 2.")]
MaxS11Opt = Annotated[float | None, typer.Option("--max-s11-db", metavar="DB", help="Threshold as S11 in dB, e.g. -10.")]

# core parameter name -> the flag that sets it; add a line when a command exposes a new parameter
PARAMETER_FLAGS: dict[str, str] = {
    "z0_ohm": "--z0",
    "port": "--port",
    "threshold_return_loss_db": "--min-return-loss",
    "min_return_loss_db": "--min-return-loss",
    "max_vswr": "--max-vswr",
    "max_s11_db": "--max-s11-db",
    "jobs": "--jobs",
    # match
    "q_inductor": "--q-inductor",
    "q_capacitor": "--q-capacitor",
    "c_range_f": "--c-range",
    "l_range_h": "--l-range",
    "series": "--series",
    "network": "--network",
    "bands": "--band",
    "target": "--at or --band",
    "tolerance_inductor": "--tolerance-inductor",
    "tolerance_capacitor": "--tolerance-capacitor",
    "trials": "--trials",
    "seed": "--seed",
    "max_candidates": "--candidates",
}


def frequencies(values: list[str] | None) -> list[float]:
    """Parse repeatable frequency options (``915MHz``, ``2.45 GHz``, ``868e6``) into Hz."""
    return [parse_frequency(v) for v in values or []]


# --- match (also used by plot and report) -----------------------------------------------------------

AtOpt = Annotated[str | None, typer.Option("--at", metavar="FREQ", help="Match at one frequency, e.g. 915MHz.")]
BandOpt = Annotated[str | None, typer.Option("--band", metavar="LOW:HIGH",
    help="Match over a band, e.g. 902MHz:928MHz.")]
BandsOpt = Annotated[list[str] | None, typer.Option("--band", metavar="LOW:HIGH",
    help="Match over a band, e.g. 902MHz:928MHz; repeat for one network serving several bands.")]
ShowBandOpt = Annotated[list[str] | None, typer.Option("--show-band", metavar="LOW:HIGH",
    help="Also report what the network does over this band (not optimised; repeatable).")]
NetworkOpt = Annotated[str, typer.Option("--network", metavar="l|pi|tee",
    help="Footprint: l (two parts), pi (shunt-series-shunt) or tee (series-shunt-series); pi/tee positions may stay empty.")]
MatchSpecOpt = Annotated[str | None, typer.Option("--spec", metavar="FILE",
    help="Take the bands and limits for the port from a spec file (TOML).")]
SeriesOpt = Annotated[str, typer.Option("--series", metavar="exact|E12|E24|E48|E96",
    help="Preferred-value series (IEC 60063) or exact values.")]
QInductorOpt = Annotated[float | None, typer.Option("--q-inductor", metavar="Q",
    help="Inductor Q at the target frequency (constant-Q model).")]
QCapacitorOpt = Annotated[float | None, typer.Option("--q-capacitor", metavar="Q",
    help="Capacitor Q at the target frequency (constant-Q model).")]
ToleranceOpt = Annotated[str | None, typer.Option("--tolerance", metavar="PCT",
    help="Part tolerance for the yield, e.g. 5% (capacitors below 10 pF: +-0.1 pF).")]
ToleranceInductorOpt = Annotated[str | None, typer.Option("--tolerance-inductor", metavar="PCT|VALUE",
    help="Inductor tolerance, e.g. 2% or 0.1nH (overrides --tolerance).")]
ToleranceCapacitorOpt = Annotated[str | None, typer.Option("--tolerance-capacitor", metavar="PCT|VALUE",
    help="Capacitor tolerance, e.g. 5% or 0.05pF (overrides --tolerance, for every capacitor).")]
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

_PREFIX = {"": 1.0, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3}


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
        raise UsageError(f"cannot read tolerance {text!r}", key=option,
                         expected="a percentage such as 5% or an absolute value such as 0.05pF") from None
    if not (0 <= v < 100 and math.isfinite(v)):
        raise UsageError(f"tolerance {text!r}", key=option, expected="a percentage from 0 to below 100")
    return v / 100.0


def parse_tolerance(text: str | None, unit: str, option: str) -> tuple[float | None, float | None]:
    """A tolerance as (fraction, None) for ``'5%'`` / ``'5'``, or (None, absolute SI) for ``'0.05pF'``."""
    if text is None:
        return None, None
    t = str(text).strip()
    if re.search(rf"[fpnuµm]?{unit}\s*$", t) or re.search(r"[fpnuµ]\s*$", t):
        return None, parse_part_value(t, unit, option)
    return parse_percent(t, option), None


def part_q(value: float | None, option: str) -> float:
    """A --q-inductor / --q-capacitor value: None means an ideal part (infinite Q). ``matching.PartQ``
    checks that Q is positive (and names the parameter, which the CLI maps to ``option``)."""
    return math.inf if value is None else float(value)

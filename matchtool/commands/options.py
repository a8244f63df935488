"""Option types every command shares, and the one table that maps a core parameter name to the
command-line flag that sets it (so an error raised in the core's own terms names the flag the user
typed)."""

from __future__ import annotations

import math
import re
from typing import Annotated, Any

import typer

from ..errors import UsageError
from ..units import parse_band, parse_frequency

SweepArg = Annotated[str, typer.Argument(metavar="SWEEP", help="Touchstone file (.s1p, .s2p, .sNp, .ts).",
                                         show_default=False)]
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
    "kind": "--kind",
    "z0_ohm": "--z0",
    "port": "--port",
    "threshold_return_loss_db": "--min-return-loss",
    "min_return_loss_db": "--min-return-loss",
    "max_vswr": "--max-vswr",
    "max_s11_db": "--max-s11-db",
    "jobs": "--jobs",
    "shard": "--shard",
    "scheduler": "--scheduler",
    "store": "--store",
    "lot": "--lot",
    "since": "--since",
    "junit_level": "--junit-level",
    "pair": "--pair",
    "band": "--band",
    "phase_step_deg": "--phase-step",
    # feedline / locate: the one cable model (matchtool.feedline.CableModel)
    "length_m": "--length",
    "velocity_factor": "--velocity-factor",
    "loss_db_per_m": "--loss-db-per-m",
    "loss_ref_hz": "--loss-ref",
    "dielectric_loss_db_per_m": "--dielectric-loss-db-per-m",
    "cable_z0_ohm": "--cable-z0",
    "delay_s": "--delay",
    "toward": "--toward",
    "flip_cable": "--flip-cable",
    # locate
    "window": "--window",
    "mode": "--mode",
    "max_distance_m": "--max-distance",
    "gate": "--gate",
    "floor_return_loss_db": "--floor",
    "min_separation_m": "--min-separation",
    "max_peaks": "--peaks",
    "at_hz": "--at",
    "radius_m": "--radius",
    "capped": "--capped",
    "min_band_width_hz": "--min-band-width",
    "pick": "--pick",
    # match
    "q_inductor": "--q-inductor",
    "q_capacitor": "--q-capacitor",
    "c_range_f": "--c-range",
    "l_range_h": "--l-range",
    "series": "--series",
    "network": "--network",
    "bands": "--band",
    "target": "--at or --band",
    "tolerance": "--tolerance",
    "tolerance_inductor": "--tolerance-inductor",
    "tolerance_capacitor": "--tolerance-capacitor",
    "trials": "--trials",
    "seed": "--seed",
    "max_candidates": "--candidates",
    "parts": "--parts",
    "write_network": "--write-network",
    "write_matched": "--write-matched",
}


# the cable loss options that feedline and locate share (the one cable model, feedline.CableModel)
VelocityFactorOpt = Annotated[float | None, typer.Option(
    "--velocity-factor", metavar="VF", help="Velocity factor, 0 < VF <= 1 (solid PE 0.66).")]
LossDbPerMOpt = Annotated[float | None, typer.Option(
    "--loss-db-per-m", metavar="A", help="Conductor loss in dB/m at --loss-ref, scaled with sqrt(f).")]
LossRefOpt = Annotated[str | None, typer.Option(
    "--loss-ref", metavar="FREQ", help="Frequency at which the losses are given [default: 1GHz].")]
DielectricLossOpt = Annotated[float | None, typer.Option(
    "--dielectric-loss-db-per-m", metavar="A", help="Dielectric loss in dB/m at --loss-ref, scaled with f [default: 0].")]

GateOpt = Annotated[str | None, typer.Option(
    "--gate", metavar="START:STOP", help="Keep only reflections between these distances (2.8m:3.6m) or "
                                         "round-trip times (20ns:30ns).")]


MaxDistanceOpt = Annotated[str | None, typer.Option(
    "--max-distance", metavar="L", help="Cut the distance view at this distance: 30m, 100ft [default: the "
                                        "alias-free range].")]


def gate_option(text: str | None) -> tuple[tuple[float, float] | None, tuple[float, float] | None]:
    """``--gate START:STOP`` -> ``(gate_m, gate_s)`` for ``locate.analyze``: distances (``2.5m:4m``,
    bare numbers are metres) or round-trip times (``20ns:30ns``); (None, None) without one."""
    from ..units import parse_length, parse_time

    if text is None:
        return None, None
    parts = str(text).split(":")
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise UsageError(f"cannot read --gate {text!r}", expected="START:STOP, e.g. 2.5m:4m or 20ns:30ns")
    kinds, values = [], []
    for p in parts:
        for kind, parse in (("m", parse_length), ("s", parse_time)):
            try:
                values.append(parse(p))
                kinds.append(kind)
                break
            except UsageError:
                continue
        else:
            raise UsageError(f"cannot read --gate {text!r}: {p.strip()!r} is neither a distance nor a time",
                             expected="distances (m, cm, mm, ft, in) or times (ns, ps, us)")
    if kinds[0] != kinds[1]:
        raise UsageError(f"--gate {text!r} mixes a distance and a time", expected="both distances or both times")
    if not (0 <= values[0] < values[1]):
        raise UsageError(f"--gate {text!r} must start at 0 or later and stop after it starts",
                         expected="0 <= START < STOP, e.g. 2.5m:4m")
    pair = (values[0], values[1])
    return (pair, None) if kinds[0] == "m" else (None, pair)


MIN_LOSS_REF_HZ = 1e6
"""Lowest --loss-ref accepted: cable attenuation is not specified below 1 MHz."""


def is_bare_number(text: str) -> bool:
    """True when ``text`` is a number without a unit."""
    try:
        float(text)
    except ValueError:
        return False
    return True


def loss_ref_hz(text: str | None) -> float:
    """The --loss-ref frequency in Hz (default 1 GHz); refuses one below any cable data sheet."""
    from ..errors import UsageError

    ref_hz = parse_frequency(text) if text is not None else 1e9
    if ref_hz < MIN_LOSS_REF_HZ:
        hint = "a frequency of at least 1MHz" + (f" (a bare number is Hz: did you mean {text.strip()}MHz?)"
                                                 if text is not None and is_bare_number(text) else ", e.g. 1GHz")
        raise UsageError(f"--loss-ref {text.strip() if text else ''} is {ref_hz:g} Hz, below any cable "
                         "data sheet", expected=hint)
    return ref_hz


def frequencies(values: list[str] | None) -> list[float]:
    """Parse repeatable frequency options (``915MHz``, ``2.45 GHz``, ``868e6``) into Hz."""
    return [parse_frequency(v) for v in values or []]


# --- bands, spec, threshold-band width (compare, plot, report; inspect may add MinBandWidthOpt) ------

BandOpt = Annotated[list[str] | None, typer.Option(
    "--band", metavar="[NAME=]LOW:HIGH",
    help="Band of interest (repeatable), e.g. 902MHz:928MHz or ism=902MHz:928MHz; the threshold is its limit.")]
SpecOpt = Annotated[str | None, typer.Option(
    "--spec", metavar="FILE",
    help="Spec file (TOML, as for 'matchtool check'): every requirement is evaluated for each file.")]
MinBandWidthOpt = Annotated[str | None, typer.Option(
    "--min-band-width", metavar="FREQ",
    help="Narrowest threshold band that counts, e.g. 1MHz; narrower crossings are listed apart as noise-level "
         "crossings [default: 0.1 % of the sweep's span, and at least 2 samples].")]


def min_band_width(text: str | None) -> float | None:
    """``--min-band-width`` in Hz (None: the default rule of ``bands.search_bands``)."""
    if text is None:
        return None
    try:
        f = parse_frequency(text)
    except UsageError as exc:
        raise UsageError(exc.what, parameter="min_band_width_hz", value=text,
                         expected="a width such as 1MHz, 500kHz or 0") from None
    if f < 0:
        raise UsageError("must not be negative", parameter="min_band_width_hz", value=text)
    return f


def band_options(values: list[str] | None, limit_return_loss_db: float | None) -> list[Any]:
    """``[NAME=]LOW:HIGH`` options -> ``compare.BandOfInterest`` list (duplicate names refused)."""
    from ..compare import BandOfInterest, band_name

    out: list[BandOfInterest] = []
    for v in values or []:
        name, sep, rest = v.partition("=")
        if not sep:
            name, rest = "", v
        lo, hi = parse_band(rest)
        if sep and not name.strip():
            raise UsageError(f"--band {v!r} has an empty name", expected="NAME=LOW:HIGH or LOW:HIGH")
        name = name.strip() or band_name(lo, hi)
        if any(b.name == name for b in out):
            raise UsageError(f"--band {v!r}: the name {name!r} is given twice", expected="distinct band names")
        out.append(BandOfInterest(name, lo, hi, limit_return_loss_db))
    return out


def require_bands_in_sweeps(bands, sweeps) -> None:
    """Refuse a --band that no sweep reaches at all (never extrapolated); a band that a sweep
    covers only in part is still evaluated and reported as not covered by that sweep."""
    from ..errors import OutOfRangeError

    for b in bands:
        if not any(s.f_hz[0] <= b.f_high_hz and b.f_low_hz <= s.f_hz[-1] for s in sweeps):
            raise OutOfRangeError(
                f"--band {b.name!r} ({b.f_low_hz / 1e6:.6g} to {b.f_high_hz / 1e6:.6g} MHz) lies outside every sweep",
                expected="a band inside the measured range (never extrapolated)")


def spec_option(path: str | None, port: int, z0_ohm: float | None):
    """Load ``--spec`` (as ``matchtool check`` does) and return ``(spec, port, z0_ohm)`` to load the
    sweeps with: the spec's port and system impedance. ``--port`` / ``--z0`` that contradict the
    spec are refused, so a file is never judged on another reflection than ``check`` would use."""
    from ..spec import load_spec

    if path is None:
        return None, port, z0_ohm
    spec = load_spec(path)
    if port != 1 and port != spec.port:
        raise UsageError(f"--port {port} contradicts the spec's port = {spec.port}", path=path,
                         expected="no --port, or the spec's port")
    if z0_ohm is not None and (spec.z0_ohm is None or abs(z0_ohm - spec.z0_ohm) > 1e-9 * spec.z0_ohm):
        have = "no z0_ohm (each file's own reference)" if spec.z0_ohm is None else f"z0_ohm = {spec.z0_ohm:g}"
        raise UsageError(f"--z0 {z0_ohm:g} contradicts the spec's {have}", path=path,
                         expected="no --z0 with --spec (set z0_ohm in the spec file)")
    return spec, spec.port, spec.z0_ohm


# --- the match options that plot and report share with `matchtool match` (same flags and defaults;
# written here so that no command imports another; match.py may import them from here) -----------

# part values, ranges and Q of the match options: one parser each, in the match section below


def match_request(at: str | float | None, band: str | tuple[float, float] | None, series: str = "E24",
                  q_inductor: float | None = None, q_capacitor: float | None = None, c_range: str | None = None,
                  l_range: str | None = None, pick: int = 1, option_names: tuple[str, str] = ("--at", "--band")):
    """The match options -> a ``proposal.MatchRequest`` (target in Hz, parts, bounds, rank)."""
    from ..matching import PartQ, ValueBounds
    from ..proposal import MatchRequest

    if (at is None) == (band is None):
        raise UsageError(f"give exactly one of {option_names[0]} FREQ or {option_names[1]} LOW:HIGH for the match")
    q = PartQ(part_q(q_inductor, "q_inductor"), part_q(q_capacitor, "q_capacitor"))
    c_lo, c_hi = parse_range(c_range, "F", "c_range_f", (0.1e-12, 100e-9))
    l_lo, l_hi = parse_range(l_range, "H", "l_range_h", (0.5e-9, 10e-6))
    f0 = None if at is None else (parse_frequency(at) if isinstance(at, str) else float(at))
    target = None if band is None else (parse_band(band) if isinstance(band, str) else (float(band[0]), float(band[1])))
    return MatchRequest(f0_hz=f0, band_hz=target, series=series, q=q, bounds=ValueBounds(c_lo, c_hi, l_lo, l_hi),
                        pick=pick)


# --- match (also used by plot and report) -----------------------------------------------------------

AtOpt = Annotated[str | None, typer.Option("--at", metavar="FREQ", help="Match at one frequency, e.g. 915MHz.")]
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
    help="Which ranked network to draw (1 = best).")]
MatchPickOpt = Annotated[int, typer.Option("--pick", metavar="N",
    help="Which ranked network (1 = best) the --write-network and --write-matched files hold.")]
WriteNetworkOpt = Annotated[str | None, typer.Option("--write-network", metavar="FILE.s2p",
    help="Write the network as a 2-port (port 1 radio).")]
WriteMatchedOpt = Annotated[str | None, typer.Option("--write-matched", metavar="FILE.s1p",
    help="Write the antenna with the network in place.")]
PartsOpt = Annotated[str | None, typer.Option("--parts", metavar="LIB.toml",
    help="Pick only from this parts library (TOML: measured 2-ports or Q/SRF models, each with its tolerance); "
         "also shows the same values as ideal parts.")]

_PREFIX = {"": 1.0, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3}


def _part_value(text: str, unit: str) -> float | None:
    """``'0.1pF'`` -> 1e-13 (SI), or None when the text is not a part value."""
    m = re.fullmatch(rf"\s*([0-9.]+(?:[eE][-+]?\d+)?)\s*([fpnuµm]?)\s*(?:{unit})?\s*", str(text))
    if not m:
        return None
    try:
        return float(m.group(1)) * _PREFIX[m.group(2)]
    except ValueError:
        return None


def _value_hint(unit: str) -> str:
    return f"a positive value such as 2.2p{unit}, 10n{unit} or 2.2e-12" if unit == "F" else \
        f"a positive value such as 2.2n{unit}, 1u{unit} or 2.2e-9"


def parse_part_value(text: str, unit: str, parameter: str) -> float:
    """``'0.1pF'``, ``'10 uH'``, ``'2.2e-12'`` -> value in SI (F or H). Errors name ``parameter``
    (a core name, shown as its flag through PARAMETER_FLAGS)."""
    v = _part_value(text, unit)
    if v is None:
        raise UsageError("cannot read it as a part value", parameter=parameter, value=str(text).strip(),
                         expected=_value_hint(unit))
    if not (v > 0 and math.isfinite(v)):
        raise UsageError("must be a positive value", parameter=parameter, value=str(text).strip(),
                         expected=_value_hint(unit))
    return v


def parse_range(text: str | None, unit: str, parameter: str, default: tuple[float, float]) -> tuple[float, float]:
    """``'0.1pF:100nF'`` -> (low, high) in SI; ``default`` without a text."""
    if text is None:
        return default
    shown = str(text).strip()
    example = "0.5pF:100nF" if unit == "F" else "0.5nH:10uH"
    parts = shown.split(":")
    if len(parts) != 2:
        raise UsageError("cannot read it as a range", parameter=parameter, value=shown,
                         expected=f"LOW:HIGH, e.g. {example}")
    ends = []
    for side, p in zip(("low", "high"), parts, strict=True):
        v = _part_value(p, unit)
        if v is None or not (v > 0 and math.isfinite(v)):
            raise UsageError(f"the {side} end {p.strip()!r} is not a positive part value", parameter=parameter,
                             value=shown, expected=f"LOW:HIGH, e.g. {example}")
        ends.append(v)
    lo, hi = ends
    if not hi > lo:
        raise UsageError("the high end must lie above the low end", parameter=parameter, value=shown,
                         expected=f"LOW:HIGH with LOW < HIGH, e.g. {example}")
    return lo, hi


def parse_percent(text: str | None, parameter: str, absolute_example: str | None = None) -> float | None:
    """``'5%'`` or ``'5'`` -> 0.05 (a fraction); None stays None. ``absolute_example`` (e.g.
    ``'0.05pF'``): the option also takes an absolute value, and the error says so."""
    if text is None:
        return None
    shown = str(text).strip()
    t = shown.rstrip("%").strip()
    hint = "a percentage such as 5%" + (f" or an absolute value such as {absolute_example}"
                                         if absolute_example else "")
    try:
        v = float(t)
    except ValueError:
        raise UsageError("cannot read it as a tolerance", parameter=parameter, value=shown, expected=hint) from None
    if not (0 <= v < 100 and math.isfinite(v)):
        raise UsageError("must lie from 0 to below 100 %", parameter=parameter, value=shown, expected=hint)
    return v / 100.0


def parse_tolerance(text: str | None, unit: str, parameter: str) -> tuple[float | None, float | None]:
    """A tolerance as (fraction, None) for ``'5%'`` / ``'5'``, or (None, absolute SI) for ``'0.05pF'``."""
    if text is None:
        return None, None
    t = str(text).strip()
    if re.search(rf"[fpnuµm]?{unit}\s*$", t) or re.search(r"[fpnuµ]\s*$", t):
        return None, parse_part_value(t, unit, parameter)
    return parse_percent(t, parameter, "0.05pF" if unit == "F" else "0.1nH"), None


def part_q(value: float | None, parameter: str) -> float:
    """A --q-inductor / --q-capacitor value (``parameter`` "q_inductor" / "q_capacitor"): None means
    an ideal part (infinite Q). ``matching.PartQ`` checks that Q is positive and names the parameter,
    which the CLI maps to the flag."""
    return math.inf if value is None else float(value)

"""``matchtool match SWEEP``: matching networks (L, pi, tee) for a frequency or one or more bands,
found by an exhaustive search over standard values and evaluated on the measured sweep."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import typer

from .. import matching as mt
from ..errors import UsageError
from ..outputs import atomic_write_many, check_output
from ..render.json_contract import emit_json, match_doc
from ..render.text import fmt, warn
from ..render.text.match import (  # noqa: F401  (re-exported: plot, report and scripts import them from here)
    part_value_text,
    render,
    rl_text,
    schematic,
)
from ..summary import threshold_from_options
from ..sweep import load, touchstone_text
from ..units import parse_band, parse_frequency
from .common import ForceOpt, JsonOpt, MaxS11Opt, MaxVswrOpt, MinRLOpt, PortOpt, Z0Opt, same_file
from .options import (  # noqa: F401  (re-exported: the option types of match, shared with plot and report)
    AtOpt,
    BandOpt,
    BandsOpt,
    CandidatesOpt,
    CRangeOpt,
    LRangeOpt,
    MatchPickOpt,
    MatchSpecOpt,
    NetworkOpt,
    PartsOpt,
    PickOpt,
    QCapacitorOpt,
    QInductorOpt,
    SeedOpt,
    SeriesOpt,
    ShowBandOpt,
    SweepArg,
    ToleranceCapacitorOpt,
    ToleranceInductorOpt,
    ToleranceOpt,
    TrialsOpt,
    WriteMatchedOpt,
    WriteNetworkOpt,
    parse_part_value,
    parse_percent,
    parse_range,
    parse_tolerance,
    part_q,
)

EPILOG = """Examples:

  matchtool match ant_r1.s1p --band 902MHz:928MHz

  matchtool match ant_r1.s1p --band 902MHz:928MHz --network pi --series E12

  matchtool match ant_r1.s1p --band 863MHz:870MHz --band 902MHz:928MHz

  matchtool match ant_r1.s1p --spec ism.toml --q-inductor 40 --q-capacitor 300 --tolerance-capacitor 0.05pF

  matchtool match ant_r1.s1p --at 915MHz --series exact --json

  matchtool match ant_r1.s1p --band 902MHz:928MHz --write-network net.s2p --write-matched ant_matched.s1p

  matchtool match ant_r1.s1p --band 902MHz:928MHz --network pi --parts parts_0402_kit.toml
"""


@dataclass(frozen=True)
class MatchOptions:
    """The parsed command line of ``match`` (what the core needs, in core terms)."""

    f0_hz: float | None
    bands: tuple
    show_bands: tuple
    network: str
    series: str
    q: mt.PartQ
    bounds: mt.ValueBounds
    threshold_db: float
    yield_settings: mt.YieldSettings | None
    count: int
    pick: int
    port: int
    write_network: str | None
    write_matched: str | None
    parts: str | None = None


def yield_settings(tolerance: str | None, tolerance_l: str | None, tolerance_c: str | None, trials: int,
                   seed: int) -> mt.YieldSettings | None:
    """The yield settings of ``--tolerance`` / ``--tolerance-inductor`` / ``--tolerance-capacitor``
    (percentages or absolute values), or None when no tolerance is given."""
    tol = parse_percent(tolerance, "tolerance")
    tl_rel, tl_abs = parse_tolerance(tolerance_l, "H", "tolerance_inductor")
    tc_rel, tc_abs = parse_tolerance(tolerance_c, "F", "tolerance_capacitor")
    if tol is None and tolerance_l is None and tolerance_c is None:
        return None
    small_c = mt.SMALL_C_TOLERANCE_F if tolerance_c is None else None
    return mt.YieldSettings(tl_rel if tl_rel is not None else (tol or 0.0),
                            tc_rel if tc_rel is not None else (tol or 0.0), trials, seed,
                            tolerance_l_h=tl_abs, tolerance_c_f=tc_abs, small_c_tolerance_f=small_c)


def _check_parts_options(parts: str | None, given: dict[str, object], series: str) -> None:
    """With --parts the library's parts bring their own Q, tolerance and values: refuse the options
    that would set them (one line), rather than ignore them."""
    if parts is None:
        return
    clash = [flag for flag, v in given.items() if v is not None]
    if series.strip().upper() != "E24":
        clash.insert(0, "--series")
    if clash:
        raise UsageError(f"{', '.join(clash)} cannot be used with --parts",
                         expected="the library's parts with their own values, Q, self-resonance and tolerance")


def _targets(at: str | None, band: list[str] | None, spec: str | None, port: int, threshold_db: float):
    """(f0_hz, bands, port) from --at, --band (repeatable) or --spec."""
    given = sum(x is not None and x != [] for x in (at, band, spec))
    if given != 1:
        raise UsageError("give exactly one of --at FREQ, --band LOW:HIGH (repeatable) or --spec FILE")
    if at is not None:
        return parse_frequency(at), (), port
    if band:
        return None, tuple(parse_band(b) + (threshold_db,) for b in band), port
    from ..spec import load_spec

    s = load_spec(spec)
    if not s.bands:
        raise UsageError("the spec has no [[band]] to match", path=spec)
    return None, tuple(s.bands), (s.port if port == 1 else port)


def _check_outputs(o: MatchOptions, sweep: str, force: bool) -> None:
    if o.write_network and o.write_matched and Path(o.write_network).resolve() == Path(o.write_matched).resolve():
        raise UsageError("--write-network and --write-matched name the same file", path=o.write_network,
                         expected="two different file names")
    for path in (o.write_network, o.write_matched):
        if path is not None:
            check_output(path, force)
            if same_file(path, sweep):
                raise UsageError("the output would overwrite the input sweep", path=path,
                                 expected="an output file name that is not the input")
    if o.write_network is not None and not o.write_network.lower().endswith(".s2p"):
        raise UsageError("needs a .s2p file name (the network is a 2-port)", parameter="write_network",
                         value=o.write_network, expected="a file name ending in .s2p, e.g. net.s2p")
    if o.write_matched is not None and not o.write_matched.lower().endswith(".s1p"):
        raise UsageError("needs a .s1p file name (the matched antenna is a 1-port)", parameter="write_matched",
                         value=o.write_matched, expected="a file name ending in .s1p, e.g. ant_matched.s1p")


def _write(r: mt.MatchResult, o: MatchOptions, sw, force: bool) -> None:
    if not 1 <= o.pick <= len(r.candidates):
        raise UsageError(f"no network of that rank ({len(r.candidates)} listed)", parameter="pick", value=o.pick,
                         expected=f"a rank from 1 to {len(r.candidates)}")
    chosen = r.candidates[o.pick - 1]
    desc = "; ".join(f"{e.connection} {e.kind} {part_value_text(e, 6)}" + (f" ({e.label})" if e.label else "")
                     for e in chosen.elements) or "no parts"
    notes = [f"matchtool match network for {sw.name} (radio side first): {desc}"]
    if r.parts_library is not None:
        lib = r.parts_library
        notes.append(f"parts from library {lib.name or lib.path!r} ({lib.path}), as measured or modelled there")
    else:
        notes.append(f"part Q: L {fmt(o.q.inductor, 1)}, C {fmt(o.q.capacitor, 1)}")
    f = chosen.f_covered_hz
    items = []
    if o.write_network:
        s = chosen.network_2port().s
        items.append((o.write_network, touchstone_text(f, s, r.z0_ohm,
                                                       notes + ["port 1 = radio side, port 2 = antenna side"])))
    if o.write_matched:
        g = chosen.matched_network().s[:, 0, 0]
        items.append((o.write_matched, touchstone_text(f, g, r.z0_ohm,
                                                       notes + [f"antenna {sw.name} seen through the network"])))
    atomic_write_many(items, force)


def register(app: typer.Typer) -> None:
    @app.command("match", epilog=EPILOG)
    def match_cmd(
        sweep: SweepArg,
        at: AtOpt = None,
        band: BandsOpt = None,
        spec: MatchSpecOpt = None,
        show_band: ShowBandOpt = None,
        network: NetworkOpt = "l",
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
        pick: MatchPickOpt = 1,
        write_network: WriteNetworkOpt = None,
        write_matched: WriteMatchedOpt = None,
        parts: PartsOpt = None,
        port: PortOpt = 1,
        z0: Z0Opt = None,
        min_return_loss: MinRLOpt = None,
        max_vswr: MaxVswrOpt = None,
        max_s11_db: MaxS11Opt = None,
        force: ForceOpt = False,
        json_out: JsonOpt = False,
    ) -> int:
        """Matching networks (two-part L, or three-pad pi / tee with any positions empty) for a
        frequency or one or more bands: the best standard-value networks, evaluated on the sweep."""
        thr = threshold_from_options(min_return_loss, max_vswr, max_s11_db)
        _check_parts_options(parts, {"--q-inductor": q_inductor, "--q-capacitor": q_capacitor,
                                     "--tolerance": tolerance, "--tolerance-inductor": tolerance_l,
                                     "--tolerance-capacitor": tolerance_c, "--c-range": c_range,
                                     "--l-range": l_range}, series)
        f0, bands, port_used = _targets(at, band, spec, port, thr)
        c_lo, c_hi = parse_range(c_range, "F", "c_range_f", (0.1e-12, 100e-9))
        l_lo, l_hi = parse_range(l_range, "H", "l_range_h", (0.5e-9, 10e-6))
        o = MatchOptions(
            f0, bands, tuple(parse_band(b) for b in show_band or ()), network.strip().lower(), series,
            mt.PartQ(part_q(q_inductor, "q_inductor"), part_q(q_capacitor, "q_capacitor")),
            mt.ValueBounds(c_lo, c_hi, l_lo, l_hi), thr, yield_settings(tolerance, tolerance_l, tolerance_c, trials, seed),
            count, pick, port_used, write_network, write_matched, parts)
        _check_outputs(o, sweep, force)
        library = None
        ys = o.yield_settings
        if o.parts is not None:
            from ..parts import load_library

            library = load_library(o.parts)
            ys = mt.YieldSettings(trials=trials, seed=seed)  # each part within its own tolerance
        sw = load(sweep, port=o.port, z0_ohm=z0)
        r = mt.propose(sw, f0_hz=o.f0_hz, bands=o.bands, report_bands=o.show_bands, network=o.network,
                       series=o.series, q=o.q, bounds=o.bounds, threshold_db=o.threshold_db,
                       tolerance=ys, max_candidates=o.count, parts=library)
        if o.write_network or o.write_matched:
            _write(r, o, sw, force)
        if json_out:
            emit_json(match_doc(r))
        else:
            render(r)
            warn(r.warnings)
        return 0

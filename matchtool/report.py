"""The report's content, computed before any HTML is built: every input hashed, each sweep's
summary, the comparison (with spec verdicts), a proposed match and a link budget.

Entry point: :func:`build_report` returns a frozen :class:`ReportContext`; ``render/report/``
only formats it. Other capabilities add their results under ``extras`` (a name -> result
mapping) and a section in ``render/report`` that reads them.
"""

from __future__ import annotations

import hashlib
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from .budget import BudgetResult
from .compare import BandOfInterest, Comparison, revisions, spec_band_limits
from .errors import InputError, UsageError
from .proposal import MatchRequest, ProposedMatch, propose
from .summary import SweepSummary, summarize
from .sweep import Sweep


@dataclass(frozen=True)
class InputFile:
    """An input file as read for the report: path, size in bytes and SHA-256 (hex)."""

    path: str
    size_bytes: int
    sha256: str


@dataclass(frozen=True)
class ReportContext:
    """Everything the report's sections show, computed by the core (frequencies Hz, losses dB).

    ``match_index`` is the position in ``sweeps`` of the sweep the match was designed for;
    ``budget_path`` the budget file. ``extras`` holds results of further capabilities by name."""

    sweeps: tuple[Sweep, ...]
    summaries: tuple[SweepSummary, ...]
    comparison: Comparison
    threshold_return_loss_db: float
    bands: tuple[BandOfInterest, ...]
    """The bands of interest of the comparison (the caller's, then the spec's without limits)."""
    mask_bands: tuple[BandOfInterest, ...]
    """The bands to shade in pictures, with their limits (the caller's, then the spec's)."""
    kinds: tuple[str, ...]
    inputs: tuple[InputFile, ...]
    generated: datetime
    port: int = 1
    z0_ohm: float | None = None
    spec_path: str | None = None
    match: ProposedMatch | None = None
    match_index: int = 0
    match_request: MatchRequest | None = None
    budget: BudgetResult | None = None
    budget_path: str | None = None
    extras: Mapping[str, Any] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    @property
    def failed(self) -> bool:
        """A spec requirement failed, or the budget misses its required margin."""
        return bool(self.comparison.spec_failed or (self.budget is not None and not self.budget.passed))

    @property
    def judged(self) -> bool:
        """Whether anything was judged (a spec or a budget was given)."""
        return self.spec_path is not None or self.budget is not None


def hash_file(path: str) -> InputFile:
    """SHA-256 and size of a file's bytes (read in chunks)."""
    digest = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as fh:
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                digest.update(chunk)
                size += len(chunk)
    except OSError as exc:
        raise InputError(f"cannot read: {exc.strerror or exc}", path=path) from exc
    return InputFile(str(path), size, digest.hexdigest())


def report_time() -> datetime:
    """Now (UTC), or the reproducible-build time SOURCE_DATE_EPOCH when that is set."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch:
        try:
            return datetime.fromtimestamp(int(epoch), UTC)
        except (ValueError, OverflowError, OSError):
            raise UsageError(f"SOURCE_DATE_EPOCH={epoch!r}", expected="whole seconds since 1970") from None
    return datetime.now(UTC).replace(microsecond=0)


def budget_inputs(budget_path: str):
    """The budget file read and validated, and the sweeps it names (as ``budget`` resolves them)."""
    from .budget import read_budget_file

    inp = read_budget_file(budget_path)
    named = []
    for side in (inp.tx, inp.rx):
        if side.sweep_path is not None:
            sp = Path(side.sweep_path)
            named.append(str(sp if sp.is_absolute() else Path(inp.path).parent / sp))
    return inp, named


def build_report(sweeps: Sequence[Sweep], threshold_return_loss_db: float = 10.0,
                 bands: Sequence[BandOfInterest] = (), spec=None, kinds: Sequence[str] = ("return-loss",),
                 match_request: MatchRequest | None = None, match_index: int = 0, budget_path: str | None = None,
                 port: int = 1, z0_ohm: float | None = None, min_band_width_hz: float | None = None,
                 extras: Mapping[str, Any] | None = None, coupling: bool = True,
                 locate: Mapping[str, Any] | None = None, qfactor: Mapping[str, Any] | None = None,
                 history: Mapping[str, Any] | None = None) -> ReportContext:
    """Compute everything a report shows. ``sweeps`` are loaded (the first is the baseline);
    ``match_index`` chooses which one the match is designed for; ``budget_path`` a budget TOML;
    ``min_band_width_hz`` the narrowest threshold band that counts (summaries and comparison).

    Further capabilities land in ``extras`` (each a tuple with one result per sweep, in order):
    ``extras["coupling"]`` the :func:`matchtool.coupling.analyze_coupling` result of every
    multi-port sweep (when ``coupling``); ``extras["locate"]`` :func:`matchtool.locate.analyze` of
    every sweep with the keyword arguments ``locate`` (``velocity_factor``, ``max_distance_m``...);
    ``extras["qfactor"]`` :func:`matchtool.antenna.qfactor` of every sweep with ``qfactor``
    (``radius_m``, ``capped``: a path, one sweep only); ``extras["history"]`` the
    :func:`matchtool.history.history` result (``series=True``) for ``history`` (``stores``, ``lot``).

    Every input (sweeps, spec, golden unit, budget and the sweeps it names, a capped sweep) is
    hashed once. A file that cannot be read raises before anything is computed."""
    from .budget import evaluate

    if not sweeps:
        raise UsageError("nothing to report", expected="at least one sweep")
    if not 0 <= match_index < len(sweeps):
        raise UsageError("is not one of the sweeps", parameter="match_index", value=match_index)
    names = [s.path for s in sweeps]
    if spec is not None:
        names.append(spec.path)
        if spec.golden is not None:
            names.append(spec.golden.path)
    budget_in = None
    if budget_path is not None:
        budget_in, named = budget_inputs(budget_path)
        names += [budget_path, *named]
    capped = None if qfactor is None else qfactor.get("capped")
    if capped is not None:
        if len(sweeps) != 1:
            raise UsageError(f"a capped sweep belongs to one antenna, {len(sweeps)} sweeps given",
                             parameter="capped", expected="one SWEEP with a capped sweep")
        names.append(str(capped))
    resolved = [str(Path(p).resolve()) for p in names]
    inputs = tuple(hash_file(p) for k, p in enumerate(names) if resolved[k] not in resolved[:k])
    pm = None if match_request is None else propose(sweeps[match_index], match_request, threshold_return_loss_db)
    link = None if budget_in is None else evaluate(budget_in)
    c = revisions(sweeps, threshold_return_loss_db, bands, spec=spec, min_band_width_hz=min_band_width_hz)
    more = dict(extras or {})
    more.update(_capabilities(sweeps, threshold_return_loss_db, coupling, locate, qfactor, history, spec))
    warnings = list(c.warnings)
    found = [pm.warnings if pm else (), link.warnings if link else ()]
    for value in more.values():
        found += [getattr(r, "warnings", ()) for r in (value if isinstance(value, tuple) else (value,))]
    for extra in found:
        warnings.extend(w for w in extra if w not in warnings)
    return ReportContext(
        sweeps=tuple(sweeps), summaries=tuple(summarize(s, threshold_return_loss_db, min_band_width_hz=min_band_width_hz)
                                                for s in sweeps), comparison=c,
        threshold_return_loss_db=float(threshold_return_loss_db), bands=c.bands,
        mask_bands=tuple(bands) + (() if spec is None else spec_band_limits(spec, bands)), kinds=tuple(kinds), inputs=inputs,
        generated=report_time(), port=port, z0_ohm=z0_ohm, spec_path=None if spec is None else spec.path,
        match=pm, match_index=match_index, match_request=match_request, budget=link, budget_path=budget_path,
        extras=more, warnings=tuple(warnings))


def _capabilities(sweeps: Sequence[Sweep], threshold_return_loss_db: float, coupling: bool,
                  locate: Mapping[str, Any] | None, qfactor: Mapping[str, Any] | None,
                  history: Mapping[str, Any] | None, spec=None) -> dict[str, Any]:
    """The results of the further capabilities a report shows (see :func:`build_report`)."""
    out: dict[str, Any] = {}
    multi = [s for s in sweeps if s.nports > 1]
    if coupling and multi:
        from .coupling import analyze_coupling

        bands: tuple[tuple[float, float], ...] = ()
        if spec is not None:
            # the bands the spec judges coupling (or, without pair tables, its reflection bands), so the
            # section's worst values are the ones the verdict speaks of, not the whole sweep's
            pair_reqs = (*spec.isolations, *spec.correlations) or spec.bands
            bands = tuple(dict.fromkeys((float(r.f_low_hz), float(r.f_high_hz)) for r in pair_reqs))
        out["coupling"] = tuple(analyze_coupling(s, bands=bands) for s in multi)
        if spec is not None and (spec.isolations or spec.correlations):
            out["coupling_masks"] = spec
    if locate is not None:
        from .locate import analyze

        out["locate"] = tuple(analyze(s, **dict(locate)) for s in sweeps)
    if qfactor is not None:
        from .antenna import qfactor as q_of

        out["qfactor"] = tuple(q_of(s, threshold_return_loss_db=threshold_return_loss_db, **dict(qfactor))
                               for s in sweeps)
    if history is not None:
        from .history import history as lots

        out["history"] = lots(**{"series": True, **dict(history)})
    return out

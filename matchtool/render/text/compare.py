"""Terminal view of ``compare``: the revisions, every threshold band, the bands of interest and
the spec verdicts, each table fitting the terminal (stacked below the width it needs)."""

from __future__ import annotations

from pathlib import Path

from ...compare import Comparison
from ..words import (
    band_verdict_sentence,
    fixed,
    margin,
    mhz,
    requirement_cells,
    requirement_verdict_sentence,
    spec_verdict_line,
)
from . import console
from .tables import say, show_table


def display_names(paths: list[str]) -> list[str]:
    """File names for a table: the base name when that is unambiguous, else the path."""
    base = [Path(p).name for p in paths]
    return base if len(set(base)) == len(base) else list(paths)


def _signed(x: float | None, scale: float, digits: int) -> str:
    return "n/a" if x is None else f"{x / scale + 0.0:+.{digits}f}"


def render(c: Comparison, con=None) -> None:
    """Terminal view of a Comparison (frequencies in MHz, losses in positive dB): the revisions,
    their threshold bands, a table per band of interest given by the caller, then the spec."""
    con = con or console()
    thr = c.threshold_return_loss_db
    names = display_names([r.file for r in c.rows])
    by_path = dict(zip([r.file for r in c.rows], names, strict=True))
    rows = []
    for name, r in zip(names, c.rows, strict=True):
        rows.append([name + (" (base)" if r.is_baseline else ""), f"{r.best_f_hz / 1e6:.3f}",
                     fixed(r.best_return_loss_db), _signed(r.delta_best_f_hz, 1e6, 3),
                     str(len(r.threshold_bands))])
    show_table(con, f"Revisions against {names[0]} (d = this minus the baseline)",
               ["file", "best match\nMHz", "return\nloss dB", "d best\nMHz", "bands"], rows)
    rows = []
    for name, r in zip(names, c.rows, strict=True):
        if not r.threshold_bands:
            rows.append([name, "none", "n/a", "n/a", "misses the threshold"])
        for t in r.threshold_bands:
            b = t.band
            notes = [x for x, on in (("best match", t.holds_best), ("runs past the start", b.clipped_low),
                                     ("runs past the stop", b.clipped_high)) if on]
            if t.baseline_band is None and not r.is_baseline:
                notes.append("new against the baseline")
            width = ("> " if b.clipped_low or b.clipped_high else "") + f"{b.bandwidth_hz / 1e6:.3f}"
            rows.append([name, f"{b.f_low_hz / 1e6:.3f}-{b.f_high_hz / 1e6:.3f}", width,
                         _signed(t.delta_bandwidth_hz, 1e6, 3), ", ".join(notes) or "-"])
    show_table(con, f"Threshold bands: return loss >= {thr:.2f} dB (S11 <= {-thr:.2f} dB), every band of each revision",
               ["file", "band MHz", "width\nMHz", "d width\nMHz", "note"], rows, [False, False, True, True, False])
    for name, r in zip(names, c.rows, strict=True):
        if r.noise_crossings:
            spans = ", ".join(f"{b.f_low_hz / 1e6:.3f}-{b.f_high_hz / 1e6:.3f} MHz ({b.bandwidth_hz / 1e3:.1f} kHz wide)"
                              for b in r.noise_crossings)
            say(con, f"{name}: noise-level crossings (too narrow to be bands, see --min-band-width): {spans}")
    shown = c.verdicts[:c.adhoc_bands]
    for k, v in enumerate(shown):
        lim = "" if v.limit_return_loss_db is None else f", limit return loss {v.limit_return_loss_db:.2f} dB"
        rows = []
        for name, r in zip(names, c.rows, strict=True):
            w, d = r.bands[k], r.delta_worst_return_loss_db[k]
            if not w.covered:
                rows.append([name, "n/a", "n/a", "n/a", "n/a", "n/a",
                             "not covered" if w.passed is None else "FAIL: not covered"])
                continue
            verdict = "-" if w.passed is None else ("pass" if w.passed else "FAIL")
            rows.append([name, fixed(w.worst_return_loss_db), _signed(d, 1.0, 2), f"{w.worst_f_hz / 1e6:.3f}",
                         fixed(w.worst_mismatch_loss_db, 3), margin(w.margin_db, 2, "", w.passed), verdict])
        show_table(con, f"Band {v.name}: {mhz(v.f_low_hz)} to {mhz(v.f_high_hz)} MHz{lim}",
                   ["file", "worst RL\ndB", "d RL\ndB", "at\nMHz", "mismatch\nloss dB", "margin\ndB", "verdict"],
                   rows, [False, True, True, True, True, True, False])
    for v in shown:
        say(con, band_verdict_sentence(v, by_path))
    if c.spec_path is not None:
        render_spec(c, names, con)


def render_spec(c: Comparison, names: list[str], con=None) -> None:
    """The spec verdicts of every revision, one line per requirement, then the verdict line."""
    con = con or console()
    rows, short = [], []
    for name, r in zip(names, c.rows, strict=True):
        for q, d in zip(r.spec.requirements, r.delta_margin, strict=True):
            cells = requirement_cells(q)
            dm = "n/a" if d is None else (f"{d / 1e6 + 0.0:+.3f} MHz" if q.key == "resonance" else
                                          f"{d + 0.0:+.3f} ECC" if q.margin_db is None and q.margin_ecc is not None
                                          else f"{d + 0.0:+.2f} dB")
            rows.append([name, q.name, cells[0], *cells[1:], dm])
            worst, lim = cells[1], cells[3]
            unit = q.unit if q.key != "resonance" and q.worst is not None else ""
            if unit and worst.endswith(unit) and lim.endswith(unit):  # one unit for the pair
                pair = f"{worst[:-len(unit)].strip()} / {lim}"
            else:
                pair = f"{worst} / {lim}"
            short.append([name, q.name, cells[0], pair.replace("dB return loss", "dB RL"), cells[4]])
    show_table(con, f"Spec {c.spec_path} (as 'matchtool check'; margin positive = passing, in dB of return loss "
                    "for the reflection limits)",
               ["file", "requirement", "verdict", "worst", "at", "limit", "margin", "d margin"], rows,
               [False, False, False, True, True, True, True, True],
               narrow=(["file", "requirement", "verdict", "worst / limit\n(RL: return loss)", "margin"], short,
                       [False, False, False, True, True]))
    by_path = dict(zip([r.file for r in c.rows], names, strict=True))
    for v in c.spec_verdicts:
        say(con, requirement_verdict_sentence(v, by_path))
    line = spec_verdict_line(c, by_path)
    colour = "red" if c.spec_failed else "green"
    head, _, rest = line.partition(" - ")
    from rich.text import Text

    word = head.split(": ", 1)[1]
    con.print(Text("Verdict: ") + Text(word, style=colour) + Text(" - " + rest), soft_wrap=True)

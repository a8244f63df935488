"""``matchtool history --store URL``: lot history from the results store written by ``check
--store``: yields, the spread of each requirement, process capability (Cpk), trends."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from ..errors import UsageError
from ..history import history
from ..outputs import atomic_write, check_output
from ..render.json_contract import emit_json, history_doc
from ..render.text import warn
from .options import ForceOpt, JsonOpt

EPILOG = """Examples:

  matchtool history --store results.db

  matchtool history --store results.db --lot lot12 --json

  matchtool history --store postgresql://qa@dbhost/results --since 2026-11-01 --spec antenna_spec

  matchtool history --store shard1.db --store shard2.db --out trend.png

Cpk is one-sided for a one-sided limit: (mean - LSL) / (3 s) for a minimum return loss,
(USL - mean) / (3 s) for a maximum VSWR, S11, mismatch loss or deviation; two-sided for the
resonance window. It is not given for fewer than 5 units. It describes the units measured; it
does not certify a process.
"""

OUT_FORMATS = {".png": "png", ".svg": "svg"}


def register(app: typer.Typer) -> None:
    @app.command("history", epilog=EPILOG)
    def history_cmd(
        store: Annotated[list[str], typer.Option(
            "--store", metavar="URL", help="Results store: a file path, sqlite:///path or postgresql://user@host/db. "
            "Repeat to add stores together (shards written to separate stores).", show_default=False)],
        lot: Annotated[str | None, typer.Option("--lot", metavar="NAME", help="Only this lot.")] = None,
        since: Annotated[str | None, typer.Option(
            "--since", metavar="DATE", help="Only units checked at or after this date (YYYY-MM-DD, UTC).")] = None,
        spec: Annotated[str | None, typer.Option(
            "--spec", metavar="NAME", help="Only units checked against the spec of this name (its 'name' key, or "
            "the spec file's name without .toml).")] = None,
        out: Annotated[str | None, typer.Option(
            "--out", metavar="FILE", help="Draw the trend of each requirement's worst value per unit with its limit "
            "and lot boundaries, and a histogram per lot (.png or .svg).")] = None,
        json_out: JsonOpt = False,
        force: ForceOpt = False,
    ) -> int:
        """Lot history from a results store: units, yield, mean and spread of each requirement, Cpk, worst units."""
        fmt = None
        if out:
            fmt = OUT_FORMATS.get(Path(out).suffix.lower())
            if fmt is None:
                raise UsageError("--out needs a .png or .svg file name", path=out, expected="e.g. trend.png")
            check_output(out, force)
        result = history(store, lot=lot, since=since, spec=spec, series=bool(out))
        if out:
            import io

            from ..render.plot_history import draw_trend

            buf = io.BytesIO()
            draw_trend(result, buf, fmt)
            atomic_write(out, buf.getvalue(), force)
        if json_out:
            emit_json(history_doc(result))
        else:
            from ..render.text.history import render

            render(result)
            if out:
                print(f"wrote {out}")
            warn(result.warnings)
        return 0

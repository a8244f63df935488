"""Command-line entry point: the typer app, and one handler that turns expected failures into a
single ``error: ...`` line on stderr with exit status 2 (``--debug`` anywhere shows the traceback).
"""

from __future__ import annotations

import importlib
import os
import sys
import warnings
from typing import Annotated

import typer

from .errors import ExitStatus, MatchtoolError

try:  # recent typer releases carry their own copy of click
    from typer._click import exceptions as _click_exc
except ImportError:  # pragma: no cover - older typer uses click itself
    from click import exceptions as _click_exc

HELP = """Antenna match from measured S11 sweeps (Touchstone files).

Return loss is positive dB (S11 in dB is its negative). Exit status: 0 ran and passed,
1 a spec requirement failed, 2 could not run. Add --debug anywhere for a traceback.

The tool computes; it does not certify. Transmitting into a badly matched antenna can damage an
amplifier, and EIRP, band and RF-exposure limits are set by local regulation.
"""

# Each command lives in matchtool/commands/<name>.py and exposes register(app).
COMMANDS = ("inspect", "check", "compare", "match", "feedline", "budget", "plot", "report",
            "coupling", "locate", "qfactor", "history")


# one line each for 'matchtool --help' (written whole, so the list is never cut to "...")
SHORT_HELP = {
    "inspect": "Best match, threshold bands and values at frequencies of a sweep (every port of an N-port).",
    "check": "Pass/fail of units or a whole lot against a spec; JSON, CSV, JUnit; results store.",
    "compare": "Revisions side by side, with deltas against a baseline.",
    "match": "Matching networks (L, pi, tee) of standard values or library parts, checked on the sweep.",
    "feedline": "Move the reference plane along a cable: what the cable hides or adds.",
    "budget": "Friis link budget with the measured mismatch: margin and range.",
    "plot": "Pictures: return loss, VSWR, Smith chart, impedance, distance, isolation, ECC.",
    "report": "One self-contained HTML page for the build record.",
    "coupling": "Isolation, envelope correlation (ECC) and active reflection (TARC) of a multi-port device.",
    "locate": "Distance to fault: reflections along the feed (time domain), and gating.",
    "qfactor": "Q, bandwidth potential, small-antenna bound and cap-method efficiency of an antenna.",
    "history": "Lot history from the results store: yields, spread, process capability, trends.",
}


def _show_version(value: bool) -> None:
    if value:
        from . import __version__

        print(f"matchtool {__version__}")
        raise typer.Exit(0)


def _root(
    version: Annotated[bool, typer.Option("--version", callback=_show_version, is_eager=True,
                                          help="Print the version and exit.")] = False,
) -> None:
    """Antenna match from measured S11 sweeps."""


def build_app(only: str | None = None) -> typer.Typer:
    """The typer app with every command, or with just ``only`` (start-up is then cheaper: a
    command's module, and what it imports, load only when that command runs)."""
    app = typer.Typer(
        name="matchtool",
        help=HELP,
        add_completion=False,
        no_args_is_help=True,
        pretty_exceptions_enable=False,
        rich_markup_mode=None,
        context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100},
    )
    app.callback()(_root)
    for name in (only,) if only in COMMANDS else COMMANDS:
        importlib.import_module(f"matchtool.commands.{name}").register(app)
    for info in app.registered_commands:
        if info.name in SHORT_HELP and not info.short_help:
            info.short_help = SHORT_HELP[info.name]
    return app


def _command_named(args: list[str]) -> str | None:
    """The command word of ``args`` (the first argument that is not an option), if any."""
    for a in args:
        if not a.startswith("-"):
            return a
    return None


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def _input_limit_from_env() -> int | None:
    """The input limit in bytes from ``MATCHTOOL_MAX_INPUT_MB`` (None when unset); the core never
    reads the environment, the CLI passes this to :func:`matchtool.inputs.set_default_max_bytes`."""
    import math

    from .errors import UsageError

    env = os.environ.get("MATCHTOOL_MAX_INPUT_MB")
    if env is None or not env.strip():
        return None
    try:
        mb = float(env)
    except ValueError:
        mb = math.nan
    if not (math.isfinite(mb) and mb > 0):
        shown = repr(env if len(env) <= 40 else env[:40] + "...")
        raise UsageError(f"MATCHTOOL_MAX_INPUT_MB={shown} is not a positive number of megabytes",
                         expected="e.g. MATCHTOOL_MAX_INPUT_MB=2000")
    return int(mb * 1024 * 1024)


def main(argv: list[str] | None = None) -> int:
    """Run the CLI with ``argv`` (default: ``sys.argv[1:]``) and return the exit status."""
    from . import inputs

    before = inputs.default_max_bytes()
    try:
        return _main(list(sys.argv[1:] if argv is None else argv))
    finally:  # the limit from the environment holds for this run only (in-process callers, tests)
        inputs.set_default_max_bytes(before)


def _main(args: list[str]) -> int:
    debug = "--debug" in args
    args = [a for a in args if a != "--debug"]
    from . import inputs

    try:
        inputs.set_default_max_bytes(_input_limit_from_env())
        app = build_app(_command_named(args))
        try:
            with warnings.catch_warnings():
                # numpy's floating-point RuntimeWarnings (overflow for absurd but finite options such as
                # --delay 1e300s) never reach stderr as loose text: results carry inf / NaN, which the
                # tables show as 'inf' / 'n/a' and the JSON writer turns into null with a named warning
                warnings.simplefilter("ignore", RuntimeWarning)
                rv = int(app(args=args, prog_name="matchtool", standalone_mode=False) or 0)
        except SystemExit as exc:  # typer handles a broken pipe itself with sys.exit(1)
            if isinstance(exc.__context__, BrokenPipeError):
                raise exc.__context__ from None
            raise
        if rv == ExitStatus.INTERRUPTED:  # typer turns Ctrl-C inside a command into a plain 130
            print("error: interrupted; no output file was left half-written", file=sys.stderr)
        return rv
    except MatchtoolError as exc:
        if debug:
            raise
        from .commands.options import PARAMETER_FLAGS

        print(f"error: {exc.message_for(PARAMETER_FLAGS)}", file=sys.stderr)
        return ExitStatus.ERROR
    except (KeyboardInterrupt, typer.Abort):
        if debug:
            raise
        print("error: interrupted; no output file was left half-written", file=sys.stderr)
        return ExitStatus.INTERRUPTED
    except _click_exc.ClickException as exc:
        if type(exc).__name__ == "NoArgsIsHelpError":  # bare 'matchtool' or 'matchtool CMD': show help
            print(exc.format_message())
            return ExitStatus.OK
        if debug:
            raise
        hint = ""
        if isinstance(exc, _click_exc.UsageError) and exc.ctx is not None:
            hint = f" (see '{exc.ctx.command_path} --help')"
        print(f"error: {_one_line(exc.format_message())}{hint}", file=sys.stderr)
        return ExitStatus.ERROR
    except typer.Exit as exc:
        if exc.exit_code == ExitStatus.INTERRUPTED:  # some typer releases turn Ctrl-C into Exit(130)
            print("error: interrupted; no output file was left half-written", file=sys.stderr)
        return int(exc.exit_code)
    except BrokenPipeError:  # the reader of stdout went away (e.g. '| head'): stop quietly, say why
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())  # so the interpreter's final flush cannot fail again
        except (OSError, ValueError):
            pass
        print("error: stdout was closed before the output was complete (broken pipe)", file=sys.stderr)
        return ExitStatus.ERROR
    except OSError as exc:
        if debug:
            raise
        where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
        print(f"error: {where}{_one_line(exc.strerror or exc)}", file=sys.stderr)
        return ExitStatus.ERROR
    except Exception as exc:  # a bug: still one line, but say how to get the traceback
        if debug:
            raise
        print(f"error: internal error ({type(exc).__name__}: {_one_line(exc)}); "
              "rerun with --debug and report the traceback", file=sys.stderr)
        return ExitStatus.ERROR


def run() -> None:
    """Console-script entry point."""
    sys.exit(main())

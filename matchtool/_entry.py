"""Console-script entry point, kept free of heavy imports so that Ctrl-C during start-up (while
numpy, scikit-rf and typer load) still ends with one line and exit status 130."""

from __future__ import annotations

import sys


def run() -> None:
    """Start the CLI; exit with its status."""
    try:
        from .cli import main
    except KeyboardInterrupt:
        sys.stderr.write("error: interrupted during start-up; nothing was written\n")
        sys.exit(130)
    sys.exit(main())

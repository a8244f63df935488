"""``python -m matchtool``."""

from matchtool.cli import run

run()

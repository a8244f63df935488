"""``python -m matchtool``."""

from matchtool._entry import run

run()

"""Writing output files safely: never half-written, never replaced without ``force``.

Every writer in matchtool goes through :func:`atomic_write`: the content goes to a temporary file
in the target directory, is flushed to disk, and is then renamed over the target in one step. A
failure (disk full, permission, Ctrl-C) leaves any old file untouched and removes the temporary.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterable
from pathlib import Path

from .errors import OutputError


def check_output(path: str | Path, force: bool = False) -> Path:
    """Check before any work is done that ``path`` may be written; return it as a Path.

    Raises OutputError when the file exists and ``force`` is false, when the path is a directory,
    or when its directory does not exist.
    """
    p = Path(path)
    if p.is_dir():
        raise OutputError("is a directory", path=p, expected="a file name for the output")
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise OutputError(f"directory {str(parent)!r} does not exist", path=p)
    if p.exists() and not force:
        raise OutputError("exists already; not replaced", path=p, expected="--force to replace it")
    return p


def atomic_write(path: str | Path, data: str | bytes, force: bool = False) -> Path:
    """Write ``data`` (text as UTF-8, or bytes) to ``path`` atomically; return the path.

    The old file, if any, stays intact unless the whole new content was written.
    """
    p = check_output(path, force)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    parent = p.parent if str(p.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(dir=parent, prefix=f".{p.name}.", suffix=".part")
    except OSError as exc:
        raise OutputError(f"cannot write: {exc.strerror or exc}", path=p) from exc
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        if p.exists() and not force:  # appeared while we were writing
            raise OutputError("exists already; not replaced", path=p, expected="--force to replace it")
        os.replace(tmp, p)
    except OutputError:
        _remove(tmp)
        raise
    except BaseException as exc:
        _remove(tmp)
        if isinstance(exc, OSError):
            raise OutputError(f"cannot write: {exc.strerror or exc}", path=p) from exc
        raise
    return p


def atomic_write_many(items: Iterable[tuple[str | Path, str | bytes]], force: bool = False) -> list[Path]:
    """Write several outputs as one transaction: all are checked first, then each is written
    atomically. A refusal found in the check writes nothing at all."""
    items = list(items)
    for path, _ in items:
        check_output(path, force)
    return [atomic_write(path, data, force) for path, data in items]


def _remove(tmp: str) -> None:
    with contextlib.suppress(OSError):
        os.unlink(tmp)

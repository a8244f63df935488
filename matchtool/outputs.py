"""Writing output files safely: never half-written, never replaced without ``force``.

Every writer in matchtool goes through :func:`atomic_write`: the content goes to a temporary file
in the target directory, is flushed to disk, and is then renamed over the target in one step. A
failure (disk full, permission, Ctrl-C) leaves any old file untouched and removes the temporary.
"""

from __future__ import annotations

import contextlib
import os
import stat
import tempfile
from collections.abc import Iterable
from pathlib import Path

from .errors import OutputError


def check_output(path: str | Path, force: bool = False) -> Path:
    """Check before any work is done that ``path`` may be written; return it as a Path.

    Raises OutputError when the file exists and ``force`` is false, when the path is a directory,
    or when its directory does not exist.
    """
    if not str(path):
        raise OutputError("empty output file name", path="''", expected="a file name for the output")
    p = Path(path)
    if p.is_dir():
        raise OutputError("is a directory", path=p, expected="a file name for the output")
    try:
        mode = os.lstat(p).st_mode
    except OSError:
        mode = None
    if mode is not None and not (stat.S_ISREG(mode) or stat.S_ISLNK(mode) and p.is_file()):
        # a rename would replace a FIFO, device or socket (as root even /dev/stdout) by a file
        raise OutputError("is not a regular file (a pipe, device or socket); not replaced", path=p,
                          expected="a regular file name for the output")
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise OutputError(f"directory {str(parent)!r} does not exist", path=p)
    if p.exists() and not force:
        raise OutputError("exists already; not replaced", path=p, expected="--force to replace it")
    return p


def atomic_write(path: str | Path, data: str | bytes, force: bool = False) -> Path:
    """Write ``data`` (text as UTF-8, or bytes) to ``path`` atomically; return the path.

    The old file, if any, stays intact unless the whole new content was written. Without
    ``force`` the final step is a hard link, which fails if the target appeared meanwhile, so a
    file is never replaced without ``force`` even by a race.
    """
    p = check_output(path, force)
    tmp = _stage(p, data)
    try:
        _commit(p, tmp, force)
    except BaseException:
        _remove(tmp)
        raise
    return p


def atomic_write_many(items: Iterable[tuple[str | Path, str | bytes]], force: bool = False) -> list[Path]:
    """Write several outputs as one transaction as far as the file system allows.

    All targets are checked first (a refusal writes nothing), then every content is written to
    its temporary file; only when all of them are on disk are they renamed into place. A failure
    while writing (disk full, Ctrl-C) therefore leaves every target as it was.
    """
    items = list(items)
    paths = [check_output(path, force) for path, _ in items]
    if len({os.path.abspath(p) for p in paths}) != len(paths):
        raise OutputError("the same output file is named twice", path=paths[0])
    staged: list[str] = []
    try:
        for p, (_, data) in zip(paths, items, strict=True):
            staged.append(_stage(p, data))
        for p, tmp in zip(paths, staged, strict=True):
            _commit(p, tmp, force)
    except BaseException:
        for tmp in staged:
            _remove(tmp)
        raise
    return paths


def _stage(p: Path, data: str | bytes) -> str:
    """Write ``data`` to a new temporary file beside ``p``, flushed to disk; return its name."""
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
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
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; outputs get the usual mode
    except BaseException as exc:
        _remove(tmp)
        if isinstance(exc, OSError):
            raise OutputError(f"cannot write: {exc.strerror or exc}", path=p) from exc
        raise
    return tmp


def _commit(p: Path, tmp: str, force: bool) -> None:
    """Move the staged ``tmp`` to ``p`` in one step (the temporary is gone afterwards)."""
    try:
        if force:
            os.replace(tmp, p)
            return
        try:
            os.link(tmp, p)  # fails with FileExistsError if p appeared meanwhile
        except FileExistsError:
            raise OutputError("exists already; not replaced", path=p, expected="--force to replace it") from None
        except OSError:  # no hard links here (some network or FAT file systems)
            if p.exists():
                raise OutputError("exists already; not replaced", path=p,
                                  expected="--force to replace it") from None
            os.replace(tmp, p)
            return
        _remove(tmp)
    except OSError as exc:
        if isinstance(exc, OutputError):
            raise
        raise OutputError(f"cannot write: {exc.strerror or exc}", path=p) from exc


def _umask() -> int:
    """The process umask, read without changing it (Linux /proc), else the common 022."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    return 0o022


def _remove(tmp: str) -> None:
    with contextlib.suppress(OSError):
        os.unlink(tmp)

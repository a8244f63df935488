"""A real PostgreSQL server for the store tests (no mocked database).

``.ci/run`` starts a throwaway server and exports ``MATCHTOOL_TEST_POSTGRES_URL``. Without it, the
fixture starts its own from Debian's ``postgresql`` package when ``initdb`` is found (as the
``postgres`` user when run as root: the server refuses to run as root), listening only on a unix
socket in a temporary directory, and stops it afterwards. The tests that need it are skipped with
the reason when neither works.
"""

from __future__ import annotations

import glob
import os
import shutil
import subprocess
import tempfile
import uuid

ENV = "MATCHTOOL_TEST_POSTGRES_URL"


def _bin(name: str) -> str | None:
    found = shutil.which(name)
    if found:
        return found
    cands = sorted(glob.glob(f"/usr/lib/postgresql/*/bin/{name}"))
    return cands[-1] if cands else None


class Server:
    def __init__(self) -> None:
        self.url: str | None = None
        self.reason = ""
        self._dir: str | None = None
        self._pg_ctl: str | None = None
        self._as: list[str] = []

    def start(self) -> None:
        initdb, pg_ctl = _bin("initdb"), _bin("pg_ctl")
        if not initdb or not pg_ctl:
            self.reason = f"no PostgreSQL server: {ENV} is not set and initdb/pg_ctl are not installed"
            return
        self._dir = tempfile.mkdtemp(prefix="mt-pg-")
        data, sock = os.path.join(self._dir, "data"), self._dir
        if os.geteuid() == 0:
            runuser = shutil.which("runuser")
            try:
                import pwd

                pwd.getpwnam("postgres")
            except KeyError:
                runuser = None
            if not runuser:
                self.reason = "no PostgreSQL server: running as root without a 'postgres' user to run it as"
                return
            shutil.chown(self._dir, "postgres")
            os.chmod(self._dir, 0o700)
            self._as = [runuser, "-u", "postgres", "--"]
        user = "postgres" if self._as else os.environ.get("USER", "postgres")
        try:
            subprocess.run([*self._as, initdb, "-D", data, "-A", "trust", "-U", user, "--no-sync"], check=True,
                           capture_output=True, timeout=120)
            subprocess.run([*self._as, pg_ctl, "-D", data, "-l", os.path.join(self._dir, "log"), "-w", "-t", "60",
                            "-o", f"-k {sock} -c listen_addresses='' -c fsync=off", "start"], check=True,
                           capture_output=True, timeout=120)
        except (subprocess.CalledProcessError, subprocess.TimeoutExpired, OSError) as exc:
            self.reason = f"no PostgreSQL server: could not start one ({type(exc).__name__})"
            return
        self._pg_ctl, self._data = pg_ctl, data
        self.url = f"postgresql://{user}@/postgres?host={sock}"

    def stop(self) -> None:
        if self._pg_ctl:
            subprocess.run([*self._as, self._pg_ctl, "-D", self._data, "-m", "fast", "-w", "stop"],
                           capture_output=True, timeout=60)
        if self._dir:
            shutil.rmtree(self._dir, ignore_errors=True)


def fresh_database(url: str) -> str:
    """Create an empty database on the server at ``url``; return its URL."""
    import psycopg
    from sqlalchemy.engine import make_url

    u = make_url(url.replace("postgresql://", "postgresql+psycopg://", 1))
    name = "mt_" + uuid.uuid4().hex[:12]
    kw = {"dbname": u.database or "postgres", "user": u.username}
    kw.update({k: v for k, v in u.query.items()})
    if u.host:
        kw["host"] = u.host
    if u.port:
        kw["port"] = u.port
    if u.password:
        kw["password"] = u.password
    with psycopg.connect(**kw, autocommit=True) as conn:
        conn.execute(f'CREATE DATABASE "{name}"')
    return u.set(database=name).render_as_string(hide_password=False).replace("postgresql+psycopg://", "postgresql://")


_SERVER: Server | None = None


def server_url() -> tuple[str | None, str]:
    """(URL of a running server, reason when there is none): the one from ``.ci/run``, else one
    started here once per test session and stopped when the session ends."""
    global _SERVER
    if os.environ.get(ENV):
        return os.environ[ENV], ""
    if _SERVER is None:
        import atexit

        _SERVER = Server()
        _SERVER.start()
        atexit.register(_SERVER.stop)
    return _SERVER.url, _SERVER.reason


def pg_database() -> str:
    """A fresh, empty database for one test; skips the test (stating why) without a server."""
    import pytest

    url, reason = server_url()
    if url is None:
        pytest.skip(reason)
    return fresh_database(url)

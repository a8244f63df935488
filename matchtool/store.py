"""The results store: every checked unit remembered, in SQLite (one file, no server) or PostgreSQL
(one server shared by several test stations), through SQLAlchemy Core.

Layout (schema version :data:`SCHEMA_VERSION`, created on first use):

- ``matchtool_schema``: one row, the schema version. A store written by a newer matchtool (a
  higher version) is refused with a clear error rather than misread.
- ``units``: one row per unit and check: ``uid`` (the key below), ``lot``, ``station``, ``file``
  (as given on the command line), ``sweep_sha256`` (of the file's bytes; null when the file could
  not be read), ``spec_name``, ``spec_sha256``, ``checked_at`` (UTC, naive), ``passed``,
  ``error``, ``best_f_hz`` and ``best_return_loss_db`` (the best-matched sample), ``tool_version``.
- ``requirements``: one row per unit and requirement, in spec order (``position``), with the
  requirement's ``name``, ``key``, ``passed``, ``limit_value`` and ``worst`` (in the key's units),
  ``worst_f_hz``, ``margin_db``, ``margin_hz``, ``relative_margin`` (see
  :func:`matchtool.batch.relative_margin`), the band or window edges ``f_low_hz``/``f_high_hz``, and
  the nullable ``port`` / ``ports`` (a JSON list) of multi-port specs. ``lot``, ``spec_name`` and
  ``checked_at`` are repeated from the unit so that the history's aggregates need no join; ``seq``
  is the unit's place in its run (the trend plot's order within one check).

Key: ``uid`` is derived from the sweep's SHA-256, the spec's SHA-256, the lot and the station (for
an unreadable file, from its path instead of its hash), so checking the same file again with the
same spec into the same lot from the same station adds nothing (``INSERT ... ON CONFLICT DO
NOTHING``). Two copies of one file with identical bytes in one lot count as one unit.

Concurrency: every write is one transaction. SQLite runs in WAL mode with a busy timeout, takes
its write lock at the start of the transaction (``BEGIN IMMEDIATE``) and retries a locked
database; PostgreSQL serialises the conflicting inserts itself. No row is lost when several
``check`` processes write at once.
"""

from __future__ import annotations

import hashlib
import json
import os
import random
import time
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import InputError, OutputError, UsageError

if TYPE_CHECKING:  # pragma: no cover
    from .batch import CheckedUnit
    from .spec import Spec

SCHEMA_VERSION = 1
BUSY_TIMEOUT_S = 30.0
WRITE_RETRIES = 8


@dataclass(frozen=True)
class StoreInfo:
    """Where a lot went: the store's URL (password hidden), lot, station, rows added and rows that
    were there already (the same sweep, spec, lot and station)."""

    url: str
    lot: str
    station: str
    added: int
    duplicates: int


# ------------------------------------------------------------------------------------------ schema

def _tables():
    from sqlalchemy import (
        Boolean,
        Column,
        DateTime,
        Float,
        Index,
        Integer,
        MetaData,
        String,
        Table,
        Text,
    )

    md = MetaData()
    schema = Table("matchtool_schema", md, Column("version", Integer, nullable=False))
    units = Table(
        "units", md,
        Column("uid", String(40), primary_key=True),
        Column("lot", String(200), nullable=False),
        Column("station", String(200), nullable=False),
        Column("file", Text, nullable=False),
        Column("sweep_sha256", String(64)),
        Column("spec_name", String(200), nullable=False),
        Column("spec_sha256", String(64), nullable=False),
        Column("checked_at", DateTime, nullable=False),
        Column("passed", Boolean, nullable=False),
        Column("error", Text),
        Column("best_f_hz", Float),
        Column("best_return_loss_db", Float),
        Column("tool_version", String(40), nullable=False),
        Index("units_lot", "lot", "checked_at"),
    )
    reqs = Table(
        "requirements", md,
        Column("uid", String(40), primary_key=True),
        Column("position", Integer, primary_key=True),
        Column("lot", String(200), nullable=False),
        Column("spec_name", String(200), nullable=False),
        Column("checked_at", DateTime, nullable=False),
        Column("seq", Integer, nullable=False),
        Column("name", String(200), nullable=False),
        Column("key", String(40), nullable=False),
        Column("passed", Boolean, nullable=False),
        Column("limit_value", Float),
        Column("worst", Float),
        Column("worst_f_hz", Float),
        Column("margin_db", Float),
        Column("margin_hz", Float),
        Column("relative_margin", Float),
        Column("f_low_hz", Float),
        Column("f_high_hz", Float),
        Column("port", Integer),
        Column("ports", String(200)),
        Index("requirements_lot", "lot", "name"),
    )
    return md, schema, units, reqs


_MD, SCHEMA, UNITS, REQUIREMENTS = (None,) * 4


def tables():
    """(metadata, schema table, units table, requirements table), built on first use (so that
    importing this module does not import SQLAlchemy)."""
    global _MD, SCHEMA, UNITS, REQUIREMENTS
    if _MD is None:
        _MD, SCHEMA, UNITS, REQUIREMENTS = _tables()
    return _MD, SCHEMA, UNITS, REQUIREMENTS


# --------------------------------------------------------------------------------------------- URLs

def normalise_url(url: str) -> str:
    """A store URL for SQLAlchemy: a bare path means an SQLite file; ``sqlite:///path`` and
    ``postgresql://user@host/db`` are taken as they are (PostgreSQL through psycopg)."""
    u = str(url).strip()
    if not u:
        raise UsageError("is empty", parameter="store", expected="a file path, sqlite:///path or postgresql://user@host/db")
    if "://" not in u:
        return "sqlite:///" + os.path.abspath(u)
    scheme = u.split("://", 1)[0].lower()
    if scheme in ("postgresql", "postgres"):
        return "postgresql+psycopg://" + u.split("://", 1)[1]
    if scheme in ("sqlite", "postgresql+psycopg"):
        return u
    raise UsageError(f"unknown kind of store {scheme!r}", parameter="store", value=shown_url(u),
                     expected="a file path, sqlite:///path or postgresql://user@host/db")


def shown_url(url: str) -> str:
    """The URL with any password replaced by ***."""
    try:
        from sqlalchemy.engine import make_url

        return make_url(url).render_as_string(hide_password=True).replace("postgresql+psycopg://", "postgresql://")
    except Exception:  # an unparseable URL: show no part of what may hold a password
        return url.split("://", 1)[0] + "://..." if "@" in url else url


def _db_reason(exc: BaseException) -> str:
    """One line from a database error: the driver's first line, without SQL or URLs."""
    orig = getattr(exc, "orig", None) or exc
    text = str(orig).strip().splitlines()[0] if str(orig).strip() else type(orig).__name__
    return " ".join(text.split())[:200]


# -------------------------------------------------------------------------------------------- store

class Store:
    """An open results store. ``Store(url)`` connects and creates or checks the schema; raises
    InputError when the store cannot be opened (or is newer than this matchtool)."""

    def __init__(self, url: str, create: bool = True) -> None:
        from sqlalchemy import create_engine, event
        from sqlalchemy.exc import SQLAlchemyError

        self.url = normalise_url(url)
        self.shown = shown_url(self.url)
        self.sqlite = self.url.startswith("sqlite")
        if self.sqlite:
            path = self.url[len("sqlite:///"):]
            if path and path != ":memory:":
                if not create and not os.path.exists(path):
                    raise InputError("no such store", path=path, expected="a store written by matchtool check --store")
                parent = os.path.dirname(path) or "."
                if not os.path.isdir(parent):
                    raise InputError(f"directory {parent!r} does not exist", path=path)
            # isolation_level=None: the driver leaves transactions to us (BEGIN IMMEDIATE below)
            self.engine = create_engine(self.url, connect_args={"timeout": BUSY_TIMEOUT_S, "isolation_level": None})

            @event.listens_for(self.engine, "connect")
            def _pragmas(dbapi_conn, _rec):  # pragma: no cover - exercised through every sqlite test
                cur = dbapi_conn.cursor()
                cur.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
                cur.execute("PRAGMA journal_mode = WAL")
                cur.execute("PRAGMA synchronous = NORMAL")
                cur.close()
        else:
            try:
                import psycopg  # noqa: F401
            except ImportError:
                raise UsageError("a PostgreSQL store needs the psycopg driver", parameter="store", value=self.shown,
                                 expected="pip install 'psycopg[binary]'") from None
            self.engine = create_engine(self.url, pool_pre_ping=False, connect_args={"connect_timeout": 10})
        try:
            self._prepare(create)
        except SQLAlchemyError as exc:
            self.engine.dispose()
            raise InputError(f"cannot open the results store ({_db_reason(exc)})", path=self.shown) from None

    def close(self) -> None:
        self.engine.dispose()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # -- transactions ----------------------------------------------------------------------------
    def _begin(self, conn) -> None:
        from sqlalchemy import text

        if self.sqlite:
            conn.exec_driver_sql("BEGIN IMMEDIATE")
        else:
            conn.execute(text("SELECT 1"))  # autobegin

    def _transaction(self, work):
        """Run ``work(conn)`` in one write transaction, retrying a locked SQLite database."""
        from sqlalchemy.exc import OperationalError

        for attempt in range(WRITE_RETRIES):
            try:
                with self.engine.connect() as conn:
                    self._begin(conn)
                    try:
                        out = work(conn)
                    except BaseException:
                        if self.sqlite:
                            conn.exec_driver_sql("ROLLBACK")
                        else:
                            conn.rollback()
                        raise
                    if self.sqlite:
                        conn.exec_driver_sql("COMMIT")
                    else:
                        conn.commit()
                    return out
            except OperationalError as exc:
                if attempt + 1 < WRITE_RETRIES and "locked" in str(exc.orig).lower():
                    time.sleep(0.05 * 2 ** attempt * (1 + random.random()))
                    continue
                raise
        raise AssertionError("unreachable")  # pragma: no cover

    def _prepare(self, create: bool) -> None:
        from sqlalchemy import inspect, select

        md, schema, units, reqs = tables()

        def work(conn):
            names = set(inspect(conn).get_table_names())
            if "matchtool_schema" not in names:
                if not create:
                    raise InputError("is not a matchtool results store (no schema table)", path=self.shown)
                if names & {"units", "requirements"}:
                    raise InputError("holds tables named units/requirements but no matchtool schema table; "
                                     "not a matchtool store", path=self.shown)
                md.create_all(conn)
                conn.execute(schema.insert().values(version=SCHEMA_VERSION))
                return SCHEMA_VERSION
            v = conn.execute(select(schema.c.version)).scalar()
            return v

        v = self._transaction(work)
        if v is None or int(v) > SCHEMA_VERSION:
            raise InputError(f"the store has schema version {v}, newer than this matchtool understands "
                             f"({SCHEMA_VERSION})", path=self.shown, expected="a newer matchtool (pip install -U matchtool)")
        self.version = int(v)

    # -- writing ---------------------------------------------------------------------------------
    def add_lot(self, units: Iterable[CheckedUnit], spec: Spec, lot: str, station: str,
                checked_at: datetime | None = None, spec_sha256: str | None = None) -> StoreInfo:
        """Append every unit (see the module docstring for what is kept); returns the counts."""
        from sqlalchemy import func, select
        from sqlalchemy.exc import SQLAlchemyError

        from . import __version__
        from .batch import relative_margin

        if not str(lot).strip():
            raise UsageError("is empty", parameter="lot", expected="a lot name, e.g. 2026-w49 or lot12")
        md, schema, units_t, reqs_t = tables()
        spec_hash = spec_sha256 or spec_digest(spec)
        spec_name = spec.name or Path(spec.path).stem
        when = _utc_naive(checked_at)
        urows, rrows = [], []
        for seq, c in enumerate(units):
            u = c.result
            uid = unit_uid(c.sha256, u.file, spec_hash, lot, station)
            urows.append({"uid": uid, "lot": lot, "station": station, "file": _clean(u.file), "sweep_sha256": c.sha256,
                          "spec_name": spec_name, "spec_sha256": spec_hash, "checked_at": when, "passed": bool(u.passed),
                          "error": _clean(u.error) if u.error is not None else None, "best_f_hz": _f(u.best_f_hz),
                          "best_return_loss_db": _f(u.best_return_loss_db), "tool_version": __version__})
            for k, r in enumerate(u.requirements):
                port = getattr(r, "port", None)
                ports = getattr(r, "ports", None)
                rrows.append({"uid": uid, "position": k, "lot": lot, "spec_name": spec_name, "checked_at": when,
                              "seq": seq, "name": r.name, "key": r.key, "passed": bool(r.passed), "limit_value": _f(r.limit),
                              "worst": _f(r.worst), "worst_f_hz": _f(r.worst_f_hz), "margin_db": _f(r.margin_db),
                              "margin_hz": _f(r.margin_hz), "relative_margin": _f(relative_margin(r)),
                              "f_low_hz": _f(r.f_low_hz), "f_high_hz": _f(r.f_high_hz),
                              "port": int(port) if port is not None else None,
                              "ports": json.dumps(list(ports)) if ports else None})
        ins = self._insert()

        def work(conn):
            before = conn.execute(select(func.count()).select_from(units_t).where(units_t.c.lot == lot,
                                                                                  units_t.c.station == station)).scalar()
            for k in range(0, len(urows), 5000):
                conn.execute(ins(units_t).on_conflict_do_nothing(index_elements=["uid"]), urows[k:k + 5000])
            for k in range(0, len(rrows), 5000):
                conn.execute(ins(reqs_t).on_conflict_do_nothing(index_elements=["uid", "position"]), rrows[k:k + 5000])
            after = conn.execute(select(func.count()).select_from(units_t).where(units_t.c.lot == lot,
                                                                                 units_t.c.station == station)).scalar()
            return after - before

        try:
            added = self._transaction(work) if urows else 0
        except SQLAlchemyError as exc:
            raise OutputError(f"cannot write to the results store ({_db_reason(exc)})", path=self.shown) from None
        return StoreInfo(self.shown, lot, station, int(added), len(urows) - int(added))

    def _insert(self):
        if self.sqlite:
            from sqlalchemy.dialects.sqlite import insert
        else:
            from sqlalchemy.dialects.postgresql import insert
        return insert


def _utc_naive(t: datetime | None) -> datetime:
    from datetime import UTC

    t = t or datetime.now(UTC)
    if t.tzinfo is not None:
        t = t.astimezone(UTC).replace(tzinfo=None)
    return t


def _f(x) -> float | None:
    """A float for a column: None, and non-finite values, become NULL (SQL has no infinity that
    every database shares)."""
    if x is None:
        return None
    x = float(x)
    return x + 0.0 if x == x and abs(x) != float("inf") else None


def _clean(s: str) -> str:
    return str(s).encode("utf-8", "replace").decode("utf-8").replace("\x00", "\ufffd")


def unit_uid(sweep_sha256: str | None, file: str, spec_sha256: str, lot: str, station: str) -> str:
    """The store key of one unit (40 hex digits of a SHA-256 over its parts)."""
    what = sweep_sha256 or ("unread:" + os.path.normpath(_clean(file)))
    h = hashlib.sha256("\x1f".join((what, spec_sha256, lot, station)).encode("utf-8"))
    return h.hexdigest()[:40]


def spec_digest(spec: Spec) -> str:
    """SHA-256 of the spec file's bytes, and of the golden unit's file when the spec names one
    (both change the verdicts). A spec not read from a file hashes its path text."""
    h = hashlib.sha256()
    for p in (spec.path, spec.golden.path if spec.golden is not None else None):
        if p is None:
            continue
        try:
            h.update(Path(p).read_bytes())
        except OSError:
            h.update(str(p).encode("utf-8", "replace"))
        h.update(b"\x1f")
    return h.hexdigest()


def default_station() -> str:
    """The host name (the default ``--station``)."""
    import socket

    return socket.gethostname() or "station"

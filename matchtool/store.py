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

import contextlib
import hashlib
import json
import math
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
CHUNK_UNITS = 10_000
LOCK_KEY = 0x6D74_7374  # the PostgreSQL advisory lock that serialises writers ("mtst")


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
        Index("requirements_failing", "lot", "passed", "name"),
    )
    def group():
        return [Column("lot", String(200), primary_key=True), Column("spec_name", String(200), primary_key=True),
                Column("station", String(200), primary_key=True), Column("day", String(10), primary_key=True)]

    lot_units = Table(
        "lot_units", md, *group(),
        Column("units", Integer, nullable=False), Column("passed", Integer, nullable=False),
        Column("errors", Integer, nullable=False), Column("f_n", Integer, nullable=False),
        Column("f_mean", Float), Column("f_m2", Float), Column("f_min", Float), Column("f_max", Float),
        Column("first_at", DateTime), Column("last_at", DateTime),
    )
    lot_reqs = Table(
        "lot_requirements", md, *group(),
        Column("name", String(200), primary_key=True), Column("key", String(40), primary_key=True),
        Column("position", Integer, nullable=False), Column("evaluated", Integer, nullable=False),
        Column("passed", Integer, nullable=False), Column("n_values", Integer, nullable=False),
        Column("mean", Float), Column("m2", Float), Column("min", Float), Column("max", Float),
        Column("limit_min", Float), Column("limit_max", Float), Column("f_low_min", Float), Column("f_low_max", Float),
        Column("f_high_min", Float), Column("f_high_max", Float),
    )
    return md, schema, units, reqs, lot_units, lot_reqs


_T: tuple | None = None


def _all_tables() -> tuple:
    global _T
    if _T is None:
        _T = _tables()
    return _T


def tables():
    """(metadata, schema table, units table, requirements table), built on first use (so that
    importing this module does not import SQLAlchemy)."""
    return _all_tables()[:4]


def stats_tables():
    """(lot_units, lot_requirements): running counts, means and sums of squared deviations per
    lot, spec, station and day, kept up to date by every write so that ``history`` reads a few
    rows per lot instead of every unit."""
    return _all_tables()[4:]


# ------------------------------------------------------------------------------- running statistics

def combine(a: tuple[int, float | None, float | None], b: tuple[int, float | None, float | None]):
    """Two groups' (count, mean, sum of squared deviations) as one group's: the pairwise update
    of Chan, Golub and LeVeque, "Algorithms for computing the sample variance" (1983), exact in
    exact arithmetic and stable in floating point (no sum of squares about zero)."""
    na, ma, qa = a
    nb, mb, qb = b
    if not nb:
        return a
    if not na:
        return b
    n = na + nb
    d = mb - ma
    return n, ma + d * nb / n, qa + qb + d * d * na * nb / n


def moments(values) -> tuple[int, float | None, float | None]:
    """(count, mean, sum of squared deviations) of the values that are not None (two passes,
    correctly rounded sums)."""
    x = [float(v) for v in values if v is not None]
    if not x:
        return 0, None, None
    m = math.fsum(x) / len(x)
    return len(x), m, math.fsum((v - m) ** 2 for v in x)


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
        shown = url.split("://", 1)[0] + "://..." if "@" in url else url
        return shown.replace("postgresql+psycopg://", "postgresql://")


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
            self.engine = self._engine(create_engine, connect_args={"timeout": BUSY_TIMEOUT_S, "isolation_level": None})

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
            self.engine = self._engine(create_engine, pool_pre_ping=False, connect_args={"connect_timeout": 10})
        try:
            self._prepare(create)
        except SQLAlchemyError as exc:
            self.engine.dispose()
            raise InputError(f"cannot open the results store ({_db_reason(exc)})", path=self.shown) from None

    def _engine(self, create_engine, **kw):
        """SQLAlchemy's engine for the URL; a URL it cannot read (a port that is not a number, a
        malformed host) is a bad --store value, said in one line."""
        from sqlalchemy.exc import ArgumentError

        try:
            return create_engine(self.url, **kw)
        except (ArgumentError, ValueError, TypeError):
            raise UsageError("is not a store URL that can be read", parameter="store", value=self.shown,
                             expected="a file path, sqlite:///path or postgresql://user@host[:port]/db") from None

    def close(self, abort: bool = False) -> None:
        """Close the connections (``abort`` is for :class:`StoreProcess`; here a transaction in
        progress is rolled back by the interrupt itself)."""
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
        """Append every unit (see the module docstring for what is kept); returns the counts.

        A large lot is written in transactions of :data:`CHUNK_UNITS` units, so that no writer
        holds the store's write lock for long (a failure part-way leaves whole chunks stored; the
        same check again adds only the rest)."""
        if not str(lot).strip():
            raise UsageError("is empty", parameter="lot", expected="a lot name, e.g. 2026-w49 or lot12")
        units = list(units)
        spec_hash = spec_sha256 or spec_digest(spec)
        spec_name = spec.name or Path(spec.path).stem
        when = _utc_naive(checked_at)
        added = 0
        for k in range(0, len(units), CHUNK_UNITS):
            added += self._add_chunk(units[k:k + CHUNK_UNITS], k, spec_hash, spec_name, lot, station, when)
        return StoreInfo(self.shown, lot, station, added, len(units) - added)

    def _add_chunk(self, units, seq0, spec_hash, spec_name, lot, station, when) -> int:
        from sqlalchemy import select
        from sqlalchemy.exc import SQLAlchemyError

        from . import __version__
        from .batch import file_sha256, relative_margin

        md, schema, units_t, reqs_t = tables()
        urows, rrows = [], []
        for seq, c in enumerate(units, start=seq0):
            u = c.result
            digest = c.sha256 if c.sha256 is not None or u.error is not None else file_sha256(u.file)
            uid = unit_uid(digest, u.file, spec_hash, lot, station)
            urows.append({"uid": uid, "lot": lot, "station": station, "file": _clean(u.file), "sweep_sha256": digest,
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
        lot_units_t, lot_reqs_t = stats_tables()

        def work(conn):
            from sqlalchemy import text

            if not self.sqlite:  # one writer at a time updates the running statistics (SQLite: BEGIN IMMEDIATE)
                conn.execute(text("SELECT pg_advisory_xact_lock(:k)"), {"k": LOCK_KEY})
            uids = list(dict.fromkeys(r["uid"] for r in urows))
            have: set[str] = set()
            for k in range(0, len(uids), 500):
                have |= {x[0] for x in conn.execute(select(units_t.c.uid).where(units_t.c.uid.in_(uids[k:k + 500])))}
            seen: set[str] = set()
            new_u = []
            for r in urows:
                if r["uid"] not in have and r["uid"] not in seen:
                    seen.add(r["uid"])
                    new_u.append(r)
            new_r = [r for r in rrows if r["uid"] in seen]
            _bulk(conn, ins(units_t).on_conflict_do_nothing(index_elements=["uid"]), units_t, new_u)
            _bulk(conn, ins(reqs_t).on_conflict_do_nothing(index_elements=["uid", "position"]), reqs_t, new_r)
            if new_u:
                self._update_stats(conn, new_u, new_r, station)
            return len(new_u)

        try:
            return int(self._transaction(work)) if urows else 0
        except SQLAlchemyError as exc:
            raise OutputError(f"cannot write to the results store ({_db_reason(exc)})", path=self.shown) from None

    def _update_stats(self, conn, new_u: list[dict], new_r: list[dict], station: str) -> None:
        """Fold the new rows into ``lot_units`` / ``lot_requirements`` (inside the write
        transaction, which holds the store's write lock)."""
        from sqlalchemy import and_, select

        lot_units_t, lot_reqs_t = stats_tables()
        ugroups: dict[tuple, list[dict]] = {}
        for r in new_u:
            ugroups.setdefault((r["lot"], r["spec_name"], station, r["checked_at"].date().isoformat()), []).append(r)
        for key, rows in ugroups.items():
            f = [r["best_f_hz"] for r in rows if r["error"] is None]
            fm = moments(f)
            fvals = [x for x in f if x is not None]
            add = {"units": len(rows), "passed": sum(r["passed"] for r in rows),
                   "errors": sum(r["error"] is not None for r in rows), "f_min": min(fvals, default=None),
                   "f_max": max(fvals, default=None), "first_at": min(r["checked_at"] for r in rows),
                   "last_at": max(r["checked_at"] for r in rows)}
            where = and_(*(c == v for c, v in zip((lot_units_t.c.lot, lot_units_t.c.spec_name, lot_units_t.c.station,
                                                   lot_units_t.c.day), key, strict=True)))
            old = conn.execute(select(lot_units_t).where(where)).mappings().first()
            n, m, q = combine((old["f_n"], old["f_mean"], old["f_m2"]) if old else (0, None, None), fm)
            vals = {"f_n": n, "f_mean": m, "f_m2": q}
            if old is None:
                conn.execute(lot_units_t.insert().values(lot=key[0], spec_name=key[1], station=key[2], day=key[3],
                                                          **add, **vals))
            else:
                conn.execute(lot_units_t.update().where(where).values(
                    units=old["units"] + add["units"], passed=old["passed"] + add["passed"],
                    errors=old["errors"] + add["errors"], f_min=_least(old["f_min"], add["f_min"]),
                    f_max=_most(old["f_max"], add["f_max"]), first_at=_least(old["first_at"], add["first_at"]),
                    last_at=_most(old["last_at"], add["last_at"]), **vals))
        rgroups: dict[tuple, list[dict]] = {}
        for r in new_r:
            rgroups.setdefault((r["lot"], r["spec_name"], station, r["checked_at"].date().isoformat(), r["name"],
                                r["key"]), []).append(r)
        cols = (lot_reqs_t.c.lot, lot_reqs_t.c.spec_name, lot_reqs_t.c.station, lot_reqs_t.c.day, lot_reqs_t.c.name,
                lot_reqs_t.c.key)
        for key, rows in rgroups.items():
            w = [r["worst"] for r in rows if r["worst"] is not None]
            lims = [r["limit_value"] for r in rows if r["limit_value"] is not None]
            flo = [r["f_low_hz"] for r in rows if r["f_low_hz"] is not None]
            fhi = [r["f_high_hz"] for r in rows if r["f_high_hz"] is not None]
            add = {"position": min(r["position"] for r in rows), "evaluated": len(rows),
                   "passed": sum(r["passed"] for r in rows), "min": min(w, default=None), "max": max(w, default=None),
                   "limit_min": min(lims, default=None), "limit_max": max(lims, default=None),
                   "f_low_min": min(flo, default=None), "f_low_max": max(flo, default=None),
                   "f_high_min": min(fhi, default=None), "f_high_max": max(fhi, default=None)}
            where = and_(*(c == v for c, v in zip(cols, key, strict=True)))
            old = conn.execute(select(lot_reqs_t).where(where)).mappings().first()
            n, m, q = combine((old["n_values"], old["mean"], old["m2"]) if old else (0, None, None), moments(w))
            vals = {"n_values": n, "mean": m, "m2": q}
            if old is None:
                conn.execute(lot_reqs_t.insert().values(**dict(zip(("lot", "spec_name", "station", "day", "name", "key"),
                                                                    key, strict=True)), **add, **vals))
            else:
                merged = {"position": min(old["position"], add["position"]),
                          "evaluated": old["evaluated"] + add["evaluated"], "passed": old["passed"] + add["passed"]}
                for k in ("min", "limit_min", "f_low_min", "f_high_min"):
                    merged[k] = _least(old[k], add[k])
                for k in ("max", "limit_max", "f_low_max", "f_high_max"):
                    merged[k] = _most(old[k], add[k])
                conn.execute(lot_reqs_t.update().where(where).values(**merged, **vals))

    def _insert(self):
        if self.sqlite:
            from sqlalchemy.dialects.sqlite import insert
        else:
            from sqlalchemy.dialects.postgresql import insert
        return insert


class StoreProcess:
    """A :class:`Store` opened and written by a forked helper process, so that the import of
    SQLAlchemy and the connection (about 0.2 s, the most of what a store adds to a check) overlap
    the check itself. For what ``check`` needs (``add_lot``, ``close``) it behaves as the Store
    does: the same rows, and the same exceptions (raised here, by ``add_lot``, including the one of
    a store that could not be opened). The files are still hashed by the process that checks them,
    from the bytes it checked (a file rewritten during a long lot must not get another file's
    hash). Use :func:`open_store`."""

    def __init__(self, url: str) -> None:
        import multiprocessing as mp

        self.url = normalise_url(url)  # (not shown_url here: it imports SQLAlchemy)
        ctx = mp.get_context("fork")
        self._conn, child = ctx.Pipe()
        self._proc = ctx.Process(target=_serve_store, args=(self.url, child, self._conn, os.getpid()), daemon=True)
        self._proc.start()
        child.close()
        self._opened = False

    def _gone(self) -> OutputError:
        return OutputError("the results-store helper process ended unexpectedly", path=shown_url(self.url))

    def _reply(self):
        try:
            return self._conn.recv()
        except (EOFError, OSError):
            raise self._gone() from None

    def add_lot(self, units: Iterable[CheckedUnit], spec: Spec, lot: str, station: str) -> StoreInfo:
        """:meth:`Store.add_lot`, in the helper process."""
        if not self._opened:
            _, exc = self._reply()  # ("open", None | the exception Store() raised)
            if exc is not None:
                raise exc
            self._opened = True
        try:
            self._conn.send(("add", list(units), spec, lot, station))
        except (OSError, ValueError):  # the helper died after opening (killed, out of memory)
            raise self._gone() from None
        kind, value = self._reply()
        if kind == "error":
            raise value
        return value

    def close(self, abort: bool = False) -> None:
        """End the helper: at once when it is still opening, or when ``abort`` (Ctrl-C, a failure:
        a write in progress is then not committed), else after it has closed the store."""
        if not abort:
            with contextlib.suppress(OSError, ValueError):
                self._conn.send(("close",))
        self._proc.join(timeout=5 if self._opened and not abort else 0.05)
        if self._proc.is_alive():
            self._proc.terminate()
            self._proc.join(timeout=2)
        self._conn.close()


def _portable(exc: BaseException) -> BaseException:
    """``exc`` if it is a MatchtoolError that survives pickling, else an OutputError describing it
    (a library's exception text never reaches the user raw)."""
    import pickle

    from .errors import MatchtoolError

    if isinstance(exc, MatchtoolError):
        try:
            pickle.loads(pickle.dumps(exc))
            return exc
        except Exception:  # noqa: BLE001 - described below instead
            pass
    return OutputError(f"the results store failed unexpectedly ({type(exc).__name__})")


def _die_with_parent() -> None:  # pragma: no cover - Linux only, runs in the helper process
    """Ask the kernel for SIGTERM when the parent ends (prctl PR_SET_PDEATHSIG; Linux only)."""
    import ctypes
    import signal
    import sys

    if sys.platform.startswith("linux"):
        with contextlib.suppress(OSError, AttributeError):
            ctypes.CDLL(None, use_errno=True).prctl(1, int(signal.SIGTERM), 0, 0, 0)


def _serve_store(url: str, conn, parent_end, parent_pid: int) -> None:  # pragma: no cover - the helper
    """The helper process of :class:`StoreProcess`: open the store, then write what it is sent."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent handles Ctrl-C and ends this process
    parent_end.close()  # so that the parent's end closing (it exits) reaches this process as EOF
    _die_with_parent()
    if os.getppid() != parent_pid:  # the parent ended before the request above
        return
    try:
        db = Store(url)
    except BaseException as exc:  # noqa: BLE001 - every failure goes back to the parent
        conn.send(("open", _portable(exc)))
        return
    try:
        conn.send(("open", None))
        while True:
            if not conn.poll(1.0):
                if os.getppid() != parent_pid:  # the parent is gone: nothing will come
                    return
                continue
            try:
                msg = conn.recv()
            except EOFError:
                return
            if msg[0] != "add":
                return
            try:
                conn.send(("done", db.add_lot(*msg[1:])))
            except BaseException as exc:  # noqa: BLE001
                conn.send(("error", _portable(exc)))
    finally:
        db.close()


def open_store(url: str) -> Store | StoreProcess:
    """The store at ``url`` for one check: a :class:`StoreProcess` where processes can be forked
    (its errors come from ``add_lot``), else a :class:`Store` (its errors come from here)."""
    import multiprocessing as mp

    if "fork" in mp.get_all_start_methods():
        return StoreProcess(url)
    return Store(url)


def _bulk(conn, stmt, table, rows: list[dict]) -> None:
    """Execute one INSERT for many rows: the statement is compiled once by SQLAlchemy for the
    connection's dialect and handed to the driver's ``executemany`` with each column's bind
    processor applied, which skips SQLAlchemy's per-row parameter handling (about two thirds of
    the cost of storing a lot of a thousand units)."""
    if not rows:
        return
    dialect = conn.dialect
    compiled = stmt.compile(dialect=dialect, column_keys=list(rows[0]))
    procs = {c.name: c.type._cached_bind_processor(dialect) for c in table.columns}
    if compiled.positional:
        keys = list(compiled.positiontup)
        params = [tuple(procs[k](r[k]) if procs.get(k) else r[k] for k in keys) for r in rows]
    else:
        keys = list(rows[0])
        params = [{k: procs[k](r[k]) if procs.get(k) else r[k] for k in keys} for r in rows]
    sql = compiled.string
    for k in range(0, len(params), 5000):
        conn.exec_driver_sql(sql, params[k:k + 5000])


def _least(a, b):
    return b if a is None else a if b is None else min(a, b)


def _most(a, b):
    return b if a is None else a if b is None else max(a, b)


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

"""The store's one SQLite connection and its transaction helper, shared by the store's parts.

:class:`StoreConnection` opens the file (WAL journal, ``synchronous=FULL`` on every
connection, foreign keys on), creates or migrates it safely when several processes open a new
file at once, and gives the parts of :class:`stakeline.store.Store` their few tools: reads that
return plain dicts, one write transaction per change (nested blocks become savepoints), logged
field updates and the device stamp.  SQLite faults (full disk, damaged file, read-only folder,
a lock held too long) come out as :mod:`stakeline.store.faults` errors with one-line messages.

A writer that finds the store locked by another program waits: silently for the first
:data:`QUIET_WAIT` seconds (ordinary contention), then it says so once through ``on_wait``
(by default a line on stderr) and keeps waiting up to ``lock_wait`` seconds.
"""

from __future__ import annotations

import itertools
import os
import sqlite3
import sys
import time
import uuid as uuidlib
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from urllib.parse import quote

import sqlite_utils
from stakeline.store.faults import StoreFaultError, StoreLockedError, is_locked, store_fault
from stakeline.store.schema import LATEST, migrate
from stakeline.store.values import StoreError, canonical_json, new_uuid, now, text

QUIET_WAIT = 2.0
"""Seconds a writer waits for a lock before saying that it waits (seconds)."""

LOCK_WAIT = 120.0
"""Default longest wait for another program's write lock before giving up (seconds)."""


def say_waiting(path: str | None) -> None:
    """Default ``on_wait``: one line on stderr while another program holds the store."""
    print(
        f"waiting for the store {path} to be free (another program is writing to it)...",
        file=sys.stderr,
        flush=True,
    )


def _connect_writable(path: str) -> sqlite3.Connection:
    if os.path.isdir(path):
        raise StoreError(f"{path} is a folder; give a store file name")
    try:
        os.makedirs(os.path.dirname(os.path.abspath(path)), exist_ok=True)
        return sqlite3.connect(path, timeout=QUIET_WAIT, isolation_level=None)
    except OSError as exc:
        raise StoreError(f"cannot open the store {path} ({exc.strerror or exc})") from None
    except sqlite3.Error as exc:
        raise store_fault(exc, path) or StoreError(
            f"cannot open the store {path} ({exc})"
        ) from None


def _connect_readonly(path: str) -> sqlite3.Connection:
    """A read-only connection (``mode=ro``); ``immutable=1`` when SQLite cannot create the WAL
    index beside a read-only file (read-only folder or file system)."""
    if os.path.isdir(path):
        raise StoreError(f"{path} is a folder; give a store file name")
    if not os.path.isfile(path):
        raise StoreError(f"no store file at {path}")
    uri = "file:" + quote(os.path.abspath(path)) + "?mode=ro"
    failure: sqlite3.Error | None = None
    for extra in ("", "&immutable=1"):
        conn = sqlite3.connect(uri + extra, uri=True, timeout=QUIET_WAIT, isolation_level=None)
        try:
            conn.execute("SELECT count(*) FROM sqlite_master").fetchone()
            return conn
        except sqlite3.Error as exc:
            conn.close()
            failure = exc
            if "unable to open" not in str(exc) and "readonly" not in str(exc):
                break
    if str(failure).startswith("file is not a database"):  # as a writable open says it
        raise StoreError(f"{path} is not a Stakeline store ({failure})") from None
    fault = store_fault(failure, path)
    if fault is None or isinstance(failure, sqlite3.OperationalError):
        raise StoreError(f"cannot read the store {path} ({failure})") from None
    raise fault from None


class StoreConnection:
    """One open store file (or in-memory store): the connection and its transaction helper.

    ``path`` is None for an in-memory store.  ``device_id`` names this device in every record
    (kept in the file); ``device`` is the id stamped on records written now (see
    :meth:`as_device`).
    """

    def __init__(
        self,
        conn: sqlite3.Connection,
        path: str | None,
        *,
        readonly: bool = False,
        on_wait: Callable[[str | None], None] | None = say_waiting,
        lock_wait: float = LOCK_WAIT,
    ):
        self.conn = conn
        self.db = sqlite_utils.Database(conn)
        self.path = path
        self.readonly = readonly
        self.on_wait = on_wait
        self.lock_wait = lock_wait
        self._savepoints = itertools.count(1)
        self.device_id = ""
        self.device = ""

    # -- opening ------------------------------------------------------------------------------
    @classmethod
    def open(
        cls,
        path: str | None,
        device_id: str | None = None,
        *,
        readonly: bool = False,
        on_wait: Callable[[str | None], None] | None = say_waiting,
        lock_wait: float = LOCK_WAIT,
    ) -> StoreConnection:
        """Open the store file at ``path`` (None: a new in-memory store), creating or migrating
        it unless ``readonly``; raises StoreError with the reason when that cannot be done."""
        if path is None:
            conn = sqlite3.connect(":memory:", isolation_level=None)
        elif readonly:
            conn = _connect_readonly(path)
        else:
            conn = _connect_writable(path)
        self = cls(conn, path, readonly=readonly, on_wait=on_wait, lock_wait=lock_wait)
        try:
            self._prepare(device_id)
        except sqlite3.DatabaseError as exc:
            conn.close()
            fault = store_fault(exc, path)
            if fault is not None and not str(exc).startswith("file is not a database"):
                raise fault from None
            raise StoreError(f"{path} is not a Stakeline store ({exc})") from None
        except BaseException:
            conn.close()
            raise
        return self

    def _prepare(self, device_id: str | None) -> None:
        conn = self.conn
        conn.execute("PRAGMA foreign_keys = ON")
        conn.execute(f"PRAGMA busy_timeout = {int(QUIET_WAIT * 1000)}")
        conn.execute("PRAGMA schema_version").fetchone()  # fails at once on a foreign file
        if self.path is not None and not self.readonly:
            self._retry_while_locked(self._wal_mode)
        conn.execute("PRAGMA synchronous = FULL")
        # One statement, one snapshot: another process creating the file may commit its first
        # step between two separate reads (version 0, then its tables).
        version, objects = conn.execute(
            "SELECT (SELECT user_version FROM pragma_user_version),"
            " (SELECT count(*) FROM sqlite_master)"
        ).fetchone()
        if version == 0 and objects:
            raise StoreError(f"{self.path} is an SQLite file but not a Stakeline store")
        if version > LATEST:
            raise StoreError(
                f"{self.path}: store schema version {version} is newer than this Stakeline "
                f"understands ({LATEST}); update Stakeline"
            )
        if self.readonly:
            if version == 0:
                raise StoreError(f"{self.path} is not a Stakeline store (an empty file)")
            if version < LATEST:
                raise StoreError(
                    f"{self.path} is a store of schema version {version}; this Stakeline reads "
                    f"version {LATEST} -- open it once where it can be written to update it"
                )
        else:
            self._retry_while_locked(lambda: migrate(self.db))
        self.device_id = self._device_id(device_id)
        self.device = self.device_id

    def _wal_mode(self) -> None:
        mode = self.conn.execute("PRAGMA journal_mode = WAL").fetchone()[0]
        if str(mode).lower() != "wal":
            raise StoreError(f"{self.path}: cannot switch the store to WAL journal mode")

    def _retry_while_locked(self, step: Callable[[], object]) -> None:
        """Run a start-up step, waiting while other processes create or migrate the file."""
        start = time.monotonic()
        told = False
        while True:
            try:
                step()
                return
            except sqlite3.OperationalError as exc:
                waited = time.monotonic() - start
                if not is_locked(exc) or waited > self.lock_wait:
                    raise
                if not told and waited > QUIET_WAIT and self.on_wait is not None:
                    self.on_wait(self.path)
                    told = True
                time.sleep(0.02)

    def _device_id(self, wanted: str | None) -> str:
        wanted = text(wanted, "device id")
        row = self.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        if row is None and not self.readonly:
            made = wanted or f"dev-{uuidlib.uuid4().hex[:12]}"
            with self.transaction():  # first writer wins when several open a new file at once
                self.conn.execute(
                    "INSERT OR IGNORE INTO meta (key, value) VALUES ('device_id', ?)", [made]
                )
            row = self.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        return wanted or (row[0] if row else "read-only")

    # -- transactions -------------------------------------------------------------------------
    def fault(self, exc: BaseException) -> BaseException:
        """``exc`` as a :mod:`~stakeline.store.faults` error when it is about the file."""
        if isinstance(exc, sqlite3.Error):
            return store_fault(exc, self.path) or exc
        return exc

    def _begin(self) -> None:
        try:
            self.conn.execute("BEGIN IMMEDIATE")
            return
        except sqlite3.OperationalError as exc:
            if not is_locked(exc):
                raise self.fault(exc) from None
        if self.on_wait is not None:
            self.on_wait(self.path)
        deadline = time.monotonic() + self.lock_wait
        try:
            while True:
                remaining = deadline - time.monotonic()
                if remaining <= 0:
                    raise StoreLockedError(
                        f"the store {self.path} stayed locked by another program for "
                        f"{QUIET_WAIT + self.lock_wait:.0f} s; try again when that program has "
                        "finished"
                    )
                wait = int(min(remaining, QUIET_WAIT) * 1000) + 1
                self.conn.execute(f"PRAGMA busy_timeout = {wait}")
                try:
                    self.conn.execute("BEGIN IMMEDIATE")
                    return
                except sqlite3.OperationalError as exc:
                    if not is_locked(exc):
                        raise self.fault(exc) from None
        finally:
            self.conn.execute(f"PRAGMA busy_timeout = {int(QUIET_WAIT * 1000)}")

    @contextmanager
    def transaction(self) -> Iterator[StoreConnection]:
        """One write transaction (``BEGIN IMMEDIATE``), committed before the block ends;
        nested blocks become savepoints.  A fault of the file raises its StoreFaultError and
        leaves nothing of the block behind."""
        conn = self.conn
        if conn.in_transaction:
            yield from self._savepoint()
            return
        self._begin()
        try:
            yield self
            if not conn.in_transaction:
                raise StoreFaultError(
                    f"the store {self.path} ended the change after an error; nothing of it was kept"
                )
            conn.execute("COMMIT")
        except BaseException as exc:
            if conn.in_transaction:
                try:
                    conn.execute("ROLLBACK")
                except sqlite3.Error:
                    pass  # the original error below says what went wrong
            fault = self.fault(exc)
            if fault is exc:
                raise
            raise fault from None

    def _savepoint(self) -> Iterator[StoreConnection]:
        conn = self.conn
        name = f"part_{next(self._savepoints)}"
        conn.execute(f"SAVEPOINT {name}")
        try:
            yield self
        except BaseException as exc:
            if conn.in_transaction:
                try:
                    conn.execute(f"ROLLBACK TO {name}")
                    conn.execute(f"RELEASE {name}")
                except sqlite3.Error:
                    pass  # SQLite already ended the transaction (a full disk, say)
            fault = self.fault(exc)
            if fault is exc:
                raise
            raise fault from None
        if not conn.in_transaction:
            raise StoreFaultError(
                f"the store {self.path} ended the change after an error; nothing of it was kept"
            )
        conn.execute(f"RELEASE {name}")

    @contextmanager
    def as_device(self, device: str) -> Iterator[StoreConnection]:
        """Stamp records written inside the block with ``device`` (demo data, imports)."""
        saved, self.device = self.device, text(device, "device id") or self.device_id
        try:
            yield self
        finally:
            self.device = saved

    # -- reading and writing rows -------------------------------------------------------------
    def rows(self, sql: str, params: tuple | list = ()) -> list[dict]:
        """Every row of a query as a dict (column name -> value)."""
        try:
            return list(self.db.query(sql, list(params)))
        except sqlite3.Error as exc:
            raise self.fault(exc) from None

    def row(self, sql: str, params: tuple | list = ()) -> dict | None:
        """The first row of a query as a dict, or None."""
        rows = self.rows(sql, params)
        return rows[0] if rows else None

    def get(self, table: str, uuid: str, what: str) -> dict:
        """The row of ``table`` with ``uuid``; StoreError naming ``what`` when there is none."""
        row = self.row(f"SELECT * FROM {table} WHERE uuid = ?", [str(uuid)])
        if row is None:
            raise StoreError(f"no {what} with id {uuid!r} in this store")
        return row

    def insert(self, table: str, record: dict) -> None:
        """Insert one row (column name -> value); call inside :meth:`transaction`."""
        columns = ", ".join(record)
        marks = ", ".join("?" for _ in record)
        self.conn.execute(
            f"INSERT INTO {table} ({columns}) VALUES ({marks})", list(record.values())
        )

    def stamped(self, **fields) -> dict:
        """``fields`` with a new uuid, created/modified times and this device."""
        stamp = now()
        return {"uuid": new_uuid(), **fields, "created": stamp, "modified": stamp,
                "device": self.device}  # fmt: skip

    def update(self, table: str, uuid: str, columns: dict) -> None:
        """Change columns of one site/section/visit row and log the old and new values."""
        row = self.row(f"SELECT * FROM {table} WHERE uuid = ?", [uuid])
        changed = {k: v for k, v in columns.items() if row[k] != v}
        if not changed:
            return
        stamp = now()
        assignments = ", ".join(f"{k} = ?" for k in changed)
        self.conn.execute(
            f"UPDATE {table} SET {assignments}, modified = ?, device = ? WHERE uuid = ?",
            [*changed.values(), stamp, self.device, uuid],
        )
        self.insert(
            "edits",
            {
                "uuid": new_uuid(),
                "record_table": table,
                "record_uuid": uuid,
                "before": canonical_json({k: row[k] for k in changed}),
                "after": canonical_json(changed),
                "created": stamp,
                "device": self.device,
            },
        )

    def columns(self, table: str) -> set[str]:
        """The column names of ``table``."""
        return set(self.db[table].columns_dict)

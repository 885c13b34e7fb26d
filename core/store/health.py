"""Health of a store file: the check made before an import writes into it, the WAL
checkpoint, and salvage of what can still be read from a damaged file into a new one.

Cost of SQLite's ``PRAGMA quick_check`` (measured with ``bench/bench_store.py --health``): it
reads every page, about 1.4 s per GB on a warm cache (a 10^5-visit office store with its
import log is 1--3.5 GB: 1.3--3.8 s).  So :func:`check_health` runs the whole check before
every import while the file is at most :data:`FULL_CHECK_BYTES`, and on larger files once per
``store_check_hours`` (an office setting, default :data:`CHECK_HOURS`; 0 = every import) --
checking the small tables (sites, sections, visits, edits...) every time.  Damage on a page
an import touches is caught by SQLite as the import reads it, and reported the same way.
"""

from __future__ import annotations

import os
import sqlite3
import time
from urllib.parse import quote

from stakeline.store.connection import StoreConnection
from stakeline.store.faults import StoreCorruptError, salvage_hint, store_fault
from stakeline.store.values import StoreError, now

FULL_CHECK_BYTES = 512 * 1024 * 1024
"""Store files up to this size get the whole quick_check before every import (bytes)."""

CHECK_HOURS = 24.0
"""Default hours between whole checks of a larger store (setting ``store_check_hours``)."""

SMALL_TABLES = ("meta", "settings", "sites", "sections", "visits", "edits", "water_levels",
                "overrides", "devices", "meters", "visit_meters")  # fmt: skip
"""Tables checked before every import whatever the store's size."""

COPY_ORDER = ("meta", "settings", "devices", "sites", "sections", "visits", "edits",
              "station_versions", "water_levels", "overrides", "meters", "visit_meters",
              "velocity_versions", "water_surface_versions", "packages")  # fmt: skip
"""Tables copied by :func:`salvage`, in this order."""


def checkpoint(db: StoreConnection) -> bool:
    """``wal_checkpoint(TRUNCATE)``: True when the journal was copied and emptied."""
    # Another connection still reading must not stall a pause or a close: wait briefly,
    # and leave the rest of the WAL to the next checkpoint if it is busy.
    db.conn.execute("PRAGMA busy_timeout = 200")
    try:
        busy, _pages, _copied = db.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)").fetchone()
    except sqlite3.OperationalError:
        return False
    except sqlite3.DatabaseError as exc:
        raise db.fault(exc) from None
    finally:
        db.conn.execute("PRAGMA busy_timeout = 2000")
    return busy == 0


def _check(db: StoreConnection, pragma: str) -> list[str]:
    try:
        return [row[0] for row in db.conn.execute(pragma)]
    except sqlite3.DatabaseError as exc:
        return [str(exc)]


def integrity_check(db: StoreConnection) -> str:
    """SQLite's ``PRAGMA integrity_check`` result (``"ok"`` when the file is sound)."""
    return "; ".join(_check(db, "PRAGMA integrity_check"))


def check_health(db: StoreConnection, settings, full: bool | None = None) -> dict:
    """Check the store file before writing into it; StoreCorruptError (saying how to recover)
    when it is damaged.  ``full``: True = the whole quick_check, False = the small tables only,
    None = decide by size and schedule (see the module).  Returns {checked ('whole' or
    'tables'), seconds, bytes}."""
    size = os.path.getsize(db.path) if db.path else 0
    if full is None:
        hours = settings.get_setting("store_check_hours", CHECK_HOURS)
        hours = hours if isinstance(hours, (int, float)) and hours >= 0 else CHECK_HOURS
        last = settings.get_meta("last_whole_check")
        due = last is None or hours == 0 or _hours_since(last) >= hours
        full = size <= FULL_CHECK_BYTES or due
    start = time.perf_counter()
    if full:
        problems = _check(db, "PRAGMA quick_check")
    else:
        problems = []
        for table in SMALL_TABLES:
            problems += _check(db, f"PRAGMA quick_check({table})")
    problems = [p for p in problems if p != "ok"]
    seconds = time.perf_counter() - start
    if problems:
        where = f"the store {db.path}" if db.path else "the in-memory store"
        raise StoreCorruptError(
            f"{where} is damaged (SQLite's check: {problems[0][:120]}); nothing was imported; "
            f"{salvage_hint(db.path)}"
        )
    if full and size > FULL_CHECK_BYTES and not db.readonly:
        settings.set_meta("last_whole_check", now())  # the schedule of large stores
    return {"checked": "whole" if full else "tables", "seconds": seconds, "bytes": size}


def _hours_since(stamp: str) -> float:
    from datetime import UTC, datetime

    try:
        then = datetime.fromisoformat(stamp)
    except ValueError:
        return float("inf")
    then = then if then.tzinfo else then.replace(tzinfo=UTC)
    return (datetime.now(UTC) - then).total_seconds() / 3600


# -- salvage ----------------------------------------------------------------------------------
def _open_source(path: str) -> sqlite3.Connection:
    uri = "file:" + quote(os.path.abspath(path)) + "?mode=ro"
    for extra in ("", "&immutable=1"):
        conn = sqlite3.connect(uri + extra, uri=True, isolation_level=None)
        try:
            conn.execute("PRAGMA schema_version").fetchone()
            return conn
        except sqlite3.DatabaseError as exc:
            conn.close()
            failure = exc
    raise StoreError(f"nothing can be read from {path} ({failure}); it is not a store any more")


def _read_rows(conn: sqlite3.Connection, table: str, columns: list[str]) -> tuple[list, int]:
    """Every readable row of ``table`` (rowid order) and the number of rowids that failed."""
    names = ", ".join(columns)
    rows: list[tuple] = []
    failed, last = 0, 0
    try:
        top = conn.execute(f"SELECT max(rowid) FROM {table}").fetchone()[0] or 0
    except sqlite3.DatabaseError:
        top = None
    while True:
        try:
            chunk = conn.execute(
                f"SELECT rowid, {names} FROM {table} WHERE rowid > ? ORDER BY rowid LIMIT 500",
                [last],
            ).fetchall()
        except sqlite3.DatabaseError:
            chunk = None
        if chunk:
            rows.extend(row[1:] for row in chunk)
            last = chunk[-1][0]
            continue
        if chunk == [] and (top is None or last >= top):
            return rows, failed
        # A damaged page: step over it one rowid at a time until rows read again.
        limit = (top if top is not None else last + 100_000) + 1
        probe, found = last + 1, None
        while probe <= limit and found is None:
            try:
                found = conn.execute(
                    f"SELECT rowid, {names} FROM {table} WHERE rowid = ?", [probe]
                ).fetchone()
            except sqlite3.DatabaseError:
                failed += 1
            probe += 1
        if found is None:
            return rows, failed
        rows.append(found[1:])
        last = found[0]


def salvage(source: str | os.PathLike, target: str | os.PathLike) -> dict:
    """Copy what can still be read from the (damaged) store ``source`` into a new store file
    ``target``; ``source`` is only read, never changed.

    Each table is read in rowid order, stepping over damaged pages; rows are copied as they
    are (records whose site, section or visit was lost are kept and counted as ``orphans``).
    Returns {source, target, tables: {table: {copied, unreadable}}, orphans, check} where
    ``check`` is the new file's quick_check (``"ok"``).  The new store makes its own signing
    key on first use: the office trusts it again from its device key file.
    """
    from stakeline.store.store import Store

    source, target = os.fspath(source), os.fspath(target)
    if os.path.lexists(target):
        raise StoreError(f"{target} already exists; salvage writes a new file only")
    if not os.path.isfile(source):
        raise StoreError(f"no store file at {source}")
    old = _open_source(source)
    try:
        present = _tables(old)
        if present is not None and not present & set(COPY_ORDER):
            raise StoreError(
                f"nothing to salvage: {source} holds no Stakeline records (an empty or foreign "
                "file)"
            )
        try:
            device = old.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        except sqlite3.DatabaseError:
            device = None
        tables: dict[str, dict] = {}
        with Store.open(target, device_id=device[0] if device else None) as new:
            conn = new.conn
            conn.execute("PRAGMA foreign_keys = OFF")  # keep records whose owner was lost
            for table in COPY_ORDER:
                if present is not None and table not in present:  # an older store's gap
                    tables[table] = {"copied": 0, "unreadable": 0}
                    continue
                tables[table] = _copy_table(old, conn, table, new.db[table].columns_dict)
            orphans = _orphans(conn)
            check = "; ".join(r[0] for r in conn.execute("PRAGMA quick_check"))
            conn.execute("PRAGMA foreign_keys = ON")
    finally:
        old.close()
    return {"source": source, "target": target, "tables": tables, "orphans": orphans,
            "check": check}  # fmt: skip


def _tables(old: sqlite3.Connection) -> set[str] | None:
    """The tables the old file's schema names; None when the schema itself cannot be read."""
    try:
        return {r[0] for r in old.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    except sqlite3.DatabaseError:
        return None


def _copy_table(old: sqlite3.Connection, conn: sqlite3.Connection, table: str, wanted) -> dict:
    try:
        have = [r[1] for r in old.execute(f"PRAGMA table_info({table})")]
    except sqlite3.DatabaseError:
        have = []
    columns = [c for c in wanted if c in have] or list(wanted)
    try:
        rows, failed = _read_rows(old, table, columns)
    except sqlite3.DatabaseError:
        rows, failed = [], 1
    marks = ", ".join("?" for _ in columns)
    conn.execute("BEGIN IMMEDIATE")
    try:
        before = conn.total_changes
        conn.executemany(
            f"INSERT OR IGNORE INTO {table} ({', '.join(columns)}) VALUES ({marks})", rows
        )
        copied = conn.total_changes - before
        conn.execute("COMMIT")
    except sqlite3.Error as exc:
        conn.execute("ROLLBACK")
        raise store_fault(exc, None) or StoreError(f"cannot copy {table} ({exc})") from None
    return {"copied": copied, "unreadable": failed}


def _orphans(conn: sqlite3.Connection) -> dict:
    checks = {
        "sections": "SELECT count(*) FROM sections WHERE site_uuid NOT IN (SELECT uuid FROM sites)",
        "visits": "SELECT count(*) FROM visits WHERE section_uuid NOT IN "
        "(SELECT uuid FROM sections)",
        "station_versions": "SELECT count(*) FROM station_versions WHERE visit_uuid NOT IN "
        "(SELECT uuid FROM visits)",
    }
    return {table: conn.execute(sql).fetchone()[0] for table, sql in checks.items()}

"""The durable local store: one SQLite file per device (WAL journal, ``synchronous=FULL``).

Every record carries a ``uuid``, ``created``/``modified`` times (ISO 8601, UTC) and the ``device``
that wrote it.  Readings are never overwritten: each change to a station -- add, correct, remove,
undo -- is a new row of ``station_versions``; the current station is the latest version not
undone.  Changes to a site, section or visit are logged in ``edits`` with the old and new values.
Every value is a bound parameter; every change is one transaction, committed before the method
returns.  All lengths are in the visit's unit (``"m"`` or ``"ft"``), recorded with the visit.

The store is the only part of Stakeline that speaks SQL.  It is split by topic, each part a
mixin of :class:`Store`: :mod:`stakeline.store.schema` (tables and migrations),
:mod:`stakeline.store.visits`, :mod:`stakeline.store.stations`, :mod:`stakeline.store.sync` (package export and
office merge); :mod:`stakeline.store.values` holds its SQL-free validation and reduction.  Returned
records are plain dicts; their keys are documented on each method and stay stable.
"""

from __future__ import annotations

import json
import os
import sqlite3
import uuid as uuidlib
from collections.abc import Iterator
from contextlib import contextmanager
from importlib import resources
from pathlib import Path
from typing import Any

import sqlite_utils
from stakeline.store.schema import LATEST, migrate, schema_version
from stakeline.store.stations import StoreStations
from stakeline.store.sync import StoreSync
from stakeline.store.values import (
    METHODS,
    SECTION_FIELDS,
    StoreError,
    canonical_json,
    choice,
    coordinates,
    new_uuid,
    now,
    number,
    text,
)
from stakeline.store.visits import StoreVisits

__all__ = ["Store", "StoreError", "DEMO_PATH", "METHODS"]

DEMO_PATH = Path(str(resources.files("stakeline.demo_data").joinpath("tessaly_creek.json")))
"""The invented Tessaly Creek survey loaded by :meth:`Store.load_demo`."""


class Store(StoreVisits, StoreStations, StoreSync):
    """A Stakeline store in one SQLite file; open with :meth:`open` or :meth:`memory`."""

    def __init__(self, db: sqlite_utils.Database, path: str | None, device_id: str | None):
        self.db = db
        self.conn = db.conn
        self.path = path
        self.closed = False
        self.conn.execute("PRAGMA foreign_keys = ON")
        self.conn.execute("PRAGMA busy_timeout = 10000")
        if path is not None:
            mode = self.conn.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            if str(mode).lower() != "wal":
                raise StoreError(f"{path}: cannot switch the store to WAL journal mode")
        self.conn.execute("PRAGMA synchronous = FULL")
        self._check_foreign()
        if schema_version(self.conn) > LATEST:
            raise StoreError(
                f"{path}: store schema version {schema_version(self.conn)} is newer than this "
                f"Stakeline understands ({LATEST}); update Stakeline"
            )
        migrate(db)
        self.device_id = self._device_id(device_id)
        self._device = self.device_id

    # -- opening and closing ------------------------------------------------------------------
    @classmethod
    def open(cls, path: str | os.PathLike, device_id: str | None = None) -> Store:
        """Open (creating or migrating) the store file at ``path``.

        ``device_id`` names this device in every record; when None the id stored in the file is
        used, or a new one is made and kept in the file.
        """
        path = os.fspath(path)
        if os.path.isdir(path):
            raise StoreError(f"{path} is a folder; give a store file name")
        try:
            os.makedirs(os.path.dirname(os.path.abspath(path)), exist_ok=True)
            conn = sqlite3.connect(path, timeout=10, isolation_level=None)
        except (OSError, sqlite3.OperationalError) as exc:
            raise StoreError(f"cannot open the store {path} ({exc})") from None
        try:
            conn.execute("PRAGMA schema_version").fetchone()
            return cls(sqlite_utils.Database(conn), path, device_id)
        except sqlite3.OperationalError as exc:
            conn.close()
            raise StoreError(f"cannot use the store {path} ({exc})") from None
        except sqlite3.DatabaseError as exc:
            conn.close()
            raise StoreError(f"{path} is not a Stakeline store ({exc})") from None
        except BaseException:
            conn.close()
            raise

    @classmethod
    def memory(cls, device_id: str | None = None) -> Store:
        """An in-memory store (for small tests; nothing is written to disk)."""
        conn = sqlite3.connect(":memory:", isolation_level=None)
        return cls(sqlite_utils.Database(conn), None, device_id)

    def checkpoint(self) -> bool:
        """Copy the WAL journal into the main file and empty it (``wal_checkpoint(TRUNCATE)``).

        Called when the app pauses or stops, so a tablet that is then killed leaves one
        self-contained file.  Returns True when the journal was fully copied and truncated;
        False when another connection kept it busy (nothing is lost: the next checkpoint
        finishes it).  An in-memory store has no journal file: True.
        """
        if self.closed:
            raise StoreError("the store is closed; open it again to checkpoint")
        if self.path is None:
            return True
        # Another connection still reading must not stall a pause or a close: wait briefly,
        # and leave the rest of the WAL to the next checkpoint if it is busy.
        self.conn.execute("PRAGMA busy_timeout = 200")
        try:
            busy, _pages, _copied = self.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)").fetchone()
        except sqlite3.OperationalError:
            return False
        finally:
            self.conn.execute("PRAGMA busy_timeout = 10000")
        return busy == 0

    def close(self) -> None:
        """Checkpoint the WAL into the main file (TRUNCATE) and close; closing twice is fine."""
        if self.closed:
            return
        self.checkpoint()
        self.conn.close()
        self.closed = True

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc_info) -> None:
        self.close()

    @property
    def schema_version(self) -> int:
        """The store file's schema version (see :mod:`stakeline.store.schema`)."""
        return schema_version(self.conn)

    def integrity_check(self) -> str:
        """SQLite's ``PRAGMA integrity_check`` result (``"ok"`` when the file is sound)."""
        return "; ".join(row[0] for row in self.conn.execute("PRAGMA integrity_check"))

    def _check_foreign(self) -> None:
        if schema_version(self.conn) == 0:
            tables = self.conn.execute(
                "SELECT count(*) FROM sqlite_master WHERE type = 'table'"
            ).fetchone()[0]
            if tables:
                raise StoreError(f"{self.path} is an SQLite file but not a Stakeline store")

    def _device_id(self, wanted: str | None) -> str:
        row = self.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        if row is None:
            device = text(wanted, "device id") or f"dev-{uuidlib.uuid4().hex[:12]}"
            with self.transaction():
                self.conn.execute("INSERT INTO meta (key, value) VALUES ('device_id', ?)", [device])
            return device
        return text(wanted, "device id") or row[0]

    # -- SQL helpers --------------------------------------------------------------------------
    @contextmanager
    def transaction(self) -> Iterator[Store]:
        """One write transaction (``BEGIN IMMEDIATE``); nested blocks become savepoints."""
        conn = self.conn
        if conn.in_transaction:
            conn.execute("SAVEPOINT nested")
            try:
                yield self
            except BaseException:
                conn.execute("ROLLBACK TO nested")
                conn.execute("RELEASE nested")
                raise
            conn.execute("RELEASE nested")
            return
        conn.execute("BEGIN IMMEDIATE")
        try:
            yield self
        except BaseException:
            if conn.in_transaction:
                conn.execute("ROLLBACK")
            raise
        conn.execute("COMMIT")

    @contextmanager
    def as_device(self, device: str) -> Iterator[Store]:
        """Stamp records written inside the block with ``device`` (demo data, imports)."""
        saved, self._device = self._device, text(device, "device id") or self.device_id
        try:
            yield self
        finally:
            self._device = saved

    def _rows(self, sql: str, params: tuple | list = ()) -> list[dict]:
        cursor = self.conn.execute(sql, params)
        keys = [d[0] for d in cursor.description]
        return [dict(zip(keys, row, strict=True)) for row in cursor]

    def _row(self, sql: str, params: tuple | list = ()) -> dict | None:
        rows = self._rows(sql, params)
        return rows[0] if rows else None

    def _get(self, table: str, uuid: str, what: str) -> dict:
        row = self._row(f"SELECT * FROM {table} WHERE uuid = ?", [str(uuid)])
        if row is None:
            raise StoreError(f"no {what} with id {uuid!r} in this store")
        return row

    def _insert(self, table: str, record: dict) -> None:
        columns = ", ".join(record)
        marks = ", ".join("?" for _ in record)
        self.conn.execute(
            f"INSERT INTO {table} ({columns}) VALUES ({marks})", list(record.values())
        )

    def _stamped(self, **fields) -> dict:
        stamp = now()
        return {"uuid": new_uuid(), **fields, "created": stamp, "modified": stamp,
                "device": self._device}  # fmt: skip

    def _update(self, table: str, uuid: str, columns: dict) -> None:
        """Change columns of one site/section/visit row and log the old and new values."""
        row = self._row(f"SELECT * FROM {table} WHERE uuid = ?", [uuid])
        changed = {k: v for k, v in columns.items() if row[k] != v}
        if not changed:
            return
        stamp = now()
        assignments = ", ".join(f"{k} = ?" for k in changed)
        self.conn.execute(
            f"UPDATE {table} SET {assignments}, modified = ?, device = ? WHERE uuid = ?",
            [*changed.values(), stamp, self._device, uuid],
        )
        self._insert(
            "edits",
            {
                "uuid": new_uuid(),
                "record_table": table,
                "record_uuid": uuid,
                "before": canonical_json({k: row[k] for k in changed}),
                "after": canonical_json(changed),
                "created": stamp,
                "device": self._device,
            },
        )

    # -- sites and sections -------------------------------------------------------------------
    def create_site(self, name: str, stream: str = "", description: str = "") -> dict:
        """Add a site; returns {uuid, name, stream, description, created, modified, device}."""
        if not text(name, "site name").strip():
            raise StoreError("a site needs a name")
        record = self._stamped(
            name=name.strip(),
            stream=text(stream, "stream"),
            description=text(description, "description"),
        )
        with self.transaction():
            self._insert("sites", record)
        return record

    def sites(self) -> list[dict]:
        """All sites by name (same keys as :meth:`create_site`)."""
        return self._rows("SELECT * FROM sites ORDER BY name COLLATE NOCASE, created")

    def _section_columns(self, fields: dict) -> dict:
        unknown = set(fields) - set(SECTION_FIELDS)
        if unknown:
            raise StoreError(f"cannot set {', '.join(sorted(unknown))} on a section")
        columns: dict[str, Any] = {}
        for key, value in fields.items():
            if key == "origin":
                columns[key] = choice(value, ("left", "right"), "origin")
            elif key == "benchmark_elevation":
                columns[key] = number(value, "benchmark elevation", optional=True)
            elif key == "benchmark_assumed":
                columns[key] = int(bool(value))
            elif key.endswith("_coordinates"):
                side = key.split("_")[0]
                columns[f"{side}_lon"], columns[f"{side}_lat"] = coordinates(
                    value, f"{side} stake coordinates"
                )
            else:
                columns[key] = text(value, key.replace("_", " ")).strip()
        if "name" in columns and not columns["name"]:
            raise StoreError("a section needs a name")
        return columns

    def create_section(
        self,
        site_uuid: str,
        name: str,
        left_stake: str = "L",
        right_stake: str = "R",
        origin: str = "left",
        benchmark_name: str = "",
        benchmark_elevation: float | None = None,
        left_coordinates: tuple[float, float] | None = None,
        right_coordinates: tuple[float, float] | None = None,
        benchmark_assumed: bool = False,
    ) -> dict:
        """Add a cross-section to a site; returns :meth:`section`'s dict.

        Stakes are named as seen looking downstream; ``origin`` is the stake the tape starts at
        (``"left"`` or ``"right"``).  Coordinates are (longitude, latitude) in degrees (WGS 84).
        """
        self._get("sites", site_uuid, "site")
        columns = self._section_columns(
            dict(
                name=name,
                left_stake=left_stake,
                right_stake=right_stake,
                origin=origin,
                benchmark_name=benchmark_name,
                benchmark_elevation=benchmark_elevation,
                benchmark_assumed=benchmark_assumed,
                left_coordinates=left_coordinates,
                right_coordinates=right_coordinates,
            )
        )
        record = self._stamped(site_uuid=site_uuid, **columns)
        with self.transaction():
            self._insert("sections", record)
        return self.section(record["uuid"])

    def update_section(self, section_uuid: str, **fields) -> dict:
        """Change fields of a section (any of ``SECTION_FIELDS``); old values stay in history."""
        self._get("sections", section_uuid, "section")
        columns = self._section_columns(fields)
        with self.transaction():
            self._update("sections", section_uuid, columns)
        return self.section(section_uuid)

    _SECTION_SQL = """
        SELECT s.*, t.name AS site,
          (SELECT v.date FROM visits v WHERE v.section_uuid = s.uuid
            ORDER BY v.date DESC, v.created DESC LIMIT 1) AS last_visit_date,
          (SELECT CASE WHEN v.finished IS NULL THEN 'open' ELSE 'finished' END
             FROM visits v WHERE v.section_uuid = s.uuid
            ORDER BY v.date DESC, v.created DESC LIMIT 1) AS last_visit_status
        FROM sections s JOIN sites t ON t.uuid = s.site_uuid
    """

    @staticmethod
    def _section_dict(row: dict) -> dict:
        for side in ("left", "right"):
            lon, lat = row.pop(f"{side}_lon"), row.pop(f"{side}_lat")
            row[f"{side}_coordinates"] = None if lon is None else (lon, lat)
        row["benchmark_assumed"] = bool(row["benchmark_assumed"])
        return row

    def section(self, section_uuid: str) -> dict:
        """One section: uuid, site_uuid, site (name), name, left_stake, right_stake, origin,
        benchmark_name, benchmark_elevation, benchmark_assumed, left_coordinates,
        right_coordinates ((lon, lat) or None), last_visit_date, last_visit_status
        ('open', 'finished' or None), created, modified, device."""
        row = self._row(self._SECTION_SQL + " WHERE s.uuid = ?", [str(section_uuid)])
        if row is None:
            raise StoreError(f"no section with id {section_uuid!r} in this store")
        return self._section_dict(row)

    def sections(self, site_uuid: str | None = None) -> list[dict]:
        """Sections (of one site, or all) sorted by site and name; keys as :meth:`section`."""
        where, params = ("WHERE s.site_uuid = ?", [site_uuid]) if site_uuid else ("", [])
        rows = self._rows(
            self._SECTION_SQL + where + " ORDER BY t.name COLLATE NOCASE, s.name COLLATE NOCASE",
            params,
        )
        return [self._section_dict(row) for row in rows]

    # -- device settings ----------------------------------------------------------------------
    def get_setting(self, key: str, default: Any = None) -> Any:
        """A device setting's value (any JSON value), or ``default`` when unset."""
        row = self.conn.execute("SELECT value FROM settings WHERE key = ?", [key]).fetchone()
        return default if row is None else json.loads(row[0])

    def set_setting(self, key: str, value: Any) -> None:
        """Set a device setting (unit, crew, precision, tolerances...) to a JSON value."""
        try:
            value_json = canonical_json(value)
        except (TypeError, ValueError):
            raise StoreError(
                f"setting {key!r} must be a JSON value (text, number, list...)"
            ) from None
        with self.transaction():
            self.conn.execute(
                "INSERT INTO settings (key, value, modified) VALUES (?, ?, ?) "
                "ON CONFLICT (key) DO UPDATE SET value = excluded.value, "
                "modified = excluded.modified",
                [text(key, "setting name"), value_json, now()],
            )

    # -- demo data ----------------------------------------------------------------------------
    def load_demo(self, json_path: str | os.PathLike | None = None) -> list[dict]:
        """Load the invented demo survey (finished visits with their water levels) in one
        transaction; returns the created visits as :meth:`visit` dicts."""
        path = DEMO_PATH if json_path is None else Path(json_path)
        try:
            demo = json.loads(Path(path).read_text(encoding="utf-8"))
            site, benchmark = demo["site"], demo["benchmark"]
        except (OSError, ValueError, KeyError, TypeError) as exc:
            raise StoreError(f"cannot read the demo survey {path}: {exc}") from None
        created = []
        with self.transaction():
            site_record = self.create_site(site["name"], site.get("stream", ""),
                                           site.get("description", ""))  # fmt: skip
            for spec in demo["sections"]:
                stakes = spec.get("stake_coordinates") or {}
                section = self.create_section(
                    site_record["uuid"], spec["name"], spec["left_stake"], spec["right_stake"],
                    spec.get("origin", "left"), benchmark["name"], benchmark["elevation"],
                    stakes.get("left"), stakes.get("right"),
                    benchmark_assumed=benchmark.get("assumed", False),
                )  # fmt: skip
                for visit in spec["visits"]:
                    created.append(self._load_demo_visit(section["uuid"], visit))
        return [self.visit(uuid) for uuid in created]

    def _load_demo_visit(self, section_uuid: str, spec: dict) -> str:
        with self.as_device(spec.get("device") or self.device_id):
            visit = self.start_visit(
                section_uuid, spec["date"], spec.get("crew", ()), spec.get("unit", "m"),
                spec.get("line_left"), spec.get("line_right"), spec.get("line_check"),
                spec.get("method", "line"), spec.get("notes", ""),
            )  # fmt: skip
            for level in spec.get("water_levels", ()):
                self.add_water_level(visit["uuid"], level["elevation"], level.get("time"))
            for point in spec["stations"]:
                self.save_station(visit["uuid"], point["station"], point["reading"],
                                  point.get("code", ""), point.get("note", ""))  # fmt: skip
            self.finish_visit(visit["uuid"])
        return visit["uuid"]

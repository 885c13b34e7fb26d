"""The durable local store: one SQLite file per device (WAL journal, ``synchronous=FULL``).

Every record carries a ``uuid``, ``created``/``modified`` times (ISO 8601, UTC) and the ``device``
that wrote it.  Readings are never overwritten: each change to a station -- add, correct, remove,
undo -- is a new row of ``station_versions``; the current station is the latest version not
undone.  Changes to a site, section or visit are logged in ``edits`` with the old and new values.
Every value is a bound parameter; every change is one transaction, committed before the method
returns.  All lengths are in the visit's unit (``"m"`` or ``"ft"``), recorded with the visit.

This is the only module (with :mod:`core.store_schema`) that speaks SQL.  Returned records are
plain dicts; their keys are documented on each method and stay stable.
"""

from __future__ import annotations

import json
import os
import sqlite3
import uuid as uuidlib
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import sqlite_utils

from core import reduction
from core.errors import SurveyError
from core.store_schema import LATEST, migrate, schema_version
from core.store_sync import StoreSync
from core.store_values import (
    METHODS,
    SECTION_FIELDS,
    STATION_FIELDS,
    TEXT_LIMIT,
    VISIT_FIELDS,
    StoreError,
    canonical_json,
    choice,
    coordinates,
    elevations,
    iso_date,
    new_uuid,
    now,
    number,
    replay,
    text,
)

__all__ = ["Store", "StoreError", "DEMO_PATH", "METHODS"]

DEMO_PATH = Path(__file__).resolve().parent.parent / "demo_data" / "tessaly_creek.json"
"""The invented Tessaly Creek survey loaded by :meth:`Store.load_demo`."""


class Store(StoreSync):
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

    def close(self) -> None:
        """Checkpoint the WAL into the main file (TRUNCATE) and close; closing twice is fine."""
        if self.closed:
            return
        if self.path is not None:
            # Another connection still reading must not stall closing: wait briefly, and
            # leave the rest of the WAL to the next checkpoint if it is busy.
            self.conn.execute("PRAGMA busy_timeout = 200")
            try:
                self.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)").fetchall()
            except sqlite3.OperationalError:
                pass
        self.conn.close()
        self.closed = True

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc_info) -> None:
        self.close()

    @property
    def schema_version(self) -> int:
        """The store file's schema version (see :mod:`core.store_schema`)."""
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

    # -- visits -------------------------------------------------------------------------------
    def _visit_columns(self, fields: dict) -> dict:
        unknown = set(fields) - set(VISIT_FIELDS)
        if unknown:
            raise StoreError(f"cannot set {', '.join(sorted(unknown))} on a visit")
        columns: dict[str, Any] = {}
        for key, value in fields.items():
            if key == "date":
                columns[key] = iso_date(value)
            elif key == "crew":
                names = [value] if isinstance(value, str) else list(value or ())
                columns[key] = canonical_json([text(n, "crew name").strip() for n in names])
            elif key == "unit":
                try:
                    columns[key] = reduction.check_unit(value)
                except SurveyError as exc:
                    raise StoreError(str(exc)) from None
            elif key == "method":
                columns[key] = choice(value, METHODS, "method")
            elif key == "notes":
                columns[key] = text(value, "notes")
            elif key == "settings":
                if not isinstance(value, dict) or len(canonical_json(value)) > TEXT_LIMIT:
                    raise StoreError("visit settings must be a small JSON object")
                columns[key] = canonical_json(value)
            elif key == "planned_stations":
                planned = [number(s, "planned station") for s in value or ()]
                columns["planned"] = canonical_json(planned)
            else:
                columns[key] = number(value, key.replace("_", " "), optional=True)
        if (columns.get("stake_distance") or 1) <= 0:
            raise StoreError("the distance between the stakes must be positive")
        return columns

    def start_visit(
        self,
        section_uuid: str,
        date: str,
        crew: tuple[str, ...] | list[str] = (),
        unit: str = "m",
        line_left: float | None = None,
        line_right: float | None = None,
        line_check: float | None = None,
        method: str = "line",
        notes: str = "",
        stake_distance: float | None = None,
        backsight: float | None = None,
    ) -> dict:
        """Start a visit to a section; returns :meth:`visit`'s dict.

        ``line_left``/``line_right`` are the level line's elevations at the stakes and
        ``line_check`` the level check (survey unit); ``stake_distance`` the taped distance
        between stakes; ``backsight`` the benchmark backsight for the ``"rod"`` method.
        """
        self._get("sections", section_uuid, "section")
        columns = self._visit_columns(
            dict(date=date, crew=crew, unit=unit, method=method, line_left=line_left,
                 line_right=line_right, line_check=line_check, notes=notes,
                 stake_distance=stake_distance, backsight=backsight)
        )  # fmt: skip
        record = self._stamped(
            section_uuid=section_uuid, planned="[]", settings="{}", finished=None, **columns
        )
        with self.transaction():
            self._insert("visits", record)
        return self.visit(record["uuid"])

    def update_visit(self, visit_uuid: str, **fields) -> dict:
        """Change fields of a visit (any of ``VISIT_FIELDS``); old values stay in history.

        The length unit cannot change once readings exist (they are in that unit).
        """
        visit = self._get("visits", visit_uuid, "visit")
        columns = self._visit_columns(fields)
        if columns.get("unit", visit["unit"]) != visit["unit"] and self._station_count(visit_uuid):
            raise StoreError(
                f"this visit already has readings in {visit['unit']}; its unit cannot change"
            )
        with self.transaction():
            self._update("visits", visit_uuid, columns)
        return self.visit(visit_uuid)

    def finish_visit(self, visit_uuid: str) -> dict:
        """Mark a visit finished (ready to pack); returns :meth:`visit`'s dict."""
        visit = self._get("visits", visit_uuid, "visit")
        if visit["finished"] is None:
            with self.transaction():
                self._update("visits", visit_uuid, {"finished": now()})
        return self.visit(visit_uuid)

    def reopen_visit(self, visit_uuid: str) -> dict:
        """Clear a visit's finished mark so the crew can go on; returns :meth:`visit`'s dict."""
        self._get("visits", visit_uuid, "visit")
        with self.transaction():
            self._update("visits", visit_uuid, {"finished": None})
        return self.visit(visit_uuid)

    def set_planned_stations(self, visit_uuid: str, stations: list[float]) -> None:
        """Record the spacing plan: the stations to read, survey unit, in tape order."""
        self.update_visit(visit_uuid, planned_stations=list(stations))

    def planned_stations(self, visit_uuid: str) -> list[float]:
        """The spacing plan set by :meth:`set_planned_stations` (survey unit)."""
        return json.loads(self._get("visits", visit_uuid, "visit")["planned"])

    _LIVE_SQL = """
        WITH undone AS (SELECT undoes FROM station_versions WHERE action = 'undo'{where}),
        live AS (SELECT max(id) AS id FROM station_versions
                 WHERE action != 'undo' AND uuid NOT IN undone{where} GROUP BY station_uuid)
        SELECT sv.visit_uuid, count(*) AS n FROM live JOIN station_versions sv ON sv.id = live.id
        WHERE sv.action != 'remove' GROUP BY sv.visit_uuid
    """

    def _station_counts(self, visit_uuid: str | None = None) -> dict[str, int]:
        if visit_uuid is None:
            rows = self.conn.execute(self._LIVE_SQL.format(where=""))
        else:
            sql = self._LIVE_SQL.format(where=" AND visit_uuid = ?")
            rows = self.conn.execute(sql, [visit_uuid, visit_uuid])
        return dict(rows.fetchall())

    def _station_count(self, visit_uuid: str) -> int:
        return self._station_counts(visit_uuid).get(visit_uuid, 0)

    _VISIT_SQL = """
        SELECT v.*, s.name AS section, s.site_uuid, t.name AS site, s.origin,
               s.benchmark_elevation,
               max(v.modified, coalesce((SELECT max(created) FROM station_versions
                                         WHERE visit_uuid = v.uuid), '')) AS modified,
               (SELECT count(*) FROM packages p WHERE p.visit_uuid = v.uuid
                 AND p.status = 'conflict' AND p.resolved IS NULL) AS conflicts
        FROM visits v JOIN sections s ON s.uuid = v.section_uuid JOIN sites t ON t.uuid = s.site_uuid
    """

    def _visit_dict(self, row: dict, counts: dict[str, int]) -> dict:
        row["crew"] = json.loads(row["crew"])
        row["planned_stations"] = json.loads(row.pop("planned"))
        row["settings"] = json.loads(row["settings"])
        row["finished_at"] = row["finished"]
        row["finished"] = row["finished"] is not None
        row["station_count"] = counts.get(row["uuid"], 0)
        row["conflict"] = bool(row.pop("conflicts"))
        return row

    def visit(self, visit_uuid: str) -> dict:
        """One visit: uuid, section_uuid, section, site_uuid, site, date, crew (list), unit,
        method, line_left, line_right, line_check, stake_distance, backsight,
        benchmark_elevation, origin, notes, settings (dict), planned_stations, finished (bool),
        finished_at (time or None), station_count, conflict (bool: an imported copy differs),
        water_levels (list of :meth:`add_water_level` dicts, by time), created, modified,
        device."""
        row = self._row(self._VISIT_SQL + " WHERE v.uuid = ?", [str(visit_uuid)])
        if row is None:
            raise StoreError(f"no visit with id {visit_uuid!r} in this store")
        visit = self._visit_dict(row, self._station_counts(visit_uuid))
        visit["water_levels"] = self._rows(
            "SELECT * FROM water_levels WHERE visit_uuid = ? ORDER BY time, created", [visit_uuid]
        )
        return visit

    def visits(self, section_uuid: str | None = None) -> list[dict]:
        """Visits (of one section, or all) by date then site and section; each dict has uuid,
        site, section, date, station_count, finished, plus the keys of :meth:`visit` except
        water_levels."""
        where, params = ("WHERE v.section_uuid = ?", [section_uuid]) if section_uuid else ("", [])
        rows = self._rows(
            self._VISIT_SQL + where + " ORDER BY v.date, t.name, s.name, v.created", params
        )
        counts = self._station_counts()
        return [self._visit_dict(row, counts) for row in rows]

    def add_water_level(self, visit_uuid: str, elevation: float, time: str | None = None) -> dict:
        """Record a water-level observation (elevation, survey unit) at ``time`` (ISO 8601; now
        when None); returns {uuid, visit_uuid, elevation, time, created, modified, device}."""
        self._get("visits", visit_uuid, "visit")
        record = self._stamped(
            visit_uuid=visit_uuid,
            elevation=number(elevation, "water level"),
            time=text(time, "time") or now(),
        )
        with self.transaction():
            self._insert("water_levels", record)
        return record

    def add_override(self, visit_uuid: str, kind: str, station: float | None, reason: str) -> dict:
        """Record why a field-check finding is accepted; returns {uuid, visit_uuid, kind,
        station (survey unit or None), reason, created, modified, device}."""
        self._get("visits", visit_uuid, "visit")
        if not text(reason, "reason").strip():
            raise StoreError("an override needs a written reason")
        record = self._stamped(
            visit_uuid=visit_uuid,
            kind=text(kind, "finding kind"),
            station=number(station, "station", optional=True),
            reason=reason.strip(),
        )
        with self.transaction():
            self._insert("overrides", record)
        return record

    def overrides(self, visit_uuid: str) -> list[dict]:
        """The visit's overrides, oldest first (keys as :meth:`add_override`)."""
        return self._rows(
            "SELECT * FROM overrides WHERE visit_uuid = ? ORDER BY created", [visit_uuid]
        )

    # -- stations: append-only versions -------------------------------------------------------
    _REDUCE_SQL = """
        SELECT v.method, v.line_left, v.line_right, v.stake_distance, v.backsight,
               s.origin, s.benchmark_elevation
        FROM visits v JOIN sections s ON s.uuid = v.section_uuid WHERE v.uuid = ?
    """

    def _version_dict(self, row: dict, first: dict, datum: dict | None) -> dict:
        out = {
            "uuid": row["station_uuid"],
            "version": row["uuid"],
            "visit_uuid": row["visit_uuid"],
            "action": row["action"],
            "station": row["station"],
            "reading": row["reading"],
            "code": row["code"],
            "note": row["note"],
            "seq": row["seq"],
            "removed": row["action"] == "remove",
            "created": first["created"],
            "modified": row["created"],
            "device": row["device"],
        }
        if datum is not None:
            out["elevation"] = elevations(datum, [row["station"]], [row["reading"]])[0]
        return out

    def save_station(
        self, visit_uuid: str, station: float, reading: float, code: str = "", note: str = ""
    ) -> dict:
        """Save one reading, durably committed before returning.

        ``station`` is the tape distance and ``reading`` the plumb reading down from the line
        (or the rod foresight), both in the visit's unit.  Returns {uuid, version, visit_uuid,
        action, station, reading, elevation, code, note, seq, removed, created, modified,
        device}; ``elevation`` is line - reading (or HI - foresight), None until known.
        """
        values = {
            "station": number(station, "station"),
            "reading": number(reading, "reading"),
            "code": text(code, "feature code"),
            "note": text(note, "note"),
        }
        stamp = now()
        row = {"uuid": new_uuid(), "station_uuid": new_uuid(), "visit_uuid": str(visit_uuid),
               "action": "add", **values, "seq": 0, "undoes": None, "created": stamp,
               "device": self._device}  # fmt: skip
        with self.transaction():
            datum = self._row(self._REDUCE_SQL, [row["visit_uuid"]])
            if datum is None:
                raise StoreError(f"no visit with id {visit_uuid!r} in this store")
            # The entry number comes from the index on (visit_uuid, seq) inside the INSERT.
            (row["seq"],) = self.conn.execute(self._ADD_SQL, list(row.values())[:-4] + [
                row["visit_uuid"], row["created"], row["device"]]).fetchone()  # fmt: skip
        return self._version_dict(row, row, datum)

    _ADD_SQL = """
        INSERT INTO station_versions (uuid, station_uuid, visit_uuid, action, station, reading,
                                      code, note, seq, undoes, created, device)
        SELECT ?, ?, ?, ?, ?, ?, ?, ?,
               coalesce((SELECT max(seq) FROM station_versions WHERE visit_uuid = ?), 0) + 1,
               NULL, ?, ?
        RETURNING seq
    """

    def _versions(self, visit_uuid: str) -> list[dict]:
        return self._rows(
            "SELECT * FROM station_versions WHERE visit_uuid = ? ORDER BY id", [visit_uuid]
        )

    def stations(self, visit_uuid: str) -> list[dict]:
        """Current stations of a visit sorted by station, then entry order (so a vertical face
        keeps its two readings in the order read); dicts as :meth:`save_station`."""
        datum = self._row(self._REDUCE_SQL, [str(visit_uuid)])
        if datum is None:
            raise StoreError(f"no visit with id {visit_uuid!r} in this store")
        current, first, _ = replay(self._versions(visit_uuid))
        live = [v for v in current.values() if v["action"] != "remove"]
        live.sort(key=lambda v: (v["station"], v["seq"]))
        out = [self._version_dict(v, first[v["station_uuid"]], None) for v in live]
        heights = elevations(datum, [v["station"] for v in live], [v["reading"] for v in live])
        for record, elevation in zip(out, heights, strict=True):
            record["elevation"] = elevation
        return out

    def _current(self, station_uuid: str) -> tuple[dict, dict]:
        row = self._row(
            "SELECT visit_uuid FROM station_versions WHERE station_uuid = ?", [str(station_uuid)]
        )
        if row is None:
            raise StoreError(f"no station with id {station_uuid!r} in this store")
        versions = [
            v for v in self._versions(row["visit_uuid"]) if v["station_uuid"] == station_uuid
        ]
        current, first, _ = replay(versions)
        if station_uuid not in current or current[station_uuid]["action"] == "remove":
            raise StoreError("that station was removed or undone; enter it again")
        return current[station_uuid], first[station_uuid]

    def _supersede(self, station_uuid: str, action: str, changes: dict) -> dict:
        unknown = set(changes) - set(STATION_FIELDS)
        if unknown:
            raise StoreError(f"cannot change {', '.join(sorted(unknown))} of a station")
        checks = {"station": number, "reading": number, "code": text, "note": text}
        changes = {k: checks[k](v, k) for k, v in changes.items()}
        with self.transaction():
            old, first = self._current(station_uuid)
            row = {**old, **changes, "uuid": new_uuid(), "action": action, "created": now(),
                   "device": self._device}  # fmt: skip
            row.pop("id")
            self._insert("station_versions", row)
            datum = self._row(self._REDUCE_SQL, [row["visit_uuid"]])
        return self._version_dict(row, first, datum)

    def correct_station(self, station_uuid: str, **changes) -> dict:
        """Supersede a station with corrected station/reading/code/note (the old version stays
        in :meth:`station_history`); returns the new current dict as :meth:`save_station`."""
        return self._supersede(station_uuid, "correct", changes)

    def remove_station(self, station_uuid: str) -> dict:
        """Supersede a station with a ``removed`` version; returns that version's dict."""
        return self._supersede(station_uuid, "remove", {})

    def station_history(self, station_uuid: str) -> list[dict]:
        """Every version of a station, oldest first: :meth:`save_station`'s keys (``modified``
        is when that version was written) plus ``undone`` (bool)."""
        versions = self._rows(
            "SELECT * FROM station_versions WHERE station_uuid = ? AND action != 'undo' ORDER BY id",
            [station_uuid],
        )
        if not versions:
            raise StoreError(f"no station with id {station_uuid!r} in this store")
        datum = self._row(self._REDUCE_SQL, [versions[0]["visit_uuid"]])
        undone = {
            r[0]
            for r in self.conn.execute(
                "SELECT undoes FROM station_versions WHERE visit_uuid = ? AND action = 'undo'",
                [versions[0]["visit_uuid"]],
            )
        }
        out = []
        for v in versions:
            record = self._version_dict(v, versions[0], datum)
            record["undone"] = v["uuid"] in undone
            out.append(record)
        return out

    def undo(self, visit_uuid: str) -> dict | None:
        """Undo the latest station change (add, correct or remove) of a visit not yet undone.

        Nothing is deleted: an ``undo`` version marks the change undone.  Returns the undone
        version (as :meth:`station_history`) with ``current``: the station now (or None when it
        no longer exists); None when there is nothing left to undo.
        """
        with self.transaction():
            versions = self._versions(str(visit_uuid))
            _, first, undone = replay(versions)
            target = next(
                (
                    v
                    for v in reversed(versions)
                    if v["action"] != "undo" and v["uuid"] not in undone
                ),
                None,
            )
            if target is None:
                return None
            self._insert(
                "station_versions",
                {"uuid": new_uuid(), "station_uuid": target["station_uuid"],
                 "visit_uuid": target["visit_uuid"], "action": "undo", "seq": target["seq"],
                 "undoes": target["uuid"], "created": now(), "device": self._device},
            )  # fmt: skip
        datum = self._row(self._REDUCE_SQL, [target["visit_uuid"]])
        result = self._version_dict(target, first[target["station_uuid"]], datum)
        result["undone"] = True
        try:
            result["current"] = self._version_dict(*self._current(target["station_uuid"]), datum)
        except StoreError:
            result["current"] = None
        return result

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

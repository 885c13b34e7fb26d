"""Schema of the Stakeline store and its forward migrations (used only by :mod:`stakeline.store`).

The schema version lives in SQLite's ``PRAGMA user_version``.  ``MIGRATIONS[k]`` takes a file at
version ``k`` to ``k + 1``; a new version only ever *adds* a migration at the end, so every file
ever written can be carried forward one step at a time.  Each step runs inside one transaction
with the version bump, so a crash mid-migration leaves the file at the old version, whole.

Versions:

1. field records: sites, sections, visits, station versions (append-only), water levels,
   overrides, edits (before/after of every change to a site, section or visit), meta (device id).
2. device settings table (unit, crew, precision, tolerances) and an index of visits by section.
3. office import log: every package file accepted, with its checksum and outcome.
4. index of station versions by visit and entry order, so saving a reading stays as fast with
   the thousandth reading of a visit as with the first.
5. chain of custody: ``devices`` (signing keys: this store's own, and the devices the office
   trusts, with who trusted each and when, and when a key was retired); the import log records
   the key that signed each package (``signer_key``) and keeps held packages
   (``status = 'held'``).
6. gauging: ``meters`` (current meters kept on the device, with their ratings),
   ``visit_meters`` (the rating of each meter a visit used, recorded with the visit),
   ``velocity_versions`` (the velocity read at each vertical, append-only like station versions)
   and ``water_surface_versions`` (water-surface points for the slope, append-only).
7. demo visits marked: visits of the invented demo survey loaded before the app marked them
   (``settings["demo"]``) get the mark, so the app never packs them for the office.
"""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Callable

import sqlite_utils

STAMPS = {"created": str, "modified": str, "device": str}
"""Columns every record carries: ISO 8601 UTC times and the id of the device that wrote it."""


def _v1_field_records(db: sqlite_utils.Database) -> None:
    """Version 1: the field records."""
    db["meta"].create({"key": str, "value": str}, pk="key")
    db["sites"].create(
        {"uuid": str, "name": str, "stream": str, "description": str, **STAMPS}, pk="uuid"
    )
    db["sections"].create(
        {
            "uuid": str,
            "site_uuid": str,
            "name": str,
            "left_stake": str,
            "right_stake": str,
            "origin": str,
            "benchmark_name": str,
            "benchmark_elevation": float,
            "benchmark_assumed": int,
            "left_lon": float,
            "left_lat": float,
            "right_lon": float,
            "right_lat": float,
            **STAMPS,
        },
        pk="uuid",
        foreign_keys=[("site_uuid", "sites", "uuid")],
    )
    db["visits"].create(
        {
            "uuid": str,
            "section_uuid": str,
            "date": str,
            "crew": str,  # JSON list of names
            "unit": str,
            "method": str,
            "line_left": float,
            "line_right": float,
            "line_check": float,
            "stake_distance": float,
            "backsight": float,
            "notes": str,
            "planned": str,  # JSON list of stations
            "settings": str,  # JSON object
            "finished": str,  # time the visit was finished, or NULL
            **STAMPS,
        },
        pk="uuid",
        foreign_keys=[("section_uuid", "sections", "uuid")],
    )
    db["station_versions"].create(
        {
            "id": int,
            "uuid": str,
            "station_uuid": str,
            "visit_uuid": str,
            "action": str,  # add | correct | remove | undo
            "station": float,
            "reading": float,
            "code": str,
            "note": str,
            "seq": int,
            "undoes": str,
            "created": str,
            "device": str,
        },
        pk="id",
        not_null={"uuid", "station_uuid", "visit_uuid", "action", "created", "device"},
    )
    db["station_versions"].create_index(["uuid"], unique=True)
    db["station_versions"].create_index(["visit_uuid", "id"])
    for name, columns in {
        "water_levels": {"elevation": float, "time": str},
        "overrides": {"kind": str, "station": float, "reason": str},
    }.items():
        db[name].create({"uuid": str, "visit_uuid": str, **columns, **STAMPS}, pk="uuid")
        db[name].create_index(["visit_uuid"])
    db["edits"].create(
        {
            "id": int,
            "uuid": str,
            "record_table": str,
            "record_uuid": str,
            "before": str,  # JSON object of the changed fields' old values
            "after": str,  # JSON object of their new values
            "created": str,
            "device": str,
        },
        pk="id",
    )
    db["edits"].create_index(["uuid"], unique=True)
    db["edits"].create_index(["record_uuid", "id"])


def _v2_settings(db: sqlite_utils.Database) -> None:
    """Version 2: device settings, and visits found by section without a table scan."""
    db["settings"].create({"key": str, "value": str, "modified": str}, pk="key")
    db["visits"].create_index(["section_uuid", "date"])


def _v3_import_log(db: sqlite_utils.Database) -> None:
    """Version 3: the office's log of imported package files (idempotent import, conflicts)."""
    db["packages"].create(
        {
            "file_sha": str,
            "content_sha": str,
            "visit_uuid": str,
            "device": str,
            "status": str,  # imported | updated | present | conflict
            "reason": str,
            "content": str,  # the package's content, canonical JSON (kept whole for review)
            "imported": str,
            "resolved": str,
        },
        pk="file_sha",
    )
    db["packages"].create_index(["content_sha"])
    db["packages"].create_index(["visit_uuid"])


def _v4_entry_order_index(db: sqlite_utils.Database) -> None:
    """Version 4: the next entry number of a visit comes from an index, not a table scan."""
    db["station_versions"].create_index(["visit_uuid", "seq"])


def _v5_custody(db: sqlite_utils.Database) -> None:
    """Version 5: signing keys of devices, and the signer of every logged package."""
    db["devices"].create(
        {
            "public_key": str,  # Ed25519 public key, 64 hex digits
            "device_id": str,
            "created": str,  # when the key pair was made (as the device says)
            "own": int,  # 1: this store's own key (its private half is beside the store)
            "trusted_by": str,  # who told this store to trust the key (person@host)
            "trusted_at": str,
            "retired_at": str,  # packages signed from then on are held
            "retired_by": str,
            "lost": int,  # 1: every package of this key is held, whatever time it claims
            "note": str,
        },
        pk="public_key",
    )
    db["devices"].create_index(["device_id"])
    db["packages"].add_column("signer_key", str)
    db["packages"].create_index(["status", "resolved"])


_METER_COLUMNS = {
    "serial": str,
    "kind": str,  # rotating | electromagnetic | acoustic
    "unit": str,  # length unit of a, b and the rated range
    "a": float,  # v = a + b·N (unit/s), N revolutions per second; NULL for direct meters
    "b": float,  # unit per revolution
    "split": float,  # rev/s from which the second line a_high + b_high·N applies
    "a_high": float,
    "b_high": float,
    "lowest": float,  # rated range (unit/s)
    "highest": float,
    "note": str,
}


def _v6_gauging(db: sqlite_utils.Database) -> None:
    """Version 6: current meters, the velocities read at the verticals, water-surface points."""
    db["meters"].create({"uuid": str, **_METER_COLUMNS, **STAMPS}, pk="uuid")
    db["meters"].create_index(["serial"])
    db["visit_meters"].create(
        {"uuid": str, "visit_uuid": str, "meter_uuid": str, **_METER_COLUMNS, **STAMPS},
        pk="uuid",
    )
    db["visit_meters"].create_index(["visit_uuid", "meter_uuid"], unique=True)
    versions = {"id": int, "uuid": str, "visit_uuid": str, "action": str}
    tail = {"note": str, "seq": int, "undoes": str, "created": str, "device": str}
    required = {"uuid", "visit_uuid", "action", "created", "device"}
    db["velocity_versions"].create(
        {
            **versions,
            "vertical_uuid": str,
            "station": float,
            "method": str,  # one-point | two-point | three-point | surface | five-point
            "points": str,  # JSON: point name -> {"velocity": v} or {"revolutions", "seconds"}
            "meter_uuid": str,
            "angle": float,  # degrees between the flow and the normal to the section
            "depth": float,  # depth on the wading rod, when the crew typed it
            **tail,
        },
        pk="id",
        not_null=required | {"vertical_uuid"},
    )
    db["water_surface_versions"].create(
        {**versions, "point_uuid": str, "distance": float, "elevation": float, **tail},
        pk="id",
        not_null=required | {"point_uuid"},
    )
    for table, identity in (("velocity_versions", "vertical_uuid"),
                            ("water_surface_versions", "point_uuid")):  # fmt: skip
        db[table].create_index(["uuid"], unique=True)
        db[table].create_index(["visit_uuid", "id"])
        db[table].create_index([identity])


DEMO_SITE = "Tessaly Creek at Birchmoor Footbridge"
"""Site name of the invented demo survey (``demo_data/tessaly_creek.json``), as every version of
the demo has named it; frozen here so that the version-7 step stays what it was."""

DEMO_DEVICES = ("tablet-01", "tablet-02")
"""Device ids the invented demo survey stamps its visits with (``demo_data``), frozen here."""


def _v7_demo_marks(db: sqlite_utils.Database) -> None:
    """Version 7: mark the visits of the invented demo survey as demo (``settings["demo"]``)
    where an earlier version loaded them without the mark: finished visits on the demo site
    stamped by one of the demo's devices.  A crew's own visits are stamped with their device's
    id, so they are never taken for demo data."""
    from stakeline.store.values import canonical_json

    marks = ", ".join("?" for _ in DEMO_DEVICES)
    rows = db.conn.execute(
        "SELECT v.uuid, v.settings FROM visits v JOIN sections s ON s.uuid = v.section_uuid"
        f" JOIN sites t ON t.uuid = s.site_uuid WHERE t.name = ? AND v.device IN ({marks})"
        " AND v.finished IS NOT NULL",
        [DEMO_SITE, *DEMO_DEVICES],
    ).fetchall()
    for uuid, text in rows:
        try:
            settings = json.loads(text or "{}")
        except ValueError:
            continue  # a damaged settings text is the store check's to report, not ours
        if isinstance(settings, dict) and not settings.get("demo"):
            settings["demo"] = True
            db.conn.execute(
                "UPDATE visits SET settings = ? WHERE uuid = ?", [canonical_json(settings), uuid]
            )


MIGRATIONS: list[Callable[[sqlite_utils.Database], None]] = [
    _v1_field_records,
    _v2_settings,
    _v3_import_log,
    _v4_entry_order_index,
    _v5_custody,
    _v6_gauging,
    _v7_demo_marks,
]
"""``MIGRATIONS[k]`` carries a store from schema version ``k`` to ``k + 1``."""

LATEST = len(MIGRATIONS)
"""The schema version this code writes."""


def schema_version(conn: sqlite3.Connection) -> int:
    """The schema version recorded in an open SQLite file (0 for a new, empty file)."""
    return int(conn.execute("PRAGMA user_version").fetchone()[0])


def migrate(db: sqlite_utils.Database, target: int = LATEST) -> int:
    """Apply the forward migrations that take ``db`` to version ``target``; returns that version.

    Each step and its version bump are one transaction.
    """
    conn = db.conn
    version = schema_version(conn)
    while version < target:
        conn.execute("BEGIN IMMEDIATE")
        try:
            if schema_version(conn) == version:  # another process may have migrated it
                MIGRATIONS[version](db)
                conn.execute(f"PRAGMA user_version = {version + 1:d}")
            conn.execute("COMMIT")
        except BaseException:
            if conn.in_transaction:
                conn.execute("ROLLBACK")
            raise
        version = schema_version(conn)
    return version

"""The store's side of office sync: a visit's raw records out, and a merge of them back in.

One part of :class:`stakeline.store.Store`; the file format, checksums, signatures and limits
live in :mod:`stakeline.store.package`, which holds no SQL.

Merging never overwrites.  Each site, section and visit has a history of changes with their own
UUIDs (``edits``; for a visit also its station versions, water levels, overrides and gauging
records: the meters it was gauged with, velocity versions and water-surface versions).  When the
incoming history contains the office's, the office copy is brought forward; when the office's
contains the incoming one, nothing changes; when each holds changes the other lacks, the office
copy stays as it is, the incoming package is kept whole in the ``packages`` table and the
import reports a conflict for a person to resolve.
"""

from __future__ import annotations

import json
import re
import sqlite3
from typing import Any

from stakeline.store import signing
from stakeline.store.columns import check_columns
from stakeline.store.connection import StoreConnection
from stakeline.store.values import StoreError, canonical_json, choice, now, replay

RECORD_TABLES = ("sites", "sections", "visits")
CHILD_TABLES = ("station_versions", "water_levels", "overrides", "visit_meters",
                "velocity_versions", "water_surface_versions")  # fmt: skip
"""A visit's own records, merged by history with it (packages of format 2 and older have no
gauging records: their lists count as empty)."""
JSON_COLUMNS = {"crew", "planned", "settings", "before", "after", "points"}
"""Columns held as JSON text in SQLite and as JSON values in a package."""


def _decode(row: dict) -> dict:
    out = {k: (json.loads(v) if k in JSON_COLUMNS and v is not None else v) for k, v in row.items()}
    out.pop("id", None)
    return out


def _children(records: dict) -> list[tuple[str, dict]]:
    """(table, record) of every child record of a package's visit, table by table."""
    return [(table, row) for table in CHILD_TABLES for row in records.get(table, ())]


def _encode(record: dict) -> dict:
    return {k: (canonical_json(v) if k in JSON_COLUMNS else v) for k, v in record.items()}


_HEX = re.compile(r"\A[0-9a-f]{8,64}\Z")
_LOG_KEYS = "file_sha, content_sha, visit_uuid, device, status, reason, imported, resolved"


class Sync:
    """Package export, office merge, the import log and held packages of a store."""

    def __init__(self, db: StoreConnection):
        self.db = db
        self._columns: dict[str, set[str]] = {}

    def visit_records(self, visit_uuid: str) -> dict[str, Any]:
        """Everything about one visit as plain JSON-ready data: ``site``, ``section``, ``visit``
        (raw rows), and lists ``edits`` (of the three), ``station_versions``, ``water_levels``,
        ``overrides``, ``visit_meters``, ``velocity_versions``, ``water_surface_versions``
        (every version, oldest first).  Lengths in the visit's unit."""
        visit = self.db.get("visits", visit_uuid, "visit")
        section = self.db.get("sections", visit["section_uuid"], "section")
        site = self.db.get("sites", section["site_uuid"], "site")
        owners = [site["uuid"], section["uuid"], visit["uuid"]]
        records: dict[str, Any] = {
            "site": _decode(site),
            "section": _decode(section),
            "visit": _decode(visit),
            "edits": [
                _decode(r)
                for r in self.db.rows(
                    "SELECT * FROM edits WHERE record_uuid IN (?, ?, ?) ORDER BY id", owners
                )
            ],
        }
        order = {"station_versions": "id", "water_levels": "created", "overrides": "created",
                 "visit_meters": "created, uuid", "velocity_versions": "id",
                 "water_surface_versions": "id"}  # fmt: skip
        for table in CHILD_TABLES:
            records[table] = [
                _decode(r)
                for r in self.db.rows(
                    f"SELECT * FROM {table} WHERE visit_uuid = ? ORDER BY {order[table]}",
                    [visit_uuid],
                )
            ]
        return records

    def package_seen(self, file_sha: str) -> dict | None:
        """The import log entry of a package file by its SHA-256, or None: {file_sha,
        content_sha, visit_uuid, device, status, reason, imported, resolved}."""
        return self.db.row(f"SELECT {_LOG_KEYS} FROM packages WHERE file_sha = ?", [file_sha])

    def conflicts(self) -> list[dict]:
        """Imported packages that conflict with the office copy and are not resolved yet
        (keys as :meth:`package_seen`), oldest first."""
        return self.db.rows(
            f"SELECT {_LOG_KEYS} FROM packages WHERE status = 'conflict' AND resolved IS NULL"
            " ORDER BY imported"
        )

    def held_packages(self) -> list[dict]:
        """Packages kept whole but not merged because their signature could not be trusted
        (unsigned, signature fails, untrusted or retired key), oldest first: the keys of
        :meth:`package_seen` plus ``signer_key`` (None when unsigned) and ``fingerprint``."""
        rows = self.db.rows(
            f"SELECT {_LOG_KEYS}, signer_key FROM packages WHERE status = 'held' ORDER BY imported"
        )
        for row in rows:
            key = row["signer_key"]
            row["fingerprint"] = signing.fingerprint(key) if signing.is_public_key(key) else None
        return rows

    def held_content(self, file_sha: str) -> str:
        """The whole text of a held package (to verify it again once its device is trusted)."""
        row = self.db.row(
            "SELECT content FROM packages WHERE file_sha = ? AND status = 'held'", [file_sha]
        )
        if row is None:
            raise StoreError(f"no held package with checksum {file_sha[:70]!r}")
        return row["content"]

    def hold_package(
        self, file_sha: str, visit_uuid: str, device: str, content: str,
        signer_key: str | None, reason: str,
    ) -> dict:  # fmt: skip
        """Keep a package whole without merging it (status ``held``) with the one-line
        ``reason``; returns {status, visit, message}.  Holding the same file again only
        updates the reason."""
        message = f"held: {reason}"
        with self.db.transaction():
            self.db.conn.execute(
                "INSERT INTO packages (file_sha, content_sha, visit_uuid, device, status, reason,"
                " content, imported, resolved, signer_key) VALUES (?, '', ?, ?, 'held', ?, ?, ?,"
                " NULL, ?) ON CONFLICT (file_sha) DO UPDATE SET reason = excluded.reason",
                [file_sha, visit_uuid, device, message, content, now(), signer_key],
            )
        return self._result("held", visit_uuid, message)

    def visit_signer(self, visit_uuid: str) -> dict | None:
        """Who signed the package that last brought this visit into the store: {device,
        public_key, fingerprint, trusted_by, trusted_at, retired_at, file_sha, imported};
        None when the visit was made here (or came unsigned before signing existed)."""
        row = self.db.row(
            "SELECT p.file_sha, p.imported, p.signer_key, d.device_id, d.trusted_by,"
            " d.trusted_at, d.retired_at FROM packages p JOIN devices d"
            " ON d.public_key = p.signer_key WHERE p.visit_uuid = ?"
            " AND p.status IN ('imported', 'updated') ORDER BY p.imported DESC LIMIT 1",
            [str(visit_uuid)],
        )
        if row is None:
            return None
        return {"device": row["device_id"], "public_key": row["signer_key"],
                "fingerprint": signing.fingerprint(row["signer_key"]),
                "trusted_by": row["trusted_by"], "trusted_at": row["trusted_at"],
                "retired_at": row["retired_at"], "file_sha": row["file_sha"],
                "imported": row["imported"]}  # fmt: skip

    def package_content(self, file_sha: str) -> dict:
        """The records of an imported package (as :meth:`visit_records`), e.g. to review a
        conflict."""
        row = self.db.row("SELECT content FROM packages WHERE file_sha = ?", [file_sha])
        if row is None:
            raise StoreError(f"no imported package with checksum {file_sha!r}")
        return json.loads(row["content"])["records"]

    def resolve_conflict(self, file_sha: str, keep: str = "office") -> dict:
        """Resolve an imported package's conflict; returns its log entry (as
        :meth:`package_seen`).  ``file_sha`` may be a unique start of the checksum (>= 8 hex).

        ``keep="office"``: the office copy stands.  ``keep="merge"``: every change in the
        package that the office lacks (station versions, water levels, overrides, field edits of
        the site, section and visit) is added after the office's own, so the package's
        corrections come last and win; nothing of either copy is dropped.  The package stays in
        the log either way.
        """
        choice(keep, ("office", "merge"), "keep")
        start = str(file_sha).strip().lower()
        if not _HEX.match(start):
            raise StoreError(
                f"no unresolved conflicts match {str(file_sha)[:70]!r}: give the start of a "
                "checksum (8 to 64 hex digits 0-9 a-f) from the list of conflicts"
            )
        entries = self.db.rows(
            "SELECT file_sha, content, visit_uuid FROM packages WHERE status = 'conflict'"
            " AND resolved IS NULL AND substr(file_sha, 1, ?) = ?",
            [len(start), start],
        )
        if len(entries) != 1:
            found = "several" if entries else "no"
            raise StoreError(f"{found} unresolved conflicts match {file_sha!r}; see the list")
        entry = entries[0]
        with self.db.transaction():
            if keep == "merge":
                self._merge_missing(json.loads(entry["content"])["records"])
            self.db.conn.execute(
                "UPDATE packages SET resolved = ?, reason = reason || ? WHERE file_sha = ?",
                [now(), f" -- resolved: {keep}", entry["file_sha"]],
            )
        return self.package_seen(entry["file_sha"])

    def _merge_missing(self, records: dict) -> None:
        """Add the records' changes the office lacks after the office's own (see
        :meth:`resolve_conflict`)."""
        for table, key in (("sites", "site"), ("sections", "section"), ("visits", "visit")):
            uuid = records[key]["uuid"]
            office = self._history(uuid, table)
            missing = [e for e in records["edits"] if e["record_uuid"] == uuid]
            missing = [e for e in missing if e["uuid"] not in office]
            for number, edit in enumerate(missing, start=1):
                after = edit["after"]  # raw column values, as the store logged them
                try:
                    check_columns(table, after)  # the store's own rules, identity refused
                except StoreError as exc:
                    raise StoreError(
                        f"cannot merge: change {number} to the {key} is not valid ({exc}); "
                        "keep the office copy instead"
                    ) from None
                if not after:
                    continue
                assignments = ", ".join(f"{k} = ?" for k in after)
                self.db.conn.execute(
                    f"UPDATE {table} SET {assignments}, modified = ?, device = ? WHERE uuid = ?",
                    [*after.values(), edit["created"], edit["device"], uuid],
                )
            children = _children(records) if key == "visit" else []
            history = [("edits", e) for e in missing] + children
            self._insert_history([(t, r) for t, r in history if r["uuid"] not in office])

    def import_visit_records(
        self,
        records: dict,
        file_sha: str,
        content_sha: str,
        device: str,
        content: str,
        signer_key: str | None = None,
    ) -> dict:
        """Merge a verified package's records in one transaction; returns {status, visit,
        message}, status one of ``imported``, ``updated``, ``present``, ``conflict``.

        ``content`` (the package's canonical text) is kept in the import log with the key that
        signed it (``signer_key``); a held entry of the same file is replaced.  Raises
        StoreError, leaving the store unchanged, when a record clashes with another visit's or
        holds a value out of range.
        """
        visit_uuid = records["visit"]["uuid"]
        try:
            with self.db.transaction():
                self.db.conn.execute(
                    "DELETE FROM packages WHERE file_sha = ? AND status = 'held'", [file_sha]
                )
                result = self._merge_package(records, content_sha, visit_uuid, device)
                self.db.insert(
                    "packages",
                    {"file_sha": file_sha, "content_sha": content_sha, "visit_uuid": visit_uuid,
                     "device": device, "status": result["status"], "reason": result["message"],
                     "content": content, "imported": now(), "resolved": None,
                     "signer_key": signer_key},
                )  # fmt: skip
        except sqlite3.IntegrityError as exc:
            raise StoreError(
                f"its records clash with other records in the office ({exc})"
            ) from None
        except (OverflowError, sqlite3.InterfaceError, sqlite3.ProgrammingError) as exc:
            raise StoreError(f"it holds a value the store cannot keep ({exc})") from None
        return result

    def _merge_package(self, records: dict, content_sha: str, visit_uuid: str, device: str) -> dict:
        label = f"visit {records['visit']['date']} {records['section']['name']!r}"
        same = self.db.row(
            "SELECT status, resolved FROM packages WHERE content_sha = ? AND visit_uuid = ? "
            "ORDER BY status = 'conflict' AND resolved IS NULL DESC LIMIT 1",
            [content_sha, visit_uuid],
        )
        if same is not None:
            if same["status"] == "conflict" and same["resolved"] is None:
                return self._result("conflict", visit_uuid, f"{label}: unresolved conflict, "
                                    "the same content was imported before")  # fmt: skip
            return self._result("present", visit_uuid, f"{label}: already present")
        edits = records["edits"]
        notes, conflict = [], False
        for table, key in (("sites", "site"), ("sections", "section")):
            record = records[key]
            own = [e for e in edits if e["record_uuid"] == record["uuid"]]
            outcome = self._merge_record(table, record, own, [])
            if outcome == "conflict":
                conflict = True
                notes.append(f"{key} {record['name']!r} differs from the office copy (kept)")
        own = [e for e in edits if e["record_uuid"] == visit_uuid]
        outcome = self._merge_record("visits", records["visit"], own, _children(records))
        current, _, _ = replay(records["station_versions"])
        count = sum(v["action"] != "remove" for v in current.values())
        if outcome == "conflict":
            conflict = True
            notes.insert(0, f"{label} was changed both in the office and on {device}; "
                         "the office copy is kept and this package saved for review")  # fmt: skip
        if conflict:
            return self._result("conflict", visit_uuid, "conflict: " + "; ".join(notes))
        extra = f" ({'; '.join(notes)})" if notes else ""
        if outcome == "new":
            return self._result(
                "imported", visit_uuid, f"imported {label}, {count} stations{extra}"
            )
        if outcome == "newer":
            return self._result("updated", visit_uuid, f"updated {label}, {count} stations{extra}")
        newer = "; the office copy is newer" if outcome == "older" else ""
        return self._result("present", visit_uuid, f"{label}: already present{newer}{extra}")

    @staticmethod
    def _result(status: str, visit_uuid: str, message: str) -> dict:
        return {"status": status, "visit": visit_uuid, "message": message}

    def _history(self, record_uuid: str, table: str) -> set[str]:
        found = {
            r[0]
            for r in self.db.conn.execute(
                "SELECT uuid FROM edits WHERE record_uuid = ?", [record_uuid]
            )
        }
        if table == "visits":
            for child in CHILD_TABLES:
                found.update(
                    r[0]
                    for r in self.db.conn.execute(
                        f"SELECT uuid FROM {child} WHERE visit_uuid = ?", [record_uuid]
                    )
                )
        return found

    def _checked(self, table: str, record: dict) -> dict:
        """``record`` encoded for ``table``; StoreError if it names a column the table lacks."""
        if table not in self._columns:
            self._columns[table] = self.db.columns(table)
        unknown = set(record) - self._columns[table] - {"id"}
        if unknown:
            raise StoreError(f"{table} records have no field {sorted(unknown)[0]!r}")
        return _encode(record)

    def _merge_record(
        self, table: str, record: dict, edits: list[dict], children: list[tuple[str, dict]]
    ) -> str:
        """Merge one site/section/visit with its history: ``new``, ``newer`` (office brought
        forward), ``same``, ``older`` (office already newer) or ``conflict`` (office kept)."""
        encoded = self._checked(table, record)
        existing = self.db.row(f"SELECT * FROM {table} WHERE uuid = ?", [record["uuid"]])
        history = [("edits", e) for e in edits] + children
        if existing is None:
            self.db.insert(table, encoded)
            self._insert_history(history)
            return "new"
        office = self._history(record["uuid"], table)
        incoming = {row["uuid"] for _, row in history}
        if incoming <= office:
            if incoming == office and existing != encoded:
                return "conflict"
            return "same" if incoming == office else "older"
        if not office <= incoming:
            return "conflict"
        columns = {k: v for k, v in encoded.items() if k != "uuid"}
        self.db.conn.execute(
            f"UPDATE {table} SET {', '.join(f'{k} = ?' for k in columns)} WHERE uuid = ?",
            [*columns.values(), record["uuid"]],
        )
        self._insert_history([(t, row) for t, row in history if row["uuid"] not in office])
        return "newer"

    def _insert_history(self, history: list[tuple[str, dict]]) -> None:
        """Insert history rows, one statement per table, keeping their order within a table."""
        by_table: dict[str, list[dict]] = {}
        for table, row in history:
            by_table.setdefault(table, []).append(self._checked(table, row))
        for table, rows in by_table.items():
            columns = list(rows[0])
            if any(list(row) != columns for row in rows):
                raise StoreError(f"{table} records do not all have the same fields")
            self.db.conn.executemany(
                f"INSERT INTO {table} ({', '.join(columns)}) VALUES "
                f"({', '.join('?' for _ in columns)})",
                [tuple(row.values()) for row in rows],
            )

"""Append-only versions of a visit's records, for the gauging parts of the store.

A record that the crew enters, corrects, removes and undoes (a velocity read at a vertical, a
water-surface point) is kept as rows of one table: each change is a new row with its own
``uuid``, the record's identity (``identity`` column), the ``action`` (``add``, ``correct``,
``remove`` or ``undo``), the record's values and ``seq`` (the record's entry number in its
visit).  Nothing is overwritten; the current record is its latest version not undone, exactly as
:func:`stakeline.store.values.replay` gives it.  Used only inside
:mod:`stakeline.store`; every change runs inside the caller's transaction.
"""

from __future__ import annotations

from stakeline.store.connection import StoreConnection
from stakeline.store.values import StoreError, new_uuid, now, replay


class VersionLog:
    """The versions of one kind of record in ``table`` (identity column ``identity``; value
    columns ``fields``; ``what`` names one record in messages)."""

    def __init__(self, db: StoreConnection, table: str, identity: str, fields, what: str):
        self.db = db
        self.table = table
        self.identity = identity
        self.fields = tuple(fields)
        self.what = what

    def rows(self, visit_uuid: str) -> list[dict]:
        """Every version of the visit's records, oldest first (raw rows)."""
        return self.db.rows(
            f"SELECT * FROM {self.table} WHERE visit_uuid = ? ORDER BY id", [str(visit_uuid)]
        )

    def current(self, visit_uuid: str) -> list[tuple[dict, dict]]:
        """(current version, first version) of each live record of the visit, by entry order."""
        current, first, _ = replay(self.rows(visit_uuid), self.identity)
        live = [v for v in current.values() if v["action"] != "remove"]
        live.sort(key=lambda v: v["seq"])
        return [(v, first[v[self.identity]]) for v in live]

    def add(self, visit_uuid: str, values: dict) -> dict:
        """Insert a new record's first version (call inside a transaction); returns the row."""
        (seq,) = self.db.conn.execute(
            f"SELECT coalesce(max(seq), 0) + 1 FROM {self.table} WHERE visit_uuid = ?",
            [visit_uuid],
        ).fetchone()
        row = {"uuid": new_uuid(), self.identity: new_uuid(), "visit_uuid": visit_uuid,
               "action": "add", **values, "seq": seq, "undoes": None, "created": now(),
               "device": self.db.device}  # fmt: skip
        self.db.insert(self.table, row)
        return row

    def latest(self, record_uuid: str) -> tuple[dict, dict]:
        """(current version, first version) of one record; StoreError when it is unknown,
        removed or undone."""
        found = self.db.row(
            f"SELECT visit_uuid FROM {self.table} WHERE {self.identity} = ?", [str(record_uuid)]
        )
        if found is None:
            raise StoreError(f"no {self.what} with id {record_uuid!r} in this store")
        versions = [v for v in self.rows(found["visit_uuid"]) if v[self.identity] == record_uuid]
        current, first, _ = replay(versions, self.identity)
        if record_uuid not in current or current[record_uuid]["action"] == "remove":
            raise StoreError(f"that {self.what} was removed or undone; enter it again")
        return current[record_uuid], first[record_uuid]

    def supersede(self, record_uuid: str, action: str, values: dict) -> tuple[dict, dict]:
        """Write a ``correct`` or ``remove`` version of a record with ``values`` replacing the
        current ones (call inside a transaction); returns (new row, first version)."""
        old, first = self.latest(record_uuid)
        row = {**old, **values, "uuid": new_uuid(), "action": action, "undoes": None,
               "created": now(), "device": self.db.device}  # fmt: skip
        row.pop("id")
        self.db.insert(self.table, row)
        return row, first

    def history(self, record_uuid: str) -> list[tuple[dict, dict, bool]]:
        """(version, first version, undone) of every change to a record, oldest first."""
        versions = self.db.rows(
            f"SELECT * FROM {self.table} WHERE {self.identity} = ? AND action != 'undo' "
            "ORDER BY id",
            [str(record_uuid)],
        )
        if not versions:
            raise StoreError(f"no {self.what} with id {record_uuid!r} in this store")
        undone = {
            r["undoes"]
            for r in self.db.rows(
                f"SELECT undoes FROM {self.table} WHERE visit_uuid = ? AND action = 'undo'",
                [versions[0]["visit_uuid"]],
            )
        }
        return [(v, versions[0], v["uuid"] in undone) for v in versions]

    def undo(self, visit_uuid: str) -> tuple[dict, dict] | None:
        """Mark the visit's latest change not yet undone as undone (call inside a transaction);
        returns (the undone version, its record's first version), or None."""
        versions = self.rows(visit_uuid)
        _, first, undone = replay(versions, self.identity)
        target = next(
            (v for v in reversed(versions) if v["action"] != "undo" and v["uuid"] not in undone),
            None,
        )
        if target is None:
            return None
        self.db.insert(
            self.table,
            {"uuid": new_uuid(), self.identity: target[self.identity],
             "visit_uuid": target["visit_uuid"], "action": "undo", "seq": target["seq"],
             "undoes": target["uuid"], "created": now(), "device": self.db.device},
        )  # fmt: skip
        return target, first[target[self.identity]]

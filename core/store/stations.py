"""Stations as append-only versions: one part of :class:`stakeline.store.Store`.

Each add, correction, removal and undo is a new ``station_versions`` row; nothing is
overwritten.  The current station is its latest version not undone.  A version without a
station or a reading (which only a foreign package could bring) is never a current station.
"""

from __future__ import annotations

from stakeline.store.connection import StoreConnection
from stakeline.store.values import (
    STATION_FIELDS,
    StoreError,
    elevations,
    new_uuid,
    now,
    number,
    replay,
    text,
    version_dict,
)


def _placed(version: dict) -> bool:
    """Whether a version puts a reading at a station (both known)."""
    return version["station"] is not None and version["reading"] is not None


class Stations:
    """Reading, correcting, removing and undoing the stations of a store's visits."""

    def __init__(self, db: StoreConnection):
        self.db = db

    _REDUCE_SQL = """
        SELECT v.method, v.line_left, v.line_right, v.stake_distance, v.backsight,
               s.origin, s.benchmark_elevation
        FROM visits v JOIN sections s ON s.uuid = v.section_uuid WHERE v.uuid = ?
    """

    def _version_dict(self, row: dict, first: dict, datum: dict | None) -> dict:
        out = version_dict(row, first, "station_uuid", STATION_FIELDS)
        if datum is not None:
            placed = _placed(row)
            out["elevation"] = (
                elevations(datum, [row["station"]], [row["reading"]])[0] if placed else None
            )
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
               "device": self.db.device}  # fmt: skip
        params = [*list(row.values())[:8], row["visit_uuid"], stamp, self.db.device]
        with self.db.transaction():
            found = self.db.conn.execute(self._REDUCE_SQL, [row["visit_uuid"]]).fetchone()
            if found is None:
                raise StoreError(f"no visit with id {visit_uuid!r} in this store")
            # The entry number comes from the index on (visit_uuid, seq) inside the INSERT.
            (row["seq"],) = self.db.conn.execute(self._ADD_SQL, params).fetchone()
        return self._version_dict(row, row, dict(zip(self._DATUM_KEYS, found, strict=True)))

    _DATUM_KEYS = ("method", "line_left", "line_right", "stake_distance", "backsight", "origin",
                   "benchmark_elevation")  # fmt: skip

    _ADD_SQL = """
        INSERT INTO station_versions (uuid, station_uuid, visit_uuid, action, station, reading,
                                      code, note, seq, undoes, created, device)
        SELECT ?, ?, ?, ?, ?, ?, ?, ?,
               coalesce((SELECT max(seq) FROM station_versions WHERE visit_uuid = ?), 0) + 1,
               NULL, ?, ?
        RETURNING seq
    """

    def _versions(self, visit_uuid: str) -> list[dict]:
        return self.db.rows(
            "SELECT * FROM station_versions WHERE visit_uuid = ? ORDER BY id", [visit_uuid]
        )

    def stations(self, visit_uuid: str) -> list[dict]:
        """Current stations of a visit sorted by station, then entry order (so a vertical face
        keeps its two readings in the order read); dicts as :meth:`save_station`."""
        datum = self.db.row(self._REDUCE_SQL, [str(visit_uuid)])
        if datum is None:
            raise StoreError(f"no visit with id {visit_uuid!r} in this store")
        current, first, _ = replay(self._versions(visit_uuid))
        live = [v for v in current.values() if v["action"] != "remove" and _placed(v)]
        live.sort(key=lambda v: (v["station"], v["seq"]))
        out = [self._version_dict(v, first[v["station_uuid"]], None) for v in live]
        heights = elevations(datum, [v["station"] for v in live], [v["reading"] for v in live])
        for record, elevation in zip(out, heights, strict=True):
            record["elevation"] = elevation
        return out

    def _current(self, station_uuid: str) -> tuple[dict, dict]:
        row = self.db.row(
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
        with self.db.transaction():
            old, first = self._current(station_uuid)
            row = {**old, **changes, "uuid": new_uuid(), "action": action, "created": now(),
                   "device": self.db.device}  # fmt: skip
            row.pop("id")
            self.db.insert("station_versions", row)
            datum = self.db.row(self._REDUCE_SQL, [row["visit_uuid"]])
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
        versions = self.db.rows(
            "SELECT * FROM station_versions WHERE station_uuid = ? AND action != 'undo' ORDER BY id",
            [station_uuid],
        )
        if not versions:
            raise StoreError(f"no station with id {station_uuid!r} in this store")
        datum = self.db.row(self._REDUCE_SQL, [versions[0]["visit_uuid"]])
        undone = {
            r[0]
            for r in self.db.conn.execute(
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
        with self.db.transaction():
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
            self.db.insert(
                "station_versions",
                {"uuid": new_uuid(), "station_uuid": target["station_uuid"],
                 "visit_uuid": target["visit_uuid"], "action": "undo", "seq": target["seq"],
                 "undoes": target["uuid"], "created": now(), "device": self.db.device},
            )  # fmt: skip
        datum = self.db.row(self._REDUCE_SQL, [target["visit_uuid"]])
        result = self._version_dict(target, first[target["station_uuid"]], datum)
        result["undone"] = True
        try:
            result["current"] = self._version_dict(*self._current(target["station_uuid"]), datum)
        except StoreError:
            result["current"] = None
        return result

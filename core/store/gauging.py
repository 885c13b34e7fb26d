"""Gauging records: current meters, velocities at the verticals, water-surface points and the
gauging's settings -- one part of :class:`stakeline.store.Store`.

* **Meters** are kept on the device (``meters``): serial, kind, rating ``v = a + b·N`` (an
  optional second line from ``split`` rev/s) and rated range.  A meter record never changes: a
  meter rated again is added again.  The first time a visit uses a meter, its record is copied
  into ``visit_meters``, so the visit (and its package) carries the rating it was gauged with.
* **Velocities** are read per vertical (a station of the section): the method of the vertical,
  the points read (a velocity read directly, or revolutions and seconds through the meter's
  rating), the meter, the angle of the flow to the normal of the section, the wading rod's
  depth when typed, and a note.  Append-only versions, like station readings: every add,
  correction, removal and undo is a new row of ``velocity_versions``.
* **Water-surface points** (distance along the stream, water-surface elevation, note) for the
  slope, append-only in ``water_surface_versions``.
* **Settings** of the gauging (midsection or mean-section; surface coefficient) live in the
  visit's ``settings`` under ``"gauging"``, so they travel and merge with the visit's edits.

Every change is one transaction, committed before the method returns; values are checked by
the store's column rules (:mod:`stakeline.store.columns`).  Lengths in the visit's unit.
"""

from __future__ import annotations

import json

from stakeline.store.columns import (
    GAUGING_DEFAULTS,
    GAUGING_KEY,
    METER_FIELDS,
    check_columns,
    check_gauging_settings,
    check_meter,
    check_velocity,
    check_water_surface,
)
from stakeline.store.connection import StoreConnection
from stakeline.store.values import StoreError, canonical_json, version_dict
from stakeline.store.versions import VersionLog

VELOCITY_FIELDS = ("station", "method", "points", "meter_uuid", "angle", "depth", "note")
"""Values of a velocity version (a vertical), after its identity."""

SURFACE_FIELDS = ("distance", "elevation", "note")
"""Values of a water-surface point version."""

SAME_STATION = 1e-9
"""Two verticals closer than this (survey unit) are at the same station."""


def _vertical_dict(row: dict, first: dict) -> dict:
    out = version_dict(row, first, "vertical_uuid", VELOCITY_FIELDS)
    out["points"] = json.loads(row["points"]) if row["points"] else {}
    return out


def _point_dict(row: dict, first: dict) -> dict:
    return version_dict(row, first, "point_uuid", SURFACE_FIELDS)


class Gauging:
    """Meters, velocities, water-surface points and gauging settings of a store's visits."""

    def __init__(self, db: StoreConnection):
        self.db = db
        self._verticals = VersionLog(
            db, "velocity_versions", "vertical_uuid", VELOCITY_FIELDS, "vertical"
        )
        self._surface = VersionLog(
            db, "water_surface_versions", "point_uuid", SURFACE_FIELDS, "water-surface point"
        )

    # -- meters -------------------------------------------------------------------------------
    def add_meter(
        self,
        serial: str,
        kind: str = "rotating",
        a: float | None = None,
        b: float | None = None,
        *,
        unit: str = "m",
        split: float | None = None,
        a_high: float | None = None,
        b_high: float | None = None,
        lowest: float | None = None,
        highest: float | None = None,
        note: str = "",
    ) -> dict:
        """Keep a current meter on the device; returns :meth:`meter`'s dict.

        ``kind`` is ``rotating`` (velocity ``v = a + b·N`` from N revolutions per second: ``a``
        in unit/s, ``b`` in unit per revolution, in length ``unit``; from ``split`` rev/s the
        second line ``a_high + b_high·N``), ``electromagnetic`` or ``acoustic`` (read directly:
        no a or b).  ``lowest``/``highest``: the rated range (unit/s), optional.
        """
        values = dict(serial=serial, kind=kind, unit=unit, a=a, b=b, split=split,
                      a_high=a_high, b_high=b_high, lowest=lowest, highest=highest, note=note)  # fmt: skip
        record = self.db.stamped(**check_meter(values))
        with self.db.transaction():
            self.db.insert("meters", record)
        return record

    def meters(self) -> list[dict]:
        """The meters kept on this device by serial, then when added (keys as :meth:`meter`)."""
        return self.db.rows("SELECT * FROM meters ORDER BY serial COLLATE NOCASE, created")

    def meter(self, meter_uuid: str) -> dict:
        """One meter: uuid, serial, kind, unit, a, b, split, a_high, b_high, lowest, highest,
        note, created, modified, device."""
        return self.db.get("meters", meter_uuid, "meter")

    def visit_meters(self, visit_uuid: str) -> list[dict]:
        """The meters a visit was gauged with, as recorded with it (oldest first): the keys of
        :meth:`meter` (``uuid`` being the copy's own) plus ``visit_uuid`` and ``meter_uuid``."""
        return self.db.rows(
            "SELECT * FROM visit_meters WHERE visit_uuid = ? ORDER BY created, uuid",
            [str(visit_uuid)],
        )

    def _record_meter(self, visit_uuid: str, meter_uuid: str | None, points: dict) -> None:
        """Copy a meter's record into the visit the first time the visit uses it (inside the
        caller's transaction); refuses an unknown meter or revolutions on a direct meter."""
        if meter_uuid is None:
            return
        meter = self.db.row(
            "SELECT * FROM visit_meters WHERE visit_uuid = ? AND meter_uuid = ?",
            [visit_uuid, meter_uuid],
        )
        if meter is None:
            meter = self.db.row("SELECT * FROM meters WHERE uuid = ?", [meter_uuid])
            if meter is None:
                raise StoreError(f"no meter with id {meter_uuid!r} on this device; add it first")
            copy = {name: meter[name] for name in METER_FIELDS}
            self.db.insert(
                "visit_meters",
                self.db.stamped(visit_uuid=visit_uuid, meter_uuid=meter_uuid, **copy),
            )
        counted = [name for name, reading in points.items() if "revolutions" in reading]
        if counted and meter["a"] is None:
            raise StoreError(
                f"meter {meter['serial']} ({meter['kind']}) reads velocities directly: type the "
                f"velocity at {counted[0]}, not revolutions"
            )

    # -- velocities at the verticals ----------------------------------------------------------
    def _visit(self, visit_uuid: str) -> str:
        return self.db.get("visits", visit_uuid, "visit")["uuid"]

    def _same_station(self, visit_uuid: str, station: float, other_than: str | None) -> None:
        for row, _ in self._verticals.current(visit_uuid):
            if row["vertical_uuid"] != other_than and abs(row["station"] - station) < SAME_STATION:
                raise StoreError(
                    f"station {station:g} already has a velocity; correct that vertical instead"
                )

    def save_velocity(
        self,
        visit_uuid: str,
        station: float,
        method: str,
        points: dict,
        *,
        meter_uuid: str | None = None,
        angle: float | None = None,
        depth: float | None = None,
        note: str = "",
    ) -> dict:
        """Save the velocity read at a new vertical, durably committed before returning.

        ``station`` (survey unit) is the vertical's station; ``method`` one of
        :data:`stakeline.gauging.vertical.VERTICAL_METHODS`; ``points`` maps the points read so
        far (``v02``, ``v06``, ``v08``, ``surface``, ``bed``, as the method reads them) to
        ``{"velocity": v}`` (unit/s) or ``{"revolutions": n, "seconds": t}`` (through the
        rating of meter ``meter_uuid``); ``angle`` the angle (degrees) between the flow and the
        normal to the section; ``depth`` the wading rod's depth (survey unit) when typed.  One
        vertical per station: a station already read is refused (correct it instead).
        Returns {uuid, version, visit_uuid, action, station, method, points, meter_uuid, angle,
        depth, note, seq, removed, created, modified, device}.
        """
        values = check_velocity(dict(station=station, method=method, points=points,
                                     meter_uuid=meter_uuid, angle=angle, depth=depth, note=note))  # fmt: skip
        with self.db.transaction():
            visit = self._visit(visit_uuid)
            self._same_station(visit, values["station"], None)
            self._record_meter(visit, values["meter_uuid"], values["points"])
            row = self._verticals.add(visit, {**values, "points": canonical_json(values["points"])})
        return _vertical_dict(row, row)

    def correct_velocity(self, vertical_uuid: str, **changes) -> dict:
        """Supersede a vertical with changed values (any of station, method, points,
        meter_uuid, angle, depth, note; the old version stays in :meth:`velocity_history`);
        returns the new current dict as :meth:`save_velocity`."""
        unknown = set(changes) - set(VELOCITY_FIELDS)
        if unknown:
            raise StoreError(f"cannot change {', '.join(sorted(unknown))} of a vertical")
        with self.db.transaction():
            old, _ = self._verticals.latest(vertical_uuid)
            merged = {name: old[name] for name in VELOCITY_FIELDS}
            merged["points"] = json.loads(merged["points"])
            values = check_velocity({**merged, **changes})
            self._same_station(old["visit_uuid"], values["station"], vertical_uuid)
            self._record_meter(old["visit_uuid"], values["meter_uuid"], values["points"])
            row, first = self._verticals.supersede(
                vertical_uuid, "correct", {**values, "points": canonical_json(values["points"])}
            )
        return _vertical_dict(row, first)

    def remove_velocity(self, vertical_uuid: str) -> dict:
        """Supersede a vertical with a ``removed`` version; returns that version's dict."""
        with self.db.transaction():
            row, first = self._verticals.supersede(vertical_uuid, "remove", {})
        return _vertical_dict(row, first)

    def velocities(self, visit_uuid: str) -> list[dict]:
        """The visit's current verticals sorted by station (dicts as :meth:`save_velocity`)."""
        visit = self._visit(visit_uuid)
        out = [_vertical_dict(row, first) for row, first in self._verticals.current(visit)]
        return sorted(out, key=lambda v: (v["station"], v["seq"]))

    def velocity_history(self, vertical_uuid: str) -> list[dict]:
        """Every version of a vertical, oldest first: :meth:`save_velocity`'s keys (``modified``
        is when that version was written) plus ``undone`` (bool)."""
        return _history(self._verticals, vertical_uuid, _vertical_dict)

    def undo_velocity(self, visit_uuid: str) -> dict | None:
        """Undo the visit's latest velocity change (add, correct or remove) not yet undone.

        Nothing is deleted: an ``undo`` version marks the change undone.  Returns the undone
        version (as :meth:`velocity_history`) with ``current``: the vertical now (or None when
        it no longer exists); None when there is nothing left to undo.
        """
        return self._undo(self._verticals, visit_uuid, _vertical_dict)

    # -- water-surface points -----------------------------------------------------------------
    def add_water_surface_point(
        self, visit_uuid: str, distance: float, elevation: float, note: str = ""
    ) -> dict:
        """Save a water-surface point: ``distance`` along the stream from the section (survey
        unit, downstream positive, upstream negative) and the water-surface ``elevation`` read
        there.  Returns {uuid, version, visit_uuid, action, distance, elevation, note, seq,
        removed, created, modified, device}."""
        values = check_water_surface({"distance": distance, "elevation": elevation, "note": note})
        with self.db.transaction():
            row = self._surface.add(self._visit(visit_uuid), values)
        return _point_dict(row, row)

    def correct_water_surface_point(self, point_uuid: str, **changes) -> dict:
        """Supersede a water-surface point with changed distance, elevation or note; returns
        the new current dict as :meth:`add_water_surface_point`."""
        unknown = set(changes) - set(SURFACE_FIELDS)
        if unknown:
            raise StoreError(f"cannot change {', '.join(sorted(unknown))} of a water-surface point")
        with self.db.transaction():
            old, _ = self._surface.latest(point_uuid)
            values = check_water_surface({**{k: old[k] for k in SURFACE_FIELDS}, **changes})
            row, first = self._surface.supersede(point_uuid, "correct", values)
        return _point_dict(row, first)

    def remove_water_surface_point(self, point_uuid: str) -> dict:
        """Supersede a water-surface point with a ``removed`` version; returns its dict."""
        with self.db.transaction():
            row, first = self._surface.supersede(point_uuid, "remove", {})
        return _point_dict(row, first)

    def water_surface_points(self, visit_uuid: str) -> list[dict]:
        """The visit's current water-surface points by distance along the stream (dicts as
        :meth:`add_water_surface_point`)."""
        visit = self._visit(visit_uuid)
        out = [_point_dict(row, first) for row, first in self._surface.current(visit)]
        return sorted(out, key=lambda p: (p["distance"], p["seq"]))

    def water_surface_history(self, point_uuid: str) -> list[dict]:
        """Every version of a water-surface point, oldest first, with ``undone`` (bool)."""
        return _history(self._surface, point_uuid, _point_dict)

    def undo_water_surface_point(self, visit_uuid: str) -> dict | None:
        """Undo the visit's latest water-surface change not yet undone; returns the undone
        version with ``undone`` and ``current`` (as :meth:`undo_velocity`), or None."""
        return self._undo(self._surface, visit_uuid, _point_dict)

    def _undo(self, log, visit_uuid: str, as_dict) -> dict | None:
        """Undo the latest change of ``log`` (a version log) in a visit; the undone version as
        ``as_dict`` gives it, with ``undone`` and ``current`` (None when it no longer exists)."""
        with self.db.transaction():
            undone = log.undo(self._visit(visit_uuid))
        if undone is None:
            return None
        result = as_dict(*undone)
        result["undone"] = True
        try:
            result["current"] = as_dict(*log.latest(result["uuid"]))
        except StoreError:
            result["current"] = None
        return result

    # -- settings and the whole gauging -------------------------------------------------------
    def gauging_settings(self, visit_uuid: str) -> dict:
        """The visit's gauging settings with the defaults filled in: ``method`` (midsection or
        meansection) and ``surface_coefficient`` (mean / surface velocity)."""
        settings = json.loads(self.db.get("visits", visit_uuid, "visit")["settings"])
        return {**GAUGING_DEFAULTS, **settings.get(GAUGING_KEY, {})}

    def set_gauging_settings(
        self, visit_uuid: str, method: str | None = None, surface_coefficient: float | None = None
    ) -> dict:
        """Set the visit's gauging ``method`` and/or ``surface_coefficient`` (None: unchanged);
        logged with the visit's field history.  Returns :meth:`gauging_settings`."""
        visit = self.db.get("visits", visit_uuid, "visit")
        settings = json.loads(visit["settings"])
        given = {k: v for k, v in (("method", method),
                                   ("surface_coefficient", surface_coefficient)) if v is not None}  # fmt: skip
        settings[GAUGING_KEY] = check_gauging_settings({**settings.get(GAUGING_KEY, {}), **given})
        columns = check_columns("visits", {"settings": canonical_json(settings)})
        with self.db.transaction():
            self.db.update("visits", visit["uuid"], columns)
        return self.gauging_settings(visit_uuid)

    def gauging(self, visit_uuid: str) -> dict:
        """Everything about a visit's gauging, as plain data for the analysis: ``settings``
        (:meth:`gauging_settings`), ``verticals`` (:meth:`velocities`), ``meters``
        (:meth:`visit_meters`) and ``water_surface`` (:meth:`water_surface_points`)."""
        return {
            "settings": self.gauging_settings(visit_uuid),
            "verticals": self.velocities(visit_uuid),
            "meters": self.visit_meters(visit_uuid),
            "water_surface": self.water_surface_points(visit_uuid),
        }


def _history(log, uuid: str, as_dict) -> list[dict]:
    """Every version of one record of a version log, oldest first, with ``undone`` (bool)."""
    out = []
    for row, first, undone in log.history(uuid):
        record = as_dict(row, first)
        record["undone"] = undone
        out.append(record)
    return out

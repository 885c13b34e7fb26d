"""Visits: field metadata, water levels, overrides -- one part of :class:`stakeline.store.Store`.

Every change is one transaction; changed fields are logged in ``edits`` with old and new values.
"""

from __future__ import annotations

import json
from typing import Any

from stakeline.errors import SurveyError
from stakeline.store.columns import check_columns
from stakeline.store.connection import StoreConnection
from stakeline.store.values import (
    METHODS,
    TEXT_LIMIT,
    VISIT_FIELDS,
    StoreError,
    canonical_json,
    choice,
    iso_date,
    now,
    number,
    text,
)
from stakeline.survey import reduction


class Visits:
    """Visits, water levels and overrides of a store, over its shared connection."""

    def __init__(self, db: StoreConnection):
        self.db = db

    @staticmethod
    def _visit_columns(fields: dict) -> dict:
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
                except (SurveyError, TypeError) as exc:
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
        return check_columns("visits", columns)

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
        self.db.get("sections", section_uuid, "section")
        columns = self._visit_columns(
            dict(date=date, crew=crew, unit=unit, method=method, line_left=line_left,
                 line_right=line_right, line_check=line_check, notes=notes,
                 stake_distance=stake_distance, backsight=backsight)
        )  # fmt: skip
        record = self.db.stamped(
            section_uuid=section_uuid, planned="[]", settings="{}", finished=None, **columns
        )
        with self.db.transaction():
            self.db.insert("visits", record)
        return self.visit(record["uuid"])

    def update_visit(self, visit_uuid: str, **fields) -> dict:
        """Change fields of a visit (any of ``VISIT_FIELDS``); old values stay in history.

        The length unit cannot change once readings exist (they are in that unit).
        """
        visit = self.db.get("visits", visit_uuid, "visit")
        columns = self._visit_columns(fields)
        if columns.get("unit", visit["unit"]) != visit["unit"] and self._station_count(visit_uuid):
            raise StoreError(
                f"this visit already has readings in {visit['unit']}; its unit cannot change"
            )
        with self.db.transaction():
            self.db.update("visits", visit_uuid, columns)
        return self.visit(visit_uuid)

    def finish_visit(self, visit_uuid: str) -> dict:
        """Mark a visit finished (ready to pack); returns :meth:`visit`'s dict."""
        visit = self.db.get("visits", visit_uuid, "visit")
        if visit["finished"] is None:
            with self.db.transaction():
                self.db.update("visits", visit_uuid, {"finished": now()})
        return self.visit(visit_uuid)

    def reopen_visit(self, visit_uuid: str) -> dict:
        """Clear a visit's finished mark so the crew can go on; returns :meth:`visit`'s dict."""
        self.db.get("visits", visit_uuid, "visit")
        with self.db.transaction():
            self.db.update("visits", visit_uuid, {"finished": None})
        return self.visit(visit_uuid)

    def set_planned_stations(self, visit_uuid: str, stations: list[float]) -> None:
        """Record the spacing plan: the stations to read, survey unit, in tape order."""
        self.update_visit(visit_uuid, planned_stations=list(stations))

    def planned_stations(self, visit_uuid: str) -> list[float]:
        """The spacing plan set by :meth:`set_planned_stations` (survey unit)."""
        return json.loads(self.db.get("visits", visit_uuid, "visit")["planned"])

    _LIVE_SQL = """
        WITH undone AS (SELECT undoes FROM station_versions WHERE action = 'undo'{where}),
        live AS (SELECT max(id) AS id FROM station_versions
                 WHERE action != 'undo' AND uuid NOT IN undone{where} GROUP BY station_uuid)
        SELECT sv.visit_uuid, count(*) AS n FROM live JOIN station_versions sv ON sv.id = live.id
        WHERE sv.action != 'remove' AND sv.station IS NOT NULL AND sv.reading IS NOT NULL
        GROUP BY sv.visit_uuid
    """

    def _station_counts(self, visit_uuid: str | None = None) -> dict[str, int]:
        if visit_uuid is None:
            rows = self.db.rows(self._LIVE_SQL.format(where=""))
        else:
            sql = self._LIVE_SQL.format(where=" AND visit_uuid = ?")
            rows = self.db.rows(sql, [visit_uuid, visit_uuid])
        return {row["visit_uuid"]: row["n"] for row in rows}

    def _station_count(self, visit_uuid: str) -> int:
        return self._station_counts(visit_uuid).get(visit_uuid, 0)

    _VISIT_SQL = """
        SELECT v.*, s.name AS section, s.site_uuid, t.name AS site, s.origin,
               s.benchmark_elevation,
               max(v.modified,
                   coalesce((SELECT max(created) FROM station_versions
                             WHERE visit_uuid = v.uuid), ''),
                   coalesce((SELECT max(created) FROM water_levels
                             WHERE visit_uuid = v.uuid), ''),
                   coalesce((SELECT max(created) FROM overrides
                             WHERE visit_uuid = v.uuid), ''),
                   coalesce((SELECT max(created) FROM velocity_versions
                             WHERE visit_uuid = v.uuid), ''),
                   coalesce((SELECT max(created) FROM water_surface_versions
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
        row = self.db.row(self._VISIT_SQL + " WHERE v.uuid = ?", [str(visit_uuid)])
        if row is None:
            raise StoreError(f"no visit with id {visit_uuid!r} in this store")
        visit = self._visit_dict(row, self._station_counts(visit_uuid))
        visit["water_levels"] = self.db.rows(
            "SELECT * FROM water_levels WHERE visit_uuid = ? ORDER BY time, created", [visit_uuid]
        )
        return visit

    def visits(self, section_uuid: str | None = None) -> list[dict]:
        """Visits (of one section, or all) by date then site and section; each dict has uuid,
        site, section, date, station_count, finished, plus the keys of :meth:`visit` except
        water_levels."""
        where, params = ("WHERE v.section_uuid = ?", [section_uuid]) if section_uuid else ("", [])
        rows = self.db.rows(
            self._VISIT_SQL + where + " ORDER BY v.date, t.name, s.name, v.created", params
        )
        counts = self._station_counts()
        return [self._visit_dict(row, counts) for row in rows]

    def add_water_level(self, visit_uuid: str, elevation: float, time: str | None = None) -> dict:
        """Record a water-level observation (elevation, survey unit) at ``time`` (ISO 8601; now
        when None); returns {uuid, visit_uuid, elevation, time, created, modified, device}."""
        self.db.get("visits", visit_uuid, "visit")
        record = self.db.stamped(
            visit_uuid=visit_uuid,
            elevation=number(elevation, "water level"),
            time=text(time, "time") or now(),
        )
        with self.db.transaction():
            self.db.insert("water_levels", record)
        return record

    def add_override(self, visit_uuid: str, kind: str, station: float | None, reason: str) -> dict:
        """Record why a field-check finding is accepted; returns {uuid, visit_uuid, kind,
        station (survey unit or None), reason, created, modified, device}."""
        self.db.get("visits", visit_uuid, "visit")
        if not text(reason, "reason").strip():
            raise StoreError("an override needs a written reason")
        record = self.db.stamped(
            visit_uuid=visit_uuid,
            kind=text(kind, "finding kind"),
            station=number(station, "station", optional=True),
            reason=reason.strip(),
        )
        with self.db.transaction():
            self.db.insert("overrides", record)
        return record

    def overrides(self, visit_uuid: str) -> list[dict]:
        """The visit's overrides, oldest first (keys as :meth:`add_override`)."""
        return self.db.rows(
            "SELECT * FROM overrides WHERE visit_uuid = ? ORDER BY created", [visit_uuid]
        )

    def field_history(self, record_uuid: str) -> list[dict]:
        """Every change to a site's, section's or visit's fields, oldest first: {uuid,
        record_table, record_uuid, before, after (dicts of the changed fields' stored values),
        created, modified (= created), device}."""
        rows = self.db.rows(
            "SELECT * FROM edits WHERE record_uuid = ? ORDER BY id", [str(record_uuid)]
        )
        for row in rows:
            row.pop("id")
            row["before"], row["after"] = json.loads(row["before"]), json.loads(row["after"])
            row["modified"] = row["created"]  # a logged change is never changed itself
        return rows

"""Sites and their cross-sections: one part of :class:`stakeline.store.Store`.

Changes to a section's fields are logged in ``edits`` with the old and new values.
"""

from __future__ import annotations

from typing import Any

from stakeline.store.columns import check_columns
from stakeline.store.connection import StoreConnection
from stakeline.store.values import SECTION_FIELDS, StoreError, choice, coordinates, number, text


class Sites:
    """Sites and sections of a store, over its shared :class:`StoreConnection`."""

    def __init__(self, db: StoreConnection):
        self.db = db

    def create_site(self, name: str, stream: str = "", description: str = "") -> dict:
        """Add a site; returns {uuid, name, stream, description, created, modified, device}."""
        if not text(name, "site name").strip():
            raise StoreError("a site needs a name")
        columns = check_columns(
            "sites",
            {"name": name.strip(), "stream": text(stream, "stream"),
             "description": text(description, "description")},
        )  # fmt: skip
        record = self.db.stamped(**columns)
        with self.db.transaction():
            self.db.insert("sites", record)
        return record

    def sites(self) -> list[dict]:
        """All sites by name (same keys as :meth:`create_site`)."""
        return self.db.rows("SELECT * FROM sites ORDER BY name COLLATE NOCASE, created")

    @staticmethod
    def _section_columns(fields: dict) -> dict:
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
        return check_columns("sections", columns)

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
        self.db.get("sites", site_uuid, "site")
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
        record = self.db.stamped(site_uuid=site_uuid, **columns)
        with self.db.transaction():
            self.db.insert("sections", record)
        return self.section(record["uuid"])

    def update_section(self, section_uuid: str, **fields) -> dict:
        """Change fields of a section (any of ``SECTION_FIELDS``); old values stay in history."""
        self.db.get("sections", section_uuid, "section")
        columns = self._section_columns(fields)
        with self.db.transaction():
            self.db.update("sections", section_uuid, columns)
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
        row = self.db.row(self._SECTION_SQL + " WHERE s.uuid = ?", [str(section_uuid)])
        if row is None:
            raise StoreError(f"no section with id {section_uuid!r} in this store")
        return self._section_dict(row)

    def sections(self, site_uuid: str | None = None) -> list[dict]:
        """Sections (of one site, or all) sorted by site and name; keys as :meth:`section`."""
        where, params = ("WHERE s.site_uuid = ?", [site_uuid]) if site_uuid else ("", [])
        rows = self.db.rows(
            self._SECTION_SQL + where + " ORDER BY t.name COLLATE NOCASE, s.name COLLATE NOCASE",
            params,
        )
        return [self._section_dict(row) for row in rows]

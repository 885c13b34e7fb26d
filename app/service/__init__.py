"""The thin service layer between the screens and the core: the only place screens reach the
store, the geometry, the field checks and the package writer.

Screens hold a :class:`FieldService` (``stakeline.app.service``) and call one method per action; every
method takes and returns plain values (dicts, lists, floats) in the visit's length unit.  Work that
could take long (the field-check review, writing the package) runs on a :class:`Worker` thread and
reports back on the Kivy clock, so the UI thread never waits on it.
"""

from __future__ import annotations

import os
from datetime import date

import numpy as np
from stakeline.app.service.checks import META_KEYS, FieldChecks  # noqa: F401  (META_KEYS re-exported)
from stakeline.app.service.office import OfficeFigures
from stakeline.app.service.settings import (  # noqa: F401  (re-exported)
    DEFAULT_SETTINGS,
    PLUS_MINUS_KEYS,
    DeviceSettings,
)
from stakeline.app.service.util import (  # noqa: F401  (re-exported for the screens)
    ServiceError,
    Worker,
    next_station,
    parse_number,
    uniform_stations,
)
from stakeline.errors import SurveyError
from stakeline.survey.codes import CHIPS
from stakeline.survey.datum import Datum
from stakeline.survey.figures import figure_title
from stakeline.survey.geometry import FIGURES, Section

FEATURE_CODES = tuple(CHIPS)
"""Quick feature codes on the readings screen: (stored code, button text), from
:data:`stakeline.survey.codes.CHIPS`."""

POSITION_KEY = "field.position"
"""Setting that remembers the open visit and the station being read, for resuming after a crash."""


class FieldService(DeviceSettings, FieldChecks, OfficeFigures):
    """Everything the screens do with a visit, on one open store (the device settings come from
    :class:`stakeline.app.service.settings.DeviceSettings`, the field checks from
    :class:`stakeline.app.service.checks.FieldChecks`, the office figures of the section-detail screen from
    :class:`stakeline.app.service.office.OfficeFigures`).

    ``store`` is an open :class:`stakeline.store.Store`; ``outbox`` the folder finished packages go to
    when the settings do not name one.
    """

    def __init__(self, store, outbox: str = ""):
        self.store = store
        self.default_outbox = outbox
        self.worker = Worker()
        self._readings: dict[str, list[dict]] = {}  # visit -> current readings, until a change

    def checkpoint(self) -> bool:
        """Fold the store's journal into its file (app paused or stopping); True when done."""
        if self.store.closed:
            return False
        try:
            return self.store.checkpoint()
        except SurveyError:
            return False

    def close(self) -> None:
        """Close the store (checkpointing its journal)."""
        self.store.close()

    def outbox(self) -> str:
        """Folder for finished visit packages (created when first used)."""
        return self.settings()["outbox"] or self.default_outbox

    # --- home -------------------------------------------------------------------------------
    def overview(self) -> list[dict]:
        """Sections with their site, last visit date and status, the open visit if any, and the
        latest finished visit (``finished_visit``, for its office figures) if any."""
        open_visits: dict[str, str] = {}
        finished: dict[str, str] = {}  # section -> its latest finished visit with a ground line
        for visit in self.store.visits():
            if not visit["finished"]:
                open_visits[visit["section_uuid"]] = visit["uuid"]
            elif visit["station_count"] >= 2:
                finished[visit["section_uuid"]] = visit["uuid"]
        rows = []
        for section in self.store.sections():
            rows.append(
                {
                    "section_uuid": section["uuid"],
                    "site": section["site"],
                    "section": section["name"],
                    "last_date": section.get("last_visit_date") or "",
                    "last_status": section.get("last_visit_status") or "",
                    "open_visit": open_visits.get(section["uuid"]),
                    "finished_visit": finished.get(section["uuid"]),
                }
            )
        return rows

    def create_section(self, site_name: str, section_name: str) -> dict:
        """A new section on the named site (created when new); returns the section dict."""
        site_name, section_name = site_name.strip(), section_name.strip()
        if not site_name or not section_name:
            raise ServiceError("type a site name and a section name")
        site = next((s for s in self.store.sites() if s["name"] == site_name), None)
        if site is None:
            site = self.store.create_site(site_name)
        return self.store.create_section(site["uuid"], section_name)

    def start_visit(self, section_uuid: str, today: str | None = None) -> str:
        """Open a new visit on a section with the device's unit and crew; returns its uuid.

        Line heights and stake distance are carried over from the section's last visit (same
        stakes, same benchmark); the crew checks them on the stakes screen.
        """
        settings = self.settings()
        earlier = self.store.visits(section_uuid)
        carried = {}
        if earlier:
            last = earlier[-1]
            carried = {k: last[k] for k in ("line_left", "line_right", "stake_distance")}
        visit = self.store.start_visit(
            section_uuid,
            today or date.today().isoformat(),
            crew=tuple(settings["crew"]),
            unit=earlier[-1]["unit"] if earlier else settings["unit"],
            line_left=carried.get("line_left"),
            line_right=carried.get("line_right"),
        )
        if carried.get("stake_distance") is not None:
            self.store.update_visit(visit["uuid"], stake_distance=carried["stake_distance"])
        self.remember_position(visit["uuid"], None)
        return visit["uuid"]

    def visit(self, visit_uuid: str) -> dict:
        """The visit record (see :meth:`stakeline.store.Store.visit`)."""
        return self.store.visit(visit_uuid)

    def section_of(self, visit_uuid: str) -> dict:
        """The section record of a visit."""
        return self.store.section(self.store.visit(visit_uuid)["section_uuid"])

    # --- resuming ---------------------------------------------------------------------------
    def remember_position(self, visit_uuid: str, station: float | None) -> None:
        """Remember the open visit and the station being read (for resuming after a crash)."""
        self.store.set_setting(POSITION_KEY, {"visit": visit_uuid, "station": station})

    def resume_point(self) -> tuple[str, float | None] | None:
        """``(visit_uuid, station)`` of the unfinished visit to resume, or ``None``."""
        position = self.store.get_setting(POSITION_KEY)
        if not position or not position.get("visit"):
            return None
        try:
            visit = self.store.visit(position["visit"])
        except SurveyError:
            return None
        if visit["finished"]:
            return None
        return visit["uuid"], position.get("station")

    # --- stakes -----------------------------------------------------------------------------
    def stakes(self, visit_uuid: str) -> dict:
        """Everything on the stakes screen: stake names, origin, benchmark, line heights,
        line check, stake distance and coordinates."""
        visit = self.store.visit(visit_uuid)
        section = self.store.section(visit["section_uuid"])
        keys = ("left_stake", "right_stake", "origin", "benchmark_name", "benchmark_elevation")
        out = {k: section[k] for k in keys}
        out.update({k: visit[k] for k in ("line_left", "line_right", "line_check", "unit")})
        out["method"], out["backsight"] = visit["method"], visit["backsight"]
        out["stake_distance"] = visit["stake_distance"]
        out["left_coordinates"] = section["left_coordinates"]
        out["right_coordinates"] = section["right_coordinates"]
        out["section"], out["site"] = section["name"], section["site"]
        return out

    def save_stakes(self, visit_uuid: str, **fields):
        """Save the stakes screen; returns the line-level check verdict (see :meth:`line_check`)."""
        visit = self.store.visit(visit_uuid)
        section_keys = {
            "left_stake",
            "right_stake",
            "origin",
            "benchmark_name",
            "benchmark_elevation",
            "left_coordinates",
            "right_coordinates",
        }
        section_fields = {k: v for k, v in fields.items() if k in section_keys}
        visit_fields = {k: v for k, v in fields.items() if k not in section_keys}
        for side in ("left_stake", "right_stake"):
            if side in section_fields and not str(section_fields[side]).strip():
                raise ServiceError(f"the {side.replace('_', ' ')} needs a name")
        self._changed()  # line heights and origin change the elevations
        if section_fields:
            self.store.update_section(visit["section_uuid"], **section_fields)
        if visit_fields:
            self.store.update_visit(visit_uuid, **visit_fields)
        return self.line_check(visit_uuid)

    def line_check(self, visit_uuid: str):
        """The line-level check of the visit as a value
        (:class:`stakeline.survey.datum.LineVerdict`: ``within``, ``difference``, ``tolerance``,
        ``where``, ``text``), judged by the visit's datum with this device's tolerance -- the
        same rule the field checks follow."""
        visit = self.store.visit(visit_uuid)
        tolerance = self.check_settings(visit["unit"]).line_tolerance
        return Datum.from_visit(visit).line_check(visit["line_check"], tolerance=tolerance)

    # --- spacing ----------------------------------------------------------------------------
    def plan(self, visit_uuid: str) -> list[float]:
        """The planned stations of a visit (survey unit), in order."""
        return sorted(self.store.planned_stations(visit_uuid))

    def save_plan(self, visit_uuid: str, stations) -> list[float]:
        """Replace the plan with these stations (duplicates dropped, sorted); returns it."""
        plan = sorted({round(float(s), 6) for s in stations})
        if any(s < 0 for s in plan):
            raise ServiceError("stations are tape distances and cannot be negative")
        self.store.set_planned_stations(visit_uuid, plan)
        return plan

    def add_to_plan(self, visit_uuid: str, station: float) -> list[float]:
        """Insert one station into the plan (a slope break, a water's edge...); returns the plan."""
        return self.save_plan(visit_uuid, [*self.plan(visit_uuid), station])

    def remove_from_plan(self, visit_uuid: str, station: float) -> list[float]:
        """Drop one planned station that has no reading yet; returns the plan."""
        if any(r["station"] == station for r in self.readings(visit_uuid)):
            raise ServiceError(f"station {station:g} has a reading; remove the reading first")
        return self.save_plan(visit_uuid, [s for s in self.plan(visit_uuid) if s != station])

    # --- readings ---------------------------------------------------------------------------
    def readings(self, visit_uuid: str) -> list[dict]:
        """Current readings of the visit, sorted by station (store dicts; do not modify).

        Kept between changes: every change goes through this service, which forgets the copy.
        """
        cached = self._readings.get(visit_uuid)
        if cached is None:
            cached = [r for r in self.store.stations(visit_uuid) if not r.get("removed")]
            self._readings = {visit_uuid: cached}
        return cached

    def _changed(self) -> None:
        """Forget the kept readings after any change to a visit."""
        self._readings = {}

    def reading_at(self, visit_uuid: str, station: float) -> dict | None:
        """The current reading at exactly this station, or ``None``."""
        return next((r for r in self.readings(visit_uuid) if r["station"] == station), None)

    def save_reading(
        self, visit_uuid: str, station: float, text: str, code: str = "", note: str = ""
    ) -> dict:
        """Save (or correct) the reading typed at ``station``; committed before returning.

        ``text`` is the reading as typed on the keypad (survey unit, measured down from the line).
        A station that already has a reading gets a correction (the old value stays in history).
        """
        reading = parse_number(text, f"reading at station {station:g}")
        if reading < 0:
            raise ServiceError(
                f"reading at station {station:g} is negative; readings are measured downward "
                "(plumb from the line, or rod foresight)"
            )
        existing = self.reading_at(visit_uuid, station)
        self._changed()
        if existing is None:
            record = self.store.save_station(visit_uuid, station, reading, code=code, note=note)
        else:
            record = self.store.correct_station(existing["uuid"], reading=reading, code=code,
                                                note=note)  # fmt: skip
        if station not in self.plan(visit_uuid):
            self.add_to_plan(visit_uuid, station)
        return record

    def reading_history(self, visit_uuid: str, station: float) -> list[dict]:
        """Every version of the reading at ``station``, oldest first (store dicts with
        ``action`` add|correct|remove and ``undone``); empty when the station has no reading."""
        current = self.reading_at(visit_uuid, station)
        return [] if current is None else self.store.station_history(current["uuid"])

    def update_reading(self, visit_uuid: str, station: float, **changes) -> dict | None:
        """Change the feature code or note of the reading at ``station`` (kept in history)."""
        existing = self.reading_at(visit_uuid, station)
        if existing is None:
            return None
        unknown = set(changes) - {"code", "note"}
        if unknown:
            raise ServiceError(f"cannot change {', '.join(sorted(unknown))} here")
        self._changed()
        return self.store.correct_station(existing["uuid"], **changes)

    def remove_reading(self, visit_uuid: str, station: float) -> dict | None:
        """Remove the reading at ``station`` (kept in history); returns the removed record."""
        existing = self.reading_at(visit_uuid, station)
        self._changed()
        return None if existing is None else self.store.remove_station(existing["uuid"])

    def undo(self, visit_uuid: str) -> dict | None:
        """Undo the latest reading change of the visit; returns what was undone or ``None``."""
        self._changed()
        return self.store.undo(visit_uuid)

    def next_station(self, visit_uuid: str, current: float | None) -> float | None:
        """The station to read after ``current`` (see :func:`next_station`)."""
        read = {r["station"] for r in self.readings(visit_uuid)}
        return next_station(self.plan(visit_uuid), read, current)

    # --- the section and its figures --------------------------------------------------------
    def profile(self, visit_uuid: str) -> tuple[np.ndarray, np.ndarray]:
        """Stations and ground elevations of the readings that have an elevation (survey unit)."""
        rows = [r for r in self.readings(visit_uuid) if r.get("elevation") is not None]
        stations = np.array([r["station"] for r in rows], dtype=float)
        elevations = np.array([r["elevation"] for r in rows], dtype=float)
        return stations, elevations

    def section(self, visit_uuid: str) -> Section | None:
        """The visit's ground as a :class:`stakeline.survey.geometry.Section`, or ``None`` with < 2 points."""
        stations, elevations = self.profile(visit_uuid)
        if stations.size < 2:
            return None
        return Section(stations, elevations)

    @staticmethod
    def figures(section: Section | None, level: float | None) -> dict:
        """Wetted figures at ``level`` (survey unit; area unit²) as a dict keyed by
        :data:`stakeline.survey.geometry.FIGURES` plus ``edges``; ``error`` holds a one-line message instead
        when the level cannot be used (no section yet, or above a bank)."""
        if section is None:
            return {"error": "Read at least two stations to see the figures."}
        if level is None:
            return {"error": "Type or drag the water level to see the figures."}
        try:
            return section.at(float(level)).as_dict()
        except SurveyError as exc:
            return {"error": str(exc)}

    def water_level(self, visit_uuid: str) -> float | None:
        """The visit's water level (survey unit): the mean of the levels recorded on it
        (:func:`stakeline.analysis.visit_water_level`), or ``None`` when none was recorded."""
        from stakeline.analysis import visit_water_level

        return visit_water_level(self.store.visit(visit_uuid)["water_levels"])

    def record_water_level(self, visit_uuid: str, text: str) -> float:
        """Record the water level typed (or dragged) now; returns it (survey unit)."""
        level = parse_number(text, "water level")
        self.store.add_water_level(visit_uuid, level)
        return level

    # --- finishing --------------------------------------------------------------------------
    def finish(self, visit_uuid: str, findings: list[dict], reason: str = "") -> dict:
        """Finish the visit: blocking findings need a written ``reason`` (stored as overrides).
        Returns the finished visit record."""
        blocking = self.blocking(findings)
        if blocking and not reason.strip():
            raise ServiceError(
                f"{len(blocking)} blocking finding(s) remain: fix them, or write why the visit "
                "can be finished anyway"
            )
        self._changed()
        with self.store.transaction():  # the overrides and the finish land together or not at all
            for finding in blocking:
                self.store.add_override(
                    visit_uuid, finding["kind"], finding["station"], reason.strip()
                )
            finished = self.store.finish_visit(visit_uuid)
        position = self.store.get_setting(POSITION_KEY) or {}
        if position.get("visit") == visit_uuid:
            self.store.set_setting(POSITION_KEY, None)
        return finished

    def write_package(self, visit_uuid: str, outbox: str | None = None) -> str:
        """Write the finished visits' packages to the outbox; returns this visit's file path.

        With ``outbox`` given it uses its own connection to the store file, so it may run on the
        worker thread.
        """
        from stakeline.store import Store
        from stakeline.store.package import pack_visits

        outbox = self.outbox() if outbox is None else outbox
        if self.store.path:
            with Store.open(self.store.path, device_id=self.store.device_id) as own:
                results = pack_visits(own, outbox)
        else:
            results = pack_visits(self.store, outbox)
        paths = [r["path"] for r in results if r["visit"] == visit_uuid]
        if not paths:
            raise ServiceError("the visit is not finished, so no package was written")
        return paths[0]

    def write_package_async(self, visit_uuid: str, on_done, on_error=None) -> None:
        """:meth:`write_package` on the worker thread (a file store) or at once (in memory)."""
        if self.store.path:
            outbox = self.outbox()
            self.worker.run(lambda: self.write_package(visit_uuid, outbox), on_done, on_error)
        else:
            on_done(self.write_package(visit_uuid))


FIGURE_NAMES = {key: figure_title(key) for key in FIGURES}
"""Plain names of the figures shown on the section screen (from :mod:`stakeline.survey.figures`)."""


def open_service(folder: str, demo: bool = True) -> FieldService:
    """Open (or create) the device store ``stakeline.sqlite`` in ``folder`` and return a service.

    The folder and its parents are created when missing.  On first start (a store with no sites)
    the invented Tessaly Creek demo survey is loaded so the home screen has something to show.
    Packages go to ``folder/outbox`` unless the settings name another folder.
    """
    from stakeline.store import Store

    os.makedirs(folder, exist_ok=True)
    store = Store.open(os.path.join(folder, "stakeline.sqlite"))
    if demo and not store.sites():
        store.load_demo()
    return FieldService(store, outbox=os.path.join(folder, "outbox"))

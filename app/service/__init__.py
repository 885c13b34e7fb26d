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
from stakeline.app.service.custody import DeviceCustody
from stakeline.app.service.finishing import POSITION_KEY, Finishing
from stakeline.app.service.gauging import METER_KINDS, GaugingService  # noqa: F401  (re-exported)
from stakeline.app.service.office import OfficeFigures
from stakeline.app.service.plans import StationPlans
from stakeline.app.service.settings import (  # noqa: F401  (re-exported)
    DEFAULT_SETTINGS,
    PLUS_MINUS_KEYS,
    DeviceSettings,
    default_outbox,
)
from stakeline.app.service.util import (  # noqa: F401  (re-exported for the screens)
    ServiceError,
    Worker,
    count_words,
    next_station,
    parse_number,
    short_path,
    uniform_stations,
)
from stakeline.app.service.velocity import VelocityStep
from stakeline.errors import SurveyError
from stakeline.survey.codes import CHIPS
from stakeline.survey.datum import Datum
from stakeline.survey.figures import figure_title
from stakeline.survey.geometry import FIGURES, Section, water_strip
from stakeline.survey.reduction import ASSUMED_DATUM  # noqa: F401  (re-exported for the screens)

FEATURE_CODES = tuple(CHIPS)
"""Quick feature codes on the readings screen: (stored code, button text), from
:data:`stakeline.survey.codes.CHIPS`."""


def is_demo(visit: dict) -> bool:
    """True for a visit of the invented demo survey (marked so in its settings by
    :meth:`stakeline.store.Store.load_demo`): the app never sends it to the office."""
    return bool((visit.get("settings") or {}).get("demo"))


class FieldService(
    DeviceSettings,
    FieldChecks,
    OfficeFigures,
    StationPlans,
    Finishing,
    GaugingService,
    VelocityStep,
    DeviceCustody,
):
    """Everything the screens do with a visit, on one open store (the device settings come from
    :class:`stakeline.app.service.settings.DeviceSettings`, the field checks from
    :class:`stakeline.app.service.checks.FieldChecks`, the office figures of the section-detail
    screen from :class:`stakeline.app.service.office.OfficeFigures`, the station plans from
    :class:`stakeline.app.service.plans.StationPlans`, finishing and packing from
    :class:`stakeline.app.service.finishing.Finishing`, the velocity and water-surface steps
    and the gauging's office figures from :class:`stakeline.app.service.gauging.GaugingService`
    and :class:`stakeline.app.service.velocity.VelocityStep`, the device's signing key from
    :class:`stakeline.app.service.custody.DeviceCustody`).

    ``store`` is an open :class:`stakeline.store.Store`; ``outbox`` the folder finished packages
    go to when the settings do not name one.
    """

    def __init__(self, store, outbox: str = ""):
        self.store = store
        self.default_outbox = outbox
        self.worker = Worker()
        self._readings: dict[str, list[dict]] = {}  # visit -> current readings, until a change

    water_strip = staticmethod(water_strip)
    """The water's bottom edge at a level, for the drawings: see
    :func:`stakeline.survey.geometry.water_strip`."""

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

    # --- home -------------------------------------------------------------------------------
    def overview(self) -> list[dict]:
        """Sections with their site, last visit date and status, the open visit if any, and the
        latest finished visit (``finished_visit``, for its office figures) if any."""
        open_visits: dict[str, str] = {}
        finished: dict[str, str] = {}  # section -> its latest finished visit with a ground line
        real: set[str] = set()  # sections with a visit that is not demo data
        for visit in self.store.visits():
            if not visit["finished"]:
                open_visits[visit["section_uuid"]] = visit["uuid"]
            elif visit["station_count"] >= 2:
                finished[visit["section_uuid"]] = visit["uuid"]
            if not is_demo(visit):
                real.add(visit["section_uuid"])
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
                    "demo": bool(section.get("last_visit_date")) and section["uuid"] not in real,
                }
            )
        return rows

    def last_site(self) -> str:
        """The site of the crew's latest visit (demo data aside), to offer for a new section;
        "" when there is none."""
        visits = [v for v in self.store.visits() if not is_demo(v)]
        return max(visits, key=lambda v: (v["date"], v["created"]))["site"] if visits else ""

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

        The stake distance is carried over from the section's last visit (same stakes); the
        line heights are not -- the crew measures them again, and the stakes screen shows last
        visit's values only as hints (:meth:`stakes`).  The last visit's station plan is offered
        on the spacing screen (:meth:`previous_plan`), never taken silently.
        """
        settings = self.settings()
        earlier = self.store.visits(section_uuid)
        visit = self.store.start_visit(
            section_uuid,
            today or date.today().isoformat(),
            crew=tuple(settings["crew"]),
            unit=earlier[-1]["unit"] if earlier else settings["unit"],
            stake_distance=earlier[-1]["stake_distance"] if earlier else None,
        )
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
        out["previous"] = self._previous_datum(visit)
        return out

    def _previous_datum(self, visit: dict) -> dict:
        """Line heights, check shot, stake distance and backsight of the section's visit before
        ``visit`` (same unit), shown as hints; {} when there is none."""
        earlier = [
            v
            for v in self.store.visits(visit["section_uuid"])
            if v["uuid"] != visit["uuid"] and v["unit"] == visit["unit"]
            and v["date"] <= visit["date"]
        ]  # fmt: skip
        if not earlier:
            return {}
        keys = ("line_left", "line_right", "line_check", "stake_distance", "backsight")
        return {key: earlier[-1][key] for key in keys}

    @staticmethod
    def stake_coordinates(side: str, latitude: str, longitude: str) -> tuple | None:
        """A stake's position from the typed latitude and longitude (decimal degrees) as stored
        (longitude, latitude); None when both are empty; ServiceError naming what is wrong."""
        latitude, longitude = str(latitude).strip(), str(longitude).strip()
        if not latitude and not longitude:
            return None
        if not latitude or not longitude:
            raise ServiceError(f"{side} stake: type both latitude and longitude, or neither")
        lat = parse_number(latitude, f"{side} stake latitude")
        lon = parse_number(longitude, f"{side} stake longitude")
        if not -90 <= lat <= 90:
            raise ServiceError(f"{side} stake latitude {lat:g} is out of range (-90 to 90)")
        if not -180 <= lon <= 180:
            raise ServiceError(f"{side} stake longitude {lon:g} is out of range (-180 to 180)")
        return (lon, lat)

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
            return {"error": "Type the water level to see the figures."}
        try:
            return section.at(float(level)).as_dict()
        except SurveyError as exc:
            return {"error": str(exc)}

    @staticmethod
    def figure_rows(figures: dict, unit: str) -> list[tuple[str, str]]:
        """(name, value with unit) of each wetted figure of :meth:`figures`, in order; [] when
        they could not be computed."""
        if "error" in figures:
            return []
        return [
            (
                name,
                f"{figures[key]:.3f} {unit}²"
                if key in AREA_FIGURES
                else f"{figures[key]:.3f} {unit}",
            )
            for key, name in FIGURE_NAMES.items()
        ]

    def review_async(self, visit_uuid: str, on_done, on_error=None, key=None) -> None:
        """The field checks on the worker thread (:meth:`FieldChecks.review_async`); with a
        ``key`` (the screen asking), a result overtaken by a newer request is dropped."""
        if key is not None:
            guard = self.worker.request(key)
            on_done, on_error = guard(on_done), guard(on_error)
        super().review_async(visit_uuid, on_done, on_error)

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


FIGURE_NAMES = {key: figure_title(key) for key in FIGURES}
"""Plain names of the figures shown on the section screen (from :mod:`stakeline.survey.figures`)."""

AREA_FIGURES = frozenset({"area"})
"""Figures measured in the square of the survey unit."""


def open_service(folder: str, demo: bool = True, outbox: str | None = None) -> FieldService:
    """Open (or create) the device store ``stakeline.sqlite`` in ``folder`` and return a service.

    The folder and its parents are created when missing.  On first start (a store with no sites)
    the invented Tessaly Creek demo survey is loaded -- marked as demo data, never packed -- so
    the home screen has something to show.  The device's signing key pair is made on the
    first start (and only found again later), so it exists before the first package.  Packages
    go to ``outbox`` (default: a visible folder in the user's documents,
    :func:`stakeline.app.service.settings.default_outbox`) unless the settings name another
    folder.
    """
    from stakeline.store import Store

    os.makedirs(folder, exist_ok=True)
    store = Store.open(os.path.join(folder, "stakeline.sqlite"))
    store.device_key()  # chain of custody: the key pair exists from the first start on
    if demo and not store.sites():
        store.load_demo()
    return FieldService(store, outbox=outbox or default_outbox())

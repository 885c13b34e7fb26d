"""The gauging as the screens use it, as a mixin of the field service (no Kivy needed).

:class:`GaugingService` gives the velocity step and the water-surface step of a visit, and the
office figures of its gauging, as view-models (plain dicts of values; never text to parse):

* :meth:`~GaugingService.gauging_state` -- the live state of a visit's gauging: each wet
  vertical with its depth (the section's at the visit's water level, or the wading rod's), the
  suggested method for that depth (USGS TM 3-A8: one point below about 0.75 m / 2.5 ft, two
  points deeper), what has been read, its velocity, its panel's discharge and share; the
  measured discharge so far, the mean velocity, the ±, the findings and the live wading
  warnings.  Every save returns it, so the screen shows the discharge grow station by station.
* saving a point's velocity (read directly, or revolutions and seconds through the meter's
  rating), changing a vertical (method, angle, rod depth, note), removing it, undo, history;
* the device's meters (list, add) and the gauging's settings;
* water-surface points (add, undo) with the fitted slope and its ±;
* :meth:`~GaugingService.gauging_figures` -- the office figures: measured Q with its ±, the
  calibrated n with its roughness rows, the section's measured rating.

Typed numbers go through the one parser (decimal comma allowed).  The figures come from the
one analysis (:func:`stakeline.gauging.visit_gauging` for the live state, which
:func:`stakeline.analysis.analyse_visit` also calls), so the tablet, the report and the command
line show the same numbers.  Module functions taking plain inputs are pure (safe on a worker
thread); the field checks' finishing review calls :func:`gauging_review`.
"""

from __future__ import annotations

from stakeline.app.service.util import ServiceError, parse_number

METER_KINDS = ("rotating", "electromagnetic", "acoustic")
"""Kinds of meter the crew can add (as :data:`stakeline.store.columns.METER_KINDS`)."""


def _optional(text, what: str) -> float | None:
    return None if text is None or not str(text).strip() else parse_number(str(text), what)


# --- pure parts: inputs read once, figures computed anywhere -------------------------------
def gauging_inputs(store, visit_uuid: str, readings: list[dict] | None = None) -> dict:
    """What the gauging of a visit needs, read from the store (quick): ``unit``, ``stations``,
    ``elevations`` (the ground), ``stage`` and ``stage_source`` (the visit's water level by the
    one policy), ``gauging`` (:meth:`stakeline.store.Store.gauging`) and ``visit``."""
    from stakeline.analysis import visit_water_level, water_level_source

    visit = store.visit(visit_uuid)
    rows = readings if readings is not None else store.stations(visit_uuid)
    ground = [r for r in rows if r.get("elevation") is not None and not r.get("removed")]
    levels = visit["water_levels"]
    return {
        "visit": visit_uuid,
        "unit": visit["unit"],
        "stations": [r["station"] for r in ground],
        "elevations": [r["elevation"] for r in ground],
        "stage": visit_water_level(levels),
        "stage_source": water_level_source(levels),
        "gauging": store.gauging(visit_uuid),
    }


def _gauge(inputs: dict, calibrate: bool = False):
    """:func:`stakeline.gauging.visit_gauging` on :func:`gauging_inputs`; ServiceError saying
    plainly why there is nothing to gauge yet."""
    from stakeline.errors import SurveyError
    from stakeline.gauging import visit_gauging
    from stakeline.survey.geometry import Section

    if len(inputs["stations"]) < 2:
        raise ServiceError("Read the section (two stations or more) before the velocities.")
    if inputs["stage"] is None:
        raise ServiceError("Record the water level before the velocities: depths come from it.")
    try:
        section = Section(inputs["stations"], inputs["elevations"])
        return visit_gauging(section, inputs["stage"], inputs["gauging"], inputs["unit"],
                             calibrate=calibrate)  # fmt: skip
    except SurveyError as exc:
        raise ServiceError(str(exc)) from None


def _vertical_view(row: dict, raw: dict | None, panel: dict | None, wading: dict) -> dict:
    from stakeline.gauging import VERTICAL_METHODS

    points = {}
    for name, velocity in row["points"].items():
        reading = (raw or {}).get("points", {}).get(name, {})
        points[name] = {"velocity": velocity, "revolutions": reading.get("revolutions"),
                        "seconds": reading.get("seconds"), "read": velocity is not None}  # fmt: skip
    wanted = len(points)
    done = sum(p["read"] for p in points.values())
    state = "none" if raw is None or done == 0 else ("complete" if done == wanted else "partial")
    return {
        **{
            k: row[k]
            for k in (
                "station",
                "depth",
                "depth_source",
                "suggested_method",
                "mean_velocity",
                "angle",
                "velocity",
                "meter",
                "note",
            )
        },  # fmt: skip
        "uuid": row["observation"],
        "method": row["vertical_method"],
        "needed": list(VERTICAL_METHODS[row["vertical_method"] or row["suggested_method"]])
        if row["depth"] > 0
        else [],
        "points": points,
        "read": state,
        "wet": row["depth"] > 0,
        "discharge": None if panel is None else panel["discharge"],
        "percent": None if panel is None else panel["percent"],
        "wading": wading.get(row["station"]),
    }


def gauging_view(inputs: dict) -> dict:
    """The live state of a visit's gauging from :func:`gauging_inputs` (pure).

    Keys: ``unit``, ``stage``, ``stage_source``, ``method``, ``surface_coefficient``,
    ``verticals`` (station, depth, depth_source, suggested_method, uuid, method, needed (the
    points its method, or the suggested one, reads), points
    {name: velocity, revolutions, seconds, read}, read: none|partial|complete, wet,
    mean_velocity, angle, velocity, meter, note, discharge, percent (midsection: the vertical's
    panel), wading (its finding or None)), ``panels``, ``discharge`` (so far), ``complete``,
    ``plus_minus`` and ``relative`` (None until estimable), ``mean_velocity``, ``area``,
    ``width``, ``wet`` and ``read`` (counts), ``next_station`` (first wet vertical not fully
    read), ``findings``, ``wading`` (the wading findings, shown at once), ``blocking``,
    ``method_points`` (the points each method of a vertical reads), ``caution``; or ``error``
    alone when there is nothing to gauge yet.
    """
    from stakeline.gauging import CAUTION, VERTICAL_METHODS

    try:
        found = _gauge(inputs)
    except ServiceError as exc:
        return {"unit": inputs["unit"], "error": str(exc), "caution": CAUTION}
    q, u = found.discharge, found.analysis.uncertainty
    findings = [f.as_dict() for f in found.findings]
    wading = {f["station"]: f for f in findings if f["kind"] == "wading"}
    panels = q.panels()
    by_station = {p["station"]: p for p in panels} if q.method == "midsection" else {}
    raw = {r["uuid"]: r for r in inputs["gauging"]["verticals"]}
    verticals = [
        _vertical_view(row, raw.get(row["observation"]), by_station.get(row["station"]), wading)
        for row in found.verticals
    ]
    wet = [v for v in verticals if v["wet"]]
    pending = [v["station"] for v in wet if v["read"] != "complete"]
    return {
        "unit": found.unit, "stage": found.stage, "stage_source": inputs["stage_source"],
        "method": found.method, "surface_coefficient": found.surface_coefficient,
        "verticals": verticals, "panels": panels, "discharge": q.discharge,
        "complete": q.complete, "plus_minus": u.plus_minus, "relative": u.expanded,
        "mean_velocity": q.mean_velocity, "area": q.area, "width": q.width,
        "wet": len(wet), "read": len(wet) - len(pending),
        "next_station": pending[0] if pending else None, "findings": findings,
        "wading": list(wading.values()),
        "blocking": sum(f["severity"] == "block" for f in findings), "caution": CAUTION,
        "method_points": {name: list(points) for name, points in VERTICAL_METHODS.items()},
    }  # fmt: skip


def gauging_review(inputs: dict | None) -> list[dict]:
    """The gauging's findings for the finishing review (pure): none without velocities; a
    ``gauging`` block when velocities were read but cannot be used (no water level...)."""
    if not inputs or not inputs["gauging"]["verticals"]:
        return []
    try:
        found = _gauge(inputs)
    except ServiceError as exc:
        return [{"kind": "gauging", "severity": "block", "station": None, "message": str(exc),
                 "suggestion": "record the water level, or remove the velocities"}]  # fmt: skip
    return [f.as_dict() for f in found.findings]


def water_surface_view(points: list[dict], unit: str) -> dict:
    """The water-surface step (pure): ``points`` (store dicts), ``slope`` (slope, plus_minus,
    standard_error, fall, length, points, method) or None with ``note`` saying why."""
    from stakeline.gauging.visit import surface_slope

    slope, note = surface_slope(points, unit)
    return {"unit": unit, "points": points, "slope": None if slope is None else slope.as_dict(),
            "note": note}  # fmt: skip


def office_gauging_inputs(store, visit_uuid: str) -> dict:
    """Everything the office figures of a visit's gauging need, read from the store: the
    visit, its stations and gauging, and every gauged visit of its section (``others``: visit,
    stations, gauging) for the measured rating."""
    from stakeline.measurements import gauged_visits

    visit = store.visit(visit_uuid)
    others = []
    for listed in gauged_visits(store, visit["section_uuid"]):
        if listed["unit"] == visit["unit"]:
            uuid = listed["uuid"]
            others.append({"visit": store.visit(uuid), "stations": store.stations(uuid),
                           "gauging": store.gauging(uuid)})  # fmt: skip
    return {"visit": visit, "stations": store.stations(visit_uuid),
            "gauging": store.gauging(visit_uuid), "others": others}  # fmt: skip


def office_gauging(inputs: dict, offset: float | None = None, fit_offset: bool = False) -> dict:
    """The office figures of a visit's gauging (pure; :func:`office_gauging_inputs`), from
    :func:`stakeline.analysis.analyse_visit`: ``discharge`` (value, plus_minus, relative,
    unit), ``mean_velocity``, ``area``, ``slope`` (value, plus_minus) or None, ``n`` (value,
    plus_minus, rows, rows_in_band) or None, ``rating`` (:meth:`MeasuredRating.as_dict`) or
    None, ``notes``, ``findings``, ``caution``; ``error`` alone when the visit has none."""
    from stakeline.analysis import AnalysisOptions, analyse_visit
    from stakeline.errors import SurveyError
    from stakeline.gauging import CAUTION
    from stakeline.measurements import visit_measurement

    measured = [
        visit_measurement(o["visit"], o["stations"], o["gauging"]) for o in inputs["others"]
    ]
    options = AnalysisOptions(rating_offset=offset, fit_offset=fit_offset)
    try:
        result = analyse_visit(inputs["visit"], inputs["stations"], options,
                               gauging=inputs["gauging"],
                               measurements=[m for m in measured if m["discharge"] is not None])  # fmt: skip
    except SurveyError as exc:
        return {"error": str(exc), "caution": CAUTION}
    g, unit = result.gauging, result.unit
    if g is None:
        return {"error": result.gauging_note or "No velocities were read on this visit.",
                "caution": CAUTION}  # fmt: skip
    q, u, c, s = g.discharge, g.analysis.uncertainty, g.calibrated, g.slope
    return {
        "unit": unit, "visit": inputs["visit"]["uuid"], "stage": g.stage,
        "discharge": {"value": q.discharge, "plus_minus": u.plus_minus, "relative": u.expanded,
                      "complete": q.complete, "unit": f"{unit}³/s"},
        "mean_velocity": q.mean_velocity, "area": q.area,
        "slope": None if s is None else {"value": s.slope, "plus_minus": s.plus_minus},
        "n": None if c is None else {"value": c.n, "plus_minus": c.plus_minus,
                                     "rows": list(c.rows), "rows_in_band": list(c.rows_in_band)},
        "rating": None if result.measured_rating is None else result.measured_rating.as_dict(),
        "notes": [n for n in (g.slope_note, g.n_note, result.measured_rating_note) if n],
        "findings": [f.as_dict() for f in g.findings], "caution": CAUTION,
    }  # fmt: skip


# --- the mixin ---------------------------------------------------------------------------------
class GaugingService:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``store``, ``readings`` and
    ``worker``): the velocity and water-surface steps and the gauging's office figures."""

    # -- the live velocity step
    def gauging_state(self, visit_uuid: str) -> dict:
        """The live state of the visit's gauging (see :func:`gauging_view`)."""
        return gauging_view(gauging_inputs(self.store, visit_uuid, self._ground(visit_uuid)))

    def _ground(self, visit_uuid: str) -> list[dict] | None:
        readings = getattr(self, "readings", None)
        return readings(visit_uuid) if readings is not None else None

    def _vertical_at(self, visit_uuid: str, station: float) -> dict | None:
        return next((v for v in self.store.velocities(visit_uuid)
                     if abs(v["station"] - float(station)) < 1e-6), None)  # fmt: skip

    def _meter_for(self, visit_uuid: str, given: str | None, existing: dict | None) -> str | None:
        if given:
            return given
        if existing is not None and existing["meter_uuid"]:
            return existing["meter_uuid"]
        used = [v for v in self.store.velocities(visit_uuid) if v["meter_uuid"]]
        return max(used, key=lambda v: v["modified"])["meter_uuid"] if used else None

    def save_velocity_point(
        self,
        visit_uuid: str,
        station: float,
        point: str,
        velocity_text: str = "",
        *,
        revolutions_text: str = "",
        seconds_text: str = "",
        method: str | None = None,
        meter_uuid: str | None = None,
    ) -> dict:
        """Save one point of the vertical at ``station``, committed before returning; returns
        :meth:`gauging_state`.

        ``point`` is ``v02``, ``v06``, ``v08``, ``surface`` or ``bed``; give the velocity read
        (``velocity_text``, unit/s; negative where the flow runs upstream) or the revolutions
        and seconds counted (``revolutions_text``, ``seconds_text``) through the rating of
        ``meter_uuid`` (default: the meter this visit used last).  ``method`` sets the
        vertical's method (default: its own, or the one suggested for its depth).
        """
        where = f"{point} at station {float(station):g}"
        if str(velocity_text).strip():
            reading = {"velocity": parse_number(velocity_text, f"velocity {where}")}
        else:
            reading = {"revolutions": parse_number(revolutions_text, f"revolutions {where}"),
                       "seconds": parse_number(seconds_text, f"seconds {where}")}  # fmt: skip
        existing = self._vertical_at(visit_uuid, station)
        chosen = method or (existing or {}).get("method") or self._suggested(visit_uuid, station)
        points = dict((existing or {}).get("points") or {})
        points[point] = reading
        meter = self._meter_for(visit_uuid, meter_uuid, existing)
        if "revolutions" in reading and meter is None:
            raise ServiceError("choose the meter whose rating turns revolutions into velocity")
        counted = [n for n, r in points.items() if "revolutions" in r and n != point]
        if existing is not None and counted and meter != existing["meter_uuid"]:
            raise ServiceError(
                f"station {float(station):g} was counted with another meter ({counted[0]}); "
                "read every point of a vertical with one meter, or remove the vertical first"
            )
        fields = dict(method=chosen, points=_for_method(points, chosen, point), meter_uuid=meter)
        if existing is None:
            self.store.save_velocity(visit_uuid, float(station), **fields)
        else:
            self.store.correct_velocity(existing["uuid"], **fields)
        return self.gauging_state(visit_uuid)

    def _suggested(self, visit_uuid: str, station: float) -> str:
        state = self.gauging_state(visit_uuid)
        row = next((v for v in state.get("verticals", [])
                    if abs(v["station"] - float(station)) < 1e-6), None)  # fmt: skip
        return (row or {}).get("suggested_method") or "one-point"

    def save_vertical(self, visit_uuid: str, station: float, *, method: str | None = None,
                      angle_text: str | None = None, depth_text: str | None = None,
                      note: str | None = None) -> dict:  # fmt: skip
        """Change the vertical at ``station``: its method (points it does not read are
        dropped), the angle of the flow to the normal of the section (degrees; empty text
        clears it), the wading rod's depth (empty clears it), the note.  Returns the state."""
        existing = self._vertical_at(visit_uuid, station)
        if existing is None:
            raise ServiceError(f"station {float(station):g} has no velocity yet: read one first")
        changes = {}
        if method is not None:
            changes.update(method=method, points=_for_method(existing["points"], method))
        if angle_text is not None:
            changes["angle"] = _optional(angle_text, f"angle at station {float(station):g}")
        if depth_text is not None:
            changes["depth"] = _optional(depth_text, f"rod depth at station {float(station):g}")
        if note is not None:
            changes["note"] = note
        if changes:
            self.store.correct_velocity(existing["uuid"], **changes)
        return self.gauging_state(visit_uuid)

    def remove_vertical(self, visit_uuid: str, station: float) -> dict:
        """Remove the velocity read at ``station`` (kept in history); returns the state."""
        existing = self._vertical_at(visit_uuid, station)
        if existing is not None:
            self.store.remove_velocity(existing["uuid"])
        return self.gauging_state(visit_uuid)

    def undo_velocity(self, visit_uuid: str) -> dict:
        """Undo the latest velocity change; returns the state with ``undone`` (what was undone,
        as :meth:`stakeline.store.Store.undo_velocity`, or None)."""
        undone = self.store.undo_velocity(visit_uuid)
        return {**self.gauging_state(visit_uuid), "undone": undone}

    def vertical_history(self, visit_uuid: str, station: float) -> list[dict]:
        """Every version of the vertical at ``station`` (empty when it has none)."""
        existing = self._vertical_at(visit_uuid, station)
        return [] if existing is None else self.store.velocity_history(existing["uuid"])

    def gauging_state_async(self, visit_uuid: str, on_done, on_error=None) -> None:
        """:meth:`gauging_state` computed on the worker thread (the inputs read here)."""
        inputs = gauging_inputs(self.store, visit_uuid, self._ground(visit_uuid))
        self.worker.run(lambda: gauging_view(inputs), on_done, on_error)

    # -- meters and settings
    def meters(self) -> list[dict]:
        """The meters kept on this device (store dicts: uuid, serial, kind, unit, a, b, ...)."""
        return self.store.meters()

    def add_meter(self, serial: str, kind: str = "rotating", a_text: str = "", b_text: str = "",
                  *, unit: str | None = None, split_text: str = "", a_high_text: str = "",
                  b_high_text: str = "", lowest_text: str = "", highest_text: str = "",
                  note: str = "") -> dict:  # fmt: skip
        """Keep a meter on the device from what was typed (rating ``v = a + b·N`` for a
        rotating meter; optional second line from ``split`` rev/s; rated range in unit/s;
        ``unit`` of its rating, default the device's)."""
        if unit is None:
            settings = getattr(self, "settings", None)
            unit = settings()["unit"] if settings is not None else "m"
        if kind not in METER_KINDS:
            raise ServiceError(f"meter kind must be one of {', '.join(METER_KINDS)}")
        typed = {"a": a_text, "b": b_text, "split": split_text, "a_high": a_high_text,
                 "b_high": b_high_text, "lowest": lowest_text, "highest": highest_text}  # fmt: skip
        values = {k: _optional(v, f"meter {k.replace('_', ' ')}") for k, v in typed.items()}
        a, b = values.pop("a"), values.pop("b")
        return self.store.add_meter(str(serial).strip(), kind, a, b, unit=unit, note=note, **values)

    def gauging_settings(self, visit_uuid: str) -> dict:
        """The visit's gauging settings: ``method`` and ``surface_coefficient``."""
        return self.store.gauging_settings(visit_uuid)

    def save_gauging_settings(self, visit_uuid: str, method: str | None = None,
                              coefficient_text: str | None = None) -> dict:  # fmt: skip
        """Set the discharge method (midsection or meansection) and/or the surface coefficient
        as typed; returns the state."""
        coefficient = _optional(coefficient_text, "surface coefficient")
        self.store.set_gauging_settings(visit_uuid, method, coefficient)
        return self.gauging_state(visit_uuid)

    # -- the water-surface step
    def water_surface(self, visit_uuid: str) -> dict:
        """The water-surface points and the fitted slope (see :func:`water_surface_view`)."""
        unit = self.store.visit(visit_uuid)["unit"]
        return water_surface_view(self.store.water_surface_points(visit_uuid), unit)

    def add_water_surface_point(self, visit_uuid: str, distance_text: str, elevation_text: str,
                                note: str = "") -> dict:  # fmt: skip
        """Save a water-surface point as typed (distance along the stream, downstream
        positive; water-surface elevation); returns :meth:`water_surface`."""
        distance = parse_number(distance_text, "distance along the stream")
        elevation = parse_number(elevation_text, "water-surface elevation")
        self.store.add_water_surface_point(visit_uuid, distance, elevation, note)
        return self.water_surface(visit_uuid)

    def undo_water_surface_point(self, visit_uuid: str) -> dict:
        """Undo the latest water-surface change; returns :meth:`water_surface` with
        ``undone``."""
        undone = self.store.undo_water_surface_point(visit_uuid)
        return {**self.water_surface(visit_uuid), "undone": undone}

    # -- office figures
    def gauging_figures(self, visit_uuid: str, offset: float | None = None,
                        fit_offset: bool = False) -> dict:  # fmt: skip
        """The office figures of the visit's gauging (see :func:`office_gauging`)."""
        return office_gauging(office_gauging_inputs(self.store, visit_uuid), offset, fit_offset)

    def gauging_figures_async(self, visit_uuid: str, on_done, on_error=None) -> None:
        """:meth:`gauging_figures` on the worker thread (the records read here)."""
        inputs = office_gauging_inputs(self.store, visit_uuid)
        self.worker.run(lambda: office_gauging(inputs), on_done, on_error)


def _for_method(points: dict, method: str, keep: str | None = None) -> dict:
    """``points`` limited to those ``method`` reads; ServiceError when ``keep`` is not one."""
    from stakeline.gauging import VERTICAL_METHODS

    wanted = VERTICAL_METHODS.get(method)
    if wanted is None:
        raise ServiceError(f"method {method!r}: use one of {', '.join(VERTICAL_METHODS)}")
    if keep is not None and keep not in wanted:
        raise ServiceError(
            f"the {method} method does not read {keep}; it reads {', '.join(wanted)}"
        )
    return {name: reading for name, reading in points.items() if name in wanted}

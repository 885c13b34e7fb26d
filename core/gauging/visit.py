"""The gauging of one visit, from its records as the store keeps them (plain dicts, no SQL).

:func:`visit_gauging` turns a visit's gauging records -- the velocities read at the verticals,
the meters they were read with, the water-surface points and the gauging's settings, as
:meth:`stakeline.store.Store.gauging` returns them -- into figures, on the surveyed section at
the visit's water level:

* the verticals: the section's stations in the water with the water's edges at zero depth
  (:func:`stakeline.gauging.discharge.verticals_from_section`), plus any station where a velocity
  was read between them (its depth interpolated); the depth at a vertical is the section's,
  or the wading rod's when the crew typed it;
* the mean velocity in each vertical from its points (:func:`~stakeline.gauging.vertical.mean_velocity`;
  revolutions through the rating of the meter recorded with the visit), reduced to the normal of
  the section by the angle of the flow (cosine);
* the measured discharge by the midsection (or mean-section) method with its uncertainty by the
  interpolated variance estimator and the field findings (:func:`~stakeline.gauging.analyse_gauging`),
  the meter's rated range checked for each meter used;
* the water-surface slope (:func:`~stakeline.gauging.water_surface_slope`) and, with a complete
  discharge and a slope, Manning's n back-calculated (:func:`~stakeline.gauging.calibrate_n`).

The tablet's live gauging, the office analysis (:func:`stakeline.analysis.analyse_visit`) and
the measured rating all call this one function, so they show the same numbers.  Lengths in the
survey unit.  Figures are for checking, not a substitute for licensed engineering review.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from stakeline.checks import Finding
from stakeline.errors import SurveyError
from stakeline.gauging.analysis import CAUTION, GaugingAnalysis, analyse_gauging
from stakeline.gauging.calibrate import CalibratedN, calibrate_n
from stakeline.gauging.discharge import DISCHARGE_METHODS, verticals_from_section
from stakeline.gauging.findings import GaugingSettings, gauging_findings
from stakeline.gauging.slope import WaterSurfaceSlope, water_surface_slope
from stakeline.gauging.units import GaugingError, at_station, gauging_unit, plain
from stakeline.gauging.vertical import (
    POINTS,
    SURFACE_COEFFICIENT,
    VERTICAL_METHODS,
    MeterRating,
    mean_velocity,
    suggested_method,
)
from stakeline.survey.geometry import Section
from stakeline.survey.uncertainty import Precision

SAME_STATION = 1e-6
"""A velocity read this close to a surveyed station (survey unit) is read at it."""

_SEVERITY = {"block": 0, "warn": 1, "note": 2}


@dataclass(frozen=True, eq=False)
class VisitGauging:
    """The gauging of one visit (see the module notes); lengths in ``unit``.

    ``stage``: the water level of the gauging; ``method`` and ``surface_coefficient``: its
    settings; ``verticals``: one dict per vertical in station order (see :meth:`as_dict`);
    ``analysis``: the discharge, its uncertainty and the findings; ``slope`` (or None, with
    ``slope_note`` saying why) and ``calibrated`` (Manning's n, or None with ``n_note``).
    """

    unit: str
    stage: float
    method: str
    surface_coefficient: float
    verticals: tuple[dict, ...]
    analysis: GaugingAnalysis
    slope: WaterSurfaceSlope | None
    slope_note: str
    calibrated: CalibratedN | None
    n_note: str

    @property
    def discharge(self):
        """The :class:`~stakeline.gauging.discharge.Discharge` (``.discharge`` in unit³/s)."""
        return self.analysis.discharge

    @property
    def findings(self) -> tuple[Finding, ...]:
        """Every finding, wading first, then by severity and station."""
        return self.analysis.findings

    @property
    def observed(self) -> int:
        """How many verticals have a velocity read (some or all of their points)."""
        return sum(1 for v in self.verticals if v["observation"] is not None)

    def measurement(self) -> dict | None:
        """The measured (stage, discharge) for a rating, or None while the discharge is not
        complete and positive: ``stage``, ``discharge`` (unit³/s), ``plus_minus`` and
        ``relative`` (its expanded uncertainty; None when not estimable), ``n`` and
        ``n_plus_minus`` (None without a calibrated n), ``slope`` (None without one)."""
        q, u = self.discharge, self.analysis.uncertainty
        if not q.complete or q.discharge <= 0:
            return None
        c = self.calibrated
        return {
            "stage": self.stage,
            "discharge": q.discharge,
            "plus_minus": u.plus_minus,
            "relative": u.expanded,
            "n": None if c is None else c.n,
            "n_plus_minus": None if c is None else c.plus_minus,
            "slope": None if self.slope is None else self.slope.slope,
        }

    def as_dict(self) -> dict:
        """JSON-ready: ``unit``, ``stage``, ``method``, ``surface_coefficient``, ``verticals``
        (station, depth, depth_source: section|rod|edge, suggested_method, observation: the
        vertical's id or None, vertical_method, points: velocity per point in unit/s or None,
        meter, mean_velocity, angle, velocity: normal to the section, note), ``discharge``
        (:meth:`GaugingAnalysis.as_dict`: discharge, area, width, mean_velocity, panels,
        uncertainty, findings, caution), ``slope``, ``slope_note``, ``calibrated``, ``n_note``,
        ``measurement``."""
        return {
            "unit": self.unit,
            "stage": self.stage,
            "method": self.method,
            "surface_coefficient": self.surface_coefficient,
            "verticals": [dict(v) for v in self.verticals],
            "discharge": self.analysis.as_dict(),
            "slope": None if self.slope is None else self.slope.as_dict(),
            "slope_note": self.slope_note,
            "calibrated": None if self.calibrated is None else self.calibrated.as_dict(),
            "n_note": self.n_note,
            "measurement": self.measurement(),
            "caution": CAUTION,
        }


def _settings(gauging: Mapping) -> tuple[str, float]:
    settings = dict(gauging.get("settings") or {})
    method = settings.get("method") or DISCHARGE_METHODS[0]
    coefficient = settings.get("surface_coefficient")
    return method, float(SURFACE_COEFFICIENT if coefficient is None else coefficient)


def _meters(gauging: Mapping) -> dict[str, tuple[MeterRating, bool]]:
    """meter id -> (its rating, whether it counts revolutions), from the visit's meters."""
    out = {}
    for m in gauging.get("meters") or ():
        direct = m.get("a") is None
        rating = MeterRating(
            m["serial"], a=0.0 if direct else m["a"], b=1.0 if direct else m["b"],
            unit=m.get("unit") or "m", split=m.get("split"), a_high=m.get("a_high"),
            b_high=m.get("b_high"), lowest=m.get("lowest"), highest=m.get("highest"),
        )  # fmt: skip
        out[m["meter_uuid"]] = (rating, not direct)
    return out


def _observations(gauging: Mapping) -> list[dict]:
    """Live verticals with a station; at a station read twice, the one entered last."""
    live = [v for v in gauging.get("verticals") or () if not v.get("removed")]
    live = [v for v in live if v.get("station") is not None]
    by_station: dict[float, dict] = {}
    for v in sorted(live, key=lambda v: (v.get("seq", 0), v.get("modified", ""))):
        by_station[round(float(v["station"]) / SAME_STATION)] = v
    return sorted(by_station.values(), key=lambda v: float(v["station"]))


def _point_velocities(at: list, meters: Mapping, unit: str) -> list[dict[str, float]]:
    """Velocity (unit/s) at each point read at each vertical; revolutions go through their
    meter's rating, all the counts of one meter in one call."""
    out: list[dict[str, float]] = [{} for _ in at]
    counted: dict[str, list] = {}
    for i, obs in enumerate(at):
        for name, reading in ((obs or {}).get("points") or {}).items():
            if "velocity" in reading:
                out[i][name] = float(reading["velocity"])
                continue
            meter = meters.get(obs.get("meter_uuid"))
            if meter is None or not meter[1]:
                raise GaugingError(
                    f"station {at_station(obs['station'], unit)}: revolutions at {name} but no "
                    "rotating meter recorded with the visit to turn them into a velocity",
                    station=float(obs["station"]),
                )
            counted.setdefault(obs["meter_uuid"], []).append(
                (i, name, reading["revolutions"], reading["seconds"])
            )
    for uuid, rows in counted.items():
        revolutions, seconds = [r[2] for r in rows], [r[3] for r in rows]
        speeds = np.atleast_1d(meters[uuid][0].velocity(revolutions, seconds, unit))
        for (i, name, _, _), speed in zip(rows, speeds.tolist(), strict=True):
            out[i][name] = speed
    return out


def _place(x: np.ndarray, d: np.ndarray, station: float) -> tuple[np.ndarray, np.ndarray, int]:
    """The verticals with ``station`` among them (depth interpolated when new); its index, or
    -1 when it lies outside the water."""
    if x.size == 0 or not x[0] - SAME_STATION <= station <= x[-1] + SAME_STATION:
        return x, d, -1
    near = int(np.argmin(np.abs(x - station)))
    if abs(x[near] - station) <= SAME_STATION:
        return x, d, near
    at = int(np.searchsorted(x, station))
    depth = float(np.interp(station, x, d))
    return np.insert(x, at, station), np.insert(d, at, depth), at


def _verticals(section: Section, stage: float, observations: list[dict], unit: str):
    """(stations, depths, the observation at each vertical or None, observations outside)."""
    x, d = verticals_from_section(section, stage)
    if x.size == 0:
        raise GaugingError(
            f"the section is dry at water level {stage:g} {unit}: no verticals to gauge"
        )
    placed: list[tuple[float, dict]] = []
    outside = []
    for obs in observations:
        x, d, at = _place(x, d, float(obs["station"]))
        if at < 0:
            outside.append(obs)
        else:
            placed.append((float(x[at]), obs))
    found = {round(s / SAME_STATION): obs for s, obs in placed}
    return x, d, [found.get(round(s / SAME_STATION)) for s in x.tolist()], outside


def _vertical_row(x, depth, source, obs, points, mean, unit, meters) -> dict:
    meter = meters.get(obs.get("meter_uuid")) if obs else None
    angle = obs.get("angle") if obs else None
    normal = mean * math.cos(math.radians(angle or 0.0)) if obs else math.nan
    return {
        "station": float(x),
        "depth": float(depth),
        "depth_source": source,
        "suggested_method": suggested_method(depth, unit) if depth > 0 else None,
        "observation": obs.get("uuid") if obs else None,
        "vertical_method": obs.get("method") if obs else None,
        "points": {n: points.get(n) for n in VERTICAL_METHODS[obs["method"]]} if obs else {},
        "meter": meter[0].serial if meter else None,
        "mean_velocity": plain(mean),
        "angle": angle,
        "velocity": plain(normal),
        "note": obs.get("note", "") if obs else "",
    }


def _outside_findings(outside: list[dict], x: np.ndarray, unit: str) -> list[Finding]:
    out = []
    for obs in outside:
        at = at_station(obs["station"], unit)
        message = (
            f"station {at}: a velocity was read outside the water at this water level (edges "
            f"{at_station(x[0], unit)} to {at_station(x[-1], unit)}); it is not used"
        )
        todo = "check the station and the water level, or remove this vertical"
        out.append(Finding("outside", "warn", float(obs["station"]), message, todo))
    return out


def _meter_findings(result, points: dict, per_meter: dict, settings) -> list[Finding]:
    """Velocities outside the rated range, each vertical checked against its own meter."""
    out = []
    for rating, rows in per_meter.values():
        masked = {k: np.where(rows, a, np.nan) for k, a in points.items()}
        found = gauging_findings(result, points=masked, meter=rating, settings=settings)
        out += [f for f in found if f.kind == "meter"]
    return out


def _order(f: Finding):
    return (f.kind != "wading", _SEVERITY[f.severity], math.inf if f.station is None else f.station)


def _measure(section, stage, observations, gauging, unit, settings):
    """(verticals, analysis) of the velocities read."""
    method, coefficient = _settings(gauging)
    meters = _meters(gauging)
    x, d, at, outside = _verticals(section, stage, observations, unit)
    rows, mean, angles = [], np.full(x.size, np.nan), np.zeros(x.size)
    points = {name: np.full(x.size, np.nan) for name in POINTS}
    per_meter: dict[str, tuple] = {}
    speeds = _point_velocities(at, meters, unit)
    for i, obs in enumerate(at):
        source = "section" if d[i] > 0 or 0 < i < x.size - 1 else "edge"
        read = speeds[i]
        if obs is not None:
            if obs.get("depth") is not None:
                d[i], source = float(obs["depth"]), "rod"
            wanted = {n: read.get(n, math.nan) for n in VERTICAL_METHODS[obs["method"]]}
            mean[i] = mean_velocity(obs["method"], wanted, coefficient)
            angles[i] = obs.get("angle") or 0.0
            for name, value in read.items():
                points[name][i] = value
            if obs.get("meter_uuid") in meters:
                uses = (meters[obs["meter_uuid"]][0], np.zeros(x.size, bool))
                per_meter.setdefault(obs["meter_uuid"], uses)[1][i] = True
        rows.append(_vertical_row(x[i], d[i], source, obs, read, mean[i], unit, meters))
    used = {k: a for k, a in points.items() if not np.isnan(a).all()}
    analysis = analyse_gauging(x, d, mean, method, unit=unit, angles=angles, points=used,
                               settings=settings)  # fmt: skip
    extra = _outside_findings(outside, x, unit) + _meter_findings(
        analysis.discharge, used, per_meter, settings
    )
    findings = tuple(sorted((*analysis.findings, *extra), key=_order))
    analysis = GaugingAnalysis(analysis.discharge, analysis.uncertainty, findings)
    return method, coefficient, tuple(rows), analysis


def surface_slope(points: Sequence[Mapping], unit: str) -> tuple[WaterSurfaceSlope | None, str]:
    """The water-surface slope through a visit's points (store dicts with ``distance`` and
    ``elevation``; removed ones left out), or None, and a note saying why not (or why it is
    of no use for n).

    >>> s, note = surface_slope([{"distance": -20, "elevation": 100.08},
    ...                          {"distance": 20, "elevation": 99.92}], "m")
    >>> round(s.slope, 6), note
    (0.004, '')
    """
    live = [p for p in points or () if not p.get("removed")]
    if len(live) < 2:
        return None, (
            f"{len(live)} water-surface point{'s' if len(live) != 1 else ''} read; read the "
            "water surface at two or more points upstream and downstream of the section"
        )
    try:
        slope = water_surface_slope([p["distance"] for p in live],
                                    [p["elevation"] for p in live], unit=unit)  # fmt: skip
    except GaugingError as exc:
        return None, str(exc)
    if slope.slope <= 0:
        return slope, "the water surface is level within its ±: no slope to calibrate n with"
    return slope, ""


def _calibrate(section, stage, analysis, slope, unit, precision):
    q = analysis.discharge
    if not q.complete:
        return None, "the discharge is not complete yet: read every wet vertical to calibrate n"
    if q.discharge <= 0:
        return None, "the measured discharge is not positive: no n to calibrate"
    if slope is None or slope.slope <= 0:
        return None, "no water-surface slope: read the water surface to calibrate n"
    u = analysis.uncertainty
    try:
        found = calibrate_n(
            section, stage, q.discharge, slope.slope, unit,
            discharge_uncertainty=u.relative or 0.0, slope_uncertainty=slope.standard_error,
            precision=precision,
        )  # fmt: skip
    except GaugingError as exc:
        return None, str(exc)
    return found, ""


def visit_gauging(
    section: Section,
    stage: float,
    gauging: Mapping,
    unit: str = "m",
    *,
    precision: Precision | None = None,
    settings: GaugingSettings | Mapping | None = None,
    calibrate: bool = True,
) -> VisitGauging:
    """The gauging of a visit on ``section`` at water level ``stage`` (survey ``unit``).

    ``gauging`` is :meth:`stakeline.store.Store.gauging`'s dict: ``settings`` (method,
    surface_coefficient), ``verticals`` (store velocity dicts: station, method, points,
    meter_uuid, angle, depth, note...), ``meters`` (the visit's meter records) and
    ``water_surface`` (points with distance and elevation).  ``precision`` is the crew's ± of a
    reading and a station (for the ± of n; default the unit's); ``settings`` the limits of the
    gauging checks (:class:`GaugingSettings` or overrides); ``calibrate=False`` leaves n out
    (the live velocity step: n is an office figure and its ± takes the most time).  Raises
    :class:`~stakeline.gauging.units.GaugingError` when the section is dry at ``stage`` or a
    record cannot be used.

    Examples
    --------
    >>> ground = Section([0, 0, 4, 4], [101.0, 99.0, 99.0, 101.0])
    >>> read = [{"station": s, "method": "one-point", "points": {"v06": {"velocity": 0.5}}}
    ...         for s in (0, 1, 2, 3, 4)]
    >>> g = visit_gauging(ground, 100.0, {"verticals": read})
    >>> round(g.discharge.discharge, 6), g.measurement()["stage"]      # 0.5 m/s x 4 m²
    (2.0, 100.0)
    """
    gauging_unit(unit)
    stage = float(stage)
    checks = settings if isinstance(settings, GaugingSettings) else (
        GaugingSettings.for_unit(unit, **dict(settings or {}))
    )  # fmt: skip
    observations = _observations(gauging)
    method, coefficient, rows, analysis = _measure(
        section, stage, observations, gauging, unit, checks
    )
    slope, slope_note = surface_slope(gauging.get("water_surface") or (), unit)
    precision = precision or Precision.default(unit)
    calibrated, n_note = None, "n is calibrated in the office figures"
    if calibrate:
        calibrated, n_note = _calibrate(section, stage, analysis, slope, unit, precision)
    return VisitGauging(unit, stage, method, coefficient, rows, analysis, slope, slope_note,
                        calibrated, n_note)  # fmt: skip


def gauging_or_note(
    section: Section, stage: float | None, gauging: Mapping, unit: str, precision=None
) -> tuple[VisitGauging | None, str]:
    """:func:`visit_gauging` at ``stage``, or None and a note saying why there is none (no
    water level, a dry section, a record that cannot be used): for an analysis that goes on."""
    try:
        if stage is None:
            raise GaugingError("the visit has no water level")
        return visit_gauging(section, stage, gauging, unit, precision=precision), ""
    except SurveyError as exc:
        return None, f"No gauging figures: {exc}"

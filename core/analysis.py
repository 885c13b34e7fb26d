"""The office analysis of one visit: one function, one plain result, for every front end.

:func:`analyse_visit` takes plain data -- the visit dict and its station dicts as the store
returns them, :class:`AnalysisOptions`, and the earlier visit to compare -- and returns one
:class:`VisitAnalysis`: the wetted figures at the visit's water level with their ± bands,
Manning's figures with the discharge at the low and high n of the roughness row, the
divided-channel subsections, the rating table, the bankfull summary, the change since the
earlier visit and, given its gauging records, the measured discharge, the slope, the calibrated
n and the section's measured rating (:mod:`stakeline.gauging`).  The office report
(:func:`stakeline.report.prepare_report`), the tablet's office figures and the command line
all show this one result, so they show the same numbers.

Two written policies decide what a visit's figures are about:

* **The visit's water level** (:func:`visit_water_level`): a level the person types overrides;
  otherwise the mean of the levels recorded on the visit (common practice: the mean gauge
  height over the measurement); a level dragged on a screen but not recorded is never used.
* **The earlier visit to compare** (:func:`earlier_visit`): the latest visit of the same
  section before this one (by date, then time of creation), surveyed in the same unit, whose
  ground line can be used (at least two stations, every one with an elevation).

Figures are estimates for checking, not a substitute for licensed engineering review.

>>> stations = [{"station": x, "elevation": z, "code": ""} for x, z in
...             [(0, 101.0), (0, 99.0), (4, 99.0), (4, 101.0)]]
>>> visit = {"unit": "m", "water_levels": [{"elevation": 99.9}, {"elevation": 100.1}]}
>>> result = analyse_visit(visit, stations, AnalysisOptions(n=0.03, slope=0.001))
>>> result.stage, round(result.flow["area"], 6), result.stage_source
(100.0, 4.0, 'the mean of 2 water levels recorded')
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from stakeline.errors import SurveyError
from stakeline.gauging import MeasuredRating, VisitGauging
from stakeline.gauging.section_rating import rating_or_note
from stakeline.gauging.visit import gauging_or_note
from stakeline.survey.compare import compare_visits
from stakeline.survey.datum import Datum, usable_elevations
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import (
    CompoundSection,
    bank_top_splits,
    bankfull_stage,
    bankfull_summary,
    flow_at,
)
from stakeline.survey.numbers import parse_number
from stakeline.survey.rating import rating_stages, rating_table
from stakeline.survey.roughness import RoughnessRow, roughness, row_for_n
from stakeline.survey.uncertainty import (
    Band,
    Precision,
    discharge_band,
    discharge_for_roughness,
    geometry_bands,
    method_for,
)
from stakeline.survey.units import unit_of


# --- the two policies ---------------------------------------------------------------------
def recorded_levels(water_levels: Sequence[Mapping]) -> list[float]:
    """The water levels recorded on a visit (survey unit), in the order given."""
    return [float(w["elevation"]) for w in water_levels or () if w.get("elevation") is not None]


def visit_water_level(water_levels: Sequence[Mapping], typed: float | None = None) -> float | None:
    """The visit's water level (survey unit): ``typed`` when given, else the mean of the
    recorded levels, else None.  A dragged level that was not recorded is never among them.

    Examples
    --------
    >>> visit_water_level([{"elevation": 99.98}, {"elevation": 99.97}])
    99.975
    >>> visit_water_level([{"elevation": 99.98}], typed=100.2), visit_water_level([])
    (100.2, None)
    """
    if typed is not None:
        return parse_number(typed, "water level")
    levels = recorded_levels(water_levels)
    return round(float(np.mean(levels)), 12) if levels else None


def water_level_source(water_levels: Sequence[Mapping], typed: float | None = None) -> str:
    """Where :func:`visit_water_level` took the level from, in words."""
    count = len(recorded_levels(water_levels))
    if typed is not None:
        return "the water level given"
    if count == 0:
        return "no water level recorded"
    return (
        "the water level recorded" if count == 1 else f"the mean of {count} water levels recorded"
    )


def usable_ground(stations: Sequence[Mapping]) -> bool:
    """True when station dicts make a ground line: at least two live stations, each with a
    station and an elevation, stations not decreasing, some width."""
    live = _in_order(stations)
    if len(live) < 2 or any(s.get("elevation") is None for s in live):
        return False
    try:
        section = Section(*_ground(live))
    except SurveyError:
        return False
    return bool(section.stations[-1] > section.stations[0])


def earlier_visit(
    visit: Mapping, visits: Sequence[Mapping], stations_of: Callable[[str], list[dict]]
) -> dict | None:
    """The earlier visit to compare ``visit`` with, as ``{"visit": dict, "stations": list}``.

    The latest of ``visits`` (store visit dicts, any order) of the same section, before
    ``visit`` by date and then by time of creation, in the same unit, whose ground line is
    usable (:func:`usable_ground`); ``stations_of(uuid)`` reads a visit's station dicts and is
    called only until one is found.  None when there is no such visit.

    Examples
    --------
    >>> line = [{"station": 0, "elevation": 1.0}, {"station": 4, "elevation": 1.0}]
    >>> visits = [
    ...     {"uuid": "a", "section_uuid": "s", "unit": "m", "date": "2026-04-14"},
    ...     {"uuid": "b", "section_uuid": "s", "unit": "m", "date": "2026-06-01"},  # no ground
    ...     {"uuid": "c", "section_uuid": "s", "unit": "m", "date": "2026-09-22"},
    ... ]
    >>> ground = {"a": line, "b": line[:1], "c": line}
    >>> earlier_visit(visits[2], visits, ground.get)["visit"]["uuid"]
    'a'
    """

    def when(v: Mapping) -> tuple[str, str]:
        return (str(v.get("date") or ""), str(v.get("created") or ""))

    candidates = [
        v
        for v in visits
        if v.get("uuid") != visit.get("uuid")
        and v.get("section_uuid") == visit.get("section_uuid")
        and v.get("unit", "m") == visit.get("unit", "m")
        and when(v) < when(visit)
    ]
    for other in sorted(candidates, key=when, reverse=True):
        stations = [s for s in stations_of(other["uuid"]) if not s.get("removed")]
        if usable_ground(stations):
            return {"visit": dict(other), "stations": stations}
    return None


# --- options and result -------------------------------------------------------------------
@dataclass(frozen=True)
class AnalysisOptions:
    """Choices for the analysis; lengths in the survey unit, slope dimensionless.

    ``n`` (typed) or ``roughness`` (a key of :data:`stakeline.survey.roughness.ROUGHNESS`)
    gives the main channel's Manning's n; ``n_overbank`` that of the overbanks (default: the
    same).  ``splits`` are subsection stations (default: the bank tops nearest the deepest
    point).  ``stage`` overrides the visit's water level (:func:`visit_water_level`);
    ``bankfull`` the lower bank top; ``precision`` the crew's ± (default: the unit's);
    ``rating_step`` the rating table's step (default: a round step giving about 25 rows);
    ``method`` how the ± bands are found (``"linear"``: first-order propagation, the default,
    deterministic and O(stations); ``"monte-carlo"`` or ``"auto"``, see
    :mod:`stakeline.survey.uncertainty`).  The measured rating's e is ``rating_offset`` when
    given, fitted with ``fit_offset``, else the section's lowest point.

    Examples
    --------
    >>> AnalysisOptions(roughness="clean-winding", slope=0.002).method
    'linear'
    """

    stage: float | None = None
    n: float | None = None
    roughness: str | None = None
    n_overbank: float | None = None
    slope: float | None = None
    splits: tuple[float, ...] | None = None
    bankfull: float | None = None
    precision: Precision | None = None
    rating_step: float | None = None
    method: str = "linear"
    rating_offset: float | None = None
    fit_offset: bool = False


@dataclass
class VisitAnalysis:
    """The office figures of one visit (see :func:`analyse_visit`); lengths in ``unit``.

    ``stage`` is the water level analysed (None when none was recorded or given) and
    ``stage_source`` says where it came from; ``bands`` maps figure names (area,
    wetted_perimeter, top_width, hydraulic_radius, discharge) to :class:`Band`; ``flow`` is
    :meth:`stakeline.survey.hydraulics.Flow.as_dict` or None without n and slope; ``n_range``
    the discharge at the row's ``minimum``, ``normal`` and ``maximum`` n; ``rating`` a dict of
    arrays (with discharge when n and slope are known); ``bankfull`` the bankfull summary;
    ``comparison`` :func:`stakeline.survey.compare.compare_visits` with ``previous`` the
    earlier visit compared; ``gauging`` (:class:`VisitGauging`) and ``measured_rating``
    (:class:`MeasuredRating`) when given the records; the ``*_note`` fields say why a part is
    missing; ``missing`` lists the inputs the discharge still needs.

    Examples
    --------
    >>> ground = [{"station": x, "elevation": z} for x, z in [(0, 2.0), (2, 0.0), (4, 2.0)]]
    >>> result = analyse_visit({"unit": "m"}, ground)
    >>> result.stage is None, result.missing[-1]
    (True, 'water level (none read; give --stage)')
    """

    unit: str
    section: Section
    codes: list[str]
    stations: list[dict]
    precision: Precision
    method: str
    stage: float | None = None
    stage_source: str = ""
    splits: list[float] = field(default_factory=list)
    subsections: list[dict] = field(default_factory=list)
    n_values: list[float] = field(default_factory=list)
    row: RoughnessRow | None = None
    slope: float | None = None
    flow: dict | None = None
    bands: dict[str, Band] = field(default_factory=dict)
    n_range: dict | None = None
    rating: dict | None = None
    bankfull: dict | None = None
    bankfull_note: str = ""
    comparison: dict | None = None
    comparison_note: str = ""
    previous: dict | None = None
    missing: list[str] = field(default_factory=list)
    gauging: VisitGauging | None = None
    gauging_note: str = ""
    measured_rating: MeasuredRating | None = None
    measured_rating_note: str = ""


# --- the analysis -------------------------------------------------------------------------
def _in_order(stations: Sequence[Mapping]) -> list[dict]:
    """Live station dicts with a station, in station order then entry order (as the store)."""
    live = [dict(s) for s in stations if not s.get("removed") and s.get("station") is not None]
    return sorted(live, key=lambda s: (float(s["station"]), s.get("seq", 0)))


def _ground(stations: Sequence[Mapping]) -> tuple[np.ndarray, np.ndarray]:
    return (
        np.array([s["station"] for s in stations], dtype=float),
        np.array([s["elevation"] for s in stations], dtype=float),
    )


def live_stations(visit: Mapping, stations: Sequence[Mapping]) -> list[dict]:
    """The visit's live station dicts in station order (then entry order), every one with a
    station and an elevation; a :class:`SurveyError` says plainly why not (no line heights, a
    station without a distance, fewer than two)."""
    live = [dict(s) for s in stations if not s.get("removed")]
    if len(live) < 2:
        raise SurveyError("the visit has fewer than 2 stations; nothing to analyse")
    unplaced = next((s for s in live if s.get("station") is None), None)
    if unplaced is not None:
        raise SurveyError(
            f"a reading of the visit ({unplaced.get('reading')!r}) has no station; correct it "
            "on the readings screen (or resolve the package it came in)"
        )
    live = _in_order(live)
    usable_elevations(live, Datum.from_visit(visit))
    return live


def analyse_visit(
    visit: Mapping,
    stations: Sequence[Mapping],
    options: AnalysisOptions | None = None,
    earlier: Mapping | None = None,
    gauging: Mapping | None = None,
    measurements: Sequence[Mapping] | None = None,
) -> VisitAnalysis:
    """Run the office analysis of one visit.

    Parameters
    ----------
    visit : dict
        The store's visit dict: ``unit``, ``water_levels`` (dicts with ``elevation``) and the
        datum fields (``method``, ``line_left`` ...) used to explain missing elevations.
    stations : list of dict
        Its station dicts (``station``, ``elevation``, ``code``; ``removed`` ones are left out).
    options : AnalysisOptions
        The person's choices (n, slope, water level ...); defaults when None.
    earlier : dict, optional
        ``{"visit": dict, "stations": list}`` to compare with (see :func:`earlier_visit`).
    gauging : dict, optional
        The visit's gauging records (:meth:`stakeline.store.Store.gauging`).
    measurements : list of dict, optional
        The section's measured discharges (:func:`stakeline.measurements.section_measurements`)
        for the measured rating; this visit's own replaces one of the same ``visit``.

    Returns
    -------
    VisitAnalysis

    Raises :class:`stakeline.errors.SurveyError` (a ``ValueError``) when the visit or the
    options cannot be used: fewer than two stations, readings without elevations, a water level
    above the section's ends, an impossible n or slope.

    Examples
    --------
    The demo survey's riffle in spring, at the mean of its two water levels:

    >>> from stakeline.store import Store
    >>> store = Store.memory()
    >>> spring = next(v for v in store.load_demo() if v["section"] == "XS1 riffle")
    >>> visit = store.visit(spring["uuid"])
    >>> result = analyse_visit(visit, store.stations(visit["uuid"]),
    ...                        AnalysisOptions(roughness="mountain-gravel", slope=0.004))
    >>> round(result.stage, 3), result.stage_source
    (99.975, 'the mean of 2 water levels recorded')
    >>> result.flow["discharge"] > 0 and result.n_range["minimum"] > result.n_range["maximum"]
    True
    >>> store.close()
    """
    options = options or AnalysisOptions()
    unit = unit_of(visit.get("unit") or "m").key
    live = live_stations(visit, stations)
    section = Section(*_ground(live))
    levels = visit.get("water_levels") or []
    result = VisitAnalysis(
        unit=unit,
        section=section,
        codes=[s.get("code") or "" for s in live],
        stations=live,
        precision=options.precision or Precision.default(unit),
        method=method_for(section, options.method),
        stage=visit_water_level(levels, options.stage),
        stage_source=water_level_source(levels, options.stage),
        slope=None
        if options.slope is None
        else parse_number(options.slope, "slope", positive=True),
    )
    result.splits = (
        sorted(float(s) for s in options.splits)
        if options.splits is not None
        else bank_top_splits(section.stations, section.elevations, result.codes)
    )
    n, result.row = _choose_n(options)
    result.n_values = _n_values(result, n, options)
    if n is None:
        result.missing.append("Manning's n (give --n or --roughness)")
    if result.slope is None:
        result.missing.append("energy slope (give --slope)")
    if result.stage is None:
        result.missing.append("water level (none read; give --stage)")
    _hydraulics(result, n, options)
    _bankfull(result, options)
    _rating(result, n, options)
    if earlier:
        _comparison(result, earlier)
    if gauging and (gauging.get("verticals") or gauging.get("water_surface")):
        result.gauging, result.gauging_note = gauging_or_note(
            result.section, result.stage, gauging, result.unit, result.precision
        )
    if measurements is not None:
        own = result.gauging.measurement() if result.gauging is not None else None
        result.measured_rating, result.measured_rating_note = rating_or_note(
            measurements, own, visit, result.section, result.unit,
            options.rating_offset, options.fit_offset,
        )  # fmt: skip
    return result


def _choose_n(options: AnalysisOptions) -> tuple[float | None, RoughnessRow | None]:
    typed = parse_number(options.n, "Manning's n", positive=True, optional=True)
    if options.roughness:
        row = roughness(options.roughness)
        return (row.normal if typed is None else typed), row
    if typed is None:
        return None, None
    return typed, row_for_n(typed)


def _n_values(result: VisitAnalysis, n: float | None, options: AnalysisOptions) -> list[float]:
    """n of each subsection (the main channel's n, the overbanks' n), or ``[n]`` unsplit;
    known before any water level, so the rating table has them too."""
    if n is None:
        return []
    if not result.splits:
        return [n]
    overbank = parse_number(
        options.n_overbank, "Manning's n of the overbanks", positive=True, optional=True
    )
    overbank = n if overbank is None else overbank
    names = CompoundSection(result.section, result.splits, [n] * (len(result.splits) + 1)).names()
    return [n if name == "main channel" else overbank for name in names]


def _hydraulics(result: VisitAnalysis, n: float | None, options: AnalysisOptions) -> None:
    """± bands at the water level; with n and slope, Manning's figures and their spreads."""
    section, stage = result.section, result.stage
    if stage is None:
        return
    result.bands = geometry_bands(section, stage, result.precision, method=result.method)
    if n is None or result.slope is None:
        return
    if result.splits:
        compound = CompoundSection(section, result.splits, result.n_values)
        parts = compound.table(stage, result.unit)["parts"]
        result.subsections = [
            {"name": name, "n": value, **{k: float(v) for k, v in part.items()}}
            for name, value, part in zip(compound.names(), result.n_values, parts, strict=True)
        ]
    values = result.n_values if result.splits else n
    splits = result.splits or None
    result.flow = flow_at(section, stage, values, result.slope, result.unit, splits).as_dict()
    result.bands["discharge"] = discharge_band(
        section, stage, values, result.slope, result.unit, result.precision, splits,
        method=result.method,
    )  # fmt: skip
    if result.row is not None:
        result.n_range = discharge_for_roughness(
            section, stage, result.row, result.slope, result.unit, splits, result.n_values
        )


def _bankfull(result: VisitAnalysis, options: AnalysisOptions) -> None:
    """Bankfull summary at the given level, else at the lower bank top (a note when neither)."""
    section = result.section
    if options.bankfull is not None:
        result.bankfull = bankfull_summary(section, parse_number(options.bankfull, "bankfull"))
        return
    stage = bankfull_stage(section.stations, section.elevations, result.codes)
    if stage is None:
        result.bankfull_note = (
            "No bank top coded on both sides of the deepest point: code the bank tops to see "
            "the bankfull summary."
        )
        return
    try:
        result.bankfull = bankfull_summary(section, stage)
    except SurveyError as exc:
        result.bankfull_note = f"No bankfull summary at the lower bank top: {exc}"


def nice_step(span: float, rows: int = 25) -> float:
    """A round step (1, 2, 2.5 or 5 × 10^k) giving about ``rows`` rows over ``span``.

    >>> nice_step(1.44), nice_step(30.0)
    (0.1, 2.0)
    """
    raw = max(span, 1e-9) / rows
    power = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * power >= raw:
            return round(m * power, 12)
    return 10 * power


def _rating(result: VisitAnalysis, n: float | None, options: AnalysisOptions) -> None:
    """Rating table from the lowest bed to the lower end, at a round step."""
    section = result.section
    step = options.rating_step or nice_step(section.highest_stage - section.lowest)
    step = parse_number(step, "the rating step", positive=True)
    start = math.ceil(section.lowest / step) * step
    stages = rating_stages(section, step, start if start < section.highest_stage else None)
    if n is not None and result.slope is not None:
        values = result.n_values if result.splits else n
        splits = result.splits or None
        result.rating = rating_table(section, stages, values, result.slope, result.unit, splits)
    else:
        fig = section.table(stages)
        names = ("area", "wetted_perimeter", "top_width", "hydraulic_radius")
        result.rating = {"stage": stages, **{k: fig[k] for k in names}}


def _comparison(result: VisitAnalysis, earlier: Mapping) -> None:
    """Change since the earlier visit; a note (not an error) when the two cannot be compared."""
    before_stations = _in_order(earlier.get("stations", ()))
    if not usable_ground(before_stations):
        result.comparison_note = "The earlier visit has no usable ground line to compare with."
        return
    before, after = Section(*_ground(before_stations)), result.section
    stage = result.stage
    if stage is not None and stage > min(before.highest_stage, after.highest_stage):
        stage = None
    try:
        result.comparison = compare_visits(before, after, stage)
    except SurveyError as exc:
        result.comparison_note = f"Not compared with the earlier visit: {exc}"
        return
    result.previous = {"visit": dict(earlier.get("visit") or {}), "stations": before_stations}

"""The measured discharges of a section's visits, gathered for its measured rating.

:func:`visit_measurement` gauges one visit as the office analysis does -- its live stations
(:func:`stakeline.analysis.live_stations`), its water level by the one policy
(:func:`stakeline.analysis.visit_water_level`: the mean of the levels recorded), its gauging
records through :func:`stakeline.gauging.visit_gauging` -- and returns its (stage, discharge)
with the n it calibrated.  :func:`section_measurements` does so for every gauged visit of a
section in a store, which is what :func:`stakeline.analysis.analyse_visit` takes as
``measurements`` for the section's measured rating.  The store is only read (its public
methods; no SQL here).

Examples
--------
>>> from stakeline.store import Store
>>> store = Store.memory()
>>> riffle = next(v for v in store.load_demo() if v["section"] == "XS1 riffle")
>>> found = section_measurements(store, riffle["section_uuid"])
>>> len(found) >= 3 and all(m["discharge"] > 0 for m in found)
True
>>> store.close()
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from stakeline.analysis import live_stations, visit_water_level
from stakeline.errors import SurveyError
from stakeline.gauging import visit_gauging
from stakeline.survey.geometry import Section
from stakeline.survey.uncertainty import Precision
from stakeline.survey.units import unit_of

MEASUREMENT_KEYS = ("visit", "date", "unit", "stage", "discharge", "plus_minus", "relative",
                    "n", "n_plus_minus", "slope", "note")  # fmt: skip
"""Keys of a measurement dict, in print order."""


def visit_measurement(
    visit: Mapping,
    stations: Sequence[Mapping],
    gauging: Mapping,
    precision: Precision | None = None,
) -> dict:
    """The measured discharge of one visit, as a dict keyed by :data:`MEASUREMENT_KEYS`.

    ``visit`` is the store's visit dict (uuid, date, unit, water_levels, datum fields),
    ``stations`` its station dicts, ``gauging`` its :meth:`stakeline.store.Store.gauging`.
    ``stage`` (survey unit) and ``discharge`` (unit³/s) are None, with ``note`` saying why,
    when the visit has no usable measurement (no water level, a wet vertical not read...).
    """
    unit = unit_of(visit.get("unit") or "m").key
    out = dict.fromkeys(MEASUREMENT_KEYS)
    out.update(visit=visit.get("uuid"), date=visit.get("date"), unit=unit, note="")
    try:
        live = live_stations(visit, stations)
        section = Section([s["station"] for s in live], [s["elevation"] for s in live])
        stage = visit_water_level(visit.get("water_levels") or [])
        if stage is None:
            raise SurveyError("the visit has no water level")
        found = visit_gauging(section, stage, gauging, unit, precision=precision)
    except SurveyError as exc:
        out["note"] = str(exc)
        return out
    measured = found.measurement()
    if measured is None:
        out["stage"] = stage
        out["note"] = "the gauging is not complete (a wet vertical has no velocity)"
        return out
    out.update(measured)
    return out


def gauged_visits(store, section_uuid: str) -> list[dict]:
    """The section's visits (store visit-list dicts, by date) with a velocity read."""
    return [v for v in store.visits(section_uuid) if store.velocities(v["uuid"])]


def section_measurements(
    store,
    section_uuid: str,
    unit: str | None = None,
    precision: Precision | None = None,
    everything: bool = False,
) -> list[dict]:
    """The measured discharges of a section's gauged visits in ``store``, by date.

    Visits in another length ``unit`` than the one given are left out (a rating is fitted in
    one unit); so are visits without a usable measurement, unless ``everything`` is true (then
    they come with ``discharge`` None and a ``note``).  Dicts as :func:`visit_measurement`.

    Examples
    --------
    >>> from stakeline.store import Store
    >>> store = Store.memory()
    >>> riffle = next(v for v in store.load_demo() if v["section"] == "XS1 riffle")
    >>> [m["date"] for m in section_measurements(store, riffle["section_uuid"])][:2]
    ['2026-04-14', '2026-09-22']
    >>> store.close()
    """
    out = []
    for listed in gauged_visits(store, section_uuid):
        if unit is not None and listed["unit"] != unit:
            continue
        visit = store.visit(listed["uuid"])
        found = visit_measurement(
            visit, store.stations(visit["uuid"]), store.gauging(visit["uuid"]), precision
        )
        if everything or found["discharge"] is not None:
            out.append(found)
    return out

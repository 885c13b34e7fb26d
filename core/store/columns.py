"""The rules for every stored column of a site, section and visit (no SQL).

One home for what a column may hold: the store's setters build column values and check them
here, the package reader checks the logged field changes (``edits``) of an incoming package
here, and merging a conflict (``resolve --keep merge``) checks each change again before writing
it.  Identity columns (a record's uuid, the site of a section, the section of a visit, the
stamps) never change through an edit.

The gauging records have their rules here too: a current meter and its rating
(:func:`check_meter`), a velocity read at a vertical (:func:`check_velocity`, its points by
:func:`check_points`), a water-surface point (:func:`check_water_surface`) and the gauging's
settings kept in the visit's ``settings`` (:func:`check_gauging_settings`).  The store's setters,
the package reader and a conflict merge all check them here.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from typing import Any

from stakeline.errors import SurveyError
from stakeline.gauging.discharge import DISCHARGE_METHODS
from stakeline.gauging.vertical import SURFACE_COEFFICIENT, VERTICAL_METHODS, MeterRating
from stakeline.store.values import (
    METHODS,
    TEXT_LIMIT,
    StoreError,
    canonical_json,
    choice,
    iso_date,
    number,
    text,
)
from stakeline.survey import reduction

IDENTITY_COLUMNS = frozenset({"uuid", "site_uuid", "section_uuid", "created", "modified", "device"})
"""Columns an edit may never change: they tie records together and say who wrote them."""

TIME_LIMIT = 40
"""Longest time stamp text accepted (characters)."""


def _name(value: Any, what: str) -> str:
    name = text(value, what)
    if not name.strip() or name != name.strip():
        raise StoreError(f"{what} must be a name without leading or trailing spaces")
    return name


def _plain(value: Any, what: str) -> str:
    if value is None:
        raise StoreError(f"{what} must be text, not null")
    return text(value, what)


def _optional_number(value: Any, what: str) -> float | None:
    if value is not None and type(value) not in (int, float):
        raise StoreError(f"{what} must be a number, not {str(value)[:40]!r}")
    return number(value, what, optional=True)


def _positive(value: Any, what: str) -> float | None:
    result = _optional_number(value, what)
    if result is not None and result <= 0:
        raise StoreError("the distance between the stakes must be positive")
    return result


def _degrees(limit: float) -> Callable[[Any, str], float | None]:
    def check(value: Any, what: str) -> float | None:
        result = _optional_number(value, what)
        if result is not None and not -limit <= result <= limit:
            raise StoreError(f"{what} {result} is not within +-{limit:g} degrees")
        return result

    return check


def _flag(value: Any, what: str) -> int:
    if type(value) is not int or value not in (0, 1):
        raise StoreError(f"{what} must be 0 or 1, not {str(value)[:40]!r}")
    return value


def _date(value: Any, what: str) -> str:
    if not isinstance(value, str) or iso_date(value) != value:
        iso_date(value)  # raises with the reason
        raise StoreError(f"{what} {value[:40]!r} is not written as YYYY-MM-DD")
    return value


def _unit(value: Any, what: str) -> str:
    try:
        return reduction.check_unit(value)
    except (SurveyError, TypeError):
        raise StoreError(f"{what} must be one of {', '.join(reduction.UNITS)}") from None


def _time(value: Any, what: str, optional: bool = False) -> str | None:
    if value is None and optional:
        return None
    if not isinstance(value, str) or not value or len(value) > TIME_LIMIT:
        raise StoreError(f"{what} must be a time like 2026-04-14T10:05:00+00:00")
    return value


def _json_list(item: Callable[[Any, str], Any]) -> Callable[[Any, str], str]:
    def check(value: Any, what: str) -> str:
        try:
            items = json.loads(value) if isinstance(value, str) else None
        except ValueError:
            items = None
        if not isinstance(items, list):
            raise StoreError(f"{what} must be a JSON list")
        for entry in items:
            item(entry, what)
        if canonical_json(items) != value:
            raise StoreError(f"{what} is not in the form the store writes")
        return value

    return check


def _json_object(value: Any, what: str) -> str:
    try:
        found = json.loads(value) if isinstance(value, str) else None
    except ValueError:
        found = None
    if not isinstance(found, dict) or len(value) > TEXT_LIMIT or canonical_json(found) != value:
        raise StoreError(f"{what} must be a small JSON object")
    return value


def _visit_settings(value: Any, what: str) -> str:
    _json_object(value, what)
    found = json.loads(value)
    if GAUGING_KEY in found:
        check_gauging_settings(found[GAUGING_KEY])
    return value


def _number_item(value: Any, what: str) -> float:
    if type(value) not in (int, float):
        raise StoreError(f"{what} must hold numbers, not {str(value)[:40]!r}")
    return number(value, what)


def _crew_name(value: Any, what: str) -> str:
    return _plain(value, what)


COLUMN_RULES: dict[str, dict[str, Callable[[Any, str], Any]]] = {
    "sites": {"name": _name, "stream": _plain, "description": _plain},
    "sections": {
        "name": _name,
        "left_stake": _plain,
        "right_stake": _plain,
        "origin": lambda v, what: choice(v, ("left", "right"), what),
        "benchmark_name": _plain,
        "benchmark_elevation": _optional_number,
        "benchmark_assumed": _flag,
        "left_lon": _degrees(180),
        "left_lat": _degrees(90),
        "right_lon": _degrees(180),
        "right_lat": _degrees(90),
    },
    "visits": {
        "date": _date,
        "crew": _json_list(_crew_name),
        "unit": _unit,
        "method": lambda v, what: choice(v, METHODS, what),
        "line_left": _optional_number,
        "line_right": _optional_number,
        "line_check": _optional_number,
        "stake_distance": _positive,
        "backsight": _optional_number,
        "notes": _plain,
        "planned": _json_list(_number_item),
        "settings": _visit_settings,
        "finished": lambda v, what: _time(v, what, optional=True),
    },
}
"""For each table, each column a field change may set, with the rule its stored value obeys."""


def check_column(table: str, column: str, value: Any) -> Any:
    """``value`` if it may be stored in ``table.column``; else StoreError saying why.

    >>> check_column("visits", "unit", "ft")
    'ft'
    >>> check_column("visits", "unit", "furlong")
    Traceback (most recent call last):
    ...
    stakeline.store.values.StoreError: visit unit must be one of m, ft
    """
    what = f"{table[:-1]} {column.replace('_', ' ')}"
    if column in IDENTITY_COLUMNS:
        raise StoreError(f"the {what} never changes; an edit cannot set it")
    rules = COLUMN_RULES.get(table)
    if rules is None:
        raise StoreError(f"{table!r} records have no editable fields")
    if column not in rules:
        raise StoreError(f"{table[:-1]} records have no field {column[:40]!r}")
    return rules[column](value, what)


def check_columns(table: str, columns: Any) -> dict:
    """``columns`` (column -> stored value) if every one may be stored; else StoreError."""
    if not isinstance(columns, dict):
        raise StoreError(f"a change to a {table[:-1]} must be a set of fields")
    return {column: check_column(table, column, value) for column, value in columns.items()}


# --- gauging -------------------------------------------------------------------------------
METER_KINDS = ("rotating", "electromagnetic", "acoustic")
"""Kinds of current meter: a rotating element (velocity from revolutions through the meter's
rating ``v = a + b·N``) or a meter that reads the velocity directly."""

METER_FIELDS = ("serial", "kind", "unit", "a", "b", "split", "a_high", "b_high", "lowest",
                "highest", "note")  # fmt: skip
"""Columns of a meter's record (``meters`` and ``visit_meters``), after its identity."""

GAUGING_KEY = "gauging"
"""Key of the gauging's settings in a visit's ``settings`` object."""

GAUGING_DEFAULTS = {"method": DISCHARGE_METHODS[0], "surface_coefficient": SURFACE_COEFFICIENT}
"""The gauging's settings when the crew has set none: midsection, surface coefficient 0.85."""

POINT_READINGS = (frozenset({"velocity"}), frozenset({"revolutions", "seconds"}))
"""What one point of a vertical holds: a velocity read directly, or revolutions and seconds."""


def _strict_number(value: Any, what: str, optional: bool = False) -> float | None:
    if value is None and optional:
        return None
    if type(value) not in (int, float):
        raise StoreError(f"{what} must be a number, not {str(value)[:40]!r}")
    return number(value, what)


def check_meter(fields: dict) -> dict:
    """The columns of a current meter (keys :data:`METER_FIELDS`) if they may be stored; else
    StoreError.  A rotating meter needs its rating ``a`` and ``b`` (b > 0; a second line needs
    ``split``, ``a_high`` and ``b_high`` together); a direct-reading meter has none.  Lengths in
    the meter's ``unit``; the rated range ``lowest``-``highest`` (unit/s) is optional.

    >>> check_meter({"serial": "M-1", "kind": "rotating", "unit": "m", "a": 0.01, "b": 0.64})["b"]
    0.64
    """
    if not isinstance(fields, dict) or set(fields) - set(METER_FIELDS):
        raise StoreError(f"a meter has the fields {', '.join(METER_FIELDS)}")
    out = {name: fields.get(name) for name in METER_FIELDS}
    out["serial"] = _name(out["serial"], "meter serial")
    out["kind"] = choice(out["kind"], METER_KINDS, "meter kind")
    out["unit"] = _unit(out["unit"], "meter unit")
    out["note"] = text(out["note"], "meter note")
    for name in ("a", "b", "split", "a_high", "b_high", "lowest", "highest"):
        out[name] = _strict_number(out[name], f"meter {name.replace('_', ' ')}", optional=True)
    rating = ("a", "b", "split", "a_high", "b_high")
    if out["kind"] != "rotating" and any(out[k] is not None for k in rating):
        raise StoreError(f"a {out['kind']} meter reads velocities directly: it has no a or b")
    if out["kind"] == "rotating" and (out["a"] is None or out["b"] is None):
        raise StoreError("a rotating meter needs its rating: a and b of v = a + b·N")
    try:
        meter_rating(out)
    except SurveyError as exc:
        raise StoreError(str(exc)) from None
    return out


def meter_rating(meter: dict) -> MeterRating:
    """The :class:`~stakeline.gauging.vertical.MeterRating` of a meter record (a direct-reading
    meter gets the rating ``v = N``, never used: only its serial and rated range matter)."""
    direct = meter.get("a") is None
    return MeterRating(
        meter["serial"], a=0.0 if direct else meter["a"], b=1.0 if direct else meter["b"],
        unit=meter["unit"], split=meter.get("split"), a_high=meter.get("a_high"),
        b_high=meter.get("b_high"), lowest=meter.get("lowest"), highest=meter.get("highest"),
    )  # fmt: skip


def check_points(points: Any, method: str, what: str = "the vertical") -> dict:
    """The points of a vertical if they may be stored: a dict from point names of ``method``
    (a subset: the crew reads them one at a time) to ``{"velocity": v}`` (unit/s, any sign) or
    ``{"revolutions": n, "seconds": t}`` (n >= 0, t > 0); else StoreError.

    >>> check_points({"v06": {"velocity": 0.4}}, "one-point")
    {'v06': {'velocity': 0.4}}
    """
    method = choice(method, tuple(VERTICAL_METHODS), f"{what}: method")
    if not isinstance(points, dict):
        raise StoreError(f"{what}: the points must be a set of readings by point")
    out = {}
    for name, reading in points.items():
        if name not in VERTICAL_METHODS[method]:
            raise StoreError(
                f"{what}: point {str(name)[:20]!r} is not read by the {method} method "
                f"({', '.join(VERTICAL_METHODS[method])})"
            )
        if not isinstance(reading, dict) or frozenset(reading) not in POINT_READINGS:
            raise StoreError(f"{what}: point {name} holds a velocity, or revolutions and seconds")
        values = {k: _strict_number(v, f"{what}: {k} at {name}") for k, v in reading.items()}
        if values.get("revolutions", 0) < 0:
            raise StoreError(f"{what}: revolutions at {name} cannot be negative")
        if "seconds" in values and not values["seconds"] > 0:
            raise StoreError(f"{what}: the counting time at {name} must be positive")
        out[name] = values
    return out


def check_velocity(fields: dict, what: str = "the vertical") -> dict:
    """The values of a velocity read at a vertical if they may be stored; else StoreError.

    ``station`` (survey unit), ``method`` (a key of
    :data:`stakeline.gauging.vertical.VERTICAL_METHODS`), ``points`` (see :func:`check_points`),
    ``meter_uuid`` (None, or the meter whose rating turns revolutions into velocity; needed when
    a point holds revolutions), ``angle`` (degrees between the flow and the normal to the
    section, strictly within ±90, or None), ``depth`` (the wading rod's depth, >= 0, or None)
    and ``note``.
    """
    out = {
        "station": number(fields.get("station"), f"{what}: station"),
        "method": choice(fields.get("method"), tuple(VERTICAL_METHODS), f"{what}: method"),
        "meter_uuid": fields.get("meter_uuid"),
        "angle": number(fields.get("angle"), f"{what}: angle", optional=True),
        "depth": number(fields.get("depth"), f"{what}: depth", optional=True),
        "note": text(fields.get("note"), f"{what}: note"),
    }
    out["points"] = check_points(fields.get("points"), out["method"], what)
    if out["meter_uuid"] is not None and not isinstance(out["meter_uuid"], str):
        raise StoreError(f"{what}: the meter must be named by its id")
    counted = [n for n, r in out["points"].items() if "revolutions" in r]
    if counted and out["meter_uuid"] is None:
        raise StoreError(
            f"{what}: revolutions at {counted[0]} need the meter whose rating turns them into "
            "a velocity"
        )
    if out["angle"] is not None and not abs(out["angle"]) < 90:
        raise StoreError(
            f"{what}: angle of flow {out['angle']:g}° is not between -90° and 90° (the angle "
            "between the flow and the normal to the section)"
        )
    if out["depth"] is not None and out["depth"] < 0:
        raise StoreError(f"{what}: the wading-rod depth {out['depth']:g} is negative")
    return out


def check_water_surface(fields: dict, what: str = "the water-surface point") -> dict:
    """``distance`` along the stream (survey unit, downstream positive), ``elevation`` of the
    water surface (survey unit) and ``note`` of a water-surface point; else StoreError."""
    return {
        "distance": number(fields.get("distance"), f"{what}: distance along the stream"),
        "elevation": number(fields.get("elevation"), f"{what}: water-surface elevation"),
        "note": text(fields.get("note"), f"{what}: note"),
    }


def check_gauging_settings(value: Any) -> dict:
    """The gauging's settings (``method``: midsection or meansection; ``surface_coefficient``:
    in (0, 1]) if they may be stored in a visit's settings; else StoreError.  Either may be
    left out (its default applies)."""
    if not isinstance(value, dict) or set(value) - set(GAUGING_DEFAULTS):
        raise StoreError(f"the gauging settings hold {' and '.join(GAUGING_DEFAULTS)} only")
    out = dict(value)
    if "method" in out:
        out["method"] = choice(out["method"], DISCHARGE_METHODS, "the gauging method")
    if "surface_coefficient" in out:
        k = _strict_number(out["surface_coefficient"], "the surface coefficient")
        if not 0 < k <= 1:
            raise StoreError(f"the surface coefficient must be in (0, 1], got {k:g}")
        out["surface_coefficient"] = k
    return out

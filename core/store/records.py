"""What the records of a visit package may hold: every field of every record kind, with its
kind of value, and the checks that a package's records form one self-consistent visit.  No SQL.

Used by :mod:`stakeline.store.package` on every package before anything reaches the store:
numbers are finite and of sane size (no integer SQLite cannot hold), dates are real calendar
dates written YYYY-MM-DD, an added or corrected station has both a station and a reading, and
each logged field change (``edits``) obeys the store's own column rules
(:mod:`stakeline.store.columns`) -- so no package can bring a value the store's own setters
would refuse.  The gauging records (:data:`GAUGING_LISTS`: the meters a visit used, velocity
versions and water-surface versions) obey the same rules: a meter's rating, each vertical's
method and points, and every revolution counted through a meter the package carries.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from typing import Any

from stakeline.gauging.vertical import VERTICAL_METHODS
from stakeline.store.columns import (
    METER_FIELDS,
    METER_KINDS,
    TIME_LIMIT,
    check_columns,
    check_meter,
    check_velocity,
    check_water_surface,
)
from stakeline.store.values import METHODS, TEXT_LIMIT, StoreError, canonical_json, iso_date
from stakeline.survey.reduction import UNITS

MAX_ROWS = 20_000
"""Most records of one kind (station versions, edits...) accepted in one package."""

MAX_INTEGER = 2**53
"""Largest magnitude of a whole number in a package (exact as a float, fits SQLite)."""

MAX_COUNT = 2**31 - 1
"""Largest entry number (``seq``) of a station version."""


class PackageError(StoreError):
    """A package file that cannot be imported; the message is the one-line reason."""


_UUID = re.compile(r"\A[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\Z")
_STAMPS = {"created": "time", "modified": "time", "device": "text"}
FIELDS: dict[str, dict[str, str]] = {
    "site": {"uuid": "uuid", "name": "text", "stream": "text", "description": "text", **_STAMPS},
    "section": {
        "uuid": "uuid", "site_uuid": "uuid", "name": "text", "left_stake": "text",
        "right_stake": "text", "origin": "origin", "benchmark_name": "text",
        "benchmark_elevation": "number?", "benchmark_assumed": "flag", "left_lon": "number?",
        "left_lat": "number?", "right_lon": "number?", "right_lat": "number?", **_STAMPS,
    },
    "visit": {
        "uuid": "uuid", "section_uuid": "uuid", "date": "date", "crew": "names", "unit": "unit",
        "method": "method", "line_left": "number?", "line_right": "number?",
        "line_check": "number?", "stake_distance": "number?", "backsight": "number?",
        "notes": "text", "planned": "numbers", "settings": "object", "finished": "time?",
        **_STAMPS,
    },
    "edits": {
        "uuid": "uuid", "record_table": "table", "record_uuid": "uuid", "before": "object",
        "after": "object", "created": "time", "device": "text",
    },
    "station_versions": {
        "uuid": "uuid", "station_uuid": "uuid", "visit_uuid": "uuid", "action": "action",
        "station": "number?", "reading": "number?", "code": "text?", "note": "text?",
        "seq": "count", "undoes": "uuid?", "created": "time", "device": "text",
    },
    "water_levels": {
        "uuid": "uuid", "visit_uuid": "uuid", "elevation": "number", "time": "time", **_STAMPS,
    },
    "overrides": {
        "uuid": "uuid", "visit_uuid": "uuid", "kind": "text", "station": "number?",
        "reason": "text", **_STAMPS,
    },
    "visit_meters": {
        "uuid": "uuid", "visit_uuid": "uuid", "meter_uuid": "uuid", "serial": "text",
        "kind": "meter_kind", "unit": "unit", "a": "number?", "b": "number?", "split": "number?",
        "a_high": "number?", "b_high": "number?", "lowest": "number?", "highest": "number?",
        "note": "text", **_STAMPS,
    },
    "velocity_versions": {
        "uuid": "uuid", "vertical_uuid": "uuid", "visit_uuid": "uuid", "action": "action",
        "station": "number?", "method": "vertical_method?", "points": "object?",
        "meter_uuid": "uuid?", "angle": "number?", "depth": "number?", "note": "text?",
        "seq": "count", "undoes": "uuid?", "created": "time", "device": "text",
    },
    "water_surface_versions": {
        "uuid": "uuid", "point_uuid": "uuid", "visit_uuid": "uuid", "action": "action",
        "distance": "number?", "elevation": "number?", "note": "text?", "seq": "count",
        "undoes": "uuid?", "created": "time", "device": "text",
    },
}  # fmt: skip
"""Every field of every record kind in a package, with its kind of value."""

LISTS = ("edits", "station_versions", "water_levels", "overrides")
"""Lists of records every package holds."""

GAUGING_LISTS = ("visit_meters", "velocity_versions", "water_surface_versions")
"""Lists of gauging records: in every package of format 3, in none of format 2."""

CHOICES = {
    "origin": ("left", "right"),
    "unit": tuple(UNITS),
    "method": METHODS,
    "table": ("sites", "sections", "visits"),
    "action": ("add", "correct", "remove", "undo"),
    "meter_kind": METER_KINDS,
    "vertical_method": tuple(VERTICAL_METHODS),
}
OWNER_TABLES = {"site": "sites", "section": "sections", "visit": "visits"}


def is_number(value: Any) -> bool:
    """A finite JSON number Stakeline could have written: a float, or a whole number of at
    most :data:`MAX_INTEGER` in magnitude."""
    if type(value) is float:
        return math.isfinite(value)
    return type(value) is int and -MAX_INTEGER <= value <= MAX_INTEGER


def _is_text(value: Any, limit: int = TEXT_LIMIT) -> bool:
    return type(value) is str and len(value) <= limit


def _is_date(value: Any) -> bool:
    try:
        return type(value) is str and iso_date(value) == value
    except StoreError:
        return False


_CHECKS: dict[str, Callable[[Any], bool]] = {
    "number": is_number,
    "count": lambda v: type(v) is int and 0 <= v <= MAX_COUNT,
    "text": _is_text,
    "time": lambda v: _is_text(v, TIME_LIMIT),
    "uuid": lambda v: type(v) is str and _UUID.match(v) is not None,
    "date": _is_date,
    "flag": lambda v: type(v) is int and v in (0, 1),
    "names": lambda v: type(v) is list and all(_is_text(n) for n in v),
    "numbers": lambda v: type(v) is list and len(v) <= MAX_ROWS and all(is_number(n) for n in v),
    "object": lambda v: type(v) is dict,
    **{kind: (lambda v, allowed=allowed: v in allowed) for kind, allowed in CHOICES.items()},
}


def _checker(kind: str) -> Callable[[Any], bool]:
    check = _CHECKS[kind.rstrip("?")]
    if kind.endswith("?"):
        return lambda v: v is None or check(v)
    return check


_RECORD_CHECKS = {
    kind: (frozenset(fields), [(name, _checker(k)) for name, k in fields.items()])
    for kind, fields in FIELDS.items()
}


def value_ok(kind: str, value: Any) -> bool:
    """Whether ``value`` is a valid value of a field of kind ``kind`` (see FIELDS)."""
    return _checker(kind)(value)


def _shown(value: Any) -> str:
    if type(value) is int and abs(value) > 10**40:
        return f"a whole number of {len(str(abs(value)))} digits"
    return repr(str(value)[:40])


def _check_record(kind: str, record: Any, where: str) -> None:
    names, checks = _RECORD_CHECKS[kind]
    if type(record) is not dict or record.keys() != names:
        raise PackageError(f"{where} does not have the fields of a {kind} record")
    for name, check in checks:
        if not check(record[name]):
            raise PackageError(f"{where} has a bad {name} value {_shown(record[name])}")


def _check_version(row: dict, where: str) -> None:
    if row["action"] in ("add", "correct") and (row["station"] is None or row["reading"] is None):
        raise PackageError(f"{where} ({row['action']}) has no station or no reading")
    if row["action"] == "undo" and row["undoes"] is None:
        raise PackageError(f"{where} (undo) does not say which change it undoes")


def _check_edit(row: dict, where: str) -> None:
    for side in ("before", "after"):
        try:
            check_columns(row["record_table"], row[side])
        except StoreError as exc:
            raise PackageError(f"{where} has a bad {side} value: {exc}") from None
    if set(row["before"]) != set(row["after"]):
        raise PackageError(f"{where} does not name the same fields before and after")


def _check_meter(row: dict, where: str, meters: dict[str, bool]) -> None:
    try:
        check_meter({name: row[name] for name in METER_FIELDS})
    except StoreError as exc:
        raise PackageError(f"{where} is not a usable meter: {exc}") from None
    if row["meter_uuid"] in meters:
        raise PackageError(f"{where} records a meter the visit already has")
    meters[row["meter_uuid"]] = row["a"] is not None  # whether it counts revolutions


def _check_changed(row: dict, where: str, check, fields) -> None:
    """A version that adds, corrects or removes a record carries values its rules accept; an
    undo names the change it undoes."""
    if row["action"] == "undo":
        if row["undoes"] is None:
            raise PackageError(f"{where} (undo) does not say which change it undoes")
        return
    try:
        check({name: row[name] for name in fields})
    except StoreError as exc:
        raise PackageError(f"{where} ({row['action']}): {exc}") from None


def _check_vertical(row: dict, where: str, meters: dict[str, bool]) -> None:
    fields = ("station", "method", "points", "meter_uuid", "angle", "depth", "note")
    _check_changed(row, where, check_velocity, fields)
    if row["action"] == "undo" or row["meter_uuid"] is None:
        return
    if row["meter_uuid"] not in meters:
        raise PackageError(f"{where} names a meter the package does not carry")
    if not meters[row["meter_uuid"]] and any("revolutions" in p for p in row["points"].values()):
        raise PackageError(f"{where} counts revolutions on a meter that reads velocities")


def _check_lists(records: dict, gauging: bool | None) -> tuple[str, ...]:
    """The list kinds ``records`` must hold: the gauging lists with them (``gauging`` True),
    without (False), or either way as given (None)."""
    base = {"site", "section", "visit", *LISTS}
    full = base | set(GAUGING_LISTS)
    allowed = {True: (full,), False: (base,), None: (base, full)}[gauging]
    if not isinstance(records, dict) or set(records) not in allowed:
        raise PackageError("its records are not those of a visit package")
    return LISTS + (GAUGING_LISTS if set(records) == full else ())


def check_records(records: Any, visit_uuid: str, gauging: bool | None = True) -> None:
    """Raise PackageError unless ``records`` is a well-formed, self-consistent visit.

    ``gauging``: the records hold the :data:`GAUGING_LISTS` (True, format 3), do not (False,
    format 2), or may (None: the unsigned format 1, which is only ever held).
    """
    lists = _check_lists(records, gauging)
    for kind in ("site", "section", "visit"):
        _check_record(kind, records[kind], kind)
    site, section, visit = records["site"], records["section"], records["visit"]
    if section["site_uuid"] != site["uuid"] or visit["section_uuid"] != section["uuid"]:
        raise PackageError("its site, section and visit do not belong together")
    if visit["uuid"] != visit_uuid:
        raise PackageError("its manifest names a different visit than its records")
    try:  # the settings hold the gauging's: the store's own rule for them
        check_columns("visits", {"settings": canonical_json(visit["settings"])})
    except StoreError as exc:
        raise PackageError(f"visit has bad settings: {exc}") from None
    owners = {site["uuid"]: "sites", section["uuid"]: "sections", visit["uuid"]: "visits"}
    seen = set(owners)
    meters: dict[str, bool] = {}
    for kind in lists:
        rows = records[kind]
        if not isinstance(rows, list) or len(rows) > MAX_ROWS:
            raise PackageError(f"its {kind} are not a list of at most {MAX_ROWS} records")
        for i, row in enumerate(rows):
            where = f"{kind} record {i + 1}"
            _check_record(kind, row, where)
            if row["uuid"] in seen:
                raise PackageError(f"{where} repeats an id")
            seen.add(row["uuid"])
            if kind == "edits":
                if owners.get(row["record_uuid"]) != row["record_table"]:
                    raise PackageError(f"edit {i + 1} is not about this visit's records")
                _check_edit(row, f"edit {i + 1}")
            elif row["visit_uuid"] != visit_uuid:
                raise PackageError(f"{where} belongs to another visit")
            elif kind == "station_versions":
                _check_version(row, where)
            elif kind == "visit_meters":
                _check_meter(row, where, meters)
            elif kind == "velocity_versions":
                _check_vertical(row, where, meters)
            elif kind == "water_surface_versions":
                _check_changed(row, where, check_water_surface, ("distance", "elevation", "note"))

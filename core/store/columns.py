"""The rules for every stored column of a site, section and visit (no SQL).

One home for what a column may hold: the store's setters build column values and check them
here, the package reader checks the logged field changes (``edits``) of an incoming package
here, and merging a conflict (``resolve --keep merge``) checks each change again before writing
it.  Identity columns (a record's uuid, the site of a section, the section of a visit, the
stamps) never change through an edit.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from typing import Any

from stakeline.errors import SurveyError
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
        "settings": _json_object,
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

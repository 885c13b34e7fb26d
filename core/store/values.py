"""Values of the Stakeline store without SQL: validation of what a person types, reduction of a
visit's readings to elevations, and replay of append-only station versions.

Used by :mod:`stakeline.store` (which holds all the SQL) and :mod:`stakeline.store.package`.
"""

from __future__ import annotations

import json
import os
import re
import uuid as uuidlib
from datetime import UTC, date, datetime
from typing import Any

from stakeline.errors import SurveyError
from stakeline.survey.datum import Datum, plain_list
from stakeline.survey.numbers import parse_number

METHODS = ("line", "rod")
"""Ways of reading the bed: level line and plumb, or level and rod."""

TEXT_LIMIT = 10_000
"""Longest note, name or reason accepted (characters)."""

SECTION_FIELDS = (
    "name",
    "left_stake",
    "right_stake",
    "origin",
    "benchmark_name",
    "benchmark_elevation",
    "benchmark_assumed",
    "left_coordinates",
    "right_coordinates",
)
VISIT_FIELDS = (
    "date",
    "crew",
    "unit",
    "method",
    "line_left",
    "line_right",
    "line_check",
    "stake_distance",
    "backsight",
    "notes",
    "settings",
    "planned_stations",
)
STATION_FIELDS = ("station", "reading", "code", "note")


class StoreError(SurveyError):
    """A store operation that cannot be done as asked (unknown record, bad value, foreign file)."""


def now() -> str:
    """The current time as ISO 8601 UTC with microseconds."""
    return datetime.now(UTC).isoformat(timespec="microseconds")


_RANDOM = {"pid": 0, "pool": b"", "at": 0}


def new_uuid() -> str:
    """A fresh random (version 4) UUID in text form.

    Random bytes come from ``os.urandom`` 4 KiB at a time (one system call per 256 UUIDs); the
    pool is refilled in a forked child so two processes never share it.
    """
    state = _RANDOM
    if state["at"] + 16 > len(state["pool"]) or state["pid"] != os.getpid():
        state.update(pid=os.getpid(), pool=os.urandom(4096), at=0)
    at = state["at"]
    state["at"] = at + 16
    return str(uuidlib.UUID(bytes=state["pool"][at : at + 16], version=4))


def number(value: Any, what: str, optional: bool = False) -> float | None:
    """``value`` as a finite float (survey unit), or None when optional; else StoreError."""
    return parse_number(value, what, optional=optional, error=StoreError)


def text(value: Any, what: str) -> str:
    """``value`` as a string of at most TEXT_LIMIT characters; else StoreError."""
    if value is None:
        return ""
    if not isinstance(value, str):
        raise StoreError(f"{what} must be text, not {value!r}")
    if len(value) > TEXT_LIMIT:
        raise StoreError(f"{what} is longer than {TEXT_LIMIT} characters; shorten it")
    return value


def choice(value: Any, allowed: tuple[str, ...], what: str) -> str:
    """``value`` if it is one of ``allowed``; else StoreError naming the choices."""
    if value not in allowed:
        raise StoreError(f"{what} must be one of {', '.join(allowed)}; got {value!r}")
    return value


_ISO_DATE = re.compile(r"\A[0-9]{4}-[0-9]{2}-[0-9]{2}\Z")


def iso_date(value: Any) -> str:
    """``value`` as an ISO calendar date (``2026-04-14``): exactly YYYY-MM-DD, a real day of
    the calendar, nothing before or after; else StoreError.

    >>> iso_date("2026-04-14")
    '2026-04-14'
    """
    if isinstance(value, date) and not isinstance(value, datetime):
        return value.isoformat()
    if isinstance(value, str) and _ISO_DATE.match(value):
        try:
            return date.fromisoformat(value).isoformat()
        except ValueError:
            pass
    shown = str(value)[:40] if isinstance(value, str) else type(value).__name__
    raise StoreError(f"date {shown!r} is not a calendar date like 2026-04-14")


def coordinates(value: Any, what: str) -> tuple[float | None, float | None]:
    """(lon, lat) in degrees, or (None, None); else StoreError."""
    if value is None:
        return None, None
    try:
        lon, lat = value
    except (TypeError, ValueError):
        raise StoreError(f"{what} must be (longitude, latitude) or empty") from None
    lon, lat = number(lon, f"{what} longitude"), number(lat, f"{what} latitude")
    if not (-180 <= lon <= 180 and -90 <= lat <= 90):
        raise StoreError(f"{what} ({lon}, {lat}) is not a longitude/latitude in degrees")
    return lon, lat


def canonical_json(value: Any) -> str:
    """Canonical JSON text (sorted keys, no spaces) so equal values give equal text."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), allow_nan=False)


def elevations(datum: dict, stations: list[float], readings: list[float]) -> list:
    """Ground elevations (survey unit) of readings at stations, from the visit's ``datum`` dict
    (``method``, ``line_left``, ``line_right``, ``stake_distance``, ``backsight``, ``origin``,
    ``benchmark_elevation``): see :class:`stakeline.survey.datum.Datum`.  None where a reading
    cannot be reduced (no line heights or backsight yet)."""
    return plain_list(Datum.from_visit(datum).elevations(stations, readings))


def replay(
    versions: list[dict], identity: str = "station_uuid"
) -> tuple[dict[str, dict], dict[str, dict], set[str]]:
    """(current version by record, first version by record, undone version uuids) of
    ``versions`` (oldest first) whose record identity is the column ``identity`` (stations by
    default; the gauging's version logs name theirs)."""
    undone = {v["undoes"] for v in versions if v["action"] == "undo"}
    first: dict[str, dict] = {}
    current: dict[str, dict] = {}
    for v in versions:
        if v["action"] == "undo":
            continue
        first.setdefault(v[identity], v)
        if v["uuid"] not in undone:
            current[v[identity]] = v
    return current, first, undone


def version_dict(row: dict, first: dict, identity: str, fields) -> dict:
    """One version of a crew-entered record as the store hands it out: ``uuid`` (the record,
    from the column ``identity``), ``version``, ``visit_uuid``, ``action``, the ``fields``,
    ``seq``, ``removed``, ``created`` (the record's first version) and ``modified`` (this
    version), ``device``."""
    return {
        "uuid": row[identity],
        "version": row["uuid"],
        "visit_uuid": row["visit_uuid"],
        "action": row["action"],
        **{name: row[name] for name in fields},
        "seq": row["seq"],
        "removed": row["action"] == "remove",
        "created": first["created"],
        "modified": row["created"],
        "device": row["device"],
    }

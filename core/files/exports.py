"""Plain-file exports of a visit: stations CSV, rating CSV and GeoJSON (RFC 7946).

Pure data in, text out; the CLI gathers the data from the store.  CSV files are UTF-8 with a
header row; the stations file keeps the ``station``/``elevation`` column names so it reads back
with ``stakeline section``.  GeoJSON follows RFC 7946: WGS 84 longitude/latitude in that order,
no ``crs`` member, a ``bbox`` of ``[west, south, east, north]``.
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from stakeline.errors import SurveyError
from stakeline.files.durable import write_atomic
from stakeline.survey.rating import RATING_COLUMNS, column_heading
from stakeline.survey.reduction import check_unit
from stakeline.survey.units import unit_of

STATION_COLUMNS = ("station", "reading", "elevation", "code", "note", "unit")
"""Columns of the stations CSV, in order."""

EARTH_RADIUS_M = 6_371_008.8
"""Mean radius of the Earth (IUGG), metres; the sphere is ample over a cross-section's width."""

COORDINATE_DECIMALS = 8
"""Decimals kept in longitude/latitude: 1e-8° is about 1 mm, below any stake's accuracy."""


def _text(rows: list[list[str]]) -> str:
    out = io.StringIO()
    csv.writer(out, lineterminator="\n").writerows(rows)
    return out.getvalue()


def _number(value, digits: int) -> str:
    return "" if value is None else f"{float(value):.{digits}f}"


def signed_by(signer: dict | None, visit: dict) -> str:
    """One line naming who vouches for a visit's records (chain of custody), for a report or
    an export.

    ``signer`` is :meth:`stakeline.store.Store.visit_signer`'s dict (the device whose signed
    package brought the visit, and who trusted that device), or None when the visit was not
    brought by a signed package: then the device that entered it is named.  Names are quoted
    with their control characters escaped.

    Examples
    --------
    >>> signer = {"device": "tablet-7", "fingerprint": "ab12-cd34", "trusted_by": "ana@office",
    ...           "trusted_at": "2026-05-01T09:00:00+00:00", "retired_at": None,
    ...           "imported": "2026-05-02T10:00:00+00:00"}
    >>> signed_by(signer, {})
    "signed by device 'tablet-7' (key ab12-cd34), trusted by 'ana@office' on 2026-05-01; imported 2026-05-02"
    >>> signed_by(None, {"device": "office-pc"})
    "not from a signed package: entered on device 'office-pc'"
    """
    if signer is None:
        return f"not from a signed package: entered on device {str(visit.get('device') or '?')!r}"
    line = (
        f"signed by device {str(signer['device'])!r} (key {signer['fingerprint']}), trusted by "
        f"{str(signer.get('trusted_by') or '?')!r} on {str(signer.get('trusted_at') or '?')[:10]}"
        f"; imported {str(signer.get('imported') or '?')[:10]}"
    )
    if signer.get("retired_at"):
        line += f"; the key was retired on {str(signer['retired_at'])[:10]}"
    return line


def stations_csv(stations: Sequence[dict], unit: str, custody: str | None = None) -> str:
    """CSV text of station records (dicts with station, reading, elevation, code, note).

    Lengths in the survey unit ``unit`` (named in the ``unit`` column); 4 decimals.  ``custody``
    (:func:`signed_by`) is written as a comment line ``# ...`` before the header row; the
    section reader skips such lines, so the file still reads back with ``stakeline section``.
    """
    check_unit(unit)
    rows = [list(STATION_COLUMNS)]
    for s in stations:
        rows.append(
            [
                _number(s["station"], 4),
                _number(s.get("reading"), 4),
                _number(s["elevation"], 4),
                s.get("code", "") or "",
                s.get("note", "") or "",
                unit,
            ]
        )
    comment = "" if custody is None else "# " + " ".join(str(custody).splitlines()) + "\n"
    return comment + _text(rows)


def rating_csv(table: dict, unit: str) -> str:
    """CSV text of a rating table (see :func:`stakeline.survey.rating.rating_table`); units in the headings."""
    rows = [[column_heading(name, unit) for name in RATING_COLUMNS]]
    for i in range(len(table["stage"])):
        rows.append([f"{float(table[name][i]):.6g}" for name in RATING_COLUMNS])
    return _text(rows)


def _radians(lonlat, name: str) -> tuple[float, float]:
    try:
        lon, lat = (float(v) for v in lonlat)
    except (TypeError, ValueError):
        raise SurveyError(
            f"{name} coordinates {lonlat!r} are not a (longitude, latitude) pair"
        ) from None
    if not (-180 <= lon <= 180 and -90 <= lat <= 90):
        raise SurveyError(
            f"{name} coordinates ({lon}, {lat}) are out of range; give longitude then latitude"
        )
    return math.radians(lon), math.radians(lat)


def stake_distance_m(left_lonlat, right_lonlat) -> float:
    """Great-circle distance between two (lon, lat) points, metres (haversine)."""
    lon1, lat1 = _radians(left_lonlat, "left stake")
    lon2, lat2 = _radians(right_lonlat, "right stake")
    h = (
        math.sin((lat2 - lat1) / 2) ** 2
        + math.cos(lat1) * math.cos(lat2) * math.sin((lon2 - lon1) / 2) ** 2
    )
    return 2 * EARTH_RADIUS_M * math.asin(math.sqrt(h))


def station_positions(
    stations,
    unit: str,
    left_lonlat,
    right_lonlat,
    origin: str = "left",
    stake_distance: float | None = None,
) -> np.ndarray:
    """(lon, lat) of each station, shape ``(n, 2)``, along the line from the origin stake.

    Stations are tape distances from the ``origin`` stake towards the other.  With
    ``stake_distance`` (the taped distance between stakes, survey unit) the tape is fitted to
    the two stake positions; without it, stations are laid off in ``unit`` along the bearing.
    """
    a, b = (left_lonlat, right_lonlat) if origin == "left" else (right_lonlat, left_lonlat)
    lon1, lat1 = _radians(a, f"{origin} stake")
    lon2, lat2 = _radians(b, "other stake")
    span = stake_distance_m(a, b)
    if span == 0:
        raise SurveyError("the two stakes have the same coordinates; the section has no direction")
    metres = unit_of(unit).metres
    distance = np.asarray(stations, dtype=float) * metres
    if stake_distance:
        distance = distance / (float(stake_distance) * metres) * span
    bearing = math.atan2(
        math.sin(lon2 - lon1) * math.cos(lat2),
        math.cos(lat1) * math.sin(lat2) - math.sin(lat1) * math.cos(lat2) * math.cos(lon2 - lon1),
    )
    delta = distance / EARTH_RADIUS_M
    lat = np.arcsin(
        math.sin(lat1) * np.cos(delta) + math.cos(lat1) * np.sin(delta) * math.cos(bearing)
    )
    lon = lon1 + np.arctan2(
        math.sin(bearing) * np.sin(delta) * math.cos(lat1),
        np.cos(delta) - math.sin(lat1) * np.sin(lat),
    )
    lon = (np.degrees(lon) + 540.0) % 360.0 - 180.0
    return np.column_stack([lon, np.degrees(lat)])


def _point(lonlat) -> list[float]:
    return [
        round(float(lonlat[0]), COORDINATE_DECIMALS),
        round(float(lonlat[1]), COORDINATE_DECIMALS),
    ]


def section_geojson(
    section: dict, visit: dict, stations: Sequence[dict], unit: str, custody: str | None = None
) -> dict:
    """GeoJSON FeatureCollection (RFC 7946) of the section line, its stakes and its stations.

    ``section`` needs ``left_coordinates``/``right_coordinates`` as (lon, lat); ``visit`` gives
    ``date``, ``origin`` and optional ``stake_distance``.  Elevations stay in the survey unit,
    named in each feature's ``unit`` property.  ``custody`` (:func:`signed_by`) becomes the
    section line's ``signed_by`` property.  Raises SurveyError without stake coordinates.
    """
    left, right = section.get("left_coordinates"), section.get("right_coordinates")
    if not left or not right:
        raise SurveyError(
            f"section {section.get('name', '')!r} has no stake coordinates; record the "
            "longitude and latitude of both stakes to export GeoJSON"
        )
    origin = visit.get("origin") or section.get("origin") or "left"
    positions = station_positions(
        [s["station"] for s in stations], unit, left, right, origin, visit.get("stake_distance")
    )
    common = {
        "site": section.get("site", ""),
        "section": section.get("name", ""),
        "date": visit.get("date", ""),
    }
    features = [
        {
            "type": "Feature",
            "geometry": {"type": "LineString", "coordinates": [_point(left), _point(right)]},
            "properties": {**common, "kind": "section line", "origin": origin},
        }
    ]
    if custody is not None:
        features[0]["properties"]["signed_by"] = str(custody)
    for side, where in (("left", left), ("right", right)):
        name = section.get(f"{side}_stake", side)
        features.append(
            {
                "type": "Feature",
                "geometry": {"type": "Point", "coordinates": _point(where)},
                "properties": {**common, "kind": "stake", "side": side, "name": name},
            }
        )
    for s, where in zip(stations, positions, strict=True):
        props = {
            "kind": "station",
            "station": float(s["station"]),
            "elevation": None if s.get("elevation") is None else float(s["elevation"]),
            "code": s.get("code", "") or "",
            "note": s.get("note", "") or "",
            "unit": unit,
        }
        features.append(
            {
                "type": "Feature",
                "geometry": {"type": "Point", "coordinates": _point(where)},
                "properties": props,
            }
        )
    every = np.array([f["geometry"]["coordinates"] for f in features[1:]], dtype=float)
    bbox = [
        float(every[:, 0].min()),
        float(every[:, 1].min()),
        float(every[:, 0].max()),
        float(every[:, 1].max()),
    ]
    return {"type": "FeatureCollection", "bbox": bbox, "features": features}


def write_text(path: str | Path, text: str) -> Path:
    """Write ``text`` to ``path`` (UTF-8, mode 0644) whole or not at all: an exclusive
    temporary file in the same folder, fsynced and renamed (:mod:`stakeline.files.durable`);
    returns the path."""
    path = Path(path)
    try:
        write_atomic(path, text.encode("utf-8"))
    except OSError as exc:
        raise SurveyError(f"{path}: cannot be written ({exc.strerror or exc})") from None
    return path


def geojson_text(collection: dict) -> str:
    """Compact, valid JSON text of a GeoJSON object (no NaN or infinity)."""
    return json.dumps(collection, ensure_ascii=False, allow_nan=False) + "\n"

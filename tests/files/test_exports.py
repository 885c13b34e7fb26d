"""Tests of stakeline.files.exports: CSV round trips and GeoJSON against RFC 7946 and shapely."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from shapely.geometry import LineString, Point, shape
from stakeline.errors import SurveyError
from stakeline.files.exports import (
    EARTH_RADIUS_M,
    rating_csv,
    section_geojson,
    stake_distance_m,
    station_positions,
    stations_csv,
    write_text,
)
from stakeline.files.section_csv import read_section_csv
from stakeline.survey.geometry import Section
from stakeline.survey.rating import rating_table

LEFT, RIGHT = (-2.61204, 51.43012), (-2.6119, 51.43002)
STATIONS = [
    {"station": 0.0, "reading": 0.25, "elevation": 100.95, "code": "bank_top", "note": ""},
    {"station": 2.5, "reading": 1.47, "elevation": 99.73, "code": "", "note": 'cobbles, "loose"'},
    {"station": 5.5, "reading": 1.69, "elevation": 99.51, "code": "deepest", "note": ""},
    {"station": 12.0, "reading": 0.305, "elevation": 100.895, "code": "bank_top", "note": ""},
]


def test_stations_csv_reads_back(tmp_path):
    path = write_text(tmp_path / "st.csv", stations_csv(STATIONS, "m"))
    rows = read_section_csv(path)
    assert rows.stations == [s["station"] for s in STATIONS]
    assert rows.elevations == [s["elevation"] for s in STATIONS]
    assert rows.extra["code"][0] == "bank_top"
    assert rows.extra["note"][1] == 'cobbles, "loose"'
    assert set(rows.extra["unit"]) == {"m"}


def test_rating_csv_has_units_and_values(tmp_path):
    section = Section([0, 0, 4, 4], [2, 0, 0, 2])
    table = rating_table(section, [0.0, 0.5, 1.0], 0.03, 0.001, "ft")
    lines = rating_csv(table, "ft").splitlines()
    assert lines[0].startswith("stage (ft),area (ft²)")
    assert "discharge (ft³/s)" in lines[0]
    assert len(lines) == 4
    assert float(lines[2].split(",")[-1]) == pytest.approx(float(table["discharge"][1]), rel=1e-5)


def haversine(a, b):
    """Great-circle distance, metres (haversine formula; independent of the module's code)."""
    (l1, p1), (l2, p2) = np.radians(a), np.radians(b)
    h = np.sin((p2 - p1) / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin((l2 - l1) / 2) ** 2
    return 2 * EARTH_RADIUS_M * np.arcsin(np.sqrt(h))


def test_station_positions_lie_on_the_line_at_tape_distance():
    pos = station_positions([s["station"] for s in STATIONS], "m", LEFT, RIGHT)
    line = LineString([LEFT, RIGHT])
    for (lon, lat), s in zip(pos, STATIONS, strict=True):
        # Over 15 m a great circle departs from the straight lon/lat chord by far below 1e-9 deg.
        assert line.distance(Point(lon, lat)) < 1e-9
        assert haversine(LEFT, (lon, lat)) == pytest.approx(s["station"], abs=1e-6)


def test_tape_fitted_to_stakes_and_right_origin():
    span = stake_distance_m(LEFT, RIGHT)
    assert span == pytest.approx(haversine(LEFT, RIGHT), rel=1e-12)
    # With the taped stake distance known, the far stake's station lands on the far stake.
    pos = station_positions([0.0, 12.0], "m", LEFT, RIGHT, stake_distance=12.0)
    assert_allclose(pos[0], LEFT, atol=1e-10)
    assert_allclose(pos[1], RIGHT, atol=1e-10)
    pos = station_positions([0.0, 12.0], "m", LEFT, RIGHT, origin="right", stake_distance=12.0)
    assert_allclose(pos[0], RIGHT, atol=1e-10)
    # Feet are laid off as feet: 10 ft = 3.048 m (international foot).
    pos = station_positions([10.0], "ft", LEFT, RIGHT)
    assert haversine(LEFT, pos[0]) == pytest.approx(3.048, abs=1e-6)


def test_geojson_follows_rfc_7946():
    section = {"name": "XS1", "site": "Tessaly", "left_stake": "L1", "right_stake": "R1",
               "left_coordinates": LEFT, "right_coordinates": RIGHT}  # fmt: skip
    doc = section_geojson(section, {"date": "2026-04-14", "origin": "left"}, STATIONS, "m")
    text = json.dumps(doc)
    doc = json.loads(text)
    # RFC 7946 sec. 3.3 FeatureCollection; sec. 4: no "crs"; sec. 3.1.1 positions are [lon, lat].
    assert doc["type"] == "FeatureCollection"
    assert "crs" not in doc
    line = doc["features"][0]
    assert line["geometry"]["type"] == "LineString"
    assert line["geometry"]["coordinates"][0] == list(LEFT)
    points = [f for f in doc["features"] if f["properties"]["kind"] == "station"]
    assert len(points) == len(STATIONS)
    for f in doc["features"]:
        geom = shape(f["geometry"])  # shapely reads every geometry
        assert geom.is_valid
        lon, lat = (
            f["geometry"]["coordinates"][0]
            if geom.geom_type == "LineString"
            else f["geometry"]["coordinates"]
        )
        assert -180 <= lon <= 180 and -90 <= lat <= 90
        assert abs(lon - LEFT[0]) < 0.01 and abs(lat - LEFT[1]) < 0.01  # lon first, lat second
    # RFC 7946 sec. 5: bbox is [west, south, east, north].
    west, south, east, north = doc["bbox"]
    assert west == pytest.approx(min(LEFT[0], RIGHT[0])) and north == pytest.approx(
        max(LEFT[1], RIGHT[1])
    )
    assert points[2]["properties"]["elevation"] == 99.51 and points[2]["properties"]["unit"] == "m"


def test_geojson_needs_coordinates():
    with pytest.raises(SurveyError, match="no stake coordinates"):
        section_geojson({"name": "XS9"}, {}, STATIONS, "m")
    with pytest.raises(SurveyError, match="out of range"):
        station_positions([0.0], "m", (51.4, -200.0), RIGHT)
    with pytest.raises(SurveyError, match="same coordinates"):
        station_positions([0.0], "m", LEFT, LEFT)


def test_write_text_reports_bad_path(tmp_path):
    with pytest.raises(SurveyError, match="cannot be written"):
        write_text(tmp_path / "missing" / "x.csv", "a")
    assert math.isfinite(stake_distance_m(LEFT, RIGHT))

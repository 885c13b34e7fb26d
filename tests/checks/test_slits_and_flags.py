"""Field checks: a zero-width slit blocks (issue 11 item 15), stations closer than a micrometre are
a finding and never a numpy warning (item 10), the line check follows the datum's one rule, and
one rule says which findings flag a station."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import LineString, box
from stakeline.checks import KINDS, SEVERITIES, flagged_stations, line_findings, review
from stakeline.survey.geometry import Section

# A V-shaped bed with a station read three times going down and back up (a slit at 2 m).
SLIT_X = [0.0, 1.0, 2.0, 2.0, 2.0, 3.0, 4.0]
SLIT_Z = [2.0, 1.0, 0.5, -1.4, 0.5, 1.0, 2.0]


def test_a_slit_is_a_block_finding():
    found = review(SLIT_X, SLIT_Z, stage=1.5)
    slit = [f for f in found if f.kind == "duplicate"]
    assert [(f.severity, f.station, f.index) for f in slit] == [("block", 2.0, 3)]
    assert "slit" in slit[0].message and "3.800 m" in slit[0].message  # 2 × 1.9 m of perimeter
    assert flagged_stations(found) == {2.0: slit[0].message}


def test_what_a_slit_does_to_the_figures():
    # The wetted perimeter -- each segment of the ground line clipped below the water (shapely,
    # segment by segment: the slit's two faces overlap) -- grows by twice the slit's depth below
    # its neighbours, while the area stays: why the slit must not pass unnoticed.
    with_slit = Section(SLIT_X, SLIT_Z).at(1.5)
    without = Section([0, 1, 2, 3, 4], [2.0, 1.0, 0.5, 1.0, 2.0]).at(1.5)
    water = box(-1, -5, 5, 1.5)
    points = list(zip(SLIT_X, SLIT_Z, strict=True))
    wetted = sum(
        LineString(pair).intersection(water).length
        for pair in zip(points[:-1], points[1:], strict=True)
    )
    assert with_slit.wetted_perimeter == pytest.approx(wetted, rel=1e-12)
    assert with_slit.wetted_perimeter - without.wetted_perimeter == pytest.approx(2 * 1.9)
    assert with_slit.area == pytest.approx(without.area)


def test_a_face_read_twice_is_still_no_slit():
    # Top and foot of a vertical face: two readings at one station (common practice).
    found = review(
        [0, 1, 2, 2, 3, 4],
        [2.0, 1.9, 1.8, 0.4, 0.5, 2.0],
        codes=[""] * 2 + ["bank_top", "toe"] + [""] * 2,
    )
    assert not [f for f in found if f.kind == "duplicate" and f.severity == "block"]


finite = st.floats(-50, 50, allow_nan=False, allow_infinity=False)
tiny = st.sampled_from([0.0, 1e-300, -1e-300, 5e-324, 2e-7, 1.0])


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(finite | tiny, finite | tiny), max_size=30), st.none() | finite)
def test_review_never_warns(points, stage):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        found = review([p[0] for p in points], [p[1] for p in points], stage=stage)
    for f in found:
        assert f.kind in KINDS and f.severity in SEVERITIES


def test_stations_closer_than_a_micrometre_are_one_block_finding():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        found = review([0.0, 1e-300, 1.0, 2.0, 3.0], [2.0, 1.0, 0.0, 1.0, 2.0])
    close = [f for f in found if "micrometre" in f.message]
    assert [(f.kind, f.severity, f.index) for f in close] == [("duplicate", "block", 1)]
    assert len([f for f in found if f.kind == "duplicate"]) == 1  # one cause, one finding


def test_absurd_values_are_refused_by_the_checks_too():
    with pytest.raises(ValueError, match="point 2: elevation 1e\\+308 is beyond"):
        review([0, 1, 2], [1.0, 1e308, 1.0])


# --- the line check: one rule (see stakeline.survey.datum) ------------------------------------
@pytest.mark.parametrize(
    "left, right, check, station, outside",
    [
        (100.0, 100.015, 100.0075, None, False),  # sloping line, check at mid-height: allowed
        (100.0, 100.015, 100.014, None, False),  # taken near the higher stake
        (100.0, 100.0, 100.02, None, True),  # a level line 20 mm off: both stakes named
        (100.0, 100.05, 100.07, None, True),  # above the higher stake by more than 10 mm
        (100.0, 100.05, 99.985, None, True),  # below both: a sagging line
        (101.2, 101.3, 101.26, 4.0, True),  # at 4 m the line is at 101.24
        (101.2, 101.3, 101.245, 4.0, False),
    ],
)
def test_line_findings_follow_the_datum_verdict(left, right, check, station, outside):
    from stakeline.survey.datum import Datum

    meta = {"line_left": left, "line_right": right, "line_check": check,
            "line_check_station": station, "stake_distance": 10.0, "origin": "left"}  # fmt: skip
    verdict = Datum.from_visit(meta).line_check(check, station, 0.01)
    found = line_findings(meta)
    assert verdict.within is (not outside)
    assert bool(found) is outside
    assert ("OUTSIDE" in verdict.text) is outside


# --- which findings flag a station --------------------------------------------------------------
def test_flagged_stations_rule():
    findings = [
        {"kind": "spike", "severity": "warn", "station": 4.5, "message": "spike at 4.5"},
        {"kind": "gap", "severity": "warn", "station": 6.0, "message": "panel too wide"},
        {"kind": "line", "severity": "block", "station": None, "message": "line off"},
        {"kind": "duplicate", "severity": "note", "station": 7.0, "message": "a note"},
        {"kind": "order", "severity": "block", "station": 4.5, "message": "out of order"},
        {"kind": "line", "severity": "warn", "station": 8.0, "message": "not line - reading"},
    ]
    assert flagged_stations(findings) == {4.5: "out of order", 8.0: "not line - reading"}
    assert flagged_stations([]) == {}


def test_flagged_stations_take_finding_objects():
    found = review(np.arange(11.0), [2.0, 1.6, 1.3, 1.1, 1.0, 1.6, 1.0, 1.1, 1.3, 1.6, 2.0])
    assert flagged_stations(found) == flagged_stations([f.as_dict() for f in found])


def test_a_tiny_overtopping_shows_in_the_finding():
    # Issue 11 item 15: 1.5000001 over an end at 1.5 read "1.500 m is 0.000 m above".
    found = review([0, 1, 2], [1.5, 0.0, 2.0], stage=1.5000001)
    assert "is 0.0000001 m above the left end" in found[0].message

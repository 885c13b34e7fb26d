"""Tests of stakeline.survey.compare: scour and fill on pairs whose difference is known, and against shapely."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from shapely.geometry import Polygon
from stakeline.errors import SurveyError
from stakeline.survey.compare import compare_visits, deepest_point, scour_fill
from stakeline.survey.geometry import Section


def test_uniform_lowering_is_all_scour():
    # Closed form: a bed lowered by d over width W loses d*W of area and gains none.
    x = np.linspace(0.0, 12.0, 25)
    z = 100 + np.sin(x)
    r = scour_fill(x, z, x, z - 0.15)
    assert_allclose(r.scour_area, 0.15 * 12.0, rtol=1e-12)
    assert r.fill_area == 0.0
    assert_allclose(r.net_change, -0.15 * 12.0, rtol=1e-12)


def test_crossing_lines_split_at_the_crossing():
    # Closed form: after - before runs linearly from -1 to +1 over width 2: two triangles of 0.5.
    r = scour_fill([0, 2], [0, 0], [0, 2], [-1, 1])
    assert_allclose([r.scour_area, r.fill_area], [0.5, 0.5], rtol=1e-12)
    # Uneven crossing: -1 to +3 over width 4 crosses at x = 1: scour 1*1/2, fill 3*3/2.
    r = scour_fill([0, 4], [0, 0], [0, 4], [-1, 3])
    assert_allclose([r.scour_area, r.fill_area], [0.5, 4.5], rtol=1e-12)


def test_different_station_grids_and_common_range():
    # A pool dug as a triangle (depth 0.4, width 2 -> area 0.4) into a flat bed, surveyed on a
    # finer grid the second time and over a wider range (closed form: triangle area = b*h/2).
    before_x, before_z = [0, 10], [1.0, 1.0]
    after_x = [-2, 0, 3, 4, 5, 10, 12]
    after_z = [1.0, 1.0, 1.0, 0.6, 1.0, 1.0, 1.0]
    r = scour_fill(before_x, before_z, after_x, after_z)
    assert_allclose(r.scour_area, 0.5 * 2 * 0.4, rtol=1e-12)
    assert r.fill_area == 0.0
    assert (r.start, r.end) == (0.0, 10.0)


def test_vertical_face_moved_back_is_a_rectangle_of_scour():
    # A cut bank retreating from x = 6 to x = 7: the block 1 wide by 1.5 high is gone (closed form).
    before = ([0, 6, 6, 10], [0.0, 0.0, 1.5, 1.5])
    after = ([0, 7, 7, 10], [0.0, 0.0, 1.5, 1.5])
    r = scour_fill(*before, *after)
    assert_allclose(r.scour_area, 1.5, rtol=1e-12)
    assert r.fill_area == 0.0


def test_no_common_stations():
    with pytest.raises(SurveyError, match="share no stations"):
        scour_fill([0, 1], [0, 0], [2, 3], [0, 0])


def ground_polygon(x, z, base):
    return Polygon([(x[0], base), *zip(x, z, strict=True), (x[-1], base)])


@settings(max_examples=80, deadline=None)
@given(
    st.lists(st.floats(-1.0, 1.0), min_size=3, max_size=15),
    st.lists(st.floats(-1.0, 1.0), min_size=3, max_size=15),
)
def test_matches_shapely_polygon_differences(za, zb):
    # Independent reference: shapely (GEOS) areas of the ground polygons' differences.
    bx = np.linspace(0.0, 10.0, len(za))
    ax = np.sort(np.concatenate([[0.0, 10.0], np.linspace(0.3, 9.7, len(zb) - 2)]))
    r = scour_fill(bx, za, ax, zb)
    before = ground_polygon(bx, za, -5.0)
    after = ground_polygon(ax, zb, -5.0)
    assert_allclose(r.scour_area, before.difference(after).area, atol=1e-9)
    assert_allclose(r.fill_area, after.difference(before).area, atol=1e-9)


def test_compare_visits_on_demo_like_pair():
    before = Section([0, 2, 4, 6, 8], [2.0, 1.0, 0.5, 1.0, 2.0])
    after = Section([0, 2, 4, 5, 6, 8], [2.0, 1.0, 0.5, 0.3, 1.0, 2.0])
    out = compare_visits(before, after, stage=1.5)
    assert out["deepest_before"] == [4.0, 0.5]
    assert out["deepest_after"] == [5.0, 0.3]
    assert out["deepest_shift"] == 1.0
    assert out["deepest_drop"] == pytest.approx(0.2)
    assert_allclose(out["area_change"], after.at(1.5).area - before.at(1.5).area, rtol=1e-12)
    # Below a water level that covers every change, the wetted area grows by the net scour.
    assert_allclose(out["area_change"], -out["net_change"], rtol=1e-12)
    assert out["top_width_change"] == pytest.approx(0.0, abs=1e-12)


def test_deepest_point_takes_the_first_of_equals():
    assert deepest_point([0, 1, 2, 3], [1.0, 0.2, 0.2, 1.0]) == (1.0, 0.2)

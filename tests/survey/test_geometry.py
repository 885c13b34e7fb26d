"""Tests of stakeline.survey.geometry against closed forms, shapely clipping and the geometry contract."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from shapely.geometry import LineString, Polygon, box
from stakeline.errors import OvertoppedError, SectionError
from stakeline.survey.geometry import FIGURES, Section

# --- Closed forms: Chow, V. T. (1959) Open-Channel Hydraulics, Table 2-1 ---------------------


def rectangle(b, height):
    return Section([0, 0, b, b], [height, 0, 0, height])


def trapezoid(b, z, height):
    top = z * height
    return Section([0, top, top + b, 2 * top + b], [height, 0, 0, height])


def triangle(z, height):
    return Section([0, z * height, 2 * z * height], [height, 0, height])


@pytest.mark.parametrize("y", [0.05, 0.4, 1.0, 1.73, 2.5])
def test_rectangle_matches_chow_table_2_1(y):
    b = 3.2
    w = rectangle(b, 2.5).at(y)
    # Chow (1959) Table 2-1, rectangle: A = b*y, P = b + 2y, T = b, R = A/P, D = A/T
    assert_allclose(w.area, b * y, rtol=1e-12)
    assert_allclose(w.wetted_perimeter, b + 2 * y, rtol=1e-12)
    assert_allclose(w.top_width, b, rtol=1e-12)
    assert_allclose(w.hydraulic_radius, b * y / (b + 2 * y), rtol=1e-12)
    assert_allclose(w.hydraulic_depth, y, rtol=1e-12)
    assert_allclose(w.max_depth, y, rtol=1e-12)
    assert w.edges == [(0.0, b)]


@pytest.mark.parametrize(("b", "z", "y"), [(20.0, 2.0, 3.36), (6.0, 1.5, 1.6), (1.0, 0.5, 0.25)])
def test_trapezoid_matches_chow_table_2_1(b, z, y):
    w = trapezoid(b, z, 5.0).at(y)
    # Chow (1959) Table 2-1, trapezoid: A = (b + zy)y, P = b + 2y*sqrt(1+z^2), T = b + 2zy
    area = (b + z * y) * y
    perimeter = b + 2 * y * math.sqrt(1 + z * z)
    top = b + 2 * z * y
    assert_allclose(w.area, area, rtol=1e-12)
    assert_allclose(w.wetted_perimeter, perimeter, rtol=1e-12)
    assert_allclose(w.top_width, top, rtol=1e-12)
    assert_allclose(w.hydraulic_radius, area / perimeter, rtol=1e-12)
    assert_allclose(w.hydraulic_depth, area / top, rtol=1e-12)
    left = z * 5.0 - z * y
    assert_allclose(w.edges, [(left, left + top)], rtol=1e-12)


@pytest.mark.parametrize("y", [0.1, 0.9, 2.0])
def test_triangle_matches_chow_table_2_1(y):
    z = 1.75
    w = triangle(z, 2.0).at(y)
    # Chow (1959) Table 2-1, triangle: A = z*y^2, P = 2y*sqrt(1+z^2), T = 2zy
    assert_allclose(w.area, z * y * y, rtol=1e-12)
    assert_allclose(w.wetted_perimeter, 2 * y * math.sqrt(1 + z * z), rtol=1e-12)
    assert_allclose(w.top_width, 2 * z * y, rtol=1e-12)


@pytest.mark.parametrize("chords", [64, 512])
@pytest.mark.parametrize("fraction", [0.1, 0.3, 0.5])
def test_partly_full_circle_from_points_within_chord_tolerance(chords, fraction):
    d0 = 2.0
    r = d0 / 2
    y = fraction * d0
    # The lower half of a circle as `chords` straight chords (stations must not decrease, so the
    # points stop at the centre height).
    angle = np.linspace(np.pi, 2 * np.pi, chords + 1)
    elevations = r + r * np.sin(angle)
    elevations[[0, -1]] = r  # exactly at the centre height (sin(2 pi) is not exactly 0 in floats)
    section = Section(r + r * np.cos(angle), elevations)
    w = section.at(y)
    # Chow (1959) Table 2-1, circle: theta = 2 acos(1 - 2y/d0), A = (theta - sin theta) d0^2/8,
    # P = theta d0 / 2, T = 2 sqrt(y (d0 - y)).
    theta = 2 * math.acos(1 - 2 * y / d0)
    area = (theta - math.sin(theta)) * d0 * d0 / 8
    perimeter = theta * d0 / 2
    top = 2 * math.sqrt(y * (d0 - y))
    # Tolerance from the chord count: each chord of angle phi cuts off a circular segment of area
    # r^2 (phi - sin phi)/2 <= r^2 phi^3 / 12 and is shorter than its arc by at most r phi^3 / 24;
    # the wetted arc holds theta/phi chords plus two partial ones.  At each water's edge the
    # polygon lies within the sagitta s = r phi^2 / 8 of the arc, which meets the water surface at
    # theta/2 from the horizontal: the edge moves by at most s / sin(theta/2).
    phi = np.pi / chords
    chords_wet = theta / phi + 2
    shift = r * phi**2 / 8 / math.sin(theta / 2)
    assert abs(w.area - area) <= chords_wet * r * r * phi**3 / 12 + 2 * shift * shift
    assert abs(w.wetted_perimeter - perimeter) <= chords_wet * r * phi**3 / 24 + 2 * shift
    assert abs(w.top_width - top) <= 2 * shift


# --- Independent reference: shapely polygon clipping on random sections ---------------------


def clip_with_shapely(x, z, stage):
    """Water body as (region above ground) ∩ (half-plane below stage), by shapely/GEOS."""
    top = max(z) + 1.0
    ground = Polygon(list(zip(x, z, strict=True)) + [(x[-1], top), (x[0], top)])
    below = box(min(x) - 1, min(z) - 1, max(x) + 1, stage)
    water = ground.intersection(below)
    parts = list(getattr(water, "geoms", [water]))
    parts = [p for p in parts if isinstance(p, Polygon) and p.area > 0]
    line = LineString(list(zip(x, z, strict=True)))
    surface = LineString([(min(x) - 1, stage), (max(x) + 1, stage)])
    # Ground lying exactly at the water level has no depth over it: not wetted.
    perimeter = line.intersection(below).length - line.intersection(surface).length
    top_width = sum(p.bounds[2] - p.bounds[0] for p in parts)
    return water.area, perimeter, top_width


@st.composite
def random_sections(draw):
    n = draw(st.integers(3, 40))
    gaps = draw(
        st.lists(
            st.one_of(st.just(0.0), st.floats(0.05, 5.0)),
            min_size=n - 1,
            max_size=n - 1,
        )
    )
    # No two vertical faces in a row (three equal stations is a loop, not a section).
    for i in range(1, len(gaps)):
        if gaps[i] == 0.0 and gaps[i - 1] == 0.0:
            gaps[i] = 0.5
    x = np.concatenate([[0.0], np.cumsum(gaps)])
    inner = draw(st.lists(st.floats(0.0, 4.0), min_size=n - 2, max_size=n - 2))
    ends = draw(st.lists(st.floats(3.0, 6.0), min_size=2, max_size=2))
    z = np.array([ends[0], *inner, ends[1]])
    assume(x[-1] > 0)
    return x, z


@settings(max_examples=150, deadline=None)
@given(random_sections(), st.floats(0.001, 1.0))
def test_matches_shapely_polygon_clipping(points, fraction):
    x, z = points
    section = Section(x, z)
    stage = z.min() + fraction * (min(z[0], z[-1]) - z.min())
    w = section.at(stage)
    area, perimeter, top_width = clip_with_shapely(x, z, stage)
    scale = max(1.0, float(x[-1]))
    assert_allclose(w.area, area, rtol=1e-9, atol=1e-9 * scale**2)
    assert_allclose(w.wetted_perimeter, perimeter, rtol=1e-9, atol=1e-9 * scale)
    assert_allclose(w.top_width, top_width, rtol=1e-9, atol=1e-9 * scale)
    assert_allclose(w.top_width, sum(b - a for a, b in w.edges), rtol=1e-9, atol=1e-9 * scale)


@settings(max_examples=100, deadline=None)
@given(random_sections())
def test_figures_never_decrease_as_the_water_rises(points):
    x, z = points
    section = Section(x, z)
    stages = np.linspace(z.min() - 0.5, min(z[0], z[-1]), 301)
    table = section.table(stages)
    for name in ("area", "wetted_perimeter", "top_width", "max_depth"):
        assert np.all(np.diff(table[name]) >= -1e-9), name


@settings(max_examples=100, deadline=None)
@given(random_sections(), st.floats(0.05, 0.95))
def test_area_grows_at_the_rate_of_the_top_width(points, fraction):
    # dA/dh = T: the area's derivative is the top width (exact for piecewise-linear ground).
    x, z = points
    section = Section(x, z)
    stage = z.min() + fraction * (min(z[0], z[-1]) - z.min())
    step = 1e-6
    assume(stage + step <= section.highest_stage)
    rise = section.at(stage + step).area - section.at(stage).area
    slope = (section.at(stage + step).top_width + section.at(stage).top_width) / 2
    assert abs(rise - slope * step) <= 1e-9 * max(1.0, section.at(stage).top_width)


@settings(max_examples=60, deadline=None)
@given(random_sections())
def test_table_agrees_with_at(points):
    x, z = points
    section = Section(x, z)
    stages = np.linspace(z.min() - 0.1, min(z[0], z[-1]), 17)
    table = section.table(stages)
    for i, stage in enumerate(stages):
        w = section.at(stage)
        for name in FIGURES:
            assert_allclose(table[name][i], getattr(w, name), rtol=1e-12, atol=1e-12)


# --- The contract ----------------------------------------------------------------------------


def test_bar_splits_the_flow_into_parts_at_one_water_level():
    section = Section([0, 1, 2, 3, 4, 5, 6], [3, 1, 0, 2, 0.5, 1, 3])
    w = section.at(1.5)
    assert len(w.edges) == 2
    # Linear interpolation between neighbouring stations, e.g. 3 + (2 - 1.5) / (2 - 0.5).
    assert_allclose(w.edges, [(0.75, 2.75), (3 + 0.5 / 1.5, 5.25)])
    # Two triangles-plus: check against the sum of the two parts computed separately.
    left = Section([0, 1, 2, 3], [3, 1, 0, 2]).at(1.5)
    right = Section([3, 4, 5, 6], [2, 0.5, 1, 3]).at(1.5)
    assert_allclose(w.area, left.area + right.area)
    assert_allclose(w.wetted_perimeter, left.wetted_perimeter + right.wetted_perimeter)


def test_vertical_faces_count_in_the_perimeter_not_the_area():
    # Undercut-style cut bank: the bed drops vertically at station 2.
    section = Section([0, 2, 2, 5, 6], [3, 3, 1, 1, 3])
    w = section.at(2.0)
    assert_allclose(w.edges, [(2.0, 5.5)])
    assert_allclose(w.area, 3 * 1 + 0.5 * 0.5 * 1)
    assert_allclose(w.wetted_perimeter, 1 + 3 + math.hypot(0.5, 1))


def test_dry_stage_gives_zeros_and_no_edges():
    section = trapezoid(2.0, 1.0, 2.0)
    for stage in (-1.0, 0.0):
        w = section.at(stage)
        assert (w.area, w.wetted_perimeter, w.top_width, w.hydraulic_radius) == (0, 0, 0, 0)
        assert (w.hydraulic_depth, w.max_depth, w.edges) == (0, 0, [])
    assert all(np.all(v == 0) for v in section.table([-1.0, 0.0]).values())


def test_stage_equal_to_an_end_is_allowed_and_above_says_which_end():
    section = Section([0, 1, 2, 3], [2.0, 0.0, 0.0, 2.5])
    assert section.at(2.0).edges == [(0.0, 2.8)]
    with pytest.raises(OvertoppedError) as info:
        section.at(2.3)
    assert info.value.side == "left"
    assert_allclose(info.value.excess, 0.3)
    assert "left" in str(info.value) and "0.300" in str(info.value)
    with pytest.raises(OvertoppedError, match="right"):
        Section([0, 1, 2], [3, 0, 1]).table([0.5, 1.2])
    assert isinstance(info.value, ValueError)


@pytest.mark.parametrize(
    ("stations", "elevations", "expected"),
    [
        ([0], [1], "at least 2 points"),
        ([], [], "at least 2 points"),
        ([0, 1, 2], [1, float("nan"), 1], "point 2"),
        ([0, float("inf"), 2], [1, 0, 1], "point 2"),
        ([0, "one", 2], [1, 0, 1], "point 2"),
        ([0, 1, 2], [1, 0, None], "point 3"),
        ([0, 1, 2], [1, 0], "3 stations but 2 elevations"),
        ([0, 2, 1, 3], [1, 0, 0, 1], "point 3: station 1 is less than"),
        ([[0, 1], [2, 3]], [[1, 0], [0, 1]], "1-D"),
    ],
)
def test_bad_input_raises_value_error_naming_the_point(stations, elevations, expected):
    with pytest.raises(SectionError, match=expected) as info:
        Section(stations, elevations)
    assert isinstance(info.value, ValueError)


def test_non_finite_stage_is_rejected():
    with pytest.raises(ValueError, match="finite"):
        rectangle(1, 1).at(float("nan"))


def test_hand_estimate_is_the_trapezoidal_rule_with_negative_end_depths():
    # Common practice (field book): depths at the stations either side of the water, read as
    # negative above it, with the trapezoidal rule on uniform spacing.
    x = [0, 1, 2, 3, 4]
    z = [1.5, 0.5, 0.0, 0.5, 1.5]
    section = Section(x, z)
    depths = [1.0 - v for v in z]  # -0.5, 0.5, 1.0, 0.5, -0.5
    expected = sum((depths[i] + depths[i + 1]) / 2 for i in range(4))
    assert_allclose(section.hand_estimate(1.0), expected)
    # The exact area differs: the end panels hold only the wet triangles.
    assert_allclose(section.at(1.0).area, 0.5 * 0.5 / 2 * 2 + (0.5 + 1.0) / 2 * 2)

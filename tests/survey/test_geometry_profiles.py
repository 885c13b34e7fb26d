"""Tests of the geometry module's many-profile figures and exact sensitivities (the ± bands'
engine), and of the values a section refuses -- against shapely, finite differences and the
closed forms of Chow (1959) Table 2-1."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from shapely.geometry import LineString, Polygon, box
from stakeline.errors import OvertoppedError, SectionError
from stakeline.survey.geometry import Section, figure_gradients, profile_figures


def shapely_figures(x, z, stage):
    """Area, wetted perimeter and top width by clipping the ground polygon (shapely)."""
    top = max(float(np.max(z)), stage) + 1.0
    ground = Polygon([*zip(x, z, strict=True), (x[-1], top), (x[0], top)]).buffer(0)
    below = box(x[0] - 1, float(np.min(z)) - 1, x[-1] + 1, stage)
    water = ground.intersection(below)
    line = LineString(list(zip(x, z, strict=True)))
    perimeter = line.intersection(box(x[0] - 1, float(np.min(z)) - 1, x[-1] + 1, stage)).length
    surface = line.intersection(LineString([(x[0] - 1, stage), (x[-1] + 1, stage)])).length
    parts = getattr(water, "geoms", [water])
    # Water standing exactly on a flat bed has no depth: a part of zero area is dry (the
    # section's rule: a stage at or below the ground gives zeros), though its bounds have width.
    width = sum(p.bounds[2] - p.bounds[0] for p in parts if p.area > 0)
    return water.area, perimeter - surface, width


@st.composite
def grounds(draw):
    n = draw(st.integers(4, 30))
    gaps = draw(st.lists(st.floats(0.05, 3.0), min_size=n - 1, max_size=n - 1))
    x = np.concatenate([[0.0], np.cumsum(gaps)])
    inner = draw(st.lists(st.floats(0.0, 3.0).map(lambda v: round(v, 4)), min_size=n - 2,
                          max_size=n - 2))  # fmt: skip
    z = np.array([4.0, *inner, 4.0])
    return x, z


@settings(max_examples=80, deadline=None)
@given(grounds(), st.floats(0.05, 3.9))
def test_profile_figures_match_section_at_and_shapely(ground, stage):
    x, z = ground
    many = profile_figures(np.stack([x, x]), np.stack([z, z + 0.1]), stage)
    one = Section(x, z).at(stage)
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius"):
        assert_allclose(many[name][0], getattr(one, name), rtol=1e-9, atol=1e-12)
    area, perimeter, width = shapely_figures(x, z, stage)
    assert_allclose(many["area"][0], area, rtol=1e-9, atol=1e-9)
    assert_allclose(many["wetted_perimeter"][0], perimeter, rtol=1e-9, atol=1e-9)
    assert_allclose(many["top_width"][0], width, rtol=1e-9, atol=1e-9)
    second = Section(x, z + 0.1).at(stage)
    assert_allclose(many["area"][1], second.area, rtol=1e-9, atol=1e-12)


def test_water_exactly_on_a_flat_bed_is_dry():
    # The case hypothesis found: the flat bed between stations 1 and 2 at the water level.
    x, z = np.array([0.0, 1.0, 2.0, 3.0]), np.array([4.0, 1.0, 1.0, 4.0])
    many = profile_figures(x, z, 1.0)
    one = Section(x, z).at(1.0)
    assert (one.area, one.top_width, one.wetted_perimeter) == (0.0, 0.0, 0.0)
    reference = shapely_figures(x, z, 1.0)
    for name, value in zip(("area", "wetted_perimeter", "top_width"), reference, strict=True):
        assert_allclose(many[name][0], value, atol=1e-12)


@settings(max_examples=40, deadline=None)
@given(grounds(), st.floats(0.05, 3.9))
def test_gradients_match_central_differences(ground, stage):
    x, z = ground
    grads = figure_gradients(x, z, stage)
    step = 1e-7
    for i in range(x.size):
        if np.any(np.abs(z - stage) < 1e-5):  # a point at the water level: a kink, skip
            return
        up, down = z.copy(), z.copy()
        up[i] += step
        down[i] -= step
        for name in ("area", "wetted_perimeter", "top_width"):
            numeric = (
                profile_figures(x, up, stage)[name][0] - profile_figures(x, down, stage)[name][0]
            ) / (2 * step)
            assert grads[name][0][i] == pytest.approx(numeric, rel=1e-4, abs=1e-4)


def test_gradients_of_a_rectangle_in_closed_form():
    # Chow (1959) Table 2-1 rectangle, b = 4, y = 1: A = b·y, P = b + 2y, T = b.  Lowering a bed
    # point by dz deepens half of each panel beside it; moving a wall out widens the channel.
    x, z = [0.0, 0.0, 2.0, 4.0, 4.0], [2.0, 0.0, 0.0, 0.0, 2.0]
    grads = figure_gradients(x, z, 1.0)
    assert_allclose(grads["area"][0], [0, -1, -2, -1, 0])
    wall_left = grads["area"][1][0] + grads["area"][1][1]  # the face's two points: one station
    wall_right = grads["area"][1][3] + grads["area"][1][4]
    assert_allclose([wall_left, wall_right], [-1.0, 1.0])  # dA/db = y
    assert_allclose(grads["top_width"][1][3] + grads["top_width"][1][4], 1.0)  # dT/db = 1


# --- values outside physical sense (issue 11 item 10) -----------------------------------------
@pytest.mark.parametrize(
    "stations, elevations, message",
    [([0, 1, 2], [2.0, 1e308, 2.0], "point 2: elevation 1e\\+308 is beyond"),
     ([0, 1, 2e7], [2.0, 0.0, 2.0], "point 3: station 2e\\+07 is beyond"),
     ([0, 1, 2], [2.0, -1e6 - 1, 2.0], "point 2")],
)  # fmt: skip
def test_absurd_values_are_refused_naming_the_point(stations, elevations, message):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(SectionError, match=message):
            Section(stations, elevations)


def test_stations_closer_than_a_micrometre_are_one_station():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        section = Section([0.0, 1e-300, 2e-300, 1.0, 2.0], [2.0, 1.0, 0.0, 0.0, 2.0])
    assert section.stations.tolist()[:3] == [0.0, 0.0, 0.0]


def test_a_missing_elevation_is_named_as_missing():
    with pytest.raises(SectionError, match="point 2: elevation is missing"):
        Section([0, 1, 2], [1.0, None, 1.0])


def test_a_tiny_overtopping_shows_a_non_zero_excess():
    # Issue 11 item 15: at 1.5000001 the message read "1.500 is 0.000 above the left end".
    with pytest.raises(OvertoppedError) as info:
        Section([0, 1, 2], [1.5, 0.0, 2.0]).at(1.5000001)
    message = str(info.value)
    assert "water level 1.5000001 is 0.0000001 above the left end" in message

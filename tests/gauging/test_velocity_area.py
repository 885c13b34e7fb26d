"""Tests of stakeline.gauging.discharge: the midsection and mean-section computations."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from stakeline.gauging import (
    PANEL_KEYS,
    GaugingError,
    MeterRating,
    velocity_area,
    verticals_from_section,
)
from stakeline.survey.geometry import Section


def midsection_by_hand(b, d, v):
    """TM 3-A8 (Turnipseed & Sauer 2010) / USBR WMM eq. 10-6, written out vertical by vertical:
    q_x = v_x · [(b_x - b_{x-1}) + (b_{x+1} - b_x)] / 2 · d_x, the end verticals reaching half-way
    to their one neighbour."""
    total = 0.0
    for x in range(len(b)):
        back = b[x] - b[x - 1] if x > 0 else 0.0
        ahead = b[x + 1] - b[x] if x < len(b) - 1 else 0.0
        total += v[x] * (back + ahead) / 2 * d[x]
    return total


def meansection_by_hand(b, d, v):
    """ISO 748 / USBR WMM eq. 10-7: q = (v1 + v2)/2 · (d1 + d2)/2 · (b2 - b1), panel by panel."""
    return sum(
        (v[i] + v[i + 1]) / 2 * (d[i] + d[i + 1]) / 2 * (b[i + 1] - b[i]) for i in range(len(b) - 1)
    )


# --- Published worked examples and closed forms ----------------------------------------------
def test_ponce_rectangular_channel_with_walls_at_the_edges():
    # Ponce, V. M. (2008), rectangular channel b = 6 m, y = 1.6 m carrying V = 3.428 m/s:
    # Q = 32.91 m³/s.  Gauged at 13 verticals with the walls as measured edge depths and a
    # uniform velocity, both computations give V·b·y exactly.
    b = np.linspace(0.0, 6.0, 13)
    d = np.full(13, 1.6)
    v = np.full(13, 3.428)
    for method in ("midsection", "meansection"):
        r = velocity_area(b, d, v, method)
        assert r.area == pytest.approx(6.0 * 1.6, rel=1e-12)
        assert r.discharge == pytest.approx(3.428 * 6.0 * 1.6, rel=1e-12)
        assert r.discharge == pytest.approx(32.91, rel=5e-4)  # Ponce's rounded figure
        assert r.width == 6.0 and r.mean_velocity == pytest.approx(3.428)


def test_triangle_of_chow_table_2_1():
    # Chow (1959) Table 2-1: a triangle of side slope z carries A = z·y².  Verticals every 0.5 m
    # with the apex on one and zero-depth edges: both methods give that area exactly, and a
    # uniform velocity gives Q = v·A.
    z, y = 2.0, 1.5
    b = np.linspace(0.0, 2 * z * y, 13)
    d = y - np.abs(b - z * y) / z
    for method in ("midsection", "meansection"):
        r = velocity_area(b, d, np.full(b.size, 0.4), method)
        assert r.area == pytest.approx(z * y**2, rel=1e-12)
        assert r.discharge == pytest.approx(0.4 * z * y**2, rel=1e-12)


def test_a_gauging_with_a_rated_meter():
    # Verticals and counts in the form of Subramanya, Engineering Hydrology, Example 4.1 (data from
    # memory): meter v = 0.51 N + 0.03 m/s read at 0.6 depth.  The book widens the end panels its
    # own way, so its total is not compared; the midsection and mean-section sums are recomputed
    # here from the published equations.
    b = [0.0, 1.0, 3.0, 5.0, 7.0, 9.0, 11.0, 12.0]
    d = [0.0, 1.1, 2.0, 2.5, 2.0, 1.7, 1.0, 0.0]
    revs = [0, 39, 58, 112, 90, 45, 30, 0]
    secs = [100, 100, 100, 150, 100, 100, 100, 100]
    v = MeterRating("S-41", a=0.03, b=0.51).velocity(revs, secs)
    assert v[1] == pytest.approx(0.03 + 0.51 * 0.39)
    mid = velocity_area(b, d, v, "midsection")
    assert mid.discharge == pytest.approx(midsection_by_hand(b, d, v), rel=1e-12)
    mean = velocity_area(b, d, v, "meansection")
    assert mean.discharge == pytest.approx(meansection_by_hand(b, d, v), rel=1e-12)
    # Panel 3 of the midsection (station 3 m): q = v · (5 - 1)/2 · 2.0.
    assert mid.panel_discharge[2] == pytest.approx(v[2] * 2.0 * 2.0)
    assert mid.panel_width.tolist() == [0.5, 1.5, 2.0, 2.0, 2.0, 2.0, 1.5, 0.5]


def test_measured_edge_depth_and_edge_factor():
    # TM 3-A8: a vertical wall at the edge is an edge vertical with depth; its partial section
    # reaches half-way to the next vertical, q_1 = v_1 · d_1 · (b_2 - b_1)/2, and its velocity is
    # read or estimated from the next vertical's (here 0.7 of it, the hydrographer's choice).
    b, d = [0.0, 0.5, 1.5, 2.5], [0.8, 0.9, 0.6, 0.0]
    v = [float("nan"), 0.6, 0.5, 0.0]
    unread = velocity_area(b, d, v)
    assert unread.missing == (0,) and not unread.complete
    estimated = velocity_area(b, d, v, edge_factor=0.7)
    assert estimated.velocities[0] == pytest.approx(0.42)
    assert estimated.panel_discharge[0] == pytest.approx(0.42 * 0.8 * 0.5 / 2)
    assert estimated.discharge == pytest.approx(midsection_by_hand(b, d, [0.42, 0.6, 0.5, 0.0]))
    with pytest.raises(GaugingError, match="edge factor"):
        velocity_area(b, d, v, edge_factor=1.5)


def test_discharge_so_far_leaves_out_unread_verticals():
    b, d = [0, 1, 2, 3, 4], [0, 0.5, 0.8, 0.5, 0]
    r = velocity_area(b, d, [None, 0.4, np.nan, np.nan, None])
    assert r.missing == (2, 3)
    assert r.discharge == pytest.approx(0.4 * 0.5 * 1.0)
    assert r.panel_percent[1] == pytest.approx(100.0)
    assert r.area == pytest.approx(1.8)  # the area does not wait for velocities
    mean = velocity_area(b, d, [0, 0.4, np.nan, np.nan, 0], "meansection")
    assert mean.discharge == pytest.approx(0.2 * 0.25 * 1.0)  # only the first panel is complete
    assert math.isnan(mean.panel_velocity[1])


def test_angles_reduce_the_velocities():
    b, d, v = [0, 1, 2, 3], [0, 1.0, 1.0, 0], [0, 1.0, 1.0, 0]
    r = velocity_area(b, d, v, angles=[0, 20, 40, 0])
    expected = midsection_by_hand(
        b, d, [0, math.cos(math.radians(20)), math.cos(math.radians(40)), 0]
    )
    assert r.discharge == pytest.approx(expected)


def test_meansection_panels_are_between_verticals():
    r = velocity_area([0, 2, 6], [0, 1.0, 0.0], [0, 0.5, 0], "meansection")
    assert r.panel_station.tolist() == [1.0, 4.0]
    assert r.panel_width.tolist() == [2.0, 4.0]
    assert r.panel_depth.tolist() == [0.5, 0.5]
    assert r.panel_velocity.tolist() == [0.25, 0.25]


def test_json_shape_for_the_command_line():
    r = velocity_area([0, 1, 2, 3], [0, 0.6, 0.4, 0], [0, 0.5, None, 0])
    out = json.loads(json.dumps(r.as_dict(), allow_nan=False))
    for key in ("discharge", "area", "width", "mean_velocity", "panels", "method", "unit"):
        assert key in out
    assert out["missing"] == [2.0]
    assert list(out["panels"][0]) == list(PANEL_KEYS)
    assert out["panels"][2]["velocity"] is None
    assert [p["station"] for p in out["panels"]] == [0.0, 1.0, 2.0, 3.0]


@pytest.mark.parametrize(
    ("stations", "depths", "velocities", "match"),
    [
        ([0, 1, 1, 2], [0, 1, 1, 0], [0, 1, 1, 0], "vertical 3: station 1 is not beyond"),
        ([0, 1, 2], [0, -0.2, 0], [0, 1, 0], "vertical 2: depth -0.2 at station 1 is negative"),
        ([0, 1, 2], [0, 1], [0, 1, 0], "2 depths for 3 verticals"),
        ([0, 1, 2], [0, 1, 0], [0, np.inf, 0], "vertical 2: velocity inf"),
        ([0, np.nan, 2], [0, 1, 0], [0, 1, 0], "vertical 2: station nan"),
        ([0], [0], [0], "at least 2 verticals"),
    ],
)
def test_malformed_gaugings_name_the_vertical(stations, depths, velocities, match):
    with pytest.raises(GaugingError, match=match):
        velocity_area(stations, depths, velocities)


def test_unknown_method_and_unit():
    with pytest.raises(GaugingError, match="midsection or meansection"):
        velocity_area([0, 1], [0, 0], [0, 0], "simpson")
    with pytest.raises(ValueError, match="not supported"):
        velocity_area([0, 1], [0, 0], [0, 0], unit="yd")


# --- Verticals from the surveyed section -----------------------------------------------------
def test_verticals_from_a_section_with_a_wall_and_a_bar():
    # Left: a vertical wall (stations 0, 0) standing in the water; a bar at station 4 above it.
    s = Section([0, 0, 2, 4, 6, 8], [3.0, 1.0, 0.5, 2.2, 0.8, 3.0])
    x, d = verticals_from_section(s, 2.0)
    assert x[0] == 0.0 and d[0] == pytest.approx(1.0)  # the wall: the edge with its depth
    assert 0.0 in d[1:-1] and d[-1] == 0.0
    assert np.all(np.diff(x) > 0)
    # Mean-section area over these verticals is the exact wetted area: straight lines between
    # every surveyed point and edge (the geometry core, itself checked against shapely).
    r = velocity_area(x, d, np.zeros(x.size), "meansection")
    assert r.area == pytest.approx(s.at(2.0).area, rel=1e-12)
    assert verticals_from_section(s, 0.2)[0].size == 0


@st.composite
def sections(draw):
    n = draw(st.integers(3, 30))
    gaps = draw(st.lists(st.floats(0.05, 3.0), min_size=n - 1, max_size=n - 1))
    x = np.concatenate([[0.0], np.cumsum(gaps)])
    inner = draw(st.lists(st.floats(0.0, 2.0), min_size=n - 2, max_size=n - 2))
    z = np.array([3.0, *inner, 3.0])
    fraction = draw(st.floats(0.05, 0.95))
    stage = float(z.min() + fraction * (3.0 - z.min()))
    return Section(x, z), stage


@settings(max_examples=80, deadline=None)
@given(sections())
def test_meansection_area_of_the_section_verticals_is_the_wetted_area(case):
    section, stage = case
    x, d = verticals_from_section(section, stage)
    assume(x.size >= 2)
    r = velocity_area(x, d, np.zeros(x.size), "meansection")
    assert r.area == pytest.approx(section.at(stage).area, rel=1e-9, abs=1e-12)


# --- Properties ------------------------------------------------------------------------------
@st.composite
def gaugings(draw, min_size=3):
    n = draw(st.integers(min_size, 40))
    gaps = draw(st.lists(st.floats(0.05, 5.0), min_size=n - 1, max_size=n - 1))
    b = np.concatenate([[0.0], np.cumsum(gaps)])
    d = np.array(draw(st.lists(st.floats(0.0, 3.0), min_size=n, max_size=n)))
    v = np.array(draw(st.lists(st.floats(-0.5, 3.0), min_size=n, max_size=n)))
    d[0] = d[-1] = v[0] = v[-1] = 0.0  # the water's edges
    return b, d, v


methods = st.sampled_from(["midsection", "meansection"])


@settings(max_examples=100, deadline=None)
@given(gaugings(), methods)
def test_doubling_every_velocity_doubles_the_discharge(g, method):
    b, d, v = g
    once = velocity_area(b, d, v, method)
    twice = velocity_area(b, d, 2 * v, method)
    assert twice.discharge == pytest.approx(2 * once.discharge, rel=1e-12, abs=1e-12)
    assert twice.area == once.area


@settings(max_examples=100, deadline=None)
@given(gaugings(), methods, st.floats(0.05, 5.0), st.floats(0.0, 2.0), st.booleans())
def test_adding_a_zero_velocity_edge_changes_nothing(g, method, gap, depth, left):
    b, d, v = g
    before = velocity_area(b, d, v, method).discharge
    if left:
        b2, d2, v2 = np.r_[b[0] - gap, b], np.r_[depth, d], np.r_[0.0, v]
    else:
        b2, d2, v2 = np.r_[b, b[-1] + gap], np.r_[d, depth], np.r_[v, 0.0]
    after = velocity_area(b2, d2, v2, method).discharge
    assert after == pytest.approx(before, rel=1e-12, abs=1e-12)


@settings(max_examples=100, deadline=None)
@given(gaugings(), methods)
def test_panel_percents_sum_to_100(g, method):
    b, d, v = g
    r = velocity_area(b, d, v, method)
    assume(abs(r.discharge) > 1e-9 * max(1.0, float(np.sum(np.abs(r.panel_discharge)))))
    assert r.panel_percent.sum() == pytest.approx(100.0, rel=1e-6)


@settings(max_examples=40, deadline=None)
@given(st.floats(2.0, 50.0), st.floats(0.2, 3.0), st.floats(0.1, 2.0), st.floats(1.0, 3.0))
def test_midsection_and_meansection_agree_as_the_verticals_get_dense(width, depth, speed, power):
    # A smooth channel and velocity field: d = D sin(πx/W)^p... both sums are quadratures of the
    # same integral ∫ v·d dx, so their difference shrinks as the verticals close up.
    def field(n):
        b = np.linspace(0.0, width, n)
        shape = np.clip(np.sin(np.pi * b / width), 0.0, None) ** power
        return b, depth * shape, speed * np.sqrt(shape)

    gaps = []
    for n in (11, 41, 161):
        b, d, v = field(n)
        mid = velocity_area(b, d, v, "midsection").discharge
        mean = velocity_area(b, d, v, "meansection").discharge
        gaps.append(abs(mid - mean) / mid)
    assert gaps[2] < gaps[0] and gaps[2] < 0.01
    # And both approach the integral itself (the densest midsection sum as the reference).
    assert_allclose(mean, mid, rtol=0.01)


def test_results_do_not_follow_later_edits():
    b = np.array([0.0, 1.0, 2.0])
    v = np.array([0.0, 0.5, 0.0])
    r = velocity_area(b, [0, 1.0, 0], v, angles=[None, float("nan"), 0])
    v[1] = 9.0  # the crew edits the entry; the result already given stays as it was
    assert r.discharge == pytest.approx(0.5) and r.velocities[1] == 0.5
    with pytest.raises(ValueError):
        r.panel_discharge[1] = 0.0
    assert r.as_dict()["complete"] is True

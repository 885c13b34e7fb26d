"""Tests of stakeline.gauging.slope: water-surface slope from levelled points."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from stakeline.gauging import GaugingError, water_surface_slope
from stakeline.survey.hydraulics import slope_from_water_levels


def test_two_points_give_the_fall_over_the_reach():
    # Two sections 50 m apart, water at 100.30 upstream and 100.10 downstream: S = 0.20 / 50.
    s = water_surface_slope([-20.0, 30.0], [100.30, 100.10], precision=0.003)
    assert s.slope == pytest.approx(0.20 / 50.0)
    assert s.slope == pytest.approx(slope_from_water_levels(100.30, 100.10, 50.0))
    assert s.fall == pytest.approx(0.20) and s.length == 50.0 and s.method == "two points"
    # Each elevation ± σ: u(S) = √(σ² + σ²) / L.
    assert s.standard_error == pytest.approx(math.sqrt(2) * 0.003 / 50.0)
    assert s.plus_minus == pytest.approx(2 * s.standard_error)
    assert s.spans_section


def test_least_squares_matches_numpy_polyfit():
    # The least-squares line and its standard error, against numpy.polyfit's covariance (scaled by
    # the residual variance on n - 2 degrees of freedom).
    x = np.array([-60.0, -35.0, -10.0, 15.0, 40.0, 70.0])
    z = np.array([50.412, 50.371, 50.338, 50.311, 50.262, 50.231])
    s = water_surface_slope(x, z, precision=0.0)
    coef, cov = np.polyfit(x, z, 1, cov=True)
    assert s.slope == pytest.approx(-coef[0], rel=1e-12)
    assert s.standard_error == pytest.approx(math.sqrt(cov[0, 0]), rel=1e-9)
    assert s.method == "least squares" and s.points == 6
    assert sum(s.residuals) == pytest.approx(0.0, abs=1e-12)


def test_levelling_precision_is_a_floor():
    x = np.array([-40.0, -10.0, 20.0, 50.0])
    z = 10.0 - 0.002 * x  # exactly on a line: the scatter says 0, the levelling does not
    s = water_surface_slope(x, z, precision=0.005)
    assert s.slope == pytest.approx(0.002)
    sxx = float(np.sum((x - x.mean()) ** 2))
    assert s.standard_error == pytest.approx(0.005 / math.sqrt(sxx))


def test_default_precision_follows_the_unit():
    m = water_surface_slope([0.0, 100.0], [10.0, 9.9])
    ft = water_surface_slope([0.0, 100.0], [10.0, 9.9], unit="ft")
    assert m.standard_error == pytest.approx(math.sqrt(2) * 0.005 / 100)
    assert ft.standard_error == pytest.approx(math.sqrt(2) * 0.02 / 100)


def test_a_flat_surface_within_its_error_is_kept():
    s = water_surface_slope([-30.0, 0.0, 30.0], [20.000, 20.001, 20.001], precision=0.003)
    assert s.slope < 0 and abs(s.slope) < 2 * s.standard_error
    json.dumps(s.as_dict(), allow_nan=False)


@pytest.mark.parametrize(
    ("distances", "elevations", "match"),
    [
        ([0.0, 50.0], [10.0, 10.3], "rises 0.300 m downstream over 50 m"),
        ([10.0, 10.0, 10.0], [1.0, 2.0, 3.0], "every water-surface point is at distance 10"),
        ([0.0], [1.0], "at least 2 points"),
        ([0.0, 1.0], [1.0], "give one elevation per distance"),
        ([0.0, float("nan")], [1.0, 0.9], "point 2: distance is not a finite number"),
        ([0.0, 5.0], [1.0, "x"], "must be numbers"),
    ],
)
def test_nonsense_is_refused(distances, elevations, match):
    with pytest.raises(GaugingError, match=match):
        water_surface_slope(distances, elevations, precision=0.005)


def test_spans_section_flag():
    assert not water_surface_slope([5.0, 40.0], [3.0, 2.9]).spans_section


@settings(max_examples=100, deadline=None)
@given(
    st.lists(st.floats(-200.0, 200.0), min_size=2, max_size=12, unique=True),
    st.floats(1e-5, 0.05),
    st.floats(-500.0, 500.0),
)
def test_an_exact_line_returns_its_slope_whatever_the_order(distances, slope, datum):
    x = np.array(distances)
    if np.ptp(x) < 1.0:
        x = np.append(x, x.max() + 1.0)
    z = datum - slope * x
    s = water_surface_slope(x, z, precision=0.0)
    assert s.slope == pytest.approx(slope, rel=1e-6, abs=1e-9)
    order = np.argsort(-x)
    assert water_surface_slope(x[order], z[order], precision=0.0).slope == pytest.approx(
        s.slope, rel=1e-9, abs=1e-12
    )

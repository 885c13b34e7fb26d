"""Tests of stakeline.gauging.vertical: mean velocity in a vertical, meter ratings, oblique flow."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from stakeline.errors import SurveyError
from stakeline.gauging import (
    PROFILE_RATIO,
    SURFACE_COEFFICIENT,
    VERTICAL_METHODS,
    GaugingError,
    MeterRating,
    mean_velocity,
    method_for_points,
    normal_velocity,
    profile_ratio,
    suggested_method,
)

# --- The published formulas ------------------------------------------------------------------
# Turnipseed & Sauer (2010), USGS TM 3-A8, and ISO 748 (from memory, as in the project's reference
# notes): one point v06; two points (v02 + v08)/2; three points ((v02 + v08)/2 + v06)/2; surface
# x 0.85 (common practice); ISO 748 five points (vs + 3 v02 + 3 v06 + 2 v08 + vb)/10.
READ = {"surface": 1.10, "v02": 1.00, "v06": 0.85, "v08": 0.70, "bed": 0.30}


@pytest.mark.parametrize(
    ("method", "expected"),
    [
        ("one-point", 0.85),
        ("two-point", (1.00 + 0.70) / 2),
        ("three-point", ((1.00 + 0.70) / 2 + 0.85) / 2),
        ("surface", 0.85 * 1.10),
        ("five-point", (1.10 + 3 * 1.00 + 3 * 0.85 + 2 * 0.70 + 0.30) / 10),
    ],
)
def test_published_formulas(method, expected):
    assert mean_velocity(method, READ) == pytest.approx(expected, rel=1e-12)


def test_surface_coefficient_is_settable_and_bounded():
    assert SURFACE_COEFFICIENT == 0.85
    assert mean_velocity("surface", {"surface": 2.0}, coefficient=0.9) == pytest.approx(1.8)
    with pytest.raises(GaugingError, match="surface coefficient"):
        mean_velocity("surface", {"surface": 2.0}, coefficient=1.5)


def test_arrays_and_missing_points():
    v = mean_velocity("two-point", {"v02": [1.0, np.nan], "v08": [0.6, 0.5]})
    assert v[0] == pytest.approx(0.8) and math.isnan(v[1])
    with pytest.raises(GaugingError, match="0.8 depth"):
        mean_velocity("two-point", {"v02": 1.0})
    with pytest.raises(GaugingError, match="not known"):
        mean_velocity("six-point", READ)


# --- The methods against velocity profiles of the literature ---------------------------------
def power_profile(relative_depth, exponent=1 / 6):
    """Velocity at a relative depth below the surface, for u ∝ (height above bed)^(1/6)."""
    return (1.0 - np.asarray(relative_depth)) ** exponent


def test_methods_recover_the_depth_average_of_a_one_sixth_power_profile():
    # A 1/6-power profile u ∝ y^(1/6) is the one consistent with Manning's equation (Chen 1991,
    # J. Hydraul. Eng. 117(3); from memory).  Its depth average is 6/7 of the surface velocity,
    # integrated in closed form here: ∫0^1 y^(1/6) dy = 6/7.
    average = 6 / 7
    points = {
        name: power_profile(share) for name, share in (("v02", 0.2), ("v06", 0.6), ("v08", 0.8))
    }
    for method in ("one-point", "two-point", "three-point"):
        assert mean_velocity(method, points) == pytest.approx(average, rel=0.01), method
    # The surface coefficient of this profile is 6/7 = 0.857: inside the 0.84-0.90 range by site
    # that the common-practice 0.85 sits in.
    assert 0.84 <= average / power_profile(0.0) <= 0.90
    # And its 0.2/0.8 ratio is 4^(1/6), inside the usual range the profile check accepts.
    ratio = profile_ratio(points["v02"], points["v08"])
    assert ratio == pytest.approx(4 ** (1 / 6))
    assert PROFILE_RATIO[0] <= ratio <= PROFILE_RATIO[1]


@pytest.mark.parametrize("roughness_height", [1e-4, 1e-3, 1e-2])
def test_logarithmic_profile(roughness_height):
    # Logarithmic (Prandtl - von Kármán) profile u = ln(y / y0) with y the height above the bed,
    # depth 1.  Its depth average is ln(1/y0) - 1 + y0 (closed form of ∫ ln(y/y0) dy from y0 to 1).
    # The 0.2/0.8 mean equals the 0.6-depth velocity exactly (0.8 x 0.2 = 0.4²), and both sit
    # within 3 % of the average: the reason for the 0.6 rule (Rantz 1982, WSP 2175; from memory).
    y0 = roughness_height

    def u(depth_share):
        return math.log((1 - depth_share) / y0)

    average = math.log(1 / y0) - 1 + y0
    points = {"v02": u(0.2), "v06": u(0.6), "v08": u(0.8)}
    assert mean_velocity("two-point", points) == pytest.approx(points["v06"], rel=1e-12)
    assert mean_velocity("one-point", points) == pytest.approx(average, rel=0.03)


# --- Choosing the method ---------------------------------------------------------------------
@pytest.mark.parametrize(
    ("depth", "unit", "method"),
    [
        (0.30, "m", "one-point"),
        (0.74, "m", "one-point"),
        (0.75, "m", "two-point"),
        (2.4, "ft", "one-point"),
        (2.5, "ft", "two-point"),
        (6.0, "ft", "two-point"),
    ],
)
def test_suggested_method_follows_the_depth_rule(depth, unit, method):
    # One point below about 0.75 m (2.5 ft), two points deeper (Turnipseed & Sauer 2010; from memory).
    assert suggested_method(depth, unit) == method


def test_method_for_points():
    assert method_for_points(["v06"]) == "one-point"
    assert method_for_points({"v02", "v06", "v08"}) == "three-point"
    for name, needed in VERTICAL_METHODS.items():
        assert method_for_points(needed) == name
    with pytest.raises(GaugingError, match="do not form a published method"):
        method_for_points(["v02", "v06"])


# --- Oblique flow ----------------------------------------------------------------------------
def test_oblique_flow_takes_the_cosine():
    # ISO 748: the component normal to the section is v cos(θ).
    assert normal_velocity(2.0, 30.0) == pytest.approx(2.0 * math.cos(math.radians(30.0)))
    assert_allclose(normal_velocity([1.0, 1.0], [0.0, -45.0]), [1.0, math.sqrt(0.5)])
    for bad in (90.0, -95.0, float("nan")):
        with pytest.raises(GaugingError, match="between -90° and 90°"):
            normal_velocity(1.0, bad)


# --- Current-meter ratings -------------------------------------------------------------------
def test_meter_rating_of_a_textbook_example():
    # Rating v = 0.51 N + 0.03 m/s with 39 revolutions in 100 s (Subramanya, Engineering
    # Hydrology, Example 4.1; from memory): N = 0.39 rev/s.
    meter = MeterRating("A-1", a=0.03, b=0.51)
    assert meter.velocity(39, 100.0) == pytest.approx(0.03 + 0.51 * 39 / 100)
    assert meter.velocity(0, 100.0) == 0.0  # a meter that did not turn reads no velocity
    assert_allclose(
        meter.velocity([58, 112], [100.0, 150.0]), [0.03 + 0.51 * 0.58, 0.03 + 0.51 * 112 / 150]
    )


def test_two_line_rating_and_units():
    meter = MeterRating(
        "B-2",
        a=0.01,
        b=0.70,
        split=1.0,
        a_high=0.03,
        b_high=0.68,
        lowest=0.03,
        highest=3.0,
        unit="ft",
    )
    assert meter.velocity(50, 100) == pytest.approx(0.01 + 0.70 * 0.5)
    assert meter.velocity(300, 100) == pytest.approx(0.03 + 0.68 * 3.0)
    # The same velocity in metres: 1 ft = 0.3048 m exactly (international foot).
    assert meter.velocity(300, 100, unit="m") == pytest.approx((0.03 + 0.68 * 3.0) * 0.3048)
    assert meter.rated_range("m") == pytest.approx((0.03 * 0.3048, 3.0 * 0.3048))
    assert meter.as_dict()["serial"] == "B-2"


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"a": 0.0, "b": -0.5}, "b must be positive"),
        ({"a": 0.0, "b": 0.5, "split": 1.0}, "second rating line"),
        ({"a": 0.0, "b": 0.5, "lowest": 2.0, "highest": 1.0}, "rated range"),
        ({"a": float("nan"), "b": 0.5}, "not a finite number"),
        ({"a": 0.0, "b": 0.5, "unit": "yd"}, "not supported"),
    ],
)
def test_bad_meter_ratings_are_refused(kwargs, match):
    with pytest.raises(SurveyError, match=match):
        MeterRating("X", **kwargs)


def test_bad_counts_are_refused():
    meter = MeterRating("A-1", a=0.03, b=0.51)
    with pytest.raises(GaugingError, match="positive number of seconds"):
        meter.velocity(10, 0.0)
    with pytest.raises(GaugingError, match="revolutions"):
        meter.velocity(-1, 40.0)


# --- Properties ------------------------------------------------------------------------------
velocity = st.floats(-3.0, 3.0, allow_nan=False)


@settings(max_examples=100, deadline=None)
@given(st.lists(velocity, min_size=5, max_size=5), st.floats(0.1, 10.0))
def test_every_method_scales_with_the_velocities(values, factor):
    points = dict(zip(("surface", "v02", "v06", "v08", "bed"), values, strict=True))
    scaled = {k: v * factor for k, v in points.items()}
    for method in VERTICAL_METHODS:
        assert mean_velocity(method, scaled) == pytest.approx(
            factor * mean_velocity(method, points), rel=1e-9, abs=1e-12
        )


@settings(max_examples=50, deadline=None)
@given(velocity)
def test_a_uniform_profile_gives_its_velocity(v):
    points = dict.fromkeys(("surface", "v02", "v06", "v08", "bed"), v)
    for method in ("one-point", "two-point", "three-point", "five-point"):
        assert mean_velocity(method, points) == pytest.approx(v, rel=1e-12, abs=1e-15)

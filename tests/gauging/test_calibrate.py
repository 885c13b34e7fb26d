"""Tests of stakeline.gauging.calibrate: Manning's n back-calculated from a measured discharge."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from stakeline.gauging import GaugingError, calibrate_n, manning_n, rows_holding
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_at
from stakeline.survey.uncertainty import Precision

NO_READINGS = Precision(0.0, 0.0)


def trapezoid(b, z, height):
    top = z * height
    return Section([0, top, top + b, 2 * top + b], [height, 0, 0, height])


def n_by_formula(area, perimeter, discharge, slope, k):
    """n = (k/Q)·A·R^(2/3)·S^(1/2), R = A/P (Chow 1959, eq. 5-7 solved for n)."""
    return k / discharge * area * (area / perimeter) ** (2 / 3) * math.sqrt(slope)


def test_ponce_rectangular_channel_run_backwards():
    # Ponce (2008): b = 6 m, y = 1.6 m, n = 0.015, S = 0.0025 -> Q = 32.91 m³/s.  From Q back to n.
    section = Section([0, 0, 6, 6], [3, 0, 0, 3])
    c = calibrate_n(section, 1.6, 32.91, 0.0025, precision=NO_READINGS)
    assert c.n == pytest.approx(n_by_formula(9.6, 9.2, 32.91, 0.0025, 1.0), rel=1e-12)
    assert c.n == pytest.approx(0.015, rel=5e-4)  # Q is given to 4 figures
    assert c.area == pytest.approx(9.6) and c.hydraulic_radius == pytest.approx(9.6 / 9.2)


def test_chow_trapezoid_in_feet():
    # Chow (1959): b = 20 ft, z = 2, S = 0.0016, Q = 400 ft³/s at normal depth 3.36 ft when
    # n = 0.025 (from memory).  k = 1.486; the depth is given to 0.01 ft, hence 0.5 %.
    y = 3.36
    c = calibrate_n(trapezoid(20.0, 2.0, 10.0), y, 400.0, 0.0016, "ft", precision=NO_READINGS)
    area, perimeter = (20 + 2 * y) * y, 20 + 2 * y * math.sqrt(5)
    assert c.n == pytest.approx(n_by_formula(area, perimeter, 400.0, 0.0016, 1.486), rel=1e-9)
    assert c.n == pytest.approx(0.025, rel=0.005)


def test_mays_problem_5_3_4():
    # Mays, Water Resources Engineering, Problem 5.3.4: b = 20 ft, z = 1.5, n = 0.014,
    # Q = 1500 ft³/s at 9.13 ft on S = 0.0002, solved with k = 1.49 (we use 1.486: 0.27 %).
    c = calibrate_n(trapezoid(20.0, 1.5, 15.0), 9.13, 1500.0, 0.0002, "ft", precision=NO_READINGS)
    assert c.n == pytest.approx(0.014, rel=0.005)


def test_propagation_of_discharge_and_slope():
    # First order (JCGM 100:2008): (u(n)/n)² = (u(Q)/Q)² + (u(S)/2S)².
    section = trapezoid(4.0, 2.0, 3.0)
    c = calibrate_n(
        section,
        1.0,
        5.0,
        0.002,
        discharge_uncertainty=0.04,
        slope_uncertainty=0.0002,
        precision=NO_READINGS,
    )
    expected = math.sqrt(0.04**2 + (0.0002 / (2 * 0.002)) ** 2)
    assert c.relative == pytest.approx(expected)
    assert c.plus_minus == pytest.approx(2 * expected * c.n)
    assert c.parts == pytest.approx({"discharge": 0.04, "slope": 0.05, "section": 0.0})
    # The same spread by simulation: n drawn with Q and S drawn about their values.
    rng = np.random.default_rng(7)
    q = 5.0 * (1 + 0.04 * rng.standard_normal(200_000))
    s = 0.002 + 0.0002 * rng.standard_normal(200_000)
    w = section.at(1.0)
    n = w.area * w.hydraulic_radius ** (2 / 3) * np.sqrt(s) / q
    assert np.std(n) / np.mean(n) == pytest.approx(expected, rel=0.05)


def test_section_part_comes_from_the_readings():
    section = trapezoid(4.0, 2.0, 3.0)
    c = calibrate_n(section, 1.0, 5.0, 0.002)  # default precision: 5 mm readings, 10 mm tape
    assert 0 < c.parts["section"] < 0.05
    assert c.relative == pytest.approx(c.parts["section"])
    json.dumps(c.as_dict(), allow_nan=False)


# Chow (1959), Table 5-6 min-max of n, as in the project reference notes (not re-read).
CHOW_RANGES = {
    "clean-straight": (0.025, 0.033),
    "clean-straight-stony": (0.030, 0.040),
    "clean-winding": (0.033, 0.045),
    "winding-weedy": (0.035, 0.050),
    "sluggish-weedy": (0.050, 0.080),
    "very-weedy": (0.075, 0.150),
    "mountain-gravel": (0.030, 0.050),
    "mountain-boulders": (0.040, 0.070),
    "pasture-short": (0.025, 0.035),
}


@pytest.mark.parametrize("n", [0.020, 0.031, 0.035, 0.047, 0.078, 0.2])
def test_place_in_the_roughness_table(n):
    holding, _ = rows_holding(n)
    expected = {key for key, (low, high) in CHOW_RANGES.items() if low <= n <= high}
    assert {row.key for row in holding} == expected


def test_rows_in_the_band():
    c = calibrate_n(
        Section([0, 0, 6, 6], [3, 0, 0, 3]),
        1.6,
        32.91,
        0.0025,
        discharge_uncertainty=0.05,
        precision=NO_READINGS,
    )
    assert c.rows == ()  # 0.015 is smoother than any natural stream in the table
    assert c.rows_in_band == ()


def test_bad_input_is_refused():
    section = trapezoid(4.0, 2.0, 3.0)
    with pytest.raises(GaugingError, match="dry at water level"):
        calibrate_n(section, -1.0, 5.0, 0.002)
    with pytest.raises(GaugingError, match="discharge must be a positive number"):
        calibrate_n(section, 1.0, 0.0, 0.002)
    with pytest.raises(GaugingError, match="slope must be a positive number"):
        calibrate_n(section, 1.0, 5.0, -0.002)
    with pytest.raises(GaugingError, match="slope uncertainty"):
        calibrate_n(section, 1.0, 5.0, 0.002, slope_uncertainty=float("nan"))
    with pytest.raises(ValueError, match="above the"):
        calibrate_n(section, 9.0, 5.0, 0.002)
    with pytest.raises(GaugingError, match="wetted area"):
        manning_n(0.0, 1.0, 1.0, 0.001)


@settings(max_examples=60, deadline=None)
@given(
    st.floats(0.5, 30.0),
    st.floats(0.0, 4.0),
    st.floats(0.05, 0.95),
    st.floats(0.012, 0.15),
    st.floats(1e-5, 0.05),
    st.sampled_from(["m", "ft"]),
)
def test_n_back_from_mannings_own_discharge(width, side, fraction, n, slope, unit):
    section = trapezoid(width, side, 5.0)
    stage = fraction * 5.0
    q = flow_at(section, stage, n, slope, unit).discharge
    c = calibrate_n(section, stage, q, slope, unit, precision=NO_READINGS)
    assert c.n == pytest.approx(n, rel=1e-9)

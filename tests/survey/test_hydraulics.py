"""Tests of stakeline.survey.hydraulics against published worked examples and closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from stakeline.errors import OvertoppedError, SectionError, SurveyError
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import (
    GRAVITY,
    MANNING_K,
    UNIT_WEIGHT,
    CompoundSection,
    bank_top_splits,
    bankfull_stage,
    bankfull_summary,
    conveyance,
    critical_stage,
    figure_unit,
    flow_at,
    flow_table,
    manning_discharge,
    slope_from_water_levels,
    stage_for_discharge,
)


def trapezoid(b, z, height):
    top = z * height
    return Section([0, top, top + b, 2 * top + b], [height, 0, 0, height])


def rectangle(b, height):
    return Section([0, 0, b, b], [height, 0, 0, height])


def trapezoid_q(y, b, z, n, s, k):
    """Manning discharge of a trapezoid from the Chow (1959) Table 2-1 formulas."""
    area = (b + z * y) * y
    perimeter = b + 2 * y * math.sqrt(1 + z * z)
    return k / n * area * (area / perimeter) ** (2 / 3) * math.sqrt(s)


def bisect(f, lo, hi):
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if f(mid) < 0 else (lo, mid)
    return 0.5 * (lo + hi)


# --- Published worked examples ---------------------------------------------------------------


def test_normal_depth_chow_trapezoid():
    # Chow (1959), Open-Channel Hydraulics, trapezoidal channel used in several examples:
    # b = 20 ft, z = 2, n = 0.025, S = 0.0016, Q = 400 cfs -> normal depth 3.36 ft (from memory).
    section = trapezoid(20.0, 2.0, 10.0)
    y = stage_for_discharge(section, 400.0, 0.025, 0.0016, "ft")
    assert y == pytest.approx(3.36, abs=0.005)
    # Recomputed from the closed-form A and P at the depth found: Q must come back as 400 cfs.
    assert trapezoid_q(y, 20.0, 2.0, 0.025, 0.0016, 1.486) == pytest.approx(400.0, rel=1e-9)


def test_critical_depth_chow_trapezoid():
    # Chow (1959), same trapezoid carrying 400 cfs: critical depth 2.15 ft (from memory).
    y = critical_stage(trapezoid(20.0, 2.0, 10.0), 400.0, "ft")
    assert y == pytest.approx(2.15, abs=0.005)
    # Closed form of critical flow: Q^2 T / (g A^3) = 1 at that depth (Chow 1959, ch. 4).
    area, top = (20 + 2 * y) * y, 20 + 4 * y
    assert 400.0**2 * top / (32.174 * area**3) == pytest.approx(1.0, rel=1e-9)


def test_normal_depth_mays_problem_5_3_4():
    # Mays, Water Resources Engineering, Problem 5.3.4: trapezoid b = 20 ft, z = 1.5, n = 0.014,
    # Q = 1500 cfs, S = 0.0002 -> normal depth 9.13 ft, solved with k = 1.49.
    args = (20.0, 1.5, 0.014, 0.0002)
    textbook = bisect(lambda y: trapezoid_q(y, *args, 1.49) - 1500.0, 0.1, 30.0)
    assert textbook == pytest.approx(9.13, abs=0.01)
    ours = stage_for_discharge(trapezoid(*args[:2], 20.0), 1500.0, args[2], args[3], "ft")
    # k = 1.486 here, 1.49 there: a 0.27 % difference in Q, so allow 0.5 % on the depth.
    assert ours == pytest.approx(9.13, rel=0.005)
    assert trapezoid_q(ours, *args, 1.486) == pytest.approx(1500.0, rel=1e-9)


# --- Closed forms ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("unit", "b", "y", "n", "s"), [("m", 6.0, 1.6, 0.015, 0.0025), ("ft", 12.0, 2.5, 0.03, 0.001)]
)
def test_rectangle_every_figure(unit, b, y, n, s):
    f = flow_at(rectangle(b, 5.0), y, n, s, unit)
    # Chow (1959) Table 2-1 rectangle; Manning (Chow eq. 5-7); Fr = V/sqrt(gD); tau = gamma R S;
    # unit stream power gamma Q S / T.
    k, g, gamma = {"m": (1.0, 9.80665, 9806.65), "ft": (1.486, 32.174, 62.4)}[unit]
    area, perimeter = b * y, b + 2 * y
    radius = area / perimeter
    q = k / n * area * radius ** (2 / 3) * math.sqrt(s)
    v = q / area
    assert_allclose(f.area, area, rtol=1e-12)
    assert_allclose(f.wetted_perimeter, perimeter, rtol=1e-12)
    assert_allclose(f.hydraulic_radius, radius, rtol=1e-12)
    assert_allclose(f.discharge, q, rtol=1e-12)
    assert_allclose(f.conveyance, q / math.sqrt(s), rtol=1e-12)
    assert_allclose(f.velocity, v, rtol=1e-12)
    assert_allclose(f.froude, v / math.sqrt(g * y), rtol=1e-12)
    assert_allclose(f.shear_stress, gamma * radius * s, rtol=1e-12)
    assert_allclose(f.stream_power, gamma * q * s / b, rtol=1e-12)


def test_rectangle_critical_depth_closed_form():
    # Rectangular channel: y_c = (q^2 / g)^(1/3) with q = Q / b (Chow 1959, ch. 4; closed form).
    b, q = 3.0, 4.2
    yc = critical_stage(rectangle(b, 5.0), q, "m")
    assert_allclose(yc, ((q / b) ** 2 / 9.80665) ** (1 / 3), rtol=1e-9)


def test_critical_flow_has_froude_one():
    section = trapezoid(2.0, 1.0, 3.0)
    y = critical_stage(section, 3.0, "m")
    w = section.at(y)
    # Fr = V / sqrt(g D) = 1 at critical flow (closed form).
    assert 3.0 / w.area / math.sqrt(9.80665 * w.hydraulic_depth) == pytest.approx(1.0, rel=1e-9)


def test_us_constant_matches_unit_conversion():
    # k = 1.486 is (1/0.3048)^(1/3) = 1.4859 rounded: the same channel in feet and metres gives the
    # same discharge to 0.01 % (closed form).
    ft = 0.3048
    q_m = flow_at(trapezoid(6.0, 1.5, 4.0), 1.2, 0.03, 0.002, "m").discharge
    q_ft = flow_at(trapezoid(6.0 / ft, 1.5, 4.0 / ft), 1.2 / ft, 0.03, 0.002, "ft").discharge
    assert_allclose(q_ft * ft**3, q_m, rtol=1e-4)
    assert MANNING_K["ft"] == pytest.approx((1 / ft) ** (1 / 3), abs=1e-4)


def test_scalar_and_array_inputs():
    assert isinstance(manning_discharge(2.0, 0.5, 0.001, 0.03), float)
    q = manning_discharge([2.0, 4.0], [0.5, 0.5], 0.001, 0.03)
    assert q.shape == (2,)
    assert_allclose(conveyance(2.0, 0.5, 0.03) * math.sqrt(0.001), q[0], rtol=1e-12)


def test_dry_section_gives_zeros():
    f = flow_at(trapezoid(2.0, 1.0, 3.0), -1.0, 0.03, 0.001)
    assert f.area == f.discharge == f.velocity == f.froude == f.stream_power == 0.0


def test_slope_from_two_water_levels():
    # Closed form: fall / distance.
    assert slope_from_water_levels(100.30, 100.10, 50.0) == pytest.approx(0.2 / 50.0, rel=1e-12)
    with pytest.raises(SurveyError, match="upstream"):
        slope_from_water_levels(100.0, 100.1, 50.0)
    with pytest.raises(SurveyError, match="distance"):
        slope_from_water_levels(100.3, 100.1, 0.0)


@pytest.mark.parametrize(
    ("n", "s"), [(0.0, 0.001), (-0.03, 0.001), (0.03, 0.0), (float("nan"), 0.001)]
)
def test_bad_n_or_slope(n, s):
    with pytest.raises(SurveyError):
        flow_at(rectangle(2.0, 2.0), 1.0, n, s)


def test_overtopped_and_too_much_discharge():
    with pytest.raises(OvertoppedError):
        flow_at(rectangle(2.0, 2.0), 2.5, 0.03, 0.001)
    with pytest.raises(SurveyError, match="extend the survey"):
        stage_for_discharge(rectangle(2.0, 2.0), 1e6, 0.03, 0.001)


@settings(max_examples=60, deadline=None)
@given(st.floats(0.01, 50.0), st.floats(0.01, 0.1), st.floats(1e-4, 0.05))
def test_stage_for_discharge_round_trip(q, n, s):
    section = trapezoid(3.0, 2.0, 20.0)
    try:
        h = stage_for_discharge(section, q, n, s)
    except SurveyError:
        return
    assert flow_at(section, h, n, s).discharge == pytest.approx(q, rel=1e-9)


def test_figure_units():
    assert figure_unit("shear_stress", "m") == "Pa"
    assert figure_unit("stream_power", "ft") == "ft·lb/s/ft²"
    assert figure_unit("area", "ft") == "ft²"


# --- Compound sections (divided-channel method) -------------------------------------------------


def two_stage(main=10.0, bank=2.0, plain=20.0, high=4.0):
    """Rectangular main channel with flat flood plains either side, walls at the outer edges."""
    x = [0, 0, plain, plain, plain + main, plain + main, 2 * plain + main, 2 * plain + main]
    z = [high, bank, bank, 0, 0, bank, bank, high]
    return Section(x, z)


def test_compound_closed_form():
    section = two_stage()
    splits = [20.0, 30.0]
    n = [0.05, 0.03, 0.05]
    h, s = 2.5, 0.001
    f = flow_table(section, h, n, s, "m", splits)
    # Divided-channel method (Chow 1959, sec. 6-7): each part its own A, P (dividers not wetted).
    a_plain, p_plain = 20 * 0.5, 20 + 0.5
    a_main, p_main = 10 * 2.5, 10 + 2 * 2
    k_plain = 1 / 0.05 * a_plain * (a_plain / p_plain) ** (2 / 3)
    k_main = 1 / 0.03 * a_main * (a_main / p_main) ** (2 / 3)
    assert_allclose(f["discharge"], (2 * k_plain + k_main) * math.sqrt(s), rtol=1e-12)
    assert_allclose(f["area"], 2 * a_plain + a_main, rtol=1e-12)
    assert_allclose(f["wetted_perimeter"], 2 * p_plain + p_main, rtol=1e-12)
    parts = f["parts"]
    assert_allclose([p["area"] for p in parts], [a_plain, a_main, a_plain], rtol=1e-12)
    assert_allclose([p["wetted_perimeter"] for p in parts], [p_plain, p_main, p_plain], rtol=1e-12)


def test_compound_split_between_stations():
    # Splitting a flat-bed rectangle at x = 1.3 (not a station): parts share the area exactly.
    section = rectangle(4.0, 3.0)
    parts = flow_table(section, 1.0, [0.03, 0.03], 0.001, "m", [1.3])["parts"]
    assert_allclose([p["area"] for p in parts], [1.3, 2.7], rtol=1e-12)
    assert_allclose([p["wetted_perimeter"] for p in parts], [1.3 + 1.0, 2.7 + 1.0], rtol=1e-12)


def test_compound_below_bank_tops_equals_single_channel():
    section = two_stage()
    single = flow_at(section, 1.7, 0.03, 0.002)
    compound = flow_at(section, 1.7, [0.05, 0.03, 0.05], 0.002, splits=[20.0, 30.0])
    assert_allclose(compound.discharge, single.discharge, rtol=1e-12)


def test_vertical_bank_face_belongs_to_the_main_channel():
    # A vertical cut bank at the right split: the face is main-channel boundary, not overbank.
    section = Section([0, 1, 4, 6, 6, 9, 9], [2.0, 0.0, 0.0, 0.5, 1.6, 1.6, 3.0])
    splits = bank_top_splits(
        section.stations, section.elevations, ["", "", "", "", "bank_top", "", ""]
    )
    assert splits == [6.0]
    parts = CompoundSection(section, splits, [0.03, 0.06]).table(1.8)["parts"]
    whole = section.at(1.8)
    assert_allclose(parts[0]["area"] + parts[1]["area"], whole.area, rtol=1e-12)
    assert_allclose(parts[1]["wetted_perimeter"], 3.0 + 0.2, rtol=1e-12)  # flat plain + far wall
    assert_allclose(
        parts[0]["wetted_perimeter"] + parts[1]["wetted_perimeter"],
        whole.wetted_perimeter,
        rtol=1e-12,
    )


def test_bank_top_splits_ignore_end_stations():
    x, z = [0, 1, 2, 3, 4], [2.0, 1.0, 0.0, 1.0, 2.0]
    assert bank_top_splits(x, z, ["bank_top", "", "", "", "bank_top"]) == []
    assert bank_top_splits(x, z, ["", "bank_top", "", "bank_top", ""]) == [1.0, 3.0]


def test_compound_bad_input():
    section = two_stage()
    with pytest.raises(SurveyError, match="values of n"):
        CompoundSection(section, [20.0, 30.0], [0.03, 0.03])
    with pytest.raises(SectionError, match="not inside"):
        CompoundSection(section, [0.0], [0.03, 0.03])
    with pytest.raises(SurveyError, match="increase"):
        CompoundSection(section, [30.0, 20.0], [0.03, 0.03, 0.03])


# --- Bankfull --------------------------------------------------------------------------------


def test_bankfull_summary_trapezoid():
    b, z, y = 4.0, 2.0, 1.0
    out = bankfull_summary(trapezoid(b, z, 2.0), y)
    # Chow (1959) Table 2-1 trapezoid: T = b + 2zy, A = (b + zy)y; mean depth A/T.
    top, area = b + 2 * z * y, (b + z * y) * y
    assert_allclose(out["width"], top, rtol=1e-12)
    assert_allclose(out["area"], area, rtol=1e-12)
    assert_allclose(out["mean_depth"], area / top, rtol=1e-12)
    assert_allclose(out["max_depth"], y, rtol=1e-12)
    assert_allclose(out["width_depth_ratio"], top / (area / top), rtol=1e-12)


def test_bankfull_stage_is_the_lower_bank_top():
    x, z = [0, 1, 2, 3, 4], [2.0, 1.5, 0.0, 1.2, 2.0]
    codes = ["", "bank_top", "", "bank_top", ""]
    assert bankfull_stage(x, z, codes) == 1.2
    assert bankfull_stage(x, z, ["", "bank_top", "", "", ""]) is None


def test_constants():
    # Standard gravity 9.80665 m/s^2 (CGPM 1901); 32.174 ft/s^2 is the same in feet.
    assert GRAVITY["ft"] == pytest.approx(9.80665 / 0.3048, rel=1e-5)
    # Unit weight of water: 62.4 lb/ft^3 and 9806.65 N/m^3 agree to 0.1 % (common practice).
    lbf, ft3 = 4.4482216152605, 0.3048**3
    assert UNIT_WEIGHT["ft"] * lbf / ft3 == pytest.approx(UNIT_WEIGHT["m"], rel=2e-3)
    assert np.isfinite(list(MANNING_K.values())).all()


def test_subsection_names():
    section = two_stage()
    assert CompoundSection(section, [20.0, 30.0], [0.05, 0.03, 0.05]).names() == [
        "left overbank",
        "main channel",
        "right overbank",
    ]
    assert CompoundSection(section, [30.0], [0.03, 0.05]).names() == [
        "main channel",
        "right overbank",
    ]


@settings(max_examples=40, deadline=None)
@given(st.floats(0.5, 20.0), st.floats(0.0, 4.0), st.floats(0.01, 0.1), st.floats(1e-4, 0.05))
def test_trapezoid_discharge_rises_with_stage(b, z, n, s):
    # For a trapezoid A and R both grow with depth, so Manning's Q must too (closed form).
    stages = np.linspace(0.0, 3.0, 61)
    q = flow_table(trapezoid(b, z, 3.0), stages, n, s)["discharge"]
    assert np.all(np.diff(q) > 0)


def test_bank_tops_at_a_vertical_face_next_to_the_deepest_point():
    # two_stage(): the deepest point is the foot of the left wall at station 20, where the left
    # bank top also stands; the split must still be 20 (left) and 30 (right).
    section = two_stage()
    codes = ["", "", "bank_top", "", "", "bank_top", "", ""]
    assert bank_top_splits(section.stations, section.elevations, codes) == [20.0, 30.0]
    assert bankfull_stage(section.stations, section.elevations, codes) == 2.0

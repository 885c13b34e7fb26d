"""Tests of stakeline.checks: each finding kind on synthetic sections, and clean sections stay quiet."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from stakeline.checks import (
    KINDS,
    SEVERITIES,
    CheckSettings,
    Finding,
    closure_tolerance,
    gap_findings,
    order_findings,
    review,
)
from stakeline.errors import SectionError, SurveyError
from synthetic import (
    natural_section,
    random_point_error,
    uniform_stations,
    with_point_error,
    with_repeated_entry,
    with_station_typo,
)


def loud(findings, kind=None):
    """The block and warn findings (of one kind)."""
    return [f for f in findings if f.severity != "note" and (kind is None or f.kind == kind)]


def run(section, **kwargs):
    """review() of a synthetic section with everything the crew recorded."""
    return review(
        section.stations,
        section.elevations,
        stage=kwargs.pop("stage", section.stage),
        meta=kwargs.pop("meta", section.meta),
        codes=section.codes,
        readings=section.readings,
        **kwargs,
    )


def surveyed(vertices, stage, spacing):
    """Stations every ``spacing`` on a polyline ground (x, z vertices; a repeated x is a vertical
    face), plus its vertices and the water's edges, as a careful crew reads them."""
    vx, vz = (np.array(v, dtype=float) for v in zip(*vertices, strict=True))
    regular = np.arange(vx[0], vx[-1] + 1e-9, spacing)
    nudged = vx + 1e-9 * np.r_[0, np.cumsum(np.diff(vx) == 0)]  # a face: its foot just beyond
    ground = np.interp(regular, nudged, vz)
    wet = vz < stage
    change = np.flatnonzero(wet[:-1] != wet[1:])
    t = (vz[change] - stage) / (vz[change] - vz[change + 1])
    edges = vx[change] + t * (vx[change + 1] - vx[change])
    edges = edges[np.min(np.abs(edges[:, None] - vx[None, :]), axis=1, initial=9) > 1e-9]
    near = np.minimum(np.min(np.abs(regular[:, None] - vx), axis=1), spacing)
    if edges.size:
        near = np.minimum(near, np.min(np.abs(regular[:, None] - edges), axis=1))
    points = (
        list(zip(vx, vz, strict=True))
        + [(e, stage) for e in edges]
        + [(a, b) for a, b, d in zip(regular, ground, near, strict=True) if d > spacing / 4]
    )
    points.sort(key=lambda p: p[0])  # stable: a vertical face keeps its order
    x = np.array([p[0] for p in points])
    z = np.array([p[1] for p in points])
    return x, z


# Closed forms from Chow (1959), Open-Channel Hydraulics, Table 2-1 shapes, with floodplains.
RECTANGLE = [(0, 2.0), (1.5, 2.0), (1.5, 0.0), (7.5, 0.0), (7.5, 2.0), (9, 2.0)]
TRAPEZOID = [(0, 2.0), (1, 2.0), (4, 0.0), (10, 0.0), (13, 2.0), (14, 2.0)]
TRIANGLE = [(0, 2.0), (1, 2.0), (7, 0.0), (13, 2.0), (14, 2.0)]
UNDERCUT = [(0, 2.0), (1, 2.0), (1, 0.2), (1.6, 0.5), (7, 0.4), (8.5, 2.0), (9.5, 2.1)]
BAR = [
    (0, 2.0),
    (1, 2.0),
    (2, 0.2),
    (5, 0.0),
    (7, 0.9),
    (8, 1.2),
    (9, 0.9),
    (11, 0.1),
    (13, 2),
    (14, 2),
]


# --- clean sections stay quiet ------------------------------------------------------------------
@pytest.mark.parametrize(
    ("vertices", "stage", "spacing"),
    [
        (RECTANGLE, 1.2, 0.25),
        (TRAPEZOID, 1.4, 0.5),
        (TRIANGLE, 1.5, 0.25),
        (UNDERCUT, 1.3, 0.25),
        (BAR, 1.0, 0.25),
    ],
    ids=["rectangle-vertical-walls", "trapezoid", "triangle-deepest-point", "undercut-toe", "bar"],
)
def test_closed_form_shapes_raise_nothing(vertices, stage, spacing):
    x, z = surveyed(vertices, stage, spacing)
    # common practice: read every slope break, both water's edges, 20+ stations across the water
    assert np.count_nonzero(z <= stage) >= 20
    assert review(x, z, stage=stage) == []


@pytest.mark.parametrize("seed", range(60))
def test_natural_sections_raise_no_block_or_warn(seed):
    section = natural_section(np.random.default_rng(seed))
    assert loud(run(section)) == [], section.shape


@pytest.mark.parametrize(
    "banks",
    [
        ("vertical", "vertical"),
        ("undercut", "undercut"),
        ("steep", "steep"),
        ("bench", "vertical"),
        ("undercut", "bench"),
    ],
)
@pytest.mark.parametrize("seed", range(6))
def test_steep_vertical_and_undercut_banks_raise_no_block_or_warn(banks, seed):
    section = natural_section(np.random.default_rng(100 + seed), banks=banks)
    assert loud(run(section)) == [], section.shape


def test_natural_sections_without_codes_or_stage_stay_quiet():
    """The CLI may have no code column and no water level: banks and faces must still pass."""
    for seed in range(30):
        s = natural_section(np.random.default_rng(500 + seed))
        assert loud(review(s.stations, s.elevations)) == [], s.shape


# --- spike ---------------------------------------------------------------------------------------
def middle_bed_station(section):
    """Index of a regular station in the water, away from banks and features."""
    wet = np.flatnonzero(
        (section.elevations < section.stage - 0.05) & (np.array(section.codes) == "")
    )
    return int(wet[len(wet) // 2])


@pytest.mark.parametrize("seed", range(12))
@pytest.mark.parametrize("sign", [1.0, -1.0])
def test_spike_of_a_quarter_depth_is_flagged_with_the_station_to_reread(seed, sign):
    section = natural_section(np.random.default_rng(seed))
    i = middle_bed_station(section)
    true = section.elevations[i]
    bad = with_point_error(section, i, sign * 0.25 * section.channel_depth)
    spikes = loud(run(bad), "spike")
    assert [f.index for f in spikes] == [i]
    at = f"{round(float(section.stations[i]), 2):g} m"
    assert f"re-read station {at}" in spikes[0].suggestion
    assert ("too high" if sign > 0 else "too low") in spikes[0].message
    # the neighbours' estimate is near the true ground (within a tenth of the channel depth)
    estimate = float(spikes[0].message.split("about ")[1].split(" m")[0])
    assert abs(estimate - true) < 0.1 * section.channel_depth


def test_spike_on_hand_built_bed_blocks_and_names_reading():
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    i = int(np.flatnonzero(x == 7.0)[0])
    z[i] -= 0.5  # a plumb read 0.5 m too long
    readings = 3.0 - z
    found = review(x, z, stage=1.4, readings=readings)
    assert [(f.kind, f.severity, f.station) for f in found] == [("spike", "block", 7.0)]
    assert "reading near 3.000 m" in found[0].suggestion  # line 3.0 - undisturbed bed 0.0


def test_deepest_point_of_a_v_and_undercut_toe_are_not_spikes():
    x, z = surveyed(TRIANGLE, 1.5, 0.25)
    z = z + 0.003 * np.sin(np.arange(z.size) * 2.3)  # reading noise
    assert loud(review(x, z, stage=1.5), "spike") == []
    x, z = surveyed(UNDERCUT, 1.3, 0.25)
    assert loud(review(x, z, stage=1.3), "spike") == []


def test_spike_rates_on_generated_sections():
    """A small version of bench/bench_checks.py: most quarter-depth errors are found."""
    found = 0
    for seed in range(40):
        rng = np.random.default_rng(2000 + seed)
        bad, i, _ = random_point_error(natural_section(rng), rng, 0.2, 0.3)
        found += any(f.index == i for f in loud(run(bad)))
    assert found >= 36


def test_stake_or_bank_top_either_may_be_wrong():
    # floodplain read only at the stake and the bank top: a wrong stake reading makes the bank
    # top look wrong too, so the finding names both stations to re-read
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    keep = x != 0.5  # the floodplain read at the stake (0 m) and the bank top (1 m) only
    x, z = x[keep], z[keep]
    z[0] -= 0.6
    found = loud(review(x, z, stage=1.4), "spike")
    assert len(found) == 1
    named = {found[0].index, *found[0].also}
    assert 0 in named
    for i in named:
        assert f"re-read station {round(float(x[i]), 2):g} m" in found[0].suggestion


@pytest.mark.parametrize("seed", range(10))
def test_natural_sections_in_feet_raise_no_block_or_warn(seed):
    section = natural_section(np.random.default_rng(300 + seed), unit="ft")
    assert loud(run(section)) == [], section.shape


# --- order and duplicate -------------------------------------------------------------------------
def test_station_typed_wrong_is_out_of_order_and_names_the_fitting_range():
    section = natural_section(np.random.default_rng(7))
    i = 10
    bad = with_station_typo(section, i, float(section.stations[i + 5]) + 0.3)
    order = loud(run(bad), "order")
    assert [(f.index, f.severity) for f in order] == [(i, "block")]
    low, high = section.stations[i - 1], section.stations[i + 1]
    assert (
        f"between {round(float(low), 2):g} m and {round(float(high), 2):g} m" in order[0].suggestion
    )


def test_survey_entered_from_the_other_stake_is_one_finding():
    found = order_findings([10.0, 8.0, 6.0, 4.0, 2.0, 0.0])
    assert len(found) == 1 and found[0].severity == "block" and "backwards" in found[0].message


def test_double_entry_and_conflicting_readings():
    section = natural_section(np.random.default_rng(3))
    i = middle_bed_station(section)
    twice = loud(run(with_repeated_entry(section, i)), "duplicate")
    assert [(f.index, f.severity) for f in twice] == [(i + 1, "warn")]
    conflict = loud(run(with_repeated_entry(section, i, 0.3)), "duplicate")
    assert [(f.index, f.severity) for f in conflict] == [(i + 1, "block")]
    assert "re-read station" in conflict[0].suggestion


def test_face_entered_in_reverse_order():
    x, z = surveyed(RECTANGLE, 1.2, 0.25)
    i = int(np.flatnonzero(np.diff(x) == 0)[0])  # the left wall: top (2.0) then toe (0.0)
    z[[i, i + 1]] = z[[i + 1, i]]
    found = loud(
        review(x, z, stage=1.2, codes=["bank_top" if k == i + 1 else "" for k in range(x.size)])
    )
    assert [(f.kind, f.severity, f.station) for f in found] == [("order", "block", 1.5)]
    assert "swap the two entries at 1.5 m" in found[0].suggestion


def test_vertical_faces_are_not_duplicates_even_without_codes():
    x, z = surveyed(RECTANGLE, 1.2, 0.25)
    assert loud(review(x, z), "duplicate") == []
    x, z = surveyed(UNDERCUT, 1.3, 0.25)
    assert loud(review(x, z), "duplicate") == []


# --- water: overtopped, sparse, edge, gap --------------------------------------------------------
def test_overtopped_end_says_which_and_by_how_much():
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    z[-2:] = 1.9  # the right end lower than the left
    found = review(x, z, stage=1.95)
    assert [(f.kind, f.severity) for f in found] == [("overtopped", "block")]
    assert "right end" in found[0].message
    assert f"{1.95 - 1.9:.3f} m above" in found[0].message
    assert "extend the survey on the right bank" in found[0].suggestion


def test_sparse_survey_and_crew_minimum():
    section = natural_section(np.random.default_rng(11))
    thin = uniform_stations(section, 12, keep_codes=False)
    sparse = loud(run(thin), "sparse")
    assert len(sparse) == 1 and "at least 20" in sparse[0].message
    assert loud(run(thin, settings={"min_wet_stations": 3}), "sparse") == []


def test_missing_water_edge_suggests_where_to_read_it():
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    stage = 1.4
    keep = np.abs(z - stage) > 1e-9  # the crew did not read the water's edges
    found = loud(review(x[keep], z[keep], stage=stage), "edge")
    # the computed edge is where the straight ground between stations meets the water
    # (linear interpolation, as stakeline.survey.geometry finds it): left bank z = 2 - 2(x-1)/3
    left_edge = 1 + (2.0 - stage) * 3 / 2
    assert [f.severity for f in found] == ["warn", "warn"]
    assert_allclose(found[0].station, left_edge, atol=1e-9)
    assert f"near {round(left_edge / 0.05) * 0.05:g} m" in found[0].suggestion


def test_station_coded_water_edge_must_be_at_the_water_level():
    section = natural_section(np.random.default_rng(14), banks=("sloped", "sloped"))
    i = section.codes.index("water_edge")
    off = 0.3 * section.max_water_depth
    found = [f for f in loud(run(with_point_error(section, i, -off))) if f.kind == "edge"]
    assert [f.index for f in found] == [i]
    assert "below the water level" in found[0].message
    assert f"re-read station {round(float(section.stations[i]), 2):g} m" in found[0].suggestion


def test_gap_flow_share_rule_cites_usgs():
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    keep = (x <= 5.0) | (x >= 9.0) | (x == 7.0)  # two wide panels over the deepest water
    found = loud(review(x[keep], z[keep], stage=1.4), "gap")
    assert {f.station for f in found} == {5.0, 7.0}
    # depth^(5/3) x width proxy, recomputed here for the panel 5..7 m (depth 1.4 m throughout)
    xs, zs = x[keep], z[keep]
    d = np.maximum(1.4 - zs, 0)
    share = 2.0 * 1.4 ** (5 / 3) / np.sum(np.diff(xs) * _mean_power(d[:-1], d[1:]))
    assert f"{100 * share:.1f} % of the flow" in found[0].message
    assert "USGS" in found[0].message and "add a station at 6 m" in found[0].suggestion


def _mean_power(a, b):
    """Mean of d^(5/3) over a panel whose depth goes linearly from a to b."""
    with np.errstate(divide="ignore", invalid="ignore"):
        out = (b ** (8 / 3) - a ** (8 / 3)) / ((8 / 3) * (b - a))
    return np.where(np.abs(b - a) > 1e-12, out, a ** (5 / 3))


def test_gap_slope_break_rule_suggests_the_break():
    # trapezoid bed with the left toe (4, 0) not read: stations 3.5 and 5.0 straddle it
    x = np.array([0, 1, 1.5, 2, 2.5, 3, 3.5, 5, 5.5, 6, 6.5, 7, 7.5, 8, 8.5, 9, 9.5, 10, 10.5, 11])
    x = np.r_[x, 11.5, 12, 12.5, 13, 14]
    z = np.interp(x, [0, 1, 4, 10, 13, 14], [2, 2, 0, 0, 2, 2])
    found = [f for f in gap_findings(x, z, 1.6) if "slope break" in f.message]
    # the bank line (slope -2/3) and the bed line (level) extended meet at the toe, x = 4
    assert len(found) == 1 and "add a station at 4 m" in found[0].suggestion
    assert "USBR" in found[0].message


def test_gap_wide_panel_rule():
    x, z = surveyed(TRAPEZOID, 1.4, 0.5)
    keep = x != 3.5  # a skipped station on the wetted bank
    found = loud(review(x[keep], z[keep], stage=1.4), "gap")
    assert [f.station for f in found] == [3.0]
    assert "2.0 times as wide as the panels beside it" in found[0].message
    assert "add a station at 3.5 m" in found[0].suggestion


# --- line and closure ----------------------------------------------------------------------------
def test_line_heights_against_level_check():
    section = natural_section(np.random.default_rng(1))
    meta = dict(section.meta, line_check=section.meta["line_left"] + 0.02)
    found = loud(run(section, meta=meta), "line")
    assert len(found) == 2 and all(f.severity == "block" for f in found)  # both stakes off
    assert "0.020 m" in found[0].message
    meta = dict(section.meta, line_check=section.meta["line_left"] + 0.008)  # within 10 mm
    assert loud(run(section, meta=meta), "line") == []


def test_sloping_line_checked_where_the_level_was_read():
    # line straight between the stakes: 101.20 at the origin (left) stake, 101.30 at 10 m
    meta = {"line_left": 101.2, "line_right": 101.3, "stake_distance": 10.0, "origin": "left"}
    good = dict(meta, line_check=101.2 + 0.1 * 4.0 / 10.0, line_check_station=4.0)
    assert review([0, 1], [100, 100], meta=good) == []
    off = dict(good, line_check=101.26)  # 20 mm above the line at 4 m
    found = review([0, 1], [100, 100], meta=off)
    assert [f.kind for f in found] == ["line"] and "0.020 m" in found[0].message
    # elevations reduced from that line agree with the readings: no finding
    x = np.array([0.0, 2.5, 5.0, 7.5, 10.0])
    readings = np.array([0.5, 1.0, 1.2, 1.0, 0.6])
    elevations = 101.2 + 0.01 * x - readings
    assert review(x, elevations, meta=meta, readings=readings) == []


def test_negative_and_too_long_readings():
    x = np.arange(0.0, 6.0, 0.5)
    readings = np.full(x.size, 1.0)
    readings[3], readings[7] = -0.12, 4.1
    found = review(x, 100.0 - readings, meta={"plumb_length": 3.0}, readings=readings)
    line = [(f.station, f.severity) for f in found if f.kind == "line"]
    assert line == [(1.5, "block"), (3.5, "block")]
    assert "negative" in found[0].message or "negative" in found[1].message


def test_elevation_that_is_not_line_minus_reading():
    section = natural_section(np.random.default_rng(2))
    elevations = section.elevations.copy()
    elevations[4] += 0.05  # typed into the elevation column by hand
    found = review(section.stations, elevations, meta=section.meta, readings=section.readings)
    assert any(f.kind == "line" and f.index == 4 for f in found)


def test_closure_tolerance_third_order_levelling():
    # FGCC (1984) third-order levelling, from memory: 12 mm * sqrt(K km); 0.05 ft * sqrt(M miles)
    assert_allclose(closure_tolerance(250.0), 0.012 * math.sqrt(0.25))
    ft = CheckSettings.for_unit("ft")
    assert_allclose(closure_tolerance(2640.0, ft), 0.05 * math.sqrt(0.5))
    meta = {"backsights": [1.512, 0.874], "foresights": [0.911, 1.468], "loop_length": 250.0}
    misclosure = (1.512 + 0.874) - (0.911 + 1.468)  # 7 mm
    found = review([0, 1], [1, 1], meta=meta)
    assert [(f.kind, f.severity) for f in found] == [("closure", "block")]
    assert f"{misclosure:.3f} m" in found[0].message
    assert review([0, 1], [1, 1], meta=dict(meta, loop_length=400.0)) == []  # 12*sqrt(.4)=7.6 mm
    assert review([0, 1], [1, 1], meta=dict(meta), settings={"closure_tolerance": 0.01}) == []


# --- API -----------------------------------------------------------------------------------------
def test_finding_dict_and_settings():
    f = Finding("gap", "warn", 1.5, "m", "s", 3)
    assert f.as_dict() == {
        "kind": "gap",
        "severity": "warn",
        "station": 1.5,
        "message": "m",
        "suggestion": "s",
    }
    assert CheckSettings.for_unit("ft").edge_distance == 0.5
    with pytest.raises(SurveyError, match="unknown check setting 'nonsense'"):
        CheckSettings.for_unit("m", nonsense=1)
    with pytest.raises(SurveyError, match="'ft'"):
        review([0, 1], [1, 1], meta={"unit": "ft"}, settings=CheckSettings.for_unit("m"))


@pytest.mark.parametrize(
    ("stations", "elevations", "match"),
    [
        ([0, 1, "x"], [1, 1, 1], "point 3"),
        ([0, 1, 2], [1, float("nan"), 1], "point 2"),
        ([0, 1, 2], [1, 1], "2 elevations for 3 stations"),
    ],
)
def test_malformed_input_names_the_point(stations, elevations, match):
    with pytest.raises(SectionError, match=match):
        review(stations, elevations)


def test_degenerate_input_is_a_value():
    assert review([], []) == []
    assert review([1.0], [2.0]) == []
    assert review([0, 1, 2], [1, 0, 1], stage=-5.0) == []  # dry


def test_units_in_messages_feet():
    s = natural_section(np.random.default_rng(9), unit="ft")
    i = middle_bed_station(s)
    found = loud(run(with_point_error(s, i, 0.3 * s.channel_depth)))
    assert found and found[0].message.count(" ft") >= 2 and " m " not in found[0].message


finite = st.floats(-50, 50, allow_nan=False, allow_infinity=False)


@settings(max_examples=150, deadline=None)
@given(st.lists(st.tuples(finite, finite), min_size=0, max_size=40), st.none() | finite)
def test_review_never_fails_on_finite_input(points, stage):
    x = [p[0] for p in points]
    z = [p[1] for p in points]
    found = review(x, z, stage=stage)
    for f in found:
        assert f.kind in KINDS and f.severity in SEVERITIES and f.message and f.suggestion
        assert f.index is None or 0 <= f.index < len(x)
    ranks = [SEVERITIES.index(f.severity) for f in found]
    assert ranks == sorted(ranks)


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 10_000), st.floats(-500, 500), st.floats(-100, 100))
def test_findings_do_not_depend_on_datum_or_tape_origin(seed, lift, shift):
    s = natural_section(np.random.default_rng(seed))
    base = [(f.kind, f.index) for f in review(s.stations, s.elevations, s.stage, codes=s.codes)]
    moved = review(s.stations + shift, s.elevations + lift, s.stage + lift, codes=s.codes)
    assert [(f.kind, f.index) for f in moved] == base

"""Tests of synthetic: generated sections look like careful surveys of natural channels."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from stakeline.survey.geometry import Section
from stakeline.survey.reduction import UNITS
from synthetic import (
    BANK_SHAPES,
    in_unit,
    natural_section,
    random_point_error,
    uniform_stations,
    with_point_error,
    with_repeated_entry,
    with_station_typo,
    without_points,
)


@pytest.mark.parametrize("seed", range(25))
def test_generated_section_is_a_valid_careful_survey(seed):
    s = natural_section(np.random.default_rng(seed))
    n = len(s)
    assert s.stations.shape == s.elevations.shape == s.readings.shape == (n,)
    assert len(s.codes) == n
    assert np.all(np.diff(s.stations) >= 0)  # sorted; equal only at a vertical face
    section = Section(s.stations, s.elevations)  # the geometry core accepts it
    assert s.stage < section.highest_stage  # the water stays inside the survey
    assert s.channel_depth > 0 and s.max_water_depth > 0
    # readings reduce to the elevations: bed = line - reading (level line and plumb)
    assert_allclose(s.meta["line_left"] - s.readings, s.elevations, atol=1e-9)
    assert np.all(s.readings > 0)
    # common practice: both water's edges read, 20 or more stations across the water
    edges = section.edges(s.stage)
    first, last = edges[0][0], edges[-1][1]
    assert np.count_nonzero((s.stations >= first - 0.01) & (s.stations <= last + 0.01)) >= 20
    for left, right in edges:  # a station at each edge (a coded edge, or the face of a bank)
        assert np.min(np.abs(s.stations - left)) < 0.15
        assert np.min(np.abs(s.stations - right)) < 0.15


@pytest.mark.parametrize("shape", ["vertical", "undercut"])
def test_vertical_faces_are_read_twice_at_one_station(shape):
    s = natural_section(np.random.default_rng(4), banks=(shape, "sloped"))
    same = np.flatnonzero(np.diff(s.stations) == 0)
    assert same.size >= 1
    i = int(same[0])
    # left bank: top first, then the toe, at one station
    assert (s.codes[i], s.codes[i + 1]) == ("bank_top", "toe")
    assert s.elevations[i] > s.elevations[i + 1]


def test_undercut_toe_is_deeper_than_the_bed_beside_it():
    deeper = 0
    for seed in range(10):
        s = natural_section(np.random.default_rng(seed), banks=("undercut", "sloped"))
        i = int(np.flatnonzero(np.diff(s.stations) == 0)[0]) + 1
        deeper += s.elevations[i] < s.elevations[i + 2]
    assert deeper >= 8


def test_bank_shapes_and_options_are_respected():
    rng = np.random.default_rng(0)
    for shape in BANK_SHAPES:
        s = natural_section(rng, banks=(shape, shape), depth=1.0, width_ratio=8)
        assert s.shape.startswith(f"left={shape} right={shape}")
        assert_allclose(s.channel_depth, 1.0, atol=0.35)
    s = natural_section(rng, stage_fraction=0.5, depth=1.2)
    assert 0.3 < s.max_water_depth / s.channel_depth < 0.7


def test_feet_are_converted_at_the_boundary():
    metres = natural_section(np.random.default_rng(8))
    feet = in_unit(metres, "ft")
    f = UNITS["m"] / UNITS["ft"]  # international foot: 0.3048 m
    assert feet.unit == "ft" and feet.meta["unit"] == "ft"
    assert_allclose(feet.stations, metres.stations * f, atol=0.005)
    assert_allclose(feet.elevations, metres.elevations * f, atol=0.0005)
    assert_allclose(feet.stage, metres.stage * f, atol=0.0005)
    assert natural_section(np.random.default_rng(8), unit="ft").unit == "ft"


def test_injections_change_only_what_they_say():
    s = natural_section(np.random.default_rng(12))
    bad = with_point_error(s, 5, 0.2)
    changed = np.flatnonzero(bad.elevations != s.elevations)
    assert changed.tolist() == [5] and bad.injected == (5,)
    assert_allclose(bad.readings[5], s.readings[5] - 0.2)
    bad, i, error = random_point_error(s, np.random.default_rng(1), 0.1, 0.5)
    assert 0.1 <= abs(error) / s.channel_depth <= 0.5
    assert_allclose(bad.elevations[i] - s.elevations[i], error)
    fewer = without_points(s, [3, 4])
    assert len(fewer) == len(s) - 2 and fewer.codes == s.codes[:3] + s.codes[5:]
    typo = with_station_typo(s, 6, 99.0)
    assert typo.stations[6] == 99.0 and np.sum(typo.stations != s.stations) == 1
    twice = with_repeated_entry(s, 6, 0.1)
    assert len(twice) == len(s) + 1 and twice.stations[7] == twice.stations[6]
    assert_allclose(twice.elevations[7], s.elevations[6] + 0.1)
    thin = uniform_stations(s, 10)
    assert len(thin) == 10 and thin.stations[0] == s.stations[0]
    assert thin.stations[-1] == s.stations[-1]


def test_generation_is_reproducible():
    a = natural_section(np.random.default_rng(42))
    b = natural_section(np.random.default_rng(42))
    assert np.array_equal(a.stations, b.stations) and np.array_equal(a.elevations, b.elevations)

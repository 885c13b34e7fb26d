"""Tests of stakeline.survey.uncertainty: propagation of reading precision, against the closed-form law."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from stakeline.errors import SurveyError
from stakeline.files.section_csv import read_section_csv
from stakeline.survey.geometry import Section
from stakeline.survey.roughness import roughness
from stakeline.survey.uncertainty import (
    Band,
    Precision,
    discharge_band,
    discharge_for_roughness,
    figures_at,
    geometry_bands,
)

DEMO = Path(__file__).resolve().parents[2] / "demo_data" / "xs1_2026-04-14.csv"


def flat_channel(width=4.0, points=9, wall=2.0):
    inner = np.linspace(0.0, width, points)
    return Section([0.0, *inner, width], [wall, *np.zeros(points), wall])


def flat_area_variance(width, points, depth, precision):
    """Law of propagation of uncertainty (JCGM 100:2008, eq. 10) for a flat bed between walls.

    dA/dz_i = -(x_{i+1} - x_{i-1})/2 for each bed point (ends: half a panel); the two walls move
    the width, dA/dx = -y and +y; interior stations on a flat bed do not change the area.
    """
    step = width / (points - 1)
    weights = np.full(points, step)
    weights[[0, -1]] = step / 2
    return precision.reading**2 * np.sum(weights**2) + 2 * (precision.station * depth) ** 2


def test_linear_band_matches_closed_form():
    p = Precision(0.005, 0.010)
    band = geometry_bands(flat_channel(), 0.8, p, method="linear")["area"]
    expected = 2 * math.sqrt(flat_area_variance(4.0, 9, 0.8, p))
    assert_allclose(band.value, 4.0 * 0.8, rtol=1e-12)
    assert_allclose(band.plus_minus, expected, rtol=1e-6)


def test_monte_carlo_band_matches_closed_form():
    p = Precision(0.005, 0.010)
    band = geometry_bands(flat_channel(), 0.8, p, method="monte-carlo", draws=4000)["area"]
    expected = 2 * math.sqrt(flat_area_variance(4.0, 9, 0.8, p))
    # The standard deviation of 4000 draws is known to about 1/sqrt(2*4000) = 1.1 %.
    assert band.plus_minus == pytest.approx(expected, rel=0.05)
    assert band.low < band.value < band.high


def test_methods_agree_on_the_demo_section():
    rows = read_section_csv(DEMO)
    section = Section(rows.stations, rows.elevations)
    p = Precision.default("m")
    mc = geometry_bands(section, 99.98, p)
    lin = geometry_bands(section, 99.98, p, method="linear")
    for name in ("area", "wetted_perimeter", "top_width"):
        assert mc[name].plus_minus == pytest.approx(lin[name].plus_minus, rel=0.1)


def test_fixed_seed_repeats():
    p = Precision(0.01, 0.02)
    a = geometry_bands(flat_channel(), 0.5, p, seed=7)
    b = geometry_bands(flat_channel(), 0.5, p, seed=7)
    c = geometry_bands(flat_channel(), 0.5, p, seed=8)
    assert a == b
    assert a["area"] != c["area"]


def test_zero_precision_gives_zero_band():
    bands = geometry_bands(flat_channel(), 0.5, Precision(0.0, 0.0))
    assert all(b.plus_minus == pytest.approx(0.0, abs=1e-12) for b in bands.values())


def test_precision_defaults_and_validation():
    # Defaults named in the issue: 5 mm / 10 mm, or 0.02 ft / 0.03 ft (common practice).
    assert Precision.default("m") == Precision(0.005, 0.010)
    assert Precision.default("ft") == Precision(0.02, 0.03)
    with pytest.raises(SurveyError):
        Precision(-0.001, 0.01)
    with pytest.raises(SurveyError):
        geometry_bands(flat_channel(), 0.5, Precision(0.01, 0.01), method="guess")


@settings(max_examples=60, deadline=None)
# Readings to the micrometre: sub-micrometre rises are flat by design in stakeline.survey.geometry.
@given(
    st.lists(st.floats(0.0, 3.0).map(lambda v: round(v, 6)), min_size=3, max_size=30),
    st.floats(0.0, 3.0).map(lambda v: round(v, 6)),
)
def test_vectorised_figures_match_the_geometry_core(depths, stage):
    z = np.array([3.0, *depths, 3.0])
    x = np.linspace(0.0, 10.0, z.size)
    got = figures_at(x, z, stage)
    w = Section(x, z).at(stage)
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius"):
        assert_allclose(got[name][0], getattr(w, name), rtol=1e-9, atol=1e-12)


def test_discharge_at_low_and_high_n():
    section = flat_channel()
    row = roughness("mountain-gravel")
    q = discharge_for_roughness(section, 0.8, row, 0.003, "m")
    # Manning: Q is inversely proportional to n (closed form).
    assert_allclose(q["minimum"], q["normal"] * row.normal / row.minimum, rtol=1e-12)
    assert_allclose(q["maximum"], q["normal"] * row.normal / row.maximum, rtol=1e-12)


def test_n_dominates_discharge_uncertainty_on_the_demo():
    rows = read_section_csv(DEMO)
    section = Section(rows.stations, rows.elevations)
    row = roughness("mountain-gravel")
    band = discharge_band(section, 99.98, row.normal, 0.004, "m", Precision.default("m"))
    q = discharge_for_roughness(section, 99.98, row, 0.004, "m")
    assert band.plus_minus > 0
    assert q["minimum"] - q["maximum"] > 10 * band.plus_minus


def test_band_text():
    assert Band(2.5, 0.0123, 2.49, 2.51).text(3) == "2.500 ± 0.012"
    assert Band(2.0, 0.1, 1.9, 2.1).relative == pytest.approx(0.05)


def test_vectorised_figures_with_vertical_walls():
    # Chow (1959) Table 2-1 rectangle b = 2, y = 1: A = 2, P = b + 2y = 4, T = 2.
    got = figures_at([0, 0, 2, 2], [2, 0, 0, 2], 1.0)
    assert_allclose(
        [got["area"][0], got["wetted_perimeter"][0], got["top_width"][0]], [2.0, 4.0, 2.0]
    )

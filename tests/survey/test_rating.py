"""Tests of stakeline.survey.rating: table rows, reading the table both ways, exact inverse."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from stakeline.errors import SurveyError
from stakeline.survey.geometry import Section
from stakeline.survey.rating import (
    RATING_COLUMNS,
    column_heading,
    discharge_from_table,
    rating_stages,
    rating_table,
    stage_for,
    stage_from_table,
)


def trapezoid(b, z, height):
    top = z * height
    return Section([0, top, top + b, 2 * top + b], [height, 0, 0, height])


def test_rating_stages_cover_the_section():
    s = trapezoid(2.0, 1.0, 1.05)
    stages = rating_stages(s, 0.1)
    assert stages[0] == 0.0
    assert stages[-1] == pytest.approx(1.05)
    assert_allclose(np.diff(stages[:-1]), 0.1)
    assert rating_stages(s, 0.25, 0.0, 1.0).tolist() == [0.0, 0.25, 0.5, 0.75, 1.0]


@pytest.mark.parametrize(
    ("step", "start", "stop"),
    [(0.0, None, None), (-1.0, None, None), (0.1, 1.0, 0.5), (1e-9, None, None)],
)
def test_rating_stages_bad_input(step, start, stop):
    with pytest.raises(SurveyError):
        rating_stages(trapezoid(2.0, 1.0, 1.0), step, start, stop)


def test_rating_rows_match_closed_form_trapezoid():
    # Chow (1959) Table 2-1 trapezoid and Manning's equation, row by row (closed form).
    b, z, n, s = 3.0, 1.5, 0.035, 0.002
    stages = np.linspace(0.0, 1.5, 16)
    table = rating_table(trapezoid(b, z, 2.0), stages, n, s, "m")
    assert list(table) == list(RATING_COLUMNS)
    area = (b + z * stages) * stages
    perimeter = b + 2 * stages * math.sqrt(1 + z * z)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = 1 / n * area * (area / perimeter) ** (2 / 3) * math.sqrt(s)
    assert_allclose(table["area"], area, rtol=1e-12, atol=1e-15)
    assert_allclose(table["discharge"], q, rtol=1e-12, atol=1e-15)
    assert_allclose(table["top_width"][1:], b + 2 * z * stages[1:], rtol=1e-12)


def test_inverse_by_table_and_by_root_finding():
    section = trapezoid(20.0, 2.0, 10.0)
    table = rating_table(section, rating_stages(section, 0.05), 0.025, 0.0016, "ft")
    # Chow (1959) trapezoid, Q = 400 cfs -> normal depth 3.36 ft (from memory).
    exact = stage_for(section, 400.0, 0.025, 0.0016, "ft")
    assert exact == pytest.approx(3.36, abs=0.005)
    # Linear reading of a 0.05 ft table is within a small fraction of the step of the exact root.
    assert stage_from_table(table, 400.0) == pytest.approx(exact, abs=0.005)
    assert discharge_from_table(table, exact) == pytest.approx(400.0, rel=2e-3)
    with pytest.raises(SurveyError, match="outside the table"):
        stage_from_table(table, 1e9)
    with pytest.raises(SurveyError, match="outside the table"):
        discharge_from_table(table, 50.0)


def test_column_heading_has_units():
    assert column_heading("discharge", "m") == "discharge (m³/s)"
    assert column_heading("wetted_perimeter", "ft") == "wetted perimeter (ft)"

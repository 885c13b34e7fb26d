"""The service layer's pure parts: typed numbers, station plans, and the doctests of the UI
helpers (keypad editing, water strip)."""

from __future__ import annotations

import doctest

import numpy as np
import pytest

from app import service_util
from app.service_util import ServiceError, next_station, parse_number, uniform_stations


@pytest.mark.parametrize(
    "text, value", [("1.25", 1.25), ("1,25", 1.25), (" 0.5 ", 0.5), ("-2", -2.0), ("3.", 3.0)]
)
def test_typed_numbers(text, value):
    assert parse_number(text, "reading") == value


@pytest.mark.parametrize("text", ["", ".", "1.2.3", "abc", "nan", "inf"])
def test_bad_typed_numbers_name_the_field(text):
    with pytest.raises(ServiceError, match="reading"):
        parse_number(text, "reading")


@pytest.mark.parametrize("distance, count", [(10.0, 11), (9.3, 5), (12.7, 21), (3.0, 2), (25, 30)])
def test_uniform_plan_spans_the_stakes_evenly(distance, count):
    plan = uniform_stations(distance, count)
    steps = np.diff(plan)
    assert plan[0] == 0.0 and plan[-1] == pytest.approx(distance)
    assert np.all(steps > 0)
    # every step but the last is the rounded spacing: a multiple of 0.05 (easy to mark on a tape)
    inner = steps[:-1]
    if inner.size:
        assert np.allclose(inner, inner[0])
        assert inner[0] / 0.05 == pytest.approx(round(inner[0] / 0.05))
    assert steps[-1] >= 0.5 * steps[0] - 1e-9  # no sliver panel at the far stake
    assert abs(len(plan) - count) <= max(2, count // 5)


@pytest.mark.parametrize("distance, count", [(0.0, 5), (-3.0, 5), (10.0, 1)])
def test_impossible_plans_are_refused(distance, count):
    with pytest.raises(ServiceError):
        uniform_stations(distance, count)


def test_next_station_skips_what_is_read():
    plan = [0.0, 0.5, 1.0, 1.5, 2.0]
    assert next_station(plan, {0.0, 0.5}, 0.5) == 1.0
    assert next_station(plan, {0.0, 1.0}, 0.5) == 1.5  # 1.0 was read earlier (an insert)
    assert next_station(plan, {1.5, 2.0}, 2.0) == 0.0  # back to the first gap
    assert next_station(plan, set(plan), 2.0) is None


@pytest.mark.parametrize(
    "module", ["app.service_util", "app.widgets.keypad", "app.widgets.section_view"]
)
def test_docstring_examples(module):
    import importlib

    result = doctest.testmod(importlib.import_module(module))
    assert result.failed == 0 and result.attempted > 0


def test_service_util_has_no_kivy_at_import():
    assert "kivy" not in service_util.__dict__

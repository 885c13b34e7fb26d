"""The inverse searches return the lowest water level (issue 11 item 15), and level ranges say
"too many" in plain numbers (item 13) -- checked against the closed forms of a rectangular
channel (Chow 1959, Table 2-1 and eq. 5-7; critical depth y_c = (q²/g)^(1/3), Chow 1959 ch. 3)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from stakeline.errors import SurveyError
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import critical_stage, flow_table, stage_for_discharge
from stakeline.survey.rating import level_count, rating_stages, stage_for, stage_range

N, SLOPE, G = 0.03, 0.001, 9.80665


def channel_with_a_floodplain() -> Section:
    """A rectangular channel 2 m wide and 1 m deep (walls 10 m high) with a 100 m floodplain
    on the left that rises only 1 mm: as it floods the wetted perimeter jumps by 100 m, so
    Manning's discharge of the single channel falls sharply just above 1 m and only recovers
    far higher -- the case where the lowest level carrying a discharge lies within one step of
    a 1,025-level scan."""
    return Section([0, 0, 100, 100, 102, 102], [10.0, 1.001, 1.0, 0.0, 0.0, 10.0])


def rectangle_q(y: float, b: float = 2.0) -> float:
    """Manning's Q of a rectangle of width b at depth y (SI, k = 1): Chow (1959) eq. 5-7."""
    area, perimeter = b * y, b + 2 * y
    return area * (area / perimeter) ** (2 / 3) * math.sqrt(SLOPE) / N


def bisect(f, lo, hi):
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if f(mid) < 0 else (lo, mid)
    return 0.5 * (lo + hi)


def test_stage_for_discharge_finds_the_root_below_the_floodplain():
    section = channel_with_a_floodplain()
    target = rectangle_q(0.99995)  # reached just below the floodplain, lost as it floods
    expected = bisect(lambda y: rectangle_q(y) - target, 0.5, 1.0)
    found = stage_for_discharge(section, target, N, SLOPE)
    assert found == pytest.approx(expected, abs=1e-9)
    # ... and it is the lowest: no level below it carries the discharge
    below = np.linspace(0.0, found, 20_001)[:-1]
    assert np.all(flow_table(section, below, N, SLOPE)["discharge"] < target)
    assert stage_for(section, target, N, SLOPE) == found  # the rating's exact inverse


def test_critical_stage_finds_the_root_below_the_floodplain():
    section = channel_with_a_floodplain()
    # Critical depth in a rectangle: y_c = (q²/g)^(1/3) with q = Q/b.
    y_c = 0.99995
    discharge = 2.0 * math.sqrt(G * y_c**3)
    assert critical_stage(section, discharge) == pytest.approx(y_c, abs=1e-9)


def test_a_discharge_beyond_every_level_says_so():
    with pytest.raises(SurveyError, match="more than the section carries at any level"):
        stage_for_discharge(Section([0, 0, 2, 2], [1, 0, 0, 1]), 1e6, N, SLOPE)


@pytest.mark.parametrize("step", [1e-300, 5e-324])
def test_too_many_levels_are_counted_in_plain_numbers(step):
    for call in (
        lambda: rating_stages(Section([0, 0, 2, 2], [1, 0, 0, 1]), step),
        lambda: stage_range(0.0, 1.0, step),
    ):
        with pytest.raises(SurveyError, match="too many levels") as info:
            call()
        assert len(str(info.value)) < 120  # not a 300-digit count


def test_level_ranges():
    assert stage_range(1.0, 2.0, 0.1).size == 11 and stage_range(1.0, 2.0, 0.1)[-1] <= 2.0
    assert level_count(0.0, 0.0, 0.5) == 1
    with pytest.raises(SurveyError, match="empty"):
        stage_range(2.0, 1.0, 0.1)
    with pytest.raises(SurveyError, match="positive"):
        stage_range(1.0, 2.0, 0.0)
    with pytest.raises(SurveyError, match="finite"):
        stage_range(float("nan"), 2.0, 0.1)

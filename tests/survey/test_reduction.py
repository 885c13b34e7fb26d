"""Tests of stakeline.survey.reduction: level line and plumb, level and rod, heights, depths, units."""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose
from stakeline.errors import SurveyError
from stakeline.survey.reduction import (
    bed_from_line,
    bed_from_rod,
    check_unit,
    convert_length,
    depths_below,
    height_of_instrument,
    heights_above_lowest,
    level_loop_misclosure,
    line_elevation,
)


def test_bed_is_line_minus_plumb_reading():
    # Common practice: readings are taken downward from the line, bed = line elevation - reading.
    assert_allclose(bed_from_line([0.25, 1.48, 0.0], 101.2), [100.95, 99.72, 101.2])


def test_line_between_stakes_is_straight_when_the_stake_heights_differ():
    # A line tied at 100.000 on the left stake and 100.030 on the right stake, 12 m apart.
    assert_allclose(
        line_elevation([0.0, 6.0, 12.0], 0.0, 100.0, 12.0, 100.03), [100, 100.015, 100.03]
    )
    assert line_elevation(3.0, 0.0, 100.0, 12.0, 100.0) == 100.0
    with pytest.raises(SurveyError, match="same station"):
        line_elevation(1.0, 5.0, 100.0, 5.0, 100.0)


def test_level_and_rod_reduction():
    # Differential levelling (common practice; any surveying text): HI = BM + BS, elev = HI - FS.
    assert height_of_instrument(100.0, 1.512) == pytest.approx(101.512)
    assert_allclose(bed_from_rod(100.0, 1.512, [0.800, 2.512, 3.049]), [100.712, 99.0, 98.463])


def test_level_loop_misclosure():
    # A loop BM -> TP1 -> BM: sum(BS) - sum(FS) is the misclosure (common practice).
    assert level_loop_misclosure([1.512, 2.004], [1.208, 2.302]) == pytest.approx(0.006)


def test_heights_and_depths():
    z = [100.9, 99.6, 99.5, 100.8]
    assert_allclose(heights_above_lowest(z), [1.4, 0.1, 0.0, 1.3])
    assert_allclose(depths_below(z, 100.0), [0.0, 0.4, 0.5, 0.0])


def test_units_one_per_survey_and_conversion_at_the_edges():
    # International foot: exactly 0.3048 m (international yard and pound agreement, 1959).
    assert convert_length(10.0, "ft", "m") == pytest.approx(3.048)
    assert_allclose(convert_length([3.048], "m", "ft"), [10.0])
    assert check_unit("ft") == "ft"
    with pytest.raises(SurveyError, match="'yd'"):
        check_unit("yd")

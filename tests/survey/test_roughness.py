"""Tests of stakeline.survey.roughness against the published table it reproduces."""

from __future__ import annotations

import pytest
from stakeline.errors import SurveyError
from stakeline.survey.roughness import ROUGHNESS, SOURCE, roughness, roughness_keys, row_for_n

# Chow, V. T. (1959), Open-Channel Hydraulics, Table 5-6 (natural streams D-1 and flood plains
# D-2), minimum / normal / maximum n, as transcribed in the project reference notes (the values
# the module must reproduce; not re-read in the book for this test).
CHOW_TABLE_5_6 = {
    "clean-straight": (0.025, 0.030, 0.033),
    "clean-straight-stony": (0.030, 0.035, 0.040),
    "clean-winding": (0.033, 0.040, 0.045),
    "winding-weedy": (0.035, 0.045, 0.050),
    "sluggish-weedy": (0.050, 0.070, 0.080),
    "very-weedy": (0.075, 0.100, 0.150),
    "mountain-gravel": (0.030, 0.040, 0.050),
    "mountain-boulders": (0.040, 0.050, 0.070),
    "pasture-short": (0.025, 0.030, 0.035),
}


@pytest.mark.parametrize(("key", "values"), sorted(CHOW_TABLE_5_6.items()))
def test_values_match_chow_table_5_6(key, values):
    row = roughness(key)
    assert (row.minimum, row.normal, row.maximum) == values


def test_every_row_is_ordered_and_described():
    assert len(ROUGHNESS) == len(CHOW_TABLE_5_6)
    for row in ROUGHNESS:
        assert 0 < row.minimum <= row.normal <= row.maximum < 0.2
        assert row.description
    assert "Chow" in SOURCE and "5-6" in SOURCE


def test_unknown_key_lists_the_known_ones():
    with pytest.raises(SurveyError, match="clean-straight"):
        roughness("glass")


def test_value_and_lookup_by_n():
    row = roughness("mountain-gravel")
    assert row.value("maximum") == 0.05
    with pytest.raises(SurveyError):
        row.value("typical")
    assert row_for_n(0.07).key == "sluggish-weedy"
    assert row_for_n(0.0123) is None
    assert roughness_keys()[0] == "clean-straight"

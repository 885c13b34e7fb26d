"""Tests of the one vocabulary: units and their constants, feature codes, figure names, the
number parser -- against published definitions, and against every place that used to keep its
own copy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from stakeline.errors import SurveyError
from stakeline.survey import codes, figures, units
from stakeline.survey.geometry import FIGURES, Section
from stakeline.survey.hydraulics import GRAVITY, MANNING_K, UNIT_WEIGHT, Flow, flow_at
from stakeline.survey.numbers import NumberError, parse_number, plain
from stakeline.survey.rating import RATING_COLUMNS
from stakeline.survey.reduction import UNITS, check_unit, convert_length
from stakeline.survey.uncertainty import DEFAULT_PRECISION

FOOT = 0.3048
"""Metres in one international foot (exact by definition, NIST SP 811 appendix B)."""


# --- units ---------------------------------------------------------------------------------------
def test_unit_constants_agree_with_their_definitions():
    m, ft = units.unit_of("m"), units.unit_of("ft")
    assert ft.metres == FOOT and m.metres == 1.0
    # Manning's k in feet is (1 m / 1 ft)^(1/3) = 1.4859..., published as 1.486 (Chow 1959, eq. 5-7).
    assert ft.manning_k == pytest.approx((1 / FOOT) ** (1 / 3), abs=5e-4) and m.manning_k == 1.0
    # Standard gravity 9.80665 m/s² (CGPM 1901); the same acceleration in ft/s².
    assert ft.gravity == pytest.approx(m.gravity / FOOT, rel=1e-5)
    # γ = ρg with ρ = 1000 kg/m³ (common practice); 62.4 lb/ft³ agrees to 0.2 % (from memory).
    assert m.unit_weight == pytest.approx(1000 * m.gravity)
    pound_force, cubic_foot = 4.4482216152605, FOOT**3  # NIST SP 811 appendix B
    assert ft.unit_weight * pound_force / cubic_foot == pytest.approx(m.unit_weight, rel=2e-3)


def test_old_keyed_tables_come_from_the_unit_type():
    for key, unit in units.UNITS_BY_KEY.items():
        assert MANNING_K[key] == unit.manning_k and GRAVITY[key] == unit.gravity
        assert UNIT_WEIGHT[key] == unit.unit_weight and UNITS[key] == unit.metres
        assert DEFAULT_PRECISION[key] == (unit.reading_precision, unit.station_precision)
    assert convert_length(1.0, "ft", "m") == FOOT and check_unit("ft") == "ft"
    with pytest.raises(SurveyError, match="use 'm' or 'ft'"):
        units.unit_of("furlong")


def test_unit_symbols_follow_the_si_and_us_customary_names():
    assert [units.unit_of("m").symbol(k) for k in units.KINDS] == [
        "m", "m²", "m³/s", "m/s", "Pa", "W/m²", ""]  # fmt: skip
    assert units.unit_of("ft").symbol("stream_power") == "ft·lb/s/ft²"


# --- feature codes -------------------------------------------------------------------------------
def test_feature_codes_have_one_home():
    from stakeline.app.service import FEATURE_CODES
    from stakeline.checks import BREAK_CODES, FACE_CODES
    from stakeline.survey.hydraulics import BANK_TOP

    assert list(FEATURE_CODES) == codes.CHIPS
    assert BREAK_CODES is codes.BREAK_CODES and FACE_CODES is codes.FACE_CODES
    assert BANK_TOP == codes.BANK_TOP == "bank_top"
    assert codes.FACE_CODES <= codes.BREAK_CODES  # a vertical face is always a slope break
    assert len({c.code for c in codes.FEATURE_CODES}) == len(codes.FEATURE_CODES)
    assert all(c.code == codes.normal_code(c.code) for c in codes.FEATURE_CODES)


# --- figure names --------------------------------------------------------------------------------
def test_every_figure_the_domain_names_is_in_the_table():
    named = set(FIGURES) | set(Flow.__dataclass_fields__) | set(RATING_COLUMNS)
    assert named <= set(figures.FIGURE_TABLE)
    for key in named:
        assert figures.FIGURE_TABLE[key].kind in units.KINDS


def test_front_ends_take_their_words_from_the_table():
    from stakeline.app.service import FIGURE_NAMES
    from stakeline.app.service.office import FIGURE_WORDS

    for key, title in {**FIGURE_NAMES, **FIGURE_WORDS}.items():
        assert title.lower() == figures.figure_label(key).lower()
    # The command line's table of labels and powers can be derived from it.
    labels = {k: (figures.figure_label(k), figures.FIGURE_TABLE[k].power) for k in FIGURES}
    assert labels["area"] == ("wetted area", "²") and labels["top_width"] == ("top width", "")


# --- one number parser ---------------------------------------------------------------------------
@pytest.mark.parametrize(
    "value, kwargs, expected",
    [("1.25", {}, 1.25), (" 3. ", {}, 3.0), ("1,25", {"decimal_comma": True}, 1.25),
     (np.float64(2.5), {}, 2.5), (7, {}, 7.0), ("", {"optional": True}, None),
     (None, {"optional": True}, None)],
)  # fmt: skip
def test_parse_number_reads_what_people_give(value, kwargs, expected):
    assert parse_number(value, "reading", **kwargs) == expected


@pytest.mark.parametrize(
    "value, kwargs, message",
    [("abc", {}, "reading 'abc' is not a number"), ("nan", {}, "not a finite number"),
     ("1_0", {}, "is not a number"), (True, {}, "True is not a number"), ("", {}, "empty"),
     (10**400, {}, "an integer of 401 digits is not a finite number"),
     (np.float64(0.0), {"positive": True}, "must be a positive number, got 0.0"),
     ("1,25", {}, "'1,25' is not a number")],
)  # fmt: skip
def test_parse_number_refuses_with_one_error_and_plain_values(value, kwargs, message):
    with pytest.raises(NumberError, match=message) as info:
        parse_number(value, "reading", **kwargs)
    assert "np." not in str(info.value) and "\n" not in str(info.value)
    assert isinstance(info.value, SurveyError) and isinstance(info.value, ValueError)


def test_layer_errors_are_number_errors_too():
    from stakeline.app.service.util import ServiceError
    from stakeline.app.service.util import parse_number as typed
    from stakeline.store.values import StoreError, number

    with pytest.raises(ServiceError) as typed_error:
        typed("9x", "water level")
    with pytest.raises(StoreError) as stored_error:
        number("abc", "station")
    for exc in (typed_error.value, stored_error.value):
        assert isinstance(exc, NumberError)


def test_n_overbank_zero_is_named_in_plain_numbers():
    # Issue 11 item 13: a zero n for the overbank came out as "got np.float64(0.0)".
    two_stage = Section([0, 0, 10, 10, 14, 14, 24, 24], [3, 1, 1, 0, 0, 1, 1, 3])
    with pytest.raises(SurveyError) as info:
        flow_at(two_stage, 2.0, [0.0, 0.03, 0.0], 0.001, splits=[10, 14])
    assert str(info.value) == "Manning's n must be a positive number, got 0.0"


def test_plain_never_prints_numpy_reprs_or_huge_numbers():
    assert plain(np.float32(0.5)) == "0.5" and plain(np.int64(3)) == "3"
    assert plain(-(10**5000)) == "an integer of 5001 digits"
    assert plain(math.inf) == "inf" and len(plain("x" * 500)) <= 60

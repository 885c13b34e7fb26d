"""Tests of stakeline.analysis: the two policies (the visit's water level, the earlier visit to
compare) and the one analysis on real store data, checked against closed forms."""

from __future__ import annotations

import math

import pytest
from stakeline.analysis import (
    AnalysisOptions,
    analyse_visit,
    earlier_visit,
    usable_ground,
    visit_water_level,
)
from stakeline.errors import SurveyError
from stakeline.report import ReportOptions, prepare_report
from stakeline.store import Store


@pytest.fixture
def store():
    store = Store.memory()
    yield store
    store.close()


def section_with(store, name="XS-test"):
    site = store.sites()[0] if store.sites() else store.create_site("Orrin Brook")
    return store.create_section(site["uuid"], name)


def trapezoid_visit(store, section, date, *, lower=0.0, unit="m", line=100.0, levels=()):
    """A trapezoid read under a level line (bed 4 wide at line - 2.5, sides 2H:1V, bank tops at
    line - 1.0), the bed lowered by ``lower``; the water levels recorded as given."""
    visit = store.start_visit(section["uuid"], date, unit=unit, line_left=line, line_right=line)
    for station, reading, code in [(0.0, 1.0, "bank_top"), (3.0, 2.5 + lower, ""),
                                   (7.0, 2.5 + lower, ""), (10.0, 1.0, "bank_top")]:  # fmt: skip
        store.save_station(visit["uuid"], station, reading, code=code)
    for i, level in enumerate(levels):
        store.add_water_level(visit["uuid"], level, f"{date}T1{i}:00")
    return store.visit(visit["uuid"])


# --- the water level ------------------------------------------------------------------------
def test_the_water_level_is_the_mean_of_those_recorded_unless_typed():
    # Common practice: the gauge height of a measurement is the mean over it.
    levels = [{"elevation": 98.4}, {"elevation": 98.6}, {"elevation": None}]
    assert visit_water_level(levels) == pytest.approx(98.5)
    assert visit_water_level(levels, typed=98.55) == 98.55
    assert visit_water_level([]) is None


def test_the_analysis_uses_the_policy_level(store):
    visit = trapezoid_visit(store, section_with(store), "2026-05-01", levels=(98.4, 98.6))
    result = analyse_visit(visit, store.stations(visit["uuid"]))
    # Trapezoid b = 4, z = 2, y = 1 (mean level 98.5 over a bed at 97.5): A = (b + z·y)·y
    # (Chow 1959, Table 2-1).
    assert result.stage == pytest.approx(98.5)
    assert result.bands["area"].value == pytest.approx((4 + 2 * 1.0) * 1.0)
    typed = analyse_visit(visit, store.stations(visit["uuid"]), AnalysisOptions(stage=98.0))
    assert typed.bands["area"].value == pytest.approx((4 + 2 * 0.5) * 0.5)


# --- the earlier visit ----------------------------------------------------------------------
def test_the_earlier_visit_is_the_latest_usable_one_of_the_section_in_the_unit(store):
    section = section_with(store)
    first = trapezoid_visit(store, section, "2026-04-01")
    second = trapezoid_visit(store, section, "2026-05-01", lower=0.1)
    store.start_visit(section["uuid"], "2026-06-01")  # no readings: no ground line
    trapezoid_visit(store, section, "2026-06-15", unit="ft", line=328.0)  # another unit
    trapezoid_visit(store, section_with(store, "XS-other"), "2026-06-20")  # another section
    later = trapezoid_visit(store, section, "2026-07-01", lower=0.2)
    found = earlier_visit(later, store.visits(), store.stations)
    assert found["visit"]["uuid"] == second["uuid"]
    assert earlier_visit(second, store.visits(), store.stations)["visit"]["uuid"] == first["uuid"]
    assert earlier_visit(first, store.visits(), store.stations) is None


def test_a_visit_without_elevations_is_not_a_usable_ground_line(store):
    section = section_with(store)
    visit = store.start_visit(section["uuid"], "2026-05-01")  # no line heights
    store.save_station(visit["uuid"], 0.0, 1.0)
    store.save_station(visit["uuid"], 5.0, 2.0)
    assert not usable_ground(store.stations(visit["uuid"]))


def test_a_visit_without_line_heights_says_so(store):
    # Issue 11 item 13: "point 1: elevation nan is not a finite number" said nothing useful.
    section = section_with(store)
    visit = store.start_visit(section["uuid"], "2026-05-01")
    for station, reading in [(0.0, 0.5), (2.0, 1.5), (4.0, 0.5)]:
        store.save_station(visit["uuid"], station, reading)
    store.finish_visit(visit["uuid"])
    visit = store.visit(visit["uuid"])
    with pytest.raises(SurveyError, match="no line heights") as info:
        prepare_report(visit, store.stations(visit["uuid"]), ReportOptions())
    assert "nan" not in str(info.value)
    rod = store.update_visit(visit["uuid"], method="rod")
    with pytest.raises(SurveyError, match="no backsight"):
        analyse_visit(rod, store.stations(visit["uuid"]))


def test_change_since_the_earlier_visit_in_closed_form(store):
    section = section_with(store)
    first = trapezoid_visit(store, section, "2026-05-01", levels=(98.5,))
    later = trapezoid_visit(store, section, "2026-10-01", lower=0.2, levels=(98.5,))
    before = earlier_visit(later, store.visits(), store.stations)
    assert before["visit"]["uuid"] == first["uuid"]
    result = analyse_visit(later, store.stations(later["uuid"]), earlier=before)
    # The bed 0.2 m lower between stations 3 and 7, tapering to nothing at the banks: two
    # triangles and a rectangle, 0.3 + 0.8 + 0.3 = 1.4 m² of scour.
    assert result.comparison["scour_area"] == pytest.approx(1.4)
    assert result.previous["visit"]["date"] == "2026-05-01"


def test_a_bank_top_above_an_end_is_a_note_not_a_failure(store):
    section = section_with(store)
    visit = store.start_visit(section["uuid"], "2026-05-01", line_left=100.0, line_right=100.0)
    for station, reading, code in [(0.0, 1.8, ""), (1.0, 1.0, "bank_top"), (3.0, 2.5, ""),
                                   (5.0, 1.0, "bank_top"), (6.0, 1.8, "")]:  # fmt: skip
        store.save_station(visit["uuid"], station, reading, code=code)
    result = analyse_visit(store.visit(visit["uuid"]), store.stations(visit["uuid"]))
    assert result.bankfull is None and "above the left end" in result.bankfull_note


def test_manning_in_feet_through_the_analysis(store):
    visit = trapezoid_visit(store, section_with(store), "2026-05-01", unit="ft", levels=(98.5,))
    options = AnalysisOptions(roughness="mountain-gravel", slope=0.004)
    result = analyse_visit(visit, store.stations(visit["uuid"]), options)
    area, perimeter = 6.0, 4 + 2 * math.sqrt(5)  # Chow (1959) Table 2-1, b = 4, z = 2, y = 1
    manning = 1.486 / 0.040 * area * (area / perimeter) ** (2 / 3) * math.sqrt(0.004)
    assert result.flow["discharge"] == pytest.approx(manning, rel=1e-12)  # Chow (1959) eq. 5-7

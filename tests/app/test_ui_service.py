"""The service layer: its pure parts (typed numbers, station plans, the doctests of the UI
helpers), and the field service on a real store file (field-check inputs, checkpoints, the office
figures of the section-detail screen)."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
from stakeline.app.service import util as service_util
from stakeline.app.service.util import ServiceError, next_station, parse_number, uniform_stations


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


@pytest.mark.parametrize("module", ["stakeline.app.service.util", "stakeline.app.widgets.keypad"])
def test_docstring_examples(module):
    import importlib

    result = doctest.testmod(importlib.import_module(module))
    assert result.failed == 0 and result.attempted > 0


def test_service_util_has_no_kivy_at_import():
    assert "kivy" not in service_util.__dict__


# --- FieldService on a real store file -------------------------------------------------------
@pytest.fixture
def field(tmp_path):
    """A FieldService on a fresh store file with the demo survey loaded."""
    from stakeline.app.service import open_service

    service = open_service(str(tmp_path / "device"))
    yield service
    service.close()


def _sloping_visit(service, origin: str) -> str:
    """A visit on a new section whose line falls 0.2 m from the left stake (100.2) to the right
    (100.0) over 10 m, tape from the ``origin`` stake, with six readings."""
    section = service.create_section("Orrin Brook", f"XS-{origin}")
    visit = service.start_visit(section["uuid"], today="2026-11-30")
    service.save_stakes(
        visit, origin=origin, line_left=100.2, line_right=100.0, stake_distance=10.0
    )
    for station, reading in zip(range(0, 11, 2), [0.3, 0.9, 1.4, 1.5, 1.0, 0.4], strict=True):
        service.save_reading(visit, float(station), str(reading))
    return visit


@pytest.mark.parametrize("origin", ["left", "right"])
def test_line_minus_reading_check_runs_on_a_sloping_line(field, origin):
    visit = _sloping_visit(field, origin)
    inputs = field.review_inputs(visit)
    assert inputs["meta"]["stake_distance"] == 10.0
    assert inputs["meta"]["origin"] == origin
    # The store reduced each reading from the sloping line; the check agrees with it (with the
    # origin ignored, a right-hand tape would put the line 0.2 m wrong at the stakes).
    assert not [f for f in field.run_review(inputs) if f["kind"] == "line"]
    # An elevation 0.05 m off line height minus reading is caught at its station.  The line's
    # height there is a straight-line interpolation between the stakes (common practice).
    tampered = dict(inputs, elevations=list(inputs["elevations"]))
    tampered["elevations"][2] += 0.05
    line = [f for f in field.run_review(tampered) if f["kind"] == "line"]
    assert [(f["severity"], f["station"]) for f in line] == [("warn", 4.0)]
    at_four = np.interp(4.0, [0.0, 10.0], [100.2, 100.0] if origin == "left" else [100.0, 100.2])
    assert inputs["elevations"][2] == pytest.approx(at_four - 1.4, abs=1e-9)


def test_checkpoint_empties_the_store_journal(field, tmp_path):
    import os

    wal = tmp_path / "device" / "stakeline.sqlite-wal"
    visit = field.store.visits()[0]["uuid"]
    field.record_water_level(visit, "99.9")
    assert os.path.getsize(wal) > 0
    assert field.checkpoint() is True
    assert not wal.exists() or os.path.getsize(wal) == 0
    field.close()
    assert field.checkpoint() is False  # a closed store: nothing to do, no error


def test_app_checkpoints_when_paused(ui, data_dir):
    import os

    wal = os.path.join(data_dir, "stakeline.sqlite-wal")
    visit = ui.app.service.store.visits()[0]["uuid"]
    ui.app.service.record_water_level(visit, "99.9")
    assert os.path.getsize(wal) > 0
    assert ui.app.on_pause() is True  # keeps running while the tablet shows another app
    assert os.path.getsize(wal) == 0


# --- office figures (section-detail screen) --------------------------------------------------
TRAPEZOID = [(0.0, 1.0, "bank_top"), (3.0, 2.5, ""), (7.0, 2.5, ""), (10.0, 1.0, "bank_top")]
"""(station, reading, code) under a level line at 100.000 m: a trapezoid with a 4 m bed at 97.5 m,
side slopes 2H:1V and bank tops at 99.0 m."""


def _trapezoid_visit(service, date: str, lower_bed: float = 0.0) -> str:
    section = next((s for s in service.overview() if s["section"] == "XS-trapezoid"), None) or {
        "section_uuid": service.create_section("Orrin Brook", "XS-trapezoid")["uuid"]
    }
    visit = service.start_visit(section["section_uuid"], today=date)
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    for station, reading, code in TRAPEZOID:
        deeper = lower_bed if code == "" else 0.0
        service.save_reading(visit, station, str(reading + deeper), code=code)
    service.record_water_level(visit, "98.5")
    return visit


def test_office_figures_of_a_trapezoid(field):
    # Trapezoid, bottom b = 4 m, side slope z = 2, depth y = 1 m: A = (b + z·y)·y,
    # P = b + 2y·√(1 + z²), T = b + 2z·y (Chow 1959, Table 2-1); Manning's equation
    # Q = (1/n)·A·R^(2/3)·S^(1/2) in SI units (Chow 1959, eq. 5-7).
    first = _trapezoid_visit(field, "2026-05-01")
    later = _trapezoid_visit(field, "2026-10-01", lower_bed=0.2)
    inputs = field.office_inputs(first)
    assert inputs["recorded_level"] == pytest.approx(98.5) and inputs["earlier"] is None
    b, z, y, n, slope = 4.0, 2.0, 1.0, 0.040, 0.002
    area, perimeter, top = (b + z * y) * y, b + 2 * y * math.sqrt(1 + z * z), b + 2 * z * y
    out = field.office_figures(inputs, 98.5, "clean-winding", slope)
    geometry = {row["key"]: row for row in out["geometry"]}
    assert geometry["area"]["value"] == pytest.approx(area, rel=1e-12)
    assert geometry["area"]["unit"] == "m²" and geometry["top_width"]["unit"] == "m"
    assert geometry["wetted_perimeter"]["value"] == pytest.approx(perimeter, rel=1e-12)
    assert geometry["top_width"]["value"] == pytest.approx(top, rel=1e-12)
    assert all(row["plus_minus"] > 0 for row in out["geometry"])
    manning = area * (area / perimeter) ** (2 / 3) * math.sqrt(slope) / n
    flow = {row["key"]: row for row in out["flow"]}
    assert flow["discharge"]["value"] == pytest.approx(manning, rel=1e-12)
    assert flow["discharge"]["unit"] == "m³/s" and flow["froude"]["unit"] == ""
    # Froude number V/√(g·D), D = A/T; shear stress γ·R·S; unit stream power γ·Q·S/T, with
    # γ = 1000 kg/m³ × 9.80665 m/s² (Chow 1959, ch. 1 and 8; common practice).
    velocity, gamma = manning / area, 9806.65
    assert flow["froude"]["value"] == pytest.approx(velocity / math.sqrt(9.80665 * area / top))
    assert flow["shear_stress"]["value"] == pytest.approx(gamma * area / perimeter * slope)
    assert flow["stream_power"]["value"] == pytest.approx(gamma * manning * slope / top)
    spread = out["n_range"]  # Q at the low and high n of Chow's row: Q ∝ 1/n
    assert spread["discharge_low_n"] == pytest.approx(manning * n / 0.033, rel=1e-12)
    assert spread["discharge_high_n"] == pytest.approx(manning * n / 0.045, rel=1e-12)
    assert "n dominates" in spread["sentence"]
    # Bankfull at the lower bank top (99.0 m, y = 1.5 m).
    yb = 1.5
    bankfull = {row["key"]: row["value"] for row in out["bankfull"]["rows"]}
    assert bankfull["stage"] == pytest.approx(99.0)
    assert bankfull["width"] == pytest.approx(b + 2 * z * yb)
    assert bankfull["area"] == pytest.approx((b + z * yb) * yb)
    assert bankfull["max_depth"] == pytest.approx(yb)
    assert bankfull["width_depth_ratio"] == pytest.approx(
        (b + 2 * z * yb) ** 2 / ((b + z * yb) * yb)
    )
    assert "change" not in out and "No earlier visit" in out["change_note"]
    # The later visit: the bed 0.2 m lower between stations 3 and 7, tapering to nothing at the
    # banks -- scour is two triangles and a rectangle, 0.3 + 0.8 + 0.3 = 1.4 m², no fill.
    later_inputs = field.office_inputs(later)
    assert later_inputs["earlier"]["visit"] == first
    change = field.office_figures(later_inputs, 98.5)["change"]
    rows = {row["key"]: row["value"] for row in change["rows"]}
    assert change["date"] == "2026-05-01"
    assert rows["scour_area"] == pytest.approx(1.4) and rows["fill_area"] == pytest.approx(0.0)
    assert rows["deepest_change"] == pytest.approx(-0.2) and rows["deepest_shift"] == 0.0
    # At 98.5 m the later ground is again a trapezoid (Chow 1959, Table 2-1): bed 4 m at 97.3 m,
    # depth 1.2 m, sides 3 m across for 1.7 m of fall.
    z_later = 3.0 / 1.7
    assert rows["area_change"] == pytest.approx((b + z_later * 1.2) * 1.2 - area, rel=1e-12)
    assert rows["top_width_change"] == pytest.approx(2 * z_later * 1.2 - 2 * z * y, rel=1e-12)


def test_office_figures_say_what_is_missing(field):
    visit = _trapezoid_visit(field, "2026-05-01")
    inputs = field.office_inputs(visit)
    out = field.office_figures(inputs, 98.5)
    assert "flow" not in out and "roughness row" in out["flow_note"]
    assert "energy slope" in field.office_figures(inputs, 98.5, "clean-winding")["flow_note"]
    over = field.office_figures(inputs, 99.5)  # above both banks
    assert "geometry" not in over and "above" in over["error"]


@pytest.mark.parametrize(
    "level, slope, message",
    [("", "", "type the water level"), ("9x", "", "water level"), ("98.5", "0", "energy slope"),
     ("98.5", "-0.01", "energy slope"), ("98.5", "2", "fraction")],
)  # fmt: skip
def test_office_request_refuses_bad_typing(level, slope, message):
    from stakeline.app.service import FieldService

    with pytest.raises(ServiceError, match=message):
        FieldService.office_request(level, slope)


def test_roughness_rows_are_chows_table():
    from stakeline.app.service import FieldService
    from stakeline.survey.roughness import ROUGHNESS, SOURCE

    rows = FieldService.roughness_rows()
    assert [r["key"] for r in rows] == [r.key for r in ROUGHNESS]
    assert all(r["source"] == SOURCE and "Table 5-6" in SOURCE for r in rows)
    # Chow (1959), Table 5-6, clean and winding with some pools and shoals: 0.033 / 0.040 / 0.045
    winding = next(r for r in rows if r["key"] == "clean-winding")
    assert (winding["minimum"], winding["normal"], winding["maximum"]) == (0.033, 0.040, 0.045)
    assert len({r["label"] for r in rows}) == len(rows)  # every chip says something different


def test_home_overview_names_the_latest_finished_visit(field):
    rows = {r["section"]: r for r in field.overview()}
    xs1 = [v for v in field.store.visits() if v["section"] == "XS1 riffle"]
    assert rows["XS1 riffle"]["finished_visit"] == xs1[-1]["uuid"]
    section = field.create_section("Orrin Brook", "XS8 bend")
    field.start_visit(section["uuid"], today="2026-11-30")
    assert {r["section"]: r for r in field.overview()}["XS8 bend"]["finished_visit"] is None


def test_office_figures_in_feet(field):
    # US customary units: Manning's k = 1.486 (Chow 1959, eq. 5-7), shear stress γRS in lb/ft²
    # with γ = 62.4 lb/ft³ (common practice); readings ±0.02 ft and stations ±0.03 ft by default.
    field.save_settings(unit="ft")
    visit = _trapezoid_visit(field, "2026-05-01")
    inputs = field.office_inputs(visit)
    assert inputs["unit"] == "ft"
    out = field.office_figures(inputs, 98.5, "mountain-gravel", 0.004)
    b, z, y, n = 4.0, 2.0, 1.0, 0.040
    area, perimeter = (b + z * y) * y, b + 2 * y * math.sqrt(1 + z * z)
    flow = {row["key"]: row for row in out["flow"]}
    manning = 1.486 / n * area * (area / perimeter) ** (2 / 3) * math.sqrt(0.004)
    assert flow["discharge"]["value"] == pytest.approx(manning, rel=1e-12)
    assert flow["discharge"]["unit"] == "ft³/s" and flow["velocity"]["unit"] == "ft/s"
    assert flow["shear_stress"]["value"] == pytest.approx(62.4 * area / perimeter * 0.004)
    assert flow["shear_stress"]["unit"] == "lb/ft²"
    assert {row["unit"] for row in out["geometry"]} == {"ft²", "ft"}
    assert out["precision"] == {"reading": 0.02, "station": 0.03}


# --- the crew's ± of one reading and of one station (device settings) -------------------------
FOOT = 0.3048
"""Metres in one international foot (exact by definition, NIST SP 811 appendix B)."""


def test_plus_minus_defaults_round_trip_and_survive_a_restart(field, tmp_path):
    from stakeline.app.service import open_service

    # Defaults as issue 6 states them: ±5 mm on readings, ±10 mm on stations (common practice).
    settings = field.settings()
    assert (settings["reading_plus_minus"], settings["station_plus_minus"]) == (0.005, 0.010)
    assert field.plus_minus("ft") == (0.02, 0.03)  # ±0.02 ft / ±0.03 ft (common practice)
    field.save_settings(reading_plus_minus=0.002, station_plus_minus=0.02)
    assert field.plus_minus("m") == (0.002, 0.02)
    field.close()
    again = open_service(str(tmp_path / "device"))
    try:
        settings = again.settings()
        assert (settings["reading_plus_minus"], settings["station_plus_minus"]) == (0.002, 0.02)
        assert settings["precision"] == 0.001  # the decimals shown are a separate setting
        again.save_settings(reading_plus_minus=None)  # back to the unit's default
        assert again.plus_minus("m") == (0.005, 0.02)
    finally:
        again.close()


def test_plus_minus_keep_their_length_when_the_unit_changes(field):
    field.save_settings(reading_plus_minus=0.002)
    field.save_settings(unit="ft")
    reading, station = field.plus_minus("ft")
    assert reading == pytest.approx(0.002 / FOOT, abs=1e-6)  # a set ± is converted...
    assert station == 0.03  # ...one left at its default takes the new unit's default
    field.save_settings(unit="m", reading_plus_minus=0.01, station_plus_minus=0.005)
    assert field.plus_minus("m") == (0.01, 0.005)  # given with the unit: stored as given
    # A visit surveyed in feet reads the device's metric ± in feet.
    field.save_settings(unit="ft")
    ft_visit = _trapezoid_visit(field, "2026-05-01")
    field.save_settings(unit="m", reading_plus_minus=0.01, station_plus_minus=0.005)
    inputs = field.office_inputs(ft_visit)
    assert inputs["unit"] == "ft"
    assert inputs["precision"] == pytest.approx([0.01 / FOOT, 0.005 / FOOT])


@pytest.mark.parametrize("value", [0, -0.005, "abc", float("nan"), float("inf")])
def test_bad_plus_minus_is_refused_and_nothing_is_stored(field, value):
    before = field.settings()
    with pytest.raises(ServiceError, match="reading ±"):
        field.save_settings(unit="ft", reading_plus_minus=value)
    assert field.settings() == before  # the unit given in the same call is not stored either


def test_office_bands_follow_the_settings(field):
    from stakeline.survey.geometry import Section
    from stakeline.survey.uncertainty import Precision, geometry_bands

    visit = _trapezoid_visit(field, "2026-05-01")
    widths = []
    for reading in (0.002, 0.01):
        field.save_settings(reading_plus_minus=reading, station_plus_minus=0.01)
        inputs = field.office_inputs(visit)
        out = field.office_figures(inputs, 98.5)
        assert out["precision"] == {"reading": reading, "station": 0.01}
        area = {row["key"]: row for row in out["geometry"]}["area"]
        section = Section(inputs["stations"], inputs["elevations"])
        band = geometry_bands(section, 98.5, Precision(reading, 0.01), method="linear")["area"]
        assert area["plus_minus"] == pytest.approx(band.plus_minus, rel=1e-12)
        widths.append(area["plus_minus"])
    assert widths[1] > widths[0]


def test_line_tolerance_follows_the_visit_unit(field):
    # The device keeps its settings in its own unit; a survey in feet gets the same length.
    # International foot: 0.3048 m exactly.
    field.save_settings(unit="m", line_tolerance=0.006)
    assert field.check_settings("m").line_tolerance == pytest.approx(0.006)
    assert field.check_settings("ft").line_tolerance == pytest.approx(0.006 / 0.3048)


# --- one rule for the line check: the stakes screen and the field checks agree ----------------
LINE_CASES = [
    # (left, right, check): a line straight between two stakes of different heights is allowed;
    # without the check's station, the check must lie within the tolerance of the line somewhere
    # between the stakes (stakeline.survey.datum.Datum.line_check).
    (100.000, 100.015, 100.0075, True),  # issue 9: the screen said OUTSIDE, the checks nothing
    (100.000, 100.015, 100.014, True),
    (100.000, 100.000, 100.008, True),  # within 10 mm of a level line
    (100.000, 100.000, 100.020, False),
    (100.000, 100.040, 100.055, False),  # above the higher stake by 15 mm
    (100.000, 100.040, 99.985, False),  # below both: a sagging line
    (100.200, 100.000, None, None),  # no check shot: nothing to judge yet
]


@pytest.mark.parametrize("left, right, check, within", LINE_CASES)
def test_stakes_screen_and_field_checks_agree_on_the_line(field, left, right, check, within):
    section = field.create_section("Orrin Brook", "XS-line")
    visit = field.start_visit(section["uuid"], today="2026-11-30")
    verdict = field.save_stakes(
        visit, line_left=left, line_right=right, line_check=check, stake_distance=10.0
    )
    assert verdict.within is within and verdict == field.line_check(visit)
    assert ("OUTSIDE" in verdict.text) is (within is False)
    for station, reading in [(0.0, 0.3), (5.0, 1.2), (10.0, 0.4)]:
        field.save_reading(visit, station, str(reading))
    line = [f for f in field.review(visit) if f["kind"] == "line" and f["station"] is None]
    assert bool(line) is (within is False)
    if within is False:  # the findings name how far each stake's height is from the check
        assert all(f"{verdict.tolerance:.3f} m" in f["message"] for f in line)


def test_level_and_rod_verdict_names_the_height_of_instrument(field):
    section = field.create_section("Orrin Brook", "XS-rod")
    visit = field.start_visit(section["uuid"], today="2026-11-30")
    assert field.save_stakes(visit, method="rod").text.startswith("Level and rod: type")
    verdict = field.save_stakes(visit, method="rod", backsight=1.512)
    assert verdict.within is None and "101.512 m" in verdict.text  # 100.000 assumed + 1.512


# --- which findings flag a station, and the visit's water level --------------------------------
def test_the_service_flags_stations_by_the_checks_rule(field):
    from stakeline.checks import flagged_stations

    visit = field.store.visits()[0]["uuid"]
    findings = field.review(visit) + [
        {"kind": "gap", "severity": "warn", "station": 3.0, "message": "panel"},
        {"kind": "spike", "severity": "warn", "station": 4.5, "message": "spike"},
    ]
    assert field.flagged_stations(findings) == flagged_stations(findings)
    assert 4.5 in field.flagged_stations(findings) and 3.0 not in field.flagged_stations(findings)


def test_the_visit_water_level_is_the_mean_of_those_recorded(field):
    visit = _trapezoid_visit(field, "2026-05-01")  # records 98.5
    field.record_water_level(visit, "98.7")
    assert field.water_level(visit) == pytest.approx(98.6)  # common practice: the mean
    inputs = field.office_inputs(visit)
    assert inputs["recorded_level"] == pytest.approx(98.6)
    # A level typed on the figures screen overrides it; a dragged one is never recorded.
    assert field.office_figures(inputs, 98.5)["level"] == 98.5


def test_figures_of_a_visit_without_line_heights_say_why(field):
    section = field.create_section("Orrin Brook", "XS-no-line")
    visit = field.start_visit(section["uuid"], today="2026-11-30")
    field.save_reading(visit, 0.0, "0.5")
    field.save_reading(visit, 4.0, "0.5")
    figures = field.office_figures(field.office_inputs(visit), 98.5)
    assert "no line heights" in figures["error"]

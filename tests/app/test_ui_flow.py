"""The whole field flow, driven headless with simulated taps on a fresh real store file:
new section, stakes, spacing, 13 readings with a deliberate spike, the spike flagged and
corrected, the live section figures, the checks, finishing, and the package in the outbox."""

from __future__ import annotations

import json
import os

import numpy as np
import pytest
from shapely.geometry import Polygon, box
from stakeline.app.service import uniform_stations

LINE = 100.0
SPIKE_INDEX = 6
SPIKE_ERROR = 0.45  # m: the plumb stopped on a boulder, 0.45 m short of the bed


def bed_readings(stations):
    """Readings (m, down from a line at 100.000) of a smooth invented channel."""
    x = np.asarray(stations)
    return np.round(0.25 + 1.1 * (1 - ((x - 5.0) / 5.0) ** 2), 3)


def wetted_area_by_clipping(stations, elevations, level):
    """Reference: the ground polygon clipped below the water level with shapely (an independent,
    general-purpose geometry library), in m²."""
    top = max(elevations) + 1.0
    ring = list(zip(stations, elevations, strict=True))
    ring += [(stations[-1], top), (stations[0], top)]
    ground_to_sky = Polygon(ring)
    below = box(min(stations), min(elevations) - 1.0, max(stations), level)
    return ground_to_sky.intersection(below).area


PLAN = uniform_stations(10.0, 13)
TRUE = bed_readings(PLAN)
TYPED = TRUE.copy()
TYPED[SPIKE_INDEX] -= SPIKE_ERROR
SPIKE_STATION = PLAN[SPIKE_INDEX]


def create_section(ui) -> str:
    """Home: type a new site and section, start the visit; returns its uuid."""
    home = ui.screen
    assert ui.app.manager.current == "home"
    ui.screenshot("home")
    home.ids.site_name.text = ""
    ui.type_text(home.ids.site_name, "Orrin Brook")
    ui.type_text(home.ids.section_name, "XS9 glide")
    ui.tap(home.ids.create)
    assert ui.app.manager.current == "stakes", home.message
    return ui.app.visit_uuid


def set_stakes(ui, visit: str) -> None:
    """Stakes: line heights at both stakes, the check shot and the distance, by keypad."""
    stakes = ui.screen
    assert "as seen looking downstream" in ui.texts()
    for field, value in (("line_left", "100.000"), ("line_right", "100.000"),
                         ("line_check", "100.002"), ("stake_distance", "10")):  # fmt: skip
        ui.tap(stakes.ids[field])  # the keypad now types into this field
        ui.keypad(value)
    assert stakes.tone == "unsaved"
    ui.screenshot("stakes")
    ui.tap(stakes.ids.next)
    assert ui.app.manager.current == "spacing", stakes.message
    saved = ui.app.service.visit(visit)
    assert (saved["line_left"], saved["line_right"], saved["line_check"]) == (100.0, 100.0, 100.002)
    assert saved["stake_distance"] == 10.0


def plan_stations(ui, visit: str) -> None:
    """Spacing: 13 stations over the 10 m between the stakes, shown, used."""
    spacing = ui.screen
    assert spacing.ids.distance.text == "10.00"
    ui.tap(spacing.ids.count)
    ui.keypad("back")
    ui.keypad("back")
    ui.keypad("13")
    ui.tap(spacing.ids.suggest)
    assert spacing.stations == PLAN
    assert len(spacing.ids.plan.children) == 13  # the station list is shown
    ui.screenshot("spacing")
    ui.tap(spacing.ids.read)
    assert ui.app.manager.current == "readings"
    assert ui.app.service.plan(visit) == PLAN


def enter_readings(ui, visit: str) -> None:
    """Readings: digits + one tap each, saved at once; the spike gets flagged."""
    readings = ui.screen
    for station, value in zip(PLAN, TYPED, strict=True):
        assert readings.station == station  # auto-advance put us here
        ui.keypad(f"{value:.3f}")
        assert readings.entry_state == "unsaved"
        ui.enter()  # the one tap
        # saved the moment it was accepted: it is in the store file already
        assert ui.app.service.reading_at(visit, station)["reading"] == pytest.approx(value)
    ui.wait(lambda: ui.app.service.worker.pending == 0)
    ui.frames(2)
    assert SPIKE_STATION in readings.flags, readings.flags
    row = next(r for r in readings.rows if r["station"] == SPIKE_STATION)
    assert row["state_text"] == "FLAGGED"
    ui.screenshot("readings")


def live_section(ui, visit: str) -> None:
    """Section: typed and dragged water levels give the figures of shapely's clipping."""
    ui.go("section")
    section = ui.screen
    ui.keypad("99.2")
    stations, elevations = list(PLAN), list(LINE - TYPED)
    reference = wetted_area_by_clipping(stations, elevations, 99.2)
    assert section.figures["area"] == pytest.approx(reference, rel=1e-9)
    assert f"{reference:.3f} m²" in section.value_text
    assert "Wading safety" in section.ids.wading.text
    assert "licensed engineering review" in section.ids.estimate.text
    ui.enter()  # the keypad's Record level
    assert ui.app.service.water_level(visit) == pytest.approx(99.2)
    view = section.ids.view
    _, y = view.to_screen(0.0, 99.2)
    ui.drag(view, (view.center_x, float(y)), (view.center_x, float(y) + 30))
    assert view.water_level > 99.2 and section.level == view.water_level
    dragged = wetted_area_by_clipping(stations, elevations, view.water_level)
    assert section.figures["area"] == pytest.approx(dragged, rel=1e-9)
    ui.screenshot("section")
    for _ in range(len(section.ids.keypad.text)):
        ui.keypad("back")
    ui.keypad("99.2")
    ui.enter()


def correct_the_spike(ui, visit: str) -> None:
    """Checks: the spike is listed; tapping it opens its station; the correction clears it."""
    ui.go("checks")
    checks = ui.screen
    ui.wait(lambda: not checks.running)
    ui.frames(2)
    assert ("spike", SPIKE_STATION) in {(f["kind"], f["station"]) for f in checks.findings}
    ui.screenshot("checks")
    spike_row = next(w for w in checks.ids.findings.children if "spike" in w.heading)
    ui.tap(spike_row)
    readings = ui.screen
    assert ui.app.manager.current == "readings" and readings.station == SPIKE_STATION
    ui.keypad(f"{TRUE[SPIKE_INDEX]:.3f}")
    ui.enter()
    corrected = ui.app.service.reading_at(visit, SPIKE_STATION)
    assert corrected["reading"] == pytest.approx(TRUE[SPIKE_INDEX])
    history = ui.app.service.store.station_history(corrected["uuid"])
    assert [round(h["reading"], 3) for h in history] == [
        round(TYPED[SPIKE_INDEX], 3),
        round(TRUE[SPIKE_INDEX], 3),
    ]  # the wrong value stays in the history
    ui.wait(lambda: ui.app.service.worker.pending == 0)
    assert SPIKE_STATION not in readings.flags


def finish(ui, visit: str) -> None:
    """Checks again: nothing blocks; finishing writes the package and says where."""
    ui.go("checks")
    checks = ui.screen
    ui.wait(lambda: not checks.running)
    assert not any(f["kind"] == "spike" for f in checks.findings)
    assert checks.blocking == 0
    ui.tap(checks.ids.finish)
    ui.confirm()  # finishing asks once, with a summary
    ui.wait(lambda: checks.package_path != "" or "could not" in checks.message)
    path = checks.package_path
    assert path, checks.message
    assert os.path.dirname(path) == ui.app.service.outbox()
    assert path in checks.message
    with open(path, encoding="utf-8") as handle:
        assert json.load(handle)["manifest"]["visit"] == visit
    assert ui.app.service.visit(visit)["finished"]
    assert ui.app.service.resume_point() is None


def test_whole_survey_by_touch(ui):
    visit = create_section(ui)
    set_stakes(ui, visit)
    plan_stations(ui, visit)
    enter_readings(ui, visit)
    live_section(ui, visit)
    correct_the_spike(ui, visit)
    finish(ui, visit)

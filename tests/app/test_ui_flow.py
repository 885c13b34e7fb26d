"""The whole field flow, driven headless with simulated taps on a fresh real store file:
new section, stakes, spacing, 13 readings with a deliberate spike, the spike flagged and
corrected, the live section figures, the checks, finishing, and the package in the outbox."""

from __future__ import annotations

import json
import os

import numpy as np
import pytest
from shapely.geometry import Polygon, box

from app.service import uniform_stations

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


def test_whole_survey_by_touch(ui):
    app = ui.app
    home = ui.screen
    assert app.manager.current == "home"
    ui.screenshot("home")

    # --- a new section on a new site -------------------------------------------------------
    ui.type_text(home.ids.site_name, "")
    home.ids.site_name.text = ""
    ui.type_text(home.ids.site_name, "Orrin Brook")
    ui.type_text(home.ids.section_name, "XS9 glide")
    ui.tap(home.ids.create)
    assert app.manager.current == "stakes", home.message
    visit = app.visit_uuid
    stakes = ui.screen

    # --- stakes: names, assumed line, check shot, distance ---------------------------------
    assert "as seen looking downstream" in ui.texts()
    ui.tap(stakes.ids.line_left)  # the keypad now types the left line height
    ui.keypad("100.000")
    ui.tap(stakes.ids.line_right)
    ui.keypad("100.000")
    ui.tap(stakes.ids.line_check)
    ui.keypad("100.002")
    ui.tap(stakes.ids.stake_distance)
    ui.keypad("10")
    assert stakes.tone == "unsaved"
    ui.screenshot("stakes")
    ui.tap(stakes.ids.next)
    assert app.manager.current == "spacing", stakes.message
    saved = app.service.visit(visit)
    assert (saved["line_left"], saved["line_right"], saved["line_check"]) == (100.0, 100.0, 100.002)
    assert saved["stake_distance"] == 10.0

    # --- spacing: 13 stations over 10 m ----------------------------------------------------
    spacing = ui.screen
    assert spacing.ids.distance.text == "10.00"
    ui.tap(spacing.ids.count)
    ui.keypad("back")
    ui.keypad("back")
    ui.keypad("13")
    ui.tap(spacing.ids.suggest)
    expected_plan = uniform_stations(10.0, 13)
    assert spacing.stations == expected_plan
    assert len(spacing.ids.plan.children) == 13  # the station list is shown
    ui.screenshot("spacing")
    ui.tap(spacing.ids.read)
    assert app.manager.current == "readings"
    assert app.service.plan(visit) == expected_plan

    # --- readings: digits + one tap each, a spike at the 7th station -----------------------
    readings = ui.screen
    values = bed_readings(expected_plan)
    typed = values.copy()
    typed[SPIKE_INDEX] -= SPIKE_ERROR
    for station, value in zip(expected_plan, typed, strict=True):
        assert readings.station == station  # auto-advance put us here
        ui.keypad(f"{value:.3f}")
        assert readings.entry_state == "unsaved"
        ui.enter()  # the one tap
        # saved the moment it was accepted: it is in the store file already
        assert app.service.reading_at(visit, station)["reading"] == pytest.approx(value)
    ui.wait(lambda: app.service.worker.pending == 0)
    ui.frames(2)
    spike_station = expected_plan[SPIKE_INDEX]
    assert spike_station in readings.flags, readings.flags
    row = next(r for r in readings.rows if r["station"] == spike_station)
    assert row["state_text"] == "FLAGGED"
    ui.screenshot("readings")

    # --- section: type the water level, figures against shapely; drag the line -------------
    ui.go("section")
    section = ui.screen
    ui.keypad("99.2")
    stations, elevations = list(expected_plan), list(LINE - typed)
    reference = wetted_area_by_clipping(stations, elevations, 99.2)
    assert section.figures["area"] == pytest.approx(reference, rel=1e-9)
    assert f"{reference:.3f} m²" in section.value_text
    assert "Wading safety" in section.ids.wading.text
    assert "licensed engineering review" in section.ids.estimate.text
    ui.tap(section.ids.record)
    assert app.service.water_level(visit) == pytest.approx(99.2)
    view = section.ids.view
    _, y = view.to_screen(0.0, 99.2)
    x = view.center_x
    ui.drag(view, (x, float(y)), (x, float(y) + 30))
    assert view.water_level > 99.2
    assert section.level == view.water_level
    dragged = wetted_area_by_clipping(stations, elevations, view.water_level)
    assert section.figures["area"] == pytest.approx(dragged, rel=1e-9)
    ui.screenshot("section")
    for _ in range(len(section.ids.keypad.text)):
        ui.keypad("back")
    ui.keypad("99.2")
    ui.tap(section.ids.record)

    # --- checks: the spike is listed; tap it, correct it, check again -----------------------
    ui.go("checks")
    checks = ui.screen
    ui.wait(lambda: not checks.running)
    ui.frames(2)
    kinds = {(f["kind"], f["station"]) for f in checks.findings}
    assert ("spike", spike_station) in kinds
    ui.screenshot("checks")
    spike_row = next(
        w for w in checks.ids.findings.children if "spike" in w.heading and w.has_station
    )
    ui.tap(spike_row)
    assert app.manager.current == "readings"
    assert readings.station == spike_station
    ui.keypad(f"{values[SPIKE_INDEX]:.3f}")
    ui.enter()
    corrected = app.service.reading_at(visit, spike_station)
    assert corrected["reading"] == pytest.approx(values[SPIKE_INDEX])
    history = app.service.store.station_history(corrected["uuid"])
    assert [round(h["reading"], 3) for h in history] == [
        round(typed[SPIKE_INDEX], 3),
        round(values[SPIKE_INDEX], 3),
    ]  # the wrong value stays in the history
    ui.wait(lambda: app.service.worker.pending == 0)
    assert spike_station not in readings.flags

    ui.go("checks")
    ui.wait(lambda: not checks.running)
    assert not any(f["kind"] == "spike" for f in checks.findings)
    assert checks.blocking == 0

    # --- finish: the package is in the outbox ----------------------------------------------
    ui.tap(checks.ids.finish)
    ui.wait(lambda: checks.package_path != "" or "could not" in checks.message)
    assert checks.package_path, checks.message
    path = checks.package_path
    assert os.path.dirname(path) == app.service.outbox()
    assert path in checks.message
    with open(path, encoding="utf-8") as handle:
        package = json.load(handle)
    assert package["manifest"]["visit"] == visit
    assert app.service.visit(visit)["finished"]
    assert app.service.resume_point() is None

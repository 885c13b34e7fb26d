"""Checks before leaving: finishing is refused while a blocking finding stands, allowed with a
written reason (kept as an override), and the package lands in the outbox.  Also the home screen
(continue an open visit) and the settings screen."""

from __future__ import annotations

import json
import os

import pytest

READINGS = [0.3, 0.6, 0.9, 1.1, 1.25, 1.3, 1.32, 1.28, 1.15, 0.95, 0.62, 0.31]


@pytest.fixture
def visit(ui):
    """A visit whose line check disagrees with the stake heights by 50 mm (a blocking 'line'
    finding), with 12 readings."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS1 riffle")
    uuid = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(uuid, line_left=100.0, line_right=100.0, line_check=100.05)
    service.save_plan(uuid, [i * 0.5 for i in range(len(READINGS))])
    for i, reading in enumerate(READINGS):
        service.save_reading(uuid, i * 0.5, str(reading))
    ui.app.visit_uuid = uuid
    return uuid


def test_blocking_finding_needs_a_written_reason(ui, visit):
    ui.go("checks")
    screen = ui.screen
    ui.wait(lambda: not screen.running)
    ui.frames(2)
    assert screen.blocking >= 1
    assert any(f["kind"] == "line" and f["severity"] == "block" for f in screen.findings)
    ui.tap(screen.ids.finish)  # no reason: refused, nothing finished
    assert screen.tone == "flagged" and "blocking" in screen.message
    assert not ui.app.service.visit(visit)["finished"]

    ui.type_text(screen.ids.reason, "line re-levelled after the check; heights confirmed")
    ui.tap(screen.ids.finish)
    ui.confirm()  # finishing asks once, with a summary
    ui.wait(lambda: screen.package_path != "" or "could not" in screen.message)
    assert screen.package_path, screen.message
    overrides = ui.app.service.store.overrides(visit)
    assert {o["kind"] for o in overrides} >= {"line"}
    assert all(o["reason"].startswith("line re-levelled") for o in overrides)
    assert ui.app.service.visit(visit)["finished"]
    with open(screen.package_path, encoding="utf-8") as handle:
        assert json.load(handle)["manifest"]["visit"] == visit
    assert os.path.isdir(ui.app.service.outbox())


def test_home_continues_an_open_visit(ui, visit):
    ui.app.service.remember_position(visit, 2.5)
    ui.go("home")
    home = ui.screen
    assert "station 2.5" in home.resume_text
    rows = {r.title.split("[/b]")[0][3:]: r for r in home.ids.sections.children}
    assert rows["XS1 riffle"].button_text == "Continue visit"
    ui.tap(home.ids.resume)
    assert ui.app.manager.current == "readings"
    assert ui.screen.station == 2.5


def test_settings_are_saved(ui):
    ui.go("settings")
    screen = ui.screen
    feet = next(c for c in screen.walk() if getattr(c, "text", "") == "Feet (ft)")
    ui.tap(feet)
    ui.type_text(screen.ids.crew, "A. Rivera, K. Moss")
    ui.tap(screen.ids.save)
    assert screen.tone == "saved"
    settings = ui.app.service.settings()
    assert settings["unit"] == "ft" and settings["crew"] == [
        "A. Rivera, K. Moss".split(", ")[0],
        "K. Moss",
    ]
    assert settings["precision"] == 0.01  # the finest choice offered in feet
    ui.screenshot("settings")
    section = ui.app.service.create_section("Orrin Brook", "XS1")
    visit = ui.app.service.start_visit(section["uuid"])
    assert ui.app.service.visit(visit)["unit"] == "ft"


def chip(screen, text: str):
    """The settings chip showing exactly ``text``."""
    return next(c for c in screen.walk() if type(c).__name__ == "Chip" and c.text == text)


def test_settings_reading_and_station_plus_minus(ui):
    from kivy.metrics import dp

    ui.go("settings")
    screen = ui.screen
    # Metric chips in millimetres; the defaults of issue 6 (±5 mm readings, ±10 mm stations,
    # common practice) are marked and chosen until the crew picks another.
    assert chip(screen, "±5 mm (default)").state == "down"
    assert chip(screen, "±10 mm (default)").state == "down"
    reading, station = chip(screen, "±10 mm"), chip(screen, "±20 mm")
    assert min(reading.height, station.height) >= dp(48)  # touch targets (Material: 48 dp)
    ui.tap(reading)
    ui.tap(station)
    assert screen.tone == "unsaved" and "now ±10 mm" in ui.texts()
    ui.tap(screen.ids.save)
    settings = ui.app.service.settings()
    assert (settings["reading_plus_minus"], settings["station_plus_minus"]) == (0.01, 0.02)
    assert settings["precision"] == 0.001  # the decimals shown did not move
    ui.go("home")
    ui.go("settings")  # shown again from the store
    assert chip(screen, "±10 mm").state == "down" and chip(screen, "±20 mm").state == "down"
    # Feet: the feet chips, their defaults (±0.02 ft / ±0.03 ft) chosen again.
    ui.tap(chip(screen, "Feet (ft)"))
    assert chip(screen, "±0.02 ft (default)").state == "down"
    assert chip(screen, "±0.03 ft (default)").state == "down"
    ui.tap(chip(screen, "±0.01 ft"))
    ui.tap(screen.ids.save)
    assert ui.app.service.plus_minus("ft") == (0.01, 0.03)
    scroll = next(w for w in screen.walk() if type(w).__name__ == "ScrollView")
    scroll.scroll_y = 0  # the lower rows, to see that nothing below the ± rows is cut off
    ui.frames(2)
    ui.screenshot("settings-lower")

"""The readings screen in detail: laptop keys, feature codes, notes, undo, remove, going to and
inserting stations, and the plan editor; every action checked in the real store file."""

from __future__ import annotations

import pytest

ENTER, BACKSPACE, UP, DOWN = 13, 8, 273, 274


@pytest.fixture
def visit(ui):
    """A new visit on demo section XS2 with an 11-station plan, open on the readings screen."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    uuid = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(uuid, line_left=100.0, line_right=100.0, stake_distance=5.0)
    service.save_plan(uuid, [i * 0.5 for i in range(11)])
    ui.app.open_visit(uuid, "readings")
    ui.frames(3)
    return uuid


def test_laptop_keys_type_and_save(ui, visit):
    screen = ui.screen
    assert screen.station == 0.0
    for ch in "0.4X5":  # a letter is ignored
        ui.key(ord(ch.lower()), ch)
    ui.key(BACKSPACE)
    ui.key(ord("7"), "7")
    ui.key(ord(","), ",")  # a decimal comma is a point; a second point is ignored
    assert screen.ids.keypad.text == "0.47"
    assert screen.entry_state == "unsaved"
    ui.key(ENTER)
    assert ui.app.service.reading_at(visit, 0.0)["reading"] == pytest.approx(0.47)
    assert screen.station == 0.5  # auto-advance
    ui.key(UP)
    assert screen.station == 0.0 and screen.entry_state == "saved"
    ui.key(DOWN)
    assert screen.station == 0.5


def test_codes_note_undo_remove(ui, visit):
    screen = ui.screen
    service = ui.app.service
    codes = {c.text: c for c in screen.ids.codes.children}
    ui.tap(codes["Bank top"])
    ui.tap(screen.ids.note)
    popup = next(w for w in ui.window.children if type(w).__name__ == "NotePopup")
    popup.ids.text.text = "stake leaning"
    keep = next(w for w in popup.walk() if getattr(w, "text", "") == "Keep note")
    ui.tap(keep)
    ui.keypad("0.31")
    ui.enter()
    first = service.reading_at(visit, 0.0)
    assert (first["code"], first["note"]) == ("bank_top", "stake leaning")
    assert screen.code == "" and screen.note == ""  # the next station starts clean

    ui.keypad("0.55")
    ui.enter()
    assert service.reading_at(visit, 0.5)["reading"] == pytest.approx(0.55)
    ui.tap(screen.ids.undo)
    assert service.reading_at(visit, 0.5) is None  # undone, and we are back at it
    assert screen.station == 0.5

    ui.tap(screen.ids.previous)
    assert screen.station == 0.0
    ui.tap(screen.ids["remove"])
    assert service.reading_at(visit, 0.0) is None
    ui.tap(screen.ids.undo)
    assert service.reading_at(visit, 0.0)["reading"] == pytest.approx(0.31)


def test_go_to_and_insert_a_station(ui, visit):
    screen = ui.screen
    service = ui.app.service
    ui.keypad("0.3")
    ui.enter()
    ui.tap(screen.ids.goto)
    assert screen.mode == "station"
    ui.keypad("1.25")  # a slope break between planned stations
    ui.enter()
    assert screen.station == 1.25 and screen.mode == "reading"
    ui.keypad("0.9")
    ui.enter()
    assert 1.25 in service.plan(visit)
    assert service.reading_at(visit, 1.25)["reading"] == pytest.approx(0.9)
    assert screen.station == 1.5  # the next planned station after the inserted one

    row = next(r for r in screen.rows if r["station"] == 0.0)  # edit an earlier station
    screen.go_to(row["station"])
    ui.keypad("0.35")
    ui.enter()
    record = service.reading_at(visit, 0.0)
    assert record["reading"] == pytest.approx(0.35)
    assert len(service.store.station_history(record["uuid"])) == 2


def test_plan_editor_adds_and_removes(ui, visit):
    ui.go("spacing")
    screen = ui.screen
    ui.tap(screen.ids.extra)
    ui.keypad("2.2")
    ui.tap(screen.ids.add)
    assert 2.2 in screen.stations and screen.tone == "unsaved"
    chip = next(c for c in screen.ids.plan.children if c.text == "3")
    ui.tap(chip)
    ui.tap(screen.ids["remove"])
    assert 3.0 not in screen.stations
    ui.tap(screen.ids.use)
    plan = ui.app.service.plan(visit)
    assert 2.2 in plan and 3.0 not in plan and screen.tone == "saved"


def test_bad_input_says_so_and_loses_nothing(ui, visit):
    screen = ui.screen
    ui.enter()  # nothing typed
    assert screen.tone == "unsaved" and "Type the reading" in screen.message
    ui.go("stakes")
    stakes = ui.screen
    ui.tap(stakes.ids.left_lat)
    for _ in range(len(stakes.ids.left_lat.text)):  # clear the demo latitude, keep longitude
        ui.keypad("back")
    assert stakes.ids.left_lat.text == "" and stakes.ids.left_lon.text
    ui.tap(stakes.ids.save)  # longitude without latitude
    assert stakes.tone == "flagged" and "latitude" in stakes.message
    ui.go("section")
    section = ui.screen
    ui.keypad("150")  # above both ends of what little is read
    assert "error" in section.figures
    assert section.value_text == ""
    ui.go("readings")
    assert ui.app.service.visit(visit)["station_count"] == 0


def test_level_and_rod_method(ui, visit):
    ui.go("stakes")
    stakes = ui.screen
    rod = next(c for c in stakes.walk() if getattr(c, "text", "") == "Level and rod")
    ui.tap(rod)
    ui.tap(stakes.ids.backsight)
    ui.keypad("1.512")
    ui.tap(stakes.ids.save)
    assert stakes.tone == "saved", stakes.message
    benchmark = ui.app.service.section_of(visit)["benchmark_elevation"]
    hi = benchmark + 1.512  # height of instrument = benchmark + backsight (common practice)
    assert f"{hi:.3f}" in stakes.message
    ui.go("readings")
    readings = ui.screen
    assert "foresight" in ui.texts()
    ui.keypad("2.000")
    ui.enter()
    record = ui.app.service.reading_at(visit, 0.0)
    assert record["elevation"] == pytest.approx(hi - 2.0)  # elevation = HI - foresight
    assert readings.station == 0.5


def test_history_shows_every_value_a_station_had(ui, visit):
    # Corrections never overwrite (issue 4): the screen lists the first value and the correction.
    screen = ui.screen
    ui.keypad("0.62")
    ui.enter()
    ui.key(UP)  # back to station 0
    ui.keypad("0.26")
    ui.enter()
    ui.key(UP)
    assert screen.station == 0.0
    row = next(r for r in screen.rows if r["station"] == 0.0)
    assert row["state_text"] == "saved, corrected"
    ui.tap(screen.ids.history)
    popup = next(w for w in ui.window.children if type(w).__name__ == "HistoryPopup")
    lines = [w.text for w in reversed(popup.ids.lines.children)]
    assert len(lines) == 2
    assert "entered: 0.620 m" in lines[0] and "corrected: 0.260 m" in lines[1]
    ui.screenshot("readings-history")
    ui.tap(popup.ids.close)
    ui.wait(lambda: popup.parent is None)  # the popup closes with a short animation
    # A station with no reading says so instead of opening an empty list.
    screen.go_to(2.5)
    ui.tap(screen.ids.history)
    assert "no reading yet" in screen.message

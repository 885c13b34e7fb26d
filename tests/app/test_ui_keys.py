"""Physical keys go only where a person types: a focused text field takes what is typed (never the
reading behind a dialog), Tab and Shift-Tab move between fields (never typing into a number),
Enter submits the form it is in, Escape closes a dialog without keeping it."""

from __future__ import annotations

import pytest

ENTER, TAB, ESCAPE, BACKSPACE = 13, 9, 27, 8


@pytest.fixture
def saved_station(ui):
    """A visit on demo section XS2 whose station 0 has a reading of 0.620, open at station 0."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0, stake_distance=5.0)
    service.save_plan(visit, [i * 0.5 for i in range(11)])
    service.save_reading(visit, 0.0, "0.62")
    ui.app.open_visit(visit, "readings")
    ui.screen.go_to(0.0)
    ui.frames(3)
    return visit


def test_a_note_typed_on_the_keyboard_never_reaches_the_reading(ui, saved_station):
    screen, service = ui.screen, ui.app.service
    ui.tap(screen.ids.note)
    popup = ui.dialog("NotePopup")
    ui.wait(lambda: popup.ids.text.focus)  # the note's box takes the keyboard as it opens
    ui.type_keys("first read 1.94 - plumb swung")
    assert screen.ids.keypad.text == "" and screen.entry_state == "saved"
    ui.press(ENTER)  # submits the note dialog
    ui.wait(lambda: ui.dialog() is None)
    saved = service.reading_at(saved_station, 0.0)
    assert saved["note"] == "first read 1.94 - plumb swung"
    assert saved["reading"] == pytest.approx(0.62)  # not 1.940
    ui.press(ENTER)  # nothing typed for the reading: nothing saved over it
    assert service.reading_at(saved_station, 0.0)["reading"] == pytest.approx(0.62)
    assert len(service.reading_history(saved_station, 0.0)) == 2  # the reading, then the note


def test_with_no_text_field_focused_the_reading_takes_the_digits(ui, saved_station):
    screen = ui.screen
    ui.type_keys("0.58")
    assert screen.ids.keypad.text == "0.58"
    ui.press(ENTER)
    assert ui.app.service.reading_at(saved_station, 0.0)["reading"] == pytest.approx(0.58)


def test_escape_closes_a_dialog_without_keeping_it(ui, saved_station):
    screen = ui.screen
    ui.tap(screen.ids.note)
    ui.wait(lambda: ui.dialog().ids.text.focus)
    ui.type_keys("boulder")
    ui.press(ESCAPE)
    ui.wait(lambda: ui.dialog() is None)
    assert ui.app.service.reading_at(saved_station, 0.0)["note"] == ""
    assert ui.app.manager.current == "readings"  # Escape closed the dialog, not the screen


def test_keys_while_a_dialog_without_text_is_open_stay_in_it(ui, saved_station):
    screen = ui.screen
    ui.tap(screen.ids.history)
    assert ui.dialog("HistoryPopup") is not None
    ui.type_keys("7.5")
    assert screen.ids.keypad.text == ""
    ui.press(ENTER)  # closes the history
    ui.wait(lambda: ui.dialog() is None)
    assert screen.ids.keypad.text == ""


def test_tab_moves_between_fields_and_never_types(ui, saved_station):
    ui.go("stakes")
    stakes = ui.screen
    assert stakes.active_field is stakes.ids.line_left
    before = stakes.ids.line_left.text
    ui.press(TAB, "\t")
    assert stakes.active_field is stakes.ids.line_right and stakes.ids.line_right.active
    assert stakes.ids.line_left.text == before and not stakes.ids.line_left.active
    ui.type_keys("100.012")
    assert stakes.ids.line_right.text == "100.012"
    ui.press(TAB, "\t", ["shift"])
    assert stakes.active_field is stakes.ids.line_left
    # from a text field to the next number field, and digits typed in a text field stay there
    stakes.focus(stakes.ids.benchmark_name)
    ui.frames(1)
    ui.type_keys(" 2")
    assert stakes.ids.benchmark_name.text.endswith(" 2")
    assert stakes.ids.line_left.text == before
    ui.press(TAB, "\t")
    assert not stakes.ids.benchmark_name.focus
    assert stakes.active_field is stakes.ids.benchmark_elevation
    assert stakes.ids.benchmark_elevation.active


def test_latitude_is_asked_before_longitude(ui, saved_station):
    ui.go("stakes")
    stakes = ui.screen
    stakes.activate(stakes.ids.backsight)
    order = []
    for _ in range(4):
        ui.press(TAB, "\t")
        order.append(next(n for n, w in stakes.ids.items() if w is stakes.active_field))
    assert order == ["left_lat", "left_lon", "right_lat", "right_lon"]


def test_enter_submits_the_new_section_form(ui):
    ui.go("home")
    home = ui.screen
    ui.tap(home.ids.site_name)
    ui.type_keys("Orrin Brook")
    ui.press(TAB, "\t")
    assert home.ids.section_name.focus and not home.ids.site_name.focus
    ui.type_keys("XS9 glide")
    ui.press(ENTER)
    assert ui.app.manager.current == "stakes", home.message
    visit = ui.app.service.visit(ui.app.visit_uuid)
    assert (visit["site"], visit["section"]) == ("Orrin Brook", "XS9 glide")


def test_enter_in_an_empty_form_says_what_is_missing(ui):
    ui.go("home")
    home = ui.screen
    home.ids.site_name.text = "Orrin Brook"
    ui.tap(home.ids.site_name)
    ui.press(ENTER)
    assert ui.app.manager.current == "home"
    assert "section name" in home.message and home.ids.section_name.focus

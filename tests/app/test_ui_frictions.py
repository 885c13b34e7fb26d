"""The smaller frictions a crew met in a real window, each fixed: the office figures use the
recorded water level (never a dragged one), a repeat visit offers the last plan and measures the
line heights again, Next field scrolls to the field, the newest reading stays in view, counts
follow an added station, dialogs are in the sunlight theme, one Record level control and no
hint to drag a line that is not there, labelled stake names."""

from __future__ import annotations

import pytest
from kivy.uix.label import Label
from stakeline.app import theme

from tests.app.layout_rules import visible_rect


def inside(widget, frame) -> bool:
    """True when ``widget`` shows whole within ``frame`` (a scrolling list) on the window."""
    rect, outer = visible_rect(widget), visible_rect(frame)
    return rect is not None and all(
        (
            rect[0] >= outer[0] - 1,
            rect[1] >= outer[1] - 1,
            rect[2] <= outer[2] + 1,
            rect[3] <= outer[3] + 1,
            rect[3] - rect[1] >= widget.height - 1,
        )
    )


@pytest.fixture
def demo_later(ui):
    """The later finished demo visit of XS1 (a recorded water level, a whole ground line)."""
    visit = [v for v in ui.app.service.store.visits() if v["section"] == "XS1 riffle"][-1]
    ui.app.visit_uuid = visit["uuid"]
    return visit["uuid"]


def test_office_figures_use_the_recorded_level_not_a_dragged_one(ui, demo_later):
    service = ui.app.service
    recorded = service.water_level(demo_later)
    ui.go("section")
    section = ui.screen
    view = section.ids.view
    _, y = view.to_screen(0.0, recorded)
    ui.drag(view, (view.center_x, float(y)), (view.center_x, float(y) + 40))
    dragged = view.water_level
    assert dragged > recorded + 0.01 and section.tone == "unsaved"
    ui.tap(section.ids.detail)
    detail = ui.screen
    ui.wait(lambda: not detail.running)
    assert detail.ids.level_field.text == f"{recorded:.3f}"
    assert detail.figures["level"] == pytest.approx(recorded)
    assert service.water_level(demo_later) == pytest.approx(recorded)  # nothing recorded
    ui.tap(detail.ids.level_field)  # only a level typed here replaces it
    ui.keypad("99.1")
    ui.wait(lambda: not detail.running and detail.figures.get("level") == pytest.approx(99.1))


def test_a_repeat_visit_offers_the_last_plan_and_measures_the_line_again(ui):
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS1 riffle")
    last = service.store.visits(section["section_uuid"])[-1]
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    fresh = service.visit(visit)
    assert fresh["line_left"] is None and fresh["line_right"] is None  # never silently carried
    ui.app.open_visit(visit, "stakes")
    stakes = ui.screen
    assert stakes.ids.line_left.text == ""
    assert stakes.ids.line_left.hint == f"last visit {last['line_left']:.3f}"
    ui.go("spacing")
    spacing = ui.screen
    offer = spacing.ids.previous
    assert not offer.hidden and last["date"] in offer.text
    ui.tap(offer)
    read = [r["station"] for r in service.store.stations(last["uuid"])]
    assert spacing.stations == sorted(set(read) | set(last["planned_stations"]))
    assert service.plan(visit) == [] and spacing.tone == "unsaved"  # offered, not taken
    ui.tap(spacing.ids.use)
    assert service.plan(visit) == spacing.stations and offer.hidden


def test_next_field_scrolls_the_field_into_view(ui, demo_later):
    ui.resize((800, 600))
    ui.go("stakes")
    stakes = ui.screen
    form = stakes.ids.form_scroll
    names = ["line_right", "line_check", "stake_distance", "backsight", "left_lat", "left_lon",
             "right_lat", "right_lon"]  # fmt: skip
    for name in names:
        ui.enter()  # the keypad's Next field
        assert stakes.active_field is stakes.ids[name]
        ui.frames(2)
        assert inside(stakes.ids[name], form), f"{name} is below the fold"
    ui.resize((1280, 800))


def test_the_newest_reading_stays_in_view(ui):
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    service.save_plan(visit, [i * 0.5 for i in range(25)])
    ui.resize((1024, 600))
    ui.app.open_visit(visit, "readings")
    screen = ui.screen
    for i in range(18):
        ui.keypad(f"{0.3 + 0.02 * i:.2f}")
        ui.enter()
        ui.frames(2)
        row = next((w for w in screen.ids.list.children[0].children if w.station == i * 0.5), None)
        assert row is not None and inside(row, screen.ids.list), f"row {i * 0.5} out of view"
    ui.resize((1280, 800))


def test_counts_follow_an_added_station(ui):
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    service.save_plan(visit, [i * 0.5 for i in range(21)])
    ui.app.open_visit(visit, "readings")
    screen = ui.screen
    assert screen.position_text == "1 of 21 · 0 read"
    ui.tap(screen.ids.goto)
    ui.keypad("1.25")
    ui.enter()
    assert screen.position_text == "4 of 22 · 0 read"  # counted before its reading is saved
    ui.keypad("0.9")
    ui.enter()
    assert screen.position_text.endswith("of 22 · 1 read")
    ui.go("spacing")
    assert ui.screen.message == "Saved plan: 22 stations."


def test_dialogs_are_in_the_sunlight_theme(ui, demo_later):
    ui.app.go("readings", station=0.0)
    ui.frames(2)
    screen = ui.screen
    for opener in (screen.open_note, screen.open_history):
        opener()
        popup = ui.dialog()
        assert tuple(popup.background_color) == pytest.approx(theme.PAPER)
        for label in (w for w in popup.walk() if isinstance(w, Label) and w.text):
            if type(label).__name__ in ("BigButton", "FlatButton"):
                continue
            assert theme.contrast_ratio(label.color, theme.PAPER) >= 7, label.text  # WCAG AAA
        popup.dismiss(animation=False)
        ui.frames(2)


def test_one_record_control_and_no_hint_to_drag_a_missing_line(ui):
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    for i, reading in enumerate([0.2, 0.7, 0.9, 0.4]):
        service.save_reading(visit, float(i), str(reading))
    ui.app.visit_uuid = visit
    ui.go("section")
    texts = [w.text for w in ui.screen.walk() if isinstance(w, Label)]
    assert texts.count("Record level") == 1
    assert not any("drag" in t.lower() for t in texts)  # no water line yet
    ui.keypad("99.5")
    assert any("Drag the blue line" in t for t in (ui.screen.hint_text,))


def test_stake_names_have_labels(ui, demo_later):
    ui.go("stakes")
    texts = [w.text for w in ui.screen.walk() if isinstance(w, Label)]
    assert "Left stake name" in texts and "Right stake name" in texts

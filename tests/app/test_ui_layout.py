"""Every screen in landscape tablet, portrait tablet and laptop windows: every target big enough
for a gloved finger, nothing pushed off the window, values large."""

from __future__ import annotations

import pytest
from kivy.metrics import dp, sp
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.scrollview import ScrollView

LANDSCAPE, PORTRAIT, LAPTOP = (1280, 800), (800, 1280), (1920, 1080)

SCREENS = ("home", "settings", "stakes", "spacing", "readings", "section", "velocity", "surface",
           "checks", "detail")  # fmt: skip


def _in_scroller(widget) -> bool:
    parent = widget.parent
    while parent is not None and parent is not parent.parent:
        if isinstance(parent, ScrollView):
            return True
        parent = parent.parent
    return False


def _shown(widget) -> bool:
    node = widget
    while node is not None and node is not node.parent:
        if node.opacity == 0 or node.height <= 0:
            return False
        node = node.parent
    return True


@pytest.fixture
def visit_with_readings(ui):
    """A visit on the demo section XS1 with a plan, eight readings and a water level."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS1 riffle")
    last = service.store.visits(section["section_uuid"])[-1]
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    # line heights are measured again on every visit: here the same as the last one
    service.save_stakes(visit, line_left=last["line_left"], line_right=last["line_right"])
    service.save_plan(visit, [i * 0.5 for i in range(21)])
    for i, reading in enumerate([0.3, 0.5, 0.9, 1.2, 1.4, 1.45, 1.5, 1.42]):
        service.save_reading(visit, i * 0.5, f"{reading}")
    service.record_water_level(visit, "99.75")  # below both ends read so far
    ui.app.visit_uuid = visit
    return visit


@pytest.mark.parametrize(
    "size", [LANDSCAPE, PORTRAIT, LAPTOP], ids=["landscape", "portrait", "laptop"]
)
def test_targets_fit_and_are_big_enough(ui, visit_with_readings, size):
    ui.resize(size)
    width, height = size
    for name in SCREENS:
        ui.go(name)
        ui.wait(lambda: ui.app.service.worker.pending == 0)
        ui.frames(2)
        screen = ui.screen
        fixed = []  # targets outside scrolling lists: (label, window rectangle)
        for widget in screen.walk(restrict=True):
            if not isinstance(widget, ButtonBehavior) or not _shown(widget):
                continue
            label = f"{name} {size}: {type(widget).__name__} {getattr(widget, 'text', '')!r}"
            assert widget.height >= dp(48) - 0.5, label
            assert widget.width >= dp(48) - 0.5, label
            if _in_scroller(widget):
                continue
            left, bottom = widget.to_window(widget.x, widget.y)
            assert left >= -1 and bottom >= -1, label
            assert left + widget.width <= width + 1, label
            assert bottom + widget.height <= height + 1, label
            fixed.append((label, (left, bottom, left + widget.width, bottom + widget.height)))
        for i, (label, a) in enumerate(fixed):  # no target drawn over another
            for other, b in fixed[i + 1 :]:
                overlap_x = min(a[2], b[2]) - max(a[0], b[0])
                overlap_y = min(a[3], b[3]) - max(a[1], b[1])
                assert overlap_x <= 1 or overlap_y <= 1, f"{label} overlaps {other}"
    ui.resize(LANDSCAPE)


def test_values_are_large(ui, visit_with_readings):
    ui.go("readings")
    screen = ui.screen
    assert screen.ids.station_label.font_size >= sp(24)
    assert screen.ids.entry.font_size >= sp(24)
    ui.go("section")
    rows = [w for w in ui.screen.ids.figure_box.children if hasattr(w, "value")]
    assert rows and all(row.ids.value_label.font_size >= sp(24) for row in rows)
    ui.go("stakes")
    field = ui.screen.ids.line_left
    value_label = field.children[0]  # the number itself (the caption is above it)
    assert value_label.font_size >= sp(24)
    demo = [v for v in ui.app.service.store.visits() if v["finished"]][-1]
    ui.app.visit_uuid = demo["uuid"]  # a whole section at its recorded level: every figure shows
    ui.go("detail")
    ui.wait(lambda: not ui.screen.running)
    ui.frames(2)
    rows = [w for w in ui.screen.ids.results.children if hasattr(w, "value")]
    assert rows and all(row.ids.value_label.font_size >= sp(24) for row in rows)

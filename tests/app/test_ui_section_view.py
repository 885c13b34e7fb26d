"""The section drawing widget: exact water fill, mirroring for a right-hand tape origin, drag to
set the level, pinch and wheel zoom, pan and double-tap refit."""

from __future__ import annotations

import numpy as np
import pytest
from shapely.geometry import Polygon, box
from stakeline.app.widgets.section_view import SectionView
from stakeline.survey.geometry import water_strip

X = np.array([0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0])
Z = np.array([10.0, 9.0, 8.2, 9.4, 8.0, 9.1, 10.0])  # a bar at 3.0 splits low water in two


def strip_area(stations, bottoms, level) -> float:
    """Area of the triangle strip between the water surface and the bed (trapezoids)."""
    depth = level - np.asarray(bottoms, dtype=float)
    return float(np.sum(np.diff(stations) * (depth[1:] + depth[:-1]) / 2))


@pytest.mark.parametrize("level", [8.1, 8.5, 9.0, 9.5, 9.99])
def test_water_strip_fills_exactly_the_wetted_area(level):
    # Reference: shapely clipping of the ground polygon below the level (independent library).
    ring = list(zip(X, Z, strict=True)) + [(6.0, 11.0), (0.0, 11.0)]
    expected = Polygon(ring).intersection(box(0.0, 7.0, 6.0, level)).area
    stations, bottoms = water_strip(X, Z, level)
    assert strip_area(stations, bottoms, level) == pytest.approx(expected, rel=1e-12)


@pytest.fixture
def view(ui):
    """A SectionView on top of the running app, 1000 x 600 px."""
    widget = SectionView(size_hint=(None, None), size=(1000, 600), pos=(100, 100))
    widget.strip = ui.app.service.water_strip  # as the screens pass it
    ui.window.add_widget(widget)
    widget.set_section(X, Z)
    widget.water_level = 9.0
    ui.frames(2)
    yield widget
    ui.window.remove_widget(widget)


def test_mirrored_for_a_right_hand_tape_origin(ui, view):
    left_first = view.to_screen(X[0], Z[0])[0] < view.to_screen(X[-1], Z[-1])[0]
    view.flip = True
    mirrored = view.to_screen(X[0], Z[0])[0] > view.to_screen(X[-1], Z[-1])[0]
    assert left_first and mirrored


def test_drag_moves_the_water_level(ui, view):
    view.level_step = 0.01
    events = []
    view.bind(on_level_dragged=lambda *_: events.append(view.water_level))
    _, y = view.to_screen(0.0, 9.0)
    x = float(view.center_x)
    target = float(view.to_screen(0.0, 9.5)[1])
    ui.drag(view, (x, float(y)), (x, target))
    assert view.water_level == pytest.approx(9.5, abs=0.011)
    assert events and events[-1] == view.water_level
    assert round(view.water_level / 0.01) * 0.01 == pytest.approx(view.water_level)


def test_zoom_pan_and_refit(ui, view):
    from kivy.tests.common import UnitTestTouch

    fitted = list(view._view)
    scroll = UnitTestTouch(*view.center)
    scroll.profile.append("button")
    scroll.button = "scrollup"
    scroll.touch_down()
    scroll.touch_up()
    zoomed = list(view._view)
    assert zoomed[1] - zoomed[0] < fitted[1] - fitted[0]  # wheel zoomed in
    ui.drag(view, (view.center_x, view.y + 40), (view.center_x + 100, view.y + 40))
    assert view._view[0] < zoomed[0]  # dragging right shows more of the left
    a, b = UnitTestTouch(500, 300), UnitTestTouch(700, 300)
    a.touch_down()
    b.touch_down()
    b.touch_move(900, 300)  # fingers apart: pinch zoom in
    a.touch_up()
    b.touch_up()
    ui.frames(1)
    assert view._view[1] - view._view[0] < zoomed[1] - zoomed[0]
    tap = UnitTestTouch(*view.center)
    tap.is_double_tap = True
    tap.touch_down()
    tap.touch_up()
    assert view._view == pytest.approx(fitted)

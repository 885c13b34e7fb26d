"""Every screen (and every dialog) at every common field screen size: laptops from 800 x 600 to
1920 x 1080, 10-inch tablets at density 2 (1920 x 1200 and 2560 x 1600 pixels give 960 x 600 and
1280 x 800 dp; emulated here by those dp sizes at density 1), and portrait tablets -- with a
visit open, readings saved and findings standing.  At each size the widget tree must pass
:mod:`layout_rules`: text fits, no word broken, nothing overlaps or covers the step bar, targets
>= 48 dp, values >= 24 sp, each figure's name beside its own value.  Where a size cannot hold a
screen, the screen scrolls.

With ``STAKELINE_SCREENSHOTS`` set, every screen is saved at every size
(``<screen>-<width>x<height>.png``; ``-density2`` for the emulated density-2 tablets).
"""

from __future__ import annotations

import os

import pytest

from tests.app.layout_rules import problems

SIZES = {
    "800x600": (800, 600),
    "1024x600": (1024, 600),
    "1024x768": (1024, 768),
    "1280x800": (1280, 800),
    "1366x768": (1366, 768),
    "1920x1080": (1920, 1080),
    "1920x1200-density2": (960, 600),
    "2560x1600-density2": (1280, 800),
    "800x1280": (800, 1280),
    "1200x1920": (1200, 1920),
}
"""Label -> window size in dp (= px at density 1)."""

SCREENS = ("home", "settings", "stakes", "spacing", "readings", "section", "velocity", "surface",
           "checks", "detail")  # fmt: skip

# an invented bed, m down from a line at 100.000; station 3.0 is 0.40 m short (a spike)
READINGS = [0.30, 0.55, 0.80, 1.02, 1.18, 1.30, 0.95, 1.38, 1.40, 1.36, 1.25, 1.10]


@pytest.fixture
def surveyed(ui):
    """A visit on demo section XS1 with stakes, a 21-station plan (so unread stations are
    findings), twelve readings with a spike among them, a note and a water level."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS1 riffle")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0, stake_distance=10.0)
    service.save_plan(visit, [i * 0.5 for i in range(21)])
    for i, reading in enumerate(READINGS):
        service.save_reading(visit, i * 0.5, f"{reading}", note="plumb swung" if i == 6 else "")
    service.record_water_level(visit, "98.85")  # below both ends read so far
    # velocities at two verticals, one of them deep and fast enough to stop wading; a meter;
    # two water-surface points
    meter = service.add_meter("R-7", "rotating", "0.012", "0.648")
    service.save_velocity_point(visit, 2.5, "v06", revolutions_text="20", seconds_text="40",
                                meter_uuid=meter["uuid"])  # fmt: skip
    service.save_velocity_point(visit, 4.0, "v06", "4.0", method="one-point")
    service.save_vertical(visit, 4.0, note="boulder upstream", angle_text="10")
    service.add_water_surface_point(visit, "-20", "98.87")
    service.add_water_surface_point(visit, "25", "98.83")
    service.remember_position(visit, 6.0)
    ui.app.visit_uuid = visit
    return visit


def screenshot(ui, name: str) -> None:
    """Save the window as ``<name>.png`` in STAKELINE_SCREENSHOTS (when set)."""
    folder = os.environ.get("STAKELINE_SCREENSHOTS")
    if not folder:
        return
    os.makedirs(folder, exist_ok=True)
    ui.window.canvas.ask_update()
    ui.window.dispatch("on_draw")
    written = ui.window.screenshot(name=os.path.join(folder, f"{name}.png"))
    os.replace(written, os.path.join(folder, f"{name}.png"))


def settle(ui) -> None:
    """Let the background checks report and the layout settle (wrapped text, then heights)."""
    ui.wait(lambda: ui.app.service.worker.pending == 0)
    ui.frames(6)


def open_dialogs(ui):
    """Each dialog of the readings, velocity and checks screens, opened in turn: yields its
    name."""
    ui.go("readings", station=3.0)
    settle(ui)
    ui.screen.open_note()
    yield "note"
    ui.dialog().dismiss(animation=False)
    ui.screen.open_history()
    yield "history"
    ui.dialog().dismiss(animation=False)
    ui.go("velocity", station=4.0)
    settle(ui)
    ui.screen.open_meters()
    yield "meter"
    ui.dialog().dismiss(animation=False)
    ui.screen.open_note()
    yield "vertical-note"
    ui.dialog().dismiss(animation=False)
    ui.screen.open_history()
    yield "vertical-history"
    ui.dialog().dismiss(animation=False)
    ui.go("checks")
    settle(ui)
    ui.screen.ids.reason.text = "thalweg under ice; read next visit"
    ui.screen.finish()
    yield "finish"
    ui.dialog().dismiss(animation=False)


@pytest.mark.parametrize("label", list(SIZES))
def test_every_screen_fits_every_size(ui, surveyed, label):
    ui.resize(SIZES[label])
    found = []
    for name in SCREENS:
        ui.go(name)
        settle(ui)
        found += [f"{name} at {label}: {p}" for p in problems([ui.screen], ui.window)]
        screenshot(ui, f"{name}-{label}")
    for name in open_dialogs(ui):
        settle(ui)
        roots = [ui.dialog(), ui.screen]
        found += [f"{name} dialog at {label}: {p}" for p in problems(roots[:1], ui.window)]
        screenshot(ui, f"{name}-dialog-{label}")
    assert not found, "\n".join(found)

"""A gauging in a real window with real input: the crew reads the velocities at a riffle's wet
stations -- on the keypad, one on the laptop's keyboard, two points through a rotating meter
added in the meter dialog by typing -- sees the wading warning at the deep fast vertical, levels
the water-surface slope, and finishes the visit.  The store then shows the measured discharge
through the command line (``stakeline measured-rating --json``), equal to the midsection method
worked by hand.

The installed ``stakeline`` runs as its own process on a virtual X screen (1280 x 800, a 16:10
tablet at density 1) with a desktop window manager, resuming a visit whose depths and water
level were read (and two earlier gaugings of the section, so that the rating is fitted).  Input
is only xdotool's clicks and keys.  Screenshots go to STAKELINE_SCREENSHOTS (else a temporary
folder).
"""

from __future__ import annotations

import json
import os
import signal
import time

import pytest

from tests.app.real_window import Desktop, RealApp, missing_tools
from tests.app.test_real_window import cli
from tests.app.test_ui_velocity import BED, LEVEL, midsection

pytestmark = pytest.mark.skipif(
    bool(missing_tools()),
    reason=f"needs {', '.join(missing_tools())} (Debian: xvfb openbox xdotool imagemagick)",
)

SCREEN, SIZE = (1280, 800), "1280x800"
A, B = 0.012, 0.648  # the meter's rating v = a + b·N (invented, of the usual size)


def prepare_store(home) -> str:
    """The device store as the app leaves it after the depths: the demo, two earlier gaugings
    of XS-V, and an open visit with its readings and water level, remembered for resuming."""
    from stakeline.app.service import open_service

    service = open_service(str(home / ".config" / "stakeline"), outbox=str(home / "unused"))
    section = service.create_section("Orrin Brook", "XS-V")
    for day, level in (("2026-05-04", 98.9), ("2026-05-18", 99.05)):
        visit = service.start_visit(section["uuid"], today=day)
        service.save_stakes(visit, line_left=100.0, line_right=100.0)
        for station, bed in BED:
            service.save_reading(visit, float(station), f"{100.0 - bed:.3f}")
        service.record_water_level(visit, f"{level}")
        state = service.gauging_state(visit)
        for vertical in (v for v in state["verticals"] if v["wet"]):
            speed = 0.2 + 0.5 * vertical["depth"]
            service.save_velocity_point(visit, vertical["station"], "v06", f"{speed:.3f}",
                                        method="one-point")  # fmt: skip
        service.finish(visit, service.review(visit), reason="earlier gauging")
    visit = service.start_visit(section["uuid"], today="2026-06-02")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    for station, bed in BED:
        service.save_reading(visit, float(station), f"{100.0 - bed:.3f}")
    service.record_water_level(visit, f"{LEVEL}")
    service.remember_position(visit, 6.0)
    path = service.store.path
    service.close()
    return path


def keypad_value(app: RealApp, text: str) -> None:
    """Type ``text`` on the on-screen keypad and press its enter key."""
    app.keypad(text)
    app.click("key:enter")


def gauge(app: RealApp) -> float:
    """Read the five wet verticals; returns the velocity at 3 m (through the meter)."""
    app.click("tab_velocity")
    app.wait(lambda d: d["screen"] == "velocity" and d["state"].get("station") == 1.0, "1 m")
    keypad_value(app, "0.3")
    app.wait(lambda d: d["state"].get("station") == 2.0, "station 2 m")
    app.type("0.6")  # on the laptop's keyboard: no text field has the keyboard
    app.key("Return")
    app.wait(lambda d: d["state"].get("station") == 3.0, "station 3 m")
    app.click("meter")
    app.wait(lambda d: d["dialog"] == "MeterPopup" and d["focus"] == "serial", "the meter")
    app.type("R-1")
    for value, field in ((f"{A}", "a"), (f"{B}", "b")):
        app.key("Tab")
        app.wait(lambda d, f=field: d["focus"] == f, f"Tab to {field}")
        app.type(value)
    app.screenshot(f"real-meter-{SIZE}")
    app.click("add")
    app.wait(lambda d: d["dialog"] is None and d["state"]["counting"], "the meter chosen")
    assert app.layout()["state"]["meter_text"] == "Meter: R-1"
    for revolutions in ("60", "50"):  # 0.2 depth, then 0.8 depth
        keypad_value(app, revolutions)
        app.wait(lambda d: d["focus"].endswith(":seconds"), "on to the seconds")
        keypad_value(app, "40")
    shown = app.wait(lambda d: d["state"].get("station") == 4.0, "station 4 m")
    assert "DO NOT WADE" in shown["state"]["wading_text"]  # shown at once
    assert "station 3 m" in shown["state"]["wading_text"]
    app.screenshot(f"real-velocity-wading-{SIZE}")
    app.click("meter")
    app.wait(lambda d: d["dialog"] == "MeterPopup", "the meter dialog")
    app.click("meter:none")  # a meter that shows the velocity: typed as read
    app.wait(lambda d: d["dialog"] is None and not d["state"]["counting"], "no meter")
    keypad_value(app, "0.6")
    app.wait(lambda d: d["state"].get("station") == 5.0, "station 5 m")
    keypad_value(app, "0.3")
    app.wait(lambda d: d["message"].startswith("Every wet station has its velocity"), "all read")
    app.screenshot(f"real-velocity-{SIZE}")
    return ((A + B * 60 / 40) + (A + B * 50 / 40)) / 2


def level_the_slope(app: RealApp) -> None:
    app.click("surface")
    app.on("surface")
    for distance, upstream, elevation in (("30", True, "99.305"), ("31", False, "99.094")):
        app.keypad(distance)
        if upstream:
            app.click("key:sign")
        app.click("key:enter")
        app.wait(lambda d: d["focus"] == "elevation_field", "the elevation")
        keypad_value(app, elevation)
        app.wait(lambda d: d["state"].get("tone") == "saved", "the point saved")
    shown = app.wait(lambda d: d["state"].get("slope_text"), "the slope")
    # two points: the slope is their fall over their distance apart
    assert shown["state"]["slope_text"].startswith(f"{(99.305 - 99.094) / 61:.5f} ± ")
    app.screenshot(f"real-surface-{SIZE}")
    app.click("back")
    app.on("velocity")


def finish(app: RealApp) -> None:
    app.click("tab_checks")
    checks = app.wait(lambda d: d["screen"] == "checks" and not d["state"]["running"], "checks")
    assert checks["state"]["blocking"] == 0, checks["state"]["summary"]
    app.screenshot(f"real-checks-gauged-{SIZE}")
    app.click("finish")
    app.wait(lambda d: d["dialog"] == "ConfirmPopup", "the finish summary")
    app.screenshot(f"real-finish-gauged-{SIZE}")
    app.click("confirm")
    app.wait(lambda d: d["state"].get("package_path"), "the package", timeout=30)


def test_a_gauging_by_real_input(tmp_path):
    started = time.monotonic()
    shots = os.environ.get("STAKELINE_SCREENSHOTS") or str(tmp_path / "screenshots")
    os.makedirs(shots, exist_ok=True)
    home = tmp_path / "home"
    home.mkdir()
    store = prepare_store(home)
    with Desktop(SCREEN, tmp_path) as desktop:
        app = RealApp(desktop, home, density=1, shots=shots)
        try:
            resumed = app.start()
            assert resumed["screen"] == "readings"
            v3 = gauge(app)
            level_the_slope(app)
            finish(app)
            app.stop()
        finally:
            app.stop(signal.SIGKILL)
    assert "Traceback" not in app.errors()
    rating = json.loads(cli("measured-rating", "--store", store, "--section", "XS-V", "--json"))
    visits = json.loads(cli("visits", "--store", store, "--json"))
    ours = [v for v in visits if v["section"] == "XS-V" and v["date"] == "2026-06-02"]
    assert len(ours) == 1 and ours[0]["finished"]
    measured = next(m for m in rating["measurements"] if m["visit"] == ours[0]["uuid"])
    expected, _ = midsection({1: 0.3, 2: 0.6, 3: v3, 4: 0.6, 5: 0.3})
    assert measured["discharge"] == pytest.approx(expected, rel=1e-9)
    assert measured["stage"] == pytest.approx(LEVEL)
    assert len(rating["measurements"]) == 3  # with the two earlier gaugings: a rating
    assert measured["slope"] == pytest.approx((99.305 - 99.094) / 61, rel=1e-9)
    assert time.monotonic() - started < 120

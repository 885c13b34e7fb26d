"""A whole survey in a real window with real input, through a hard kill.

The installed ``stakeline`` runs as its own process on a virtual X screen of a 10-inch tablet
(1920 x 1200 pixels at density 2: 960 x 600 dp) with a desktop window manager, on a fresh home
folder, and is driven only by real input events (xdotool: clicks, typed keys, Tab, Enter): a new
section, its stakes, the spacing, readings -- one typed on the keyboard, a note typed on the
keyboard -- then SIGKILL in the middle of the readings (a flat battery).  Started again it resumes;
Checks and Note are the first things tapped; the readings are finished, a water level typed,
the checks run, a spike corrected from its finding, and the visit finished after its summary.
Everything is then checked in the store through the command line (``stakeline visits --json``,
``stakeline export``).  Screenshots go to STAKELINE_SCREENSHOTS (else a temporary folder).
"""

from __future__ import annotations

import csv
import json
import os
import signal
import subprocess
import sys
import time

import pytest
from stakeline.app.service import uniform_stations

from tests.app.real_window import Desktop, RealApp, missing_tools

pytestmark = pytest.mark.skipif(
    bool(missing_tools()),
    reason=f"needs {', '.join(missing_tools())} (Debian: xvfb openbox xdotool imagemagick)",
)

SCREEN = (1920, 1200)
DENSITY = 2
SIZE = "1920x1200-density2"
PLAN = uniform_stations(10.0, 13)  # 0 to 10 m, 13 stations
READ = [0.25, 0.52, 0.80, 1.02, 1.18, 1.30, 0.63, 1.38, 1.35, 1.24, 1.02, 0.66, 0.30]
SPIKE, TRUE_SPIKE = 6, 1.37  # station 6 was read 0.74 m short (the plumb on a boulder)
TYPED_ON_KEYBOARD = 2
NOTE_AT, NOTE = 4, "first read 1.94 - plumb swung"
KILL_AFTER = 8
SECOND_NOTE = "soft mud by the stake"
LEVEL = "99.2"


def cli(*args: str) -> str:
    """Run the ``stakeline`` command line; its output."""
    command = os.path.join(os.path.dirname(sys.executable), "stakeline")
    done = subprocess.run([command, *args], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return done.stdout


def read_station(app: RealApp, index: int, by_keyboard: bool = False) -> None:
    """Enter the reading of station ``index`` and wait until the app moves on."""
    app.wait(lambda d: d["state"].get("station") == PLAN[index], f"station {PLAN[index]}")
    value = f"{READ[index]:.2f}"
    if by_keyboard:
        app.type(value)
        app.key("Return")
    else:
        app.keypad(value)
        app.click("key:enter")
    if index + 1 < len(PLAN):
        app.wait(lambda d: d["state"].get("station") == PLAN[index + 1], "the next station")


def first_run(app: RealApp) -> None:
    home = app.start()
    assert home["screen"] == "home" and home["density"] == DENSITY
    width, height = app.geometry()  # maximised: the whole screen but the title bar
    assert width == SCREEN[0] and SCREEN[1] - 60 <= height <= SCREEN[1]
    assert home["size"] == [width, height]
    assert home["controls"]["site_name"]["text"] == ""  # no demo site offered
    app.screenshot(f"real-home-{SIZE}")
    app.click("site_name")
    app.wait(lambda d: d["focus"] == "site_name", "the site box")
    app.type("Orrin Brook")
    app.key("Tab")
    app.wait(lambda d: d["focus"] == "section_name", "Tab to the section name")
    app.type("XS9 glide")
    app.key("Return")  # Enter submits the new-section form
    app.on("stakes")
    app.click("left_stake")
    app.wait(lambda d: d["focus"] == "left_stake", "the left stake's name")
    app.type("LS9")
    app.key("Tab")
    app.wait(lambda d: d["focus"] == "right_stake", "Tab to the right stake")
    app.type("RS9")  # the default names are selected, so typing replaces them
    stakes = app.wait(lambda d: d["controls"]["right_stake"]["text"] == "RS9", "the names")
    assert stakes["controls"]["left_stake"]["text"] == "LS9"
    app.click("line_left")
    app.wait(lambda d: d["focus"] == "line_left", "the left line height")
    for value, after in (("100.000", "line_right"), ("100.004", "line_check"),
                         ("100.002", "stake_distance"), ("10", None)):  # fmt: skip
        app.type(value)
        if after:
            app.key("Tab")  # moves on, never types into the number
            app.wait(lambda d, a=after: d["focus"] == a, f"Tab to {after}")
    app.screenshot(f"real-stakes-{SIZE}")
    app.click("next")
    app.on("spacing")
    app.click("count")
    app.wait(lambda d: d["focus"] == "count", "the station count")
    app.type("13")  # replaces the 21 shown
    app.key("Return")
    app.wait(lambda d: "Suggested" in d["message"], "the suggested plan")
    app.click("read")
    app.on("readings")
    for index in range(KILL_AFTER):
        if index == NOTE_AT:
            app.click("note")
            app.wait(lambda d: d["dialog"] == "NotePopup" and d["focus"] == "text", "the note")
            app.type(NOTE)
            app.screenshot(f"real-note-{SIZE}")
            app.key("Return")
            app.wait(lambda d: d["dialog"] is None, "the note to close")
            assert app.layout()["keypad"] == ""  # nothing typed in the note reached the reading
        read_station(app, index, by_keyboard=index == TYPED_ON_KEYBOARD)
    app.screenshot(f"real-readings-{SIZE}")
    app.stop(signal.SIGKILL)  # mid-readings, no clean shutdown


def second_run(app: RealApp) -> None:
    resumed = app.start()
    assert resumed["screen"] == "readings"
    assert resumed["state"]["station"] == PLAN[KILL_AFTER]
    app.click("tab_checks")  # the first tap after the restart
    checks = app.wait(lambda d: d["screen"] == "checks" and not d["state"]["running"], "checks")
    assert checks["state"]["blocking"] >= len(PLAN) - KILL_AFTER  # the unread stations
    app.screenshot(f"real-checks-after-restart-{SIZE}")
    app.click("tab_readings")
    app.on("readings")
    app.click("note")
    app.wait(lambda d: d["dialog"] == "NotePopup" and d["focus"] == "text", "the note")
    app.type(SECOND_NOTE)
    app.key("Return")
    app.wait(lambda d: d["dialog"] is None, "the note to close")
    for index in range(KILL_AFTER, len(PLAN)):
        read_station(app, index)
    app.click("tab_section")
    app.on("section")
    app.type(LEVEL)
    app.key("Return")  # Record level
    app.wait(lambda d: d["state"].get("tone") == "saved" and d["state"]["level"] == 99.2, "level")
    app.screenshot(f"real-section-{SIZE}")
    app.click("tab_checks")
    checks = app.wait(lambda d: d["screen"] == "checks" and not d["state"]["running"], "checks")
    spike = next(n for n, c in checks["controls"].items() if "MUST FIX · spike" in c["text"])
    app.screenshot(f"real-checks-{SIZE}")
    app.click(spike)  # the finding opens its station
    app.wait(lambda d: d["screen"] == "readings" and d["state"]["station"] == PLAN[SPIKE], "spike")
    app.keypad(f"{TRUE_SPIKE:.2f}")
    app.click("key:enter")
    app.wait(lambda d: d["message"].startswith(f"Saved {TRUE_SPIKE:.3f}"), "the correction")
    app.click("tab_checks")
    checks = app.wait(lambda d: d["screen"] == "checks" and not d["state"]["running"], "checks")
    assert checks["state"]["blocking"] == 0, checks["state"]["summary"]
    app.click("finish")
    app.wait(lambda d: d["dialog"] == "ConfirmPopup", "the finish summary")
    app.screenshot(f"real-finish-{SIZE}")
    app.click("confirm")
    app.wait(lambda d: d["state"].get("package_path"), "the package", timeout=30)
    app.screenshot(f"real-finished-{SIZE}")
    app.stop()


def test_a_whole_survey_by_real_input_through_a_hard_kill(tmp_path):
    started = time.monotonic()
    shots = os.environ.get("STAKELINE_SCREENSHOTS") or str(tmp_path / "screenshots")
    os.makedirs(shots, exist_ok=True)
    home = tmp_path / "home"
    home.mkdir()
    with Desktop(SCREEN, tmp_path) as desktop:
        app = RealApp(desktop, home, density=DENSITY, shots=shots)
        try:
            first_run(app)
            second_run(app)
        finally:
            app.stop(signal.SIGKILL)
    assert "Traceback" not in app.errors()

    store = home / ".config" / "stakeline" / "stakeline.sqlite"
    visits = json.loads(cli("visits", "--store", str(store), "--json"))
    ours = [v for v in visits if v["site"] == "Orrin Brook"]
    assert len(ours) == 1 and ours[0]["section"] == "XS9 glide"
    assert ours[0]["finished"] and ours[0]["station_count"] == len(PLAN)
    cli("export", "--store", str(store), "--visit", ours[0]["uuid"], "--out", str(tmp_path / "x"))
    stations_csv = next((tmp_path / "x").glob("*.csv"))
    with open(stations_csv, encoding="utf-8") as handle:
        lines = [line for line in handle if not line.startswith("#")]  # custody comment
    rows = {float(r["station"]): r for r in csv.DictReader(lines)}
    expected = list(READ)
    expected[SPIKE] = TRUE_SPIKE
    for station, value in zip(PLAN, expected, strict=True):
        assert float(rows[station]["reading"]) == pytest.approx(value)
    assert rows[PLAN[NOTE_AT]]["note"] == NOTE  # and its reading is not the 1.94 in the note
    assert rows[PLAN[KILL_AFTER]]["note"] == SECOND_NOTE
    outbox = home / "Documents" / "Stakeline outbox"
    assert [p.name for p in outbox.iterdir()] == [os.path.basename(p) for p in outbox.iterdir()]
    packages = list(outbox.iterdir())
    assert len(packages) == 1  # the crew's visit only: no demo visit
    assert json.loads(packages[0].read_text())["manifest"]["visit"] == ours[0]["uuid"]
    assert time.monotonic() - started < 120


def overlaps(controls: dict) -> list[str]:
    """Pairs of controls whose rectangles overlap (window pixels)."""
    boxes = list(controls.items())
    found = []
    for i, (a, p) in enumerate(boxes):
        for b, q in boxes[i + 1 :]:
            dx = min(p["x"] + p["w"], q["x"] + q["w"]) - max(p["x"], q["x"])
            dy = min(p["y"] + p["h"], q["y"] + q["h"]) - max(p["y"], q["y"])
            if dx > 1 and dy > 1:
                found.append(f"{a} overlaps {b}")
    return found


def test_every_screen_in_a_real_4_3_window(tmp_path):
    """A laptop's 1024 x 768 screen at density 1: the window opens maximised, and every
    screen, reached by taps from home, shows its controls inside the window without overlap."""
    shots = os.environ.get("STAKELINE_SCREENSHOTS") or str(tmp_path / "screenshots")
    os.makedirs(shots, exist_ok=True)
    home = tmp_path / "home"
    home.mkdir()
    seen = {}
    with Desktop((1024, 768), tmp_path) as desktop:
        app = RealApp(desktop, home, density=1, shots=shots)
        try:
            layout = app.start()
            width, height = app.geometry()
            assert width == 1024 and 700 <= height <= 768 and layout["size"] == [width, height]
            seen["home"] = layout
            app.screenshot("real-home-1024x768")
            app.click("section:XS1 riffle:choose")  # Start visit on a demo section
            for tab in ("stakes", "spacing", "readings", "section", "velocity", "checks"):
                if tab != "stakes":
                    app.click(f"tab_{tab}")
                seen[tab] = app.wait(
                    lambda d, t=tab: d["screen"] == t and app.settled(d), f"screen {tab}"
                )
                app.screenshot(f"real-{tab}-1024x768")
            app.click("tab_home")
            app.on("home")
            app.click("settings")
            seen["settings"] = app.wait(lambda d: d["screen"] == "settings" and app.settled(d), "s")
            app.screenshot("real-settings-1024x768")
            app.click("home")
            app.on("home")
            app.click("section:XS2 pool:figures")
            seen["detail"] = app.wait(
                lambda d: d["screen"] == "detail" and not d["state"]["running"] and app.settled(d),
                "the office figures",
            )
            app.screenshot("real-detail-1024x768")
        finally:
            app.stop()
    assert "Traceback" not in app.errors()
    for screen, layout in seen.items():
        assert not overlaps(layout["controls"]), (screen, overlaps(layout["controls"]))
        for name, box in layout["controls"].items():
            assert box["x"] >= 0 and box["y"] >= 0, (screen, name)
            assert box["x"] + box["w"] <= width and box["y"] + box["h"] <= height, (screen, name)
            assert min(box["w"], box["h"]) >= 48 or not box["whole"], (screen, name, box)

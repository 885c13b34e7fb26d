"""Entry-path independence: after a restart the app resumes the open visit on Readings, and
whichever screen the crew opens first from there must work -- its styles are loaded at start, not
by the screen that happened to be built first.  Each case is a fresh app process (a real
subprocess: a style loaded by an earlier screen in the same process would hide the fault) that
resumes, opens one screen first and uses its controls by taps, as after a flat battery."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys

import pytest

CHILD = r"""
import sys, time
from kivy.config import Config
Config.set("kivy", "exit_on_escape", "0")
for option in Config.options("input"):
    Config.remove_option("input", option)
from kivy.base import EventLoop, runTouchApp
from kivy.clock import Clock
from kivy.core.window import Window
from kivy.tests.common import UnitTestTouch
from stakeline.app.main import StakelineApp

def frames(n=2):
    for _ in range(n):
        time.sleep(0.002)
        EventLoop.idle()

def wait(condition, what, limit=3000):
    for _ in range(limit):
        if condition():
            return
        frames(1)
    raise SystemExit("timed out waiting for " + what)

def tap(widget):
    assert widget.get_root_window() is not None, widget
    touch = UnitTestTouch(*widget.to_window(*widget.center))
    touch.touch_down(); touch.touch_up(); frames(3)

def dialog():
    from kivy.uix.modalview import ModalView
    return next((w for w in Window.children if isinstance(w, ModalView)), None)

def screen():
    return app.manager.current_screen

def tab(name):
    tap(screen().ids.get("tab_" + name) or next(
        w for w in screen().walk() if getattr(w, "target", None) == name))
    assert app.manager.current == name, app.manager.current

def keys(text):
    found = {k.action: k for k in screen().ids.keypad.walk() if hasattr(k, "action")}
    for ch in text:
        tap(found[ch])

def type_words(field, text):
    field.focus = True
    frames()
    for ch in text:
        Window.dispatch("on_textinput", ch)
    frames()

app = StakelineApp(data_dir=sys.argv[1], animate=False, outbox=sys.argv[2])
app._run_prepare()
runTouchApp(embedded=True)
Clock._max_fps = 0
frames(4)
assert app.manager.current == "readings", app.manager.current  # resumed
first = sys.argv[3]
service = app.service
if first == "readings":
    tap(screen().ids.note)
    wait(lambda: dialog() is not None and dialog().ids.text.focus, "the note dialog")
    type_words(dialog().ids.text, "soft mud")
    tap(dialog().ids.keep)
    wait(lambda: dialog() is None, "the note dialog to close")
    keys("1.05")
    tap({k.action: k for k in screen().ids.keypad.walk() if hasattr(k, "action")}["enter"])
    saved = service.reading_at(app.visit_uuid, 2.0)
    assert (saved["reading"], saved["note"]) == (1.05, "soft mud"), screen().message
    tap(screen().ids.previous)
    tap(screen().ids.history)
    wait(lambda: dialog() is not None, "the history dialog")
    tap(dialog().ids.close)
    wait(lambda: dialog() is None, "the history dialog to close")
elif first == "checks":
    tab("checks")
    wait(lambda: not screen().running, "the checks")
    tap(screen().ids.again)
    wait(lambda: not screen().running, "the checks again")
    type_words(screen().ids.reason, "bank washed out; rest read next visit")
    tap(screen().ids.finish)
    wait(lambda: dialog() is not None, "the finish dialog")
    tap(dialog().ids.confirm)
    wait(lambda: screen().package_path, "the package")
elif first == "stakes":
    tab("stakes")
    tap(screen().ids.line_check)
    keys("100.004")
    tap(screen().ids.save)
    assert screen().tone in ("saved", "flagged"), screen().message
elif first == "spacing":
    tab("spacing")
    tap(screen().ids.suggest)
    assert screen().stations, screen().message
elif first == "section":
    tab("section")
    for _ in screen().ids.keypad.text:
        keys(["back"])
    keys("99.3")
    tap({k.action: k for k in screen().ids.keypad.walk() if hasattr(k, "action")}["enter"])
    recorded = service.visit(app.visit_uuid)["water_levels"]
    assert recorded[-1]["elevation"] == 99.3, screen().message
elif first == "detail":
    tab("section")
    tap(screen().ids.detail)
    assert app.manager.current == "detail"
    wait(lambda: not screen().running, "the office figures")
    tap(next(c for c in screen().ids.chips.children if c.key == "clean-winding"))
    tap(screen().ids.back)
elif first == "velocity":
    tab("velocity")
    # the water stands above the right end read so far: the step says so, nothing breaks
    wait(lambda: service.worker.pending == 0 and "right end" in screen().message, "the state")
    tap(screen().ids.meter)
    wait(lambda: dialog() is not None and dialog().ids.serial.focus, "the meter dialog")
    type_words(dialog().ids.serial, "R-5")
    tap(dialog().ids.cancel)
    wait(lambda: dialog() is None, "the meter dialog to close")
    tap(screen().ids.surface)
    assert app.manager.current == "surface"
    keys("12")
    tap({k.action: k for k in screen().ids.keypad.walk() if hasattr(k, "action")}["enter"])
    keys("99.19")
    tap({k.action: k for k in screen().ids.keypad.walk() if hasattr(k, "action")}["enter"])
    assert len(service.store.water_surface_points(app.visit_uuid)) == 1, screen().message
elif first == "settings":
    tab("home")
    tap(screen().ids.settings)
    chip = next(w for w in screen().walk() if getattr(w, "text", "") == "Feet (ft)")
    tap(chip)
    tap(screen().ids.save)
    assert screen().tone == "saved", screen().message
elif first == "home":
    tab("home")
    type_words(screen().ids.section_name, "XS5 run")
    tap(screen().ids.create)
    assert app.manager.current == "stakes", screen().message
print("USED", first, flush=True)
app.stop()
"""

FIRST_SCREENS = ("readings", "checks", "stakes", "spacing", "section", "velocity", "detail",
                 "settings", "home")  # fmt: skip


@pytest.fixture(scope="module")
def resumable(tmp_path_factory):
    """A device folder whose store has an open visit (stakes, a plan, four readings, a water
    level) remembered at station 2: the app resumes it on start."""
    from stakeline.app.service import open_service

    folder = tmp_path_factory.mktemp("device")
    service = open_service(str(folder), outbox=str(folder / "outbox"))
    section = next(s for s in service.overview() if s["section"] == "XS2 pool")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0, stake_distance=4.0)
    service.save_plan(visit, [i * 0.5 for i in range(9)])
    for i, reading in enumerate([0.3, 0.6, 0.9, 1.0]):
        service.save_reading(visit, i * 0.5, str(reading))
    service.record_water_level(visit, "99.2")
    service.remember_position(visit, 2.0)
    service.close()
    return folder


def test_every_screen_works_when_opened_first_after_a_restart(resumable, tmp_path):
    env = dict(os.environ)
    env["PYTHONPATH"] = os.path.dirname(os.path.dirname(os.path.dirname(__file__)))
    children = {}
    for name in FIRST_SCREENS:  # one fresh process each, all at once
        folder = tmp_path / name
        shutil.copytree(resumable, folder / "device")
        env_one = dict(env, KIVY_HOME=str(folder / "kivy"), XDG_CONFIG_HOME=str(folder / "cfg"))
        children[name] = subprocess.Popen(
            [sys.executable, "-c", CHILD, str(folder / "device"), str(folder / "out"), name],
            env=env_one,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
    failed = []
    for name, child in children.items():
        out, err = child.communicate(timeout=240)
        if child.returncode != 0 or f"USED {name}" not in out:
            tail = "\n".join(line for line in err.splitlines()[-12:])
            failed.append(f"--- {name} first (exit {child.returncode}):\n{tail}")
    assert not failed, "\n".join(failed)

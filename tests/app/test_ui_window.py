"""The window and the app around the screens: it opens maximised (or at the size it had when
the app last closed), a late background result never overwrites a newer one, and the test-only
layout dump names every control with its window rectangle."""

from __future__ import annotations

import json
import os
import time

import pytest
from kivy.config import Config
from stakeline.app.main import WINDOW_FILE, configure_window, remembered_window
from stakeline.app.service import Worker


@pytest.fixture
def graphics_config():
    """Config's graphics section restored after the test (the window already exists)."""
    saved = {key: Config.get("graphics", key) for key in ("width", "height", "window_state")}
    yield
    for key, value in saved.items():
        Config.set("graphics", key, value)


def test_the_window_opens_maximised_then_at_its_last_size(tmp_path, graphics_config):
    configure_window(str(tmp_path))  # first start: nothing remembered
    assert Config.get("graphics", "window_state") == "maximized"
    (tmp_path / WINDOW_FILE).write_text(json.dumps({"size": [1100, 700], "maximized": False}))
    configure_window(str(tmp_path))
    assert (Config.get("graphics", "width"), Config.get("graphics", "height")) == ("1100", "700")
    assert Config.get("graphics", "window_state") == "visible"
    (tmp_path / WINDOW_FILE).write_text(json.dumps({"size": [1100, 700], "maximized": True}))
    configure_window(str(tmp_path))
    assert Config.get("graphics", "window_state") == "maximized"
    (tmp_path / WINDOW_FILE).write_text("not json")  # a damaged file is no reason to fail
    assert remembered_window(str(tmp_path)) is None


def test_the_app_remembers_its_window_when_it_stops(ui, data_dir):
    ui.window.dispatch("on_maximize")
    ui.app.stop()
    ui.frames(1)
    state = remembered_window(data_dir)
    assert state == {"size": list(ui.window.size), "maximized": True}


def test_a_late_result_never_overwrites_a_newer_one(ui):
    worker, shown = Worker(), []
    worker.run(lambda: time.sleep(0.3) or "old", shown.append, key="figures")
    worker.run(lambda: "new", shown.append, key="figures")
    worker.run(lambda: "other screen", shown.append, key="checks")
    ui.wait(lambda: worker.pending == 0, limit=2000)
    assert sorted(shown) == ["new", "other screen"]  # "old" arrived last and was dropped


def test_the_layout_dump_names_every_control(window, data_dir, tmp_path, monkeypatch):
    from kivy.base import EventLoop, runTouchApp
    from stakeline.app.main import StakelineApp

    path = tmp_path / "layout.json"
    monkeypatch.setenv("STAKELINE_DUMP_LAYOUT", str(path))
    app = StakelineApp(data_dir=data_dir, animate=False, outbox=str(tmp_path / "out"))
    app._run_prepare()
    runTouchApp(embedded=True)
    try:
        for _ in range(30):
            time.sleep(0.02)
            EventLoop.idle()
        home = json.loads(path.read_text())
        assert home["screen"] == "home" and home["size"] == list(window.size)
        for name in ("site_name", "section_name", "create", "settings"):
            box = home["controls"][name]
            assert box["w"] >= 48 and box["h"] >= 48
            assert 0 <= box["x"] and box["x"] + box["w"] <= window.size[0]
        assert "section:XS1 riffle:choose" in home["controls"]
        section = next(s for s in app.service.overview() if s["section"] == "XS2 pool")
        app.open_visit(app.service.start_visit(section["section_uuid"]), "readings")
        for _ in range(30):
            time.sleep(0.02)
            EventLoop.idle()
        readings = json.loads(path.read_text())
        assert readings["screen"] == "readings" and readings["sequence"] > home["sequence"]
        for name in ("key:7", "key:enter", "tab_checks", "note", "history", "chip:Bank top"):
            assert name in readings["controls"], name
    finally:
        app.stop()
        EventLoop.idle()
    assert os.path.exists(path)

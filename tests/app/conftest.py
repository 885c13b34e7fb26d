"""Fixtures for the headless UI tests: one window for the whole session, a fresh app per test.

Follows ../shared/KIVY-TESTING.md: the environment comes from tests/conftest.py; the window is
created once at 1920x1920 (the offscreen surface does not grow later, and the tallest size the
layout test tries is a 1200x1920 portrait tablet) and resized within it; it is never closed; each
app is stopped in teardown; NoTransition; ``Clock._max_fps = 0`` so frames do not sleep.  The
default outbox (the user's documents) is a temporary folder here.
"""

from __future__ import annotations

import os
import tempfile
import time

import pytest

LANDSCAPE = (1280, 800)
PORTRAIT = (800, 1280)
LAPTOP = (1920, 1080)


def _configure_kivy() -> None:
    from kivy.config import Config

    Config.set("graphics", "width", "1920")
    Config.set("graphics", "height", "1920")
    Config.set("kivy", "exit_on_escape", "0")
    if Config.has_section("input"):
        for option in Config.options("input"):
            Config.remove_option("input", option)


_configure_kivy()
os.environ["XDG_DOCUMENTS_DIR"] = tempfile.mkdtemp(prefix="stakeline-documents-")


class Driver:
    """Drives the running app the way a crew would: taps, keypad presses, physical keys."""

    def __init__(self, app, window):
        self.app = app
        self.window = window
        self._last_screen = None

    def frames(self, count: int = 2) -> None:
        """Advance the event loop ``count`` frames."""
        from kivy.base import EventLoop

        for _ in range(count):
            EventLoop.idle()

    @property
    def screen(self):
        """The screen shown now."""
        return self.app.manager.current_screen

    def tap(self, widget, settle: bool = True) -> None:
        """Touch down and up at the centre of ``widget`` (as a finger would); ``settle`` runs a
        frame afterwards (a frame redraws the window: slow on the software renderer)."""
        from kivy.tests.common import UnitTestTouch
        from kivy.uix.scrollview import ScrollView

        if self.screen is not self._last_screen:  # let a screen just shown lay itself out
            self.frames(2)
            self._last_screen = self.screen
        assert widget.get_root_window() is not None, f"{widget} is not on screen"
        parent = widget.parent
        while parent is not None and not isinstance(parent, ScrollView):
            parent = (
                None if parent.parent is parent else parent.parent
            )  # the window is its own parent
        if parent is not None:  # scroll it into view first, as a person would
            parent.scroll_to(widget, padding=10, animate=False)
            self.frames(2)
        touch = UnitTestTouch(*widget.to_window(*widget.center))
        touch.touch_down()
        touch.touch_up()
        if settle:
            self.frames(1)

    def drag(self, widget, start, end, steps: int = 5) -> None:
        """Drag one finger from ``start`` to ``end`` (window pixels) across ``widget``."""
        from kivy.tests.common import UnitTestTouch

        touch = UnitTestTouch(*start)
        touch.touch_down()
        for i in range(1, steps + 1):
            x = start[0] + (end[0] - start[0]) * i / steps
            y = start[1] + (end[1] - start[1]) * i / steps
            touch.touch_move(x, y)
            self.frames(1)
        touch.touch_up()
        self.frames(1)

    def keypad(self, text: str, screen=None) -> None:
        """Tap the on-screen keypad keys for ``text`` (digits and '.'), or one named key
        (``back``, ``clear``, ``sign``, ``enter``)."""
        screen = screen or self.screen
        keys = {k.action: k for k in screen.ids.keypad.walk() if hasattr(k, "action")}
        for action in [text] if text in keys else text:
            self.tap(keys[action], settle=False)  # keys do not move: one frame at the end
        self.frames(1)

    def texts(self, screen=None) -> str:
        """All the text shown by the labels and buttons of a screen, one per line."""
        from kivy.uix.label import Label

        screen = screen or self.screen
        return "\n".join(w.text for w in screen.walk() if isinstance(w, Label))

    def enter(self, screen=None) -> None:
        """Tap the keypad's enter key."""
        screen = screen or self.screen
        keys = {k.action: k for k in screen.ids.keypad.walk() if hasattr(k, "action")}
        self.tap(keys["enter"])

    def dialog(self, kind: str | None = None):
        """The dialog open on top of the screen (of class ``kind`` when given), or None."""
        from kivy.uix.modalview import ModalView

        return next(
            (
                w
                for w in self.window.children
                if isinstance(w, ModalView) and (kind is None or type(w).__name__ == kind)
            ),
            None,
        )

    def confirm(self) -> None:
        """Tap the confirming button of the open confirmation dialog (after looking at it)."""
        popup = self.dialog("ConfirmPopup")
        assert popup is not None, "no confirmation was asked"
        self.frames(2)
        self.tap(popup.ids.confirm)
        self.wait(lambda: popup.parent is None)

    def go(self, name: str, **options) -> None:
        """Show a screen the way the step bar does, and let it lay out."""
        self.app.go(name, **options)
        self.frames(2)

    def key(self, key: int, codepoint: str | None = None) -> None:
        """Press a physical key (as on a laptop)."""
        self.window.dispatch("on_key_down", key, 0, codepoint, [])
        self.window.dispatch("on_key_up", key, 0)
        self.frames(1)

    def press(self, key: int, codepoint: str | None = None, modifiers=()) -> None:
        """One physical key as SDL delivers it: key down (then ``on_keyboard`` when nothing
        took it), the typed character, key up."""
        if not self.window.dispatch("on_key_down", key, 0, codepoint, list(modifiers)):
            self.window.dispatch("on_keyboard", key, 0, codepoint, list(modifiers))
        if codepoint:
            self.window.dispatch("on_textinput", codepoint)
        self.window.dispatch("on_key_up", key, 0)
        self.frames(1)

    def type_keys(self, text: str) -> None:
        """Type ``text`` on the physical keyboard, one key per character."""
        for ch in text:
            self.press(ord(ch.lower()), ch, ["shift"] if ch.isupper() else [])

    def type_text(self, text_input, text: str) -> None:
        """Focus a TextInput and type into it."""
        text_input.focus = True
        self.frames(1)
        for ch in text:
            self.window.dispatch("on_textinput", ch)
        text_input.focus = False
        self.frames(1)

    def wait(self, condition, limit: int = 400) -> None:
        """Advance frames until ``condition()`` is true (background work reports on the clock)."""
        for _ in range(limit):
            if condition():
                return
            time.sleep(0.002)  # a real frame loop sleeps too: lets the worker thread run
            self.frames(1)
        raise AssertionError("condition not met in time")

    def resize(self, size) -> None:
        """Resize the window and let the layout settle."""
        self.window.size = size
        self.frames(8)  # wrapped text, then its height, then the layout: a few passes

    def screenshot(self, name: str) -> None:
        """When STAKELINE_SCREENSHOTS names a folder, save this screen in landscape and portrait."""
        folder = os.environ.get("STAKELINE_SCREENSHOTS")
        if not folder:
            return
        os.makedirs(folder, exist_ok=True)
        before = tuple(self.window.size)
        for label, size in (("landscape", LANDSCAPE), ("portrait", PORTRAIT)):
            self.resize(size)
            self.window.canvas.ask_update()
            self.window.dispatch("on_draw")
            self.window.screenshot(name=os.path.join(folder, f"{name}-{label}.png"))
        self.resize(before)


@pytest.fixture(scope="session")
def window():
    """The one Kivy window of the test session (never closed)."""
    from kivy.clock import Clock
    from kivy.core.window import Window
    from kivy.metrics import dp

    assert dp(10) > 0
    Clock._max_fps = 0
    Window.size = LANDSCAPE
    return Window


@pytest.fixture
def data_dir(tmp_path):
    """A fresh folder for the app's store and outbox."""
    folder = tmp_path / "device"
    folder.mkdir()
    return str(folder)


@pytest.fixture
def ui(window, data_dir, tmp_path, monkeypatch):
    """The Stakeline app running on a fresh store (with the demo survey), driven by a Driver;
    its default outbox is in a fresh documents folder."""
    from kivy.base import runTouchApp
    from stakeline.app.main import StakelineApp

    monkeypatch.setenv("XDG_DOCUMENTS_DIR", str(tmp_path / "documents"))
    window.size = LANDSCAPE
    app = StakelineApp(data_dir=data_dir, animate=False)
    app._run_prepare()
    runTouchApp(embedded=True)
    driver = Driver(app, window)
    driver.frames(3)
    yield driver
    app.stop()
    driver.frames(1)

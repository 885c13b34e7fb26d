"""The Stakeline touch app: a screen manager over the field screens, on the device's store.

``run_app()`` starts it (``stakeline`` with no arguments, or ``python -m app``).  Screens are
built the first time they are shown, so the cold start only builds the home screen.  An
unfinished visit that was open when the app stopped (or the tablet died) is resumed at the station
being read.
"""

from __future__ import annotations

import importlib
import os

from kivy.app import App
from kivy.core.window import Window
from kivy.properties import ObjectProperty, StringProperty
from kivy.uix.screenmanager import NoTransition, ScreenManager, SlideTransition
from stakeline.app import theme

SCREENS = ("home", "settings", "stakes", "spacing", "readings", "section", "checks", "detail")
"""Screen names; each is ``app/screens/<name>.py`` with a ``<Name>Screen`` class and a .kv."""


def data_folder(app: App) -> str:
    """The app's data folder, with its parent created first (Kivy's own mkdir is not recursive).

    On Linux Kivy puts it in ``$XDG_CONFIG_HOME`` (or ``~/.config``), which may not exist yet on
    a fresh machine; elsewhere (Android, macOS, Windows) the platform folder already exists.
    """
    from kivy.utils import platform

    if platform == "linux":
        base = os.environ.get("XDG_CONFIG_HOME") or os.path.expanduser("~/.config")
        os.makedirs(base, exist_ok=True)
    return app.user_data_dir


class StakelineApp(App):
    """The field app.  ``data_dir`` overrides the folder of the store (tests, benchmarks)."""

    title = "Stakeline"
    visit_uuid = StringProperty("")
    service = ObjectProperty(None, allownone=True)

    def __init__(self, data_dir: str | None = None, animate: bool = True, **kwargs):
        super().__init__(**kwargs)
        self.data_dir = data_dir
        self.animate = animate

    def build(self):
        """Open the store, build the screen manager and show home (or resume an open visit)."""
        from stakeline.app.service import open_service

        Window.clearcolor = theme.PAPER
        self.service = open_service(self.data_dir or data_folder(self))
        transition = SlideTransition(duration=0.15) if self.animate else NoTransition()
        self.manager = ScreenManager(transition=transition)
        Window.bind(on_key_down=self._on_key_down)
        resume = self.service.resume_point()
        if resume is not None:
            self.visit_uuid = resume[0]
            self.go("readings", station=resume[1])
        else:
            self.go("home")
        return self.manager

    def screen(self, name: str):
        """The screen called ``name``, built on first use."""
        if not self.manager.has_screen(name):
            module = importlib.import_module(f"stakeline.app.screens.{name}")
            screen_class = getattr(module, f"{name.capitalize()}Screen")
            self.manager.add_widget(screen_class(name=name))
        return self.manager.get_screen(name)

    def go(self, name: str, **options) -> None:
        """Show a screen; ``options`` are handed to its ``prepare(**options)`` first."""
        if name not in SCREENS:
            raise ValueError(f"no screen called {name!r}")
        if name not in ("home", "settings") and not self.visit_uuid:
            name = "home"
        screen = self.screen(name)
        screen.prepare(**options)
        self.manager.current = name

    def open_visit(self, visit_uuid: str, screen: str = "stakes") -> None:
        """Make ``visit_uuid`` the visit being worked on and show one of its screens."""
        self.visit_uuid = visit_uuid
        self.go(screen)

    def close_visit(self) -> None:
        """Leave the visit (after finishing) and go home."""
        self.visit_uuid = ""
        self.go("home")

    def _on_key_down(self, _window, key, _scancode, codepoint, _modifiers):
        """Forward physical keys to the screen shown; Escape / Android back goes home."""
        if key == 27:
            if self.manager.current != "home":
                self.go("home")
            return True
        handler = getattr(self.manager.current_screen, "on_key", None)
        return bool(handler and handler(key, codepoint))

    def on_pause(self):
        """Keep running when the tablet switches apps (every reading is already saved); fold the
        store's journal into its file first, in case the system then kills the app."""
        if self.service is not None:
            self.service.checkpoint()
        return True

    def on_stop(self):
        """Checkpoint the store's journal and close the store cleanly."""
        Window.unbind(on_key_down=self._on_key_down)
        if self.service is not None:
            self.service.worker.cancelled = True
            self.service.checkpoint()
            self.service.close()
            self.service = None


def run_app() -> int:
    """Start the touch app; returns the exit code."""
    StakelineApp().run()
    return 0

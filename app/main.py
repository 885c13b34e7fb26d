"""The Stakeline touch app: a screen manager over the field screens, on the device's store.

``run_app()`` starts it (``stakeline`` with no arguments, or ``python -m stakeline.app``): the
window opens maximised on a laptop -- or at the size it had when the app last closed -- and full
screen on a tablet.  Every style is loaded once at start (:func:`stakeline.app.widgets.load_styles`);
screens are built the first time they are shown.  An unfinished visit that was open when the app
stopped (or the tablet died) is resumed at the station being read.

Physical keys (:meth:`StakelineApp.on_key_down`) go only to where a person types: an open dialog
takes them all; a focused text field types them; otherwise the screen shown gets them (its number
fields and keypad).  Tab / Shift-Tab move between fields, Escape closes a dialog or goes home.

``STAKELINE_DUMP_LAYOUT=path`` (tests) makes the app write the window rectangle of every named
control as JSON whenever what is shown changes (see :mod:`stakeline.app.widgets.layout_dump`).
"""

from __future__ import annotations

import importlib
import json
import os

from kivy.app import App
from kivy.properties import ObjectProperty, StringProperty
from stakeline.app import theme

SCREENS = ("home", "settings", "stakes", "spacing", "readings", "section", "velocity", "surface",
           "checks", "detail")  # fmt: skip
"""Screen names; each is ``app/screens/<name>.py`` with a ``<Name>Screen`` class and a .kv."""

WINDOW_FILE = "window.json"
"""File in the data folder remembering the window's size when the app last closed."""

KEY_ESCAPE, KEY_TAB = 27, 9


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


def remembered_window(folder: str) -> dict | None:
    """The window state saved in ``folder`` when the app last closed (``{"size": [w, h],
    "maximized": bool}``), or ``None`` when there is none (or it cannot be read)."""
    try:
        with open(os.path.join(folder, WINDOW_FILE), encoding="utf-8") as handle:
            state = json.load(handle)
        width, height = (int(v) for v in state["size"])
    except (OSError, ValueError, KeyError, TypeError):
        return None
    if width < 320 or height < 240:
        return None
    return {"size": [width, height], "maximized": bool(state.get("maximized"))}


def configure_window(folder: str) -> None:
    """Set how the window opens, before Kivy creates it: full screen on a tablet; on a laptop
    at the size it had when the app last closed, else maximised."""
    from kivy.config import Config
    from kivy.utils import platform

    Config.set("kivy", "exit_on_escape", "0")  # Escape closes a dialog or goes home instead
    if platform in ("android", "ios"):
        Config.set("graphics", "fullscreen", "auto")
        return
    state = remembered_window(folder)
    if state is None or state["maximized"]:
        Config.set("graphics", "window_state", "maximized")
    else:
        Config.set("graphics", "width", str(state["size"][0]))
        Config.set("graphics", "height", str(state["size"][1]))
        Config.set("graphics", "window_state", "visible")


class StakelineApp(App):
    """The field app.  ``data_dir`` overrides the folder of the store (tests, benchmarks);
    ``outbox`` the default folder of finished packages (else the user's documents)."""

    title = "Stakeline"
    visit_uuid = StringProperty("")
    service = ObjectProperty(None, allownone=True)

    def __init__(
        self, data_dir: str | None = None, animate: bool = True, outbox: str | None = None, **kw
    ):
        super().__init__(**kw)
        self.data_dir = data_dir
        self.animate = animate
        self.outbox = outbox
        self.maximized = False
        self._dump = None

    def folder(self) -> str:
        """The folder of the device store."""
        return self.data_dir or data_folder(self)

    def build(self):
        """Load every style, open the store, build the screen manager and show home (or resume
        an open visit)."""
        from kivy.core.window import Window
        from kivy.uix.screenmanager import NoTransition, ScreenManager, SlideTransition
        from stakeline.app.service import open_service
        from stakeline.app.widgets import load_styles

        load_styles()
        Window.clearcolor = theme.PAPER
        self.service = open_service(self.folder(), outbox=self.outbox)
        transition = SlideTransition(duration=0.15) if self.animate else NoTransition()
        self.manager = ScreenManager(transition=transition)
        Window.bind(on_key_down=self.on_key_down)
        Window.bind(on_maximize=self._on_maximize, on_restore=self._on_restore)
        if os.environ.get("STAKELINE_DUMP_LAYOUT"):
            from stakeline.app.widgets.layout_dump import LayoutDump

            self._dump = LayoutDump(self, os.environ["STAKELINE_DUMP_LAYOUT"])
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

    def open_settings(self, *_args) -> bool:
        """F1 (Kivy's settings key) shows Stakeline's own settings screen."""
        self.go("settings")
        return True

    # --- keys ------------------------------------------------------------------------------------
    def dialog(self):
        """The dialog open on top of the screen, or ``None``."""
        from kivy.core.window import Window
        from kivy.uix.modalview import ModalView

        return next((w for w in Window.children if isinstance(w, ModalView)), None)

    def typing_field(self):
        """The text field that has the keyboard focus (on the screen or in a dialog), or None."""
        from kivy.core.window import Window
        from kivy.uix.textinput import TextInput

        for child in Window.children:
            for widget in child.walk(restrict=True):
                if isinstance(widget, TextInput) and widget.focus:
                    return widget
        return None

    def on_key_down(self, _window, key, _scancode, codepoint, modifiers):
        """Route one physical key press (see the module docstring); True when it was used."""
        dialog = self.dialog()
        if key == KEY_ESCAPE:
            if dialog is not None:
                dialog.cancel()
            elif self.manager.current != "home":
                self.go("home")
            return True
        if key == KEY_TAB:
            backwards = "shift" in (modifiers or ())
            if dialog is not None:
                _move_focus_in(dialog, backwards)
            else:
                self.manager.current_screen.move_focus(backwards)
            return True
        if self.typing_field() is not None:
            return False  # the focused text field types it (Enter: its form's submit)
        if dialog is not None:
            return dialog.on_key(key, codepoint) if hasattr(dialog, "on_key") else True
        return bool(self.manager.current_screen.on_key(key, codepoint))

    # --- window and lifecycle --------------------------------------------------------------------
    def _on_maximize(self, *_args) -> None:
        self.maximized = True

    def _on_restore(self, *_args) -> None:
        self.maximized = False

    def remember_window(self) -> None:
        """Save the window's size (and whether it is maximised) for the next start."""
        from kivy.core.window import Window
        from kivy.utils import platform

        if platform in ("android", "ios"):
            return
        state = {"size": [int(Window.size[0]), int(Window.size[1])], "maximized": self.maximized}
        try:
            with open(os.path.join(self.folder(), WINDOW_FILE), "w", encoding="utf-8") as handle:
                json.dump(state, handle)
        except OSError:
            pass  # a size not remembered is no loss: the next start opens maximised

    def on_pause(self):
        """Keep running when the tablet switches apps (every reading is already saved); fold the
        store's journal into its file first, in case the system then kills the app."""
        if self.service is not None:
            self.service.checkpoint()
        return True

    def on_stop(self):
        """Remember the window, checkpoint the store's journal and close the store cleanly."""
        from kivy.core.window import Window

        Window.unbind(on_key_down=self.on_key_down)
        Window.unbind(on_maximize=self._on_maximize, on_restore=self._on_restore)
        if self._dump is not None:
            self._dump.stop()
        if self.service is not None:
            self.remember_window()
            self.service.worker.cancelled = True
            self.service.checkpoint()
            self.service.close()
            self.service = None


def _move_focus_in(dialog, backwards: bool) -> None:
    """Tab inside a dialog: the next (or previous) of its text fields takes the keyboard."""
    from stakeline.app.screens.base import fields_in

    fields = fields_in(dialog)
    if not fields:
        return
    current = next((f for f in fields if getattr(f, "focus", False)), None)
    index = fields.index(current) + (-1 if backwards else 1) if current in fields else 0
    for field in fields:
        field.focus = False
    fields[index % len(fields)].focus = True


def run_app() -> int:
    """Start the touch app; returns the exit code."""
    app = StakelineApp()
    configure_window(data_folder(app))
    app.run()
    return 0

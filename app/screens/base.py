"""What every Stakeline screen shares: the running app, its service, a one-line message.

A screen shows properties and calls one service method per action; ``prepare(**options)`` runs
before it is shown, ``refresh()`` reloads what it shows from the service.
"""

from __future__ import annotations

from kivy.app import App
from kivy.properties import StringProperty
from kivy.uix.screenmanager import Screen
from stakeline.app.service import ServiceError
from stakeline.app.widgets.keypad import key_action
from stakeline.errors import SurveyError


class BaseScreen(Screen):
    """A screen with a message line (``message``, ``tone`` in none/saved/unsaved/flagged)."""

    message = StringProperty("")
    tone = StringProperty("none")

    @property
    def app(self):
        """The running :class:`stakeline.app.main.StakelineApp`."""
        return App.get_running_app()

    @property
    def service(self):
        """The app's :class:`stakeline.app.service.FieldService`."""
        return self.app.service

    @property
    def visit(self) -> str:
        """Uuid of the visit being worked on ("" on home and settings)."""
        return self.app.visit_uuid

    def prepare(self, **_options) -> None:
        """Called before the screen is shown; reloads it."""
        self.message, self.tone = "", "none"
        self.refresh()

    def refresh(self) -> None:
        """Reload what the screen shows from the service."""

    def say(self, message: str, tone: str = "none") -> None:
        """Show a one-line message in a state colour."""
        self.message, self.tone = message, tone

    def attempt(self, action, *args, **kwargs):
        """Run a service call; a problem the crew can fix is shown as a message, not raised."""
        try:
            return action(*args, **kwargs)
        except (ServiceError, SurveyError, ValueError) as exc:
            self.say(str(exc), "flagged")
            return None


class KeypadScreen(BaseScreen):
    """A screen whose number fields are typed with the on-screen keypad (``ids.keypad``)."""

    active_field = None

    def activate(self, field) -> None:
        """Make ``field`` the keypad's target."""
        if self.active_field is not None:
            self.active_field.active = False
        self.active_field = field
        field.active = True
        self.ids.keypad.text = field.text

    def on_keypad_text(self, text: str) -> None:
        """Copy the keypad's text into the active field."""
        if self.active_field is not None and self.active_field.text != text:
            self.active_field.text = text
            self.on_field_edited(self.active_field)

    def on_field_edited(self, field) -> None:
        """A field changed by typing (screens mark themselves unsaved)."""

    def on_key(self, key: int, codepoint: str | None) -> bool:
        """Physical keyboard: digits, point, Backspace, Enter go to the keypad."""
        action = key_action(key, codepoint)
        if action is None or self.active_field is None and action != "enter":
            return False
        if self._text_input_focused():
            return False
        self.ids.keypad.press(action)
        return True

    def _text_input_focused(self) -> bool:
        from kivy.uix.textinput import TextInput

        return any(isinstance(w, TextInput) and w.focus for w in self.walk())


def field_number(field) -> float | None:
    """The number typed in a :class:`stakeline.app.widgets.common.NumberField` (``None`` when empty)."""
    from stakeline.app.service import parse_number

    text = field.text.strip()
    return None if not text else parse_number(text, field.caption)


def show_number(value: float | None, decimals: int = 3) -> str:
    """Text for a number field: ``""`` for ``None``, else the value with ``decimals`` places."""
    return "" if value is None else f"{value:.{decimals}f}"

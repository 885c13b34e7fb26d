"""What every Stakeline screen shares: the running app, its service, a one-line message, and
where the keyboard types.

A screen shows properties and calls one service method per action; ``prepare(**options)`` runs
before it is shown, ``refresh()`` reloads what it shows from the service.

Keys (see :meth:`stakeline.app.main.StakelineApp.on_key_down`): a focused text field takes the
keys it types; otherwise the screen's ``on_key`` gets them, and on a keypad screen they go to
the active number field.  Tab and Shift-Tab move through the screen's fields in order, text and
number fields alike, scrolling the next one into view.
"""

from __future__ import annotations

from kivy.app import App
from kivy.metrics import dp
from kivy.properties import BooleanProperty, ColorProperty, NumericProperty, StringProperty
from kivy.uix.screenmanager import Screen
from kivy.uix.scrollview import ScrollView
from kivy.uix.textinput import TextInput
from stakeline.app import theme
from stakeline.app.service import ServiceError
from stakeline.app.widgets.common import NumberField
from stakeline.app.widgets.keypad import key_action
from stakeline.errors import SurveyError


def shown(widget) -> bool:
    """True when ``widget`` and all its parents are visible and have a size."""
    node = widget
    while node is not None:
        if node.opacity == 0 or node.height <= 0 or node.width <= 0:
            return False
        if node.parent is node:  # the window is its own parent
            break
        node = node.parent
    return True


def fields_in(root) -> list:
    """The text and number fields under ``root`` a person can type into, in screen order."""
    return [
        w
        for w in root.walk(restrict=True)
        if isinstance(w, (TextInput, NumberField)) and not w.disabled and shown(w)
    ]


def scroll_into_view(widget) -> None:
    """Scroll the nearest scrolling list around ``widget`` so that it shows."""
    parent = widget.parent
    while parent is not None and parent is not parent.parent:
        if isinstance(parent, ScrollView):
            if parent.do_scroll_y:
                parent.scroll_to(widget, padding=10, animate=False)
            return
        parent = parent.parent


class BaseScreen(Screen):
    """A screen with a message line (``message``, ``tone`` in none/saved/unsaved/flagged)."""

    message = StringProperty("")
    tone = StringProperty("none")
    message_colour = ColorProperty(theme.INK_SOFT)
    """Colour of the message line, from its tone."""

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

    def on_tone(self, *_args) -> None:
        """The message takes its tone's colour."""
        self.message_colour = theme.STATE_COLOURS.get(self.tone, theme.INK)

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

    # --- keyboard ------------------------------------------------------------------------------
    def on_key(self, key: int, codepoint: str | None) -> bool:
        """A physical key no text field took; True when the screen used it."""
        return False

    def focused_field(self):
        """The field the keyboard types into now: a focused text field, else the active
        number field (``None`` when there is neither)."""
        return next(
            (
                w
                for w in fields_in(self)
                if getattr(w, "focus", False) or getattr(w, "active", False)
            ),
            None,
        )

    def focus(self, field) -> None:
        """Send the keyboard to ``field`` (a text or number field) and show it."""
        for other in fields_in(self):
            if isinstance(other, TextInput) and other is not field:
                other.focus = False
        scroll_into_view(field)
        if isinstance(field, TextInput):
            self.deactivate()
            field.focus = True
        else:
            self.activate(field)

    def move_focus(self, backwards: bool = False) -> bool:
        """Tab: the next (or previous) field of the screen; True when there was one."""
        fields = fields_in(self)
        if not fields:
            return False
        current = self.focused_field()
        step = -1 if backwards else 1
        if current in fields:
            index = (fields.index(current) + step) % len(fields)
        else:
            index = -1 if backwards else 0
        self.focus(fields[index])
        return True

    def activate(self, field) -> None:
        """Make a number field the keypad's target (screens with a keypad)."""

    def deactivate(self) -> None:
        """No number field is the keypad's target (a text field has the keyboard)."""


class KeypadScreen(BaseScreen):
    """A screen whose number fields are typed with the on-screen keypad (``ids.keypad``).

    In landscape the keypad and its fields stand at the side, ``side_width`` wide; in portrait
    (``portrait``: taller than wide) they go below.  ``SIDE`` is the side's share of the width
    and its least and greatest width in dp.
    """

    active_field = None
    portrait = BooleanProperty(False)
    side_width = NumericProperty(380)
    SIDE = (0.38, 330, 480)

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.fbind("size", self.follow_shape)

    def follow_shape(self, *_args) -> None:
        """Follow the window's shape: portrait or landscape, and the keypad side's width."""
        share, least, most = self.SIDE
        self.portrait = self.height > self.width
        self.side_width = min(max(share * self.width, dp(least)), dp(most))

    def activate(self, field) -> None:
        """Make ``field`` the keypad's target and show it."""
        for other in fields_in(self):
            if isinstance(other, TextInput):
                other.focus = False
        if self.active_field is not None:
            self.active_field.active = False
        self.active_field = field.proxy_ref  # one object for a field, as in ``ids``
        field.active = True
        keypad = self.ids.keypad
        keypad.text = field.text
        keypad.fresh = field.selected = bool(field.text)  # typing replaces the value shown
        scroll_into_view(field)

    def deactivate(self) -> None:
        """A text field has the keyboard: no number field shows as the keypad's target."""
        if self.active_field is not None:
            self.active_field.active = self.active_field.selected = False

    def on_keypad_text(self, text: str) -> None:
        """Copy the keypad's text into the active field."""
        field = self.active_field
        if field is None:
            return
        if not field.active:  # typed on the keypad after a text field had the keyboard
            self.activate(field)
        field.selected = self.ids.keypad.fresh
        if field.text != text:
            field.text = text
            self.on_field_edited(field)

    def on_field_edited(self, field) -> None:
        """A field changed by typing (screens mark themselves unsaved)."""

    def on_key(self, key: int, codepoint: str | None) -> bool:
        """Physical keyboard: digits, point, Backspace, Enter go to the keypad."""
        action = key_action(key, codepoint)
        if action is None or self.active_field is None and action != "enter":
            return False
        if self.active_field is not None and not self.active_field.active and action != "enter":
            self.activate(self.active_field)
        self.ids.keypad.press(action)
        return True


def field_number(field) -> float | None:
    """The number typed in a :class:`stakeline.app.widgets.common.NumberField` (``None`` when empty)."""
    from stakeline.app.service import parse_number

    text = field.text.strip()
    return None if not text else parse_number(text, field.caption)


def show_number(value: float | None, decimals: int = 3) -> str:
    """Text for a number field: ``""`` for ``None``, else the value with ``decimals`` places."""
    return "" if value is None else f"{value:.{decimals}f}"

"""Stakeline's numeric keypad: big keys for gloves, no system keyboard, laptop keys work too.

The keypad edits its ``text`` (a number as typed) and fires ``on_enter`` when the crew presses
its enter key (or Enter / keypad Enter on a physical keyboard).  ``key_action`` maps a physical
key to the same actions so screens can forward ``Window.on_key_down`` to :meth:`Keypad.press`.
"""

from __future__ import annotations

from kivy.properties import BooleanProperty, StringProperty
from kivy.uix.boxlayout import BoxLayout
from stakeline.app.widgets import common  # noqa: F401  (registers BigButton, used by keypad.kv)

MAX_CHARACTERS = 10
"""Longest number the keypad accepts (sign, digits and point)."""

_KEYPAD_DIGITS = {256 + i: str(i) for i in range(10)}  # SDL keypad 0..9
_ENTER_KEYS = {13, 271}  # Return, keypad Enter
_BACK_KEYS = {8, 127}  # Backspace, Delete


def key_action(key: int, codepoint: str | None) -> str | None:
    """The keypad action for a physical key press, or ``None`` when the key is not ours.

    Digits give the digit, ``.`` and ``,`` give ``"."`` (a decimal comma is a point here),
    ``-`` gives ``"sign"``, Backspace/Delete ``"back"``, Enter ``"enter"``.
    """
    if key in _ENTER_KEYS:
        return "enter"
    if key in _BACK_KEYS:
        return "back"
    if key in _KEYPAD_DIGITS:
        return _KEYPAD_DIGITS[key]
    if key == 266:  # keypad period
        return "."
    if key == 269:  # keypad minus
        return "sign"
    if codepoint and codepoint in "0123456789":
        return codepoint
    if codepoint in (".", ","):
        return "."
    if codepoint == "-":
        return "sign"
    return None


def edit_number(text: str, action: str, allow_negative: bool = True) -> str:
    """Apply one keypad action to the typed number ``text`` and return the new text.

    >>> edit_number("1.2", "5"), edit_number("1.2", "."), edit_number("1.2", "back")
    ('1.25', '1.2', '1.')
    >>> edit_number("0", "7"), edit_number("", "."), edit_number("3", "sign")
    ('7', '0.', '-3')
    """
    if action == "clear":
        return ""
    if action == "back":
        return text[:-1]
    if action == "sign":
        if not allow_negative:
            return text
        return text[1:] if text.startswith("-") else "-" + text
    if len(text) >= MAX_CHARACTERS:
        return text
    if action == ".":
        if "." in text:
            return text
        return text + ("0." if text in ("", "-") else ".")
    if action.isdigit() and len(action) == 1:
        if text in ("0", "-0"):
            return text[:-1] + action
        return text + action
    return text


class Keypad(BoxLayout):
    """Digits, point, sign, back, clear and a wide enter key; fires ``on_enter``.

    ``enter_text`` labels the enter key ("Save + next", "Set level"...); ``allow_negative``
    shows the sign key in place of Clear.  The keys share the keypad's height, which stretches
    between four glove-sized keys and four small ones (48 dp) as the window allows.
    """

    text = StringProperty("")
    enter_text = StringProperty("Enter")
    allow_negative = BooleanProperty(False)
    option_text = StringProperty("Clear")
    """Text of the key beside 6: "+/-" when negatives are allowed, else "Clear"."""
    option_action = StringProperty("clear")
    option_tone = StringProperty("caution")
    fresh = BooleanProperty(False)
    """True while the text is a field's value just brought in: the next digit or point
    replaces it (as typing replaces a selected value), any other key keeps it."""

    __events__ = ("on_enter",)

    def on_allow_negative(self, *_args) -> None:
        """The key beside 6 changes the sign when negatives are allowed, else clears."""
        if self.allow_negative:
            self.option_text, self.option_action, self.option_tone = "+/-", "sign", "plain"
        else:
            self.option_text, self.option_action, self.option_tone = "Clear", "clear", "caution"

    def press(self, action: str) -> None:
        """Apply one action: a digit, ``"."``, ``"sign"``, ``"back"``, ``"clear"`` or ``"enter"``."""
        if action == "enter":
            self.dispatch("on_enter")
            return
        start = "" if self.fresh and (action == "." or action.isdigit()) else self.text
        self.fresh = False
        self.text = edit_number(start, action, self.allow_negative)

    def on_enter(self, *args):
        """Default handler: nothing (screens bind their own)."""

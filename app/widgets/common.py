"""Small building blocks shared by the screens: big buttons, chips, captions and number fields.

Their looks live in ``common.kv`` beside this file; sizes and colours come from :mod:`stakeline.app.theme`.
"""

from __future__ import annotations

from kivy.properties import BooleanProperty, ObjectProperty, OptionProperty, StringProperty
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.button import Button
from kivy.uix.label import Label
from kivy.uix.togglebutton import ToggleButton
from stakeline.app import kv

kv.load("widgets/common.kv")


class BigButton(Button):
    """A flat, high-contrast button at least one glove target tall; ``tone`` picks its colour."""

    tone = OptionProperty("plain", options=["plain", "accept", "danger", "caution", "selected"])


class Chip(ToggleButton):
    """A toggle (feature codes, unit, tape origin): signal yellow with dark text when on."""


class Caption(Label):
    """Body text on paper: wraps to its width and grows to fit its lines."""

    soft = BooleanProperty(False)


class Title(Label):
    """A screen or panel heading."""


class Panel(BoxLayout):
    """A padded group of widgets on a slightly darker background."""


class NumberField(ButtonBehavior, BoxLayout):
    """A number the crew sets with the keypad: tap it to make it the keypad's target.

    ``text`` is the digits as typed (``""`` when empty), ``caption`` what the number is, ``unit``
    its unit; ``active`` shows that the keypad types into it.  ``form`` is the screen (or other
    object) whose ``activate(field)`` is called on tap.
    """

    text = StringProperty("")
    caption = StringProperty("")
    unit = StringProperty("")
    hint = StringProperty("")
    active = BooleanProperty(False)
    form = ObjectProperty(None, allownone=True)

    def on_release(self):
        """Become the keypad's target."""
        if self.form is not None:
            self.form.activate(self)

    def value(self) -> float | None:
        """The typed number, or ``None`` when the field is empty; ValueError when not a number."""
        text = self.text.strip().replace(",", ".")
        if not text:
            return None
        return float(text)


class StepTab(BigButton):
    """One step of the visit in the step bar; ``selected`` marks the screen being shown."""

    target = StringProperty("")
    selected = BooleanProperty(False)


class StepBar(BoxLayout):
    """The visit's steps across the top: home, stakes, spacing, readings, section, checks."""

    current = StringProperty("")

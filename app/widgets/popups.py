"""Dialogs in the sunlight theme: light paper, dark ink, glove-sized buttons.

A :class:`SunPopup` takes the physical keys while it is open (the screen behind gets none):
Enter does its ``submit()``, Escape its ``cancel()``; Tab moves between its text fields.  Its
first text field takes the keyboard focus when it opens, so typed words land in it.
"""

from __future__ import annotations

from kivy.clock import Clock
from kivy.properties import ListProperty, ObjectProperty, StringProperty
from kivy.uix.modalview import ModalView
from kivy.uix.textinput import TextInput


class SunPopup(ModalView):
    """A light dialog with a ``title``; subclasses lay out their body in their .kv rule."""

    title = StringProperty("")

    def on_pre_open(self) -> None:
        """Give the keyboard to the first text field, if any, as soon as it is shown."""
        fields = self.text_fields()
        if fields:
            Clock.schedule_once(lambda _dt: setattr(fields[0], "focus", True), 0)

    def on_dismiss(self) -> None:
        """Let go of the keyboard."""
        for field in self.text_fields():
            field.focus = False

    def text_fields(self) -> list:
        """The dialog's enabled text fields, in order."""
        return [w for w in self.walk(restrict=True) if isinstance(w, TextInput) and not w.disabled]

    def submit(self) -> None:
        """Enter: the dialog's main action (by default: close it)."""
        self.dismiss()

    def cancel(self) -> None:
        """Escape: close without doing anything."""
        self.dismiss()

    def on_key(self, key: int, _codepoint: str | None) -> bool:
        """Physical keys while open: Enter submits; every other key stays here."""
        if key in (13, 271):
            self.submit()
        return True


class NotePopup(SunPopup):
    """A note for the current station (the system keyboard is fine for words); ``screen`` is
    the screen whose ``set_note(text)`` keeps it (readings, velocity); ``hint`` says when it
    is saved."""

    screen = ObjectProperty(None)
    hint = StringProperty("Type the note, then Keep note (Enter). It is saved with the reading.")

    def submit(self) -> None:
        """Keep the note and close."""
        self.screen.set_note(self.ids.text.text)
        self.dismiss()


class HistoryPopup(SunPopup):
    """Every value a station has had, oldest first: nothing entered is ever lost."""

    lines = ListProperty([])

    def on_pre_open(self) -> None:
        """Fill the list with one line per version."""
        from kivy.factory import Factory

        super().on_pre_open()
        box = self.ids.lines
        box.clear_widgets()
        for text in self.lines:
            box.add_widget(Factory.HistoryLine(text=text))


class ConfirmPopup(SunPopup):
    """Asks once before an action that cannot be taken back: ``summary`` says what will happen,
    ``action_text`` labels the button that does it, ``on_confirm`` fires when it is tapped."""

    summary = StringProperty("")
    action_text = StringProperty("Go ahead")
    __events__ = ("on_confirm",)

    def submit(self) -> None:
        """Do it."""
        self.dismiss()
        self.dispatch("on_confirm")

    def on_confirm(self, *_args) -> None:
        """Default handler: nothing (the screen binds its own)."""

"""Small building blocks shared by the screens: big buttons, chips, captions, number and text
fields, the step bar, and the window-wide sizes they follow.

Their looks live in ``common.kv`` beside this file (loaded once at start by
:func:`stakeline.app.widgets.load_styles`); sizes and colours come from :mod:`stakeline.app.theme`.
Everything a ``.kv`` rule would otherwise compute (a tone's colour, the text of an empty field)
is a property here, so the rules only bind.
"""

from __future__ import annotations

from kivy.event import EventDispatcher
from kivy.properties import (
    BooleanProperty,
    ColorProperty,
    NumericProperty,
    ObjectProperty,
    OptionProperty,
    StringProperty,
)
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.button import Button
from kivy.uix.label import Label
from kivy.uix.textinput import TextInput
from kivy.uix.togglebutton import ToggleButton
from stakeline.app import theme


class Sizes(EventDispatcher):
    """Sizes that follow the window: compact targets and fonts on a short window.

    One instance, :data:`SIZES`, is bound to the window by :meth:`follow` when the styles load;
    the ``.kv`` rules bind to its properties (``S.target``...), so every screen reflows together
    when the window is resized or the tablet turned.
    """

    compact = BooleanProperty(False)
    target = NumericProperty(64)  # px: height of a button, chip or field
    field = NumericProperty(94)  # px: height of a number field (caption and value)
    key_min = NumericProperty(48)  # px: least keypad key height
    key_max = NumericProperty(72)  # px: greatest keypad key height
    huge = NumericProperty(60)  # px: font of the station distance
    big = NumericProperty(44)  # px: font of the reading being typed
    value = NumericProperty(28)  # px: font of a figure's value (never under MIN_VALUE sp)
    gap = NumericProperty(8)  # px: space between targets

    def follow(self, window) -> None:
        """Track ``window``'s size from now on."""
        window.unbind(size=self._update)
        window.bind(size=self._update)
        self._update(window, window.size)

    def _update(self, _window, size) -> None:
        from kivy.metrics import dp, sp

        self.compact = size[1] / dp(1) < theme.COMPACT_BELOW
        compact = self.compact
        self.target = dp(theme.TARGET_COMPACT if compact else theme.TARGET)
        self.field = self.target + dp(14 if compact else 26)
        self.key_min = dp(theme.MIN_TARGET)
        self.key_max = dp(theme.KEY)
        self.huge = sp(theme.HUGE_COMPACT if compact else theme.HUGE)
        self.big = sp(theme.BIG_COMPACT if compact else theme.BIG)
        self.value = sp(theme.MIN_VALUE if compact else theme.VALUE)
        self.gap = dp(theme.GAP - 2 if compact else theme.GAP)


SIZES = Sizes()
"""The window-wide sizes (see :class:`Sizes`)."""

_MEASURE: dict = {}  # (font_size, bold) -> CoreLabel used to measure words


def text_width(text: str, font_size: float, bold: bool = False) -> float:
    """Width in pixels of ``text`` on one line at ``font_size`` (px)."""
    from kivy.core.text import Label as CoreLabel

    if not text:
        return 0.0
    key = (round(font_size, 2), bool(bold))
    label = _MEASURE.get(key)
    if label is None:
        label = _MEASURE[key] = CoreLabel(font_size=font_size, bold=bold)
    return float(label.get_extents(text)[0])


def word_width(text: str, font_size: float, bold: bool = False) -> float:
    """Width in pixels of the widest word of ``text`` at ``font_size`` (px)."""
    words = [w for w in text.replace("\n", " ").split(" ") if w]
    return max((text_width(w, font_size, bold) for w in words), default=0.0)


class WordFit:
    """Mixin of labelled buttons: ``min_width`` is the widest word plus padding, so a row of
    them (:class:`stakeline.app.widgets.layout.FlowRow`) never breaks a word in two."""

    min_width = NumericProperty(0)

    def on_text(self, *_args) -> None:
        """Measure the widest word again."""
        self._measure()

    def on_font_size(self, *_args) -> None:
        """Measure the widest word again."""
        self._measure()

    def _measure(self) -> None:
        from kivy.metrics import dp

        self.min_width = max(
            word_width(self.text, self.font_size, self.bold) + dp(28), dp(theme.MIN_TARGET)
        )


class FlatButton(WordFit, Button):
    """A flat, high-contrast button; ``tone`` picks its colour.  Its size is its layout's (the
    keypad's keys); :class:`BigButton` sizes itself."""

    tone = OptionProperty("plain", options=list(theme.TONE_COLOURS))
    fill = ColorProperty(theme.BUTTON)
    """Background colour, from the tone and the pressed/disabled state."""

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.fbind("tone", self._paint)
        self.fbind("state", self._paint)
        self.fbind("disabled", self._paint)
        self._paint()

    def _paint(self, *_args) -> None:
        if self.disabled:
            self.fill = theme.PANEL
        elif self.state == "down":
            self.fill = theme.BUTTON_DOWN
        else:
            self.fill = theme.TONE_COLOURS[self.tone]
        self.color = theme.INK if self.tone == "selected" else theme.ON_DARK


class BigButton(FlatButton):
    """A flat button at least one glove target tall (``floor`` px when that is more), growing
    with its wrapped text."""

    hidden = BooleanProperty(False)
    """True to take the button out of sight (no height, no touches) while keeping its place."""
    floor = NumericProperty(0)

    def on_touch_down(self, touch):
        """A hidden button takes no touches."""
        if self.hidden:
            return False
        return super().on_touch_down(touch)


class Chip(WordFit, ToggleButton):
    """A toggle (feature codes, unit, tape origin): signal yellow with dark text when on."""

    fill = ColorProperty(theme.BUTTON)
    outline = ColorProperty((0, 0, 0, 0))

    def on_state(self, *_args) -> None:
        """Signal yellow with an outline when on, slate blue when off."""
        down = self.state == "down"
        self.fill = theme.TOGGLE_ON if down else theme.BUTTON
        self.color = theme.INK if down else theme.ON_DARK
        self.outline = theme.OUTLINE if down else (0, 0, 0, 0)


class Caption(Label):
    """Body text on paper: wraps to its width and grows to fit its lines; ``soft`` for
    secondary text."""

    soft = BooleanProperty(False)

    def on_soft(self, *_args) -> None:
        """Secondary text is smaller and softer."""
        from kivy.metrics import sp

        self.color = theme.INK_SOFT if self.soft else theme.INK
        self.font_size = sp(theme.SMALL if self.soft else theme.TEXT)


class Title(Label):
    """A screen or panel heading."""


class ValueLabel(Label):
    """A number the crew reads (at least ``theme.MIN_VALUE`` sp: the layout test checks it)."""


class FigureRow(BoxLayout):
    """One figure: its name on the left, its value (with ± and unit) on the right, in one row --
    so a name can never stand beside another figure's value.  The value keeps one line while it
    fits in 62 % of the row; the name wraps between words."""

    name = StringProperty("")
    value = StringProperty("")
    value_width = NumericProperty(0)
    """Width in pixels of the value on one line."""
    dump_key = StringProperty("")

    def on_kv_post(self, _base_widget) -> None:
        """Measure the value again when the window's sizes change."""
        SIZES.bind(value=self.on_value)  # a weak reference: rows come and go

    def on_value(self, *_args) -> None:
        """Measure the value on one line."""
        self.value_width = text_width(self.value, SIZES.value, bold=True)


class StationRow(ButtonBehavior, BoxLayout):
    """A station in a step's list; tap it to go there (``screen.go_to(station)``).  ``current``
    marks the station being worked on; ``tone`` colours the state word
    (:data:`stakeline.app.theme.STATE_COLOURS`); ``fill`` follows both and the press."""

    station = NumericProperty(0.0)
    station_text = StringProperty("")
    state_text = StringProperty("")
    tone = StringProperty("none")
    current = BooleanProperty(False)
    screen = ObjectProperty(None, allownone=True)
    fill = ColorProperty(theme.PANEL)
    state_colour = ColorProperty(theme.INK_SOFT)
    PAINTED_BY = ("current", "state", "tone")
    """The properties the colours follow."""

    def on_kv_post(self, _base_widget) -> None:
        """Colours follow the row's state."""
        for name in self.PAINTED_BY:
            self.fbind(name, self.paint)
        self.paint()

    def paint(self, *_args) -> None:
        """Set the colours from the row's state."""
        if self.current:
            self.fill = theme.ACTIVE_FIELD
        else:
            self.fill = theme.PANEL if self.state == "normal" else theme.TOGGLE_ON
        self.state_colour = theme.STATE_COLOURS[self.tone]

    def on_release(self):
        """Go to this station."""
        if self.screen is not None:
            self.screen.go_to(self.station)


class Panel(BoxLayout):
    """A padded group of widgets on a slightly darker background."""


class FieldText(TextInput):
    """A one-line text box (names, notes, folders) in the sunlight theme: Enter fires
    ``on_text_validate`` (the form binds its submit to it), Tab is the app's (next field).
    Its text is selected when it takes the keyboard, so typing replaces it (a stake's default
    name "L" becomes "LS9", not "LLS9"); a tap after that places the cursor."""

    _select_on_up = False

    def on_touch_down(self, touch):
        """A tap that gives this field the keyboard selects its text when the finger lifts
        (the text box places its cursor until then)."""
        if not self.focus and not self.disabled and self.collide_point(*touch.pos):
            self._select_on_up = True
        return super().on_touch_down(touch)

    def on_touch_up(self, touch):
        """Finish a tap: select everything if it gave this field the keyboard."""
        handled = super().on_touch_up(touch)
        if self._select_on_up and touch.grab_current is self:  # its last word on this tap
            self._select_on_up = False
            if self.focus:
                self.select_all()
        return handled

    def on_focus(self, _instance, focused) -> None:
        """Taking the keyboard from a key (Tab) or the app selects everything (once the text
        box has set itself up for typing, which clears any selection)."""
        if focused and not self._select_on_up:
            from kivy.clock import Clock

            Clock.schedule_once(lambda _dt: self.focus and self.select_all(), -1)


class NumberField(ButtonBehavior, BoxLayout):
    """A number the crew sets with the keypad: tap it to make it the keypad's target.

    ``text`` is the digits as typed (``""`` when empty), ``caption`` what the number is, ``unit``
    its unit; ``active`` shows that the keypad types into it.  ``form`` is the screen (or other
    object) whose ``activate(field)`` is called on tap.  ``hint`` is shown while it is empty
    (e.g. "optional", or last visit's value).
    """

    text = StringProperty("")
    caption = StringProperty("")
    unit = StringProperty("")
    hint = StringProperty("")
    active = BooleanProperty(False)
    selected = BooleanProperty(False)
    """True while the value shown will be replaced by the next digit typed (it shows marked)."""
    form = ObjectProperty(None, allownone=True)
    shown_text = StringProperty("—")
    """What the value line shows: the typed number with its unit, else the hint, else a dash."""
    shown_colour = ColorProperty(theme.INK_SOFT)
    """Ink for a typed number, the softer ink for a hint."""
    min_width = NumericProperty(0)

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        for name in ("text", "unit", "hint"):
            self.fbind(name, self._show)
        self._show()

    def _show(self, *_args) -> None:
        if self.text:
            self.shown_text = f"{self.text} {self.unit}".strip()
            self.shown_colour = theme.INK
        else:
            self.shown_text = self.hint or "—"
            self.shown_colour = theme.INK_SOFT

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

    def on_selected(self, *_args) -> None:
        """The selected step is signal yellow."""
        self.tone = "selected" if self.selected else "plain"


class StepBar(BoxLayout):
    """The visit's steps across the top: home, stakes, spacing, readings, section, velocity,
    checks."""

    current = StringProperty("")

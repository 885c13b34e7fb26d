"""Widgets of the velocity step: a wet vertical in the list (tap it to read there) and a method
chip."""

from __future__ import annotations

from kivy.properties import (
    BooleanProperty,
    ColorProperty,
    NumericProperty,
    ObjectProperty,
    StringProperty,
)
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from stakeline.app import theme
from stakeline.app.widgets.common import Chip


class VerticalRow(ButtonBehavior, BoxLayout):
    """One wet vertical in the list; tap it to read that station."""

    station = NumericProperty(0.0)
    station_text = StringProperty("")
    depth_text = StringProperty("")
    velocity_text = StringProperty("")
    discharge_text = StringProperty("")
    share_text = StringProperty("")
    share_tone = StringProperty("none")
    state_text = StringProperty("")
    tone = StringProperty("none")
    current = BooleanProperty(False)
    screen = ObjectProperty(None, allownone=True)
    fill = ColorProperty(theme.PANEL)
    state_colour = ColorProperty(theme.INK_SOFT)
    share_colour = ColorProperty(theme.INK)

    def on_kv_post(self, _base_widget) -> None:
        """Colours follow the row's state."""
        for name in ("current", "state", "tone", "share_tone"):
            self.fbind(name, self._paint)
        self._paint()

    def _paint(self, *_args) -> None:
        if self.current:
            self.fill = theme.ACTIVE_FIELD
        else:
            self.fill = theme.PANEL if self.state == "normal" else theme.TOGGLE_ON
        self.state_colour = theme.STATE_COLOURS[self.tone]
        self.share_colour = theme.STATE_COLOURS[self.share_tone]
        if self.share_tone == "none":
            self.share_colour = theme.INK

    def on_release(self):
        """Read this station."""
        if self.screen is not None:
            self.screen.go_to(self.station)


class MethodChip(Chip):
    """A method of the mean velocity in a vertical; ``method`` is the stored name."""

    method = StringProperty("")

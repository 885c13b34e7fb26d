"""Widgets of the velocity step: a wet vertical in the list (tap it to read there) and a method
chip."""

from __future__ import annotations

from kivy.properties import ColorProperty, StringProperty
from stakeline.app import theme
from stakeline.app.widgets.common import Chip, StationRow


class VerticalRow(StationRow):
    """One wet vertical in the list; tap it to read that station."""

    depth_text = StringProperty("")
    velocity_text = StringProperty("")
    discharge_text = StringProperty("")
    share_text = StringProperty("")
    share_tone = StringProperty("none")
    share_colour = ColorProperty(theme.INK)
    PAINTED_BY = (*StationRow.PAINTED_BY, "share_tone")

    def paint(self, *_args) -> None:
        """The row's colours, and the share's: marked when the panel carries too much."""
        super().paint()
        tone = self.share_tone
        self.share_colour = theme.INK if tone == "none" else theme.STATE_COLOURS[tone]


class MethodChip(Chip):
    """A method of the mean velocity in a vertical; ``method`` is the stored name."""

    method = StringProperty("")

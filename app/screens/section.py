"""Section: the surveyed ground drawn live with the water filled at the level being typed or
dragged, its wetted figures (each name beside its own value), the wading-safety caution and the
field-estimate note.

Only a level the crew records here (the keypad's Record level) reaches the visit: a typed or
dragged level moves the water and the figures on this screen and nothing else -- the office
figures always open at the visit's recorded level.
"""

from __future__ import annotations

from kivy.properties import (
    DictProperty,
    ListProperty,
    ObjectProperty,
    StringProperty,
)
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.service import parse_number
from stakeline.app.widgets.common import FigureRow


class SectionScreen(KeypadScreen):
    """Live figures at a water level; Enter records the level with the time."""

    unit = StringProperty("m")
    level = ObjectProperty(None, allownone=True)
    figures = DictProperty({})
    figure_text = StringProperty("")
    value_text = StringProperty("")
    figure_rows = ListProperty([])
    """(name, value) of every figure shown, in order."""
    error_text = StringProperty("")
    hint_text = StringProperty("")
    SIDE = (0.4, 340, 520)

    _section = None
    _profile = ((), ())

    def refresh(self) -> None:
        """Load the ground and the recorded water level."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.ids.view.flip = visit["origin"] == "right"
        self.ids.view.strip = self.service.water_strip
        self._section = self.service.section(self.visit)
        self._profile = self.service.profile(self.visit)
        self.ids.view.level_step = max(float(self.service.settings()["precision"]), 0.001)
        self.ids.view.set_section(*self._profile, refit=True)
        self.service.review_async(self.visit, self._show_flags, key="section")
        recorded = self.service.water_level(self.visit)
        self.activate(self.ids.level_field)
        self.ids.level_field.text = "" if recorded is None else f"{recorded:.3f}"
        self.ids.keypad.text = self.ids.level_field.text
        self.level = recorded
        self.recompute()
        if recorded is not None:
            self.say(f"Recorded water level {recorded:.3f} {self.unit}.", "saved")
        else:
            self.say("Type the water level (elevation), then Record level.", "none")

    def _show_flags(self, findings: list[dict]) -> None:
        """Mark the stations the checks flag (spikes, repeats) on the drawing."""
        flagged = list(self.service.flagged_stations(findings))
        self.ids.view.set_section(*self._profile, flagged=flagged)

    def on_field_edited(self, field) -> None:
        """Typing a level updates the drawing and the figures at once (not yet recorded)."""
        text = field.text.strip()
        try:
            self.level = None if not text else parse_number(text, "water level")
        except ValueError:
            return
        self.say("Level typed but not recorded: tap Record level.", "unsaved")

    def on_level(self, *_args) -> None:
        """One recompute per change of the level."""
        self.recompute()

    def recompute(self) -> None:
        """Redraw the water and refresh the figures for ``level``."""
        view = self.ids.view
        if view.water_level != self.level:
            view.water_level = self.level
        self.figures = self.service.figures(self._section, self.level)
        rows = self.service.figure_rows(self.figures, self.unit)
        self.figure_rows = rows
        self.error_text = self.figures.get("error", "")
        self.figure_text = self.error_text or "\n".join(name for name, _ in rows)
        self.value_text = "\n".join(value for _, value in rows)
        if self.level is None:
            self.hint_text = "Type the water level on the keypad to see the water and its figures."
        else:
            self.hint_text = (
                "Looking downstream. Drag the blue line to try a level (Record level keeps it); "
                "pinch, wheel or drag to zoom and pan; double-tap to fit."
            )
        self._place_rows()

    def _place_rows(self) -> None:
        """One :class:`FigureRow` per figure, reused while the figures stay the same."""
        box = self.ids.figure_box
        shown = list(reversed(box.children))
        if len(shown) != len(self.figure_rows):
            box.clear_widgets()
            shown = []
            for _ in self.figure_rows:
                row = FigureRow()
                box.add_widget(row)
                shown.append(row)
        for row, (name, value) in zip(shown, self.figure_rows, strict=True):
            row.name, row.value = name, value
            row.dump_key = f"figure:{name}"

    def on_dragged(self) -> None:
        """The crew dragged the water line: show the level in the field (unsaved)."""
        level = self.ids.view.water_level
        self.ids.level_field.text = f"{level:.3f}"
        self.ids.keypad.text = self.ids.level_field.text
        self.level = level
        self.say("Level dragged but not recorded: tap Record level.", "unsaved")

    def record(self) -> None:
        """Record the level shown, with the time, on the visit."""
        text = self.ids.level_field.text
        if not text:
            self.say("Type the water level first.", "unsaved")
            return
        level = self.attempt(self.service.record_water_level, self.visit, text)
        if level is not None:
            self.say(f"Recorded water level {level:.3f} {self.unit}.", "saved")

    def open_detail(self) -> None:
        """Show the office figures at the visit's recorded level (Back returns here).  A level
        typed or dragged here and not recorded stays here."""
        self.app.go("detail", back="section")

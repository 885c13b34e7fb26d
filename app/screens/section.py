"""Section: the surveyed ground drawn live with the water filled at the level being typed or
dragged, its wetted figures, the wading-safety caution and the field-estimate note."""

from __future__ import annotations

from kivy.properties import DictProperty, ObjectProperty, StringProperty
from stakeline.app import kv, theme
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.service import FIGURE_NAMES, parse_number
from stakeline.app.widgets import section_view  # noqa: F401  (registers SectionView for the .kv)

kv.load("screens/section.kv")

AREA_FIGURES = {"area"}


class SectionScreen(KeypadScreen):
    """Live figures at a water level; Enter records the level with the time."""

    unit = StringProperty("m")
    level = ObjectProperty(None, allownone=True)
    figures = DictProperty({})
    figure_text = StringProperty("")
    value_text = StringProperty("")

    def refresh(self) -> None:
        """Load the ground and the recorded water level."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.ids.view.flip = visit["origin"] == "right"
        self._section = self.service.section(self.visit)
        self._profile = self.service.profile(self.visit)
        self.ids.view.level_step = max(float(self.service.settings()["precision"]), 0.001)
        self.ids.view.set_section(*self._profile, refit=True)
        self.service.review_async(self.visit, self._show_flags)
        recorded = self.service.water_level(self.visit)
        self.activate(self.ids.level_field)
        self.ids.level_field.text = "" if recorded is None else f"{recorded:.3f}"
        self.ids.keypad.text = self.ids.level_field.text
        self.level = recorded
        self.recompute()
        if recorded is not None:
            self.say(f"Recorded water level {recorded:.3f} {self.unit}.", "saved")
        else:
            self.say("Type the water level (elevation) or drag the blue line.", "none")

    def _show_flags(self, findings: list[dict]) -> None:
        """Mark the stations the checks flag (spikes, repeats) on the drawing."""
        flagged = [
            f["station"]
            for f in findings
            if f["station"] is not None and f["kind"] in ("spike", "duplicate", "order", "line")
        ]
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
        self.figure_text, self.value_text = self._figure_lines()

    def _figure_lines(self) -> tuple[str, str]:
        if "error" in self.figures:
            return self.figures["error"], ""
        names, values = [], []
        for key, name in FIGURE_NAMES.items():
            unit = f"{self.unit}²" if key in AREA_FIGURES else self.unit
            names.append(name)
            values.append(f"{self.figures[key]:.3f} {unit}")
        return "\n".join(names), "\n".join(values)

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
        """Show the office figures at the level shown here (Back returns to this screen)."""
        self.app.go("detail", back="section", level=self.level)

    def error_colour(self):
        """Colour of the figures text (red when the level cannot be used)."""
        return theme.DANGER if "error" in self.figures else theme.INK

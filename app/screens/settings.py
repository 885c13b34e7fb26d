"""Settings of this device: length unit for new surveys, crew names, reading precision, check
tolerances and the outbox folder."""

from __future__ import annotations

import os

from kivy.lang import Builder
from kivy.properties import ObjectProperty, StringProperty

from app.screens.base import BaseScreen

Builder.load_file(os.path.join(os.path.dirname(__file__), "settings.kv"))

PRECISIONS = {"m": (0.001, 0.005, 0.01), "ft": (0.01, 0.02, 0.05)}
LINE_TOLERANCES = {"m": (0.005, 0.01, 0.02), "ft": (0.02, 0.03, 0.05)}
MIN_STATIONS = (10, 15, 20, 25)


class SettingsScreen(BaseScreen):
    """Chips for every choice (no typing with gloves), text only for names and the folder."""

    unit = StringProperty("m")
    precision = ObjectProperty(0.001)
    line_tolerance = ObjectProperty(None, allownone=True)
    min_stations = ObjectProperty(20)

    def refresh(self) -> None:
        """Show the stored settings."""
        settings = self.service.settings()
        self.unit = settings["unit"]
        self.precision = settings["precision"]
        self.line_tolerance = settings["line_tolerance"]
        self.min_stations = settings["min_wetted_stations"]
        self.ids.crew.text = ", ".join(settings["crew"])
        self.ids.outbox.text = settings["outbox"] or ""
        self.ids.outbox.hint_text = f"Outbox folder (default {self.service.default_outbox})"

    def choose_unit(self, unit: str) -> None:
        """Length unit for new surveys; resets precision and tolerance to that unit's choices."""
        if unit != self.unit:
            self.unit = unit
            self.precision = PRECISIONS[unit][0]
            self.line_tolerance = None
        self.say("Unsaved changes: tap Save settings.", "unsaved")

    def choose(self, name: str, value) -> None:
        """Pick one of the chip values."""
        setattr(self, name, value)
        self.say("Unsaved changes: tap Save settings.", "unsaved")

    def save(self) -> None:
        """Store the settings."""
        crew = [name.strip() for name in self.ids.crew.text.split(",") if name.strip()]
        saved = self.attempt(
            self.service.save_settings,
            unit=self.unit,
            crew=crew,
            precision=self.precision,
            line_tolerance=self.line_tolerance,
            min_wetted_stations=self.min_stations,
            outbox=self.ids.outbox.text.strip(),
        )
        if saved is not None:
            self.say("Settings saved. The unit applies to visits started from now on.", "saved")

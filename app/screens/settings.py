"""Settings of this device: length unit for new surveys, crew names, reading precision (decimals
shown), the crew's ± of one reading and of one station (for the office figures' bands), check
tolerances and the outbox folder."""

from __future__ import annotations

from kivy.properties import ObjectProperty, StringProperty
from stakeline.app import kv
from stakeline.app.screens.base import BaseScreen

kv.load("screens/settings.kv")

PRECISIONS = {"m": (0.001, 0.005, 0.01), "ft": (0.01, 0.02, 0.05)}
LINE_TOLERANCES = {"m": (0.005, 0.01, 0.02), "ft": (0.02, 0.03, 0.05)}
MIN_STATIONS = (10, 15, 20, 25)
PLUS_MINUS_CHOICES = {
    "m": {"reading": (0.002, 0.005, 0.01), "station": (0.005, 0.01, 0.02)},
    "ft": {"reading": (0.01, 0.02, 0.03), "station": (0.02, 0.03, 0.05)},
}
"""Chips for the ± of one plumb or rod reading and of one tape station (survey unit); each row
holds the unit's default (stakeline.survey.uncertainty.Precision.default)."""


def plus_minus_words(value: float, unit: str) -> str:
    """``"±5 mm"`` or ``"±0.02 ft"`` for a ± in the survey unit (m shown in millimetres)."""
    if unit == "m":
        return f"±{value * 1000:.3g} mm"
    return f"±{value:.3g} {unit}"


class SettingsScreen(BaseScreen):
    """Chips for every choice (no typing with gloves), text only for names and the folder."""

    unit = StringProperty("m")
    precision = ObjectProperty(0.001)
    line_tolerance = ObjectProperty(None, allownone=True)
    min_stations = ObjectProperty(20)
    reading_plus_minus = ObjectProperty(0.005)
    station_plus_minus = ObjectProperty(0.01)
    defaults = ObjectProperty((0.005, 0.01))  # the unit's usual (reading, station) ±

    def refresh(self) -> None:
        """Show the stored settings."""
        settings = self.service.settings()
        self.unit = settings["unit"]
        self.precision = settings["precision"]
        self.line_tolerance = settings["line_tolerance"]
        self.min_stations = settings["min_wetted_stations"]
        self.defaults = self.service.default_plus_minus(self.unit)
        self.reading_plus_minus = settings["reading_plus_minus"]
        self.station_plus_minus = settings["station_plus_minus"]
        self.ids.crew.text = ", ".join(settings["crew"])
        self.ids.outbox.text = settings["outbox"] or ""
        self.ids.outbox.hint_text = f"Outbox folder (default {self.service.default_outbox})"

    def choose_unit(self, unit: str) -> None:
        """Length unit for new surveys; resets precision, tolerance and the reading and station
        ± to that unit's choices (the ± to the unit's defaults)."""
        if unit != self.unit:
            self.defaults = self.service.default_plus_minus(unit)
            self.unit = unit
            self.precision = PRECISIONS[unit][0]
            self.line_tolerance = None
            self.reading_plus_minus, self.station_plus_minus = self.defaults
        self.say("Unsaved changes: tap Save settings.", "unsaved")

    @staticmethod
    def plus_minus_chip(unit: str, defaults, kind: str, index: int) -> str:
        """Text of the ``index``-th chip of the ``kind`` ("reading" or "station") ± row in
        ``unit``; the chip of the unit's default (``defaults``: reading, station) says so."""
        value = PLUS_MINUS_CHOICES[unit][kind][index]
        usual = value == defaults[0 if kind == "reading" else 1]
        return plus_minus_words(value, unit) + (" (default)" if usual else "")

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
            reading_plus_minus=self.reading_plus_minus,
            station_plus_minus=self.station_plus_minus,
            outbox=self.ids.outbox.text.strip(),
        )
        if saved is not None:
            self.say("Settings saved. The unit applies to visits started from now on.", "saved")

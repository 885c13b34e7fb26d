"""Settings of this device: length unit for new surveys, crew names, reading precision (decimals
shown), the crew's ± of one reading and of one station (for the office figures' bands), check
tolerances, the outbox folder (shown in full, changeable), and the chain of custody: the
device's id and its signing key's fingerprint, with a button that writes the device key file
into the outbox."""

from __future__ import annotations

from kivy.properties import DictProperty, StringProperty
from stakeline.app.screens.base import BaseScreen
from stakeline.app.service import short_path
from stakeline.app.widgets.common import Chip

PRECISIONS = {"m": (0.001, 0.005, 0.01), "ft": (0.01, 0.02, 0.05)}
LINE_TOLERANCES = {"m": (0.005, 0.01, 0.02), "ft": (0.02, 0.03, 0.05)}
MIN_STATIONS = (10, 15, 20, 25)
PLUS_MINUS_CHOICES = {
    "m": {"reading": (0.002, 0.005, 0.01), "station": (0.005, 0.01, 0.02)},
    "ft": {"reading": (0.01, 0.02, 0.03), "station": (0.02, 0.03, 0.05)},
}
"""Chips for the ± of one plumb or rod reading and of one tape station (survey unit); each row
holds the unit's default (stakeline.survey.uncertainty.Precision.default)."""

ROWS = ("unit", "precision", "reading_plus_minus", "station_plus_minus", "line_tolerance",
        "min_stations")  # fmt: skip
"""The chip rows of the screen, top to bottom (each a FlowRow with that id)."""


def plus_minus_words(value: float, unit: str) -> str:
    """``"±5 mm"`` or ``"±0.02 ft"`` for a ± in the survey unit (m shown in millimetres)."""
    if unit == "m":
        return f"±{value * 1000:.3g} mm"
    return f"±{value:.3g} {unit}"


def setting_chip(value, text: str) -> Chip:
    """A chip for one choice of a setting; its ``value`` is what is stored when it is chosen."""
    chip = Chip(text=text)
    chip.value = value
    return chip


class SettingsScreen(BaseScreen):
    """Chips for every choice (no typing with gloves), text only for names and the folder."""

    values = DictProperty({})
    """The settings being edited: unit, precision, reading and station ±, line tolerance,
    min_stations (saved by Save settings)."""
    defaults = DictProperty({})
    reading_words = StringProperty("")
    station_words = StringProperty("")
    device_text = StringProperty("")
    fingerprint = StringProperty("")
    """This device's key fingerprint (16 hex digits in four groups), for reading aloud."""

    @property
    def unit(self) -> str:
        """The length unit chosen."""
        return self.values.get("unit", "m")

    def refresh(self) -> None:
        """Show the stored settings."""
        settings = self.service.settings()
        self.values = {
            "unit": settings["unit"],
            "precision": settings["precision"],
            "reading_plus_minus": settings["reading_plus_minus"],
            "station_plus_minus": settings["station_plus_minus"],
            "line_tolerance": settings["line_tolerance"],
            "min_stations": settings["min_wetted_stations"],
        }
        self.ids.crew.text = ", ".join(settings["crew"])
        self.ids.outbox.text = self.service.outbox()
        self.ids.outbox.hint_text = f"default: {self.service.default_outbox}"
        custody = self.service.device_custody()
        self.device_text, self.fingerprint = custody["device"], custody["fingerprint"]
        self.build_rows()

    def write_key(self) -> None:
        """Write this device's public key file into the outbox, for the office to trust."""
        written = self.attempt(self.service.write_device_key)
        if written is not None:
            self.say(
                f"Device key written to {short_path(written['path'])}. Read the fingerprint "
                f"{written['fingerprint']} to the office when they trust it.",
                "saved",
            )

    def options(self, row: str) -> list[tuple]:
        """(value, chip text) of each choice of one row, in the chosen unit."""
        unit = self.unit
        reading, station = self.service.default_plus_minus(unit)
        if row == "unit":
            return [("m", "Metres (m)"), ("ft", "Feet (ft)")]
        if row == "precision":
            return [(v, f"{v:g} {unit}") for v in PRECISIONS[unit]]
        if row in ("reading_plus_minus", "station_plus_minus"):
            kind = row.split("_")[0]
            usual = reading if kind == "reading" else station
            return [
                (v, plus_minus_words(v, unit) + (" (default)" if v == usual else ""))
                for v in PLUS_MINUS_CHOICES[unit][kind]
            ]
        if row == "line_tolerance":
            return [(None, "Checks default")] + [
                (v, f"{v:g} {unit}") for v in LINE_TOLERANCES[unit]
            ]
        return [(v, str(v)) for v in MIN_STATIONS]

    def build_rows(self) -> None:
        """One chip per choice, in the chosen unit."""
        for row in ROWS:
            box = self.ids[row]
            box.clear_widgets()
            for value, text in self.options(row):
                chip = setting_chip(value, text)
                chip.bind(on_release=lambda c, r=row: self.choose(r, c.value))
                box.add_widget(chip)
        self.show_choices()

    def show_choices(self) -> None:
        """The chosen chip of each row is down; the ± captions say what is chosen."""
        for row in ROWS:
            for chip in self.ids[row].children:
                chip.state = "down" if self.values.get(row) == chip.value else "normal"
        self.reading_words = plus_minus_words(self.values["reading_plus_minus"], self.unit)
        self.station_words = plus_minus_words(self.values["station_plus_minus"], self.unit)

    def choose(self, name: str, value) -> None:
        """Pick one of the chip values; a new unit resets precision, tolerance and the ± to
        that unit's choices (the ± to its defaults)."""
        values = dict(self.values)
        if name == "unit" and value != values["unit"]:
            values["precision"] = PRECISIONS[value][0]
            values["line_tolerance"] = None
            reading, station = self.service.default_plus_minus(value)
            values["reading_plus_minus"], values["station_plus_minus"] = reading, station
        values[name] = value
        unit_changed = values["unit"] != self.unit
        self.values = values
        if unit_changed:
            self.build_rows()
        else:
            self.show_choices()
        self.say("Unsaved changes: tap Save settings.", "unsaved")

    def choose_unit(self, unit: str) -> None:
        """Length unit for new surveys."""
        self.choose("unit", unit)

    def save(self) -> None:
        """Store the settings."""
        crew = [name.strip() for name in self.ids.crew.text.split(",") if name.strip()]
        values = self.values
        saved = self.attempt(
            self.service.save_settings,
            unit=values["unit"],
            crew=crew,
            precision=values["precision"],
            line_tolerance=values["line_tolerance"],
            min_wetted_stations=values["min_stations"],
            reading_plus_minus=values["reading_plus_minus"],
            station_plus_minus=values["station_plus_minus"],
            outbox=self.service.outbox_setting(self.ids.outbox.text),
        )
        if saved is not None:
            self.ids.outbox.text = self.service.outbox()
            self.say("Settings saved. The unit applies to visits started from now on.", "saved")

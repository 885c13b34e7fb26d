"""Spacing: the distance between stakes and a target count give a uniform plan (shown as a
station list); stations can be added or removed one by one for variable spacing."""

from __future__ import annotations

from kivy.properties import ListProperty, NumericProperty, StringProperty
from stakeline.app import kv
from stakeline.app.screens.base import KeypadScreen, field_number, show_number
from stakeline.app.service import ServiceError, uniform_stations
from stakeline.app.widgets.common import Chip

kv.load("screens/spacing.kv")


class SpacingScreen(KeypadScreen):
    """Suggest a uniform plan, adjust it, and save it as the visit's planned stations."""

    unit = StringProperty("m")
    stations = ListProperty([])
    read = ListProperty([])
    selected = NumericProperty(-1.0)
    spacing_text = StringProperty("")
    saved_plan = ListProperty([])

    def refresh(self) -> None:
        """Load the saved plan and the stake distance."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.ids.distance.text = show_number(visit["stake_distance"], 2)
        self.saved_plan = self.service.plan(self.visit)
        self.read = [r["station"] for r in self.service.readings(self.visit)]
        self.stations = list(self.saved_plan)
        self.selected = -1.0
        self.spacing_text = ""
        if not self.ids.count.text:
            self.ids.count.text = "21"
        self.activate(self.ids.distance if not self.ids.distance.text else self.ids.count)
        if self.saved_plan:
            self.say(f"Saved plan: {len(self.saved_plan)} stations.", "saved")
        else:
            self.say("No plan yet: type the distance and a station count, then Suggest.", "none")

    def on_stations(self, *_args) -> None:
        """Show the plan as chips; tap one to select it for removal."""
        box = self.ids.plan
        box.clear_widgets()
        for station in self.stations:
            chip = Chip(
                text=f"{station:g}",
                size_hint=(None, None),
                width=self._chip_width(),
                state="down" if station == self.selected else "normal",
            )
            if station in self.read:
                chip.text += " *"
            chip.bind(on_release=lambda _c, s=station: self.select(s))
            box.add_widget(chip)

    def _chip_width(self) -> float:
        from kivy.metrics import dp

        return dp(104)

    def select(self, station: float) -> None:
        """Select a planned station (for Remove); the keypad shows its distance."""
        self.selected = station if self.selected != station else -1.0
        self.on_stations()

    def on_field_edited(self, _field) -> None:
        """Typing the distance or count re-suggests nothing until Suggest is tapped."""

    def suggest(self) -> None:
        """Uniform plan from the distance and count (not saved until Use this plan)."""
        try:
            distance = field_number(self.ids.distance)
            count = field_number(self.ids.count)
            if distance is None or count is None:
                raise ServiceError("type the distance between stakes and a station count")
            plan = uniform_stations(distance, int(count))
        except ServiceError as exc:
            self.say(str(exc), "flagged")
            return
        self.stations = plan
        step = plan[1] - plan[0]
        self.spacing_text = f"Spacing {step:g} {self.unit}, {len(plan)} stations"
        self.say(f"Suggested: {self.spacing_text}. Not saved yet: tap Use this plan.", "unsaved")

    def add_station(self) -> None:
        """Insert the station typed in the 'station to add' field."""
        station = self.attempt(field_number, self.ids.extra)
        if station is None:
            return
        if station < 0:
            self.say("stations are tape distances and cannot be negative", "flagged")
            return
        self.stations = sorted({*self.stations, round(station, 6)})
        self.ids.extra.text = ""
        self.say(f"Added {station:g} {self.unit}. Not saved yet: tap Use this plan.", "unsaved")

    def remove_selected(self) -> None:
        """Drop the selected station from the plan (stations with readings stay)."""
        if self.selected < 0:
            self.say("Tap a station in the list first, then Remove.", "unsaved")
            return
        if self.selected in self.read:
            self.say(f"Station {self.selected:g} has a reading; it stays in the plan.", "flagged")
            return
        self.stations = [s for s in self.stations if s != self.selected]
        self.selected = -1.0
        self.say("Removed. Not saved yet: tap Use this plan.", "unsaved")

    def use_plan(self) -> bool:
        """Save the plan (and the stake distance) to the visit."""
        distance = self.attempt(field_number, self.ids.distance)
        plan = self.attempt(self.service.save_plan, self.visit, [*self.stations, *self.read])
        if plan is None:
            return False
        if distance is not None:
            self.attempt(self.service.save_stakes, self.visit, stake_distance=distance)
        self.saved_plan = plan
        self.stations = plan
        self.say(f"Saved plan: {len(plan)} stations.", "saved")
        return True

    def use_and_read(self) -> None:
        """Save the plan and start reading at its first unread station."""
        if self.use_plan():
            self.app.go("readings")

    def keypad_enter(self) -> None:
        """Keypad enter: suggest from distance/count, or add the typed station."""
        if self.active_field is self.ids.extra:
            self.add_station()
        else:
            self.suggest()

"""Spacing: the distance between stakes and a target count give a uniform plan (shown as a
station list); stations can be added or removed one by one for variable spacing.  On a repeat
visit the previous visit's plan is offered (never taken silently).

The plan's rules (no negative stations, read stations stay) are the service's: this screen
shows the plan being edited and asks the service for every change.
"""

from __future__ import annotations

from kivy.metrics import dp
from kivy.properties import ListProperty, NumericProperty, StringProperty
from stakeline.app.screens.base import KeypadScreen, field_number, show_number
from stakeline.app.service import count_words
from stakeline.app.widgets.common import Chip


class SpacingScreen(KeypadScreen):
    """Suggest a uniform plan, adjust it, and save it as the visit's planned stations."""

    unit = StringProperty("m")
    stations = ListProperty([])
    read = ListProperty([])
    selected = NumericProperty(-1.0)
    spacing_text = StringProperty("")
    saved_plan = ListProperty([])
    previous_plan = ListProperty([])
    previous_text = StringProperty("")
    SIDE = (0.38, 330, 480)

    def refresh(self) -> None:
        """Load the saved plan, the stake distance and the previous visit's plan."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.ids.distance.text = show_number(visit["stake_distance"], 2)
        self.saved_plan = self.service.plan(self.visit)
        self.read = [r["station"] for r in self.service.readings(self.visit)]
        self.stations = list(self.saved_plan)
        self.selected = -1.0
        self.spacing_text = ""
        offer = self.service.previous_plan(self.visit) if not self.saved_plan else None
        self.previous_plan = offer["stations"] if offer else []
        self.previous_text = offer["text"] if offer else ""
        if not self.ids.count.text:
            self.ids.count.text = "21"
        self.activate(self.ids.distance if not self.ids.distance.text else self.ids.count)
        if self.saved_plan:
            self.say(f"Saved plan: {count_words(len(self.saved_plan))}.", "saved")
        elif offer:
            self.say("No plan yet: use the last visit's plan, or suggest a new one.", "none")
        else:
            self.say("No plan yet: type the distance and a station count, then Suggest.", "none")

    def on_stations(self, *_args) -> None:
        """Show the plan as chips; tap one to select it for removal."""
        box = self.ids.plan
        box.clear_widgets()
        for station in self.stations:
            chip = Chip(
                text=f"{station:g}" + (" *" if station in self.read else ""),
                size_hint=(None, None),
                width=dp(104),
                state="down" if station == self.selected else "normal",
            )
            chip.bind(on_release=lambda _c, s=station: self.select(s))
            box.add_widget(chip)

    def select(self, station: float) -> None:
        """Select a planned station (for Remove)."""
        self.selected = station if self.selected != station else -1.0
        self.on_stations()

    def use_previous(self) -> None:
        """Take the previous visit's plan (not saved until Use this plan)."""
        self.stations = self.service.merge_plan(self.previous_plan, self.read)
        self.say(
            f"The last visit's {count_words(len(self.stations))}. Not saved yet: "
            "tap Use this plan.",
            "unsaved",
        )

    def suggest(self) -> None:
        """Uniform plan from the distance and count (not saved until Use this plan)."""
        plan = self.attempt(self.service.suggest_plan, self.ids.distance.text, self.ids.count.text)
        if plan is None:
            return
        self.stations = plan["stations"]
        self.spacing_text = plan["text"]
        self.say(f"Suggested: {self.spacing_text}. Not saved yet: tap Use this plan.", "unsaved")

    def add_station(self) -> None:
        """Insert the station typed in the 'station to add' field."""
        station = self.attempt(field_number, self.ids.extra)
        if station is None:
            return
        stations = self.attempt(self.service.plan_with, self.stations, station)
        if stations is None:
            return
        self.stations = stations
        self.ids.extra.text = ""
        self.say(f"Added {station:g} {self.unit}. Not saved yet: tap Use this plan.", "unsaved")

    def remove_selected(self) -> None:
        """Drop the selected station from the plan (stations with readings stay)."""
        if self.selected < 0:
            self.say("Tap a station in the list first, then Remove.", "unsaved")
            return
        stations = self.attempt(self.service.plan_without, self.visit, self.stations, self.selected)
        if stations is None:
            return
        self.stations = stations
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
        self.previous_plan, self.previous_text = [], ""
        self.say(f"Saved plan: {count_words(len(plan))}.", "saved")
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

"""Readings: one station at a time, typed on the keypad and saved with one tap.

The station distance is shown large; Enter (or the big green key) saves the reading -- committed
to the store before the screen moves on -- and advances to the next planned station.  Feature
codes, a note, undo, going to any station (to edit it or to insert a new one) and the list of
readings so far are all on this screen; flagged readings are marked as the checks find them.
"""

from __future__ import annotations

from datetime import datetime

from kivy.factory import Factory
from kivy.properties import (
    BooleanProperty,
    DictProperty,
    ListProperty,
    NumericProperty,
    ObjectProperty,
    StringProperty,
)
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.popup import Popup
from stakeline.app import kv, theme
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.service import FEATURE_CODES
from stakeline.app.widgets import section_view  # noqa: F401  (registers SectionView for the .kv)

kv.load("screens/readings.kv")

CODE_NAMES = dict(FEATURE_CODES)


class ReadingRow(ButtonBehavior, BoxLayout):
    """One reading in the list; tap it to edit that station."""

    station = NumericProperty(0.0)
    station_text = StringProperty("")
    reading_text = StringProperty("")
    elevation_text = StringProperty("")
    code_text = StringProperty("")
    state_text = StringProperty("")
    tone = StringProperty("saved")
    current = BooleanProperty(False)
    screen = ObjectProperty(None, allownone=True)

    def on_release(self):
        """Go to this station."""
        if self.screen is not None:
            self.screen.go_to(self.station)


class NotePopup(Popup):
    """A note for the current station (the system keyboard is fine for words)."""

    screen = ObjectProperty(None)


class HistoryPopup(Popup):
    """Every value a station has had, oldest first: nothing entered is ever lost."""

    lines = ListProperty([])

    def on_pre_open(self) -> None:
        """Fill the list with one line per version."""
        box = self.ids.lines
        box.clear_widgets()
        for text in self.lines:
            box.add_widget(Factory.HistoryLine(text=text))


HISTORY_ACTIONS = {"add": "entered", "correct": "corrected", "remove": "removed"}


class ReadingsScreen(KeypadScreen):
    """Station-by-station entry with auto-advance, undo, edit and insert."""

    station = ObjectProperty(None, allownone=True)
    mode = StringProperty("reading")  # or "station": the keypad types a station to go to
    code = StringProperty("")
    note = StringProperty("")
    unit = StringProperty("m")
    method = StringProperty("line")
    decimals = NumericProperty(3)
    saved_text = StringProperty("")
    entry_state = StringProperty("none")  # none / unsaved / saved / flagged
    position_text = StringProperty("")
    flags = DictProperty({})
    rows = ListProperty([])

    def prepare(self, station=None, **_options) -> None:
        """Open at ``station`` (or the next unread planned station)."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.method = visit["method"]
        self.ids.view.flip = visit["origin"] == "right"
        self.decimals = theme.decimals_for(self.service.settings()["precision"])
        self.mode = "reading"
        self.flags = {}
        self.say("", "none")
        if station is None:
            station = self.service.next_station(self.visit, None)
        if station is None:
            plan = self.service.plan(self.visit)
            station = plan[-1] if plan else 0.0
        self.go_to(station)
        self.request_review()

    # --- moving between stations --------------------------------------------------------------
    def go_to(self, station: float) -> None:
        """Make ``station`` the current one (inserting it into the plan when new)."""
        self.station = round(float(station), 6)
        self.mode = "reading"
        self.ids.keypad.text = ""
        existing = self.service.reading_at(self.visit, self.station)
        self.code = existing["code"] if existing else ""
        self.note = existing["note"] if existing else ""
        self.saved_text = f"{existing['reading']:.{self.decimals}f}" if existing else ""
        self.service.remember_position(self.visit, self.station)
        self.refresh()

    def refresh(self) -> None:
        """Reload the list, the drawing and the position line."""
        readings = self.service.readings(self.visit)
        plan = self.service.plan(self.visit)
        stations = sorted({*plan, *(r["station"] for r in readings)})
        here = stations.index(self.station) + 1 if self.station in stations else 0
        done = len(readings)
        self.position_text = f"{here} of {len(stations)} · {done} read"
        self._update_state()
        self.rows = [self._row(r) for r in readings]
        x, z = self.service.profile(self.visit)
        self.ids.view.water_level = self.service.water_level(self.visit)
        self.ids.view.set_section(x, z, flagged=list(self.flags), current=self.station)
        self.ids.list.data = self.rows
        self._scroll_to_current()

    def _scroll_to_current(self) -> None:
        """Keep the current station's row in view (the list scrolls, the crew does not)."""
        index = next((i for i, row in enumerate(self.rows) if row["current"]), None)
        if index is None or len(self.rows) < 2:
            return
        self.ids.list.scroll_y = max(0.0, min(1.0, 1.0 - index / (len(self.rows) - 1)))

    def _row(self, record: dict) -> dict:
        flagged = record["station"] in self.flags
        elevation = record.get("elevation")
        code = CODE_NAMES.get(record["code"], record["code"])
        if record.get("note"):
            code = (code + " · note") if code else "note"
        return {
            "station": record["station"],
            "station_text": f"{record['station']:g}",
            "reading_text": f"{record['reading']:.{self.decimals}f}",
            "elevation_text": "" if elevation is None else f"{elevation:.{self.decimals}f}",
            "code_text": code,
            "state_text": "FLAGGED"
            if flagged
            else ("saved, corrected" if record["action"] == "correct" else "saved"),
            "tone": "flagged" if flagged else "saved",
            "current": record["station"] == self.station,
            "screen": self,
        }

    def _update_state(self) -> None:
        if self.ids.keypad.text:
            self.entry_state = "unsaved"
        elif self.station in self.flags:
            self.entry_state = "flagged"
        elif self.saved_text:
            self.entry_state = "saved"
        else:
            self.entry_state = "none"

    def step(self, direction: int) -> None:
        """Go to the previous (-1) or next (+1) station of the plan and readings."""
        stations = sorted(
            {
                *self.service.plan(self.visit),
                *(r["station"] for r in self.service.readings(self.visit)),
            }
        )
        if not stations:
            return
        if self.station in stations:
            index = max(0, min(len(stations) - 1, stations.index(self.station) + direction))
        else:
            later = [s for s in stations if s > self.station]
            index = stations.index(later[0]) if later and direction > 0 else len(stations) - 1
        self.go_to(stations[index])

    def start_station_entry(self) -> None:
        """Switch the keypad to typing a station to go to (edit or insert)."""
        self.mode = "station" if self.mode == "reading" else "reading"
        self.ids.keypad.text = ""

    # --- entering -----------------------------------------------------------------------------
    def activate(self, field) -> None:
        """The readings screen has no number fields; the keypad always types the entry."""

    def on_keypad_text(self, text: str) -> None:
        """Show the typed digits as unsaved."""
        self._update_state()

    def on_key(self, key: int, codepoint: str | None) -> bool:
        """Laptop keys: digits, point, Backspace, Enter; Up/Down move between stations."""
        if self._text_input_focused():
            return False
        if key in (273, 274):  # arrow up / down
            self.step(-1 if key == 273 else 1)
            return True
        from stakeline.app.widgets.keypad import key_action

        action = key_action(key, codepoint)
        if action is None:
            return False
        self.ids.keypad.press(action)
        return True

    def accept(self) -> None:
        """Keypad enter: save the reading and advance, or go to the typed station."""
        text = self.ids.keypad.text
        if self.mode == "station":
            if text:
                station = self.attempt(float, text)
                if station is not None and station >= 0:
                    self.go_to(station)
                    self.say(f"At station {station:g} {self.unit}: type its reading.", "none")
            self.mode = "reading"
            return
        if not text:
            self.say("Type the reading first, then tap Save.", "unsaved")
            return
        record = self.attempt(
            self.service.save_reading, self.visit, self.station, text, self.code, self.note
        )
        if record is None:
            return
        saved_at = self.station
        self.say(
            f"Saved {record['reading']:.{self.decimals}f} {self.unit} at station "
            f"{saved_at:g} {self.unit}.",
            "saved",
        )
        after = self.service.next_station(self.visit, saved_at)
        if after is None:
            self.go_to(saved_at)
            self.say(
                f"Saved {record['reading']:.{self.decimals}f} {self.unit} at {saved_at:g} "
                f"{self.unit}. Every planned station is read: add stations or go to Section.",
                "saved",
            )
        else:
            self.go_to(after)
        self.request_review()

    def set_code(self, code: str) -> None:
        """Choose (or clear) the feature code of the current entry; saved with the reading or at
        once when the station already has one."""
        self.code = "" if self.code == code else code
        existing = self.service.reading_at(self.visit, self.station)
        if existing and not self.ids.keypad.text and existing["code"] != self.code:
            self.attempt(self.service.update_reading, self.visit, self.station, code=self.code)
            self.say(f"Feature code of {self.station:g} saved.", "saved")
            self.refresh()

    def open_note(self) -> None:
        """Open the note editor for the current station."""
        popup = NotePopup(screen=self)
        popup.ids.text.text = self.note
        popup.open()

    def set_note(self, text: str) -> None:
        """Keep the note for the current entry; saved at once when the station has a reading."""
        self.note = text.strip()
        existing = self.service.reading_at(self.visit, self.station)
        if existing and existing["note"] != self.note:
            self.attempt(self.service.update_reading, self.visit, self.station, note=self.note)
            self.say(f"Note on {self.station:g} saved.", "saved")
            self.refresh()
        elif not existing:
            self.say("Note kept: it is saved with the reading.", "unsaved")

    def open_history(self) -> None:
        """Show every value the current station has had (corrections keep the old ones)."""
        versions = self.service.reading_history(self.visit, self.station)
        if not versions:
            self.say(f"Station {self.station:g} has no reading yet, so no history.", "none")
            return
        lines = []
        for v in versions:
            when = datetime.fromisoformat(v["modified"]).astimezone().strftime("%H:%M")  # local
            code = CODE_NAMES.get(v["code"], v["code"])
            what = HISTORY_ACTIONS.get(v["action"], v["action"])
            text = f"{when}  {what}: {v['reading']:.{self.decimals}f} {self.unit}"
            text += f" · {code}" if code else ""
            text += f" · {v['note']}" if v["note"] else ""
            lines.append(text + ("  (undone)" if v["undone"] else ""))
        popup = HistoryPopup(title=f"History of station {self.station:g} {self.unit}", lines=lines)
        popup.open()

    def undo(self) -> None:
        """Undo the latest reading change of the visit."""
        undone = self.service.undo(self.visit)
        if undone is None:
            self.say("Nothing to undo.", "none")
            return
        self.say(f"Undone: the last change at station {undone['station']:g}.", "unsaved")
        self.go_to(undone["station"])
        self.request_review()

    def remove(self) -> None:
        """Remove the reading at the current station (kept in history; Undo brings it back)."""
        removed = self.service.remove_reading(self.visit, self.station)
        if removed is None:
            self.say(f"Station {self.station:g} has no reading to remove.", "none")
            return
        self.go_to(self.station)
        self.say(f"Removed the reading at {self.station:g} (Undo brings it back).", "unsaved")
        self.request_review()

    # --- checks -------------------------------------------------------------------------------
    def request_review(self) -> None:
        """Run the field checks off the UI thread; flagged stations are marked when done."""
        self.service.review_async(self.visit, self._on_review, self._on_review_error)

    def _on_review(self, findings: list[dict]) -> None:
        flags = {}
        for finding in findings:
            if finding["station"] is not None and finding["severity"] in ("block", "warn"):
                if finding["kind"] in ("spike", "duplicate", "order", "line"):
                    flags.setdefault(finding["station"], finding["message"])
        self.flags = flags
        if self.manager is not None and self.manager.current == self.name:
            self.refresh()

    def _on_review_error(self, exc: Exception) -> None:
        self.say(f"Checks could not run: {exc}", "flagged")

    def flag_text(self) -> str:
        """The finding on the current station, if any."""
        return self.flags.get(self.station, "")

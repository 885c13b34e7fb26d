"""Readings: one station at a time, typed on the keypad and saved with one tap.

The station distance is shown large; Enter (or the big green key) saves the reading -- committed
to the store before the screen moves on -- and advances to the next planned station.  Feature
codes, a note, undo, going to any station (to edit it or to insert a new one) and the list of
readings so far are all on this screen; flagged readings are marked as the checks find them.
"""

from __future__ import annotations

from datetime import datetime

from kivy.clock import Clock
from kivy.metrics import dp
from kivy.properties import (
    ColorProperty,
    DictProperty,
    ListProperty,
    NumericProperty,
    ObjectProperty,
    StringProperty,
)
from stakeline.app import theme
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.service import FEATURE_CODES
from stakeline.app.widgets.common import Chip, StationRow
from stakeline.app.widgets.keypad import key_action
from stakeline.app.widgets.popups import HistoryPopup, NotePopup

CODE_NAMES = dict(FEATURE_CODES)

STATE_WORDS = {"none": "TO READ", "unsaved": "UNSAVED", "saved": "SAVED", "flagged": "FLAGGED"}
"""The word beside the station for each entry state (the colour is never the only sign)."""

HISTORY_ACTIONS = {"add": "entered", "correct": "corrected", "remove": "removed"}

KEY_UP, KEY_DOWN = 273, 274


class ReadingRow(StationRow):
    """One reading in the list; tap it to edit that station."""

    reading_text = StringProperty("")
    elevation_text = StringProperty("")
    code_text = StringProperty("")
    tone = StringProperty("saved")
    state_colour = ColorProperty(theme.ACCEPT)


class CodeChip(Chip):
    """A feature-code chip of the readings screen; ``code`` is the stored code."""

    code = StringProperty("")


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
    # what the screen shows, kept up to date by _show() (the .kv only binds to these)
    station_text = StringProperty("—")
    state_word = StringProperty(STATE_WORDS["none"])
    state_colour = ColorProperty(theme.INK_SOFT)
    entry_caption = StringProperty("")
    entry_text = StringProperty("type digits")
    entry_colour = ColorProperty(theme.INK_SOFT)
    banner_text = StringProperty("")
    banner_colour = ColorProperty(theme.INK_SOFT)
    goto_text = StringProperty("Go to / add station")
    goto_tone = StringProperty("plain")
    enter_text = StringProperty("Save + next")
    note_text = StringProperty("Note")
    SIDE = (0.44, 340, 520)

    _last_saved: float | None = None

    def on_kv_post(self, _base_widget) -> None:
        """Build the feature-code chips from the service's codes; follow every shown value."""
        box = self.ids.codes
        for code, label in FEATURE_CODES:
            chip = CodeChip(text=label, code=code, font_size=self.ids.note.font_size)
            chip.bind(on_release=lambda c: self.set_code(c.code))
            box.add_widget(chip, index=1)  # before the Note button
        for name in ("station", "mode", "code", "note", "unit", "saved_text", "entry_state",
                     "flags", "message", "tone", "method"):  # fmt: skip
            self.fbind(name, self._show)
        self.ids.keypad.fbind("text", self._show)
        self._show()

    def _show(self, *_args) -> None:
        """Derive every shown text and colour from the screen's state."""
        typed = self.ids.keypad.text
        self.station_text = "—" if self.station is None else f"{self.station:g} {self.unit}"
        self.state_word = STATE_WORDS[self.entry_state]
        self.state_colour = theme.STATE_COLOURS[self.entry_state]
        if self.mode == "station":
            self.entry_caption = "Go to station"
        elif self.saved_text and not typed:
            self.entry_caption = "Saved reading; type to correct"
        elif self.method == "rod":
            self.entry_caption = "Rod reading (foresight)"
        else:
            self.entry_caption = "Reading down from the line"
        if typed:
            self.entry_text, self.entry_colour = f"{typed} {self.unit}", theme.INK
        elif self.saved_text and self.mode == "reading":
            self.entry_text, self.entry_colour = f"{self.saved_text} {self.unit}", theme.INK_SOFT
        else:
            self.entry_text, self.entry_colour = "type digits", theme.INK_SOFT
        flag = self.flags.get(self.station, "")
        if self.message:
            self.banner_text, self.banner_colour = self.message, self.message_colour
        elif flag:
            self.banner_text, self.banner_colour = flag, theme.DANGER
        else:
            self.banner_text = "Readings are saved the moment you tap Save."
            self.banner_colour = theme.INK_SOFT
        station_mode = self.mode == "station"
        self.goto_text = "Cancel" if station_mode else "Go to / add station"
        self.goto_tone = "selected" if station_mode else "plain"
        self.enter_text = "Go to station" if station_mode else "Save + next"
        self.note_text = "Note *" if self.note else "Note"
        for chip in self.ids.codes.children:
            if isinstance(chip, CodeChip):
                chip.state = "down" if chip.code == self.code else "normal"

    def prepare(self, station=None, **_options) -> None:
        """Open at ``station`` (or the next unread planned station)."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.method = visit["method"]
        self.ids.view.strip = self.service.water_strip
        self.ids.view.flip = visit["origin"] == "right"
        self.decimals = theme.decimals_for(self.service.settings()["precision"])
        self.mode = "reading"
        self.flags = {}
        self._last_saved = None
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
        position = self.service.position(self.visit, self.station)
        self.position_text = position["text"]
        self._update_state()
        readings = self.service.readings(self.visit)
        self.rows = [self._row(r) for r in readings]
        x, z = self.service.profile(self.visit)
        self.ids.view.water_level = self.service.water_level(self.visit)
        self.ids.view.set_section(x, z, flagged=list(self.flags), current=self.station)
        self.ids.list.data = self.rows
        Clock.schedule_once(lambda _dt: self._keep_row_in_view(), 0)

    def _keep_row_in_view(self) -> None:
        """Keep the row being worked on in view: the current station's, else the one saved
        last, else the nearest before the current station (the list scrolls, not the crew)."""
        stations = [row["station"] for row in self.rows]
        if not stations:
            return
        for wanted in (self.station, self._last_saved):
            if wanted in stations:
                index = stations.index(wanted)
                break
        else:
            before = [
                i for i, s in enumerate(stations) if self.station is not None and s < self.station
            ]
            index = before[-1] if before else 0
        view = self.ids.list
        row = dp(56)
        hidden = len(stations) * row - view.height
        if hidden <= 0:
            return
        offset = index * row - (view.height - row) / 2  # the row in the middle of the list
        view.scroll_y = max(0.0, min(1.0, 1.0 - offset / hidden))

    def _row(self, record: dict) -> dict:
        flagged = record["station"] in self.flags
        elevation = record.get("elevation")
        code = CODE_NAMES.get(record["code"], record["code"])
        if record.get("note"):
            code = (code + " · note") if code else "note"
        if flagged:
            state = "FLAGGED"
        else:
            state = "saved, corrected" if record["action"] == "correct" else "saved"
        return {
            "station": record["station"],
            "station_text": f"{record['station']:g}",
            "reading_text": f"{record['reading']:.{self.decimals}f}",
            "elevation_text": "" if elevation is None else f"{elevation:.{self.decimals}f}",
            "code_text": code,
            "state_text": state,
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
        after = self.service.step_station(self.visit, self.station, direction)
        if after is not None:
            self.go_to(after)

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
        """Laptop keys (no text field has the keyboard): digits, point, Backspace, Enter type
        the reading; Up/Down move between stations."""
        if key in (KEY_UP, KEY_DOWN):
            self.step(-1 if key == KEY_UP else 1)
            return True
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
                station = self.attempt(self.service.station_to_visit, text)
                if station is not None:
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
        saved_at = self._last_saved = self.station
        value = f"{record['reading']:.{self.decimals}f} {self.unit}"
        after = self.service.next_station(self.visit, saved_at)
        if after is None:
            self.go_to(saved_at)
            self.say(
                f"Saved {value} at {saved_at:g} {self.unit}. Every planned station is read: add "
                "stations or go to Section.",
                "saved",
            )
        else:
            self.go_to(after)
            self.say(f"Saved {value} at station {saved_at:g} {self.unit}.", "saved")
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
        """Open the note editor for the current station (its text box takes the keyboard)."""
        popup = NotePopup(screen=self, title=f"Note for station {self.station:g} {self.unit}")
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
        self.go_to(undone["station"])
        self.say(f"Undone: the last change at station {undone['station']:g}.", "unsaved")
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
        """Run the field checks off the UI thread; flagged stations are marked when done (a
        result overtaken by a newer request is dropped)."""
        self.service.review_async(
            self.visit, self._on_review, self._on_review_error, key="readings"
        )

    def _on_review(self, findings: list[dict]) -> None:
        self.flags = self.service.flagged_stations(findings)
        if self.manager is not None and self.manager.current == self.name:
            self.refresh()

    def _on_review_error(self, exc: Exception) -> None:
        self.say(f"Checks could not run: {exc}", "flagged")

    def flag_text(self) -> str:
        """The finding on the current station, if any."""
        return self.flags.get(self.station, "")

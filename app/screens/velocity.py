"""Velocity: the current meter at each wet station, on the same visit as the depth readings.

At each wet vertical the crew picks the method (the one suggested for its depth is preselected:
one point at 0.6 depth in shallow water, 0.2 and 0.8 deeper), then types what the meter shows on
Stakeline's keypad -- the velocity read directly (electromagnetic, acoustic), or the revolutions
and seconds counted (rotating meter: its rating turns them into a velocity).  Each point is
saved the moment Enter is pressed and the screen moves on to the next point, then the next wet
station.  Live from the service: the measured discharge so far with its ±, the mean velocity,
each panel's share (over 10 % marked), the findings, and the wading warning the moment a
station's depth × velocity reaches the limit.  The velocities are drawn over the section.

The water-surface slope has its own small screen (:mod:`stakeline.app.screens.surface`).
"""

from __future__ import annotations

from kivy.properties import (
    BooleanProperty,
    ColorProperty,
    DictProperty,
    ListProperty,
    NumericProperty,
    ObjectProperty,
    StringProperty,
)
from stakeline.app import theme
from stakeline.app.screens import velocity_text as words
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.screens.velocity_rows import MethodChip
from stakeline.app.widgets.common import FigureRow, NumberField
from stakeline.app.widgets.popups import HistoryPopup, NotePopup

KEY = "velocity"
"""Request key of the screen's background work (a late answer never overwrites a newer one)."""

PARTS = {"velocity": "Velocity at", "revolutions": "Revolutions at", "seconds": "Seconds at"}


class VelocityScreen(KeypadScreen):
    """The velocity at each wet vertical, with the discharge growing as it is read."""

    unit = StringProperty("m")
    station = ObjectProperty(None, allownone=True)
    state = DictProperty({})
    method = StringProperty("")
    counting = BooleanProperty(False)
    """True when the chosen meter counts revolutions (fields for revolutions and seconds)."""
    meter_uuid = ObjectProperty(None, allownone=True)
    meter_text = StringProperty("Meter: none")
    station_text = StringProperty("—")
    depth_text = StringProperty("")
    suggested_text = StringProperty("")
    read_text = StringProperty("")
    discharge_text = StringProperty("")
    wading_text = StringProperty("")
    findings_text = StringProperty("")
    banner_text = StringProperty("")
    banner_colour = ColorProperty(theme.INK_SOFT)
    rows = ListProperty([])
    marks = ListProperty([])
    """(station, velocity) of every vertical with a velocity: drawn over the section."""
    enter_text = StringProperty("Save + next")
    note_text = StringProperty("Note")
    point_count = NumericProperty(0)
    SIDE = (0.42, 340, 500)

    _fields: dict = {}
    _profile: tuple = ((), ())
    _fields_key = None
    _wanted = None

    def on_kv_post(self, _base_widget) -> None:
        """Method chips, and follow the window's shape and every shown value."""
        for method in words.METHODS:
            chip = MethodChip(text=words.method_chip(method), method=method)
            chip.dump_name = f"method:{method}"
            chip.bind(on_release=lambda c: self.choose_method(c.method))
            self.ids.methods.add_widget(chip)
        self._fields, self._methods, self._notes = {}, {}, {}
        for name in ("message", "tone"):
            self.fbind(name, self._show_banner)
        self._show_banner()

    def _show_banner(self, *_args) -> None:
        if self.message:
            self.banner_text, self.banner_colour = self.message, self.message_colour
        else:
            self.banner_text = "Each velocity is saved the moment you press Save."
            self.banner_colour = theme.INK_SOFT

    # --- loading ------------------------------------------------------------------------------
    def prepare(self, station=None, **_options) -> None:
        """Open at ``station`` (or the first wet station still to read)."""
        visit = self.service.visit(self.visit)
        self.unit = visit["unit"]
        self.ids.view.flip = visit["origin"] == "right"
        self.ids.view.strip = self.service.water_strip
        self.ids.view.water_level = self.service.water_level(self.visit)
        self._profile = self.service.profile(self.visit)  # the depths are not read here
        self.ids.view.set_section(*self._profile, refit=True)
        self._methods, self._notes = {}, {}
        self._clear()
        self.use_meter(self.service.chosen_meter(self.visit), remember=False)
        self.say("Working out the verticals from the section and the water level…", "none")
        self._wanted = station
        self.service.velocity_state_async(self.visit, self._loaded, self._failed, key=KEY)

    def _clear(self) -> None:
        """Show nothing of an earlier visit while this one's state is worked out."""
        self.state, self.station = {}, None
        self.wading_text = self.findings_text = self.discharge_text = ""
        self.rows, self.marks = [], []
        self.ids.list.data = []
        self._place_summary([])
        self.go_to(None)

    def _loaded(self, state: dict) -> None:
        if not self.visit:
            return
        self.say("", "none")
        self.show_state(state)
        wanted = self._wanted
        if wanted is None or self._vertical(wanted) is None:
            wanted = state.get("next_station")
        if wanted is None:
            wet = [v["station"] for v in state.get("verticals", ()) if v["wet"]]
            wanted = wet[0] if wet else None
        self.go_to(wanted)
        if "error" in state:
            self.say(state["error"], "flagged")

    def _failed(self, exc: Exception) -> None:
        self.say(f"The velocities could not be worked out: {exc}", "flagged")

    def refresh(self) -> None:
        """Ask the service for the live state again (background)."""
        self._wanted = self.station
        self.service.velocity_state_async(self.visit, self._loaded, self._failed, key=KEY)

    def show_state(self, state: dict) -> None:
        """Show the service's live state: totals, wading, findings, the list and the drawing."""
        self.state = state
        if "error" in state:
            self.discharge_text, self.wading_text = "", ""
            self.findings_text, self.rows, self.marks = "", [], []
            self._place_summary([])
            return
        self._place_summary(words.summary_rows(state))
        self.discharge_text = words.number(state["discharge"])
        self.wading_text = words.wading_text(state)
        self.findings_text = words.findings_text(state)
        self.marks = [(v["station"], v["velocity"]) for v in state["verticals"]
                      if v["velocity"] is not None]  # fmt: skip
        self._show_rows()
        coefficient = self.ids.coefficient_field
        if coefficient is not self.active_field:
            coefficient.text = f"{state['surface_coefficient']:g}"
        for chip in self.ids.methods.children:
            chip.text = words.method_chip(chip.method, state["surface_coefficient"])

    def _show_rows(self) -> None:
        verticals = [v for v in self.state.get("verticals", ()) if v["wet"]]
        self.rows = [words.vertical_row(v, self.unit, self.station, self) for v in verticals]
        self.ids.list.data = self.rows

    def on_marks(self, *_args) -> None:
        """Draw the velocities over the section."""
        stations = [s for s, _ in self.marks]
        self.ids.view.set_velocities(stations, [v for _, v in self.marks], self.station)

    def _place_summary(self, rows: list) -> None:
        box = self.ids.summary_box
        shown = list(reversed(box.children))
        if len(shown) != len(rows):
            box.clear_widgets()
            shown = []
            for _ in rows:
                shown.append(FigureRow())
                box.add_widget(shown[-1])
        for row, (name, value) in zip(shown, rows, strict=True):
            row.name, row.value, row.dump_key = name, value, f"figure:{name}"

    def _vertical(self, station) -> dict | None:
        if station is None:
            return None
        return next((v for v in self.state.get("verticals", ())
                     if abs(v["station"] - float(station)) < 1e-6), None)  # fmt: skip

    # --- moving between stations --------------------------------------------------------------
    def go_to(self, station) -> None:
        """Make ``station`` the vertical being read: its method, fields and saved values."""
        vertical = self._vertical(station)
        self.station = None if vertical is None else vertical["station"]
        if vertical is None:
            self.station_text, self.depth_text, self.read_text = "—", "", ""
            self.suggested_text = self.state.get("error", "")
            self._build_fields([])
            return
        unit = self.unit
        self.method = (vertical["method"] or self._methods.get(self.station)
                       or vertical["suggested_method"] or "one-point")  # fmt: skip
        self.station_text = f"{self.station:g} {unit}"
        source = {"rod": "wading rod", "section": "section"}.get(vertical["depth_source"], "edge")
        self.depth_text = f"Depth {vertical['depth']:.2f} {unit} ({source})"
        suggested = vertical["suggested_method"]
        self.suggested_text = (
            f"Suggested: {words.method_words(suggested, self.state['surface_coefficient'])}"
            if suggested else "Dry: nothing to read"
        )  # fmt: skip
        self.read_text = words.READ_WORDS[vertical["read"]].upper()
        note = vertical["note"] or self._notes.get(self.station, "")
        self.note_text = "Note *" if note else "Note"
        self.ids.angle_field.text = "" if vertical["angle"] is None else f"{vertical['angle']:g}"
        rod = vertical["depth"] if vertical["depth_source"] == "rod" else None
        self.ids.rod_field.text = "" if rod is None else f"{rod:.2f}"
        self._build_fields(list(vertical["needed"] if vertical["method"] else
                                self._points_of(self.method)))  # fmt: skip
        self._show_rows()
        self.on_marks()
        self.ids.view.set_section(*self._profile, current=self.station)
        self._activate_next_point()

    def _points_of(self, method: str) -> list[str]:
        return list(self.state.get("method_points", {}).get(method, ()))

    def step(self, direction: int) -> None:
        """The previous (-1) or next (+1) wet vertical."""
        wet = [v["station"] for v in self.state.get("verticals", ()) if v["wet"]]
        if not wet:
            return
        if self.station not in wet:
            self.go_to(wet[0])
            return
        index = wet.index(self.station) + direction
        if 0 <= index < len(wet):
            self.go_to(wet[index])

    def _next_station(self) -> float | None:
        pending = [v["station"] for v in self.state.get("verticals", ())
                   if v["wet"] and v["read"] != "complete"]  # fmt: skip
        later = [s for s in pending if self.station is None or s > self.station]
        return (later or pending or [None])[0]

    # --- the fields ---------------------------------------------------------------------------
    def _build_fields(self, points: list[str]) -> None:
        """One field per point the method reads (two when a meter counts revolutions), filled
        with what was saved."""
        parts = ("revolutions", "seconds") if self.counting else ("velocity",)
        key = (tuple(points), parts, self.unit)
        box = self.ids.points
        if key != self._fields_key:
            if self.active_field is not None and self.active_field not in (
                self.ids.angle_field, self.ids.rod_field, self.ids.coefficient_field
            ):  # fmt: skip
                self.active_field = None
            box.clear_widgets()
            self._fields = {}
            for point in points:
                for part in parts:
                    field = NumberField(form=self, caption=f"{PARTS[part]} {words.POINT_WORDS[point]}",
                                        unit={"velocity": f"{self.unit}/s", "revolutions": "rev",
                                              "seconds": "s"}[part])  # fmt: skip
                    field.point, field.part = point, part
                    field.dump_name = f"point:{point}:{part}"
                    box.add_widget(field)
                    self._fields[(point, part)] = field.proxy_ref  # as ``ids`` and the keypad
            self._fields_key = key
            self.point_count = len(points)
        saved = (self._vertical(self.station) or {}).get("points", {})
        for (point, part), field in self._fields.items():
            field.text = words.point_value(saved.get(point), part)
        for chip in self.ids.methods.children:
            chip.state = "down" if chip.method == self.method else "normal"

    def _activate_next_point(self) -> None:
        """The keypad types into the first point not read yet (else the first point)."""
        saved = (self._vertical(self.station) or {}).get("points", {})
        fields = list(self._fields.values())
        unread = [f for f in fields if not (saved.get(f.point) or {}).get("read")]
        target = (unread or fields or [None])[0]
        if target is not None:
            self.activate(target)

    def activate(self, field) -> None:
        """Make ``field`` the keypad's target; Enter saves a point and moves on, or saves an
        option of the vertical."""
        super().activate(field)
        self.enter_text = "Save + next" if getattr(field, "point", None) else "Save"
        if getattr(field, "part", "") == "revolutions":
            self.enter_text = "Next: seconds"

    def on_field_edited(self, field) -> None:
        """Typing shows as unsaved until Enter."""
        self.say(f"{field.caption}: typed, not saved yet. Press {self.enter_text}.", "unsaved")

    # --- saving -------------------------------------------------------------------------------
    def accept(self) -> None:
        """Keypad enter: save the point typed (or the option) and move on."""
        field = self.active_field
        if field is None or self.station is None:
            self.say(self.state.get("error") or "No wet station to read here.", "unsaved")
            return
        if field is self.ids.angle_field:
            self._save_vertical(angle_text=field.text, what="Angle of the flow")
        elif field is self.ids.rod_field:
            self._save_vertical(depth_text=field.text, what="Wading-rod depth")
        elif field is self.ids.coefficient_field:
            state = self.attempt(self.service.save_gauging_settings, self.visit,
                                 coefficient_text=field.text)  # fmt: skip
            if state is not None:
                self._saved(state, f"Surface coefficient {field.text} saved.")
        else:
            self._save_point(field)

    def _save_point(self, field) -> None:
        point, typed = field.point, {}
        if self.counting:
            revolutions, seconds = (
                self._fields[(point, "revolutions")],
                self._fields[(point, "seconds")],
            )
            if field is revolutions and revolutions.text and not seconds.text:
                self.activate(seconds)
                self.say("Now the seconds the revolutions were counted over.", "unsaved")
                return
            missing = next((f for f in (revolutions, seconds) if not f.text), None)
            if missing is not None:
                self.activate(missing)
                self.say(f"Type the {missing.caption.lower()} first.", "unsaved")
                return
            typed = {"revolutions_text": revolutions.text, "seconds_text": seconds.text}
        elif not field.text:
            self.say(f"Type the {field.caption.lower()} first, then Save.", "unsaved")
            return
        state = self.attempt(self.service.save_velocity_point, self.visit, self.station, point,
                             "" if self.counting else field.text, method=self.method,
                             meter_uuid=self.meter_uuid, **typed)  # fmt: skip
        if state is None:
            return
        station = self.station
        if self._notes.get(station):
            state = self.service.save_vertical(self.visit, station, note=self._notes.pop(station))
        vertical = next(v for v in state["verticals"] if abs(v["station"] - station) < 1e-6)
        speed = vertical["points"][point]["velocity"]
        self._saved(state, f"Saved {speed:.3f} {self.unit}/s at {words.POINT_WORDS[point]}, "
                    f"station {station:g} {self.unit}. Discharge so far "
                    f"{state['discharge']:.3f} {self.unit}³/s.")  # fmt: skip
        if vertical["read"] == "complete":
            after = self._next_station()
            if after is None:
                self.say("Every wet station has its velocity: look at the shares and findings, "
                         "then the water-surface slope and Checks.", "saved")  # fmt: skip
            elif after != station:
                self.go_to(after)

    def _saved(self, state: dict, message: str) -> None:
        """Show the state a save returned (newer than any answer still on its way)."""
        self.service.drop_pending(KEY)
        self.show_state(state)
        self.go_to(self.station)
        self.say(message, "saved")

    def _save_vertical(self, what: str, **changes) -> None:
        state = self.attempt(self.service.save_vertical, self.visit, self.station, **changes)
        if state is not None:
            self._saved(state, f"{what} at station {self.station:g} saved.")

    def choose_method(self, method: str) -> None:
        """The method of the vertical being read (points it does not read are dropped from a
        vertical already read: Undo brings them back)."""
        vertical = self._vertical(self.station)
        if vertical is None:
            return
        if vertical["uuid"] and vertical["method"] != method:
            state = self.attempt(self.service.save_vertical, self.visit, self.station,
                                 method=method)  # fmt: skip
            if state is not None:
                self._saved(state, f"Method at {self.station:g}: "
                            f"{words.method_words(method, state['surface_coefficient'])}.")  # fmt: skip
            return
        self._methods[self.station] = method
        self.go_to(self.station)

    # --- meter, note, history, undo -----------------------------------------------------------
    def open_meters(self) -> None:
        """Choose the meter, or add one (typed once, kept on this device)."""
        from stakeline.app.screens.meters import MeterPopup

        MeterPopup(screen=self).open()

    def use_meter(self, meter: dict | None, remember: bool = True) -> None:
        """Read with ``meter`` (None: velocities typed as read)."""
        if remember:
            meter = self.attempt(self.service.choose_meter, meter["uuid"] if meter else None)
        self.meter_uuid = meter["uuid"] if meter else None
        self.counting = bool(meter and meter["counts"])
        self.meter_text = f"Meter: {meter['serial']}" if meter else "Meter: none"
        if self.station is not None:
            self.go_to(self.station)
        if remember:
            how = "type revolutions and seconds" if self.counting else "type velocities as read"
            self.say(f"Reading with {self.meter_text[7:]}: {how}.", "none")

    def open_note(self) -> None:
        """A note for the vertical (saved at once, or with its first velocity)."""
        if self.station is None:
            return
        vertical = self._vertical(self.station) or {}
        popup = NotePopup(screen=self, title=f"Note for the vertical at {self.station:g} {self.unit}",
                          hint="Type the note, then Keep note (Enter). It is saved with the "
                          "vertical.")  # fmt: skip
        popup.ids.text.text = vertical.get("note") or self._notes.get(self.station, "")
        popup.open()

    def set_note(self, text: str) -> None:
        """Keep the note of the vertical being read."""
        vertical = self._vertical(self.station) or {}
        if vertical.get("uuid"):
            self._save_vertical(note=text.strip(), what="Note")
        else:
            self._notes[self.station] = text.strip()
            self.note_text = "Note *" if text.strip() else "Note"
            self.say("Note kept: it is saved with the first velocity here.", "unsaved")

    def open_history(self) -> None:
        """Every version of the vertical being read."""
        versions = self.service.vertical_history(self.visit, self.station) if self.station else []
        if not versions:
            self.say("No velocity read here yet, so no history.", "none")
            return
        HistoryPopup(title=f"History of the vertical at {self.station:g} {self.unit}",
                     lines=words.history_lines(versions, self.unit)).open()  # fmt: skip

    def undo(self) -> None:
        """Undo the latest velocity change of the visit."""
        state = self.attempt(self.service.undo_velocity, self.visit)
        if state is None:
            return
        undone = state.get("undone")
        if undone is None:
            self.say("Nothing to undo.", "none")
            return
        self.service.drop_pending(KEY)
        self.show_state(state)
        self.go_to(undone["station"])
        self.say(f"Undone: the last velocity change at station {undone['station']:g}.", "unsaved")

    def remove(self) -> None:
        """Remove the velocity read at the vertical (kept in history; Undo brings it back)."""
        vertical = self._vertical(self.station) or {}
        if not vertical.get("uuid"):
            self.say("No velocity read here to remove.", "none")
            return
        state = self.attempt(self.service.remove_vertical, self.visit, self.station)
        if state is not None:
            self._saved(state, f"Removed the velocity at {self.station:g} (Undo brings it back).")
            self.tone = "unsaved"

    def open_surface(self) -> None:
        """The water-surface slope step."""
        self.app.go("surface")

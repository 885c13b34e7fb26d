"""Stakes (datum): stake names, tape origin, benchmark, line elevations, line-level check,
distance between the stakes and optional stake coordinates."""

from __future__ import annotations

from kivy.properties import StringProperty
from stakeline.app import kv
from stakeline.app.screens.base import KeypadScreen, field_number, show_number
from stakeline.app.service import ServiceError
from stakeline.survey.reduction import ASSUMED_DATUM

kv.load("screens/stakes.kv")

NUMBER_FIELDS = (
    "benchmark_elevation",
    "line_left",
    "line_right",
    "line_check",
    "stake_distance",
    "backsight",
)
COORDINATE_FIELDS = ("left_lon", "left_lat", "right_lon", "right_lat")


class StakesScreen(KeypadScreen):
    """The datum of the visit; saved with one tap, the line check shown in words."""

    unit = StringProperty("m")
    origin = StringProperty("left")
    method = StringProperty("line")
    section_title = StringProperty("")

    def refresh(self) -> None:
        """Fill the form from the store."""
        data = self.service.stakes(self.visit)
        self.unit = data["unit"]
        self.origin = data["origin"] or "left"
        self.method = data["method"] or "line"
        self.section_title = f"{data['section']} · {data['site']}"
        ids = self.ids
        ids.left_stake.text = data["left_stake"] or ""
        ids.right_stake.text = data["right_stake"] or ""
        ids.benchmark_name.text = data["benchmark_name"] or ""
        for name in NUMBER_FIELDS:
            ids[name].text = show_number(data[name])
        for side in ("left", "right"):
            point = data[f"{side}_coordinates"]
            ids[f"{side}_lon"].text = show_number(point[0] if point else None, 6)
            ids[f"{side}_lat"].text = show_number(point[1] if point else None, 6)
        self.activate(ids.line_left)
        self.say(self.service.line_check(self.visit).text, "none")

    def on_field_edited(self, _field) -> None:
        """Typing makes the form unsaved."""
        self.say("Unsaved changes: tap Save stakes.", "unsaved")

    def set_origin(self, side: str) -> None:
        """Choose which stake the tape starts at."""
        self.origin = side
        self.on_field_edited(None)

    def set_method(self, method: str) -> None:
        """Level line and plumb ("line") or level and rod ("rod")."""
        self.method = method
        self.on_field_edited(None)

    def assume_datum(self) -> None:
        """Set both line heights to the assumed elevation (no benchmark tie)."""
        for name in ("line_left", "line_right"):
            self.ids[name].text = f"{ASSUMED_DATUM:.3f}"
        self.on_field_edited(None)

    def next_field(self) -> None:
        """Keypad enter: move to the next number field."""
        order = [*NUMBER_FIELDS, *COORDINATE_FIELDS]
        names = [n for n in order if self.ids[n] is self.active_field]
        position = order.index(names[0]) if names else -1
        self.activate(self.ids[order[(position + 1) % len(order)]])

    def collect(self) -> dict:
        """The form as store fields (ServiceError names the field that is not a number)."""
        ids = self.ids
        fields = {name: field_number(ids[name]) for name in NUMBER_FIELDS}
        fields.update(
            left_stake=ids.left_stake.text.strip(),
            right_stake=ids.right_stake.text.strip(),
            benchmark_name=ids.benchmark_name.text.strip(),
            origin=self.origin,
            method=self.method,
        )
        for side in ("left", "right"):
            lon, lat = field_number(ids[f"{side}_lon"]), field_number(ids[f"{side}_lat"])
            if (lon is None) != (lat is None):
                raise ServiceError(f"{side} stake: type both longitude and latitude, or neither")
            if lon is not None and not (-180 <= lon <= 180 and -90 <= lat <= 90):
                raise ServiceError(f"{side} stake: longitude or latitude out of range")
            fields[f"{side}_coordinates"] = None if lon is None else (lon, lat)
        return fields

    def save(self) -> bool:
        """Save the stakes; the message shows the line check (or what to fix)."""
        fields = self.attempt(self.collect)
        if fields is None:
            return False
        verdict = self.attempt(self.service.save_stakes, self.visit, **fields)
        if verdict is None:
            return False
        self.say("Saved. " + verdict.text, "flagged" if verdict.within is False else "saved")
        return True

    def save_and_continue(self) -> None:
        """Save, then go to the spacing step."""
        if self.save():
            self.app.go("spacing")

"""Stakes (datum): stake names, tape origin, benchmark, line elevations, line-level check,
distance between the stakes and optional stake coordinates (latitude, then longitude).

Line heights are never carried over from the last visit -- the crew measures them again -- but
last visit's values show as hints in the empty fields.
"""

from __future__ import annotations

from kivy.metrics import dp
from kivy.properties import NumericProperty, StringProperty
from stakeline.app.screens.base import KeypadScreen, field_number, show_number
from stakeline.app.service import ASSUMED_DATUM

NUMBER_FIELDS = (
    "benchmark_elevation",
    "line_left",
    "line_right",
    "line_check",
    "stake_distance",
    "backsight",
)
COORDINATE_FIELDS = ("left_lat", "left_lon", "right_lat", "right_lon")
HINTED = ("line_left", "line_right", "line_check", "stake_distance", "backsight")
"""Fields that show last visit's value as a hint while empty."""


class StakesScreen(KeypadScreen):
    """The datum of the visit; saved with one tap, the line check shown in words."""

    unit = StringProperty("m")
    origin = StringProperty("left")
    method = StringProperty("line")
    section_title = StringProperty("")
    SIDE = (0.38, 330, 480)
    form_cols = NumericProperty(2)

    def follow_shape(self, *_args) -> None:
        """The keypad side as on every keypad screen; the form in two columns where it fits."""
        super().follow_shape()
        form_width = self.width if self.portrait else self.width - self.side_width
        self.form_cols = 2 if form_width >= dp(470) else 1

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
        previous = data.get("previous") or {}
        for name in HINTED:
            value = previous.get(name)
            ids[name].hint = "" if value is None else f"last visit {value:.3f}"
        ids.line_check.hint = ids.line_check.hint or "optional"
        ids.backsight.hint = ids.backsight.hint or "rod method only"
        for side in ("left", "right"):
            point = data[f"{side}_coordinates"]  # (longitude, latitude)
            ids[f"{side}_lat"].text = show_number(point[1] if point else None, 6)
            ids[f"{side}_lon"].text = show_number(point[0] if point else None, 6)
        self.activate(ids.line_left)
        self.show_verdict(self.service.line_check(self.visit))

    def show_verdict(self, verdict, saved: bool = False) -> None:
        """Show the line check (a :class:`stakeline.survey.datum.LineVerdict` from the service:
        ``within`` is False outside the tolerance, None when there is nothing to judge)."""
        tone = "flagged" if verdict.within is False else ("saved" if saved else "none")
        self.say(("Saved. " if saved else "") + verdict.text, tone)

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
        """Keypad enter: move to the next number field (scrolled into view); after the last
        one, save."""
        order = [*NUMBER_FIELDS, *COORDINATE_FIELDS]
        names = [n for n in order if self.ids[n] is self.active_field]
        position = order.index(names[0]) if names else -1
        if position == len(order) - 1:
            self.save()
            return
        self.activate(self.ids[order[position + 1]])

    def collect(self) -> dict:
        """The form as store fields (ServiceError names the field that is wrong)."""
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
            fields[f"{side}_coordinates"] = self.service.stake_coordinates(
                side, ids[f"{side}_lat"].text, ids[f"{side}_lon"].text
            )
        return fields

    def save(self) -> bool:
        """Save the stakes; the message shows the line check (or what to fix)."""
        fields = self.attempt(self.collect)
        if fields is None:
            return False
        verdict = self.attempt(self.service.save_stakes, self.visit, **fields)
        if verdict is None:
            return False
        self.show_verdict(verdict, saved=True)
        return True

    def save_and_continue(self) -> None:
        """Save, then go to the spacing step."""
        if self.save():
            self.app.go("spacing")

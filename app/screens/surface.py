"""Water surface: the slope of the water surface, levelled at points along the bank.

The crew levels the water's edge at two or more points upstream and downstream of the section
(on the section's benchmark) and types each point's distance along the stream from the section
(downstream positive, upstream negative) and its elevation.  Each point is saved the moment
Enter is pressed; the fitted slope with its ± shows at once (from the service); Undo takes the
last point back.  The office calibrates Manning's n with this slope.
"""

from __future__ import annotations

from kivy.properties import NumericProperty, StringProperty
from stakeline.app.screens import velocity_text as words
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.widgets.common import FigureRow


def point_line(point: dict, unit: str) -> str:
    """One levelled point for the list: where along the stream, and its elevation."""
    distance = point["distance"]
    where = "upstream" if distance < 0 else ("downstream" if distance > 0 else "at the section")
    return f"{distance:+.1f} {unit} ({where}): {point['elevation']:.3f} {unit}"


class SurfaceScreen(KeypadScreen):
    """Water-surface points and the fitted slope with its ±."""

    unit = StringProperty("m")
    slope_text = StringProperty("")
    note_text = StringProperty("")
    points_text = StringProperty("")
    point_count = NumericProperty(0)
    enter_text = StringProperty("Next field")
    SIDE = (0.38, 330, 460)

    def refresh(self) -> None:
        """Show the points saved and the slope; the keypad types the distance."""
        self.unit = self.service.visit(self.visit)["unit"]
        self.show(self.service.water_surface(self.visit))
        self.ids.distance_field.text = self.ids.elevation_field.text = ""
        self.activate(self.ids.distance_field)
        self.say("Type the distance along the stream, then the water-surface elevation.", "none")

    def show(self, surface: dict) -> None:
        """Show the service's water-surface view: the points and the slope (or why none)."""
        unit = surface["unit"]
        points = surface["points"]
        self.point_count = len(points)
        self.points_text = "\n".join(point_line(p, unit) for p in points) or "No points yet."
        rows = words.slope_rows(surface)
        self.slope_text = rows[0][1] if rows else ""
        self.note_text = "" if rows else (surface.get("note") or "Level two points or more.")
        box = self.ids.slope_box
        box.clear_widgets()
        for name, value in rows:
            box.add_widget(FigureRow(name=name, value=value, dump_key=f"figure:{name}"))

    def activate(self, field) -> None:
        """Enter moves from the distance to the elevation, then saves the point."""
        super().activate(field)
        self.enter_text = "Save point" if field is self.ids.elevation_field else "Next field"

    def on_field_edited(self, field) -> None:
        """Typing shows as unsaved until the point is saved."""
        self.say(f"{field.caption}: typed, not saved yet.", "unsaved")

    def accept(self) -> None:
        """Keypad enter: on to the elevation, or save the point."""
        distance, elevation = self.ids.distance_field, self.ids.elevation_field
        if self.active_field is distance and not elevation.text:
            self.activate(elevation)
            return
        missing = next((f for f in (distance, elevation) if not f.text), None)
        if missing is not None:
            self.activate(missing)
            self.say(f"Type the {missing.caption.lower()} first.", "unsaved")
            return
        shown = self.attempt(self.service.add_water_surface_point, self.visit, distance.text,
                             elevation.text)  # fmt: skip
        if shown is None:
            return
        self.show(shown)
        saved = point_line(shown["points"][-1], self.unit)
        distance.text = elevation.text = ""
        self.activate(distance)
        slope = f" Slope {self.slope_text}." if self.slope_text else ""
        self.say(f"Saved {saved}.{slope}", "saved")

    def undo(self) -> None:
        """Take the last water-surface change back."""
        shown = self.attempt(self.service.undo_water_surface_point, self.visit)
        if shown is None:
            return
        self.show(shown)
        if shown.get("undone") is None:
            self.say("Nothing to undo.", "none")
        else:
            self.say("Undone: the last water-surface point.", "unsaved")

    def back(self) -> None:
        """Back to the velocities."""
        self.app.go("velocity")

"""Office figures of one visit: wetted figures with their ± bands at a water level, discharge and
the figures built on it for a chosen roughness row and energy slope, the bankfull summary, the
change since the section's earlier visit, and -- when velocities were read -- the measured
discharge with its ±, the calibrated Manning's n and the section's measured rating; with the
caution that they are estimates.

Every figure comes from the service (:class:`stakeline.app.service.office.OfficeFigures`), computed on the
worker thread; this screen only shows them.  It always opens at the visit's recorded water level
(a level dragged on the section screen and not recorded never reaches it); only a level typed
here replaces it.
"""

from __future__ import annotations

from kivy.properties import BooleanProperty, DictProperty, StringProperty
from stakeline.app.screens.base import KeypadScreen
from stakeline.app.service import ServiceError
from stakeline.app.widgets.common import Caption, Chip, FigureRow
from stakeline.errors import SurveyError


class RoughnessChip(Chip):
    """A row of the roughness table; ``key`` names it (see :data:`stakeline.survey.roughness.ROUGHNESS`)."""

    key = StringProperty("")


def value_text(row: dict, decimals: int | None = None) -> str:
    """``"7.687 ± 0.027 m²"`` for a figure row from the service (sign shown for changes);
    ``decimals`` (default: the row's own, else 3) places."""
    decimals = row.get("decimals", 3) if decimals is None else decimals
    value = row["value"]
    if abs(value) < 0.5 * 10.0**-decimals:
        value = 0.0  # no "-0.000"
    sign = "+" if row.get("signed") and value > 0 else ""
    text = f"{sign}{value:.{decimals}f}"
    if row.get("plus_minus") is not None:
        text += f" ± {row['plus_minus']:.{decimals}f}"
    return f"{text} {row['unit']}" if row["unit"] else text


def name_text(row: dict) -> str:
    """The figure's name; a figure without a unit says it is dimensionless."""
    return row["name"] if row["unit"] or row.get("plain") else f"{row['name']} (dimensionless)"


class DetailScreen(KeypadScreen):
    """Office figures at a typed water level for a chosen roughness row and energy slope."""

    unit = StringProperty("m")
    heading = StringProperty("")
    place = StringProperty("")
    back = StringProperty("home")
    roughness_key = StringProperty("")
    running = BooleanProperty(False)
    figures = DictProperty({})
    gauging = DictProperty({})
    """The gauging's office figures (see :meth:`stakeline.app.service.gauging.office_gauging`),
    {} while they are worked out."""
    back_text = StringProperty("Home")
    SIDE = (0.36, 330, 460)

    _token = 0
    _again = False
    _inputs: dict = {}
    _items: list = []

    def on_back(self, *_args) -> None:
        """The Back button says where it goes."""
        self.back_text = "Back to section" if self.back == "section" else "Home"

    def prepare(self, back: str | None = None, **options) -> None:
        """``back``: the screen the Back button returns to (``"home"`` or ``"section"``).  The
        figures open at the visit's recorded water level."""
        if back is not None:
            self.back = back
        super().prepare(**options)

    def refresh(self) -> None:
        """Read the visit's ground and levels, then compute the figures at the starting level."""
        self._token += 1  # a result still on its way belongs to the screen as it was
        self.running = self._again = False
        self._inputs = self.service.office_inputs(self.visit)
        inputs = self._inputs
        self.unit = inputs["unit"]
        self.heading = f"Office figures · {inputs['section']}"
        self.place = f"{inputs['site']} · visit of {inputs['date']}"
        self._build_chips()
        self.gauging = {}
        self.service.gauging_figures_keyed(self.visit, self._show_gauging, self._gauging_failed,
                                           key="detail-gauging")  # fmt: skip
        level = inputs["recorded_level"]
        self.ids.level_field.text = "" if level is None else f"{level:.3f}"
        self.activate(self.ids.level_field)
        if level is None:
            self.say("No water level recorded on this visit: type one.", "unsaved")
        else:
            self.say(f"At the recorded water level {level:.3f} {self.unit}.", "none")
        self.recompute()

    def _build_chips(self) -> None:
        box = self.ids.chips
        if box.children:
            return
        for row in self.service.roughness_rows():
            chip = RoughnessChip(text=row["label"], key=row["key"], group="roughness")
            chip.bind(on_release=self.choose)
            box.add_widget(chip)

    def choose(self, chip: RoughnessChip) -> None:
        """A roughness row tapped (tapping the chosen one again clears it)."""
        self.roughness_key = chip.key if chip.state == "down" else ""
        self.recompute()

    def on_field_edited(self, field) -> None:
        """A typed level or slope: new figures."""
        self.recompute()

    def next_field(self) -> None:
        """Keypad enter: type into the other field."""
        other = self.ids.slope_field if self.active_field is self.ids.level_field else None
        self.activate(other or self.ids.level_field)

    def recompute(self) -> None:
        """Ask the service for the figures (worker thread); at most one request runs at a time,
        and the latest typing is computed when it returns."""
        if self.running:
            self._again = True
            return
        self._again = False
        self._token += 1
        token = self._token
        try:
            self.service.office_figures_async(
                self._inputs,
                self.ids.level_field.text,
                self.roughness_key or None,
                self.ids.slope_field.text,
                lambda figures: self._show(token, figures),
                lambda exc: self._failed(token, exc),
            )
        except (ServiceError, SurveyError, ValueError) as exc:
            self.say(str(exc), "flagged")
            self._show_rows({"error": str(exc)})
            return
        self.running = True

    def _show(self, token: int, figures: dict) -> None:
        if token != self._token or not self.visit:
            return  # the screen moved on (another visit, or the crew left)
        self.running = False
        if self._again:
            self.recompute()
            return
        self.figures = figures
        self._show_rows(figures)
        if "error" in figures:
            self.say(figures["error"], "flagged")
        elif self.tone == "flagged":
            self.say("")

    def _failed(self, token: int, exc: Exception) -> None:
        if token != self._token:
            return
        self.running = False
        self.say(f"The figures could not be computed: {exc}", "flagged")

    def _show_gauging(self, gauging: dict) -> None:
        if not self.visit:
            return
        self.gauging = gauging
        self._show_rows(self.figures)

    def _gauging_failed(self, exc: Exception) -> None:
        self._show_gauging({"error": f"The measured discharge could not be worked out: {exc}"})

    # --- showing the figures -------------------------------------------------------------------
    def _show_rows(self, figures: dict) -> None:
        self._items = []
        if "error" in figures:
            self._note(figures["error"], strong=True)
        elif figures:
            self._figure_items(figures)
        gauging_items(self, self.gauging, self.service.roughness_rows())
        self._place_items()

    def _place_items(self) -> None:
        """Show the listed items, reusing the widgets when only the numbers changed (typing a
        level or slope keeps the same rows: no widgets are built on the UI thread then)."""
        box, items = self.ids.results, self._items
        shown = list(reversed(box.children))
        if [kind for kind, *_ in items] != [w.kind for w in shown]:
            box.clear_widgets()
            shown = []
            for kind, _a, soft in items:
                widget = FigureRow() if kind == "row" else Caption(soft=soft)
                widget.kind = kind
                box.add_widget(widget)
                shown.append(widget)
        for widget, (kind, text, extra) in zip(shown, items, strict=True):
            if kind == "row":
                widget.name, widget.value = text, extra
            else:
                widget.text, widget.soft = text, extra

    def _figure_items(self, figures: dict) -> None:
        unit = figures["unit"]
        precision = figures["precision"]
        self._heading(f"At water level {figures['level']:.3f} {unit}")
        self._rows(figures["geometry"])
        self._note(
            f"± about 95 % (2 standard uncertainties) from the crew's ± set in Settings: "
            f"one reading ±{precision['reading']:.3g} {unit}, one station "
            f"±{precision['station']:.3g} {unit}."
        )
        self._flow(figures)
        self._heading("Bankfull")
        if "bankfull" in figures:
            self._rows(figures["bankfull"]["rows"])
        else:
            self._note(figures["bankfull_note"])
        if "change" in figures:
            change = figures["change"]
            self._heading(f"Change since the visit of {change['date']}")
            self._note(
                f"Over stations {change['start']:.3f} to {change['end']:.3f} {unit}, both visits "
                "on the same benchmark."
            )
            self._rows(change["rows"])
        else:
            self._heading("Change since an earlier visit")
            self._note(figures["change_note"])

    def _flow(self, figures: dict) -> None:
        self._heading("Flow (Manning's equation, uniform flow)")
        if "flow" not in figures:
            self._note(figures["flow_note"])
            return
        row, unit = figures["roughness"], figures["unit"]
        self._note(
            f"Roughness: {row['description']}. Manning's n {row['minimum']:g} low · "
            f"{row['normal']:g} normal · {row['maximum']:g} high. Source: {row['source']} "
            f"Energy slope {figures['slope']:g}."
        )
        if figures["splits"]:
            stations = " and ".join(f"{s:.3f}" for s in figures["splits"])
            self._note(
                f"Divided at the bank tops (stations {stations} {unit}): conveyance summed by "
                "subsection, the normal n in each."
            )
        spread = figures["n_range"]
        self._rows(figures["flow"][:1])
        self._rows(
            [
                {"name": f"Discharge at low n {spread['low_n']:g}", "unit": spread["unit"],
                 "value": spread["discharge_low_n"]},
                {"name": f"Discharge at high n {spread['high_n']:g}", "unit": spread["unit"],
                 "value": spread["discharge_high_n"]},
            ]
        )  # fmt: skip
        self._note(spread["sentence"], strong=True)
        self._rows(figures["flow"][1:])

    def _heading(self, text: str) -> None:
        self._items.append(("caption", f"[b]{text}[/b]", False))

    def _note(self, text: str, strong: bool = False) -> None:
        self._items.append(("caption", text, not strong))

    def _rows(self, rows: list[dict]) -> None:
        self._items.extend(("row", name_text(row), value_text(row)) for row in rows)

    def go_back(self) -> None:
        """Back to the section screen, or home (leaving the visit) when opened from home."""
        if self.back == "section":
            self.app.go("section")
        else:
            self.app.close_visit()


def gauging_items(screen: DetailScreen, gauging: dict, roughness: list[dict]) -> None:
    """The gauging's office figures as items of the screen: measured discharge with its ±,
    water-surface slope, calibrated n with its roughness rows, the measured rating."""
    screen._heading("Measured discharge (velocity-area method, this visit)")
    if not gauging:
        screen._note("Working out the measured discharge…")
        return
    if "error" in gauging:
        screen._note(gauging["error"])
        return
    unit, q = gauging["unit"], gauging["discharge"]
    screen._rows([
        {"name": "Measured discharge", "value": q["value"], "plus_minus": q["plus_minus"],
         "unit": q["unit"]},
        {"name": "Mean velocity (Q/A)", "value": gauging["mean_velocity"], "unit": f"{unit}/s"},
    ])  # fmt: skip
    if not q["complete"]:
        screen._note("Not every wet vertical has a velocity: the discharge leaves them out.")
    screen._note("± about 95 % (k = 2) by the interpolated variance estimator (Cohn, Kiang & "
                 "Mason 2013): random error only.")  # fmt: skip
    slope, n = gauging["slope"], gauging["n"]
    if slope is not None:
        screen._rows([{"name": "Water-surface slope", "value": slope["value"],
                       "plus_minus": slope["plus_minus"], "unit": "", "decimals": 5, "plain": True}])  # fmt: skip
    if n is not None:
        labels = {row["key"]: row["label"] for row in roughness}
        screen._rows([{"name": "Calibrated Manning's n", "value": n["value"],
                       "plus_minus": n["plus_minus"], "unit": "", "decimals": 4, "plain": True}])  # fmt: skip
        held = ", ".join(labels.get(k, k) for k in n["rows"]) or "none"
        band = ", ".join(labels.get(k, k) for k in n["rows_in_band"]) or "none"
        screen._note(f"Roughness rows holding this n: {held}. Rows its ± band meets: {band}.")
    rating = gauging["rating"]
    if rating is not None:
        screen._heading("Measured rating of the section: Q = C (h − e)^b")
        rows = [
            {
                "name": "C (coefficient)",
                "value": rating["coefficient"],
                "unit": "",
                "decimals": 4,
                "plain": True,
            },
            {
                "name": "b (exponent)",
                "value": rating["exponent"],
                "unit": "",
                "decimals": 3,
                "plain": True,
            },
            {"name": "e (stage of zero flow)", "value": rating["offset"], "unit": unit},
        ]
        if rating["standard_error"] is not None:
            rows.append({"name": "Standard error (log units)", "value": rating["standard_error"],
                         "unit": "", "decimals": 4, "plain": True})  # fmt: skip
            rows.append({"name": "Standard error (about)",
                         "value": rating["standard_error_percent"], "unit": "%", "decimals": 1})  # fmt: skip
        screen._rows(rows)
        screen._note(f"Fitted to {len(rating['measurements'])} gaugings of this section "
                     f"(e: {rating['offset_source']}; WMO-No. 1044, ISO 18320).")  # fmt: skip
    for note in gauging["notes"]:
        screen._note(note)
    screen._note(gauging["caution"], strong=True)

"""The meter dialog of the velocity step: choose the current meter to read with, or add one.

A meter is typed once -- its serial, kind, rating ``v = a + b·N`` (rotating meters: N
revolutions per second) and rated range -- and kept on the device for every later visit.  The
words go in text boxes (the system keyboard, or a laptop's); Enter adds the meter typed, or
closes with the meter chosen.
"""

from __future__ import annotations

from kivy.properties import BooleanProperty, ObjectProperty, StringProperty
from stakeline.app.service import METER_KINDS, ServiceError
from stakeline.app.widgets.common import Chip
from stakeline.app.widgets.popups import SunPopup
from stakeline.errors import SurveyError

KIND_CHIPS = {"rotating": "Rotating", "electromagnetic": "Electromagnetic", "acoustic": "Acoustic"}

ROTATING_HINT = (
    "A rotating meter counts revolutions: its rating gives the velocity v = a + b·N, N "
    "revolutions per second (from the meter's rating table)."
)
DIRECT_HINT = "This meter shows the velocity itself: there is no rating to type."


class MeterPopup(SunPopup):
    """Meters kept on the device (tap one to read with it), and a form to add one;
    ``screen`` is the velocity screen (its ``use_meter(meter)`` takes the choice)."""

    screen = ObjectProperty(None)
    kind = StringProperty("rotating")
    counts = BooleanProperty(True)
    """True for a meter that counts revolutions (its rating is typed)."""
    kind_hint = StringProperty(ROTATING_HINT)
    message = StringProperty("")
    unit = StringProperty("m")

    def on_pre_open(self) -> None:
        """List the meters and the kinds; the serial box takes the keyboard."""
        self.unit = self.screen.unit if self.screen is not None else "m"
        self._list_meters()
        kinds = self.ids.kinds
        kinds.clear_widgets()
        for kind in METER_KINDS:
            chip = Chip(text=KIND_CHIPS.get(kind, kind), group="meter-kind")
            chip.kind, chip.dump_name = kind, f"kind:{kind}"
            chip.state = "down" if kind == self.kind else "normal"
            chip.bind(on_release=lambda c: self.choose_kind(c.kind))
            kinds.add_widget(chip)
        super().on_pre_open()

    def _list_meters(self) -> None:
        box = self.ids.meters
        box.clear_widgets()
        chosen = self.screen.meter_uuid if self.screen is not None else None
        service = self.screen.service
        for meter in [None, *service.meter_list()]:
            if meter is None:
                chip = Chip(text="None: type velocities")
                chip.meter, chip.dump_name = None, "meter:none"
            else:
                chip = Chip(text=f"{meter['serial']} · {meter['kind_words']}")
                chip.meter, chip.dump_name = meter, f"meter:{meter['serial']}"
            uuid = None if meter is None else meter["uuid"]
            chip.state = "down" if uuid == chosen else "normal"
            chip.bind(on_release=lambda c: self.choose(c.meter))
            box.add_widget(chip)

    def choose_kind(self, kind: str) -> None:
        """The kind of the meter being added: a direct meter has no rating to type."""
        self.kind = kind
        self.counts = kind == "rotating"
        self.kind_hint = ROTATING_HINT if self.counts else DIRECT_HINT
        for chip in self.ids.kinds.children:
            chip.state = "down" if chip.kind == kind else "normal"

    def choose(self, meter: dict | None) -> None:
        """Read with this meter (None: velocities typed as read) and close."""
        self.screen.use_meter(meter)
        self.dismiss()

    def add(self) -> None:
        """Keep the meter typed on the device and read with it."""
        ids = self.ids
        counts = self.counts
        try:
            meter = self.screen.service.add_meter(
                ids.serial.text, self.kind, ids.a.text if counts else "",
                ids.b.text if counts else "", lowest_text=ids.lowest.text,
                highest_text=ids.highest.text,
            )  # fmt: skip
        except (ServiceError, SurveyError, ValueError) as exc:
            self.message = str(exc)
            return
        chosen = next(m for m in self.screen.service.meter_list() if m["uuid"] == meter["uuid"])
        self.choose(chosen)

    def submit(self) -> None:
        """Enter: add the meter typed, or close when nothing is typed."""
        if self.ids.serial.text.strip():
            self.add()
        else:
            self.dismiss()

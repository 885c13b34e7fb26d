"""Checks before leaving: the field-check findings -- the readings' and the gauging's, each with
its station (tap one to go to its step there: the readings, or the velocities) -- a written
reason to finish despite blocking findings, and finishing -- which shows what will be sent (the
stations read of those planned, the wet verticals with a velocity, the findings, the package's
file name), asks once, then writes the visit's package to the outbox and says where."""

from __future__ import annotations

from kivy.properties import (
    BooleanProperty,
    ColorProperty,
    ListProperty,
    NumericProperty,
    StringProperty,
)
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from stakeline.app import theme
from stakeline.app.screens.base import BaseScreen
from stakeline.app.widgets.popups import ConfirmPopup

SEVERITY_WORDS = {"block": "MUST FIX", "warn": "LOOK AT", "note": "NOTE"}


class FindingRow(ButtonBehavior, BoxLayout):
    """One finding; tapping it opens the step where it is fixed (``step``: readings or
    velocity) at its station."""

    severity = StringProperty("note")
    heading = StringProperty("")
    body = StringProperty("")
    has_station = BooleanProperty(False)
    station = NumericProperty(0.0)
    step = StringProperty("readings")
    colour = ColorProperty(theme.INK_SOFT)
    fill = ColorProperty(theme.PANEL)
    heading_text = StringProperty("")

    def on_kv_post(self, _base_widget) -> None:
        """Colours and the heading follow the finding."""
        for name in ("severity", "state", "heading", "has_station", "step"):
            self.fbind(name, self._paint)
        self._paint()

    def _paint(self, *_args) -> None:
        self.colour = theme.SEVERITY_COLOURS.get(self.severity, theme.INK_SOFT)
        self.fill = theme.PANEL if self.state == "normal" else theme.TOGGLE_ON
        where = "   (tap to read the velocity there)" if self.step == "velocity" else (
            "   (tap to go there)")  # fmt: skip
        self.heading_text = self.heading + (where if self.has_station else "")


class ChecksScreen(BaseScreen):
    """Findings, overrides with a reason, finish (after one confirmation) and package."""

    findings = ListProperty([])
    summary = StringProperty("")
    blocking = NumericProperty(0)
    running = BooleanProperty(False)
    finished = BooleanProperty(False)
    package_path = StringProperty("")
    reason_needed = BooleanProperty(False)
    finish_text = StringProperty("Finish visit and write package")
    confirm = None

    def on_kv_post(self, _base_widget) -> None:
        """The reason box and the finish button follow the findings."""
        for name in ("blocking", "finished"):
            self.fbind(name, self._show_state)
        self._show_state()

    def _show_state(self, *_args) -> None:
        self.reason_needed = bool(self.blocking) and not self.finished
        self.finish_text = "Visit finished" if self.finished else "Finish visit and write package"

    def refresh(self) -> None:
        """Run the checks (off the UI thread) and show them when done."""
        visit = self.service.visit(self.visit)
        self.finished = visit["finished"]
        self.package_path = ""
        self.running = True
        self.summary = "Checking the readings..."
        self.service.review_async(self.visit, self._show, self._failed, key="checks")

    def _failed(self, exc: Exception) -> None:
        self.running = False
        self.summary = ""
        self.say(f"Checks could not run: {exc}", "flagged")

    def _show(self, findings: list[dict]) -> None:
        self.running = False
        if not self.visit:  # the crew left the visit while the checks ran
            return
        self.findings = findings
        self.blocking = len(self.service.blocking(findings))
        counts = self.service.finding_counts(findings)
        if not findings:
            self.summary = "No findings: the readings look consistent."
        else:
            self.summary = (
                f"{counts['block']} must fix · {counts['warn']} to look at · {counts['note']} notes"
            )
        box = self.ids.findings
        box.clear_widgets()
        unit = self.service.visit(self.visit)["unit"]
        for finding in findings:
            station = finding["station"]
            where = "" if station is None else f" at {round(station, 2):g} {unit}"
            word = SEVERITY_WORDS.get(finding["severity"], finding["severity"])
            if finding.get("override"):
                word = "OVERRIDDEN"
            row = FindingRow(
                severity="note" if finding.get("override") else finding["severity"],
                heading=f"{word} · {finding['kind']}{where}",
                body=f"{finding['message']}\n[b]To do:[/b] {finding['suggestion']}",
                has_station=finding["station"] is not None,
                station=finding["station"] if finding["station"] is not None else 0.0,
                step=finding.get("step") or "readings",
            )
            row.bind(on_release=self.jump)
            box.add_widget(row)
        if self.blocking:
            self.say(
                "Finishing is blocked: fix the MUST FIX findings, or write why the visit can be "
                "finished anyway.",
                "flagged",
            )
        elif not self.finished:
            self.say("Nothing blocks finishing.", "saved")

    def jump(self, row: FindingRow) -> None:
        """Open the finding's step (the readings, or the velocities) at its station."""
        if row.has_station:
            self.app.go(row.step, station=row.station)

    def finish(self) -> None:
        """Show what finishing will send and ask once (the reason is needed first when MUST FIX
        findings stand)."""
        if self.running:
            self.say("Wait for the checks to finish.", "unsaved")
            return
        reason = self.ids.reason.text
        ready = self.attempt(self.service.finish_summary, self.visit, list(self.findings), reason)
        if ready is None:
            if self.reason_needed:
                self.focus(self.ids.reason)
            return
        self.confirm = ConfirmPopup(
            title="Finish this visit?",
            summary=ready["text"],
            action_text="Finish and write package",
        )
        self.confirm.bind(on_confirm=lambda _popup: self.finish_now())
        self.confirm.open()

    def finish_now(self) -> None:
        """Finish the visit (with the reason when needed) and write its package."""
        self.confirm = None
        reason = self.ids.reason.text
        done = self.attempt(self.service.finish, self.visit, list(self.findings), reason)
        if done is None:
            return
        self.finished = True
        self.say("Visit finished. Writing the package...", "saved")
        self.service.write_package_async(self.visit, self._written, self._not_written)

    def _written(self, path: str) -> None:
        self.package_path = path
        self.say(f"Visit finished. Package written to {path}", "saved")

    def _not_written(self, exc: Exception) -> None:
        self.say(f"Visit finished, but the package could not be written: {exc}", "flagged")

    def leave(self) -> None:
        """Home (leaving the visit once it is finished)."""
        if self.finished:
            self.app.close_visit()
        else:
            self.app.go("home")

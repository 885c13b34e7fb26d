"""Checks before leaving: the field-check findings (tap one to go to its station), a written
reason to finish despite blocking findings, and finishing -- which writes the visit's package to
the outbox and says where."""

from __future__ import annotations

from kivy.properties import BooleanProperty, ListProperty, NumericProperty, StringProperty
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.boxlayout import BoxLayout
from stakeline.app import kv
from stakeline.app.screens.base import BaseScreen

kv.load("screens/checks.kv")

SEVERITY_WORDS = {"block": "MUST FIX", "warn": "LOOK AT", "note": "NOTE"}


class FindingRow(ButtonBehavior, BoxLayout):
    """One finding; tapping it opens the readings at its station."""

    severity = StringProperty("note")
    heading = StringProperty("")
    body = StringProperty("")
    has_station = BooleanProperty(False)
    station = NumericProperty(0.0)


class ChecksScreen(BaseScreen):
    """Findings, overrides with a reason, finish and package."""

    findings = ListProperty([])
    summary = StringProperty("")
    blocking = NumericProperty(0)
    running = BooleanProperty(False)
    finished = BooleanProperty(False)
    package_path = StringProperty("")

    def refresh(self) -> None:
        """Run the checks (off the UI thread) and show them when done."""
        visit = self.service.visit(self.visit)
        self.finished = visit["finished"]
        self.package_path = ""
        self.running = True
        self.summary = "Checking the readings..."
        self.service.review_async(self.visit, self._show, self._failed)

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
        counts = {s: sum(f["severity"] == s for f in findings) for s in SEVERITY_WORDS}
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
        """Open the readings at the finding's station."""
        if row.has_station:
            self.app.go("readings", station=row.station)

    def finish(self) -> None:
        """Finish the visit (with the reason when needed) and write its package."""
        if self.running:
            self.say("Wait for the checks to finish.", "unsaved")
            return
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

"""The field checks as the screens use them, as a mixin of the field service.

:class:`FieldChecks` reads what :func:`stakeline.checks.review` needs from the store on the UI thread
(one quick read), runs the review on the worker thread, and marks the findings the crew has
overridden with a written reason.  A visit with velocities read is checked at finishing like its
depth readings: the gauging's findings (:func:`stakeline.app.service.gauging.gauging_review`)
join the review.
"""

from __future__ import annotations

META_KEYS = (
    "unit",
    "method",
    "line_left",
    "line_right",
    "line_check",
    "stake_distance",
    "origin",
)
"""Visit fields the field checks read (line heights, and where the stakes are on the tape)."""


def _gauging_inputs(store, visit_uuid: str, readings: list[dict]) -> dict | None:
    """The gauging's inputs for the review, or None when no velocity was read."""
    if not store.velocities(visit_uuid):
        return None
    from stakeline.app.service.gauging import gauging_inputs

    return gauging_inputs(store, visit_uuid, readings)


class FieldChecks:
    """Mixin of :class:`stakeline.app.service.FieldService`: field-check findings of a visit."""

    def check_settings(self, unit: str):
        """The field-check tolerances for a survey in ``unit`` with this device's settings."""
        from stakeline.checks import CheckSettings
        from stakeline.survey.reduction import convert_length

        settings = self.settings()
        overrides = {"min_wet_stations": int(settings["min_wetted_stations"])}
        if settings["line_tolerance"] is not None:
            # stored in the device's unit; a visit may be surveyed in the other one
            overrides["line_tolerance"] = convert_length(
                float(settings["line_tolerance"]), settings["unit"], unit
            )
        return CheckSettings.for_unit(unit, **overrides)

    def review_inputs(self, visit_uuid: str) -> dict:
        """Everything the field checks need, read from the store (UI thread: one quick read)."""
        visit = self.store.visit(visit_uuid)
        rows = [r for r in self.readings(visit_uuid) if r.get("elevation") is not None]
        return {
            "stations": [r["station"] for r in rows],
            "elevations": [r["elevation"] for r in rows],
            "codes": [r["code"] for r in rows],
            "readings": [r["reading"] for r in rows],
            "stage": self.water_level(visit_uuid),
            # stake distance and origin place a sloping line between the stakes, so the
            # line-minus-reading check can run on it
            "meta": {k: visit[k] for k in META_KEYS},
            "settings": self.check_settings(visit["unit"]),
            # planned stations without a reading block finishing (stakeline.checks.plan)
            "plan": {
                "planned": self.plan(visit_uuid),
                "read": [r["station"] for r in self.readings(visit_uuid)],
            },  # fmt: skip
            "gauging": _gauging_inputs(self.store, visit_uuid, self.readings(visit_uuid)),
        }

    @staticmethod
    def run_review(inputs: dict) -> list[dict]:
        """Run the field checks on :meth:`review_inputs` (pure: safe on a worker thread)."""
        from stakeline.app.service.gauging import gauging_review
        from stakeline.checks import SEVERITIES, review
        from stakeline.checks.plan import plan_findings

        inputs = dict(inputs)
        plan = inputs.pop("plan", None)
        # a gauging finding is fixed on the velocity step, the others on the readings
        gauging = [{**f, "step": "velocity"} for f in gauging_review(inputs.pop("gauging", None))]
        findings = review(**inputs)
        if plan is not None:
            unit = inputs["meta"]["unit"]
            findings += plan_findings(plan["planned"], plan["read"], unit)
        found = [{**finding.as_dict(), "step": "readings"} for finding in findings] + gauging
        return sorted(
            found, key=lambda f: SEVERITIES.index(f["severity"])
        )  # stable: by station within

    def review(self, visit_uuid: str) -> list[dict]:
        """Field-check findings of the visit (dicts: kind, severity, station, message,
        suggestion, step: the screen where it is fixed, ``readings`` or ``velocity``), most
        serious first; overridden ones carry ``override`` (the reason)."""
        return self._mark_overrides(visit_uuid, self.run_review(self.review_inputs(visit_uuid)))

    def review_async(self, visit_uuid: str, on_done, on_error=None) -> None:
        """:meth:`review` on the worker thread; ``on_done(findings)`` on the UI thread."""
        inputs = self.review_inputs(visit_uuid)
        overrides = self.store.overrides(visit_uuid)
        self.worker.run(
            lambda: self._mark_overrides(visit_uuid, self.run_review(inputs), overrides),
            on_done,
            on_error,
        )

    def _mark_overrides(self, visit_uuid: str, findings: list[dict], overrides=None) -> list[dict]:
        overrides = self.store.overrides(visit_uuid) if overrides is None else overrides
        reasons = {(o["kind"], o["station"]): o["reason"] for o in overrides}
        for finding in findings:
            finding["override"] = reasons.get((finding["kind"], finding["station"]), "")
        return findings

    @staticmethod
    def flagged_stations(findings: list[dict]) -> dict[float, str]:
        """The stations the findings flag, each with its most serious finding's message: the
        one rule of :func:`stakeline.checks.flagged_stations` (block and warn findings about
        one reading -- spike, duplicate, order, line)."""
        from stakeline.checks import flagged_stations

        return flagged_stations(findings)

    @staticmethod
    def blocking(findings: list[dict]) -> list[dict]:
        """The ``block`` findings that have no written override."""
        return [f for f in findings if f["severity"] == "block" and not f.get("override")]

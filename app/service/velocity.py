"""What the velocity step needs beyond :class:`stakeline.app.service.gauging.GaugingService`, as a
mixin of the field service: the meter the crew reads with (chosen once, remembered on the device),
the count of wet verticals read for the finish summary, and the live state and office figures
on the worker thread under a request key (a late answer never overwrites a newer one).
"""

from __future__ import annotations

from stakeline.app.service.util import ServiceError

METER_SETTING = "field.meter"
"""Setting holding the meter last chosen on the velocity step (its uuid, or None)."""

METER_KIND_WORDS = {
    "rotating": "rotating (revolutions)",
    "electromagnetic": "electromagnetic",
    "acoustic": "acoustic",
}
"""How each kind of meter is named on the screens."""


class VelocityStep:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``store``, ``worker`` and the
    :class:`~stakeline.app.service.gauging.GaugingService` methods)."""

    def chosen_meter(self, visit_uuid: str | None = None) -> dict | None:
        """The meter to read with: the one this visit read with last, else the one chosen last
        on this device, else None (velocities typed as read).  A store meter dict with
        ``counts`` (True when it counts revolutions: velocities come from its rating)."""
        meters = {m["uuid"]: m for m in self.store.meters()}
        wanted = None
        if visit_uuid:
            used = [v for v in self.store.velocities(visit_uuid) if v["meter_uuid"] in meters]
            if used:
                wanted = max(used, key=lambda v: (v["modified"], v["seq"]))["meter_uuid"]
        if wanted is None:
            wanted = self.store.get_setting(METER_SETTING)
        meter = meters.get(wanted) if wanted else None
        return None if meter is None else _with_counts(meter)

    def choose_meter(self, meter_uuid: str | None) -> dict | None:
        """Read with this meter from now on (None: velocities typed as read, no meter);
        returns it as :meth:`chosen_meter` does."""
        if meter_uuid is None:
            self.store.set_setting(METER_SETTING, None)
            return None
        meter = next((m for m in self.store.meters() if m["uuid"] == meter_uuid), None)
        if meter is None:
            raise ServiceError("that meter is not kept on this device any more; add it again")
        self.store.set_setting(METER_SETTING, meter_uuid)
        return _with_counts(meter)

    def meter_list(self) -> list[dict]:
        """The meters kept on the device, each with ``counts`` and ``kind_words``."""
        return [_with_counts(m) for m in self.store.meters()]

    def velocity_counts(self, visit_uuid: str) -> dict | None:
        """``{"read": n, "wet": m}``: wet verticals with every point read, of the wet ones;
        None when the visit has no velocity at all (or nothing to gauge yet)."""
        if not self.store.velocities(visit_uuid):
            return None
        state = self.gauging_state(visit_uuid)
        if "error" in state:
            return None
        return {"read": state["read"], "wet": state["wet"]}

    def velocity_state_async(self, visit_uuid: str, on_done, on_error=None, key=None) -> None:
        """:meth:`gauging_state_async` with a request ``key`` (the screen asking): a result
        overtaken by a newer request under that key is dropped."""
        if key is not None:
            guard = self.worker.request(key)
            on_done, on_error = guard(on_done), guard(on_error)
        self.gauging_state_async(visit_uuid, on_done, on_error)

    def gauging_figures_keyed(self, visit_uuid: str, on_done, on_error=None, key=None) -> None:
        """:meth:`gauging_figures_async` with a request ``key`` (see
        :meth:`velocity_state_async`)."""
        if key is not None:
            guard = self.worker.request(key)
            on_done, on_error = guard(on_done), guard(on_error)
        self.gauging_figures_async(visit_uuid, on_done, on_error)

    def drop_pending(self, key) -> None:
        """Forget the answers still on their way under ``key`` (a newer state is shown)."""
        self.worker.request(key)


def _with_counts(meter: dict) -> dict:
    return {**meter, "counts": meter["a"] is not None,
            "kind_words": METER_KIND_WORDS.get(meter["kind"], meter["kind"])}  # fmt: skip

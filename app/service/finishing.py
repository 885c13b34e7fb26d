"""Finishing a visit, as a mixin of the field service: the summary asked about once before
finishing (stations read of those planned, findings by severity, the package's file name), the
finish itself (blocking findings need a written reason, stored as overrides in the same
transaction) and the package written to the outbox -- never for the invented demo visits.
"""

from __future__ import annotations

from stakeline.app.service.util import ServiceError, count_words, short_path

POSITION_KEY = "field.position"
"""Setting that remembers the open visit and the station being read, for resuming after a crash
(cleared on finishing)."""


class Finishing:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``store``, ``plan``,
    ``readings``, ``blocking``, ``outbox``, ``worker``, ``velocity_counts``): finishing a
    visit."""

    @staticmethod
    def finding_counts(findings: list[dict]) -> dict[str, int]:
        """How many findings of each severity (block, warn, note) stand, overrides aside."""
        counts = {"block": 0, "warn": 0, "note": 0}
        for finding in findings:
            if not finding.get("override") and finding["severity"] in counts:
                counts[finding["severity"]] += 1
        return counts

    # --- finishing --------------------------------------------------------------------------
    def _check_reason(self, findings: list[dict], reason: str) -> list[dict]:
        """The blocking findings; ServiceError when there are some and no written reason."""
        blocking = self.blocking(findings)
        if blocking and not reason.strip():
            raise ServiceError(
                f"{len(blocking)} blocking finding(s) remain: fix them, or write why the visit "
                "can be finished anyway"
            )
        return blocking

    def finish_summary(self, visit_uuid: str, findings: list[dict], reason: str = "") -> dict:
        """What finishing will do, to ask once before: stations ``read`` of ``planned``,
        ``velocities`` (wet verticals ``read`` of the ``wet`` ones, None without velocities),
        the ``counts`` of findings by severity, the ``package`` file name and its ``outbox``,
        and ``text`` saying it all.  ServiceError when blocking findings need a written reason."""
        from stakeline.store.package import package_name

        self._check_reason(findings, reason)
        visit = self.store.visit(visit_uuid)
        plan = self.plan(visit_uuid)
        read = {r["station"] for r in self.readings(visit_uuid)}
        counts = self.finding_counts(findings)
        to_override = len(self.blocking(findings))
        package = package_name(self.store.visit_records(visit_uuid))
        gauged = self.velocity_counts(visit_uuid)
        lines = [
            f"[b]{visit['section']}[/b] · {visit['site']} · {visit['date']}",
            f"Stations read: {len(read & set(plan))} of {count_words(len(plan), 'planned station')}"
            + (f" (+{len(read - set(plan))} more)" if read - set(plan) else ""),
            "Velocities: none read on this visit"
            if gauged is None
            else f"Velocities read: {gauged['read']} of {count_words(gauged['wet'], 'wet station')}",
            f"Must fix: {counts['block']}"
            + (" (finished with your written reason)" if to_override else "")
            + f" · To look at: {counts['warn']} · Notes: {counts['note']}",
            f"Package: [b]{package}[/b]",
            f"Written to: {short_path(self.outbox())}",
            "The visit cannot be changed once it is finished.",
        ]
        return {
            "read": len(read & set(plan)),
            "planned": len(plan),
            "velocities": gauged,
            "counts": counts,
            "package": package,
            "outbox": self.outbox(),
            "text": "\n".join(lines),
        }

    def finish(self, visit_uuid: str, findings: list[dict], reason: str = "") -> dict:
        """Finish the visit: blocking findings need a written ``reason`` (stored as overrides).
        Returns the finished visit record."""
        blocking = self._check_reason(findings, reason)
        self._changed()
        with self.store.transaction():  # the overrides and the finish land together or not at all
            for finding in blocking:
                self.store.add_override(
                    visit_uuid, finding["kind"], finding["station"], reason.strip()
                )
            finished = self.store.finish_visit(visit_uuid)
        position = self.store.get_setting(POSITION_KEY) or {}
        if position.get("visit") == visit_uuid:
            self.store.set_setting(POSITION_KEY, None)
        return finished

    def write_package(self, visit_uuid: str, outbox: str | None = None) -> str:
        """Write the finished visits' packages to the outbox (never the invented demo visits);
        returns this visit's file path.

        With ``outbox`` given it uses its own connection to the store file, so it may run on the
        worker thread.
        """
        from stakeline.store import Store
        from stakeline.store.package import pack_visits

        outbox = self.outbox() if outbox is None else outbox
        if self.store.path:
            with Store.open(self.store.path, device_id=self.store.device_id) as own:
                results = pack_visits(own, outbox, skip_demo=True)
        else:
            results = pack_visits(self.store, outbox, skip_demo=True)
        paths = [r["path"] for r in results if r["visit"] == visit_uuid]
        if not paths:
            raise ServiceError("the visit is not finished, so no package was written")
        return paths[0]

    def write_package_async(self, visit_uuid: str, on_done, on_error=None) -> None:
        """:meth:`write_package` on the worker thread (a file store) or at once (in memory)."""
        if self.store.path:
            outbox = self.outbox()
            self.worker.run(lambda: self.write_package(visit_uuid, outbox), on_done, on_error)
        else:
            on_done(self.write_package(visit_uuid))

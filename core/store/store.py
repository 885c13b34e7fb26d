"""The durable local store: one SQLite file per device (WAL journal, ``synchronous=FULL``).

Every record carries a ``uuid``, ``created``/``modified`` times (ISO 8601, UTC) and the ``device``
that wrote it.  Readings are never overwritten: each change to a station -- add, correct, remove,
undo -- is a new row of ``station_versions``; the current station is the latest version not
undone.  Changes to a site, section or visit are logged in ``edits`` with the old and new values.
Every value is a bound parameter; every change is one transaction, committed before the method
returns.  All lengths are in the visit's unit (``"m"`` or ``"ft"``), recorded with the visit.

The store is the only part of Stakeline that speaks SQL.  :class:`Store` is composed of parts,
each over one shared :class:`~stakeline.store.connection.StoreConnection` (the connection and
its transaction helper): :class:`~stakeline.store.sites.Sites` (sites and sections),
:class:`~stakeline.store.visits.Visits`, :class:`~stakeline.store.stations.Stations`,
:class:`~stakeline.store.sync.Sync` (packages out, merge in, import log),
:class:`~stakeline.store.gauging.Gauging` (meters, velocities, water-surface points),
:class:`~stakeline.store.settings.Settings` and :class:`~stakeline.store.devices.Devices`
(signing keys and trust).  :mod:`stakeline.store.schema` holds the tables and migrations,
:mod:`stakeline.store.values` and :mod:`stakeline.store.columns` the SQL-free rules.  Returned
records are plain dicts; their keys are documented on each method and stay stable.
"""

from __future__ import annotations

import functools
import json
import os
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from importlib import resources
from pathlib import Path

from stakeline.store import health
from stakeline.store.connection import LOCK_WAIT, StoreConnection, say_waiting
from stakeline.store.devices import Devices
from stakeline.store.gauging import Gauging
from stakeline.store.schema import schema_version
from stakeline.store.settings import Settings
from stakeline.store.sites import Sites
from stakeline.store.stations import Stations
from stakeline.store.sync import Sync
from stakeline.store.values import METHODS, StoreError
from stakeline.store.visits import Visits

__all__ = ["Store", "StoreError", "DEMO_PATH", "METHODS"]

DEMO_PATH = Path(str(resources.files("stakeline.demo_data").joinpath("tessaly_creek.json")))
"""The invented Tessaly Creek survey loaded by :meth:`Store.load_demo`."""


def _part(name: str, method: Callable) -> Callable:
    """A public method of :class:`Store` that calls ``method`` of its part ``name``."""

    @functools.wraps(method)
    def call(self, *args, **kwargs):
        return method(getattr(self, name), *args, **kwargs)

    return call


class Store:
    """A Stakeline store in one SQLite file; open with :meth:`open` or :meth:`memory`.

    Examples
    --------
    >>> store = Store.memory(device_id="tablet-demo")
    >>> site = store.create_site("Invented Creek at Mill Lane")
    >>> section = store.create_section(site["uuid"], "XS1")
    >>> visit = store.start_visit(section["uuid"], "2026-05-01", line_left=100.0, line_right=100.0)
    >>> store.save_station(visit["uuid"], 2.0, 1.25)["elevation"]   # line minus reading, m
    98.75
    >>> [s["station"] for s in store.stations(visit["uuid"])]
    [2.0]
    """

    def __init__(self, connection: StoreConnection):
        self._db = connection
        self._sites = Sites(connection)
        self._visits = Visits(connection)
        self._stations = Stations(connection)
        self._sync = Sync(connection)
        self._settings = Settings(connection)
        self._devices = Devices(connection)
        self._gauging = Gauging(connection)
        self.closed = False

    # -- opening and closing ------------------------------------------------------------------
    @classmethod
    def open(
        cls,
        path: str | os.PathLike,
        device_id: str | None = None,
        *,
        readonly: bool = False,
        on_wait: Callable[[str | None], None] | None = say_waiting,
        lock_wait: float = LOCK_WAIT,
    ) -> Store:
        """Open (creating or migrating) the store file at ``path``.

        ``device_id`` names this device in every record; when None the id stored in the file is
        used, or a new one is made and kept in the file.  ``readonly=True`` opens an existing
        store for commands that only read, also on a read-only file system (nothing is created
        or migrated; writing raises StoreError).  A writer that finds the store locked by
        another program calls ``on_wait(path)`` once (default: a line on stderr) and waits up
        to ``lock_wait`` seconds.
        """
        path = os.fspath(path)
        return cls(
            StoreConnection.open(
                path, device_id, readonly=readonly, on_wait=on_wait, lock_wait=lock_wait
            )
        )

    @classmethod
    def memory(cls, device_id: str | None = None) -> Store:
        """An in-memory store (for small tests; nothing is written to disk)."""
        return cls(StoreConnection.open(None, device_id))

    @property
    def conn(self):
        """The SQLite connection (for tests and tools that read the file directly)."""
        return self._db.conn

    @property
    def db(self):
        """The store's ``sqlite_utils.Database`` (schema introspection)."""
        return self._db.db

    @property
    def path(self) -> str | None:
        """The store file's path (None in memory)."""
        return self._db.path

    @property
    def readonly(self) -> bool:
        """Whether the store was opened read-only."""
        return self._db.readonly

    @property
    def device_id(self) -> str:
        """The id of this device, stamped on every record it writes."""
        return self._db.device_id

    def checkpoint(self) -> bool:
        """Copy the WAL journal into the main file and empty it (``wal_checkpoint(TRUNCATE)``).

        Called when the app pauses or stops, so a tablet that is then killed leaves one
        self-contained file.  Returns True when the journal was fully copied and truncated;
        False when another connection kept it busy (nothing is lost: the next checkpoint
        finishes it).  An in-memory or read-only store has no journal to empty: True.
        """
        if self.closed:
            raise StoreError("the store is closed; open it again to checkpoint")
        if self.path is None or self.readonly:
            return True
        return health.checkpoint(self._db)

    def close(self) -> None:
        """Checkpoint the WAL into the main file (TRUNCATE) and close; closing twice is fine."""
        if self.closed:
            return
        try:
            self.checkpoint()
        finally:
            self._db.conn.close()
            self.closed = True

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc_info) -> None:
        self.close()

    @property
    def schema_version(self) -> int:
        """The store file's schema version (see :mod:`stakeline.store.schema`)."""
        return schema_version(self._db.conn)

    def integrity_check(self) -> str:
        """SQLite's ``PRAGMA integrity_check`` result (``"ok"`` when the file is sound)."""
        return health.integrity_check(self._db)

    def check_health(self, full: bool | None = None) -> dict:
        """Check the file before writing into it (import does this first); see
        :func:`stakeline.store.health.check_health`.  Raises StoreCorruptError, saying how to
        recover, when the file is damaged; returns {checked, seconds, bytes}."""
        return health.check_health(self._db, self._settings, full)

    @contextmanager
    def transaction(self) -> Iterator[Store]:
        """One write transaction (``BEGIN IMMEDIATE``); nested blocks become savepoints."""
        with self._db.transaction():
            yield self

    @contextmanager
    def as_device(self, device: str) -> Iterator[Store]:
        """Stamp records written inside the block with ``device`` (demo data, imports)."""
        with self._db.as_device(device):
            yield self

    # -- the parts' public methods (each documented on its part) ------------------------------
    create_site = _part("_sites", Sites.create_site)
    sites = _part("_sites", Sites.sites)
    create_section = _part("_sites", Sites.create_section)
    update_section = _part("_sites", Sites.update_section)
    section = _part("_sites", Sites.section)
    sections = _part("_sites", Sites.sections)

    start_visit = _part("_visits", Visits.start_visit)
    update_visit = _part("_visits", Visits.update_visit)
    finish_visit = _part("_visits", Visits.finish_visit)
    reopen_visit = _part("_visits", Visits.reopen_visit)
    set_planned_stations = _part("_visits", Visits.set_planned_stations)
    planned_stations = _part("_visits", Visits.planned_stations)
    visit = _part("_visits", Visits.visit)
    visits = _part("_visits", Visits.visits)
    add_water_level = _part("_visits", Visits.add_water_level)
    add_override = _part("_visits", Visits.add_override)
    overrides = _part("_visits", Visits.overrides)
    field_history = _part("_visits", Visits.field_history)

    save_station = _part("_stations", Stations.save_station)
    stations = _part("_stations", Stations.stations)
    correct_station = _part("_stations", Stations.correct_station)
    remove_station = _part("_stations", Stations.remove_station)
    station_history = _part("_stations", Stations.station_history)
    undo = _part("_stations", Stations.undo)

    visit_records = _part("_sync", Sync.visit_records)
    package_seen = _part("_sync", Sync.package_seen)
    conflicts = _part("_sync", Sync.conflicts)
    package_content = _part("_sync", Sync.package_content)
    resolve_conflict = _part("_sync", Sync.resolve_conflict)
    import_visit_records = _part("_sync", Sync.import_visit_records)
    held_packages = _part("_sync", Sync.held_packages)
    held_content = _part("_sync", Sync.held_content)
    hold_package = _part("_sync", Sync.hold_package)
    visit_signer = _part("_sync", Sync.visit_signer)

    add_meter = _part("_gauging", Gauging.add_meter)
    meters = _part("_gauging", Gauging.meters)
    meter = _part("_gauging", Gauging.meter)
    visit_meters = _part("_gauging", Gauging.visit_meters)
    save_velocity = _part("_gauging", Gauging.save_velocity)
    correct_velocity = _part("_gauging", Gauging.correct_velocity)
    remove_velocity = _part("_gauging", Gauging.remove_velocity)
    velocities = _part("_gauging", Gauging.velocities)
    velocity_history = _part("_gauging", Gauging.velocity_history)
    undo_velocity = _part("_gauging", Gauging.undo_velocity)
    add_water_surface_point = _part("_gauging", Gauging.add_water_surface_point)
    correct_water_surface_point = _part("_gauging", Gauging.correct_water_surface_point)
    remove_water_surface_point = _part("_gauging", Gauging.remove_water_surface_point)
    water_surface_points = _part("_gauging", Gauging.water_surface_points)
    water_surface_history = _part("_gauging", Gauging.water_surface_history)
    undo_water_surface_point = _part("_gauging", Gauging.undo_water_surface_point)
    gauging_settings = _part("_gauging", Gauging.gauging_settings)
    set_gauging_settings = _part("_gauging", Gauging.set_gauging_settings)
    gauging = _part("_gauging", Gauging.gauging)

    get_setting = _part("_settings", Settings.get_setting)
    set_setting = _part("_settings", Settings.set_setting)

    signing_key = _part("_devices", Devices.signing_key)
    device_key = _part("_devices", Devices.device_key)
    export_device_key = _part("_devices", Devices.export_device_key)
    trust_device = _part("_devices", Devices.trust_device)
    retire_device = _part("_devices", Devices.retire_device)
    device = _part("_devices", Devices.device)
    devices = _part("_devices", Devices.devices)
    signer_verdict = _part("_devices", Devices.signer_verdict)

    # -- demo data ----------------------------------------------------------------------------
    def load_demo(self, json_path: str | os.PathLike | None = None) -> list[dict]:
        """Load the invented demo survey (finished visits with their water levels, and the
        gaugings of the riffle's visits with the demo's meters) in one transaction; returns the
        created visits as :meth:`visit` dicts.  Each visit is marked ``settings["demo"] = True``
        so that the app never sends it to the office."""
        path = DEMO_PATH if json_path is None else Path(json_path)
        try:
            demo = json.loads(Path(path).read_text(encoding="utf-8"))
            site, benchmark = demo["site"], demo["benchmark"]
        except (OSError, ValueError, KeyError, TypeError) as exc:
            raise StoreError(f"cannot read the demo survey {path}: {exc}") from None
        created = []
        with self.transaction():
            meters = {spec["serial"]: self.add_meter(**spec)["uuid"]
                      for spec in demo.get("meters", ())}  # fmt: skip
            site_record = self.create_site(site["name"], site.get("stream", ""),
                                           site.get("description", ""))  # fmt: skip
            for spec in demo["sections"]:
                stakes = spec.get("stake_coordinates") or {}
                section = self.create_section(
                    site_record["uuid"], spec["name"], spec["left_stake"], spec["right_stake"],
                    spec.get("origin", "left"), benchmark["name"], benchmark["elevation"],
                    stakes.get("left"), stakes.get("right"),
                    benchmark_assumed=benchmark.get("assumed", False),
                )  # fmt: skip
                for visit in spec["visits"]:
                    created.append(self._load_demo_visit(section["uuid"], visit, meters))
        return [self.visit(uuid) for uuid in created]

    def _load_demo_visit(self, section_uuid: str, spec: dict, meters: dict[str, str]) -> str:
        with self.as_device(spec.get("device") or self.device_id):
            visit = self.start_visit(
                section_uuid, spec["date"], spec.get("crew", ()), spec.get("unit", "m"),
                spec.get("line_left"), spec.get("line_right"), spec.get("line_check"),
                spec.get("method", "line"), spec.get("notes", ""),
            )  # fmt: skip
            for level in spec.get("water_levels", ()):
                self.add_water_level(visit["uuid"], level["elevation"], level.get("time"))
            for point in spec["stations"]:
                self.save_station(visit["uuid"], point["station"], point["reading"],
                                  point.get("code", ""), point.get("note", ""))  # fmt: skip
            self.update_visit(visit["uuid"], settings={"demo": True})  # invented: never sent
            self._load_demo_gauging(visit["uuid"], spec.get("gauging"), meters)
            self.finish_visit(visit["uuid"])
        return visit["uuid"]

    def _load_demo_gauging(self, visit_uuid: str, spec: dict | None, meters: dict) -> None:
        if not spec:
            return
        if spec.get("settings"):
            self.set_gauging_settings(visit_uuid, **spec["settings"])
        for vertical in spec.get("verticals", ()):
            serial = vertical.get("meter", spec.get("meter"))
            self.save_velocity(
                visit_uuid, vertical["station"], vertical["method"], vertical["points"],
                meter_uuid=meters[serial] if serial else None, angle=vertical.get("angle"),
                depth=vertical.get("depth"), note=vertical.get("note", ""),
            )  # fmt: skip
        for point in spec.get("water_surface", ()):
            self.add_water_surface_point(visit_uuid, point["distance"], point["elevation"],
                                         point.get("note", ""))  # fmt: skip

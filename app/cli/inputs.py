"""Where an office command's section comes from: a section file, or a visit in a store."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from stakeline.app.cli.base import CommandError
from stakeline.app.cli.options import UNIT_SYSTEMS
from stakeline.files.section_csv import read_section_csv
from stakeline.survey.geometry import Section


def open_store(path: str | None):
    """The store file at ``path`` (it must exist), for a command given ``--visit``."""
    from stakeline.store import Store

    if not path:
        raise CommandError("--store STORE is needed with --visit")
    if not Path(path).is_file():
        raise CommandError(f"{path}: no such store file")
    return Store.open(path)


def find_visit(store, wanted: str | None) -> dict:
    """The visit whose id is ``wanted`` or, failing that, uniquely starts with it."""
    if not wanted:
        raise CommandError("--visit UUID is needed with --store")
    matches = [v for v in store.visits() if v["uuid"] == wanted] or [
        v for v in store.visits() if v["uuid"].startswith(wanted)
    ]
    if len(matches) != 1:
        what = "no visit" if not matches else f"{len(matches)} visits"
        raise CommandError(
            f"{what} with id {wanted!r} in {store.path}; list them with `stakeline visits`"
        )
    return store.visit(matches[0]["uuid"])


def live(stations: list[dict]) -> list[dict]:
    """The stations not removed by a correction."""
    return [s for s in stations if not s.get("removed")]


def section_of(stations: list[dict]) -> Section:
    """The :class:`Section` of station dicts (station, elevation)."""
    return Section([s["station"] for s in stations], [s["elevation"] for s in stations])


def water_level(visit: dict) -> float | None:
    """The mean of the water levels read on the visit (survey unit); None when none was read."""
    levels = [
        w["elevation"] for w in visit.get("water_levels", []) if w.get("elevation") is not None
    ]
    return float(np.mean(levels)) if levels else None


def file_stations(path: str) -> list[dict]:
    """Station dicts (station, elevation, code) of a section file."""
    rows = read_section_csv(path)
    codes = rows.extra.get("code", [""] * len(rows.stations))
    return [
        {"station": s, "elevation": z, "code": c}
        for s, z, c in zip(rows.stations, rows.elevations, codes, strict=True)
    ]


def source(file: str | None, store: str | None, visit: str | None, units: str = "si"):
    """Section, station dicts, unit, visit (or None) and store (or None) from a file or a store.

    ``units`` (si or us) gives the unit of a section file; a visit carries its own.
    """
    if file:
        if store or visit:
            raise CommandError("give a section FILE.csv or --store with --visit, not both")
        stations = file_stations(file)
        return section_of(stations), stations, UNIT_SYSTEMS[units], None, None
    opened = open_store(store)
    found = find_visit(opened, visit)
    stations = live(opened.stations(found["uuid"]))
    if len(stations) < 2:
        raise CommandError(f"visit {found['uuid']} has fewer than 2 stations")
    return section_of(stations), stations, found["unit"], found, opened

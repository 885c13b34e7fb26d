"""Where an office command's section comes from: a section file, or a visit in a store.

Store files are checked before SQLite opens them (a folder, a named pipe or a device would
block or mislead it) and the commands that only read open them read-only, so they work on a
read-only file system too.  A store opened here is closed when the command ends.
"""

from __future__ import annotations

import os
import stat

import click
from stakeline.analysis import live_stations, visit_water_level
from stakeline.app.cli.base import CommandError
from stakeline.app.cli.options import UNIT_SYSTEMS
from stakeline.files.section_csv import read_section_csv
from stakeline.survey.geometry import Section

_KINDS = {stat.S_IFDIR: "a folder", stat.S_IFIFO: "a named pipe", stat.S_IFSOCK: "a socket",
          stat.S_IFCHR: "a device", stat.S_IFBLK: "a device"}  # fmt: skip


def not_regular(path: str | os.PathLike) -> str | None:
    """What ``path`` is when it exists but is not a regular file ("a named pipe"...), else None
    (a regular file, or nothing there)."""
    try:
        mode = os.stat(path).st_mode
    except (OSError, ValueError):
        return None
    return None if stat.S_ISREG(mode) else _KINDS.get(stat.S_IFMT(mode), "a special file")


def input_file(path: str) -> str:
    """``path`` of a file to read, refused at once when it is a folder, a pipe or a device
    (reading a named pipe would wait for ever); a missing file is left to the reader to say."""
    kind = not_regular(path)
    if kind is not None:
        raise CommandError(f"{path} is {kind}, not a file; give the file to read")
    return path


def store_file(path: str | None, missing: str) -> str:
    """``path`` of an existing store file; ``missing`` is the message when there is none."""
    if not path:
        raise CommandError(missing)
    kind = not_regular(path)
    if kind is not None:
        raise CommandError(f"{path} is {kind}, not a store file; give the store file")
    if not os.path.isfile(path):
        raise CommandError(missing)
    return path


def close_with_command(store):
    """``store``, closed when the running command ends (or at once outside a command)."""
    ctx = click.get_current_context(silent=True)
    if ctx is not None:
        ctx.call_on_close(store.close)
    return store


def open_store(path: str | None, readonly: bool = True):
    """The store file at ``path`` (it must exist), read-only unless ``readonly`` is False, for
    a command given ``--visit``; closed when the command ends."""
    from stakeline.store import Store

    if not path:
        raise CommandError("--store STORE is needed with --visit")
    store_file(path, f"{path}: no such store file")
    return close_with_command(Store.open(path, readonly=readonly))


def find_visit(store, wanted: str | None) -> dict:
    """The visit whose id is ``wanted`` or, failing that, uniquely starts with it."""
    if not wanted:
        raise CommandError("--visit UUID is needed with --store")
    visits = store.visits()
    matches = [v for v in visits if v["uuid"] == wanted] or [
        v for v in visits if v["uuid"].startswith(wanted)
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
    """The visit's water level (survey unit) by the one policy,
    :func:`stakeline.analysis.visit_water_level`; None when none was read."""
    return visit_water_level(visit.get("water_levels") or [])


def file_stations(path: str) -> list[dict]:
    """Station dicts (station, elevation, code) of a section file."""
    rows = read_section_csv(input_file(path))
    codes = rows.extra.get("code", [""] * len(rows.stations))
    return [
        {"station": s, "elevation": z, "code": c}
        for s, z, c in zip(rows.stations, rows.elevations, codes, strict=True)
    ]


def visit_stations(store, visit: dict) -> list[dict]:
    """The visit's live stations in station order, each with an elevation; a one-line error
    says why not (no line heights, too few stations)."""
    return live_stations(visit, store.stations(visit["uuid"]))


def source(file: str | None, store: str | None, visit: str | None, units: str = "si"):
    """Section, station dicts, unit, visit (or None) and store (or None) from a file or a store.

    ``units`` (si or us) gives the unit of a section file; a visit carries its own.  The store
    is opened read-only.
    """
    if file:
        if store or visit:
            raise CommandError("give a section FILE.csv or --store with --visit, not both")
        stations = file_stations(file)
        return section_of(stations), stations, UNIT_SYSTEMS[units], None, None
    opened = open_store(store)
    found = find_visit(opened, visit)
    stations = visit_stations(opened, found)
    return section_of(stations), stations, found["unit"], found, opened

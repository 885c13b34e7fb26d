"""Reading a gauging from a CSV file: stations, depths and velocities of the verticals.

The header names ``station`` and ``depth`` and either ``velocity`` (the vertical's mean velocity)
or point velocities ``v02``, ``v06``, ``v08`` (velocity at 0.2, 0.6 and 0.8 of the depth below the
surface); an optional ``angle`` gives the angle (degrees) between the flow and the normal to the
section.  Per row, the point velocities given must form a published method (v06 alone; v02 and
v08; all three: see :mod:`stakeline.gauging.vertical`).  A row with zero depth is a water's edge;
a wet row with no velocity is a vertical not yet read (NaN).  Columns are matched
case-insensitively; other columns are kept as text.  Lengths in the survey unit, velocities in
unit/s -- the file carries numbers only.

Errors name the row (1-based, the header is row 1), as :mod:`stakeline.files.section_csv` does.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass, field
from pathlib import Path

from stakeline.errors import SectionFileError
from stakeline.files.durable import NotRegularFileError, read_regular
from stakeline.gauging.units import GaugingError
from stakeline.gauging.vertical import mean_velocity, method_for_points

POINT_COLUMNS = ("v02", "v06", "v08")
"""Point-velocity columns, by depth below the surface."""

MAX_BYTES = 1_000_000
"""Largest gauging file read (bytes); a gauging of 30 verticals is about a kilobyte."""

MAX_ROWS = 5_000
"""Most rows of data read."""


class GaugingFileError(SectionFileError):
    """A gauging file that cannot be read; ``row`` is the 1-based line number in the file."""


@dataclass(frozen=True)
class GaugingRows:
    """Columns read from a gauging file, one entry per vertical in file order.

    ``velocities``: mean velocity in each vertical (NaN where not read); ``methods``: how it was
    got (``"mean"`` from the velocity column, a method of
    :data:`stakeline.gauging.vertical.VERTICAL_METHODS`, or ``""`` when not read); ``points``:
    the point-velocity columns present (NaN where blank); ``angles``: degrees, 0 where blank
    (None without an angle column); ``rows``: the file row of each vertical.
    """

    stations: list[float]
    depths: list[float]
    velocities: list[float]
    methods: list[str]
    rows: list[int]
    points: dict[str, list[float]] = field(default_factory=dict)
    angles: list[float] | None = None
    extra: dict[str, list[str]] = field(default_factory=dict)


def _number(text: str, column: str, row: int) -> float:
    try:
        value = float(text)
    except (TypeError, ValueError):
        raise GaugingFileError(f"row {row}: {column} {text!r} is not a number", row=row) from None
    if not math.isfinite(value):
        raise GaugingFileError(f"row {row}: {column} {text!r} is not a finite number", row=row)
    return value


def _lines(path: Path) -> list[list[str]]:
    try:
        data = read_regular(path, MAX_BYTES)
        if len(data) > MAX_BYTES:
            raise GaugingFileError(
                f"{path}: the file is larger than a gauging file may be ({MAX_BYTES:,} bytes); "
                "check it is the right file"
            )
        return list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline="")))
    except FileNotFoundError:
        raise GaugingFileError(f"{path}: no such file") from None
    except NotRegularFileError as exc:
        raise GaugingFileError(f"{path}: {exc}") from None
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise GaugingFileError(f"{path}: cannot be read as a text CSV file ({exc})") from None


def _header(path: Path, lines: list[list[str]]) -> dict[str, int]:
    if not lines:
        raise GaugingFileError(
            f"{path}: the file is empty; expected a header row such as station,depth,velocity"
        )
    header = [name.strip().lower() for name in lines[0]]
    shown = ",".join(header) or "empty"
    for name in ("station", "depth"):
        if name not in header:
            raise GaugingFileError(f"{path}: row 1: no {name!r} column in the header ({shown})", 1)
    twice = sorted({n for n in header if n and header.count(n) > 1})
    if twice:
        raise GaugingFileError(f"{path}: row 1: column {twice[0]!r} appears twice", 1)
    if "velocity" not in header and not any(p in header for p in POINT_COLUMNS):
        raise GaugingFileError(
            f"{path}: row 1: no velocity column in the header ({shown}); give 'velocity' (the "
            "vertical's mean) or point velocities v02, v06, v08",
            1,
        )
    if len(lines) - 1 > MAX_ROWS:
        raise GaugingFileError(f"{path}: more than {MAX_ROWS:,} rows; a gauging has far fewer")
    return {name: i for i, name in enumerate(header) if name}


def _velocity(cells: dict[str, str], row: int) -> tuple[float, str, dict]:
    """The row's mean velocity, how it was got, and its point velocities (NaN where blank)."""
    read = {p: _number(cells[p], p, row) for p in POINT_COLUMNS if cells.get(p, "")}
    points = {p: read.get(p, math.nan) for p in POINT_COLUMNS if p in cells}
    if cells.get("velocity", ""):
        if read:
            raise GaugingFileError(
                f"row {row}: both a mean velocity and point velocities; give one or the other",
                row=row,
            )
        return _number(cells["velocity"], "velocity", row), "mean", points
    if not read:
        return math.nan, "", points
    try:
        method = method_for_points(read)
    except GaugingError as exc:
        raise GaugingFileError(f"row {row}: {exc}", row=row) from None
    return float(mean_velocity(method, read)), method, points


def read_gauging_csv(path: str | Path) -> GaugingRows:
    """Read the verticals of a gauging from a CSV file with a header row (see the module notes).

    Raises :class:`GaugingFileError` naming the file and the row at fault: a cell that is not a
    number, a negative depth, a station not beyond the one before, an angle not between -90 and
    90 degrees, point velocities that form no published method, or a file over
    :data:`MAX_BYTES`.
    """
    try:
        return _read(Path(path))
    except GaugingFileError as exc:
        if str(exc).startswith(str(path)):
            raise
        raise GaugingFileError(f"{path}: {exc}", row=exc.row) from None


def _read(path: Path) -> GaugingRows:
    lines = _lines(path)
    where = _header(path, lines)
    known = {"station", "depth", "velocity", "angle", *POINT_COLUMNS}
    out = GaugingRows([], [], [], [], [], {p: [] for p in POINT_COLUMNS if p in where})
    angles: list[float] | None = [] if "angle" in where else None
    extra: dict[str, list[str]] = {n: [] for n in where if n not in known}
    for number, raw in enumerate(lines[1:], start=2):
        if not any(cell.strip() for cell in raw):
            continue
        cells = {n: (raw[i].strip() if i < len(raw) else "") for n, i in where.items()}
        station = _number(cells["station"], "station", number)
        depth = _number(cells["depth"], "depth", number)
        if depth < 0:
            raise GaugingFileError(f"row {number}: depth {depth:g} is negative", row=number)
        if out.stations and station <= out.stations[-1]:
            raise GaugingFileError(
                f"row {number}: station {station:g} is not beyond the station before it "
                f"({out.stations[-1]:g}); stations must increase across the water",
                row=number,
            )
        velocity, method, points = _velocity(cells, number)
        if angles is not None:
            angle = _number(cells["angle"], "angle", number) if cells["angle"] else 0.0
            if not abs(angle) < 90:
                raise GaugingFileError(
                    f"row {number}: angle {angle:g} is not between -90 and 90 degrees", row=number
                )
            angles.append(angle)
        out.stations.append(station)
        out.depths.append(depth)
        out.velocities.append(velocity)
        out.methods.append(method)
        out.rows.append(number)
        for name, value in points.items():
            out.points[name].append(value)
        for name in extra:
            extra[name].append(cells[name])
    if len(out.stations) < 2:
        raise GaugingFileError(
            f"{path}: a gauging needs at least 2 rows of data (the water's edges), "
            f"found {len(out.stations)}"
        )
    return GaugingRows(
        out.stations, out.depths, out.velocities, out.methods, out.rows, out.points, angles, extra
    )

"""Reading a cross-section from a CSV file with ``station`` and ``elevation`` columns.

Pure file parsing: no SQL, no UI.  Errors name the file row (1-based, the header is row 1) so a
person can open the file and fix it.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass, field
from pathlib import Path

from stakeline.errors import SectionFileError
from stakeline.files.durable import NotRegularFileError, read_regular
from stakeline.survey.numbers import NumberError, parse_number
from stakeline.survey.units import Unit

REQUIRED = ("station", "elevation")

MAX_BYTES = 64 * 1024 * 1024
"""Largest section file read (bytes); 20,000 stations with codes and notes take about 1 MB."""


@dataclass(frozen=True)
class SectionRows:
    """Columns read from a section file: numbers for station/elevation, text for the rest."""

    stations: list[float]
    elevations: list[float]
    rows: list[int]
    extra: dict[str, list[str]] = field(default_factory=dict)


def _number(text: str, column: str, row: int, path: Path) -> float:
    try:
        value = parse_number(text, f"row {row}: {column}")
    except NumberError as exc:
        raise SectionFileError(f"{path}: {exc}", row=row) from None
    if abs(value) > Unit.LIMIT:
        raise SectionFileError(
            f"{path}: row {row}: {column} {text.strip()} is beyond ±{Unit.LIMIT:,.0f} of the "
            "survey unit; check the number",
            row=row,
        )
    return value


def _shown(header: list[str]) -> str:
    """The header cells for a one-line message (a quoted cell may hold a line break)."""
    text = ",".join(header)
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def read_section_csv(path: str | Path, *, keep_order: bool = False) -> SectionRows:
    """Read stations and elevations (survey unit) from a CSV file with a header row.

    Columns are matched case-insensitively; other columns are kept as text in ``extra``.  Blank
    lines are skipped, and so are comment lines starting with ``#`` before the header row (an
    export's custody line).  Raises :class:`stakeline.errors.SectionFileError` naming the file and the
    row at fault: a value that is not a number, or beyond ±10^6 of the unit.  A station less than
    the one before it, or closer to it than a micrometre (yet not equal), is an error too, unless
    ``keep_order`` is true: then the rows are returned in file order as they are, for the field
    checks to report.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "xs.csv"
    >>> _ = path.write_text("station,elevation,code\\n0,2.0,bank_top\\n2,0.5,\\n4,2.1,bank_top\\n")
    >>> rows = read_section_csv(path)
    >>> rows.stations, rows.extra["code"]
    ([0.0, 2.0, 4.0], ['bank_top', '', 'bank_top'])
    """
    path = Path(path)
    try:
        data = read_regular(path, MAX_BYTES)
        if len(data) > MAX_BYTES:
            raise SectionFileError(
                f"{path}: the file is larger than a section file may be ({MAX_BYTES:,} bytes); "
                "check it is the right file"
            )
        lines = list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline="")))
    except FileNotFoundError:
        raise SectionFileError(f"{path}: no such file") from None
    except NotRegularFileError as exc:
        raise SectionFileError(f"{path}: {exc}; give the section file") from None
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise SectionFileError(f"{path}: cannot be read as a text CSV file ({exc})") from None
    skipped = 0  # comment lines ("# signed by ...") before the header row
    while skipped < len(lines) and lines[skipped] and lines[skipped][0].lstrip().startswith("#"):
        skipped += 1
    lines = lines[skipped:]
    if not lines:
        raise SectionFileError(
            f"{path}: the file is empty (no 'station' column); expected a header row with "
            "station,elevation"
        )
    header = [name.strip().lower() for name in lines[0]]
    for name in REQUIRED:
        if name not in header:
            raise SectionFileError(
                f"{path}: row {skipped + 1}: no {name!r} column in the header "
                f"({_shown(header) or 'empty'})",
                row=skipped + 1,
            )
    where = {name: header.index(name) for name in header}
    stations, elevations, rows = [], [], []
    extra: dict[str, list[str]] = {n: [] for n in header if n not in REQUIRED}
    for number, cells in enumerate(lines[1:], start=skipped + 2):
        if not any(cell.strip() for cell in cells):
            continue
        if len(cells) < len(header):
            cells = cells + [""] * (len(header) - len(cells))
        station = _number(cells[where["station"]], "station", number, path)
        elevation = _number(cells[where["elevation"]], "elevation", number, path)
        if not keep_order and stations and station < stations[-1]:
            raise SectionFileError(
                f"{path}: row {number}: station {station:g} is less than the station before it "
                f"({stations[-1]:g}); stations must not decrease",
                row=number,
            )
        if not keep_order and stations and 0 < station - stations[-1] < Unit.RESOLUTION:
            raise SectionFileError(
                f"{path}: row {number}: station {station!r} is closer than a micrometre to the "
                f"station before it ({stations[-1]!r}); give both rows one station (a vertical "
                "face) or correct the tape reading",
                row=number,
            )
        stations.append(station)
        elevations.append(elevation)
        rows.append(number)
        for name in extra:
            extra[name].append(cells[where[name]].strip())
    if len(stations) < 2:
        raise SectionFileError(
            f"{path}: a section needs at least 2 rows of data, found {len(stations)}"
        )
    return SectionRows(stations, elevations, rows, extra)

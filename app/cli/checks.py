"""``stakeline check``: field checks of a section file, as the crew would see them at the stream.

The file is read as ``stakeline section`` reads it (header row with ``station`` and ``elevation``;
optional ``code`` and ``reading`` columns are used when present), but the points are kept in the
order they were entered, so stations that go backwards become ``order`` findings instead of an
error.  Exit code 0 whether or not there are findings; 2 with a one-line error on bad input.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import click
from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.options import file_argument, json_option, option, stage_option
from stakeline.checks import SEVERITIES, CheckSettings, review
from stakeline.errors import SectionFileError
from stakeline.files.section_csv import read_section_csv

CAUTION = (
    "Field checks only: they catch likely mistakes while the crew is on site; they are not a "
    "substitute for review of the figures by a licensed engineer."
)


def _reading(text: str, row: int) -> float | None:
    """A reading cell as a number (survey unit), ``None`` when empty."""
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not math.isfinite(value):
        raise SectionFileError(f"row {row}: reading {text!r} is not a number", row=row)
    return value


def read_entered(path: str | Path) -> dict[str, list]:
    """Stations, elevations, codes and readings (survey unit) of a section CSV in row order.

    Read by :func:`stakeline.files.section_csv.read_section_csv` with ``keep_order``: stations may go
    backwards (the order check reports them).  Readings are ``None`` where the column is absent or
    the cell empty.  Errors name the file and the row.
    """
    try:
        rows = read_section_csv(path, keep_order=True)
        blank = [""] * len(rows.stations)
        readings = [
            _reading(text, row)
            for text, row in zip(rows.extra.get("reading", blank), rows.rows, strict=True)
        ]
    except SectionFileError as exc:
        if str(exc).startswith(f"{path}:"):
            raise
        raise SectionFileError(f"{path}: {exc}", row=exc.row) from None
    return {
        "stations": rows.stations,
        "elevations": rows.elevations,
        "codes": rows.extra.get("code", blank),
        "readings": readings,
    }


@cli.command(
    "check",
    short_help="field checks of a section file: bad readings, gaps, missing water's edges",
    help="Check the section in FILE.csv (columns station, elevation; optional code "
    "and reading) for readings out of line, stations out of order or repeated, panels too "
    "wide, too few stations in the water, unread water's edges and an overtopped end.",
)
@file_argument()
@stage_option()
@option("--unit", type=click.Choice(["m", "ft"]), default="m", help="length unit of the file")
@json_option("print the findings as a JSON list")
@option(
    "--min-stations",
    type=int,
    metavar="N",
    help="fewest stations wanted across the water (default 20, common practice)",
)
@option("--line-left", type=float, metavar="H", help="line height at the left stake")
@option("--line-right", type=float, metavar="H", help="line height at the right stake")
@option("--line-check", type=float, metavar="H", help="line height by the level check")
@option("--plumb-length", type=float, metavar="L", help="longest possible reading")  # fmt: skip
def check(
    file: str,
    stage: float | None,
    unit: str,
    as_json: bool,
    min_stations: int | None,
    line_left: float | None,
    line_right: float | None,
    line_check: float | None,
    plumb_length: float | None,
) -> int:
    """Print the findings for the file (exit 0 with or without findings)."""
    if min_stations is not None and min_stations < 1:
        raise CommandError(f"--min-stations must be at least 1, got {min_stations}")
    entered = read_entered(file)
    overrides = {} if min_stations is None else {"min_wet_stations": min_stations}
    meta = {
        "unit": unit,
        "line_left": line_left,
        "line_right": line_right,
        "line_check": line_check,
        "plumb_length": plumb_length,
    }
    settings = CheckSettings.for_unit(unit, **overrides)
    findings = review(stage=stage, meta=meta, settings=settings, **entered)
    if as_json:
        print(json.dumps([f.as_dict() for f in findings]))
        return 0
    if not findings:
        print(f"{file}: no findings ({len(entered['stations'])} points checked)")
    else:
        counts = ", ".join(
            f"{sum(f.severity == s for f in findings)} {s}"
            for s in SEVERITIES
            if any(f.severity == s for f in findings)
        )
        print(f"{file}: {len(findings)} findings ({counts})")
    for f in findings:
        where = "" if f.station is None else f" at {f.station:g} {unit}"
        print(f"[{f.severity}] {f.kind}{where}: {f.message}")
        print(f"    -> {f.suggestion}")
    if stage is None:
        print("No --stage given: the checks that need the water level were not run.")
    print(CAUTION)
    return 0

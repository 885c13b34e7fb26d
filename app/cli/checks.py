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

from stakeline.checks import SEVERITIES, CheckSettings, review
from stakeline.errors import SectionFileError
from stakeline.files.section_csv import read_section_csv

CAUTION = (
    "Field checks only: they catch likely mistakes while the crew is on site; they are not a "
    "substitute for review of the figures by a licensed engineer."
)


def register(subparsers) -> None:
    """Add ``check`` to the ``stakeline`` parser."""
    p = subparsers.add_parser(
        "check",
        help="field checks of a section file: bad readings, gaps, missing water's edges",
        description="Check the section in FILE.csv (columns station, elevation; optional code "
        "and reading) for readings out of line, stations out of order or repeated, panels too "
        "wide, too few stations in the water, unread water's edges and an overtopped end.",
    )
    p.add_argument("file", metavar="FILE.csv")
    p.add_argument("--stage", type=float, metavar="S", help="water level (elevation)")
    p.add_argument("--unit", choices=("m", "ft"), default="m", help="length unit of the file")
    p.add_argument("--json", action="store_true", help="print the findings as a JSON list")
    p.add_argument(
        "--min-stations",
        type=int,
        metavar="N",
        help="fewest stations wanted across the water (default 20, common practice)",
    )
    p.add_argument("--line-left", type=float, metavar="H", help="line height at the left stake")
    p.add_argument("--line-right", type=float, metavar="H", help="line height at the right stake")
    p.add_argument("--line-check", type=float, metavar="H", help="line height by the level check")
    p.add_argument("--plumb-length", type=float, metavar="L", help="longest possible reading")
    p.set_defaults(handler=run_check)


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


def run_check(args) -> int:
    """Print the findings for the file (exit 0 with or without findings)."""
    from stakeline.app.cli import CommandError

    if args.min_stations is not None and args.min_stations < 1:
        raise CommandError(f"--min-stations must be at least 1, got {args.min_stations}")
    entered = read_entered(args.file)
    overrides = {} if args.min_stations is None else {"min_wet_stations": args.min_stations}
    meta = {
        "unit": args.unit,
        "line_left": args.line_left,
        "line_right": args.line_right,
        "line_check": args.line_check,
        "plumb_length": args.plumb_length,
    }
    settings = CheckSettings.for_unit(args.unit, **overrides)
    findings = review(stage=args.stage, meta=meta, settings=settings, **entered)
    if args.json:
        print(json.dumps([f.as_dict() for f in findings]))
        return 0
    if not findings:
        print(f"{args.file}: no findings ({len(entered['stations'])} points checked)")
    else:
        counts = ", ".join(
            f"{sum(f.severity == s for f in findings)} {s}"
            for s in SEVERITIES
            if any(f.severity == s for f in findings)
        )
        print(f"{args.file}: {len(findings)} findings ({counts})")
    for f in findings:
        where = "" if f.station is None else f" at {f.station:g} {args.unit}"
        print(f"[{f.severity}] {f.kind}{where}: {f.message}")
        print(f"    -> {f.suggestion}")
    if args.stage is None:
        print("No --stage given: the checks that need the water level were not run.")
    print(CAUTION)
    return 0

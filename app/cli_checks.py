"""``stakeline check``: field checks of a section file, as the crew would see them at the stream.

The file is read as ``stakeline section`` reads it (header row with ``station`` and ``elevation``;
optional ``code`` and ``reading`` columns are used when present), but the points are kept in the
order they were entered, so stations that go backwards become ``order`` findings instead of an
error.  Exit code 0 whether or not there are findings; 2 with a one-line error on bad input.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

from core.checks import SEVERITIES, CheckSettings, review
from core.errors import SectionFileError

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


def _number(path: Path, text: str, column: str, row: int) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not math.isfinite(value):
        raise SectionFileError(f"{path}: row {row}: {column} {text!r} is not a number", row=row)
    return value


def read_entered(path: str | Path) -> dict[str, list]:
    """Stations, elevations, codes and readings of a section CSV in the order of its rows.

    Like :func:`core.section_csv.read_section_csv` but stations may go backwards (the order check
    reports them).  Readings are ``None`` where the column is absent or the cell empty.
    """
    path = Path(path)
    try:
        with path.open(newline="", encoding="utf-8-sig") as handle:
            lines = list(csv.reader(handle))
    except FileNotFoundError:
        raise SectionFileError(f"{path}: no such file") from None
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise SectionFileError(f"{path}: cannot be read as a text CSV file ({exc})") from None
    header = [name.strip().lower() for name in lines[0]] if lines else []
    for name in ("station", "elevation"):
        if name not in header:
            raise SectionFileError(
                f"{path}: row 1: no {name!r} column in the header ({','.join(header) or 'empty'})",
                row=1,
            )
    where = {name: header.index(name) for name in header}
    out: dict[str, list] = {"stations": [], "elevations": [], "codes": [], "readings": []}
    for row, cells in enumerate(lines[1:], start=2):
        if not any(cell.strip() for cell in cells):
            continue
        cells = cells + [""] * (len(header) - len(cells))
        out["stations"].append(_number(path, cells[where["station"]], "station", row))
        out["elevations"].append(_number(path, cells[where["elevation"]], "elevation", row))
        out["codes"].append(cells[where["code"]].strip() if "code" in where else "")
        text = cells[where["reading"]].strip() if "reading" in where else ""
        out["readings"].append(_number(path, text, "reading", row) if text else None)
    if len(out["stations"]) < 2:
        raise SectionFileError(
            f"{path}: a section needs at least 2 rows of data, found {len(out['stations'])}"
        )
    return out


def run_check(args) -> int:
    """Print the findings for the file (exit 0 with or without findings)."""
    from app.cli import CommandError

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

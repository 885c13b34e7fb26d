"""``stakeline section`` and ``stakeline table``: figures of a section file at water levels."""

from __future__ import annotations

import csv
import json
import sys

from stakeline.app.cli.base import cli
from stakeline.app.cli.inputs import input_file
from stakeline.app.cli.options import file_argument, json_option, option, stage_option
from stakeline.errors import SectionError
from stakeline.files.section_csv import read_section_csv
from stakeline.survey.figures import FIGURE_TABLE
from stakeline.survey.geometry import FIGURES, Section
from stakeline.survey.numbers import parse_number
from stakeline.survey.rating import stage_range

LABELS = {name: (FIGURE_TABLE[name].label, FIGURE_TABLE[name].power) for name in FIGURES}
"""Label and power of the unit (``"²"`` or ``""``) of each figure, from the one table of
figure names (:data:`stakeline.survey.figures.FIGURE_TABLE`)."""


def load_section(path: str) -> Section:
    """Read a section CSV (``station``, ``elevation`` columns) into a :class:`Section`; an
    error about a point names the file too."""
    rows = read_section_csv(input_file(path))
    try:
        return Section(rows.stations, rows.elevations)
    except SectionError as exc:
        row = "" if exc.index is None else f"row {rows.rows[exc.index]}: "
        raise SectionError(f"{path}: {row}{exc}", exc.index, exc.station) from None


@cli.command(
    "section",
    short_help="wetted area, perimeter, top width and hydraulic radius at one water level",
    help="Figures of the section in FILE.csv (columns station, elevation; one length "
    "unit) at water level S, in the file's unit.",
)
@file_argument()
@stage_option(required=True)
@option("--unit", default="", help="unit label to print (e.g. m or ft); default none")
@json_option("print a JSON object")
def section(file: str, stage: float, unit: str, as_json: bool) -> int:
    """Print the figures of one water level."""
    water = load_section(file).at(parse_number(stage, "--stage"))
    if as_json:
        print(json.dumps(water.as_dict()))
        return 0
    print(f"water level {stage:g} {unit}".rstrip())
    for name in FIGURES:
        label, power = LABELS[name]
        suffix = f" {unit}{power}" if unit else (" (unit²)" if power else "")
        print(f"  {label:<18} {getattr(water, name):12.4f}{suffix}")
    parts = ", ".join(f"{a:.3f} to {b:.3f}" for a, b in water.edges) or "none (dry)"
    print(f"  {'water edges':<18} {parts}")
    return 0


@cli.command(
    "table",
    short_help="figures over a range of water levels",
    help="Figures of the section in FILE.csv for water levels A, A+C, ... up to B.",
)
@file_argument()
@option("--from", "start", type=float, required=True, metavar="A", help="lowest water level")
@option("--to", "stop", type=float, required=True, metavar="B", help="highest water level")
@option("--step", type=float, required=True, metavar="C", help="water level step")
@option("--csv", "as_csv", is_flag=True, help="print CSV instead of a table")
def table(file: str, start: float, stop: float, step: float, as_csv: bool) -> int:
    """Print the figures for a range of water levels."""
    section = load_section(file)
    stages = stage_range(
        parse_number(start, "--from"), parse_number(stop, "--to"),
        parse_number(step, "--step", positive=True),
    )  # fmt: skip
    figures = section.table(stages)
    if as_csv:
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow(["stage", *FIGURES])
        for i, stage in enumerate(stages):
            writer.writerow([f"{stage:.6g}", *(f"{figures[n][i]:.6g}" for n in FIGURES)])
        return 0
    heads = ["stage", "area", "perimeter", "top width", "hyd radius", "hyd depth", "max depth"]
    print("  ".join(f"{h:>10}" for h in heads))
    for i, stage in enumerate(stages):
        print("  ".join(f"{v:10.4f}" for v in [stage, *(figures[n][i] for n in FIGURES)]))
    return 0

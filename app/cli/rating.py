"""``stakeline rating``: the stage-discharge table of a section file or a store visit."""

from __future__ import annotations

import sys
from pathlib import Path

from stakeline.analysis import analyse_visit, nice_step
from stakeline.app.cli.base import cli
from stakeline.app.cli.inputs import source
from stakeline.app.cli.options import (
    Roughness,
    Slope,
    analysis_options,
    file_argument,
    flow_inputs,
    option,
    roughness_options,
    slope_options,
    step_option,
    units_option,
    visit_options,
)
from stakeline.files.exports import rating_csv, write_text
from stakeline.survey.figures import figure_unit
from stakeline.survey.numbers import parse_number
from stakeline.survey.rating import rating_stages, rating_table, stage_for, stage_from_table


@cli.command(
    "rating",
    short_help="stage-discharge table of a section file or a store visit",
    help="Rating table (uniform flow) from FILE.csv or a visit in a store, printed, "
    "written as CSV or plotted; --discharge Q finds the water level carrying Q.",
)
@file_argument(required=False)
@visit_options()
@units_option("unit of FILE.csv")
@option("--from", "start", type=float, metavar="A", help="lowest water level")
@option("--to", "stop", type=float, metavar="B", help="highest water level")
@step_option("water level step")
@option("--csv", "as_csv", is_flag=True, help="print CSV")
@option("--out", metavar="FILE.csv", help="write the table as CSV")
@option("--plot", metavar="FILE.png", help="write a plot (.png or .pdf)")
@option("--discharge", type=float, metavar="Q", help="print the water level carrying Q")
@roughness_options
@slope_options
def rating(
    file: str | None,
    store: str | None,
    visit: str | None,
    units: str,
    start: float | None,
    stop: float | None,
    step: float | None,
    as_csv: bool,
    out: str | None,
    plot: str | None,
    discharge: float | None,
    roughness: Roughness,
    slope: Slope,
) -> int:
    """Print or write a rating table (the one office analysis's, or over --from/--to)."""
    _, stations, unit, found, _ = source(file, store, visit, units)
    flow_inputs(roughness, slope)
    options = analysis_options(roughness, slope, from_codes=found is not None, rating_step=step)
    # The water level read on the visit plays no part in a rating table.
    result = analyse_visit({"unit": unit, **(found or {}), "water_levels": []}, stations, options)
    table, values, splits = result.rating, result.n_values, result.splits or None
    if start is not None or stop is not None:
        section = result.section
        chosen = step or nice_step(section.highest_stage - section.lowest)
        stages = rating_stages(section, chosen, start, stop)
        table = rating_table(section, stages, values, result.slope, unit, splits)
    if out:
        print(f"wrote {write_text(out, rating_csv(table, unit))}")
    if plot:
        from stakeline.report.pages import write_rating_plot

        title = (
            f"{found['site']} — {found['section']} ({found['date']})" if found else Path(file).name
        )
        print(f"wrote {write_rating_plot(table, unit, title, plot)}")
    if discharge is not None:
        wanted = parse_number(discharge, "--discharge")
        exact = stage_for(result.section, wanted, values, result.slope, unit, splits)
        print(f"discharge {wanted:g} {figure_unit('discharge', unit)}: water level {exact:.4f} {unit} "
              f"(table reading {stage_from_table(table, wanted):.4f} {unit})")  # fmt: skip
        return 0
    if as_csv:
        sys.stdout.write(rating_csv(table, unit))
    elif not (out or plot):
        print_rating(table, unit)
    return 0


def print_rating(table: dict, unit: str) -> None:
    """Print a rating table as aligned columns with units."""
    names = list(table)
    print("  ".join(f"{n.replace('_', ' ')[:12]:>12}" for n in names))
    print("  ".join(f"{'(' + figure_unit(n, unit) + ')':>12}" for n in names))
    for i in range(len(table["stage"])):
        print("  ".join(f"{float(table[n][i]):12.4f}" for n in names))

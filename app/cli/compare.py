"""``stakeline compare``: scour, fill and change between two surveys of one section."""

from __future__ import annotations

import json
import sys
from pathlib import Path

from stakeline.analysis import AnalysisOptions, analyse_visit
from stakeline.app.cli.base import CommandError, cli, shown
from stakeline.app.cli.inputs import (
    file_stations,
    find_visit,
    open_store,
    section_of,
    visit_stations,
)
from stakeline.app.cli.options import (
    UNIT_SYSTEMS,
    argument,
    json_option,
    option,
    stage_option,
    units_option,
    visit_options,
)
from stakeline.survey.figures import figure_unit
from stakeline.survey.numbers import parse_number


@cli.command(
    "compare",
    short_help="scour, fill and change between two visits of one section",
    help="Compare two surveys of one section on the same benchmark: two section files "
    "BEFORE.csv AFTER.csv, or --store with --visit twice (ordered by date).",
)
@argument("files", "two section files, before and after", nargs=-1, metavar="[FILE.csv]...")
@visit_options(many=True)
@units_option("unit of the files")
@stage_option("water level for area and top width")
@json_option("print a JSON object")
@option("--plot", metavar="FILE.png", help="write an overlay plot (.png or .pdf)")
def compare(
    files: tuple[str, ...],
    store: str | None,
    visit: tuple[str, ...],
    units: str,
    stage: float | None,
    as_json: bool,
    plot: str | None,
) -> int:
    """Print the change between two visits (the one office analysis's comparison)."""
    before, after, unit, names, visits = _inputs(files, store, visit, units)
    typed = parse_number(stage, "--stage", optional=True)
    if typed is not None:  # a level typed must be under both surveys' ends: said plainly
        section_of(before).at(typed)
        section_of(after).at(typed)
    later = visits[1] if visits else {"unit": unit}
    earlier = {"visit": visits[0] if visits else {}, "stations": before}
    result = analyse_visit(later, after, AnalysisOptions(stage=typed), earlier)
    if result.comparison is None:
        raise CommandError(result.comparison_note)
    out = dict(result.comparison)
    out["unit"] = unit
    stage = out.get("stage")
    if plot:
        from stakeline.report.pages import write_overlay_plot

        labels = [Path(n).stem if n.endswith(".csv") else n for n in names]
        print(f"wrote {write_overlay_plot(before, after, unit, labels, plot)}", file=sys.stderr)
    if as_json:
        print(json.dumps(out))
        return 0
    area = figure_unit("area", unit)
    print(f"{names[0]} -> {names[1]}  (stations {out['start']:g} to {out['end']:g} {unit})")
    print(f"  scour (bed lowered)   {out['scour_area']:10.4f} {area}")
    print(f"  fill (bed raised)     {out['fill_area']:10.4f} {area}")
    print(f"  net (fill - scour)    {out['net_change']:+10.4f} {area}")
    print(f"  deepest point         {out['deepest_before'][0]:g} {unit} at {out['deepest_before'][1]:.3f} -> "
          f"{out['deepest_after'][0]:g} {unit} at {out['deepest_after'][1]:.3f} "
          f"(lowered {out['deepest_drop']:+.3f} {unit})")  # fmt: skip
    if "stage" in out:
        print(f"  at water level {stage:g}: area {out['area_before']:.4f} -> {out['area_after']:.4f} {area} "
              f"({out['area_change']:+.4f}); top width {out['top_width_before']:.3f} -> "
              f"{out['top_width_after']:.3f} {unit} ({out['top_width_change']:+.3f})")  # fmt: skip
    return 0


def _inputs(files, store, visits, units):
    """Before and after stations, unit, the two names (files or dates) and the two store
    visits (None for files)."""
    if files:
        if len(files) != 2 or store or visits:
            raise CommandError("give two files BEFORE.csv AFTER.csv, or --store with two --visit")
        before, after = (file_stations(name) for name in files)
        return before, after, UNIT_SYSTEMS[units], list(files), None
    if not visits or len(visits) != 2:
        raise CommandError("give --visit twice (the two visits to compare) with --store")
    opened = open_store(store)
    found = sorted((find_visit(opened, v) for v in visits), key=lambda v: (v["date"], v["created"]))
    if found[0]["section_uuid"] != found[1]["section_uuid"]:
        raise CommandError(
            "the two visits are of different sections; compare visits of one section"
        )
    if found[0]["unit"] != found[1]["unit"]:
        raise CommandError(
            f"the visits use different units ({shown(found[0]['unit'])}, {shown(found[1]['unit'])})"
        )
    before, after = (visit_stations(opened, v) for v in found)
    return before, after, found[0]["unit"], [shown(v["date"]) for v in found], found

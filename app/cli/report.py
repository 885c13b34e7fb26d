"""``stakeline report``: the PDF or PNG report of one visit."""

from __future__ import annotations

import sys

from stakeline.analysis import earlier_visit, visit_water_level
from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.inputs import find_visit, source, visit_stations
from stakeline.app.cli.options import (
    Roughness,
    Slope,
    analysis_options,
    option,
    roughness_options,
    slope_options,
    stage_option,
    step_option,
    visit_options,
)
from stakeline.app.cli.progress import Progress
from stakeline.measurements import section_measurements
from stakeline.report import field_findings, prepare_report, write_report
from stakeline.survey.numbers import parse_number
from stakeline.survey.uncertainty import Precision


@cli.command(
    "report",
    short_help="PDF or PNG report of a visit: section, hydraulics, rating, checks, change",
    help="Report of one visit in STORE: section plot, figures with uncertainty, rating "
    "table, bankfull summary, change since the previous visit, stations, field-check findings "
    "and overrides, and the cautions. Discharge needs n and a slope.",
)
@visit_options()
@option("--out", required=True, metavar="FILE.pdf", help="report file, .pdf or .png")
@stage_option("water level (default: mean of those read)")
@option("--bankfull", type=float, metavar="B", help="bankfull level (default: lower bank top)")
@step_option()
@option("--reading-precision", type=float, metavar="E", help="± of one reading (survey unit)")
@option("--station-precision", type=float, metavar="E", help="± of one station (survey unit)")
@option("--compare-with", metavar="UUID", help="earlier visit to compare (default: the one before)")
@option("--no-compare", is_flag=True, help="leave out the change since an earlier visit")
@roughness_options
@slope_options  # fmt: skip
def report(
    store: str | None,
    visit: str | None,
    out: str,
    stage: float | None,
    bankfull: float | None,
    step: float | None,
    reading_precision: float | None,
    station_precision: float | None,
    compare_with: str | None,
    no_compare: bool,
    roughness: Roughness,
    slope: Slope,
) -> int:
    """Write the report of one visit."""
    _, stations, unit, found, opened = source(None, store, visit)
    default = Precision.default(unit)
    precision = Precision(
        default.reading if reading_precision is None else
        parse_number(reading_precision, "--reading-precision", positive=True),
        default.station if station_precision is None else
        parse_number(station_precision, "--station-precision", positive=True),
    )  # fmt: skip
    options = analysis_options(
        roughness, slope, from_codes=True, stage=parse_number(stage, "--stage", optional=True),
        bankfull=parse_number(bankfull, "--bankfull", optional=True), precision=precision,
        rating_step=parse_number(step, "--step", positive=True, optional=True),
    )  # fmt: skip
    # The report names who vouches for the visit's records (chain of custody).
    found = {**found, "signer": opened.visit_signer(found["uuid"])}
    with Progress("report") as progress:
        progress(0, 3, "field checks")
        water = visit_water_level(found["water_levels"], options.stage)
        findings = field_findings(found, stations, water)
        previous = None if no_compare else earlier_for(opened, found, compare_with)
        progress(1, 3, "analysis")
        data = prepare_report(
            found, stations, options, findings, opened.overrides(found["uuid"]), previous,
            gauging=opened.gauging(found["uuid"]),
            measurements=section_measurements(opened, found["section_uuid"], unit=found["unit"]),
        )  # fmt: skip
        progress(2, 3, "drawing")
        path = write_report(data, out)
        progress(3, 3)
    print(f"wrote {path}")
    if data.missing:
        print("no discharge in the report: missing " + "; ".join(data.missing), file=sys.stderr)
    return 0


def earlier_for(store, visit: dict, compare_with: str | None) -> dict | None:
    """The earlier visit to compare with, as {visit, stations}: the one named by
    --compare-with, else the one the policy picks (:func:`stakeline.analysis.earlier_visit`)."""
    if not compare_with:
        return earlier_visit(visit, store.visits(visit["section_uuid"]), store.stations)
    other = find_visit(store, compare_with)
    if other["section_uuid"] != visit["section_uuid"]:
        raise CommandError("--compare-with names a visit of another section")
    return {"visit": other, "stations": visit_stations(store, other)}

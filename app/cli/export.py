"""``stakeline export``: a visit's stations CSV, rating CSV and GeoJSON."""

from __future__ import annotations

import re
import sys
from pathlib import Path

from stakeline.analysis import analyse_visit
from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.inputs import find_visit, live, open_store, visit_stations
from stakeline.app.cli.options import (
    Roughness,
    Slope,
    analysis_options,
    option,
    roughness_options,
    slope_options,
    step_option,
    visit_options,
)
from stakeline.files.exports import (
    geojson_text,
    rating_csv,
    section_geojson,
    signed_by,
    stations_csv,
    write_text,
)
from stakeline.survey.numbers import parse_number


def slug(text: str) -> str:
    """``text`` as a file-name part: letters and digits joined by hyphens, lower case.

    >>> slug("XS1 riffle"), slug("../2026-04-14\\n")
    ('xs1-riffle', '2026-04-14')
    """
    return re.sub(r"[^A-Za-z0-9]+", "-", str(text)).strip("-").lower() or "section"


@cli.command(
    "export",
    short_help="write a visit's stations CSV, rating CSV and GeoJSON",
    help="Write files for a visit into DIR: stations CSV always; rating CSV when n and "
    "slope are given; GeoJSON (RFC 7946) when both stakes have coordinates.",
)
@visit_options()
@option("--out", required=True, metavar="DIR", help="folder to write into (made if missing)")
@step_option()
@roughness_options
@slope_options
def export(
    store: str | None,
    visit: str | None,
    out: str,
    step: float | None,
    roughness: Roughness,
    slope: Slope,
) -> int:
    """Write the export files of one visit."""
    opened = open_store(store)
    found = find_visit(opened, visit)
    unit = found["unit"]
    stations = live(opened.stations(found["uuid"]))  # as read, elevations or not
    custody = signed_by(opened.visit_signer(found["uuid"]), found)
    options = analysis_options(
        roughness, slope, from_codes=True,
        rating_step=parse_number(step, "--step", positive=True, optional=True),
    )  # fmt: skip
    folder = Path(out)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise CommandError(f"{folder}: cannot make the folder ({exc.strerror or exc})") from None
    stem = folder / f"{slug(found['site'])}_{slug(found['section'])}_{slug(found['date'])}"
    print(f"wrote {write_text(f'{stem}_stations.csv', stations_csv(stations, unit, custody))}")
    if (options.n is not None or options.roughness) and options.slope is not None:
        # The rating of the one office analysis (the report's); no water level is needed.
        bare = {**found, "water_levels": []}
        result = analyse_visit(bare, visit_stations(opened, found), options)
        print(f"wrote {write_text(f'{stem}_rating.csv', rating_csv(result.rating, unit))}")
    else:
        print("no rating CSV: give --n or --roughness, and --slope", file=sys.stderr)
    info = opened.section(found["section_uuid"])
    if info.get("left_coordinates") and info.get("right_coordinates"):
        doc = section_geojson(info, found, stations, unit, custody)
        print(f"wrote {write_text(f'{stem}.geojson', geojson_text(doc))}")
    else:
        print("no GeoJSON: the section has no stake coordinates", file=sys.stderr)
    return 0

"""``stakeline export``: a visit's stations CSV, rating CSV and GeoJSON."""

from __future__ import annotations

import re
import sys
from pathlib import Path

from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.inputs import source
from stakeline.app.cli.options import (
    Roughness,
    Slope,
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
    stations_csv,
    write_text,
)
from stakeline.report import nice_step
from stakeline.survey.rating import rating_stages, rating_table


def slug(text: str) -> str:
    """``text`` as a file-name part: letters and digits joined by hyphens, lower case."""
    return re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower() or "section"


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
    section, stations, unit, found, opened = source(None, store, visit)
    folder = Path(out)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise CommandError(f"{folder}: cannot make the folder ({exc.strerror or exc})") from None
    stem = folder / f"{slug(found['site'])}_{slug(found['section'])}_{found['date']}"
    print(f"wrote {write_text(f'{stem}_stations.csv', stations_csv(stations, unit))}")
    n, _ = roughness.channel()
    energy_slope = slope.value()
    if n is not None and energy_slope is not None:
        splits = roughness.split_stations(section, stations, from_codes=True)
        step = step or nice_step(section.highest_stage - section.lowest)
        table = rating_table(
            section,
            rating_stages(section, step),
            roughness.values(section, n, splits),
            energy_slope,
            unit,
            splits or None,
        )
        print(f"wrote {write_text(f'{stem}_rating.csv', rating_csv(table, unit))}")
    else:
        print("no rating CSV: give --n or --roughness, and --slope", file=sys.stderr)
    info = opened.section(found["section_uuid"])
    if info.get("left_coordinates") and info.get("right_coordinates"):
        doc = section_geojson(info, found, stations, unit)
        print(f"wrote {write_text(f'{stem}.geojson', geojson_text(doc))}")
    else:
        print("no GeoJSON: the section has no stake coordinates", file=sys.stderr)
    return 0

"""Office analysis commands: ``flow``, ``rating``, ``compare``, ``export``, ``report``, ``roughness``.

Thin handlers: read a section file or a visit from a store, call ``core``, print or write files.
Input errors raise SurveyError or CommandError and print one line (exit code 2).
"""

from __future__ import annotations

import json
import re
import sys
from pathlib import Path

import numpy as np
from stakeline.files.exports import (
    geojson_text,
    rating_csv,
    section_geojson,
    stations_csv,
    write_text,
)
from stakeline.files.section_csv import read_section_csv
from stakeline.report import ReportOptions, field_findings, nice_step, prepare_report, write_report
from stakeline.survey.compare import compare_visits
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import (
    bank_top_splits,
    figure_unit,
    flow_at,
    slope_from_water_levels,
)
from stakeline.survey.rating import rating_stages, rating_table, stage_for, stage_from_table
from stakeline.survey.roughness import ROUGHNESS, SOURCE, roughness, row_for_n
from stakeline.survey.uncertainty import (
    Precision,
    discharge_band,
    discharge_for_roughness,
    geometry_bands,
)

UNIT_SYSTEMS = {"si": "m", "us": "ft"}
FLOW_KEYS = ("area", "wetted_perimeter", "hydraulic_radius", "discharge", "velocity", "froude",
             "shear_stress", "stream_power")  # fmt: skip
"""Keys of ``stakeline flow --json``, exactly."""


def _error(message: str):
    from stakeline.app.cli import CommandError

    return CommandError(message)


# --- shared options ------------------------------------------------------------------------


def _add_roughness(p) -> None:
    g = p.add_argument_group("roughness (Manning's n)")
    g.add_argument("--n", type=float, metavar="N", help="Manning's n of the main channel")
    g.add_argument(
        "--roughness",
        metavar="KEY",
        help="a row of the roughness table (see `stakeline roughness`)",
    )
    g.add_argument(
        "--n-overbank", type=float, metavar="N", help="n of the overbanks (default: as the channel)"
    )
    g.add_argument("--split", type=float, action="append", metavar="STATION",
                   help="split the section here (repeat; default for store visits: the bank tops)")  # fmt: skip
    g.add_argument("--bank-tops", action="store_true",
                   help="split a section file at its stations coded bank_top (column code)")  # fmt: skip


def _add_slope(p) -> None:
    g = p.add_argument_group("energy slope")
    g.add_argument("--slope", type=float, metavar="S", help="energy slope (m/m or ft/ft)")
    g.add_argument("--water-levels", type=float, nargs=2, metavar=("UP", "DOWN"),
                   help="water levels read at an upstream and a downstream section")  # fmt: skip
    g.add_argument("--reach", type=float, metavar="L", help="distance between those two sections")


def _add_store(p, many: bool = False) -> None:
    p.add_argument("--store", metavar="STORE", help="a Stakeline store file")
    p.add_argument("--visit", metavar="UUID", action="append" if many else "store",
                   help="visit id (or a unique start of it)" + ("; give twice" if many else ""))  # fmt: skip


def _n(args) -> tuple[float | None, object]:
    if args.roughness:
        row = roughness(args.roughness)
        return (row.normal if args.n is None else args.n), row
    if args.n is None:
        return None, None
    return args.n, row_for_n(args.n)


def _slope(args) -> float | None:
    if args.slope is not None and args.water_levels:
        raise _error("give --slope or --water-levels with --reach, not both")
    if args.water_levels:
        if args.reach is None:
            raise _error("--water-levels needs --reach (the distance between the two sections)")
        return slope_from_water_levels(args.water_levels[0], args.water_levels[1], args.reach)
    return args.slope


def _n_values(section: Section, n: float, args, splits: list[float]):
    if not splits:
        return n
    from stakeline.survey.hydraulics import CompoundSection

    names = CompoundSection(section, splits, [n] * (len(splits) + 1)).names()
    overbank = n if args.n_overbank is None else args.n_overbank
    return [n if name == "main channel" else overbank for name in names]


def _splits(args, section: Section, stations: list[dict], from_codes: bool) -> list[float]:
    """Split stations: --split, else the coded bank tops (store visits, or --bank-tops)."""
    if args.split:
        return sorted(args.split)
    if from_codes or args.bank_tops:
        codes = [s.get("code", "") or "" for s in stations]
        return bank_top_splits(section.stations, section.elevations, codes)
    return []


def _open_store(path: str | None):
    from stakeline.store import Store

    if not path:
        raise _error("--store STORE is needed with --visit")
    if not Path(path).is_file():
        raise _error(f"{path}: no such store file")
    return Store.open(path)


def _visit(store, wanted: str | None) -> dict:
    if not wanted:
        raise _error("--visit UUID is needed with --store")
    matches = [v for v in store.visits() if v["uuid"] == wanted] or [
        v for v in store.visits() if v["uuid"].startswith(wanted)
    ]
    if len(matches) != 1:
        what = "no visit" if not matches else f"{len(matches)} visits"
        raise _error(
            f"{what} with id {wanted!r} in {store.path}; list them with `stakeline visits`"
        )
    return store.visit(matches[0]["uuid"])


def _live(stations: list[dict]) -> list[dict]:
    return [s for s in stations if not s.get("removed")]


def _section(stations: list[dict]) -> Section:
    return Section([s["station"] for s in stations], [s["elevation"] for s in stations])


def _water_level(visit: dict) -> float | None:
    levels = [
        w["elevation"] for w in visit.get("water_levels", []) if w.get("elevation") is not None
    ]
    return float(np.mean(levels)) if levels else None


def _source(args) -> tuple[Section, list[dict], str, dict | None, object]:
    """Section, station dicts, unit, visit (or None) and store (or None) from a file or a store."""
    if getattr(args, "file", None):
        if args.store or args.visit:
            raise _error("give a section FILE.csv or --store with --visit, not both")
        rows = read_section_csv(args.file)
        codes = rows.extra.get("code", [""] * len(rows.stations))
        stations = [
            {"station": s, "elevation": z, "code": c}
            for s, z, c in zip(rows.stations, rows.elevations, codes, strict=True)
        ]
        return _section(stations), stations, UNIT_SYSTEMS[args.units], None, None
    store = _open_store(args.store)
    visit = _visit(store, args.visit)
    stations = _live(store.stations(visit["uuid"]))
    if len(stations) < 2:
        raise _error(f"visit {visit['uuid']} has fewer than 2 stations")
    return _section(stations), stations, visit["unit"], visit, store


# --- flow ------------------------------------------------------------------------------------


def register(subparsers) -> None:
    """Add the office commands to the ``stakeline`` parser."""
    p = subparsers.add_parser(
        "flow",
        help="discharge and hydraulic figures at one water level (Manning's equation)",
        description="Uniform-flow figures of the section in FILE.csv at water level S. Lengths in "
        "the file are metres with --units si, feet with --units us. Figures are estimates for "
        "checking; designs need licensed review.",
    )
    p.add_argument("file", metavar="FILE.csv")
    p.add_argument(
        "--stage", type=float, required=True, metavar="S", help="water level (elevation)"
    )
    p.add_argument("--units", choices=sorted(UNIT_SYSTEMS), default="si", help="si (m) or us (ft)")
    p.add_argument("--json", action="store_true", help="print a JSON object of the figures")
    _add_roughness(p)
    _add_slope(p)
    p.set_defaults(handler=run_flow, store=None, visit=None)
    _register_rating(subparsers)
    _register_compare(subparsers)
    _register_export(subparsers)
    _register_report(subparsers)
    r = subparsers.add_parser("roughness", help="the table of typical Manning's n for natural channels",
                              description=f"Typical Manning's n; source: {SOURCE}")  # fmt: skip
    r.add_argument("--json", action="store_true", help="print a JSON list")
    r.set_defaults(handler=run_roughness)


def _need_flow_inputs(args) -> tuple[float, float, object]:
    n, row = _n(args)
    slope = _slope(args)
    if n is None:
        raise _error("Manning's n is needed: give --n N or --roughness KEY")
    if slope is None:
        raise _error(
            "the energy slope is needed: give --slope S, or --water-levels UP DOWN --reach L"
        )
    return n, slope, row


def run_flow(args) -> int:
    """Print the uniform-flow figures at one water level."""
    section, stations, unit, _, _ = _source(args)
    n, slope, row = _need_flow_inputs(args)
    splits = _splits(args, section, stations, from_codes=False)
    values = _n_values(section, n, args, splits)
    flow = flow_at(section, args.stage, values, slope, unit, splits or None)
    if args.json:
        print(json.dumps({key: getattr(flow, key) for key in FLOW_KEYS}))
        return 0
    bands = geometry_bands(section, args.stage, Precision.default(unit))
    bands["discharge"] = discharge_band(
        section, args.stage, values, slope, unit, Precision.default(unit), splits or None
    )
    print(f"water level {args.stage:g} {unit}   n {n:g}   slope {slope:g}")
    for key in ("area", "wetted_perimeter", "top_width", "hydraulic_radius", "hydraulic_depth", "discharge",
                "velocity", "conveyance", "froude", "shear_stress", "stream_power"):  # fmt: skip
        band = bands.get(key)
        spread = f"  ± {band.plus_minus:.4f}" if band else ""
        print(
            f"  {key.replace('_', ' '):<18} {getattr(flow, key):12.4f} {figure_unit(key, unit):<12}{spread}"
        )
    print("  ± from the readings alone (reading and station precision, k = 2).")
    if row is not None:
        q = discharge_for_roughness(section, args.stage, row, slope, unit, splits or None, values)
        qu = figure_unit("discharge", unit)
        print(f"  Manning's n dominates: Q {q['minimum']:.4f} {qu} at n {row.minimum:g}, "
              f"{q['maximum']:.4f} {qu} at n {row.maximum:g} ({row.key}).")  # fmt: skip
    print("  Estimates for checking; designs and safety decisions need licensed review.")
    return 0


def run_roughness(args) -> int:
    """Print the roughness table."""
    if args.json:
        print(json.dumps([{"key": r.key, "description": r.description, "minimum": r.minimum,
                           "normal": r.normal, "maximum": r.maximum} for r in ROUGHNESS]))  # fmt: skip
        return 0
    print(f"{'key':<22} {'min':>6} {'normal':>6} {'max':>6}  description")
    for r in ROUGHNESS:
        print(f"{r.key:<22} {r.minimum:6.3f} {r.normal:6.3f} {r.maximum:6.3f}  {r.description}")
    print(f"source: {SOURCE}")
    return 0


# --- rating ----------------------------------------------------------------------------------


def _register_rating(subparsers) -> None:
    p = subparsers.add_parser(
        "rating",
        help="stage-discharge table of a section file or a store visit",
        description="Rating table (uniform flow) from FILE.csv or a visit in a store, printed, "
        "written as CSV or plotted; --discharge Q finds the water level carrying Q.",
    )
    p.add_argument("file", metavar="FILE.csv", nargs="?")
    _add_store(p)
    p.add_argument("--units", choices=sorted(UNIT_SYSTEMS), default="si", help="unit of FILE.csv")
    p.add_argument("--from", dest="start", type=float, metavar="A", help="lowest water level")
    p.add_argument("--to", dest="stop", type=float, metavar="B", help="highest water level")
    p.add_argument("--step", type=float, metavar="C", help="water level step")
    p.add_argument("--csv", action="store_true", help="print CSV")
    p.add_argument("--out", metavar="FILE.csv", help="write the table as CSV")
    p.add_argument("--plot", metavar="FILE.png", help="write a plot (.png or .pdf)")
    p.add_argument("--discharge", type=float, metavar="Q", help="print the water level carrying Q")
    _add_roughness(p)
    _add_slope(p)
    p.set_defaults(handler=run_rating)


def run_rating(args) -> int:
    """Print or write a rating table."""
    section, stations, unit, visit, _ = _source(args)
    n, slope, _ = _need_flow_inputs(args)
    splits = _splits(args, section, stations, from_codes=visit is not None)
    values = _n_values(section, n, args, splits)
    step = args.step or nice_step(section.highest_stage - section.lowest)
    table = rating_table(
        section,
        rating_stages(section, step, args.start, args.stop),
        values,
        slope,
        unit,
        splits or None,
    )
    if args.out:
        print(f"wrote {write_text(args.out, rating_csv(table, unit))}")
    if args.plot:
        from stakeline.report.pages import write_rating_plot

        title = (
            f"{visit['site']} — {visit['section']} ({visit['date']})"
            if visit
            else Path(args.file).name
        )
        print(f"wrote {write_rating_plot(table, unit, title, args.plot)}")
    if args.discharge is not None:
        exact = stage_for(section, args.discharge, values, slope, unit, splits or None)
        print(f"discharge {args.discharge:g} {figure_unit('discharge', unit)}: water level {exact:.4f} {unit} "
              f"(table reading {stage_from_table(table, args.discharge):.4f} {unit})")  # fmt: skip
        return 0
    if args.csv:
        sys.stdout.write(rating_csv(table, unit))
    elif not (args.out or args.plot):
        _print_rating(table, unit)
    return 0


def _print_rating(table: dict, unit: str) -> None:
    names = list(table)
    print("  ".join(f"{n.replace('_', ' ')[:12]:>12}" for n in names))
    print("  ".join(f"{'(' + figure_unit(n, unit) + ')':>12}" for n in names))
    for i in range(len(table["stage"])):
        print("  ".join(f"{float(table[n][i]):12.4f}" for n in names))


# --- compare ---------------------------------------------------------------------------------


def _register_compare(subparsers) -> None:
    p = subparsers.add_parser(
        "compare",
        help="scour, fill and change between two visits of one section",
        description="Compare two surveys of one section on the same benchmark: two section files "
        "BEFORE.csv AFTER.csv, or --store with --visit twice (ordered by date).",
    )
    p.add_argument("files", metavar="FILE.csv", nargs="*")
    _add_store(p, many=True)
    p.add_argument("--units", choices=sorted(UNIT_SYSTEMS), default="si", help="unit of the files")
    p.add_argument("--stage", type=float, metavar="S", help="water level for area and top width")
    p.add_argument("--json", action="store_true", help="print a JSON object")
    p.add_argument("--plot", metavar="FILE.png", help="write an overlay plot (.png or .pdf)")
    p.set_defaults(handler=run_compare)


def _compare_inputs(args) -> tuple[list[dict], list[dict], str, float | None, list[str]]:
    if args.files:
        if len(args.files) != 2 or args.store or args.visit:
            raise _error("give two files BEFORE.csv AFTER.csv, or --store with two --visit")
        lines = []
        for name in args.files:
            rows = read_section_csv(name)
            lines.append(
                [
                    {"station": s, "elevation": z}
                    for s, z in zip(rows.stations, rows.elevations, strict=True)
                ]
            )
        return lines[0], lines[1], UNIT_SYSTEMS[args.units], args.stage, list(args.files)
    if not args.visit or len(args.visit) != 2:
        raise _error("give --visit twice (the two visits to compare) with --store")
    store = _open_store(args.store)
    visits = sorted((_visit(store, v) for v in args.visit), key=lambda v: (v["date"], v["created"]))
    if visits[0]["section_uuid"] != visits[1]["section_uuid"]:
        raise _error("the two visits are of different sections; compare visits of one section")
    if visits[0]["unit"] != visits[1]["unit"]:
        raise _error(f"the visits use different units ({visits[0]['unit']}, {visits[1]['unit']})")
    before, after = (_live(store.stations(v["uuid"])) for v in visits)
    stage = args.stage if args.stage is not None else _water_level(visits[1])
    return before, after, visits[0]["unit"], stage, [v["date"] for v in visits]


def run_compare(args) -> int:
    """Print the change between two visits."""
    before, after, unit, stage, names = _compare_inputs(args)
    out = compare_visits(_section(before), _section(after), stage)
    out["unit"] = unit
    if args.plot:
        from stakeline.report.pages import write_overlay_plot

        labels = [Path(n).stem if n.endswith(".csv") else n for n in names]
        print(
            f"wrote {write_overlay_plot(before, after, unit, labels, args.plot)}", file=sys.stderr
        )
    if args.json:
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


# --- export ----------------------------------------------------------------------------------


def _register_export(subparsers) -> None:
    p = subparsers.add_parser(
        "export",
        help="write a visit's stations CSV, rating CSV and GeoJSON",
        description="Write files for a visit into DIR: stations CSV always; rating CSV when n and "
        "slope are given; GeoJSON (RFC 7946) when both stakes have coordinates.",
    )
    _add_store(p)
    p.add_argument(
        "--out", required=True, metavar="DIR", help="folder to write into (made if missing)"
    )
    p.add_argument("--step", type=float, metavar="C", help="rating water level step")
    _add_roughness(p)
    _add_slope(p)
    p.set_defaults(handler=run_export, file=None, units="si")


def _slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower() or "section"


def run_export(args) -> int:
    """Write the export files of one visit."""
    section, stations, unit, visit, store = _source(args)
    out = Path(args.out)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise _error(f"{out}: cannot make the folder ({exc.strerror or exc})") from None
    stem = out / f"{_slug(visit['site'])}_{_slug(visit['section'])}_{visit['date']}"
    print(f"wrote {write_text(f'{stem}_stations.csv', stations_csv(stations, unit))}")
    n, _ = _n(args)
    slope = _slope(args)
    if n is not None and slope is not None:
        splits = _splits(args, section, stations, from_codes=True)
        step = args.step or nice_step(section.highest_stage - section.lowest)
        table = rating_table(
            section,
            rating_stages(section, step),
            _n_values(section, n, args, splits),
            slope,
            unit,
            splits or None,
        )
        print(f"wrote {write_text(f'{stem}_rating.csv', rating_csv(table, unit))}")
    else:
        print("no rating CSV: give --n or --roughness, and --slope", file=sys.stderr)
    info = store.section(visit["section_uuid"])
    if info.get("left_coordinates") and info.get("right_coordinates"):
        doc = section_geojson(info, visit, stations, unit)
        print(f"wrote {write_text(f'{stem}.geojson', geojson_text(doc))}")
    else:
        print("no GeoJSON: the section has no stake coordinates", file=sys.stderr)
    return 0


# --- report ----------------------------------------------------------------------------------


def _register_report(subparsers) -> None:
    p = subparsers.add_parser(
        "report",
        help="PDF or PNG report of a visit: section, hydraulics, rating, checks, change",
        description="Report of one visit in STORE: section plot, figures with uncertainty, rating "
        "table, bankfull summary, change since the previous visit, stations, field-check findings "
        "and overrides, and the cautions. Discharge needs n and a slope.",
    )
    _add_store(p)
    p.add_argument("--out", required=True, metavar="FILE.pdf", help="report file, .pdf or .png")
    p.add_argument(
        "--stage", type=float, metavar="S", help="water level (default: mean of those read)"
    )
    p.add_argument(
        "--bankfull", type=float, metavar="B", help="bankfull level (default: lower bank top)"
    )
    p.add_argument("--step", type=float, metavar="C", help="rating water level step")
    p.add_argument(
        "--reading-precision", type=float, metavar="E", help="± of one reading (survey unit)"
    )
    p.add_argument(
        "--station-precision", type=float, metavar="E", help="± of one station (survey unit)"
    )
    p.add_argument(
        "--compare-with", metavar="UUID", help="earlier visit to compare (default: the one before)"
    )
    p.add_argument(
        "--no-compare", action="store_true", help="leave out the change since an earlier visit"
    )
    _add_roughness(p)
    _add_slope(p)
    p.set_defaults(handler=run_report, file=None, units="si")


def _previous(store, visit: dict, args) -> dict | None:
    if args.no_compare:
        return None
    if args.compare_with:
        other = _visit(store, args.compare_with)
        if other["section_uuid"] != visit["section_uuid"]:
            raise _error("--compare-with names a visit of another section")
    else:
        earlier = [
            v
            for v in store.visits(visit["section_uuid"])
            if v["date"] < visit["date"] and v["unit"] == visit["unit"]
        ]
        if not earlier:
            return None
        other = earlier[-1]
    return {"visit": other, "stations": _live(store.stations(other["uuid"]))}


def run_report(args) -> int:
    """Write the report of one visit."""
    _, stations, unit, visit, store = _source(args)
    default = Precision.default(unit)
    precision = Precision(
        default.reading if args.reading_precision is None else args.reading_precision,
        default.station if args.station_precision is None else args.station_precision,
    )
    options = ReportOptions(
        stage=args.stage, n=args.n, roughness=args.roughness, n_overbank=args.n_overbank,
        slope=_slope(args), splits=tuple(args.split) if args.split else None, bankfull=args.bankfull,
        precision=precision, rating_step=args.step,
    )  # fmt: skip
    stage = options.stage if options.stage is not None else _water_level(visit)
    findings = field_findings(visit, stations, stage)
    data = prepare_report(
        visit,
        stations,
        options,
        findings,
        store.overrides(visit["uuid"]),
        _previous(store, visit, args),
    )
    path = write_report(data, args.out)
    print(f"wrote {path}")
    if data.missing:
        print("no discharge in the report: missing " + "; ".join(data.missing), file=sys.stderr)
    return 0

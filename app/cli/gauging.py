"""``stakeline discharge`` and ``stakeline calibrate``: a measured discharge from a gauging file,
and the Manning's n that carries a measured discharge through a surveyed section."""

from __future__ import annotations

import json

import click
from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.inputs import input_file, source
from stakeline.app.cli.options import (
    UNIT_SYSTEMS,
    argument,
    file_argument,
    json_option,
    option,
    units_option,
)
from stakeline.files.gauging_csv import read_gauging_csv
from stakeline.gauging import CAUTION, DISCHARGE_METHODS, analyse_gauging, calibrate_n
from stakeline.survey.hydraulics import figure_unit
from stakeline.survey.numbers import parse_number
from stakeline.survey.uncertainty import Precision


@cli.command(
    "discharge",
    short_help="measured discharge of a gauging by the velocity-area method",
    help="Discharge measured at the verticals in FILE.csv (columns station, depth and either "
    "velocity, the vertical's mean, or point velocities v02, v06, v08; optional angle in "
    "degrees). Stations with zero depth are the water's edges. Midsection method (USGS TM 3-A8; "
    "ISO 748) or mean-section; uncertainty by the interpolated variance estimator (Cohn, Kiang & "
    "Mason 2013). Figures are for checking; wading is dangerous.",
)
@argument(
    "file",
    "gauging file: station, depth, velocity or v02,v06,v08 (optional angle)",
    metavar="FILE.csv",
)
@option("--method", type=click.Choice(DISCHARGE_METHODS), default="midsection",
        help="midsection (default) or meansection")  # fmt: skip
@units_option("si (m, m/s) or us (ft, ft/s)")
@json_option("print a JSON object: discharge, area, width, mean_velocity, panels ...")
def discharge(file: str, method: str, units: str, as_json: bool) -> int:
    """Print the measured discharge and its panels."""
    unit = UNIT_SYSTEMS[units]
    rows = read_gauging_csv(input_file(file))
    result = analyse_gauging(
        rows.stations, rows.depths, rows.velocities, method, unit=unit,
        angles=rows.angles, points=rows.points or None,
    )  # fmt: skip
    if as_json:
        print(json.dumps(result.as_dict()))
        return 0
    q, done = result.discharge, result.uncertainty
    qu, vu, au = (figure_unit(k, unit) for k in ("discharge", "velocity", "area"))
    print(f"{file}: {method}, {len(rows.stations)} verticals")
    print(
        f"  {'station':>9} {'width':>8} {'depth':>8} {'velocity':>9} {'discharge':>10} {'share':>7}"
    )
    for p in q.as_dict()["panels"]:
        velocity = "-" if p["velocity"] is None else f"{p['velocity']:9.3f}"
        part = "-" if p["discharge"] is None else f"{p['discharge']:10.4f}"
        share = "-" if p["percent"] is None else f"{p['percent']:6.1f}%"
        print(f"  {p['station']:9.3f} {p['width']:8.3f} {p['depth']:8.3f} {velocity:>9} {part:>10} {share:>7}")  # fmt: skip
    print(f"  discharge      {q.discharge:.4f} {qu}" + ("" if q.complete else " (so far)"))
    if done.estimable:
        print(f"  ± (k = 2)      {done.plus_minus:.4f} {qu} ({100 * done.expanded:.1f} %, IVE)")
    else:
        print(f"  ± not estimated: {done.reason}")
    print(f"  area           {q.area:.4f} {au}")
    print(f"  width          {q.width:.4f} {unit}")
    print(f"  mean velocity  {q.mean_velocity:.4f} {vu}")
    for finding in result.findings:
        where = "" if finding.station is None else f" at {finding.station:g} {unit}"
        print(f"  {finding.severity.upper()} {finding.kind}{where}: {finding.message}")
    print(f"  {CAUTION}")
    return 0


@cli.command(
    "calibrate",
    short_help="Manning's n that carries a measured discharge at a stage",
    help="Manning's n of the section in FILE.csv (columns station, elevation) that carries the "
    "measured discharge Q at water level S on the measured water-surface slope: "
    "n = (k/Q)·A·R^(2/3)·S^(1/2), k = 1 (SI) or 1.486 (US). Figures are for checking; designs "
    "need licensed review.",
)
@file_argument()
@option("--stage", type=float, required=True, metavar="S", help="water level of the gauging")
@option("--discharge", "measured", type=float, required=True, metavar="Q",
        help="measured discharge (m³/s or ft³/s)")  # fmt: skip
@option("--slope", type=float, required=True, metavar="S",
        help="measured water-surface slope (m/m or ft/ft)")  # fmt: skip
@option("--discharge-uncertainty", type=float, default=0.0, metavar="U",
        help="relative standard uncertainty of Q (e.g. 0.03)")  # fmt: skip
@option("--slope-error", type=float, default=0.0, metavar="E",
        help="standard error of the slope")  # fmt: skip
@units_option("si (m) or us (ft)")
@json_option("print a JSON object (key n and its ±, the roughness rows that hold it)")
def calibrate(
    file: str, stage: float, measured: float, slope: float,
    discharge_uncertainty: float, slope_error: float, units: str, as_json: bool,
) -> int:  # fmt: skip
    """Print the calibrated n."""
    section, _, unit, _, _ = source(file, None, None, units)
    if not 0 <= parse_number(discharge_uncertainty, "--discharge-uncertainty") < 1:
        raise CommandError(
            f"--discharge-uncertainty {discharge_uncertainty:g} is not a relative uncertainty "
            "from 0 to below 1 (0.03 is 3 %)"
        )
    if not 0 <= parse_number(slope_error, "--slope-error") < abs(slope):
        raise CommandError(
            f"--slope-error {slope_error:g} must be from 0 to below the slope ({slope:g})"
        )
    result = calibrate_n(
        section, stage, measured, slope, unit,
        discharge_uncertainty=discharge_uncertainty, slope_uncertainty=slope_error,
        precision=Precision.default(unit),
    )  # fmt: skip
    if as_json:
        print(json.dumps(result.as_dict()))
        return 0
    print(f"water level {stage:g} {unit}   Q {measured:g} {figure_unit('discharge', unit)}   "
          f"slope {slope:g}")  # fmt: skip
    print(f"  Manning's n    {result.n:.4f} ± {result.plus_minus:.4f} (k = 2)")
    print(f"  area           {result.area:.4f} {figure_unit('area', unit)}")
    print(f"  hyd radius     {result.hydraulic_radius:.4f} {unit}")
    rows = ", ".join(result.rows) or "none of the rows (Chow 1959, Table 5-6)"
    print(f"  within         {rows}")
    print("  Estimates for checking; designs and safety decisions need licensed review.")
    return 0

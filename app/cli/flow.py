"""``stakeline flow`` and ``stakeline roughness``: Manning's discharge at one water level."""

from __future__ import annotations

import json

from stakeline.analysis import analyse_visit
from stakeline.app.cli.base import cli
from stakeline.app.cli.inputs import source
from stakeline.app.cli.options import (
    Roughness,
    Slope,
    analysis_options,
    file_argument,
    flow_inputs,
    json_option,
    roughness_options,
    slope_options,
    stage_option,
    units_option,
)
from stakeline.survey.figures import figure_unit
from stakeline.survey.roughness import ROUGHNESS, SOURCE

FLOW_KEYS = ("area", "wetted_perimeter", "hydraulic_radius", "discharge", "velocity", "froude",
             "shear_stress", "stream_power")  # fmt: skip
"""Keys of ``stakeline flow --json``, exactly."""

SHOWN = ("area", "wetted_perimeter", "top_width", "hydraulic_radius", "hydraulic_depth",
         "discharge", "velocity", "conveyance", "froude", "shear_stress", "stream_power")  # fmt: skip
"""Figures of the text output, in order."""


@cli.command(
    "flow",
    short_help="discharge and hydraulic figures at one water level (Manning's equation)",
    help="Uniform-flow figures of the section in FILE.csv at water level S. Lengths in "
    "the file are metres with --units si, feet with --units us. Figures are estimates for "
    "checking; designs need licensed review.",
)
@file_argument()
@stage_option(required=True)
@units_option("si (m) or us (ft)")
@json_option("print a JSON object of the figures")
@roughness_options
@slope_options
def flow(
    file: str, stage: float, units: str, as_json: bool, roughness: Roughness, slope: Slope
) -> int:
    """Print the uniform-flow figures at one water level (the one office analysis)."""
    _, stations, unit, _, _ = source(file, None, None, units)
    n, energy_slope, row = flow_inputs(roughness, slope)
    options = analysis_options(roughness, slope, from_codes=False, stage=stage)
    result = analyse_visit({"unit": unit}, stations, options)
    figures = result.flow
    if as_json:
        print(json.dumps({key: figures[key] for key in FLOW_KEYS}))
        return 0
    print(f"water level {result.stage:g} {unit}   n {n:g}   slope {energy_slope:g}")
    for key in SHOWN:
        band = result.bands.get(key)
        spread = f"  ± {band.plus_minus:.4f}" if band else ""
        print(f"  {key.replace('_', ' '):<18} {figures[key]:12.4f} {figure_unit(key, unit):<12}{spread}")  # fmt: skip
    print("  ± from the readings alone (reading and station precision, k = 2).")
    if row is not None and result.n_range is not None:
        q, qu = result.n_range, figure_unit("discharge", unit)
        print(f"  Manning's n dominates: Q {q['minimum']:.4f} {qu} at n {row.minimum:g}, "
              f"{q['maximum']:.4f} {qu} at n {row.maximum:g} ({row.key}).")  # fmt: skip
    print("  Estimates for checking; designs and safety decisions need licensed review.")
    return 0


@cli.command(
    "roughness",
    short_help="the table of typical Manning's n for natural channels",
    help=f"Typical Manning's n; source: {SOURCE}",
)
@json_option("print a JSON list")
def roughness_table(as_json: bool) -> int:
    """Print the roughness table."""
    if as_json:
        print(json.dumps([{"key": r.key, "description": r.description, "minimum": r.minimum,
                           "normal": r.normal, "maximum": r.maximum} for r in ROUGHNESS]))  # fmt: skip
        return 0
    print(f"{'key':<22} {'min':>6} {'normal':>6} {'max':>6}  description")
    for r in ROUGHNESS:
        print(f"{r.key:<22} {r.minimum:6.3f} {r.normal:6.3f} {r.maximum:6.3f}  {r.description}")
    print(f"source: {SOURCE}")
    return 0

"""``stakeline figures``: the office figures of one visit, as the report and the tablet show them.

One call of :func:`stakeline.analysis.analyse_visit` with the two written policies (the
visit's water level, the earlier visit to compare), printed as text or JSON: the wetted
figures with their ± bands, Manning's figures and the discharge at the roughness row's low and
high n, the bankfull summary, the change since the earlier visit, and who signed the visit.
"""

from __future__ import annotations

import json
import math

import numpy as np
from stakeline.analysis import analyse_visit
from stakeline.app.cli.base import cli, shown
from stakeline.app.cli.inputs import source
from stakeline.app.cli.options import (
    Roughness,
    Slope,
    analysis_options,
    json_option,
    option,
    roughness_options,
    slope_options,
    stage_option,
    visit_options,
)
from stakeline.app.cli.report import earlier_for
from stakeline.files.exports import signed_by
from stakeline.survey.figures import figure_label, figure_unit
from stakeline.survey.numbers import parse_number

FIGURES_KEYS = ("visit", "unit", "stage", "stage_source", "bands", "flow", "n_range",
                "bankfull", "comparison", "earlier", "signed_by", "missing", "notes")  # fmt: skip
"""Keys of ``stakeline figures --json``, exactly."""


def plain(value):
    """``value`` as JSON-ready data: numpy numbers and arrays as Python ones, tuples as
    lists, a non-finite number as None (JSON has no NaN or infinity)."""
    if isinstance(value, dict):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [plain(v) for v in value]
    if isinstance(value, (np.floating, float)):
        return float(value) if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    return value


@cli.command(
    "figures",
    short_help="office figures of a visit: wetted figures with ±, discharge, bankfull, change",
    help="The office figures of one visit in STORE, as the report and the tablet show them: "
    "wetted figures at the visit's water level (the mean of those read, or --stage) with "
    "their ± from the readings, Manning's discharge and its range over the roughness row, "
    "the bankfull summary, the change since the earlier visit, and who signed the visit. "
    "Figures are estimates for checking; designs need licensed review.",
)
@visit_options()
@stage_option("water level (default: mean of those read)")
@option("--bankfull", type=float, metavar="B", help="bankfull level (default: lower bank top)")
@option("--compare-with", metavar="UUID", help="earlier visit to compare (default: the one before)")
@option("--no-compare", is_flag=True, help="leave out the change since an earlier visit")
@json_option("print a JSON object (keys: " + ", ".join(FIGURES_KEYS) + ")")
@roughness_options
@slope_options
def figures(
    store: str | None, visit: str | None, stage: float | None, bankfull: float | None,
    compare_with: str | None, no_compare: bool, as_json: bool, roughness: Roughness,
    slope: Slope,
) -> int:  # fmt: skip
    """Print the office figures of one visit."""
    _, stations, unit, found, opened = source(None, store, visit)
    options = analysis_options(
        roughness, slope, from_codes=True, stage=parse_number(stage, "--stage", optional=True),
        bankfull=parse_number(bankfull, "--bankfull", optional=True),
    )  # fmt: skip
    earlier = None if no_compare else earlier_for(opened, found, compare_with)
    result = analyse_visit(found, stations, options, earlier)
    before = (result.previous or {}).get("visit") or {}
    out = {
        "visit": found["uuid"],
        "unit": unit,
        "stage": result.stage,
        "stage_source": result.stage_source,
        "bands": {
            k: {"value": b.value, "plus_minus": b.plus_minus} for k, b in result.bands.items()
        },
        "flow": result.flow,
        "n_range": result.n_range,
        "bankfull": result.bankfull,
        "comparison": result.comparison,
        "earlier": {"uuid": before["uuid"], "date": before["date"]} if before else None,
        "signed_by": signed_by(opened.visit_signer(found["uuid"]), found),
        "missing": result.missing,
        "notes": [n for n in (result.bankfull_note, result.comparison_note) if n],
    }
    if as_json:
        print(json.dumps(plain(out), allow_nan=False))
        return 0
    _print_text(plain(out), unit)
    return 0


def _row(key: str, value: float | None, unit: str, spread: float | None = None) -> str:
    shown_value = "-" if value is None else f"{value:12.4f}"
    band = "" if spread is None else f"  ± {spread:.4f}"
    return f"  {figure_label(key):<34} {shown_value:>12} {figure_unit(key, unit):<8}{band}"


def _print_text(out: dict, unit: str) -> None:
    print(f"visit {out['visit']}   {shown(out['signed_by'])}")
    if out["stage"] is None:
        print("no water level: none was read; give --stage for the figures at a water level")
    else:
        print(f"water level {out['stage']:.4f} {unit} ({shown(out['stage_source'])})")
    for key, band in out["bands"].items():
        print(_row(key, band["value"], unit, band["plus_minus"]))
    for key in ("velocity", "froude", "shear_stress", "stream_power"):
        if out["flow"] is not None:
            print(_row(key, out["flow"][key], unit))
    if out["n_range"] is not None:
        q, qu = out["n_range"], figure_unit("discharge", unit)
        print(f"  discharge at the row's low n {q['minimum']:.4f} {qu}, at its high n "
              f"{q['maximum']:.4f} {qu}")  # fmt: skip
    if out["missing"]:
        print("  no discharge: missing " + "; ".join(out["missing"]))
    if out["bankfull"] is not None:
        print("bankfull")
        for key in ("stage", "width", "mean_depth", "max_depth", "area"):
            print(_row(key, out["bankfull"][key], unit))
    if out["comparison"] is not None:
        print(f"change since {shown(out['earlier']['date'])}")
        for key in ("scour_area", "fill_area", "net_change", "deepest_shift"):
            print(_row(key, out["comparison"][key], unit))
    for note in out["notes"]:
        print(shown(note))
    print("Estimates for checking; designs and safety decisions need licensed review.")

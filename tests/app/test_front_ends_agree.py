"""The office front ends show the same numbers for one visit: they all show
:func:`stakeline.analysis.analyse_visit`, with one policy for the water level and one for the
earlier visit.

Each front end is a function ``(store_path, visit_uuid) -> {figure: number}`` in
:data:`FRONT_ENDS` (the report, the tablet's office figures, and the command line's ``--json``
outputs); a new front end is one more entry.  The
numbers themselves are checked against closed forms elsewhere (tests/analysis,
tests/app/test_ui_service.py); here only their agreement is.
"""

from __future__ import annotations

import contextlib
import io
import json
import tempfile
from pathlib import Path

import pytest
from stakeline.analysis import earlier_visit
from stakeline.report import ReportOptions, field_findings, prepare_report
from stakeline.store import Store

ROW, SLOPE = "mountain-gravel", 0.004


def report_numbers(store_path: str, visit_uuid: str) -> dict[str, float]:
    """The numbers of the office report (``stakeline report``'s data) for one visit."""
    with Store.open(store_path) as store:
        visit = store.visit(visit_uuid)
        stations = store.stations(visit_uuid)
        previous = earlier_visit(visit, store.visits(visit["section_uuid"]), store.stations)
        options = ReportOptions(roughness=ROW, slope=SLOPE)
        data = prepare_report(visit, stations, options, field_findings(visit, stations, None),
                              store.overrides(visit_uuid), previous)  # fmt: skip
    out = {"stage": data.stage, "earlier": data.previous["visit"]["date"] if data.previous else ""}
    for name, band in data.bands.items():
        out[name], out[f"{name} ±"] = band.value, band.plus_minus
    for name in ("velocity", "froude", "shear_stress", "stream_power"):
        out[name] = data.flow[name]
    out["discharge at low n"] = data.n_range["minimum"]
    out["discharge at high n"] = data.n_range["maximum"]
    for name in ("stage", "width", "mean_depth", "max_depth", "area"):
        out[f"bankfull {name}"] = data.bankfull[name]
    if data.comparison is not None:
        change = dict(data.comparison, deepest_change=-data.comparison["deepest_drop"])
        for name in ("scour_area", "fill_area", "net_change", "deepest_shift", "deepest_change"):
            out[name] = change[name]
    return out


def tablet_numbers(store_path: str, visit_uuid: str) -> dict[str, float]:
    """The numbers of the tablet's office-figures screen (the service behind it) for one visit,
    at the level it starts at."""
    from stakeline.app.service import FieldService

    with Store.open(store_path) as store:
        service = FieldService(store)
        inputs = service.office_inputs(visit_uuid)
        figures = service.office_figures(inputs, inputs["recorded_level"], ROW, SLOPE)
    out = {"stage": figures["level"], "earlier": figures.get("change", {}).get("date", "")}
    for row in figures["geometry"] + figures["flow"][:1]:
        out[row["key"]], out[f"{row['key']} ±"] = row["value"], row["plus_minus"]
    for row in figures["flow"][1:]:
        out[row["key"]] = row["value"]
    out["discharge at low n"] = figures["n_range"]["discharge_low_n"]
    out["discharge at high n"] = figures["n_range"]["discharge_high_n"]
    bankfull = {row["key"]: row["value"] for row in figures["bankfull"]["rows"]}
    for name in ("stage", "width", "mean_depth", "max_depth", "area"):
        out[f"bankfull {name}"] = bankfull[name]
    for row in figures.get("change", {}).get("rows", []):
        if row["key"] in ("scour_area", "fill_area", "net_change", "deepest_shift",
                          "deepest_change"):  # fmt: skip
            out[row["key"]] = row["value"]
    return out


def cli_json(*argv) -> dict:
    """The ``--json`` output of one ``stakeline`` command, run in this process."""
    from stakeline.app.cli import main

    printed = io.StringIO()
    with contextlib.redirect_stdout(printed):
        assert main([str(a) for a in argv]) == 0, argv
    return json.loads(printed.getvalue())


def cli_numbers(store_path: str, visit_uuid: str) -> dict[str, float]:
    """The numbers the command line shows for one visit: ``stakeline figures --json`` for the
    visit's figures, ``stakeline flow --json`` on the visit's exported stations file for the
    hydraulics, ``stakeline compare --json`` with the earlier visit for the change."""
    rough = ["--roughness", ROW, "--slope", SLOPE]
    shown = cli_json("figures", "--store", store_path, "--visit", visit_uuid, *rough, "--json")
    earlier = shown["earlier"]
    out = {"stage": shown["stage"], "earlier": earlier["date"] if earlier else ""}
    for name, band in shown["bands"].items():
        out[name], out[f"{name} ±"] = band["value"], band["plus_minus"]
    with tempfile.TemporaryDirectory() as folder:
        from stakeline.app.cli import main

        with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
            assert (
                main(["export", "--store", store_path, "--visit", visit_uuid, "--out", folder]) == 0
            )
        (stations,) = Path(folder).glob("*_stations.csv")
        flow = cli_json("flow", stations, "--stage", shown["stage"], "--bank-tops", *rough,
                        "--json")  # fmt: skip
    for name in ("velocity", "froude", "shear_stress", "stream_power"):
        out[name] = flow[name]
    assert flow["discharge"] == pytest.approx(out["discharge"], rel=1e-12)
    out["discharge at low n"] = shown["n_range"]["minimum"]
    out["discharge at high n"] = shown["n_range"]["maximum"]
    for name in ("stage", "width", "mean_depth", "max_depth", "area"):
        out[f"bankfull {name}"] = shown["bankfull"][name]
    if earlier:
        change = cli_json("compare", "--store", store_path, "--visit", earlier["uuid"],
                          "--visit", visit_uuid, "--json")  # fmt: skip
        change["deepest_change"] = -change["deepest_drop"]
        for name in ("scour_area", "fill_area", "net_change", "deepest_shift", "deepest_change"):
            out[name] = change[name]
    return out


FRONT_ENDS = {"report": report_numbers, "tablet": tablet_numbers, "cli": cli_numbers}
"""Every office front end, by name: ``(store_path, visit_uuid) -> numbers``."""


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory):
    path = str(tmp_path_factory.mktemp("agree") / "office.sqlite")
    with Store.open(path) as store:
        visits = {(v["section"], v["date"]): v["uuid"] for v in store.load_demo()}
    return path, visits


@pytest.mark.parametrize(
    "key",
    [("XS1 riffle", "2026-04-14"),  # two water levels recorded: the policy picks their mean
     ("XS1 riffle", "2026-09-22")],  # an earlier visit to compare with
)  # fmt: skip
def test_every_front_end_shows_the_same_numbers(demo_store, key):
    path, visits = demo_store
    shown = {name: numbers(path, visits[key]) for name, numbers in FRONT_ENDS.items()}
    reference = shown["report"]
    assert len(reference) >= 20
    for name, numbers in shown.items():
        assert set(numbers) == set(reference), name
        for figure, value in reference.items():
            expected = value if isinstance(value, str) else pytest.approx(value, rel=1e-12)
            assert numbers[figure] == expected, (name, figure)
    if key[1] == "2026-04-14":
        assert reference["stage"] == pytest.approx((99.98 + 99.97) / 2)  # the demo's two levels
    else:
        assert reference["earlier"] == "2026-04-14"


def test_the_command_line_rating_is_the_report_rating(demo_store):
    path, visits = demo_store
    visit = visits[("XS1 riffle", "2026-09-22")]
    with Store.open(path) as store:
        found = store.visit(visit)
        data = prepare_report(
            found, store.stations(visit), ReportOptions(roughness=ROW, slope=SLOPE)
        )
    from stakeline.app.cli import main

    printed = io.StringIO()
    with contextlib.redirect_stdout(printed):
        assert main(["rating", "--store", path, "--visit", visit, "--roughness", ROW,
                     "--slope", str(SLOPE), "--csv"]) == 0  # fmt: skip
    rows = [line.split(",") for line in printed.getvalue().splitlines()[1:]]
    assert len(rows) == len(data.rating["stage"])
    for name, column in (("stage", 0), ("discharge", -1)):  # the CSV keeps 6 significant digits
        got = [float(row[column]) for row in rows]
        assert got == pytest.approx(list(data.rating[name]), rel=1e-5, abs=1e-9), name

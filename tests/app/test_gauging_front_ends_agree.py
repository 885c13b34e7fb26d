"""The report, the command line and the tablet's service show the same gauging figures for one
demo section: the measured discharge and its ±, the calibrated n and its ±, and the measured
rating's coefficient, exponent, e, standard error and departures.  They all come from
:func:`stakeline.analysis.analyse_visit`; here only their agreement is checked (the numbers
themselves are checked against published methods in tests/analysis/test_analysis_gauging.py)."""

from __future__ import annotations

import json

import pytest
from stakeline.app.cli import main
from stakeline.measurements import section_measurements
from stakeline.report import ReportOptions, prepare_report
from stakeline.store import Store

SECTION = "XS1 riffle"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    path = str(tmp_path_factory.mktemp("gauging-agree") / "office.sqlite")
    with Store.open(path) as store:
        store.load_demo()
        riffle = [v for v in store.visits() if v["section"] == SECTION]
    return path, riffle[-1]["uuid"], riffle[-1]["section_uuid"]  # the latest gauged visit


def rating_numbers(rating: dict) -> dict:
    out = {k: rating[k] for k in ("coefficient", "exponent", "offset", "standard_error")}
    for m in rating["measurements"]:
        out[f"departure {m['date']}"] = m["departure_percent"]
        out[f"Q {m['date']}"] = m["discharge"]
    return out


def report_numbers(path: str, visit: str, section: str) -> dict:
    with Store.open(path) as store:
        data = prepare_report(store.visit(visit), store.stations(visit), ReportOptions(),
                              gauging=store.gauging(visit),
                              measurements=section_measurements(store, section))  # fmt: skip
    g = data.gauging
    return {
        "Q": g.discharge.discharge, "Q ±": g.analysis.uncertainty.plus_minus,
        "n": g.calibrated.n, "n ±": g.calibrated.plus_minus,
        **rating_numbers(data.measured_rating.as_dict()),
    }  # fmt: skip


def cli_numbers(path: str, visit: str, section: str, capsys) -> dict:
    assert main(["measured-rating", "--store", path, "--section", SECTION, "--json"]) == 0
    shown = json.loads(capsys.readouterr().out)
    assert shown["visit"] == visit and shown["section_uuid"] == section
    own = next(m for m in shown["measurements"] if m["visit"] == visit)
    return {
        "Q": own["discharge"], "Q ±": own["plus_minus"], "n": own["n"],
        "n ±": own["n_plus_minus"],
        **rating_numbers(shown),
    }  # fmt: skip


def service_numbers(path: str, visit: str, section: str) -> dict:
    from stakeline.app.service import FieldService
    from stakeline.app.service.gauging import GaugingService

    class Service(FieldService, GaugingService):
        pass

    with Store.open(path) as store:
        shown = Service(store).gauging_figures(visit)
    return {
        "Q": shown["discharge"]["value"], "Q ±": shown["discharge"]["plus_minus"],
        "n": shown["n"]["value"], "n ±": shown["n"]["plus_minus"],
        **rating_numbers(shown["rating"]),
    }  # fmt: skip


def test_report_cli_and_tablet_show_the_same_gauging(demo, capsys):
    path, visit, section = demo
    shown = {
        "report": report_numbers(path, visit, section),
        "cli": cli_numbers(path, visit, section, capsys),
        "tablet": service_numbers(path, visit, section),
    }
    reference = shown["report"]
    assert len(reference) >= 15 and reference["Q"] > 0 and 0.02 < reference["n"] < 0.08
    for name, numbers in shown.items():
        for figure, value in numbers.items():
            assert figure in reference, (name, figure)
            assert value == pytest.approx(reference[figure], rel=1e-12), (name, figure)

"""Tests of the office commands: flow, rating, compare, export, report, roughness."""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys

import click
import pytest
from stakeline.app.cli import cli, main
from stakeline.files.section_csv import read_section_csv
from stakeline.store import Store

FLOW_KEYS = ["area", "wetted_perimeter", "hydraulic_radius", "discharge", "velocity", "froude",
             "shear_stress", "stream_power"]  # fmt: skip
OFFICE_COMMANDS = ("flow", "rating", "compare", "export", "report", "roughness")


def write_csv(path, stations, elevations):
    rows = ["station,elevation"] + [f"{s},{z}" for s, z in zip(stations, elevations, strict=True)]
    path.write_text("\n".join(rows) + "\n")
    return str(path)


@pytest.fixture
def chow_trapezoid(tmp_path):
    # Chow (1959) trapezoid: b = 20 ft, z = 2 (H:1V), 10 ft deep.
    return write_csv(tmp_path / "trap.csv", [0, 20, 40, 60], [10, 0, 0, 10])


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory):
    path = tmp_path_factory.mktemp("store") / "demo.db"
    store = Store.open(path)
    visits = {
        (v["section"], v["date"]): v["uuid"]
        for v in (store.visit(x["uuid"]) for x in store.load_demo())
    }
    store.close()
    return str(path), visits


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_flow_json_keys_and_chow_example(capsys, chow_trapezoid):
    code, out, err = run(
        capsys,
        "flow",
        chow_trapezoid,
        "--stage",
        3.36,
        "--n",
        0.025,
        "--slope",
        0.0016,
        "--units",
        "us",
        "--json",
    )
    assert code == 0, err
    got = json.loads(out)
    assert list(got) == FLOW_KEYS
    # Chow (1959): normal depth 3.36 ft for Q = 400 cfs (from memory); recomputed from Table 2-1
    # trapezoid formulas and Manning with k = 1.486; gamma = 62.4 lb/ft^3, g = 32.174 ft/s^2.
    y = 3.36
    area, perimeter, top = (20 + 2 * y) * y, 20 + 2 * y * math.sqrt(5), 20 + 4 * y
    radius = area / perimeter
    q = 1.486 / 0.025 * area * radius ** (2 / 3) * math.sqrt(0.0016)
    assert got["discharge"] == pytest.approx(400.0, rel=0.005)
    assert got["discharge"] == pytest.approx(q, rel=1e-12)
    assert got["area"] == pytest.approx(area, rel=1e-12)
    assert got["velocity"] == pytest.approx(q / area, rel=1e-12)
    assert got["froude"] == pytest.approx(q / area / math.sqrt(32.174 * area / top), rel=1e-12)
    assert got["shear_stress"] == pytest.approx(62.4 * radius * 0.0016, rel=1e-12)
    assert got["stream_power"] == pytest.approx(62.4 * q * 0.0016 / top, rel=1e-12)


def test_flow_text_shows_units_band_and_n_range(capsys, chow_trapezoid):
    code, out, _ = run(
        capsys,
        "flow",
        chow_trapezoid,
        "--stage",
        3.0,
        "--roughness",
        "clean-winding",
        "--water-levels",
        100.2,
        100.1,
        "--reach",
        62.5,
        "--units",
        "us",
    )
    assert code == 0
    assert "ft³/s" in out and "lb/ft²" in out and "±" in out
    assert "n 0.033" in out and "n 0.045" in out  # Chow Table 5-6 row's low and high n
    assert "licensed review" in out


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--slope", "0.001"], "Manning's n is needed"),
        (["--n", "0.03"], "slope is needed"),
        (["--n", "0.03", "--slope", "-0.001"], "slope must be a positive"),
        (["--n", "0", "--slope", "0.001"], "n must be a positive"),
        (["--n", "0.03", "--water-levels", "100.2", "100.1"], "needs --reach"),
        (["--n", "0.03", "--water-levels", "100.1", "100.2", "--reach", "10"], "upstream"),
        (["--roughness", "velvet", "--slope", "0.001"], "not in the table"),
    ],
)
def test_flow_bad_input_one_line(capsys, chow_trapezoid, extra, message):
    code, out, err = run(capsys, "flow", chow_trapezoid, "--stage", "3", *extra)
    assert code == 2
    assert message in err and err.count("\n") == 1 and out == ""


def test_flow_overtopped_and_bad_file(capsys, chow_trapezoid, tmp_path):
    code, _, err = run(capsys, "flow", chow_trapezoid, "--stage", 12, "--n", 0.03, "--slope", 0.001)
    assert code == 2 and "extend the survey" in err
    bad = tmp_path / "bad.csv"
    bad.write_text("station,elevation\n0,1\n1,x\n")
    code, _, err = run(capsys, "flow", bad, "--stage", 0.5, "--n", 0.03, "--slope", 0.001)
    assert code == 2 and "row 3" in err


def test_bad_input_in_a_real_process_has_no_traceback(tmp_path):
    result = subprocess.run(
        [sys.executable, "-m", "stakeline", "flow", str(tmp_path / "missing.csv"), "--stage", "1", "--n", "0.03", "--slope", "0.001"],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert result.returncode == 2
    assert "no such file" in result.stderr and "Traceback" not in result.stderr
    assert result.stderr.count("\n") == 1


def test_rating_csv_and_inverse(capsys, chow_trapezoid, tmp_path):
    code, out, _ = run(
        capsys,
        "rating",
        chow_trapezoid,
        "--n",
        0.025,
        "--slope",
        0.0016,
        "--units",
        "us",
        "--from",
        0,
        "--to",
        5,
        "--step",
        0.5,
        "--csv",
    )
    assert code == 0
    lines = out.splitlines()
    assert lines[0].startswith("stage (ft),area (ft²)") and lines[0].endswith("discharge (ft³/s)")
    assert len(lines) == 12
    code, out, _ = run(
        capsys,
        "rating",
        chow_trapezoid,
        "--n",
        0.025,
        "--slope",
        0.0016,
        "--units",
        "us",
        "--discharge",
        400,
    )
    # Chow (1959): 400 cfs -> normal depth 3.36 ft (from memory).
    assert code == 0 and "water level 3.36" in out
    plot, table = tmp_path / "r.png", tmp_path / "r.csv"
    code, out, _ = run(
        capsys,
        "rating",
        chow_trapezoid,
        "--n",
        0.025,
        "--slope",
        0.0016,
        "--out",
        table,
        "--plot",
        plot,
    )
    assert (
        code == 0
        and plot.read_bytes()[:4] == b"\x89PNG"
        and table.read_text().startswith("stage (m)")
    )


def test_compare_files_with_known_scour(capsys, tmp_path):
    before = write_csv(tmp_path / "a.csv", [0, 0, 10, 10], [2.0, 1.0, 1.0, 2.0])
    # A triangular pool 2 wide and 0.4 deep dug into a flat bed: scour 0.4 (closed form b*h/2).
    after = write_csv(
        tmp_path / "b.csv", [0, 0, 3, 4, 5, 10, 10], [2.0, 1.0, 1.0, 0.6, 1.0, 1.0, 2.0]
    )
    code, out, _ = run(capsys, "compare", before, after, "--stage", 1.5, "--json")
    assert code == 0
    got = json.loads(out)
    assert got["scour_area"] == pytest.approx(0.4) and got["fill_area"] == 0.0
    assert got["deepest_after"] == [4.0, 0.6]
    assert got["area_change"] == pytest.approx(0.4)


def test_compare_store_visits(capsys, demo_store):
    path, visits = demo_store
    a, b = visits[("XS1 riffle", "2026-04-14")], visits[("XS1 riffle", "2026-09-22")]
    code, out, _ = run(capsys, "compare", "--store", path, "--visit", b, "--visit", a[:8])
    assert code == 0 and out.startswith("2026-04-14 -> 2026-09-22") and "m²" in out
    code, _, err = run(
        capsys,
        "compare",
        "--store",
        path,
        "--visit",
        a,
        "--visit",
        visits[("XS2 pool", "2026-04-14")],
    )
    assert code == 2 and "different sections" in err


def test_export_writes_three_files(capsys, demo_store, tmp_path):
    path, visits = demo_store
    code, out, err = run(
        capsys,
        "export",
        "--store",
        path,
        "--visit",
        visits[("XS1 riffle", "2026-09-22")],
        "--out",
        tmp_path / "x",
        "--roughness",
        "mountain-gravel",
        "--slope",
        0.004,
    )
    assert code == 0, err
    files = sorted(p.name for p in (tmp_path / "x").iterdir())
    assert [f.rsplit("_", 1)[-1] for f in files] == [
        "2026-09-22.geojson",
        "rating.csv",
        "stations.csv",
    ]
    doc = json.loads(next((tmp_path / "x").glob("*.geojson")).read_text())
    stations = 35  # the demo's XS1 visit of 2026-09-22
    assert doc["type"] == "FeatureCollection"
    assert len(doc["features"]) == 3 + stations  # section line, two stakes, the stations
    rows = read_section_csv(next((tmp_path / "x").glob("*_stations.csv")))
    assert len(rows.stations) == stations and rows.extra["unit"][0] == "m"


def test_report_pdf_and_png(capsys, demo_store, tmp_path):
    path, visits = demo_store
    visit = visits[("XS1 riffle", "2026-09-22")]
    pdf = tmp_path / "r.pdf"
    code, out, err = run(
        capsys,
        "report",
        "--store",
        path,
        "--visit",
        visit,
        "--out",
        pdf,
        "--roughness",
        "mountain-gravel",
        "--slope",
        0.004,
    )
    assert code == 0, err
    assert pdf.read_bytes()[:4] == b"%PDF" and err == ""
    png = tmp_path / "r.png"
    code, out, err = run(
        capsys, "report", "--store", path, "--visit", visit, "--out", png, "--no-compare"
    )
    assert code == 0 and png.read_bytes()[:4] == b"\x89PNG"
    assert "no discharge" in err  # said plainly, not guessed


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (
            ["--store", "{tmp}/none.db", "--visit", "abc", "--out", "{tmp}/r.pdf"],
            "no such store file",
        ),
        (["--store", "{store}", "--visit", "nope", "--out", "{tmp}/r.pdf"], "no visit with id"),
        (["--store", "{store}", "--visit", "{visit}", "--out", "{tmp}/r.docx"], ".pdf or .png"),
        (["--store", "{store}", "--visit", "{visit}", "--out", "{tmp}/no/r.pdf"], "no such folder"),
    ],
)
def test_report_bad_input(capsys, demo_store, tmp_path, argv, message):
    path, visits = demo_store
    fill = {"tmp": str(tmp_path), "store": path, "visit": visits[("XS2 pool", "2026-04-14")]}
    code, _, err = run(capsys, "report", *(a.format(**fill) for a in argv))
    assert code == 2 and message in err and err.count("\n") == 1


def test_roughness_table(capsys):
    code, out, _ = run(capsys, "roughness", "--json")
    rows = json.loads(out)
    assert code == 0 and {r["key"] for r in rows} >= {"clean-straight", "mountain-gravel"}
    code, out, _ = run(capsys, "roughness")
    assert "Chow" in out and "Table 5-6" in out


def test_every_office_command_has_help():
    for name in OFFICE_COMMANDS:
        command = cli.commands[name]
        assert command.short_help, name
        assert command.get_help(click.Context(command, info_name=name))


def test_flow_compound_split_at_coded_bank_tops(capsys, tmp_path):
    path = tmp_path / "two.csv"
    path.write_text(
        "station,elevation,code\n0,4,\n0,2,\n20,2,bank_top\n20,0,\n30,0,\n30,2,bank_top\n50,2,\n50,4,\n"
    )
    code, out, err = run(
        capsys,
        "flow",
        path,
        "--stage",
        2.5,
        "--n",
        0.03,
        "--n-overbank",
        0.05,
        "--slope",
        0.001,
        "--bank-tops",
        "--json",
    )
    assert code == 0, err
    # Divided-channel method (Chow 1959, sec. 6-7), closed form: flood plains 20 x 0.5 with
    # P = 20 + 0.5 (outer wall; dividers not wetted), main channel 10 x 2.5 with P = 10 + 2*2.
    k_plain = 1 / 0.05 * 10.0 * (10.0 / 20.5) ** (2 / 3)
    k_main = 1 / 0.03 * 25.0 * (25.0 / 14.0) ** (2 / 3)
    assert json.loads(out)["discharge"] == pytest.approx(
        (2 * k_plain + k_main) * math.sqrt(0.001), rel=1e-12
    )


def test_compare_plot(capsys, demo_store, tmp_path):
    path, visits = demo_store
    a, b = visits[("XS1 riffle", "2026-04-14")], visits[("XS1 riffle", "2026-09-22")]
    plot = tmp_path / "c.png"
    code, out, err = run(
        capsys, "compare", "--store", path, "--visit", a, "--visit", b, "--json", "--plot", plot
    )
    assert code == 0 and json.loads(out)["scour_area"] > 0 and "wrote" in err
    assert plot.read_bytes()[:4] == b"\x89PNG"


def test_figures_json_keys_and_text(capsys, demo_store):
    from stakeline.app.cli.figures import FIGURES_KEYS

    path, visits = demo_store
    visit = visits[("XS1 riffle", "2026-09-22")]
    rough = ["--roughness", "mountain-gravel", "--slope", 0.004]
    code, out, err = run(capsys, "figures", "--store", path, "--visit", visit, *rough, "--json")
    got = json.loads(out)
    assert code == 0 and tuple(got) == FIGURES_KEYS and err == ""
    assert got["earlier"]["date"] == "2026-04-14" and got["flow"]["discharge"] > 0
    # The water level policy: the one level recorded on that visit (demo data).
    assert (
        got["stage"] == pytest.approx(99.91) and got["stage_source"] == "the water level recorded"
    )
    code, out, _ = run(capsys, "figures", "--store", path, "--visit", visit, *rough)
    assert code == 0 and "m³/s" in out and "change since 2026-04-14" in out
    assert "licensed review" in out


def test_report_of_a_gauged_visit_carries_the_gauging_pages(capsys, demo_store, tmp_path):
    path, _ = demo_store
    # The report command hands the visit's gauging and the section's measurements to the one
    # analysis: its PDF has the gauging, panels and measured-rating pages that the same report
    # prepared without them lacks.
    from stakeline.analysis import visit_water_level
    from stakeline.app.cli.options import Roughness, Slope, analysis_options
    from stakeline.report import field_findings, prepare_report, write_report

    with Store.open(path, readonly=True) as store:
        visit = store.visits()[-1]
        assert visit["section"].startswith("XS1")
        assert store.gauging(visit["uuid"])["verticals"], "the demo's riffle is gauged"
    out = tmp_path / "gauged.pdf"
    code, _, err = run(capsys, "report", "--store", path, "--visit", visit["uuid"],
                       "--out", out, "--no-compare")  # fmt: skip
    assert code == 0, err
    with Store.open(path, readonly=True) as store:
        found = store.visit(visit["uuid"])
        stations = [s for s in store.stations(found["uuid"]) if not s.get("removed")]
    options = analysis_options(Roughness(), Slope(), from_codes=True)
    findings = field_findings(found, stations, visit_water_level(found["water_levels"]))
    plain = write_report(prepare_report(found, stations, options, findings), tmp_path / "plain.pdf")

    def pages(path):
        return len(re.findall(rb"/Type /Page\b(?!s)", path.read_bytes()))

    assert pages(out) >= pages(plain) + 3

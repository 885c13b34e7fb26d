"""``stakeline discharge`` and ``stakeline calibrate`` run as a person runs them (real files,
``main`` with argv), checked against the published formulas recomputed here."""

from __future__ import annotations

import json
import math

import pytest
from stakeline.app.cli import main


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def gauging(tmp_path):
    """A small wading measurement: water's edges at 0 and 6 m, five verticals between."""
    path = tmp_path / "gauging.csv"
    path.write_text(
        "station,depth,velocity\n0,0,\n1,0.30,0.20\n2,0.50,0.35\n3,0.60,0.40\n"
        "4,0.50,0.30\n5,0.25,0.15\n6,0,\n",
        encoding="utf-8",
    )
    return path


def test_discharge_json_is_the_midsection_sum(capsys, gauging):
    code, out, err = _run(capsys, "discharge", gauging, "--json")
    assert code == 0 and err == ""
    doc = json.loads(out)
    # Midsection method (Turnipseed & Sauer 2010, USGS TM 3-A8; ISO 748): q_i = v_i d_i
    # (b_{i+1} - b_{i-1}) / 2; the edges of zero depth carry nothing.
    verticals = [
        (1, 0.30, 0.20),
        (2, 0.50, 0.35),
        (3, 0.60, 0.40),
        (4, 0.50, 0.30),
        (5, 0.25, 0.15),
    ]
    q = sum(v * d * 1.0 for _, d, v in verticals)
    area = sum(d * 1.0 for _, d, _ in verticals)
    assert doc["discharge"] == pytest.approx(q, rel=1e-12)
    assert doc["area"] == pytest.approx(area, rel=1e-12)
    assert doc["width"] == pytest.approx(6.0)
    assert doc["mean_velocity"] == pytest.approx(q / area, rel=1e-12)
    assert [p["station"] for p in doc["panels"]] == [0, 1, 2, 3, 4, 5, 6]
    for panel in doc["panels"]:
        assert set(panel) >= {"station", "width", "depth", "velocity", "discharge", "percent"}
    assert sum(p["percent"] for p in doc["panels"]) == pytest.approx(100.0)


def test_discharge_mean_section(capsys, gauging):
    code, out, _ = _run(capsys, "discharge", gauging, "--method", "meansection", "--json")
    assert code == 0
    # Mean-section method (USGS TM 3-A8; ISO 748): q = (v_i + v_i+1)/2 (d_i + d_i+1)/2 (b_i+1 - b_i)
    d = [0, 0.30, 0.50, 0.60, 0.50, 0.25, 0]
    v = [0, 0.20, 0.35, 0.40, 0.30, 0.15, 0]
    q = sum((v[i] + v[i + 1]) / 2 * (d[i] + d[i + 1]) / 2 for i in range(6))
    assert json.loads(out)["discharge"] == pytest.approx(q, rel=1e-12)


def test_discharge_text_names_units_share_and_caution(capsys, gauging):
    code, out, _ = _run(capsys, "discharge", gauging)
    assert code == 0
    assert "m³/s" in out and "%" in out and "licensed engineering review" in out


def test_discharge_bad_rows_name_file_and_row(capsys, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("station,depth,velocity\n0,0,\n1,deep,0.3\n", encoding="utf-8")
    code, out, err = _run(capsys, "discharge", bad)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and str(bad) in err and "row 3" in err


def test_calibrate_gives_back_the_n_of_a_worked_example(capsys, tmp_path):
    # Ponce, CIVE 530 Midterm 1 Problem 4 (Fall 2008), run backwards: rectangle b = 6 m,
    # y = 1.6 m, S = 0.0025, n = 0.015 carries Q = (1/n) A R^(2/3) S^(1/2) = 32.91 m³/s.
    section = tmp_path / "rectangle.csv"
    section.write_text("station,elevation\n0,3\n0,0\n6,0\n6,3\n", encoding="utf-8")
    area, radius = 6 * 1.6, 6 * 1.6 / (6 + 2 * 1.6)
    q = 1 / 0.015 * area * radius ** (2 / 3) * math.sqrt(0.0025)
    assert q == pytest.approx(32.91, rel=1e-3)  # the source rounds R to 1.043 m
    code, out, err = _run(
        capsys, "calibrate", section, "--stage", 1.6, "--discharge", q, "--slope", 0.0025, "--json"
    )
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert doc["n"] == pytest.approx(0.015, rel=1e-9)
    code, out, _ = _run(capsys, "calibrate", section, "--stage", 1.6, "--discharge", q,
                        "--slope", 0.0025, "--units", "us")  # fmt: skip
    # k = 1.486 in US units (Chow 1959, eq. 5-7): the same numbers give n × 1.486.
    assert code == 0 and "0.0223" in out


@pytest.mark.parametrize(
    "argv, words",
    [
        (["--stage", 5, "--discharge", 1, "--slope", 0.001], "above"),
        (["--stage", 1, "--discharge", -1, "--slope", 0.001], "positive"),
        (["--stage", 1, "--discharge", 1, "--slope", 0], "slope"),
    ],
)
def test_calibrate_bad_input_is_one_line(capsys, tmp_path, argv, words):
    section = tmp_path / "rectangle.csv"
    section.write_text("station,elevation\n0,3\n0,0\n6,0\n6,3\n", encoding="utf-8")
    code, out, err = _run(capsys, "calibrate", section, *argv)
    assert code == 2 and out == "" and err.count("\n") == 1 and words in err

"""`stakeline check`, run as real subprocesses (and in-process where only the output matters)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from stakeline.app.cli import main
from synthetic import natural_section, with_point_error

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
KEYS = {"kind", "severity", "station", "message", "suggestion"}


def stakeline(*args):
    return subprocess.run(
        [sys.executable, "-m", "stakeline", *map(str, args)],
        capture_output=True,
        text=True,
        timeout=60,
    )


def write_csv(path, section, *, codes=True):
    lines = ["station,reading,elevation" + (",code" if codes else "")]
    for x, r, z, c in zip(
        section.stations, section.readings, section.elevations, section.codes, strict=True
    ):
        lines.append(f"{x:.2f},{r:.3f},{z:.3f}" + (f",{c}" if codes else ""))
    path.write_text("\n".join(lines) + "\n")
    return path


def test_clean_section_json_is_an_empty_list_or_notes(tmp_path):
    s = natural_section(np.random.default_rng(21))
    out = stakeline("check", write_csv(tmp_path / "clean.csv", s), "--stage", s.stage, "--json")
    assert out.returncode == 0, out.stderr
    found = json.loads(out.stdout)
    assert isinstance(found, list)
    assert [f for f in found if f["severity"] != "note"] == []


def test_spike_is_reported_with_the_contract_keys(tmp_path):
    s = natural_section(np.random.default_rng(21))
    i = len(s) // 2
    bad = with_point_error(s, i, -0.3 * s.channel_depth)
    out = stakeline("check", write_csv(tmp_path / "spike.csv", bad), "--stage", s.stage, "--json")
    assert out.returncode == 0, out.stderr  # findings are not an error
    found = json.loads(out.stdout)
    assert all(set(f) == KEYS for f in found)
    spikes = [f for f in found if f["kind"] == "spike"]
    assert [f["station"] for f in spikes] == [pytest.approx(float(s.stations[i]))]
    assert spikes[0]["suggestion"].startswith("re-read station")


def test_stations_going_backwards_are_a_finding_not_an_error(tmp_path, capsys):
    path = tmp_path / "back.csv"
    path.write_text("station,elevation\n0,2\n1,1.5\n2,1\n3.5,0.8\n3,0.9\n4,1.2\n5,2\n")
    assert main(["check", str(path), "--json"]) == 0
    found = json.loads(capsys.readouterr().out)
    assert [(f["kind"], f["severity"], f["station"]) for f in found] == [("order", "block", 3.5)]


def test_text_output_has_units_suggestions_and_the_caution(tmp_path, capsys):
    path = tmp_path / "over.csv"
    path.write_text("station,elevation\n0,2\n1,1\n2,0.5\n3,1\n4,1.8\n")
    assert main(["check", str(path), "--stage", "1.9", "--unit", "ft"]) == 0
    text = capsys.readouterr().out
    assert "[block] overtopped at 4 ft" in text and "0.100 ft above the right end" in text
    assert "-> extend the survey on the right bank" in text
    assert "not a substitute for review" in text


def test_demo_survey_with_its_line_heights(capsys, tmp_path):
    # XS1 of the invented demo creek: readings, elevations and codes as the crew entered them,
    # with both water's edges read at the water level of 99.98 m: a clean survey, no findings.
    source = DEMO / "xs1_2026-04-14.csv"
    line = ["--line-left", "101.2", "--line-right", "101.2", "--line-check", "101.201"]
    assert main(["check", str(source), "--stage", "99.98", "--json", *line]) == 0
    assert json.loads(capsys.readouterr().out) == []
    # The same survey with the left water's edge misread by 0.15 m is flagged at that station.
    rows = source.read_text().splitlines()
    at = next(i for i, r in enumerate(rows) if r.endswith("water_edge"))
    station, reading, elevation, code = rows[at].split(",")
    rows[at] = f"{station},{float(reading) + 0.15:.3f},{float(elevation) - 0.15:.3f},{code}"
    bad = tmp_path / "xs1_misread.csv"
    bad.write_text("\n".join(rows) + "\n")
    assert main(["check", str(bad), "--stage", "99.98", "--json", *line]) == 0
    found = json.loads(capsys.readouterr().out)
    assert ("edge", float(station)) in [(f["kind"], f["station"]) for f in found]


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("station,elevation\n0,1\n1,x\n", "row 3: elevation 'x' is not a number"),
        ("station,depth\n0,1\n", "no 'elevation' column"),
        ("station,elevation\n0,1\n", "at least 2 rows"),
        ("", "no 'station' column"),
        ("station,elevation,reading\n0,1,\n1,2,nan\n", "row 3: reading 'nan' is not a number"),
    ],
)
def test_bad_files_exit_2_with_one_line(tmp_path, content, message):
    path = tmp_path / "bad.csv"
    path.write_text(content)
    out = stakeline("check", path, "--json")
    assert out.returncode == 2 and out.stdout == ""
    assert message in out.stderr and out.stderr.count("\n") == 1
    assert "Traceback" not in out.stderr


def test_missing_file_and_bad_option_exit_2(tmp_path):
    out = stakeline("check", tmp_path / "nope.csv")
    assert out.returncode == 2 and "no such file" in out.stderr and "Traceback" not in out.stderr
    path = tmp_path / "ok.csv"
    path.write_text("station,elevation\n0,1\n1,0\n2,1\n")
    out = stakeline("check", path, "--min-stations", "0")
    assert out.returncode == 2 and "--min-stations" in out.stderr


def test_check_has_help_text():
    out = stakeline("check", "--help")
    assert out.returncode == 0 and "--stage" in out.stdout and "--json" in out.stdout

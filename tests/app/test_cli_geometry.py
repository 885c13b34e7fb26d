"""`stakeline section` and `stakeline table`, run as real subprocesses."""

from __future__ import annotations

import csv
import io
import json
import subprocess
import sys

import click
import pytest
from stakeline.survey.geometry import FIGURES, Section


def stakeline(*args):
    return subprocess.run(
        [sys.executable, "-m", "stakeline", *map(str, args)],
        capture_output=True,
        text=True,
        timeout=60,
    )


@pytest.fixture
def trapezoid_csv(tmp_path):
    # Trapezoid b = 2, z = 1.5, banks 2 high; bed at elevation 98.0.
    path = tmp_path / "trap.csv"
    path.write_text("station,elevation,code\n0,100,bank_top\n3,98,toe\n5,98,toe\n8,100,bank_top\n")
    return path


def test_section_json_has_exactly_the_contract_keys(trapezoid_csv):
    out = stakeline("section", trapezoid_csv, "--stage", 99.0, "--json")
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    assert set(data) == {*FIGURES, "edges"}
    # Chow (1959) Table 2-1 trapezoid at y = 1: A = (b + zy)y = 3.5, T = b + 2zy = 5.
    assert data["area"] == pytest.approx(3.5)
    assert data["top_width"] == pytest.approx(5.0)
    assert data["edges"] == [[1.5, 6.5]]


def test_section_prints_a_readable_table_with_units(trapezoid_csv):
    out = stakeline("section", trapezoid_csv, "--stage", 99.0, "--unit", "m")
    assert out.returncode == 0
    assert "wetted area" in out.stdout and "m²" in out.stdout and "1.500 to 6.500" in out.stdout


def test_table_csv_matches_the_core(trapezoid_csv):
    out = stakeline("table", trapezoid_csv, "--from", 98, "--to", 100, "--step", 0.5, "--csv")
    assert out.returncode == 0, out.stderr
    rows = list(csv.DictReader(io.StringIO(out.stdout)))
    assert [float(r["stage"]) for r in rows] == [98, 98.5, 99, 99.5, 100]
    expected = Section([0, 3, 5, 8], [100, 98, 98, 100]).table([98, 98.5, 99, 99.5, 100])
    assert [float(r["area"]) for r in rows] == pytest.approx(expected["area"].tolist(), rel=1e-5)


@pytest.mark.parametrize(
    ("content", "args", "message"),
    [
        ("station,height\n0,1\n1,2\n", ("--stage", 1), "no 'elevation' column"),
        ("station,elevation\n0,1\n1,x\n2,1\n", ("--stage", 0.5), "row 3"),
        ("station,elevation\n0,1\n2,0\n1,1\n", ("--stage", 0.5), "row 4"),
        ("station,elevation\n0,1\n1,0\n2,1\n", ("--stage", 1.5), "above the left end"),
    ],
)
def test_bad_files_give_one_line_and_exit_2(tmp_path, content, args, message):
    path = tmp_path / "bad.csv"
    path.write_text(content)
    out = stakeline("section", path, *args)
    assert out.returncode == 2
    assert message in out.stderr
    assert len(out.stderr.strip().splitlines()) == 1
    assert "Traceback" not in out.stderr


def test_table_rejects_a_bad_step(trapezoid_csv):
    out = stakeline("table", trapezoid_csv, "--from", 98, "--to", 100, "--step", 0)
    assert out.returncode == 2 and "--step" in out.stderr


def test_every_command_has_help_text():
    from stakeline.app.cli import cli

    for name, command in cli.commands.items():
        assert command.help and command.short_help, name
        assert command.get_help(click.Context(command, info_name=name)), name

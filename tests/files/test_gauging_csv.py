"""Tests of stakeline.files.gauging_csv: reading verticals with row-numbered errors."""

from __future__ import annotations

import json
import math
import os

import pytest
from stakeline.errors import SectionFileError, SurveyError
from stakeline.files import gauging_csv
from stakeline.files.gauging_csv import GaugingFileError, read_gauging_csv
from stakeline.gauging import velocity_area


def write(tmp_path, text, name="g.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_mean_velocities_and_extra_columns(tmp_path):
    path = write(
        tmp_path,
        "Station,Depth,Velocity,note\n0,0,,left edge\n1.5,0.42,0.31,\n\n3,0.55,0.40,rocks\n4.5,0,,\n",
    )
    rows = read_gauging_csv(path)
    assert rows.stations == [0.0, 1.5, 3.0, 4.5]
    assert rows.depths == [0.0, 0.42, 0.55, 0.0]
    assert rows.velocities[1:3] == [0.31, 0.40]
    assert math.isnan(rows.velocities[0])  # an edge: no velocity read (none needed)
    assert rows.methods == ["", "mean", "mean", ""]
    assert rows.rows == [2, 3, 5, 6]
    assert rows.extra == {"note": ["left edge", "", "rocks", ""]}
    assert rows.angles is None and rows.points == {}
    r = velocity_area(rows.stations, rows.depths, rows.velocities)
    assert r.discharge == pytest.approx(0.31 * 0.42 * 1.5 + 0.40 * 0.55 * 1.5)


def test_point_velocities_form_published_methods(tmp_path):
    # Per row: v06 alone (one point), v02 and v08 (two points), all three (three points);
    # TM 3-A8 / ISO 748 formulas (from memory).
    path = write(
        tmp_path,
        "station,depth,v02,v06,v08,angle\n"
        "0,0,,,,\n"
        "1,0.5,,0.40,,\n"
        "2,0.9,0.70,,0.50,10\n"
        "3,1.1,0.80,0.66,0.50,-5\n"
        "4,0.6,,,,\n"
        "5,0,,,,\n",
    )
    rows = read_gauging_csv(path)
    assert rows.methods == ["", "one-point", "two-point", "three-point", "", ""]
    assert rows.velocities[1] == pytest.approx(0.40)
    assert rows.velocities[2] == pytest.approx((0.70 + 0.50) / 2)
    assert rows.velocities[3] == pytest.approx(((0.80 + 0.50) / 2 + 0.66) / 2)
    assert math.isnan(rows.velocities[4])  # wet, not read yet
    assert rows.angles == [0.0, 0.0, 10.0, -5.0, 0.0, 0.0]
    assert rows.points["v02"][2] == 0.70 and math.isnan(rows.points["v02"][1])
    r = velocity_area(rows.stations, rows.depths, rows.velocities, angles=rows.angles)
    assert r.missing == (4,)
    out = json.loads(json.dumps(r.as_dict(), allow_nan=False))
    assert {"discharge", "area", "width", "mean_velocity", "panels"} <= set(out)
    assert set(out["panels"][0]) >= {
        "station",
        "width",
        "depth",
        "velocity",
        "discharge",
        "percent",
    }


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("station,velocity\n0,1\n", "row 1: no 'depth' column"),
        ("station,depth\n0,0\n1,0\n", "row 1: no velocity column"),
        ("station,depth,velocity,depth\n0,0,0,0\n", "row 1: column 'depth' appears twice"),
        ("station,depth,velocity\n0,0,0\n1,abc,0.3\n", "row 3: depth 'abc' is not a number"),
        ("station,depth,velocity\n0,0,0\n1,-0.2,0.3\n", "row 3: depth -0.2 is negative"),
        ("station,depth,velocity\n0,0,0\n1,0.2,inf\n", "row 3: velocity 'inf' is not a finite"),
        ("station,depth,velocity\n0,0,0\n2,0.2,0.3\n2,0,0\n", "row 4: station 2 is not beyond"),
        ("station,depth,v02,v06\n0,0,,\n1,0.5,0.4,0.3\n", "row 3: the points read .* published"),
        ("station,depth,v08\n0,0,\n1,0.5,0.3\n", "row 3: the points read \\(v08\\)"),
        ("station,depth,velocity,v06\n0,0,,\n1,0.5,0.3,0.3\n", "row 3: both a mean velocity"),
        ("station,depth,velocity,angle\n0,0,0,0\n1,0.5,0.3,90\n", "row 3: angle 90 is not between"),
        ("station,depth,velocity\n0,0,0\n", "at least 2 rows"),
        ("", "the file is empty"),
    ],
)
def test_bad_files_name_the_row(tmp_path, text, expected):
    with pytest.raises(GaugingFileError, match=expected) as caught:
        read_gauging_csv(write(tmp_path, text))
    assert isinstance(caught.value, SectionFileError) and isinstance(caught.value, SurveyError)
    assert "\n" not in str(caught.value)


def test_row_numbers_are_kept_on_the_error(tmp_path):
    with pytest.raises(GaugingFileError) as caught:
        read_gauging_csv(write(tmp_path, "station,depth,velocity\n0,0,0\n\n1,x,0\n"))
    assert caught.value.row == 4


def test_missing_binary_and_oversized_files(tmp_path, monkeypatch):
    with pytest.raises(GaugingFileError, match="no such file"):
        read_gauging_csv(tmp_path / "nope.csv")
    path = tmp_path / "b.csv"
    path.write_bytes(b"\xff\xfe\x00\x81garbage")
    with pytest.raises(GaugingFileError, match="cannot be read"):
        read_gauging_csv(path)
    big = write(tmp_path, "station,depth,velocity\n" + "".join(f"{i},0.1,0.1\n" for i in range(50)))
    monkeypatch.setattr(gauging_csv, "MAX_BYTES", 200)
    with pytest.raises(GaugingFileError, match=r"larger than a gauging file may be \(200 bytes\)"):
        read_gauging_csv(big)
    monkeypatch.setattr(gauging_csv, "MAX_BYTES", 10_000)
    monkeypatch.setattr(gauging_csv, "MAX_ROWS", 10)
    with pytest.raises(GaugingFileError, match="more than 10 rows"):
        read_gauging_csv(big)


def test_a_named_pipe_is_refused_without_waiting(tmp_path):

    pipe = tmp_path / "verticals.csv"
    os.mkfifo(pipe)  # nobody writes: reading it would wait for ever
    with pytest.raises(GaugingFileError, match="pipe|not a regular file"):
        read_gauging_csv(pipe)

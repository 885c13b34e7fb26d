"""Tests of stakeline.files.section_csv: reading station/elevation files with row-numbered errors."""

from __future__ import annotations

import pytest
from stakeline.errors import SectionFileError
from stakeline.files.section_csv import read_section_csv


def write(tmp_path, text, name="s.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_reads_columns_in_any_order_and_keeps_the_rest(tmp_path):
    path = write(tmp_path, "code,Elevation,station\nLB,101.2,0\n,100.1,1.5\n\nRB,101.0,3\n")
    rows = read_section_csv(path)
    assert rows.stations == [0.0, 1.5, 3.0]
    assert rows.elevations == [101.2, 100.1, 101.0]
    assert rows.rows == [2, 3, 5]
    assert rows.extra == {"code": ["LB", "", "RB"]}


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("station,height\n0,1\n1,2\n", "row 1: no 'elevation' column"),
        ("station,elevation\n0,1\n1,abc\n", "row 3: elevation 'abc' is not a number"),
        ("station,elevation\n0,1\n2,2\n1,1\n", "row 4: station 1 is less than the station before"),
        ("station,elevation\n0,1\nnan,2\n", "row 3: station 'nan' is not a finite number"),
        ("station,elevation\n0,1\n", "at least 2 rows"),
        ("", "empty"),
    ],
)
def test_bad_files_name_the_row(tmp_path, text, expected):
    with pytest.raises(SectionFileError, match=expected):
        read_section_csv(write(tmp_path, text))


def test_missing_and_binary_files(tmp_path):
    with pytest.raises(SectionFileError, match="no such file"):
        read_section_csv(tmp_path / "nope.csv")
    path = tmp_path / "b.csv"
    path.write_bytes(b"\xff\xfe\x00\x81garbage")
    with pytest.raises(SectionFileError, match="cannot be read"):
        read_section_csv(path)


def test_keep_order_returns_rows_as_entered(tmp_path):
    # A station typed after a larger one (3.5 then 3) and a vertical face (2, 2): in file order.
    path = write(tmp_path, "station,elevation,code\n0,2,\n2,1.5,toe\n2,1,face\n3.5,0.8,\n3,0.9,\n")
    rows = read_section_csv(path, keep_order=True)
    assert rows.stations == [0.0, 2.0, 2.0, 3.5, 3.0]
    assert rows.elevations == [2.0, 1.5, 1.0, 0.8, 0.9]
    assert rows.rows == [2, 3, 4, 5, 6]
    assert rows.extra == {"code": ["", "toe", "face", "", ""]}
    with pytest.raises(SectionFileError, match="row 6: station 3 is less than the station before"):
        read_section_csv(path)


def test_keep_order_a_whole_survey_from_the_other_stake(tmp_path):
    path = write(tmp_path, "station,elevation\n4,2\n3,1\n2,0.5\n1,1\n0,2\n")
    assert read_section_csv(path, keep_order=True).stations == [4.0, 3.0, 2.0, 1.0, 0.0]


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("station,elevation\n3,1\n1,abc\n", "row 3: elevation 'abc' is not a number"),
        ("station,elevation\n3,1\ninf,2\n", "row 3: station 'inf' is not a finite number"),
        ("station,depth\n3,1\n1,2\n", "row 1: no 'elevation' column"),
        ("station,elevation\n3,1\n", "at least 2 rows"),
        ("", "no 'station' column"),
    ],
)
def test_keep_order_still_names_the_bad_row(tmp_path, text, expected):
    with pytest.raises(SectionFileError, match=expected):
        read_section_csv(write(tmp_path, text), keep_order=True)


def test_a_cell_too_long_for_csv_is_a_one_line_error(tmp_path):
    path = write(tmp_path, 'station,elevation,note\n0,1,"' + "x" * 200_000 + '"\n1,2,\n')
    with pytest.raises(SectionFileError, match="cannot be read as a text CSV file"):
        read_section_csv(path)

"""Tests of core.section_csv: reading station/elevation files with row-numbered errors."""

from __future__ import annotations

import pytest

from core.errors import SectionFileError
from core.section_csv import read_section_csv


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

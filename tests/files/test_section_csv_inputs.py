"""What the section reader is handed besides a section file: a pipe, a folder, a huge file, and
an export whose custody comment precedes the header."""

from __future__ import annotations

import os
import threading

import pytest
from stakeline.errors import SectionFileError
from stakeline.files import section_csv
from stakeline.files.exports import stations_csv
from stakeline.files.section_csv import read_section_csv


def test_a_named_pipe_is_refused_without_waiting_for_a_writer(tmp_path):
    pipe = tmp_path / "xs.csv"
    os.mkfifo(pipe)
    result = {}

    def read():  # on the old reader this blocked for ever: run it where it cannot hang the test
        try:
            read_section_csv(pipe)
        except SectionFileError as exc:
            result["error"] = str(exc)

    reader = threading.Thread(target=read, daemon=True)
    reader.start()
    reader.join(10)
    if reader.is_alive():  # release the blocked open, then fail
        with open(pipe, "w"):
            pass
        reader.join(5)
        pytest.fail("reading a named pipe waited for a writer")
    assert "named pipe" in result["error"] and str(pipe) in result["error"]


def test_a_folder_is_refused(tmp_path):
    with pytest.raises(SectionFileError, match="folder"):
        read_section_csv(tmp_path)


def test_a_file_over_the_limit_is_refused(tmp_path, monkeypatch):
    monkeypatch.setattr(section_csv, "MAX_BYTES", 1000)
    path = tmp_path / "big.csv"
    path.write_text("station,elevation\n" + "".join(f"{i},1.0\n" for i in range(200)))
    with pytest.raises(SectionFileError, match="larger than a section file may be"):
        read_section_csv(path)


def test_an_export_with_its_custody_line_reads_back(tmp_path):
    stations = [{"station": 0.0, "elevation": 101.0}, {"station": 2.0, "elevation": 99.5},
                {"station": 4.0, "elevation": 101.0}]  # fmt: skip
    path = tmp_path / "x.csv"
    path.write_text(stations_csv(stations, "m", custody="signed by device 'tablet-7'"))
    assert path.read_text().startswith("# signed by device 'tablet-7'\nstation,")
    rows = read_section_csv(path)
    assert rows.stations == [0.0, 2.0, 4.0] and rows.rows == [3, 4, 5]  # rows of the file


def test_row_numbers_count_the_comment_lines(tmp_path):
    path = tmp_path / "x.csv"
    path.write_text("# a note\n# another\nstation,elevation\n0,1\n1,x\n")
    with pytest.raises(SectionFileError, match="row 5: elevation"):
        read_section_csv(path)

"""Fuzzing the section CSV reader (hypothesis): valid files mutated cell by cell, and raw bytes.
The only outcomes allowed are rows read or a :class:`SectionFileError` with a one-line message
(never a traceback, never another error type)."""

from __future__ import annotations

import math

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stakeline.errors import SectionFileError
from stakeline.files.section_csv import read_section_csv

cells = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**30), 10**30).map(str),
    st.sampled_from(
        [
            "",
            " ",
            "nan",
            "inf",
            "-inf",
            "1e400",
            "1,5",
            "0x10",
            "\x00",
            '"',
            "1" * 5000,
            '"a\nb"',
            '"station\r"',
        ]
    ),
    st.text(max_size=12),
)
rows = st.lists(st.lists(cells, min_size=0, max_size=4), max_size=12)


def _outcome(path) -> None:
    try:
        section = read_section_csv(path, keep_order=True)
    except SectionFileError as exc:
        assert str(exc) and "\n" not in str(exc)
        return
    assert len(section.stations) == len(section.elevations) >= 2
    assert all(math.isfinite(v) for v in section.stations + section.elevations)


@settings(
    max_examples=200, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(header=st.sampled_from(["station,elevation", "Station,Elevation,code", "elevation,station",
                               "station", "", "station,elevation,station",
                               '"sta\ntion",elevation']),
       body=rows, newline=st.sampled_from(["\n", "\r\n", "\r"]))  # fmt: skip
def test_mutated_csv_rows(tmp_path, header, body, newline):
    text = newline.join([header, *(",".join(r) for r in body)]) + newline
    path = tmp_path / "section.csv"
    path.write_bytes(text.encode("utf-8", "surrogatepass"))
    _outcome(path)


@settings(
    max_examples=200, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(data=st.binary(max_size=400), prefix=st.sampled_from([b"", b"station,elevation\n",
                                                             b"\xef\xbb\xbfstation,elevation\n"]))  # fmt: skip
def test_random_bytes(tmp_path, data, prefix):
    path = tmp_path / "section.csv"
    path.write_bytes(prefix + data)
    _outcome(path)

"""A dense survey's report stays a report: a long visit lists its flagged, coded and noted
stations (every station is in the stations CSV), drawn a few artists per page."""

from __future__ import annotations

import numpy as np
from stakeline.report import ReportOptions, prepare_report, station_pages
from stakeline.report import pages as report_pages


def _texts(fig) -> str:
    found = [t.get_text() for t in fig.texts]
    for ax in fig.axes:
        found += [t.get_text() for t in ax.texts]
    return "\n".join(found)


def _visit(n: int):
    x = np.linspace(0.0, 20.0, n)
    z = 99.0 + 0.0004 * (x - 10.0) ** 4 / 10.0 + 0.002 * np.sin(np.arange(n))
    line = float(z.max()) + 0.5
    visit = {"site": "Bench", "section": "XS-dense", "date": "2026-05-01", "unit": "m",
             "water_levels": [{"elevation": 99.3, "time": "2026-05-01T10:00"}]}  # fmt: skip
    stations = [
        {"station": float(a), "reading": line - float(b), "elevation": float(b), "seq": i,
         "code": "bank_top" if i in (0, n - 1) else "", "note": "boulder" if i == 7 else ""}
        for i, (a, b) in enumerate(zip(x, z, strict=True))
    ]  # fmt: skip
    return visit, stations


def test_a_long_visit_lists_only_its_marked_stations_and_says_so():
    visit, stations = _visit(station_pages.STATIONS_LISTED + 500)
    data = prepare_report(visit, stations, ReportOptions(), findings=[])
    pages = station_pages.station_pages(data)
    assert len(pages) == 1  # three marked stations and the findings fit on one page
    text = _texts(pages[0])
    assert f"{len(stations):,} stations" in text and "stations CSV" in text
    for station in ("0.000", "20.000", f"{stations[7]['station']:.3f}"):
        assert station in text


def test_a_short_visit_lists_every_station_in_its_row():
    visit, stations = _visit(60)
    data = prepare_report(visit, stations, ReportOptions(), findings=[])
    pages = station_pages.station_pages(data)
    text = "\n".join(_texts(p) for p in pages)
    assert "stations CSV" not in text
    assert all(f"{s['station']:.3f}" in text for s in stations)
    # One text block per column: the rows of every column line up (same count, same order).
    columns = [t.get_text().split("\n") for t in pages[0].axes[0].texts[1::2]]
    assert len({len(c) for c in columns}) == 1


def test_every_finding_and_long_note_is_printed_whole_on_as_many_pages_as_it_takes():
    """A visit's findings are the crew's record of what was checked: none is cut short and
    none is left out, however many there are (they flow on to further pages)."""
    visit, stations = _visit(60)
    note = "undercut bank with roots; the plumb met a submerged log first, read twice " * 2
    stations[5]["note"] = note.strip()
    findings = [
        {"severity": "warn", "kind": "spike", "station": float(i),
         "message": f"reading {i} stands out from its neighbours by {i}.5 cm, more than the "
                    "spread of the rest of the section would explain on this bed",
         "suggestion": f"read station {i} again, and its neighbours if the bed is soft"}
        for i in range(120)
    ]  # fmt: skip
    data = prepare_report(visit, stations, ReportOptions(), findings=findings)
    pages = station_pages.station_pages(data)
    text = " ".join(" ".join(_texts(p).split()) for p in pages)
    assert len(pages) > 2
    for f in findings:
        assert " ".join(f["message"].split()) in text
        assert f["suggestion"] in text
    assert note.strip() in text  # the station table shortens it; it is given whole below
    assert "…" not in text.replace(report_pages._clip(note, report_pages.NOTE_CHARS), "")

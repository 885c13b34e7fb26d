"""Tests of stakeline.report and stakeline.report.pages on the demo survey (real store, real files)."""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure
from stakeline.errors import SurveyError
from stakeline.report import (
    CAUTIONS,
    ReportOptions,
    field_findings,
    nice_step,
    prepare_report,
    write_report,
)
from stakeline.report import pages as report_pages
from stakeline.store import Store
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_at


@pytest.fixture(scope="module")
def demo():
    store = Store.memory()
    visits = store.load_demo()
    out = {}
    for v in visits:
        full = store.visit(v["uuid"])
        out[(full["section"], full["date"])] = (full, store.stations(v["uuid"]))
    yield out
    store.close()


def report_for(demo, key, previous=None, **options):
    visit, stations = demo[key]
    prev = None
    if previous:
        pv, ps = demo[previous]
        prev = {"visit": pv, "stations": ps}
    findings = [
        {
            "kind": "spike",
            "severity": "warn",
            "station": 4.5,
            "message": "out of line",
            "suggestion": "re-read",
        }
    ]
    return prepare_report(visit, stations, ReportOptions(**options), findings, [], prev)


def all_text(fig: Figure) -> str:
    parts = [t.get_text() for t in fig.texts]
    for ax in fig.axes:
        parts += [t.get_text() for t in ax.texts]
        parts += [ax.get_xlabel(), ax.get_ylabel()]
        for table in ax.tables:
            parts += [c.get_text().get_text() for c in table.get_celld().values()]
    return "\n".join(parts)


def test_prepare_report_runs_the_analysis(demo):
    data = report_for(
        demo,
        ("XS1 riffle", "2026-09-22"),
        ("XS1 riffle", "2026-04-14"),
        roughness="mountain-gravel",
        slope=0.004,
    )
    assert data.stage == pytest.approx(99.91)  # the one water level read that day
    assert data.flagged == [4.5]
    assert data.splits == []  # bank tops at the ends of XS1: no overbanks
    section = Section(
        [s["station"] for s in data.stations], [s["elevation"] for s in data.stations]
    )
    assert data.flow["discharge"] == pytest.approx(flow_at(section, 99.91, 0.04, 0.004).discharge)
    # Manning: Q at low and high n of the row scale as normal/min and normal/max (closed form).
    assert data.n_range["minimum"] == pytest.approx(data.flow["discharge"] * 0.040 / 0.030)
    assert data.n_range["maximum"] == pytest.approx(data.flow["discharge"] * 0.040 / 0.050)
    assert data.bands["discharge"].plus_minus < data.n_range["minimum"] - data.n_range["maximum"]
    assert data.bankfull["stage"] == pytest.approx(100.895)  # the lower of the two bank tops
    assert data.comparison["scour_area"] > data.comparison["fill_area"] > 0
    assert data.missing == []


def test_compound_split_at_the_cut_bank(demo):
    data = report_for(demo, ("XS2 pool", "2026-04-14"), n=0.035, n_overbank=0.06, slope=0.003)
    assert data.splits == [12.6]
    assert [p["name"] for p in data.subsections] == ["main channel", "right overbank"]
    assert data.n_values == [0.035, 0.06]
    assert (
        data.row is not None and data.row.key == "clean-straight-stony"
    )  # typed n equals its normal


def test_missing_inputs_are_named(demo):
    data = report_for(demo, ("XS1 riffle", "2026-04-14"))
    assert data.flow is None
    assert any("slope" in m for m in data.missing) and any("Manning" in m for m in data.missing)
    assert "discharge" not in data.rating and "area" in data.rating


def test_pages_carry_cautions_units_and_n_note(demo):
    data = report_for(
        demo,
        ("XS1 riffle", "2026-09-22"),
        ("XS1 riffle", "2026-04-14"),
        roughness="mountain-gravel",
        slope=0.004,
    )
    pages = report_pages.draw_pages(data)
    assert len(pages) >= 4  # the stations table runs on as long as the survey needs
    first = all_text(pages[0])
    for caution in CAUTIONS:
        assert caution.split(".")[0][:40] in first.replace("\n", " ")
    assert "licensed" in first and "n dominates" in first.replace("\n", " ")
    assert "at the low n" in first.replace("\n", " ")
    for fig in pages:
        assert "licensed review" in all_text(fig)  # the footer on every page
        for ax in fig.axes:
            if ax.get_xlabel():  # every plot names the unit of both axes
                assert "(m" in ax.get_xlabel() and "(m" in ax.get_ylabel()


@pytest.mark.parametrize("suffix", [".pdf", ".png"])
def test_write_report_files(demo, tmp_path, suffix):
    data = report_for(demo, ("XS2 pool", "2026-04-14"), roughness="clean-winding", slope=0.002)
    path = write_report(data, tmp_path / f"xs2{suffix}")
    head = path.read_bytes()[:8]
    assert head.startswith(b"%PDF") if suffix == ".pdf" else head == b"\x89PNG\r\n\x1a\n"
    assert not list(tmp_path.glob("*.part"))
    if suffix == ".pdf":
        assert (
            path.read_bytes().count(b"/Type /Page\n") + path.read_bytes().count(b"/Type /Page ")
            >= 3
        )


def test_write_report_bad_paths(demo, tmp_path):
    data = report_for(demo, ("XS2 pool", "2026-04-14"))
    with pytest.raises(SurveyError, match="pdf or .png"):
        write_report(data, tmp_path / "x.docx")
    with pytest.raises(SurveyError, match="no such folder"):
        write_report(data, tmp_path / "nope" / "x.pdf")


def test_nice_step():
    assert nice_step(1.44) == 0.1  # 1.44 / 25 = 0.058 -> next round step up
    assert nice_step(30.0) == 2.0
    assert nice_step(0.9, rows=10) == 0.1


def test_field_findings_hook(demo):
    visit, stations = demo[("XS1 riffle", "2026-09-22")]
    found = field_findings(visit, stations, 99.91)
    try:
        import stakeline.checks  # noqa: F401
    except ImportError:
        assert found is None  # the report then says the checks were not available
        return
    assert isinstance(found, list)
    for f in found:
        assert set(f) == {"kind", "severity", "station", "message", "suggestion"}


def visit_with(entries):
    """A real in-memory store holding one visit with (station, reading) entered in this order."""
    store = Store.memory()
    site = store.create_site("Report order test")
    section = store.create_section(site["uuid"], "XS-order")
    visit = store.start_visit(section["uuid"], "2026-05-01", line_left=101.0, line_right=101.0)
    for station, reading in entries:
        store.save_station(visit["uuid"], station, reading)
    return store, store.visit(visit["uuid"]), store.stations(visit["uuid"])


def test_a_station_inserted_later_is_no_order_finding_in_the_report():
    # A smooth V; station 3 was skipped and inserted after station 6 (higher seq, lower station).
    # Elevation = line height - reading, so readings are 101 - elevation.
    ground = {0: 100.5, 1: 100.0, 2: 99.5, 3: 99.0, 4: 99.5, 5: 100.0, 6: 100.5}
    entries = [(x, 101.0 - z) for x, z in ground.items() if x != 3] + [(3, 101.0 - ground[3])]
    store, visit, stations = visit_with(entries)
    try:
        by_entry = sorted(stations, key=lambda s: s["seq"])
        assert [s["station"] for s in by_entry][-1] == 3  # the insert is the latest entry
        # In entry order the stations go backwards, which is what the order check catches while
        # typing (review of the points as entered) ...
        from stakeline.checks import review

        typed = review([s["station"] for s in by_entry], [s["elevation"] for s in by_entry])
        assert [f.kind for f in typed] == ["order"]
        # ... but the office report checks the section as surveyed, in station order.
        found = field_findings(visit, stations, None)
        assert found is not None
        assert [f for f in found if f["kind"] == "order"] == []
    finally:
        store.close()


def test_a_face_read_in_reverse_order_is_still_an_order_finding_in_the_report():
    # Left bank face at station 2 read toe first (elevation 98.8), then its top (99.8), although
    # the ground steps down across it from 99.9 to 98.7: stable station order keeps the two
    # readings in the order they were read.
    ground = [(0, 100.0), (1, 99.9), (2, 98.8), (2, 99.8), (3, 98.7), (4, 98.8), (5, 100.0)]
    store, visit, stations = visit_with([(x, 101.0 - z) for x, z in ground])
    try:
        # given in any order (here reversed), the entry number puts the two back as read
        found = field_findings(visit, list(reversed(stations)), None)
        assert [(f["kind"], f["station"]) for f in found if f["kind"] == "order"] == [("order", 2)]
    finally:
        store.close()

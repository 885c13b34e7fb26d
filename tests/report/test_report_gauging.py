"""The report's gauging pages on the demo riffle (real store, real files): the velocity over the
section, the panels with their shares, the measured Q with its ±, the calibrated n with its
roughness rows, the measured rating with the Manning extension dashed and labelled, and the
cautions on every page."""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure
from stakeline.measurements import section_measurements
from stakeline.report import ReportOptions, prepare_report, write_report
from stakeline.report import pages as report_pages
from stakeline.report.gauging_pages import GAUGING_CAUTIONS, write_measured_rating_plot
from stakeline.store import Store


def all_text(fig: Figure) -> str:
    parts = [t.get_text() for t in fig.texts]
    for ax in fig.axes:
        parts += [t.get_text() for t in ax.texts]
        parts += [ax.get_xlabel(), ax.get_ylabel()]
        legend = ax.get_legend()
        if legend is not None:
            parts += [t.get_text() for t in legend.get_texts()]
        for table in ax.tables:
            parts += [c.get_text().get_text() for c in table.get_celld().values()]
    return " ".join(" ".join(parts).split())


@pytest.fixture(scope="module")
def demo():
    store = Store.memory()
    store.load_demo()
    riffle = [v for v in store.visits() if v["section"] == "XS1 riffle"]
    yield store, riffle
    store.close()


def report(store, listed, gauged: bool = True):
    uuid = listed["uuid"]
    extra = {}
    if gauged:
        extra = {"gauging": store.gauging(uuid),
                 "measurements": section_measurements(store, listed["section_uuid"])}  # fmt: skip
    return prepare_report(store.visit(uuid), store.stations(uuid),
                          ReportOptions(roughness="mountain-gravel", slope=0.004), **extra)  # fmt: skip


def test_gauging_pages_follow_the_rating_page(demo):
    store, riffle = demo
    plain = report_pages.draw_pages(report(store, riffle[2], gauged=False))
    gauged = report_pages.draw_pages(report(store, riffle[2]))
    assert len(gauged) == len(plain) + 3  # gauging, panels, measured rating
    titles = [all_text(fig) for fig in gauged[2:5]]
    assert "velocity-area gauging" in titles[0]
    assert "panels and their shares" in titles[1]
    assert "measured stage-discharge rating" in titles[2]


def test_every_gauging_page_carries_the_cautions_and_units(demo):
    store, riffle = demo
    pages = report_pages.draw_pages(report(store, riffle[2]))[2:5]
    for fig in pages:
        text = all_text(fig)
        for caution in GAUGING_CAUTIONS:
            assert " ".join(caution.split())[:60] in text
        assert "licensed" in text and "wade" in text
        for ax in fig.axes:
            if ax.get_xlabel():
                assert "(m" in ax.get_xlabel() and "(m" in ax.get_ylabel()


def test_the_gauging_page_shows_q_its_plus_minus_n_and_its_rows(demo):
    store, riffle = demo
    data = report(store, riffle[2])
    g = data.gauging
    text = all_text(report_pages.draw_pages(data)[2])
    assert f"Q = {g.discharge.discharge:.3f} m³/s" in text
    assert f"± {g.analysis.uncertainty.plus_minus:.3f} m³/s" in text
    assert "interpolated variance estimator" in text
    assert f"S^(1/2) = {g.calibrated.n:.4f} ± {g.calibrated.plus_minus:.4f}" in text
    assert "mountain-gravel" in text and "Table 5-6" in text
    assert f"S = {g.slope.slope:.5f} ± {g.slope.plus_minus:.5f}" in text
    # The velocity in each vertical is drawn over the section (a second axis, in m/s).
    fig = report_pages.draw_pages(data)[2]
    velocity_axis = next(ax for ax in fig.axes if "velocity" in ax.get_ylabel())
    (line,) = [ln for ln in velocity_axis.get_lines() if ln.get_label().startswith("mean")]
    read = [v for v in g.verticals if v["velocity"] is not None]
    assert len([y for y in line.get_ydata() if y == y]) == len(read)


def test_the_panel_table_lists_every_vertical_with_its_share(demo):
    store, riffle = demo
    data = report(store, riffle[2])
    fig = report_pages.draw_pages(data)[3]
    (table,) = [t for ax in fig.axes for t in ax.tables]
    rows = {r for r, _ in table.get_celld()} - {0}
    assert len(rows) == len(data.gauging.discharge.panels())
    shares = [float(table.get_celld()[(r, 5)].get_text().get_text()) for r in sorted(rows)]
    assert sum(shares) == pytest.approx(100.0, abs=0.05 * len(shares))


def test_the_rating_page_draws_the_manning_extension_dashed_and_labelled(demo):
    store, riffle = demo
    data = report(store, riffle[-1])
    fig = report_pages.draw_pages(data)[4]
    ax = next(ax for ax in fig.axes if ax.get_xlabel().startswith("discharge"))
    dashed = [ln for ln in ax.get_lines() if ln.get_linestyle() == "--"]
    assert len(dashed) == 1 and dashed[0].get_label().startswith("Manning extension")
    assert min(dashed[0].get_ydata()) == pytest.approx(data.measured_rating.fit.high)
    text = all_text(fig)
    for m in data.measured_rating.measurements:
        assert f"{m['departure']:+.1f}" in text  # each measurement's departure, in %
    assert "WMO-No. 1044" in text and "extrapolation" in text


def test_files_are_written_with_the_gauging_pages(demo, tmp_path):
    store, riffle = demo
    data = report(store, riffle[0])
    pdf = write_report(data, tmp_path / "xs1.pdf")
    raw = pdf.read_bytes()
    assert raw.count(b"/Type /Page\n") + raw.count(b"/Type /Page ") >= 6
    plot = write_measured_rating_plot(data.measured_rating, "m", "XS1", tmp_path / "r.png")
    assert plot.read_bytes()[:4] == b"\x89PNG"


def test_a_gauging_that_cannot_be_had_says_why(demo):
    store, riffle = demo
    uuid = riffle[0]["uuid"]
    visit = dict(store.visit(uuid), water_levels=[])  # no water level: no depths to gauge at
    data = prepare_report(visit, store.stations(uuid), ReportOptions(),
                          gauging=store.gauging(uuid))  # fmt: skip
    assert data.gauging is None and "no water level" in data.gauging_note
    pages = report_pages.draw_pages(data)
    assert any("no water level" in all_text(fig) for fig in pages)

"""The section-detail (office figures) screen, driven by taps on a real store with the demo survey:
opened from home and from the section screen, a roughness row picked and a slope typed on the
keypad; the discharge shown is Manning's (checked against shapely's clipping and against
stakeline.survey.hydraulics.flow_at), every wetted figure carries its ± band, and the change since the earlier
visit of XS1 is shown."""

from __future__ import annotations

import math

import pytest
from shapely.geometry import LineString, Polygon, box
from stakeline.survey.compare import compare_visits
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import bank_top_splits, flow_at
from stakeline.survey.roughness import SOURCE, roughness

ROW = "clean-winding"
SLOPE = "0.0025"


def ground(service, visit: str):
    """Stations, elevations and codes of a visit, read from the store."""
    rows = [r for r in service.store.stations(visit) if r["elevation"] is not None]
    return (
        [r["station"] for r in rows],
        [r["elevation"] for r in rows],
        [r["code"] or "" for r in rows],
    )


def clipped_area_and_perimeter(stations, elevations, level):
    """Reference: wetted area (ground polygon clipped below the level) and wetted perimeter (the
    ground line's length below the level), with shapely, a general-purpose geometry library."""
    top = max(elevations) + 1.0
    points = list(zip(stations, elevations, strict=True))
    below = box(min(stations) - 1, min(elevations) - 1.0, max(stations) + 1, level)
    area = Polygon(points + [(stations[-1], top), (stations[0], top)]).intersection(below).area
    return area, LineString(points).intersection(below).length


@pytest.fixture
def xs1(ui):
    """The later demo visit of XS1 (it has an earlier visit on the same benchmark)."""
    service = ui.app.service
    visits = [v for v in service.store.visits() if v["section"] == "XS1 riffle"]
    assert len(visits) >= 2
    return visits[-1], visits[-2]


def open_from_home(ui, section: str = "XS1 riffle"):
    ui.go("home")
    home = ui.screen
    rows = {r.title.split("[/b]")[0][3:]: r for r in home.ids.sections.children}
    ui.tap(rows[section].ids.figures)
    assert ui.app.manager.current == "detail"
    screen = ui.screen
    ui.wait(lambda: not screen.running)
    ui.frames(2)
    return screen


def test_figures_from_home_with_bands_and_change(ui, xs1):
    later, earlier = xs1
    screen = open_from_home(ui)
    service = ui.app.service
    assert ui.app.visit_uuid == later["uuid"] and screen.back == "home"
    level = service.water_level(later["uuid"])
    assert screen.ids.level_field.text == f"{level:.3f}"  # the recorded level by default
    figures = screen.figures
    shown = ui.texts()
    assert "licensed engineer" in screen.ids.caution.text
    # Every wetted figure with a ± band (the band is positive: readings are never exact).
    stations, elevations, codes = ground(service, later["uuid"])
    area, perimeter = clipped_area_and_perimeter(stations, elevations, level)
    by_key = {row["key"]: row for row in figures["geometry"]}
    assert set(by_key) == {"area", "wetted_perimeter", "top_width", "hydraulic_radius"}
    assert by_key["area"]["value"] == pytest.approx(area, rel=1e-9)
    assert by_key["wetted_perimeter"]["value"] == pytest.approx(perimeter, rel=1e-9)
    for row in figures["geometry"]:
        assert row["plus_minus"] > 0
        assert f"{row['value']:.3f} ± {row['plus_minus']:.3f} {row['unit']}" in shown
    assert f"{area:.3f} ± " in shown and " m²" in shown
    # Change since the earlier visit: stakeline.survey.compare on the two ground lines from the store.
    before = Section(*ground(service, earlier["uuid"])[:2])
    change = compare_visits(before, Section(stations, elevations), level)
    assert f"Change since the visit of {earlier['date']}" in shown
    assert f"{change['scour_area']:.3f} m²" in shown
    assert f"{change['fill_area']:.3f} m²" in shown
    drop = -change["deepest_drop"]
    assert f"{'+' if drop > 0.0005 else ''}{drop:.3f} m" in shown
    # No discharge until a roughness row and a slope are given; it says what to do.
    assert "flow" not in figures and "Pick a roughness row" in shown
    ui.tap(screen.ids.back)
    assert ui.app.manager.current == "home" and ui.app.visit_uuid == ""


def test_discharge_for_a_roughness_row_and_typed_slope(ui, xs1):
    later, _ = xs1
    screen = open_from_home(ui)
    service = ui.app.service
    chip = next(c for c in screen.ids.chips.children if c.key == ROW)
    ui.tap(chip)
    ui.enter()  # the keypad's enter moves on from the level to the slope
    assert screen.active_field is screen.ids.slope_field
    ui.keypad(SLOPE)
    ui.wait(lambda: not screen.running and "flow" in screen.figures)
    ui.frames(2)
    figures, shown = screen.figures, ui.texts()
    level = float(screen.ids.level_field.text)
    slope, row = float(SLOPE), roughness(ROW)
    stations, elevations, codes = ground(service, later["uuid"])
    splits = bank_top_splits(stations, elevations, codes)
    n = [row.normal] * (len(splits) + 1) if splits else row.normal
    expected = flow_at(Section(stations, elevations), level, n, slope, "m", splits or None)
    flow = {r["key"]: r for r in figures["flow"]}
    assert flow["discharge"]["value"] == pytest.approx(expected.discharge, rel=1e-12)
    assert f"{expected.discharge:.3f} ± " in shown and "m³/s" in shown
    for key in ("velocity", "froude", "shear_stress", "stream_power"):
        assert flow[key]["value"] == pytest.approx(getattr(expected, key), rel=1e-12)
    assert f"{expected.froude:.3f}" in shown and "Froude number (dimensionless)" in shown
    assert " Pa" in shown and " W/m²" in shown and " m/s" in shown
    # Manning's equation in closed form, Q = (1/n)·A·R^(2/3)·S^(1/2) with k = 1 in SI units
    # (Chow 1959, eq. 5-7), on shapely's area and perimeter, below the bank tops.
    area, perimeter = clipped_area_and_perimeter(stations, elevations, level)
    manning = area * (area / perimeter) ** (2 / 3) * math.sqrt(slope) / row.normal
    assert flow["discharge"]["value"] == pytest.approx(manning, rel=1e-9)
    # Q at the low and high n of the row, with the sentence that n dominates.
    low = manning * row.normal / row.minimum
    high = manning * row.normal / row.maximum
    assert figures["n_range"]["discharge_low_n"] == pytest.approx(low, rel=1e-9)
    assert figures["n_range"]["discharge_high_n"] == pytest.approx(high, rel=1e-9)
    assert f"Discharge at low n {row.minimum:g}" in shown and f"{low:.3f} m³/s" in shown
    assert f"Discharge at high n {row.maximum:g}" in shown and f"{high:.3f} m³/s" in shown
    assert "n dominates the uncertainty of discharge" in shown
    assert SOURCE in shown and row.description in shown
    ui.screenshot("detail")
    screen.ids.scroller.scroll_y = 0  # the lower part: bankfull and the change since the last visit
    ui.screenshot("detail-lower")


def test_from_the_section_screen_and_bad_input(ui, xs1):
    later, _ = xs1
    ui.app.visit_uuid = later["uuid"]
    ui.go("section")
    ui.tap(ui.screen.ids.detail)
    screen = ui.screen
    assert ui.app.manager.current == "detail" and screen.back == "section"
    ui.wait(lambda: not screen.running)
    # A level above the right bank is refused with one line naming the problem.
    for _ in range(len(screen.ids.level_field.text)):
        ui.keypad("back")
    ui.keypad("150")
    ui.wait(lambda: not screen.running)
    ui.frames(1)
    assert screen.tone == "flagged" and "above" in screen.message
    assert "flow" not in screen.figures
    # A slope that is not a fraction below 1 is refused at once.
    ui.tap(screen.ids.slope_field)
    ui.keypad("2")
    assert screen.tone == "flagged" and "energy slope" in screen.message
    ui.tap(screen.ids.back)
    assert ui.app.manager.current == "section"


def test_home_offers_figures_only_for_finished_visits(ui):
    service = ui.app.service
    section = service.create_section("Orrin Brook", "XS7 run")
    service.start_visit(section["uuid"], today="2026-11-30")
    ui.go("home")
    rows = {r.title.split("[/b]")[0][3:]: r for r in ui.screen.ids.sections.children}
    assert rows["XS7 run"].figures_visit == ""
    assert rows["XS7 run"].ids.figures.disabled
    assert rows["XS1 riffle"].figures_visit and not rows["XS1 riffle"].ids.figures.disabled


def set_plus_minus(ui, reading: str, station: str) -> None:
    """Choose the reading and station ± on the settings screen by their chip texts, and save."""
    ui.go("settings")
    screen = ui.screen
    chips = {c.text: c for c in screen.walk() if type(c).__name__ == "Chip"}
    ui.tap(chips[reading])
    ui.tap(chips[station])
    ui.tap(screen.ids.save)
    assert screen.tone == "saved", screen.message


def test_crew_plus_minus_from_settings_sets_the_bands(ui, xs1):
    from stakeline.survey.uncertainty import Precision, geometry_bands

    later, _ = xs1
    service = ui.app.service
    stations, elevations, _ = ground(service, later["uuid"])
    areas = {}
    for reading, chip in ((0.002, "±2 mm"), (0.01, "±10 mm")):
        set_plus_minus(ui, chip, "±10 mm (default)")
        screen = open_from_home(ui)
        level = float(screen.ids.level_field.text)
        figures, shown = screen.figures, ui.texts()
        assert figures["precision"] == {"reading": reading, "station": 0.01}
        assert f"one reading ±{reading:g} m, one station ±0.01 m" in shown
        band = {row["key"]: row for row in figures["geometry"]}["area"]["plus_minus"]
        expected = geometry_bands(
            Section(stations, elevations), level, Precision(reading, 0.01), method="linear"
        )["area"]
        assert band == pytest.approx(expected.plus_minus, rel=1e-12)
        areas[reading] = band
    assert areas[0.01] > areas[0.002]
    # First-order propagation (JCGM 100:2008, eq. 10) with k = 2: U² = 4·(Σ(∂A/∂z_i)²·u_z²
    # + station terms), so the two bands differ by 4·Σ(∂A/∂z_i)²·(0.01² - 0.002²) alone.  The
    # sensitivities here come from shapely's clipped area, by central differences.
    h, slopes = 1e-5, []
    for i in range(len(elevations)):
        up, down = list(elevations), list(elevations)
        up[i] += h
        down[i] -= h
        slopes.append(
            (
                clipped_area_and_perimeter(stations, up, level)[0]
                - clipped_area_and_perimeter(stations, down, level)[0]
            )
            / (2 * h)
        )
    reading_terms = sum(s * s for s in slopes)
    assert areas[0.01] ** 2 - areas[0.002] ** 2 == pytest.approx(
        4 * reading_terms * (0.01**2 - 0.002**2), rel=1e-4
    )


def test_the_measured_discharge_calibrated_n_and_rating_as_the_command_line(ui, xs1, capsys):
    """The tablet's office figures of a gauged visit show the measured discharge with its ±,
    the calibrated n with its ± and roughness rows, and the section's measured rating (C, b, e,
    standard error) -- the same numbers as ``stakeline measured-rating --json`` (one analysis,
    :func:`stakeline.analysis.analyse_visit`, behind both)."""
    import json

    from stakeline.app.cli import main

    later, _ = xs1
    screen = open_from_home(ui)
    ui.wait(lambda: screen.gauging)
    ui.frames(2)
    path = ui.app.service.store.path
    assert main(["measured-rating", "--store", path, "--section", "XS1 riffle", "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    own = next(m for m in cli["measurements"] if m["visit"] == later["uuid"])
    shown = ui.texts()
    assert "Measured discharge (velocity-area method, this visit)" in shown
    assert f"{own['discharge']:.3f} ± {own['plus_minus']:.3f} m³/s" in shown
    assert f"{own['n']:.4f} ± {own['n_plus_minus']:.4f}" in shown
    assert "Calibrated Manning's n" in shown and "Roughness rows holding this n:" in shown
    labels = {row["key"]: row["label"] for row in ui.app.service.roughness_rows()}
    assert all(labels[k] in shown for k in screen.gauging["n"]["rows"])
    assert "Measured rating of the section: Q = C (h − e)^b" in shown
    assert f"{cli['coefficient']:.4f}" in shown and f"{cli['exponent']:.3f}" in shown
    assert f"{cli['offset']:.3f} m" in shown
    assert f"{cli['standard_error']:.4f}" in shown
    assert f"{cli['standard_error_percent']:.1f} %" in shown
    assert f"Fitted to {len(cli['measurements'])} gaugings" in shown
    assert "licensed engineering review" in shown
    screen.ids.scroller.scroll_y = 0  # the gauging figures close the list
    ui.frames(2)
    ui.screenshot("detail-gauging")

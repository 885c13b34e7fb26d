"""The velocity step, driven by taps (and a few physical keys) on a real store: a whole gauging
of a V-shaped riffle -- a method chosen, velocities typed on the keypad and on the keyboard,
revolutions and seconds through a meter added once in the meter dialog -- with the measured
discharge growing and each panel's share updating as the midsection method says, the wading
warning shown the moment a deep, fast vertical is read, undo, the note and the history; then
the water-surface slope step, and the gauging's findings on the Checks step."""

from __future__ import annotations

import math

import numpy as np
import pytest

# A V-shaped riffle read from a level line at 100.0 m: station (m) and bed elevation (m).
BED = [(0, 99.5), (1, 99.0), (2, 98.6), (3, 98.1), (4, 98.6), (5, 99.0), (6, 99.5)]
LEVEL = 99.2
A, B = 0.012, 0.648  # the meter's rating v = a + b·N (invented, of the usual size)


@pytest.fixture
def riffle(ui):
    """A visit on a new section with seven readings and a recorded water level (five wet
    stations, 1 to 5 m; 3 m is 1.10 m deep)."""
    service = ui.app.service
    section = service.create_section("Orrin Brook", "XS-V")
    visit = service.start_visit(section["uuid"], today="2026-06-02")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    for station, bed in BED:
        service.save_reading(visit, float(station), f"{100.0 - bed:.3f}")
    service.record_water_level(visit, f"{LEVEL}")
    ui.app.visit_uuid = visit
    return visit


def settle(ui) -> None:
    ui.wait(lambda: ui.app.service.worker.pending == 0)
    ui.frames(3)


def open_velocity(ui):
    ui.go("velocity")
    assert ui.app.manager.current == "velocity"
    settle(ui)
    return ui.screen


def field(screen, point: str, part: str):
    return screen._fields[(point, part)]


def edge(x0, z0, x1, z1):
    """Station where the water surface meets the bed between two readings."""
    return x0 + (x1 - x0) * (z0 - LEVEL) / (z0 - z1)


def midsection(velocities: dict) -> tuple[float, dict]:
    """Midsection method (Turnipseed & Sauer 2010, USGS TM 3-A8; ISO 748):
    q_i = v_i·d_i·(b_{i+1} − b_{i−1})/2 with the water's edges as zero-depth verticals;
    returns Q and each station's percent of it."""
    b = [edge(0, 99.5, 1, 99.0), 1, 2, 3, 4, 5, edge(5, 99.0, 6, 99.5)]
    d = [0, *(LEVEL - z for _, z in BED[1:-1]), 0]
    q = {b[i]: velocities.get(b[i], 0.0) * d[i] * (b[i + 1] - b[i - 1]) / 2 for i in range(1, 6)}
    total = sum(q.values())
    return total, {s: 100 * v / total for s, v in q.items()}


def test_a_whole_gauging_by_taps(ui, riffle):
    screen = open_velocity(ui)
    service = ui.app.service
    assert screen.station == 1.0 and screen.method == "one-point"  # suggested for 0.20 m
    assert "Suggested: 1 point (0.6)" in screen.suggested_text
    assert "licensed engineering review" in screen.ids.caution.text
    assert "Wading safety" in screen.ids.caution.text
    # Station 1: the crew picks two points instead and types them on the keypad.
    chip = next(c for c in screen.ids.methods.children if c.method == "two-point")
    ui.tap(chip)
    assert screen.method == "two-point" and set(screen._fields) == {("v02", "velocity"),
                                                                     ("v08", "velocity")}  # fmt: skip
    ui.keypad("0.35")
    assert screen.tone == "unsaved"
    ui.enter()
    assert screen.active_field is field(screen, "v08", "velocity")  # on to the next point
    first = screen.state["discharge"]
    assert first == 0.0  # a vertical counts once every point is read
    ui.keypad("0.25")
    ui.enter()
    assert screen.station == 2.0  # the vertical is read: on to the next wet station
    grown = [screen.state["discharge"]]
    assert grown[0] > 0
    # Station 2: typed on the laptop's keyboard (digits, point, Enter).
    for ch in "0.6":
        ui.key(ord(ch), ch)
    ui.key(13)
    assert screen.station == 3.0
    grown.append(screen.state["discharge"])
    # Station 3 (1.10 m deep, two points suggested): a rotating meter, added once.
    assert screen.method == "two-point"
    ui.tap(screen.ids.meter)
    popup = ui.dialog("MeterPopup")
    assert popup is not None
    ui.type_text(popup.ids.serial, "R-1")
    ui.type_text(popup.ids.a, f"{A}")
    ui.type_text(popup.ids.b, f"{B}".replace(".", ","))  # a decimal comma counts as a point
    ui.type_text(popup.ids.lowest, "0.03")
    ui.type_text(popup.ids.highest, "3.5")
    ui.tap(popup.ids.add)
    assert popup.message == ""
    ui.wait(lambda: popup.parent is None)
    assert screen.counting and screen.meter_text == "Meter: R-1"
    assert "R-1" in [m["serial"] for m in service.meters()]  # kept on the device
    assert set(screen._fields) == {("v02", "revolutions"), ("v02", "seconds"),
                                   ("v08", "revolutions"), ("v08", "seconds")}  # fmt: skip
    ui.keypad("60")
    ui.enter()  # on to the seconds
    assert screen.active_field is field(screen, "v02", "seconds")
    ui.keypad("40")
    ui.enter()
    assert not screen.wading_text  # one point of two: no mean velocity yet
    ui.keypad("50")
    ui.enter()
    ui.keypad("40")
    ui.enter()
    # Rotating meter: v = a + b·N, N = revolutions / seconds (ISO 748; TM 3-A8); the two-point
    # mean (v0.2 + v0.8)/2.
    v3 = ((A + B * 60 / 40) + (A + B * 50 / 40)) / 2
    # Wading: depth 1.10 m × v3 ≈ 0.99 m²/s reaches about 0.93 m²/s (10 ft²/s; USGS field
    # practice, from memory): shown at once, prominently, above everything else.
    assert 1.1 * v3 >= 0.93
    assert "DO NOT WADE" in screen.wading_text and "station 3 m" in screen.wading_text
    assert screen.ids.wading_panel.height > 0 and screen.ids.wading_panel.opacity == 1
    row3 = next(r for r in screen.rows if r["station"] == 3.0)
    assert row3["state_text"] == "WADING LIMIT"
    grown.append(screen.state["discharge"])
    # Stations 4 and 5 by a meter that shows the velocity: none chosen, typed as read.
    assert screen.station == 4.0
    ui.tap(screen.ids.meter)
    popup = ui.dialog("MeterPopup")
    none = next(c for c in popup.ids.meters.children if c.dump_name == "meter:none")
    ui.tap(none)
    ui.wait(lambda: popup.parent is None)
    assert not screen.counting and screen.meter_text == "Meter: none"
    for value in ("0.6", "0.3"):
        ui.keypad(value)
        ui.enter()
        grown.append(screen.state["discharge"])
    assert grown == sorted(grown) and len(set(grown)) == len(grown)  # Q grows station by station
    expected, shares = midsection({1: 0.30, 2: 0.6, 3: v3, 4: 0.6, 5: 0.3})
    assert screen.state["discharge"] == pytest.approx(expected, rel=1e-12)
    assert screen.state["read"] == screen.state["wet"] == 5
    summary = {r.name: r.value for r in screen.ids.summary_box.children}
    assert summary["Measured discharge so far"].startswith(f"{expected:.3f}")
    assert summary["Wet verticals read"] == "5 of 5"
    for row in screen.rows:  # each panel's share, the ones over 10 % marked
        share = shares[row["station"]]
        assert row["share_text"].startswith(f"{share:.1f} %")
        assert ("over 10" in row["share_text"]) == (share > 10)
    assert any(share > 10 for share in shares.values())
    assert "panel at station 3 m carries" in screen.findings_text
    # The velocities over the section: one bar per vertical read.
    assert sorted(s for s, _ in screen.marks) == [1.0, 2.0, 3.0, 4.0, 5.0]
    np.testing.assert_allclose(sorted(screen.ids.view._velocity_x), [1, 2, 3, 4, 5])
    ui.screenshot("velocity")
    # Undo takes the last velocity back; the discharge falls again.
    ui.tap(screen.ids.undo)
    assert screen.station == 5.0 and "Undone" in screen.message
    assert screen.state["discharge"] == pytest.approx(grown[-2], rel=1e-12)
    # A note and an angle for the vertical at 4; then its history.
    ui.tap(screen.ids.previous)
    assert screen.station == 4.0
    ui.tap(screen.ids.note)
    note = ui.dialog("NotePopup")
    ui.type_text(note.ids.text, "boulder upstream")
    ui.tap(note.ids.keep)
    ui.wait(lambda: note.parent is None)
    ui.tap(screen.ids.angle_field)
    ui.keypad("20")
    ui.enter()
    vertical = screen._vertical(4.0)
    assert vertical["note"] == "boulder upstream" and vertical["angle"] == 20.0
    assert vertical["velocity"] == pytest.approx(0.6 * math.cos(math.radians(20)))  # cosine
    ui.tap(screen.ids.history)
    history = ui.dialog("HistoryPopup")
    assert len(history.lines) == 3 and "0.6 depth 0.600 m/s" in history.lines[0]
    history.dismiss(animation=False)


def test_a_reversed_velocity_and_the_keyboard_sign(ui, riffle):
    screen = open_velocity(ui)
    ui.keypad("0.2")
    ui.keypad("sign")  # an eddy: the flow runs upstream at the left edge
    ui.enter()
    vertical = screen._vertical(1.0)
    assert vertical["velocity"] == pytest.approx(-0.2)
    assert "negative velocity" in screen.findings_text
    assert "LOOK AT" in screen.findings_text


def test_the_water_surface_slope_step(ui, riffle):
    screen = open_velocity(ui)
    ui.tap(screen.ids.surface)
    surface = ui.screen
    assert ui.app.manager.current == "surface" and surface.point_count == 0
    typed = [("30", True, "99.305"), ("10", True, "99.236"), ("12", False, "99.158"),
             ("31", False, "99.094")]  # fmt: skip
    for distance, upstream, elevation in typed:
        ui.keypad(distance)
        if upstream:
            ui.keypad("sign")
        ui.enter()  # on to the elevation
        assert surface.active_field is surface.ids.elevation_field
        ui.keypad(elevation)
        ui.enter()
        assert surface.tone == "saved"
    x = np.array([-30.0, -10.0, 12.0, 31.0])
    z = np.array([99.305, 99.236, 99.158, 99.094])
    # Least-squares line through (distance, elevation) with its standard error (REFERENCES.md:
    # water-surface slope from levelled points); S = −gradient, ± = 2 standard errors, the
    # levelling's 5 mm as the least.
    gradient, intercept = np.polyfit(x, z, 1)
    residuals = z - (intercept + gradient * x)
    spread = (x - x.mean()) @ (x - x.mean())
    error = max(math.sqrt(residuals @ residuals / (x.size - 2) / spread), 0.005 / math.sqrt(spread))
    assert surface.slope_text == f"{-gradient:.5f} ± {2 * error:.5f}"
    shown = {r.name: r.value for r in surface.ids.slope_box.children}
    assert shown["Water-surface slope"] == surface.slope_text and shown["Points levelled"] == "4"
    assert "+31.0 m (downstream): 99.094 m" in surface.points_text
    ui.screenshot("surface")
    ui.tap(surface.ids.undo)
    assert surface.point_count == 3 and "+31.0" not in surface.points_text
    ui.tap(surface.ids.back)
    assert ui.app.manager.current == "velocity"


def test_gauging_findings_on_checks_go_to_the_velocity_step(ui, riffle):
    open_velocity(ui)
    ui.keypad("0.3")
    ui.enter()  # station 1 read; 2 to 5 not
    ui.go("checks")
    checks = ui.screen
    ui.wait(lambda: not checks.running)
    ui.frames(2)
    rows = [r for r in checks.ids.findings.children if r.step == "velocity"]
    unread = sorted(r.station for r in rows if "unmeasured" in r.heading)
    assert unread == [2.0, 3.0, 4.0, 5.0]
    row = next(r for r in rows if r.station == 3.0 and "unmeasured" in r.heading)
    assert "at 3 m" in row.heading and "read the velocity there" in row.heading_text
    ui.tap(row)
    assert ui.app.manager.current == "velocity"
    settle(ui)
    assert ui.screen.station == 3.0
    ui.go("checks")
    ui.wait(lambda: not checks.running)
    checks.ids.reason.text = "bridge closed: gauging left unfinished"
    ui.tap(checks.ids.finish)
    popup = ui.dialog("ConfirmPopup")
    assert "Velocities read: 1 of 5 wet stations" in popup.summary
    popup.dismiss(animation=False)


@pytest.mark.parametrize("step", ["readings", "section", "velocity"])
def test_every_drawing_fills_the_water(ui, riffle, step):
    """The drawing asks the service for the water's edge: each step's section shows the water
    between its edges at 0.6 m and 5.4 m (interpolated between the readings)."""
    ui.go(step)
    settle(ui)
    view = ui.screen.ids.view
    columns = np.asarray(view._water.vertices, dtype=float).reshape(-1, 2)[:, 0]
    assert columns.size > 0
    left_edge, right_edge = edge(0, 99.5, 1, 99.0), edge(5, 99.0, 6, 99.5)
    shown = sorted(view.to_screen(np.array([left_edge, right_edge]), LEVEL)[0])
    assert any(abs(c - shown[0]) < 0.01 for c in columns)
    assert any(abs(c - shown[1]) < 0.01 for c in columns)

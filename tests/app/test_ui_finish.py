"""Finishing a visit: a planned station without a reading is a MUST FIX finding listed by
station (a written reason overrides it), and finishing shows what will be sent -- stations read
of those planned, the findings, the package's file name -- and asks once."""

from __future__ import annotations

import os

import pytest

PLAN = [round(i * 0.5, 6) for i in range(21)]  # 0 to 10 m every 0.5 m
READ = [0.30, 0.62, 0.95, 1.21, 1.40, 1.52, 1.60]  # 0 to 3 m: the thalweg beyond is never read


@pytest.fixture
def seven_of_21(ui):
    """A visit with 21 planned stations of which only the first 7 are read."""
    service = ui.app.service
    section = next(s for s in service.overview() if s["section"] == "XS1 riffle")
    visit = service.start_visit(section["section_uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0, stake_distance=10.0)
    service.save_plan(visit, PLAN)
    for station, reading in zip(PLAN, READ, strict=False):
        service.save_reading(visit, station, str(reading))
    ui.app.visit_uuid = visit
    return visit


def open_checks(ui):
    ui.go("checks")
    screen = ui.screen
    ui.wait(lambda: not screen.running)
    ui.frames(2)
    return screen


def test_unread_planned_stations_must_be_fixed_or_explained(ui, seven_of_21):
    screen = open_checks(ui)
    unread = [f for f in screen.findings if f["kind"] == "unread"]
    assert [f["station"] for f in unread] == PLAN[7:]  # listed by station
    assert all(f["severity"] == "block" for f in unread)
    assert screen.blocking >= 14 and screen.summary.startswith(f"{screen.blocking} must fix")
    headings = [w.heading for w in screen.ids.findings.children]
    assert "MUST FIX · unread at 3.5 m" in headings
    ui.tap(screen.ids.finish)  # no reason: refused, and the reason box gets the keyboard
    assert ui.dialog() is None and screen.tone == "flagged" and "blocking" in screen.message
    assert screen.ids.reason.focus
    assert not ui.app.service.visit(seven_of_21)["finished"]


def test_finishing_shows_a_summary_and_asks_once(ui, seven_of_21):
    service = ui.app.service
    screen = open_checks(ui)
    blocking = screen.blocking
    ui.type_text(screen.ids.reason, "thalweg under ice; the rest read on the next visit")
    ui.tap(screen.ids.finish)
    popup = ui.dialog("ConfirmPopup")
    assert popup is not None
    summary = popup.summary
    assert "Stations read: 7 of 21 planned stations" in summary
    assert f"Must fix: {blocking}" in summary
    package = summary.split("Package: [b]")[1].split("[/b]")[0]
    assert package.startswith("2026-11-30_xs1-riffle_")
    ui.tap(popup.ids.back)  # changed their mind: nothing finished
    ui.wait(lambda: ui.dialog() is None)
    assert not service.visit(seven_of_21)["finished"]
    ui.tap(screen.ids.finish)
    ui.confirm()
    ui.wait(lambda: screen.package_path != "" or "could not" in screen.message)
    assert os.path.basename(screen.package_path) == package
    assert service.visit(seven_of_21)["finished"]
    overridden = {(o["kind"], o["station"]) for o in service.store.overrides(seven_of_21)}
    assert {("unread", s) for s in PLAN[7:]} <= overridden

"""The gauging service the screens will use (headless: no Kivy): the live velocity step, meters,
water-surface points, the finishing review, and the office figures of a gauging."""

from __future__ import annotations

import math

import numpy as np
import pytest
from stakeline.app.service import FieldService
from stakeline.app.service.gauging import GaugingService
from stakeline.app.service.util import ServiceError
from stakeline.errors import SurveyError

# A V-shaped riffle read from a level line at 100.0 m: station (m) and bed elevation (m).
BED = [(0, 99.5), (1, 99.0), (2, 98.6), (3, 98.1), (4, 98.6), (5, 99.0), (6, 99.5)]
LEVEL = 99.2


class Service(FieldService, GaugingService):
    """The field service with the gauging mixin, as the screens round will wire it."""


@pytest.fixture
def service(tmp_path):
    from stakeline.store import Store

    s = Service(Store.open(tmp_path / "device.sqlite", device_id="tablet-S"))
    yield s
    s.close()


@pytest.fixture
def visit(service):
    section = service.create_section("Orrin Brook", "XS-V")
    uuid = service.start_visit(section["uuid"], today="2026-06-02")
    service.save_stakes(uuid, line_left=100.0, line_right=100.0)
    for station, bed in BED:
        service.save_reading(uuid, float(station), f"{100.0 - bed:.3f}")
    service.record_water_level(uuid, f"{LEVEL}")
    return uuid


def _edge(x0, z0, x1, z1):
    return x0 + (x1 - x0) * (z0 - LEVEL) / (z0 - z1)


def test_wet_verticals_with_depths_and_the_suggested_method(service, visit):
    state = service.gauging_state(visit)
    stations = [v["station"] for v in state["verticals"]]
    left, right = _edge(0, 99.5, 1, 99.0), _edge(5, 99.0, 6, 99.5)
    np.testing.assert_allclose(stations, [left, 1, 2, 3, 4, 5, right])
    depths = {v["station"]: v["depth"] for v in state["verticals"]}
    for station, bed in BED[1:-1]:
        assert depths[station] == pytest.approx(LEVEL - bed)
    # USGS TM 3-A8 (Turnipseed & Sauer 2010; from memory): one point at 0.6 depth below about
    # 0.75 m, two points (0.2 and 0.8) deeper.
    suggested = {v["station"]: v["suggested_method"] for v in state["verticals"] if v["wet"]}
    assert next(v for v in state["verticals"] if v["station"] == 3)["needed"] == ["v02", "v08"]
    assert suggested == {1: "one-point", 2: "one-point", 3: "two-point", 4: "one-point",
                         5: "one-point"}  # fmt: skip
    assert state["discharge"] == 0 and state["read"] == 0 and state["wet"] == 5
    assert state["next_station"] == 1 and state["blocking"] == 5  # every wet vertical unread
    assert "licensed engineering review" in state["caution"]


def test_the_discharge_grows_station_by_station_as_the_midsection_method_says(service, visit):
    velocities = {1: 0.3, 2: 0.6, 4: 0.6, 5: 0.3}
    seen = []
    for station, v in velocities.items():
        state = service.save_velocity_point(visit, station, "v06", f"{v}".replace(".", ","))
        seen.append(state["discharge"])
    service.save_velocity_point(visit, 3, "v02", "1.0")
    state = service.save_velocity_point(visit, 3, "v08", "0.8")
    seen.append(state["discharge"])
    assert seen == sorted(seen) and state["complete"] and state["next_station"] is None
    # Midsection (Turnipseed & Sauer 2010, USGS TM 3-A8; ISO 748):
    # q_i = v_i·d_i·(b_{i+1} − b_{i−1})/2, the water's edges verticals of zero depth;
    # two-point mean (v0.2 + v0.8)/2.
    b = [_edge(0, 99.5, 1, 99.0), 1, 2, 3, 4, 5, _edge(5, 99.0, 6, 99.5)]
    d = [0, *(LEVEL - z for _, z in BED[1:-1]), 0]
    v = [0, 0.3, 0.6, (1.0 + 0.8) / 2, 0.6, 0.3, 0]
    q = [v[i] * d[i] * (b[i + 1] - b[i - 1]) / 2 for i in range(1, 6)]
    assert state["discharge"] == pytest.approx(sum(q), rel=1e-12)
    shares = {p["station"]: p["percent"] for p in state["panels"]}
    assert shares[3] == pytest.approx(100 * q[2] / sum(q), rel=1e-12)
    by_station = {row["station"]: row for row in state["verticals"]}
    assert by_station[3]["percent"] == shares[3] and by_station[3]["read"] == "complete"
    area = sum(d[i] * (b[i + 1] - b[i - 1]) / 2 for i in range(1, 6))
    assert state["mean_velocity"] == pytest.approx(sum(q) / area, rel=1e-12)
    # The deep vertical carries over 10 %: a share warning (USGS practice: none over 10 %).
    assert any(f["kind"] == "share" and f["station"] == 3 for f in state["findings"])


def test_the_wading_warning_is_live(service, visit):
    service.save_velocity_point(visit, 3, "v02", "1.0", method="two-point")
    state = service.save_velocity_point(visit, 3, "v08", "0.8")
    # depth 1.1 m × velocity 0.9 m/s = 0.99 m²/s reaches about 0.93 m²/s (10 ft²/s; USGS field
    # practice, from memory): shown at once, on the vertical too.
    (wading,) = state["wading"]
    assert wading["severity"] == "warn" and wading["station"] == 3
    assert next(v for v in state["verticals"] if v["station"] == 3)["wading"] == wading


def test_revolutions_through_the_meter_typed_once(service, visit):
    meter = service.add_meter("R-1", "rotating", "0,012", "0.648", lowest_text="0.03",
                              highest_text="3.5")  # fmt: skip
    assert [m["serial"] for m in service.meters()] == ["R-1"]
    state = service.save_velocity_point(visit, 2, "v06", revolutions_text="37",
                                        seconds_text="40", meter_uuid=meter["uuid"])  # fmt: skip
    row = next(v for v in state["verticals"] if v["station"] == 2)
    # Rotating-element meter: v = a + b·N, N = revolutions / seconds (ISO 748; TM 3-A8).
    assert row["mean_velocity"] == pytest.approx(0.012 + 0.648 * 37 / 40)
    assert row["points"]["v06"]["revolutions"] == 37 and row["meter"] == "R-1"
    # The next count uses the same meter without naming it again.
    state = service.save_velocity_point(visit, 4, "v06", revolutions_text="30", seconds_text="40")
    assert next(v for v in state["verticals"] if v["station"] == 4)["meter"] == "R-1"
    assert meter["unit"] == "m"  # the device's unit
    other = service.add_meter("R-9", "rotating", "0.01", "0.7")
    service.save_velocity_point(visit, 3, "v02", revolutions_text="50", seconds_text="40",
                                method="two-point")  # fmt: skip
    with pytest.raises(ServiceError, match="one meter"):
        service.save_velocity_point(visit, 3, "v08", revolutions_text="30", seconds_text="40",
                                    meter_uuid=other["uuid"])  # fmt: skip
    with pytest.raises(SurveyError, match="b must be positive"):
        service.add_meter("R-2", "rotating", "0.01", "0")


def test_method_angle_rod_depth_undo_and_history(service, visit):
    service.save_velocity_point(visit, 3, "v02", "1.0", method="two-point")
    with pytest.raises(ServiceError, match="does not read v06"):
        service.save_velocity_point(visit, 3, "v06", "0.9")
    state = service.save_velocity_point(visit, 3, "v06", "0.9", method="three-point")
    row = next(v for v in state["verticals"] if v["station"] == 3)
    assert row["method"] == "three-point" and row["read"] == "partial"  # v08 still to read
    state = service.save_vertical(visit, 3, angle_text="20", depth_text="1,15", note="rock")
    row = next(v for v in state["verticals"] if v["station"] == 3)
    assert (row["angle"], row["depth"], row["depth_source"]) == (20.0, 1.15, "rod")
    state = service.save_velocity_point(visit, 3, "v08", "0.8")
    row = next(v for v in state["verticals"] if v["station"] == 3)
    mean = ((1.0 + 0.8) / 2 + 0.9) / 2  # three-point mean (TM 3-A8; ISO 748)
    assert row["mean_velocity"] == pytest.approx(mean)
    assert row["velocity"] == pytest.approx(mean * math.cos(math.radians(20)))  # cosine
    undone = service.undo_velocity(visit)
    assert undone["undone"]["action"] == "correct"
    assert next(v for v in undone["verticals"] if v["station"] == 3)["read"] == "partial"
    assert [h["action"] for h in service.vertical_history(visit, 3)] == ["add", "correct",
                                                                         "correct", "correct"]  # fmt: skip
    state = service.remove_vertical(visit, 3)
    assert next(v for v in state["verticals"] if v["station"] == 3)["read"] == "none"


def test_water_surface_slope_with_its_plus_minus(service, visit):
    typed = [("-30", "99.305"), ("-10", "99.236"), ("12", "99.158"), ("31", "99.094")]
    assert service.water_surface(visit)["slope"] is None
    for distance, elevation in typed:
        shown = service.add_water_surface_point(visit, distance, elevation.replace(".", ","))
    x = np.array([float(d) for d, _ in typed])
    z = np.array([float(e) for _, e in typed])
    # Least-squares line through (distance, elevation) with its standard error (REFERENCES.md:
    # water-surface slope from levelled points); S = −gradient.
    gradient, intercept = np.polyfit(x, z, 1)
    residuals = z - (intercept + gradient * x)
    error = math.sqrt(residuals @ residuals / (x.size - 2) / ((x - x.mean()) @ (x - x.mean())))
    floor = 0.005 / math.sqrt((x - x.mean()) @ (x - x.mean()))  # levelling precision, 5 mm
    assert shown["slope"]["slope"] == pytest.approx(-gradient, rel=1e-9)
    assert shown["slope"]["standard_error"] == pytest.approx(max(error, floor), rel=1e-9)
    assert shown["slope"]["plus_minus"] == pytest.approx(2 * max(error, floor), rel=1e-9)
    again = service.undo_water_surface_point(visit)
    assert len(again["points"]) == 3 and again["undone"]["distance"] == 31.0


def test_finishing_checks_the_gauging_like_the_readings(service, visit):
    assert not [f for f in service.review(visit) if f["kind"] == "unmeasured"]  # no gauging yet
    service.save_velocity_point(visit, 2, "v06", "0.6")
    findings = service.review(visit)
    unmeasured = [f for f in findings if f["kind"] == "unmeasured"]
    assert {f["station"] for f in unmeasured} == {1.0, 3.0, 4.0, 5.0}
    assert all(f["severity"] == "block" for f in unmeasured)
    ranks = [("block", "warn", "note").index(f["severity"]) for f in findings]
    assert ranks == sorted(ranks)  # most serious first
    with pytest.raises(ServiceError, match="blocking"):
        service.finish(visit, findings)
    finished = service.finish(visit, findings, reason="bridge closed: gauging left unfinished")
    assert finished["finished"]
    kinds = {o["kind"] for o in service.store.overrides(visit)}
    assert "unmeasured" in kinds


def test_nothing_to_gauge_says_why(service):
    section = service.create_section("Orrin Brook", "XS-dry")
    uuid = service.start_visit(section["uuid"], today="2026-06-03")
    assert "two stations" in service.gauging_state(uuid)["error"]
    service.save_stakes(uuid, line_left=100.0, line_right=100.0)
    for station, bed in BED:
        service.save_reading(uuid, float(station), f"{100.0 - bed:.3f}")
    assert "water level" in service.gauging_state(uuid)["error"]
    with pytest.raises(ServiceError, match="velocity v06 at station 2 'abc' is not a number"):
        service.save_velocity_point(uuid, 2, "v06", "abc")


def test_office_figures_of_the_demo_gauging(tmp_path):
    from stakeline.analysis import AnalysisOptions, analyse_visit
    from stakeline.measurements import section_measurements
    from stakeline.store import Store

    with Store.open(tmp_path / "demo.sqlite") as store:
        store.load_demo()
        service = Service(store)
        riffle = [v for v in store.visits() if v["section"] == "XS1 riffle"]
        uuid = riffle[-1]["uuid"]
        shown = service.gauging_figures(uuid)
        result = analyse_visit(store.visit(uuid), store.stations(uuid), AnalysisOptions(),
                               gauging=store.gauging(uuid),
                               measurements=section_measurements(store, riffle[0]["section_uuid"]))  # fmt: skip
    g = result.gauging
    assert shown["discharge"]["value"] == g.discharge.discharge
    assert shown["discharge"]["plus_minus"] == g.analysis.uncertainty.plus_minus
    assert shown["n"]["value"] == g.calibrated.n and shown["n"]["rows"] == list(g.calibrated.rows)
    assert shown["rating"]["coefficient"] == result.measured_rating.fit.coefficient
    assert len(shown["rating"]["measurements"]) == 5

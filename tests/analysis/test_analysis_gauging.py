"""The office analysis of gauged visits, checked against published methods recomputed here:
the measured discharge against a hand midsection computation on the demo's own JSON, the
rating fit against a log-log least squares, the calibrated n and the Manning extension against
Manning's equation on the section's water polygon (shapely as the reference), and Ponce's
rectangular channel gauged end to end through the store."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import shapely
from stakeline.analysis import AnalysisOptions, analyse_visit
from stakeline.measurements import section_measurements, visit_measurement
from stakeline.store import DEMO_PATH, Store

DEMO = json.loads(DEMO_PATH.read_text(encoding="utf-8"))
RIFFLE = DEMO["sections"][0]
DATES = [v["date"] for v in RIFFLE["visits"]]


@pytest.fixture(scope="module")
def demo():
    store = Store.memory()
    store.load_demo()
    visits = {v["date"]: v["uuid"] for v in store.visits() if v["section"] == "XS1 riffle"}
    yield store, visits
    store.close()


def analysed(store, uuid, **options):
    section = store.visit(uuid)["section_uuid"]
    return analyse_visit(store.visit(uuid), store.stations(uuid), AnalysisOptions(**options),
                         gauging=store.gauging(uuid),
                         measurements=section_measurements(store, section))  # fmt: skip


def hand_midsection(spec: dict) -> float:
    """Q of a demo visit computed from its JSON alone: bed = line − reading; stage = mean of the
    water levels; verticals = the water's edges (zero depth) and every station read between
    them; q_i = v_i·d_i·(b_{i+1} − b_{i−1})/2 (midsection: Turnipseed & Sauer 2010, USGS TM
    3-A8; ISO 748); v from the rotating meter's rating v = a + b·N; cos of the flow angle."""
    stage = float(np.mean([w["elevation"] for w in spec["water_levels"]]))
    ground = sorted((p["station"], spec["line_left"] - p["reading"]) for p in spec["stations"])
    x = np.array([g[0] for g in ground])
    z = np.array([g[1] for g in ground])
    wet = np.flatnonzero(z < stage)
    i, j = wet[0], wet[-1]
    left = x[i - 1] + (x[i] - x[i - 1]) * (z[i - 1] - stage) / (z[i - 1] - z[i])
    right = x[j] + (x[j + 1] - x[j]) * (stage - z[j]) / (z[j + 1] - z[j])
    meters = {m["serial"]: m for m in DEMO["meters"]}
    gauging = spec["gauging"]
    b, d, v = [left], [0.0], [0.0]
    for vertical in sorted(gauging["verticals"], key=lambda r: r["station"]):
        s = vertical["station"]
        depth = vertical.get("depth") or stage - float(np.interp(s, x, z))
        speeds = []
        for reading in vertical["points"].values():
            if "velocity" in reading:
                speeds.append(reading["velocity"])
            else:
                m = meters[gauging["meter"]]
                speeds.append(m["a"] + m["b"] * reading["revolutions"] / reading["seconds"])
        mean = sum(speeds) / len(speeds)  # one point, or (v0.2 + v0.8)/2
        b.append(s)
        d.append(depth)
        v.append(mean * math.cos(math.radians(vertical.get("angle") or 0.0)))
    b, d, v = [*b, right], [*d, 0.0], [*v, 0.0]
    return sum(v[k] * d[k] * (b[k + 1] - b[k - 1]) / 2 for k in range(1, len(b) - 1))


@pytest.mark.parametrize("date", DATES)
def test_measured_discharge_is_the_hand_midsection_computation(demo, date):
    store, visits = demo
    spec = next(v for v in RIFFLE["visits"] if v["date"] == date)
    result = analysed(store, visits[date])
    g = result.gauging
    assert g.discharge.complete
    assert g.discharge.discharge == pytest.approx(hand_midsection(spec), rel=1e-9)
    u = g.analysis.uncertainty
    assert u.estimable and 0 < u.expanded < 0.1  # a few percent, as the IVE gives for 25+ verticals


def water_polygon(store, uuid: str, stage: float):
    """The water below ``stage`` over the visit's ground, as a shapely polygon (the reference),
    and its wetted perimeter: the length of the ground line under water."""
    ground = [(s["station"], s["elevation"]) for s in store.stations(uuid)]
    below = shapely.Polygon([(ground[0][0], stage + 10), *ground, (ground[-1][0], stage + 10)])
    water = below.intersection(shapely.box(ground[0][0], -1e6, ground[-1][0], stage))
    line = shapely.LineString(ground).intersection(shapely.box(-1e6, -1e6, 1e6, stage))
    return water.area, line.length


@pytest.mark.parametrize("date", DATES)
def test_calibrated_n_is_mannings_equation_solved_for_n(demo, date):
    store, visits = demo
    g = analysed(store, visits[date]).gauging
    area, perimeter = water_polygon(store, visits[date], g.stage)
    # n = (k/Q)·A·R^(2/3)·S^(1/2), k = 1 in SI (Chow 1959, Manning's equation solved for n).
    n = (
        1.0
        / g.discharge.discharge
        * area
        * (area / perimeter) ** (2 / 3)
        * math.sqrt(g.slope.slope)
    )
    assert g.calibrated.n == pytest.approx(n, rel=1e-6)
    # Its ± combines u(Q)/Q, u(S)/2S and the section's part (first order, JCGM 100:2008).
    parts = g.calibrated.parts
    assert parts["discharge"] == pytest.approx(g.analysis.uncertainty.relative)
    assert parts["slope"] == pytest.approx(g.slope.standard_error / (2 * g.slope.slope))
    # The demo riffle is a gravel bed: its n lies in the mountain-stream rows (Chow 1959, 5-6).
    assert "mountain-gravel" in g.calibrated.rows_in_band


def test_slope_is_the_least_squares_line_through_the_points(demo):
    store, visits = demo
    spec = RIFFLE["visits"][0]
    g = analysed(store, visits[spec["date"]]).gauging
    x = [p["distance"] for p in spec["gauging"]["water_surface"]]
    z = [p["elevation"] for p in spec["gauging"]["water_surface"]]
    gradient = np.polyfit(x, z, 1)[0]  # least squares (REFERENCES.md, water-surface slope)
    assert g.slope.slope == pytest.approx(-gradient, rel=1e-9) and g.slope.spans_section


def test_rating_fit_is_a_log_log_least_squares_over_the_gauged_visits(demo):
    store, visits = demo
    latest = visits[DATES[-1]]
    result = analysed(store, latest)
    fit = result.measured_rating.fit
    h = np.array([m["stage"] for m in result.measured_rating.measurements])
    q = np.array([m["discharge"] for m in result.measured_rating.measurements])
    assert sorted(h) == sorted(
        visit_measurement(store.visit(u), store.stations(u), store.gauging(u))["stage"]
        for u in visits.values()
    )
    # Q = C (h − e)^b by least squares on ln Q against ln(h − e), e fixed at the section's
    # lowest point (WMO 2010, Manual on Stream Gauging, WMO-No. 1044, Vol. II; ISO 18320).
    e = min(s["elevation"] for s in store.stations(latest))
    b, ln_c = np.polyfit(np.log(h - e), np.log(q), 1)
    assert fit.offset == pytest.approx(e) and result.measured_rating.offset_source.startswith("the")
    assert fit.coefficient == pytest.approx(math.exp(ln_c), rel=1e-9)
    assert fit.exponent == pytest.approx(b, rel=1e-9)
    qc = math.exp(ln_c) * (h - e) ** b
    residuals = np.log(q) - np.log(qc)
    assert fit.standard_error == pytest.approx(math.sqrt(residuals @ residuals / (h.size - 2)))
    departures = {m["stage"]: m["departure"] for m in result.measured_rating.measurements}
    for stage, discharge, computed in zip(h, q, qc, strict=True):
        assert departures[stage] == pytest.approx(100 * (discharge - computed) / computed)
    assert fit.standard_error_percent < 10 and not fit.poorly_determined  # a plausible demo


def test_manning_extension_above_the_highest_measurement(demo):
    store, visits = demo
    latest = visits[DATES[-1]]
    rating = analysed(store, latest).measured_rating
    extension = rating.extension
    top = max(m["stage"] for m in rating.measurements)
    assert extension["from_stage"] == pytest.approx(top)
    highest = max(rating.measurements, key=lambda m: m["stage"])
    assert extension["n"] == highest["n"] and extension["date"] == highest["date"]
    curve = rating.curve
    above = [i for i, s in enumerate(curve.source) if s == "manning"]
    assert above and all(curve.stages[i] > top for i in above)
    for i in above[:: max(1, len(above) // 4)]:
        area, perimeter = water_polygon(store, latest, curve.stages[i])
        manning = (
            (1 / extension["n"])
            * area
            * (area / perimeter) ** (2 / 3)
            * math.sqrt(extension["slope"])
        )  # Manning's equation, SI (Chow 1959)
        assert curve.discharges[i] == pytest.approx(manning, rel=1e-6)
    below = [i for i, s in enumerate(curve.source) if s != "manning"]
    assert all(curve.discharges[i] == pytest.approx(rating.fit.discharge(curve.stages[i]))
               for i in below)  # fmt: skip


def test_fitted_offset_and_a_given_one(demo):
    store, visits = demo
    latest = visits[DATES[-1]]
    fitted = analysed(store, latest, fit_offset=True).measured_rating
    assert fitted.fit.offset_fitted and fitted.offset_source == "fitted"
    given = analysed(store, latest, rating_offset=99.40).measured_rating
    assert given.fit.offset == 99.40 and given.offset_source == "given"
    refused = analysed(store, latest, rating_offset=99.9)
    assert refused.measured_rating is None and "not above e" in refused.measured_rating_note


def test_ponce_rectangular_channel_gauged_through_the_store():
    # Ponce, V. M., SDSU CIVE 530, Midterm 1 Problem 4 (Fall 2008): rectangle b = 6 m,
    # y = 1.6 m, n = 0.015, S = 0.0025 -> V = 3.428 m/s, Q = 32.91 m³/s.  Gauged: a uniform
    # 3.428 m/s at every vertical, walls read as vertical faces, the water surface levelled
    # with that slope; the analysis must give back Q = V·b·y and n = 0.015.
    store = Store.memory()
    site = store.create_site("Flume")
    section = store.create_section(site["uuid"], "rectangle")
    visit = store.start_visit(section["uuid"], "2026-07-01", line_left=103.0, line_right=103.0)
    uuid = visit["uuid"]
    for station, reading in [(0, 0.0), (0, 3.0), (6, 3.0), (6, 0.0)]:
        store.save_station(uuid, float(station), reading)
    store.add_water_level(uuid, 101.6)
    for station in np.linspace(0, 6, 25):
        store.save_velocity(uuid, float(station), "one-point", {"v06": {"velocity": 3.428}})
    for distance in (-20.0, 20.0):
        store.add_water_surface_point(uuid, distance, 101.6 - 0.0025 * distance)
    g = analyse_visit(store.visit(uuid), store.stations(uuid), gauging=store.gauging(uuid)).gauging
    assert g.discharge.discharge == pytest.approx(3.428 * 6 * 1.6, rel=1e-12)
    assert g.discharge.discharge == pytest.approx(32.91, rel=5e-4)  # Ponce's Q, 4 figures
    assert g.slope.slope == pytest.approx(0.0025, rel=1e-9)
    assert g.calibrated.n == pytest.approx(0.015, rel=5e-4)
    store.close()

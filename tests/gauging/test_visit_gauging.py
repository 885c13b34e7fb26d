"""Tests of stakeline.gauging.visit (a visit's gauging from its records) and
stakeline.gauging.section_rating (the rating over a section's gaugings)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from stakeline.gauging import GaugingError, measured_rating, visit_gauging
from stakeline.survey.geometry import Section

# A V-shaped bed (m): water level 99.2 gives verticals at the edges 0.6 and 5.4 and 1..5.
V = Section([0, 1, 2, 3, 4, 5, 6], [99.5, 99.0, 98.6, 98.1, 98.6, 99.0, 99.5])
LEVEL = 99.2


def read(station, v, **extra):
    return {"station": station, "method": "one-point", "points": {"v06": {"velocity": v}},
            **extra}  # fmt: skip


def test_a_velocity_between_stations_adds_a_vertical_at_the_interpolated_depth():
    g = visit_gauging(V, LEVEL, {"verticals": [read(2.5, 0.7)]})
    row = next(r for r in g.verticals if r["station"] == 2.5)
    # Depth between surveyed stations: the bed taken straight between them (as the section).
    assert row["depth"] == pytest.approx(LEVEL - (98.6 + 98.1) / 2)
    assert row["observation"] is None and row["mean_velocity"] == 0.7  # no uuid in this record
    assert [r["station"] for r in g.verticals] == sorted(r["station"] for r in g.verticals)


def test_rod_depth_overrides_the_section_and_the_angle_reduces_the_velocity():
    g = visit_gauging(V, LEVEL, {"verticals": [read(3, 1.0, depth=1.2, angle=30.0)]})
    row = next(r for r in g.verticals if r["station"] == 3)
    assert (row["depth"], row["depth_source"]) == (1.2, "rod")
    assert row["velocity"] == pytest.approx(math.cos(math.radians(30)))  # ISO 748: v·cos θ
    panel = next(p for p in g.discharge.panels() if p["station"] == 3)
    assert panel["discharge"] == pytest.approx(math.cos(math.radians(30)) * 1.2 * 1.0)


def test_outside_the_water_and_read_twice():
    verticals = [read(0.2, 0.5, seq=1), read(2, 0.4, seq=2), read(2, 0.6, seq=3)]
    g = visit_gauging(V, LEVEL, {"verticals": verticals})
    outside = [f for f in g.findings if f.kind == "outside"]
    assert [f.station for f in outside] == [0.2] and outside[0].severity == "warn"
    assert next(r for r in g.verticals if r["station"] == 2)["mean_velocity"] == 0.6  # latest


def test_revolutions_need_the_rotating_meter_recorded_with_the_visit():
    counted = {"station": 2, "method": "one-point", "meter_uuid": "m1",
               "points": {"v06": {"revolutions": 40, "seconds": 40}}}  # fmt: skip
    with pytest.raises(GaugingError, match="no rotating meter"):
        visit_gauging(V, LEVEL, {"verticals": [counted]})
    meter = {"meter_uuid": "m1", "serial": "R-1", "unit": "ft", "a": 0.1, "b": 2.0,
             "lowest": 0.2, "highest": 0.5}  # fmt: skip
    g = visit_gauging(V, LEVEL, {"verticals": [counted], "meters": [meter]})
    row = next(r for r in g.verticals if r["station"] == 2)
    # v = a + b·N in the meter's feet, converted to metres (0.3048 m/ft, exact by definition).
    assert row["mean_velocity"] == pytest.approx((0.1 + 2.0 * 1.0) * 0.3048)
    assert row["meter"] == "R-1"
    (off,) = [f for f in g.findings if f.kind == "meter"]  # 0.64 m/s is above 0.5 ft/s × 0.3048
    assert off.station == 2 and "R-1" in off.message


def test_a_dry_section_and_missing_slope_say_so():
    with pytest.raises(GaugingError, match="dry"):
        visit_gauging(V, 98.0, {"verticals": []})
    g = visit_gauging(V, LEVEL, {"verticals": [read(s, 0.5) for s in (1, 2, 3, 4, 5)],
                                 "water_surface": [{"distance": 0, "elevation": LEVEL}]})  # fmt: skip
    assert g.slope is None and "1 water-surface point read" in g.slope_note
    assert g.calibrated is None and "slope" in g.n_note
    assert g.measurement()["n"] is None and g.measurement()["discharge"] > 0
    partial = visit_gauging(V, LEVEL, {"verticals": [read(2, 0.5)]})
    assert partial.measurement() is None and "not complete" in visit_gauging(
        V, LEVEL, {"verticals": [read(2, 0.5)],
                   "water_surface": [{"distance": -9, "elevation": 99.21},
                                     {"distance": 9, "elevation": 99.19}]}).n_note  # fmt: skip


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(0.05, 3.0), min_size=5, max_size=5), st.floats(0.1, 4.0))
def test_scaling_every_velocity_scales_the_discharge(velocities, factor):
    # Midsection Q = Σ v_i·d_i·w_i is linear in the velocities (TM 3-A8; a property).
    one = visit_gauging(
        V,
        LEVEL,
        {"verticals": [read(s, v) for s, v in zip((1, 2, 3, 4, 5), velocities, strict=True)]},
    )
    two = visit_gauging(
        V,
        LEVEL,
        {
            "verticals": [
                read(s, factor * v) for s, v in zip((1, 2, 3, 4, 5), velocities, strict=True)
            ]
        },
    )
    assert two.discharge.discharge == pytest.approx(factor * one.discharge.discharge, rel=1e-9)


# --- the section's measured rating ----------------------------------------------------------
BOX = Section([0, 0, 4, 4], [102.0, 99.0, 99.0, 102.0])


def pairs(heights, c=4.0, b=1.5, n=None, slope=None):
    return [{"stage": 99.0 + h, "discharge": c * h**b, "n": n, "slope": slope, "date": f"d{i}"}
            for i, h in enumerate(heights)]  # fmt: skip


def test_rating_needs_three_measurements_four_to_fit_e():
    with pytest.raises(GaugingError, match="at least 3 gauged visits"):
        measured_rating(pairs([0.4, 0.6]), BOX)
    with pytest.raises(GaugingError, match="at least 4"):
        measured_rating(pairs([0.4, 0.6, 0.9]), BOX, fit_offset=True)
    skipped = pairs([0.4, 0.6, 0.9]) + [{"stage": 99.5, "discharge": None}]
    assert len(measured_rating(skipped, BOX).measurements) == 3  # incomplete ones left out


def test_extension_uses_the_highest_calibrated_n_and_is_flagged():
    found = pairs([0.4, 0.6], n=0.03, slope=0.001) + pairs([0.9], n=0.02, slope=0.002)
    rating = measured_rating(found, BOX)
    assert rating.extension["n"] == 0.02 and rating.extension["slope"] == 0.002
    assert set(rating.curve.source) == {"measured", "below", "manning"}
    stage = max(s for s, k in zip(rating.curve.stages, rating.curve.source, strict=True)
                if k == "manning")  # fmt: skip
    depth = stage - 99.0
    area, perimeter = 4 * depth, 4 + 2 * depth  # rectangle (Chow 1959, Table 2-1)
    manning = area * (area / perimeter) ** (2 / 3) * math.sqrt(0.002) / 0.02
    assert rating.curve.discharges[-1] == pytest.approx(manning, rel=1e-9)
    without = measured_rating(pairs([0.4, 0.6, 0.9]), BOX)
    assert without.extension is None and "not extended" in without.extension_note
    assert np.max(without.curve.stages) == pytest.approx(99.9)
    keys = without.as_dict()
    assert keys["extension"] is None and keys["offset_source"] == "the lowest point of the section"


def test_the_visits_settings_choose_mean_section_and_the_surface_coefficient():
    surface = [{"station": s, "method": "surface", "points": {"surface": {"velocity": v}}}
               for s, v in ((1, 0.4), (2, 0.8), (3, 1.0), (4, 0.8), (5, 0.4))]  # fmt: skip
    settings = {"method": "meansection", "surface_coefficient": 0.9}
    g = visit_gauging(V, LEVEL, {"verticals": surface, "settings": settings})
    assert (g.method, g.surface_coefficient) == ("meansection", 0.9)
    # Mean-section (ISO 748; USBR Water Measurement Manual): q = (v_i + v_{i+1})/2 ·
    # (d_i + d_{i+1})/2 · (b_{i+1} − b_i); surface velocity × coefficient (common practice).
    b = [0.6, 1, 2, 3, 4, 5, 5.4]
    d = [0, 0.2, 0.6, 1.1, 0.6, 0.2, 0]
    v = [0, *(0.9 * s for s in (0.4, 0.8, 1.0, 0.8, 0.4)), 0]
    q = sum((v[i] + v[i + 1]) / 2 * (d[i] + d[i + 1]) / 2 * (b[i + 1] - b[i]) for i in range(6))
    assert g.discharge.discharge == pytest.approx(q, rel=1e-9)

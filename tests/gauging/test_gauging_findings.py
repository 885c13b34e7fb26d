"""Tests of stakeline.gauging.findings: the field checks of a gauging."""

from __future__ import annotations

import numpy as np
import pytest
from stakeline.checks import SEVERITIES, Finding
from stakeline.gauging import (
    GAUGING_KINDS,
    GaugingError,
    GaugingSettings,
    MeterRating,
    gauging_findings,
    gauging_unit,
    velocity_area,
    wading_findings,
)


def good_gauging(n=40, width=12.0, depth=0.6, speed=0.5):
    """A parabolic channel gauged at n evenly spaced verticals, edges at zero depth."""
    b = np.linspace(0.0, width, n)
    shape = 1.0 - ((b - width / 2) / (width / 2)) ** 2
    return b, depth * shape, speed * np.sqrt(shape)


def kinds(found):
    return [(f.kind, f.severity) for f in found]


def test_a_good_gauging_has_no_findings():
    r = velocity_area(*good_gauging())
    assert gauging_findings(r) == []


# --- Wading ----------------------------------------------------------------------------------
def test_wading_limit_in_both_units():
    # Do not wade where depth x velocity reaches 10 ft²/s (USGS field practice, from memory);
    # in metres 10 x 0.3048² = 0.929 m²/s.
    assert gauging_unit("m").wading_limit == pytest.approx(10 * 0.3048**2)
    assert gauging_unit("ft").wading_limit == 10.0
    found = wading_findings([1.0, 2.0, 3.0], [1.0, 0.8, 0.5], [0.95, 1.0, 0.2])
    assert kinds(found) == [("wading", "warn"), ("wading", "note")]
    assert "station 1 m" in found[0].message and "0.95 m²/s" in found[0].message
    assert "do not wade" in found[0].suggestion
    feet = wading_findings([4.0], [3.0], [3.4], unit="ft")
    assert kinds(feet) == [("wading", "warn")] and "10.20 ft²/s" in feet[0].message
    assert wading_findings([1.0], [2.0], [float("nan")]) == []
    feet = GaugingSettings.for_unit("ft")
    assert kinds(wading_findings([4.0], [3.0], [3.4], feet)) == [("wading", "warn")]


def test_wading_counts_reversed_flow_too():
    assert kinds(wading_findings([1.0], [1.2], [-0.9])) == [("wading", "warn")]


def test_wading_comes_first():
    b, d, v = good_gauging(depth=1.2, speed=1.0)
    found = gauging_findings(velocity_area(b, d, v))
    assert found[0].kind == "wading"


# --- Unread, reversed, shares ----------------------------------------------------------------
def test_unread_wet_vertical_blocks_and_suggests_the_method():
    b, d, v = good_gauging(depth=1.2, speed=0.3)
    v[15] = np.nan
    found = [f for f in gauging_findings(velocity_area(b, d, v)) if f.kind == "unmeasured"]
    assert kinds(found) == [("unmeasured", "block")]
    assert found[0].station == pytest.approx(b[15])
    assert "two-point" in found[0].suggestion  # 1.2 m deep: two points (TM 3-A8)
    assert found[0].index == 15


def test_reversed_flow_at_the_vertical_or_a_point():
    b, d, v = good_gauging()
    v[3] = -0.05
    points = {"v02": np.full(b.size, 0.5), "v08": np.full(b.size, 0.4)}
    points["v08"][20] = -0.1
    found = [
        f for f in gauging_findings(velocity_area(b, d, v), points=points) if f.kind == "reversed"
    ]
    assert [f.index for f in found] == [3, 20]
    assert "v08=-0.10" in found[1].message and "eddy" in found[1].suggestion


def test_panel_share_over_ten_and_over_five_percent():
    # USGS practice: no partial section over 10 % of Q, ideally 5 % (Rantz 1982; from memory).
    b = np.array([0.0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12])
    d = np.array([0.0, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.0])
    v = np.array([0.0, 0.5, 0.5, 0.5, 0.5, 0.5, 1.6, 0.5, 0.5, 0.5, 0.5, 0.5, 0.0])
    r = velocity_area(b, d, v)
    share = 100 * 1.6 / (10 * 0.5 + 1.6)  # midsection q = v·d·1 for each interior vertical
    assert r.panel_percent[6] == pytest.approx(share)
    found = [f for f in gauging_findings(r) if f.kind == "share"]
    assert [(f.severity, f.station) for f in found[:1]] == [("warn", 6.0)]
    assert f"{share:.1f} %" in found[0].message
    assert found[0].suggestion == "add verticals at 5.5 m, 6.5 m"
    notes = [f for f in found if f.severity == "note"]  # each other panel: 0.5/6.6 = 7.6 %
    assert len(notes) == 10
    assert not [
        f
        for f in gauging_findings(r, settings={"aim_panel_share": None})
        if f.severity == "note" and f.kind == "share"
    ]


def test_meansection_share_names_the_panel():
    b = np.array([0.0, 1.0, 2.0, 3.0])
    r = velocity_area(b, [0, 0.5, 0.5, 0], [0, 0.5, 0.5, 0], "meansection")
    middle = [f for f in gauging_findings(r) if f.kind == "share" and f.station == 1.5]
    assert middle[0].message.startswith("the panel from 1 m to 2 m carries 66.7 %")
    assert middle[0].suggestion == "add a vertical at 1.5 m"


# --- Profile, meter, count -------------------------------------------------------------------
def test_profile_rule():
    b, d, v = good_gauging()
    v02 = np.full(b.size, 0.6)
    v08 = np.full(b.size, 0.6 / 4 ** (1 / 6))  # a 1/6-power profile: ratio 4^(1/6) (usual)
    v08[5] = 0.7  # the 0.8-depth velocity the larger
    v08[9] = 0.25  # under half of the 0.2-depth one
    found = [
        f
        for f in gauging_findings(velocity_area(b, d, v), points={"v02": v02, "v08": v08})
        if f.kind == "profile"
    ]
    assert [f.index for f in found] == [5, 9]
    assert "0.8-depth velocity is the larger" in found[0].message
    assert "three-point" in found[0].suggestion
    assert [f.severity for f in found] == ["warn", "warn"]
    # With the 0.6-depth velocity read as well, the three-point mean is in use: a note.
    v06 = np.full(b.size, np.nan)
    v06[5] = 0.65
    points = {"v02": v02, "v06": v06, "v08": v08}
    found = [
        f for f in gauging_findings(velocity_area(b, d, v), points=points) if f.kind == "profile"
    ]
    assert sorted((f.index, f.severity) for f in found) == [(5, "note"), (9, "warn")]


def test_meter_range():
    b, d, v = good_gauging()
    meter = MeterRating("P-9", a=0.01, b=0.7, lowest=0.1, highest=0.45)
    found = [f for f in gauging_findings(velocity_area(b, d, v), meter=meter) if f.kind == "meter"]
    over = np.flatnonzero((d > 0) & ((np.abs(v) > 0.45) | (np.abs(v) < 0.1)))
    assert [f.index for f in found] == over.tolist()
    assert "meter P-9" in found[0].message and "0.10-0.45 m/s" in found[0].message
    points = {"v06": np.where(d > 0, 0.3, np.nan)}
    points["v06"][7] = 0.05
    found = gauging_findings(velocity_area(b, d, v), points=points, meter=meter)
    assert [f.index for f in found if f.kind == "meter"] == [7]


def test_too_few_verticals():
    # 25-30 verticals recommended (Turnipseed & Sauer 2010; from memory).
    found = gauging_findings(velocity_area(*good_gauging(n=12)))
    few = [f for f in found if f.kind == "verticals"]
    assert kinds(few) == [("verticals", "warn")] and few[0].station is None
    assert "only 10 verticals" in few[0].message
    assert not [
        f for f in gauging_findings(velocity_area(*good_gauging(n=27))) if f.kind == "verticals"
    ]


def test_findings_are_the_shared_kind():
    b, d, v = good_gauging(n=8, depth=1.5, speed=1.2)
    v[2] = np.nan
    for f in gauging_findings(velocity_area(b, d, v)):
        assert isinstance(f, Finding)
        assert f.kind in GAUGING_KINDS and f.severity in SEVERITIES
        assert f.message and f.suggestion
        assert set(f.as_dict()) == {"kind", "severity", "station", "message", "suggestion"}


def test_settings():
    assert GaugingSettings.for_unit("ft", min_verticals=20).min_verticals == 20
    with pytest.raises(GaugingError, match="unknown gauging setting 'colour'"):
        GaugingSettings.for_unit("m", colour=1)
    r = velocity_area(*good_gauging())
    with pytest.raises(GaugingError, match="settings are for 'ft'"):
        gauging_findings(r, settings=GaugingSettings.for_unit("ft"))
    with pytest.raises(GaugingError, match="3 v06 velocities for 40 verticals"):
        gauging_findings(r, points={"v06": [1, 2, 3]})
    with pytest.raises(GaugingError, match="'v05' is not known"):
        gauging_findings(r, points={"v05": np.zeros(40)})

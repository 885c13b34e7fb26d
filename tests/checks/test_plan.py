"""The station plan check (stakeline.checks.plan): a planned station without a reading blocks
finishing -- common practice: every planned station, the thalweg above all, is read before the
stakes are pulled -- and the field checks count stations in words ("1 station")."""

from __future__ import annotations

import numpy as np
import pytest
from stakeline.checks import CheckSettings, review
from stakeline.checks.plan import UNREAD, plan_findings, unread_stations


def test_seven_of_twenty_one_read_gives_fourteen_blocking_findings_by_station():
    planned = np.round(np.arange(21) * 0.5, 6)  # 0 to 10 m every 0.5 m
    read = planned[:7]  # 0 to 3 m; the thalweg near 5 m never read
    findings = plan_findings(planned, read, "m")
    assert [f.station for f in findings] == pytest.approx(planned[7:].tolist())
    assert {(f.kind, f.severity) for f in findings} == {(UNREAD, "block")}
    assert "7 of 21 planned stations read" in findings[0].message
    assert "3.5 m" in findings[0].message and "Spacing" in findings[0].suggestion


def test_stations_match_within_rounding_and_extra_readings_are_no_finding():
    planned = [0.0, 0.3, 0.6]
    read = [0.0, 0.30000000001, 0.6, 0.45]  # 0.45: a slope break added on site
    assert unread_stations(planned, read).size == 0
    assert plan_findings(planned, read, "ft") == []


def test_no_plan_gives_no_finding_and_a_bad_unit_is_refused():
    assert plan_findings([], [0.0, 1.0]) == []
    with pytest.raises(ValueError):
        plan_findings([1.0], [], "yards")


def test_one_station_across_the_water_is_said_in_the_singular():
    # A V whose only wetted station is its bottom: the sparse check counts 1 station.
    x = np.array([0.0, 1.0, 2.0])
    z = np.array([10.0, 9.0, 10.0])
    found = review(x, z, stage=9.5, settings=CheckSettings.for_unit("m"))
    sparse = [f for f in found if f.kind == "sparse"]
    assert sparse and "only 1 station across" in sparse[0].message

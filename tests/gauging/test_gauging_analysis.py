"""Tests of stakeline.gauging.analysis: one call for tablet, report and command line."""

from __future__ import annotations

import json

import numpy as np
import pytest
from stakeline.gauging import (
    CAUTION,
    analyse_gauging,
    gauging_unit,
    velocity_area,
    verticals_from_section,
)
from stakeline.survey.geometry import Section
from synthetic import natural_section


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("unit", ["m", "ft"])
def test_a_gauging_at_the_stations_of_generated_sections(seed, unit):
    # Verticals at a crew's survey stations of a generated natural section; velocities from a
    # local Manning relation v = (k/n) d^(2/3) S^(1/2) (wide-channel form, common practice for a
    # first guess), one vertical left unread.
    survey = natural_section(np.random.default_rng(seed), unit=unit)
    section = Section(survey.stations, survey.elevations)
    x, d = verticals_from_section(section, survey.stage)
    k = gauging_unit(unit).manning_k
    v = k / 0.035 * d ** (2 / 3) * 0.002**0.5
    wet = np.flatnonzero(d > 0)
    v[wet[len(wet) // 2]] = np.nan
    a = analyse_gauging(x, d, v, unit=unit)
    assert a.discharge.discharge == velocity_area(x, d, v, unit=unit).discharge
    assert a.discharge.area == pytest.approx(section.at(survey.stage).area, rel=0.05)
    assert any(f.kind == "unmeasured" for f in a.findings)
    assert not a.uncertainty.estimable
    out = json.loads(json.dumps(a.as_dict(), allow_nan=False))
    assert out["caution"] == CAUTION and "engineering review" in CAUTION
    assert out["uncertainty"]["estimable"] is False
    assert {f["kind"] for f in out["findings"]} >= {"unmeasured"}
    v[wet[len(wet) // 2]] = v[wet[len(wet) // 2] - 1]
    done = analyse_gauging(x, d, v, unit=unit)
    assert done.uncertainty.estimable and 0 < done.uncertainty.expanded < 0.5
    assert all(f.kind != "unmeasured" for f in done.findings)

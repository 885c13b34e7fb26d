"""Tests of stakeline.gauging.measured_rating: Q = C (h - e)^b fitted to measurements."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from stakeline.gauging import GaugingError, calibrate_n, fit_rating, rating_curve
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_at
from stakeline.survey.uncertainty import Precision

STAGES = np.array([10.35, 10.52, 10.80, 11.10, 11.45, 11.90])
NOISE = np.array([0.03, -0.02, 0.015, -0.035, 0.02, -0.01])  # invented scatter of the gaugings


def power_law(h, c, e, b):
    return c * (h - e) ** b


def test_fixed_offset_against_numpy_polyfit():
    # Least squares on ln Q against ln(h - e) (WMO-No. 1044 Vol. II; ISO 18320), checked against
    # numpy.polyfit on the same logs; the standard error and departures recomputed from their
    # definitions.
    q = power_law(STAGES, 4.2, 10.0, 1.8) * np.exp(NOISE)
    fit = fit_rating(STAGES, q, offset=10.0)
    slope, intercept = np.polyfit(np.log(STAGES - 10.0), np.log(q), 1)
    assert fit.exponent == pytest.approx(slope, rel=1e-10)
    assert fit.coefficient == pytest.approx(math.exp(intercept), rel=1e-10)
    qc = fit.coefficient * (STAGES - 10.0) ** fit.exponent
    r = np.log(q) - np.log(qc)
    assert fit.standard_error == pytest.approx(math.sqrt(np.sum(r**2) / (6 - 2)), rel=1e-9)
    assert fit.standard_error_percent == pytest.approx(
        100 * math.sqrt(np.sum(((q - qc) / qc) ** 2) / 4), rel=1e-9
    )
    assert fit.departures == pytest.approx(tuple(100 * (q - qc) / qc), rel=1e-9)
    assert not fit.offset_fitted and not fit.poorly_determined
    json.dumps(fit.as_dict(), allow_nan=False)


def test_exact_power_law_is_recovered_with_e_fitted():
    q = power_law(STAGES, 4.2, 10.0, 1.8)
    fit = fit_rating(STAGES, q, bracket=(9.0, 10.3))
    assert fit.offset == pytest.approx(10.0, abs=1e-4)
    assert fit.exponent == pytest.approx(1.8, rel=1e-3)
    assert fit.coefficient == pytest.approx(4.2, rel=1e-3)
    assert fit.offset_fitted and fit.standard_error < 1e-4


def test_fitted_offset_with_scatter_lands_near_the_true_one():
    q = power_law(STAGES, 4.2, 10.0, 1.8) * np.exp(0.3 * NOISE)
    fit = fit_rating(STAGES, q)
    assert fit.offset == pytest.approx(10.0, abs=0.1)
    # The least residual error over the bracket: no e near it does better.
    for e in (fit.offset - 0.02, fit.offset + 0.02):
        other = fit_rating(STAGES, q, offset=e)
        assert other.standard_error * math.sqrt(4) >= fit.standard_error * math.sqrt(3) - 1e-12


def test_wide_channel_gives_five_thirds():
    # A wide rectangular channel under Manning's equation: R ≈ y, so Q ∝ y^(5/3) with e at the bed
    # (Chow 1959, ch. 5; the channel-control exponent of WMO-No. 1044 Vol. II, from memory).
    section = Section([0, 0, 400, 400], [3, 0, 0, 3])
    h = np.array([0.3, 0.5, 0.8, 1.1, 1.5])
    q = [flow_at(section, s, 0.03, 0.001).discharge for s in h]
    fit = fit_rating(h, q, offset=0.0)
    assert fit.exponent == pytest.approx(5 / 3, rel=0.01)


def test_extension_by_manning_above_the_measurements():
    section = Section([0, 0, 40, 40], [3, 0, 0, 3])
    h = np.array([0.3, 0.5, 0.8, 1.1])
    q = np.array([flow_at(section, s, 0.035, 0.002).discharge for s in h])
    fit = fit_rating(h, q, offset=0.0)
    n = calibrate_n(section, 1.1, q[-1], 0.002, precision=Precision(0, 0)).n
    assert n == pytest.approx(0.035)
    curve = rating_curve(fit, [0.0, 0.2, 0.6, 1.1, 1.8, 2.5], section, n, 0.002)
    assert curve.source == ("below", "below", "measured", "measured", "manning", "manning")
    assert curve.discharges[0] == 0.0
    assert curve.discharges[2] == pytest.approx(fit.discharge(0.6))
    assert curve.discharges[4] == pytest.approx(flow_at(section, 1.8, n, 0.002).discharge)
    assert curve.junction_ratio == pytest.approx(1.0, rel=0.02)
    assert curve.as_dict()["source"][-1] == "manning"
    with pytest.raises(GaugingError, match="above the highest measurement"):
        rating_curve(fit, [1.5])
    with pytest.raises(ValueError, match="above the"):
        rating_curve(fit, [3.5], section, n, 0.002)


def test_cautions_say_when_the_fit_is_poorly_determined():
    narrow = fit_rating([11.0, 11.05, 11.1], [10.0, 10.6, 11.1], offset=10.0)
    assert narrow.poorly_determined
    assert any("degree(s) of freedom" in c for c in narrow.cautions)
    assert any("narrow range" in c for c in narrow.cautions)
    odd = fit_rating([10.2, 10.5, 11.0, 11.5], [1.0, 1.2, 1.3, 1.4], offset=10.0)
    assert any("exponent" in c and "usual" in c for c in odd.cautions)
    edge = fit_rating(STAGES, power_law(STAGES, 4.2, 10.0, 1.8), bracket=(10.1, 10.3))
    assert any("end of its bracket" in c for c in edge.cautions)


@pytest.mark.parametrize(
    ("stages", "discharges", "kwargs", "match"),
    [
        ([1.0, 2.0], [1.0, 2.0], {"offset": 0.0}, "at least 3 measurements"),
        ([1.0, 2.0, 3.0], [1.0, 2.0, 3.0], {}, "fitting e needs at least 4"),
        ([1.0, 2.0, 3.0], [1.0, 2.0, 3.0], {"offset": 1.5}, "measurement 1: stage 1 is not above"),
        ([1.0, 2.0, 3.0], [1.0, 0.0, 3.0], {"offset": 0.0}, "measurement 2 .* not positive"),
        ([2.0, 2.0, 2.0], [1.0, 2.0, 3.0], {"offset": 0.0}, "every measurement is at stage 2"),
        ([1.0, 2.0, 3.0], [1.0, 2.0], {"offset": 0.0}, "one discharge per stage"),
        ([1.0, 2.0, 3.0, 4.0], [1, 2, 3, 4], {"bracket": (0.5, 1.5)}, "must lie below"),
    ],
)
def test_bad_measurements_are_refused(stages, discharges, kwargs, match):
    with pytest.raises(GaugingError, match=match):
        fit_rating(stages, discharges, **kwargs)


@settings(max_examples=60, deadline=None)
@given(st.floats(0.5, 50.0), st.floats(1.2, 3.0), st.floats(-5.0, 100.0))
def test_exact_curves_are_recovered(c, b, e):
    h = e + np.array([0.2, 0.45, 0.9, 1.6, 2.4])
    fit = fit_rating(h, power_law(h, c, e, b), offset=e)
    assert fit.exponent == pytest.approx(b, rel=1e-6)
    assert fit.coefficient == pytest.approx(c, rel=1e-6)
    assert max(abs(x) for x in fit.departures) < 1e-6

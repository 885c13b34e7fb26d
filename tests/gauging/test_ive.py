"""Tests of stakeline.gauging.uncertainty: the interpolated variance estimator (IVE).

Method: Cohn, Kiang & Mason (2013), J. Hydraulic Engineering 139(5).  The paper's form is from
memory (not re-read); these tests check the estimator against its own definition written out
by hand, and against what the method claims to do: recover the random error of depths and
velocities from the measurement itself (simulated here with known errors).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from stakeline.gauging import interpolated_variance, ive_uncertainty, velocity_area
from stakeline.gauging.uncertainty import COVERAGE, METHOD


def ive_by_hand(b, x):
    """σ² = Σ e_i² / Σ (x_i² + ω_i² x_{i-1}² + (1-ω_i)² x_{i+1}²), e_i the residual of x_i from the
    straight line between its neighbours, ω_i = (b_{i+1} - b_i)/(b_{i+1} - b_{i-1})."""
    top = bottom = 0.0
    for i in range(1, len(b) - 1):
        w = (b[i + 1] - b[i]) / (b[i + 1] - b[i - 1])
        e = x[i] - (w * x[i - 1] + (1 - w) * x[i + 1])
        top += e * e
        bottom += x[i] ** 2 + (w * x[i - 1]) ** 2 + ((1 - w) * x[i + 1]) ** 2
    return top / bottom


B = [0.0, 0.6, 1.5, 2.1, 3.0, 3.8, 4.5, 5.5]
D = [0.0, 0.42, 0.71, 0.80, 0.77, 0.62, 0.35, 0.0]
V = [0.0, 0.21, 0.43, 0.52, 0.47, 0.40, 0.19, 0.0]


def test_matches_its_definition_on_an_uneven_gauging():
    s2_d, k = interpolated_variance(B, D)
    assert k == len(B) - 2
    assert s2_d == pytest.approx(ive_by_hand(B, D), rel=1e-12)
    r = velocity_area(B, D, V)
    u = ive_uncertainty(r)
    q = [V[i] * D[i] * ((B[min(i + 1, 7)] - B[max(i - 1, 0)]) / 2) for i in range(8)]
    expected = math.sqrt((ive_by_hand(B, D) + ive_by_hand(B, V)) * sum(x * x for x in q)) / sum(q)
    assert u.relative == pytest.approx(expected, rel=1e-12)
    assert u.expanded == pytest.approx(COVERAGE * expected)
    assert u.plus_minus == pytest.approx(COVERAGE * expected * r.discharge)
    assert u.low == pytest.approx(r.discharge - u.plus_minus)
    assert u.depth_error == pytest.approx(math.sqrt(ive_by_hand(B, D)))
    assert u.method == METHOD and "Cohn" in u.method


def test_straight_lines_have_no_interpolated_variance():
    b = np.array([0.0, 1.0, 2.5, 3.0, 4.0])
    s2, k = interpolated_variance(b, 2.0 + 0.3 * b)
    assert k == 3 and s2 == pytest.approx(0.0, abs=1e-30)


def test_recovers_known_random_errors():
    # Simulated gaugings of a smooth channel, every depth and velocity read with a known relative
    # error (3 % and 6 %): the estimator must find those errors on average, and the discharge's
    # spread over the simulations must match the predicted u(Q).
    rng = np.random.default_rng(20130501)
    b = np.linspace(0.0, 20.0, 41)
    shape = np.sin(np.pi * b / 20.0)
    depth, speed = 1.2 * shape, 0.8 * np.sqrt(shape)
    sd_d, sd_v = 0.03, 0.06
    found_d, found_v, relative, discharges = [], [], [], []
    for _ in range(400):
        d = depth * (1 + sd_d * rng.standard_normal(b.size))
        v = speed * (1 + sd_v * rng.standard_normal(b.size))
        u = ive_uncertainty(velocity_area(b, d, v))
        found_d.append(u.depth_error**2)
        found_v.append(u.velocity_error**2)
        relative.append(u.relative)
        discharges.append(u.discharge)
    assert math.sqrt(np.mean(found_d)) == pytest.approx(sd_d, rel=0.1)
    assert math.sqrt(np.mean(found_v)) == pytest.approx(sd_v, rel=0.1)
    observed = np.std(discharges, ddof=1) / np.mean(discharges)
    assert np.mean(relative) == pytest.approx(observed, rel=0.15)


def test_not_estimable_is_a_value_with_a_reason():
    short = ive_uncertainty(velocity_area([0, 1, 2, 3], [0, 0.5, 0.5, 0], [0, 0.3, 0.3, 0]))
    assert not short.estimable and short.relative is None and "interior verticals" in short.reason
    unread = ive_uncertainty(velocity_area(B, D, [0, 0.2, None, 0.5, 0.5, 0.4, 0.2, 0]))
    assert not unread.estimable and "no velocity yet" in unread.reason
    still = ive_uncertainty(velocity_area(B, D, -np.array(V)))
    assert not still.estimable and "not positive" in still.reason
    json.dumps(short.as_dict(), allow_nan=False)

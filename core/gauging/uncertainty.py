"""Uncertainty of one discharge measurement by the interpolated variance estimator (IVE).

Method: Cohn, T. A., Kiang, J. E. & Mason, R. R. (2013), "Estimating discharge measurement
uncertainty using the interpolated variance estimator", *J. Hydraulic Engineering* 139(5).  The
IVE takes the random error of the depths and of the velocities from the measurement itself: each
interior vertical is compared with the straight-line interpolation between its two neighbours,

    ω_i = (b_{i+1} - b_i) / (b_{i+1} - b_{i-1}),   e_i = x_i - (ω_i x_{i-1} + (1 - ω_i) x_{i+1}),

and where the true profile is locally straight, ``e_i`` is pure measurement error.  Errors are
taken as relative (``x = x_true (1 + ε)``, ε of standard deviation σ), so that

    E[e_i²] = σ² (x_i² + ω_i² x_{i-1}² + (1 - ω_i)² x_{i+1}²),

and σ² is estimated pooled over the interior verticals, ``σ² = Σ e_i² / Σ (x_i² + ω_i² x_{i-1}² +
(1 - ω_i)² x_{i+1}²)``, once for depths and once for velocities.  The midsection discharge
``Q = Σ q_i`` then has, to first order, ``u(Q)² = (σ_d² + σ_v²) Σ q_i²``.  The form above is
written from memory of the paper (not re-read): treat the figure as a guide to the measurement's
random error; systematic errors (the meter's rating, the edge estimates) are not in it.

Reported as the standard uncertainty ``u`` and the expanded uncertainty ``U = 2u`` (coverage
factor 2, about 95 %; JCGM 100:2008), relative and in unit³/s.

>>> from stakeline.gauging.discharge import velocity_area
>>> r = velocity_area([0, 1, 2, 3, 4], [1.0] * 5, [0.5, 0.6, 0.7, 0.8, 0.9])   # walls at both edges
>>> ive_uncertainty(r).relative               # straight lines between verticals: no scatter
0.0
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np
from stakeline.gauging.discharge import Discharge

METHOD = "interpolated variance estimator (Cohn, Kiang & Mason 2013, J. Hydraul. Eng. 139(5))"
"""Name of the uncertainty method, as printed."""

COVERAGE = 2.0
"""Coverage factor of the expanded uncertainty (about 95 %)."""

MIN_INTERIOR = 3
"""Fewest interior verticals (with both neighbours read) for an estimate."""


@dataclass(frozen=True)
class MeasurementUncertainty:
    """Uncertainty of one measured discharge.

    ``depth_error`` and ``velocity_error``: relative standard deviations of one depth and one
    velocity (σ_d, σ_v); ``relative``: relative standard uncertainty of the discharge u(Q)/Q;
    ``expanded``: U/Q with U = 2u; ``plus_minus``: U in unit³/s; ``low``/``high``: Q ∓ U;
    ``interior``: verticals the estimate used.  When it cannot be estimated (``estimable``
    false, ``reason`` says why) every figure is None.
    """

    method: str
    estimable: bool
    discharge: float
    depth_error: float | None
    velocity_error: float | None
    relative: float | None
    expanded: float | None
    plus_minus: float | None
    low: float | None
    high: float | None
    interior: int
    reason: str = ""

    def as_dict(self) -> dict:
        """Plain dict of every field (JSON-ready)."""
        return asdict(self)


def interpolated_variance(stations, values) -> tuple[float, int]:
    """Pooled relative error variance σ² of ``values`` at ``stations`` by the IVE, and the count.

    Interior points with a NaN among themselves or their neighbours are left out; points whose
    expected-variance weight is 0 (all three values 0) carry no information and are left out.

    >>> s2, k = interpolated_variance([0, 1, 2, 3], [1.0, 1.1, 0.9, 1.0])
    >>> k, round(s2, 6)        # (0.15² + 0.15²) / ((1.21 + 0.25 + 0.2025) + (0.81 + 0.3025 + 0.25))
    (2, 0.014876)
    """
    b = np.asarray(stations, dtype=float)
    x = np.asarray(values, dtype=float)
    if b.size < 3:
        return 0.0, 0
    w = (b[2:] - b[1:-1]) / (b[2:] - b[:-2])
    before, here, after = x[:-2], x[1:-1], x[2:]
    error = here - (w * before + (1.0 - w) * after)
    weight = here**2 + (w * before) ** 2 + ((1.0 - w) * after) ** 2
    use = np.isfinite(error) & (weight > 0)
    count = int(use.sum())
    if count == 0:
        return 0.0, 0
    return float(np.sum(error[use] ** 2) / np.sum(weight[use])), count


def ive_uncertainty(result: Discharge) -> MeasurementUncertainty:
    """Uncertainty of ``result``'s discharge by the interpolated variance estimator.

    Uses the verticals as measured and their midsection partial discharges (also for a
    mean-section result, whose verticals are the same).  Needs :data:`MIN_INTERIOR` interior
    verticals with velocities; fewer, or verticals still to be read, give ``estimable`` false.
    """
    q_total = result.discharge
    x, d, v = result.stations, result.depths, result.velocities
    s2_d, k_d = interpolated_variance(x, d)
    s2_v, k_v = interpolated_variance(x, v)
    interior = min(k_d, k_v)
    reason = ""
    if result.missing:
        reason = f"{len(result.missing)} wet verticals have no velocity yet"
    elif interior < MIN_INTERIOR:
        reason = f"only {interior} interior verticals; at least {MIN_INTERIOR} are needed"
    elif q_total <= 0:
        reason = "the discharge is not positive"
    if reason:
        return MeasurementUncertainty(
            METHOD, False, q_total, None, None, None, None, None, None, None, interior, reason
        )
    half = np.diff(x) / 2.0
    width = np.concatenate(([0.0], half)) + np.concatenate((half, [0.0]))
    q = v * d * width
    u = math.sqrt((s2_d + s2_v) * float(np.sum(q**2))) / q_total
    big_u = COVERAGE * u * q_total
    return MeasurementUncertainty(
        method=METHOD,
        estimable=True,
        discharge=q_total,
        depth_error=math.sqrt(s2_d),
        velocity_error=math.sqrt(s2_v),
        relative=u,
        expanded=COVERAGE * u,
        plus_minus=big_u,
        low=q_total - big_u,
        high=q_total + big_u,
        interior=interior,
    )

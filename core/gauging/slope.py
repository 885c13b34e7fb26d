"""Water-surface slope from levelled water-surface points along the bank.

Each point is a distance along the stream (survey unit; downstream positive, e.g. metres from
the section, negative upstream) and the water-surface elevation read there.  The slope is the
fall per unit length, positive when the water falls downstream:

* two points: the fall over the reach divided by its length, ± from the levelling precision
  (each elevation read with standard deviation ``precision``: u(S) = √2 · precision / L);
* three or more: the least-squares line through the points, S = -(fitted gradient), with its
  standard error from the scatter about the line, and never less than the levelling precision
  alone gives (σ / √Σ(x - x̄)²) -- with few points the scatter is a poor guide.

Nonsense is refused with a message saying what to check: fewer than two points, all at one
distance, or a surface rising downstream by more than twice its standard error.

>>> s = water_surface_slope([-25.0, 25.0], [100.30, 100.10], precision=0.005)
>>> round(s.slope, 6), round(s.standard_error, 6)      # 0.20 / 50; √2 x 0.005 / 50
(0.004, 0.000141)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stakeline.gauging.units import GaugingError, gauging_unit

COVERAGE = 2.0
"""Coverage factor of ``plus_minus`` (about 95 %)."""


@dataclass(frozen=True)
class WaterSurfaceSlope:
    """A measured water-surface slope (dimensionless, positive falling downstream).

    ``standard_error`` is u(S); ``plus_minus`` = 2·u(S); ``fall`` the drop (survey unit) over
    ``length`` (the distance between the outermost points); ``method`` is ``"two points"`` or
    ``"least squares"``; ``residuals`` (survey unit) the points' departures from the line;
    ``spans_section`` says whether points lie both upstream (distance < 0) and downstream (> 0).
    """

    slope: float
    standard_error: float
    plus_minus: float
    fall: float
    length: float
    points: int
    method: str
    residuals: tuple[float, ...]
    spans_section: bool

    def as_dict(self) -> dict:
        """Plain dict of every field, residuals as a list (JSON-ready)."""
        return {
            "slope": self.slope,
            "standard_error": self.standard_error,
            "plus_minus": self.plus_minus,
            "fall": self.fall,
            "length": self.length,
            "points": self.points,
            "method": self.method,
            "residuals": list(self.residuals),
            "spans_section": self.spans_section,
        }


def _points(distances, elevations) -> tuple[np.ndarray, np.ndarray]:
    try:
        x = np.asarray(distances, dtype=float)
        z = np.asarray(elevations, dtype=float)
    except (TypeError, ValueError):
        raise GaugingError("water-surface points must be numbers (distance, elevation)") from None
    if x.ndim != 1 or x.shape != z.shape:
        raise GaugingError(
            f"{x.size} distances and {z.size} elevations: give one elevation per distance"
        )
    for arr, name in ((x, "distance"), (z, "elevation")):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            i = int(bad[0])
            raise GaugingError(f"water-surface point {i + 1}: {name} is not a finite number", i)
    if x.size < 2:
        raise GaugingError(
            f"a water-surface slope needs at least 2 points, got {x.size}; read the water surface "
            "upstream and downstream of the section"
        )
    if np.ptp(x) == 0:
        raise GaugingError(
            f"every water-surface point is at distance {x[0]:g}: read them along the stream, "
            "upstream and downstream of the section"
        )
    return x, z


def water_surface_slope(
    distances, elevations, precision: float | None = None, unit: str = "m"
) -> WaterSurfaceSlope:
    """Slope of the water surface through levelled points (see the module notes).

    ``distances`` along the stream (downstream positive) and ``elevations`` in the survey
    ``unit``; ``precision`` is the standard deviation of one levelled elevation (default the
    crew's reading precision for ``unit``: 5 mm or 0.02 ft).
    """
    u = gauging_unit(unit)
    sigma = u.reading_precision if precision is None else float(precision)
    if not (math.isfinite(sigma) and sigma >= 0):
        raise GaugingError(f"the levelling precision must be zero or positive, got {precision!r}")
    x, z = _points(distances, elevations)
    n = x.size
    dx = x - x.mean()
    sxx = float(np.dot(dx, dx))
    gradient = float(np.dot(dx, z - z.mean())) / sxx
    residuals = z - (z.mean() + gradient * dx)
    floor = sigma / math.sqrt(sxx)
    if n == 2:
        error, method = floor, "two points"
    else:
        scatter = math.sqrt(float(np.dot(residuals, residuals)) / (n - 2) / sxx)
        error, method = max(scatter, floor), "least squares"
    slope = -gradient
    length = float(np.ptp(x))
    if slope < 0 and -slope > COVERAGE * error:
        rise = -slope * length
        raise GaugingError(
            f"the water surface rises {rise:.3f} {unit} downstream over {length:g} {unit} "
            f"(slope {slope:.6f} ± {COVERAGE * error:.6f}); check that distances increase "
            "downstream and each elevation was reduced from the right backsight"
        )
    return WaterSurfaceSlope(
        slope=slope,
        standard_error=error,
        plus_minus=COVERAGE * error,
        fall=slope * length,
        length=length,
        points=n,
        method=method,
        residuals=tuple(residuals.tolist()),
        spans_section=bool(x.min() < 0 < x.max()),
    )

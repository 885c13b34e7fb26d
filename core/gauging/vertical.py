"""The mean velocity in one vertical, from point velocities or revolutions of a current meter.

Point velocities are named by their depth below the water surface as a share of the vertical's
depth: ``v02`` (0.2 depth), ``v06`` (0.6), ``v08`` (0.8), plus ``surface`` and ``bed`` (as close
to the bed as the meter goes).  The published methods (Turnipseed & Sauer 2010, USGS TM 3-A8;
ISO 748; from memory):

=============  ===========================  ================================================
method         points                       mean velocity in the vertical
=============  ===========================  ================================================
one-point      v06                          v06
two-point      v02, v08                     (v02 + v08) / 2
three-point    v02, v06, v08                ((v02 + v08) / 2 + v06) / 2
surface        surface                      coefficient x surface (0.85 common practice)
five-point     surface, v02, v06, v08, bed  (surface + 3 v02 + 3 v06 + 2 v08 + bed) / 10
=============  ===========================  ================================================

Velocities are in the survey unit per second; every function takes scalars or arrays (NaN for a
point not read) and gives a float for scalars.  A rotating-element meter's rating turns
revolutions and seconds into a velocity (:class:`MeterRating`); flow oblique to the section is
reduced to its normal component by :func:`normal_velocity`.

>>> mean_velocity("two-point", {"v02": 0.80, "v08": 0.60})
0.7
>>> round(mean_velocity("surface", {"surface": 1.0}), 3)
0.85
>>> suggested_method(0.5, "m"), suggested_method(3.0, "ft")
('one-point', 'two-point')
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass

import numpy as np
from stakeline.gauging.units import GaugingError, gauging_unit

POINTS = ("surface", "v02", "v06", "v08", "bed")
"""Names of the point velocities, from the surface down."""

VERTICAL_METHODS = {
    "one-point": ("v06",),
    "two-point": ("v02", "v08"),
    "three-point": ("v02", "v06", "v08"),
    "surface": ("surface",),
    "five-point": ("surface", "v02", "v06", "v08", "bed"),
}
"""Each method of the mean velocity in a vertical, with the points it reads."""

SURFACE_COEFFICIENT = 0.85
"""Mean / surface velocity in a vertical: 0.85 is common practice (0.84-0.90 by site)."""

PROFILE_RATIO = (1.0, 2.0)
"""Usual range of v02 / v08.  USGS practice: the two-point method is not used where the 0.8-depth
velocity exceeds the 0.2-depth one or is less than half of it; read 0.6 too (three-point).
(Turnipseed & Sauer 2010, TM 3-A8; Rantz 1982, WSP 2175; from memory.)"""


def _values(points: Mapping, name: str) -> np.ndarray:
    if name not in points or points[name] is None:
        raise GaugingError(f"the velocity at {_where(name)} is needed for this method")
    try:
        return np.asarray(points[name], dtype=float)
    except (TypeError, ValueError):
        raise GaugingError(f"the velocity at {_where(name)} is not a number") from None


def _where(name: str) -> str:
    return {"surface": "the surface", "bed": "the bed"}.get(name, f"{name[1]}.{name[2]} depth")


def _out(value: np.ndarray):
    return float(value) if np.ndim(value) == 0 else value


def mean_velocity(method: str, points: Mapping, coefficient: float = SURFACE_COEFFICIENT):
    """Mean velocity in a vertical (unit/s) by ``method`` from the point velocities it reads.

    ``points`` maps point names (:data:`POINTS`) to velocities (unit/s; scalars or arrays of one
    shape, NaN where not read, which gives NaN).  ``coefficient`` is the surface coefficient.

    >>> mean_velocity("three-point", {"v02": 0.9, "v06": 0.8, "v08": 0.5})
    0.75
    >>> mean_velocity("five-point", {"surface": 1.0, "v02": 1.0, "v06": 1.0, "v08": 1.0, "bed": 1.0})
    1.0
    """
    if method not in VERTICAL_METHODS:
        raise GaugingError(
            f"vertical method {method!r} is not known; use one of {', '.join(VERTICAL_METHODS)}"
        )
    p = {name: _values(points, name) for name in VERTICAL_METHODS[method]}
    if method == "one-point":
        return _out(p["v06"] + 0.0)
    if method == "two-point":
        return _out(0.5 * (p["v02"] + p["v08"]))
    if method == "three-point":
        return _out(0.5 * (0.5 * (p["v02"] + p["v08"]) + p["v06"]))
    if method == "surface":
        k = float(coefficient)
        if not (math.isfinite(k) and 0 < k <= 1):
            raise GaugingError(f"the surface coefficient must be in (0, 1], got {coefficient!r}")
        return _out(k * p["surface"])
    return _out(0.1 * (p["surface"] + 3 * p["v02"] + 3 * p["v06"] + 2 * p["v08"] + p["bed"]))


def method_for_points(names) -> str:
    """The published method that reads exactly the points ``names`` (any order).

    >>> method_for_points(["v08", "v02"])
    'two-point'
    """
    given = frozenset(names)
    for method, needed in VERTICAL_METHODS.items():
        if given == frozenset(needed):
            return method
    listed = ", ".join(sorted(given)) or "none"
    raise GaugingError(
        f"the points read ({listed}) do not form a published method; read v06 alone, v02 and v08, "
        "v02, v06 and v08, or the surface velocity"
    )


def suggested_method(depth: float, unit: str = "m") -> str:
    """The method to use at a vertical ``depth`` deep (survey unit).

    One point at 0.6 depth below about 0.75 m (2.5 ft), two points (0.2 and 0.8) at and below it
    (Turnipseed & Sauer 2010, USGS TM 3-A8; from memory).
    """
    return "one-point" if float(depth) < gauging_unit(unit).one_point_depth else "two-point"


def profile_ratio(v02, v08):
    """v02 / v08 of a two-point vertical (NaN where v08 is 0 or a point is missing).

    The usual profile gives a ratio in :data:`PROFILE_RATIO`; a 1/6-power profile gives 4^(1/6).
    """
    a, b = np.asarray(v02, dtype=float), np.asarray(v08, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(b != 0, a / np.where(b != 0, b, 1.0), np.nan)
    return _out(ratio)


def normal_velocity(velocity, angle_degrees):
    """Velocity normal to the section: ``velocity x cos(angle)`` (unit/s).

    ``angle_degrees`` is the angle between the flow and the normal to the section; it must lie
    strictly between -90 and 90 (ISO 748; Turnipseed & Sauer 2010; from memory).

    >>> round(normal_velocity(1.0, 60.0), 12)
    0.5
    """
    angle = np.asarray(angle_degrees, dtype=float)
    bad = ~(np.abs(angle) < 90.0)
    if np.any(bad):
        value = float(angle[bad].ravel()[0]) if angle.ndim else float(angle)
        raise GaugingError(
            f"angle of flow {value:g}° is not between -90° and 90°; give the angle between the "
            "flow and the normal to the section"
        )
    return _out(np.asarray(velocity, dtype=float) * np.cos(np.radians(angle)))


@dataclass(frozen=True)
class MeterRating:
    """A rotating-element current meter: its serial, rating ``v = a + b·N`` and rated range.

    ``N`` is revolutions per second; ``a`` (unit/s) and ``b`` (unit per revolution) come from the
    meter's own rating, in length ``unit``.  A second line ``a_high + b_high·N`` applies from
    ``split`` (rev/s) up, when given.  ``lowest`` and ``highest`` bound the rated velocities
    (unit/s; either may be None).

    >>> m = MeterRating("M-17", a=0.03, b=0.51)
    >>> round(m.velocity(39, 100.0), 4)           # 0.03 + 0.51 x 0.39
    0.2289
    """

    serial: str
    a: float
    b: float
    unit: str = "m"
    split: float | None = None
    a_high: float | None = None
    b_high: float | None = None
    lowest: float | None = None
    highest: float | None = None

    def __post_init__(self):
        gauging_unit(self.unit)
        name = f"meter {self.serial!r}"
        for field in ("a", "b", "split", "a_high", "b_high", "lowest", "highest"):
            value = getattr(self, field)
            if value is not None and not math.isfinite(float(value)):
                raise GaugingError(f"{name}: {field} {value!r} is not a finite number")
        if not self.b > 0:
            raise GaugingError(f"{name}: b must be positive (unit per revolution), got {self.b}")
        high = (self.split, self.a_high, self.b_high)
        if any(v is not None for v in high) and not all(v is not None for v in high):
            raise GaugingError(f"{name}: a second rating line needs split, a_high and b_high")
        if self.split is not None and not (self.split > 0 and self.b_high > 0):
            raise GaugingError(f"{name}: split and b_high must be positive")
        if None not in (self.lowest, self.highest) and not self.lowest < self.highest:
            raise GaugingError(f"{name}: the rated range {self.lowest}-{self.highest} is empty")

    def velocity(self, revolutions, seconds, unit: str | None = None):
        """Velocity (unit/s) from ``revolutions`` counted in ``seconds``; 0 where none counted.

        ``unit`` converts to a survey unit other than the meter's own.
        """
        n_rev = np.asarray(revolutions, dtype=float)
        t = np.asarray(seconds, dtype=float)
        if np.any(~np.isfinite(n_rev) | (n_rev < 0)):
            raise GaugingError("revolutions must be zero or a positive number")
        if np.any(~np.isfinite(t) | (t <= 0)):
            raise GaugingError("the counting time must be a positive number of seconds")
        rate = n_rev / t
        v = self.a + self.b * rate
        if self.split is not None:
            v = np.where(rate >= self.split, self.a_high + self.b_high * rate, v)
        v = np.where(n_rev > 0, v, 0.0) * self._factor(unit)
        return _out(v)

    def rated_range(self, unit: str | None = None) -> tuple[float | None, float | None]:
        """``(lowest, highest)`` rated velocity in ``unit`` (default the meter's), None if open."""
        f = self._factor(unit)
        return (
            None if self.lowest is None else self.lowest * f,
            None if self.highest is None else self.highest * f,
        )

    def _factor(self, unit: str | None) -> float:
        return 1.0 if unit is None else gauging_unit(self.unit).metres / gauging_unit(unit).metres

    def as_dict(self) -> dict:
        """Plain dict of every field."""
        return asdict(self)

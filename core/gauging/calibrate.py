"""Manning's n back-calculated from a measured discharge, the surveyed section and the slope.

    n = (k / Q) · A · R^(2/3) · S^(1/2)

with A and R of the surveyed section at the measured stage, S the measured water-surface
(energy) slope and k = 1 (metres) or 1.486 (feet) (Chow 1959, eq. 5-7, solved for n).  Its
uncertainty is propagated to first order (JCGM 100:2008) from three independent parts:

    (u(n)/n)² = (u(Q)/Q)² + (u(S) / 2S)² + (u(A·R^(2/3)) / A·R^(2/3))²

the last from the crew's reading and tape precision, by the same perturbed copies of the section
as :func:`stakeline.survey.uncertainty.discharge_band`.  The n is then placed in the roughness
table (Chow 1959, Table 5-6): the rows whose minimum-maximum range holds it.  A calibrated n is a
property of this reach at this stage; using it at other stages is an extrapolation.

>>> from stakeline.survey.geometry import Section
>>> c = calibrate_n(Section([0, 0, 6, 6], [3, 0, 0, 3]), 1.6, 32.91, 0.0025)  # Ponce, run back
>>> round(c.n, 4)
0.015
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from stakeline.gauging.units import GaugingError, gauging_unit
from stakeline.survey.geometry import Section
from stakeline.survey.roughness import ROUGHNESS, RoughnessRow
from stakeline.survey.uncertainty import Precision, discharge_band

COVERAGE = 2.0
"""Coverage factor of ``plus_minus`` (about 95 %)."""


@dataclass(frozen=True)
class CalibratedN:
    """Manning's n that carries the measured discharge, with its uncertainty and table place.

    ``n`` (dimensionless); ``relative``: u(n)/n; ``plus_minus``: 2·u(n); ``low``/``high``: n ∓ that;
    ``parts``: the relative standard uncertainty from ``discharge``, ``slope`` and ``section``;
    ``area`` (unit²) and ``hydraulic_radius`` (unit) of the section at ``stage``; ``rows``: keys
    of the roughness rows whose min-max range holds n; ``rows_in_band``: rows meeting the band.
    """

    n: float
    relative: float
    plus_minus: float
    low: float
    high: float
    parts: dict
    stage: float
    discharge: float
    slope: float
    area: float
    hydraulic_radius: float
    unit: str
    rows: tuple[str, ...]
    rows_in_band: tuple[str, ...]

    def as_dict(self) -> dict:
        """Plain dict of every field (JSON-ready; ``rows`` as lists)."""
        out = {name: getattr(self, name) for name in self.__dataclass_fields__}
        out["parts"] = dict(self.parts)
        out["rows"] = list(self.rows)
        out["rows_in_band"] = list(self.rows_in_band)
        return out


def _positive(value, name: str) -> float:
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise GaugingError(f"{name} must be a positive number, got {value!r}")
    return v


def _relative(value, name: str) -> float:
    v = float(value)
    if not (math.isfinite(v) and v >= 0):
        raise GaugingError(f"{name} must be zero or a positive number, got {value!r}")
    return v


def manning_n(area, hydraulic_radius, discharge, slope, unit: str = "m") -> float:
    """n = (k/Q)·A·R^(2/3)·S^(1/2) from area (unit²), radius (unit), Q (unit³/s) and slope.

    >>> round(manning_n(9.6, 9.6 / 9.2, 32.91, 0.0025), 5)       # Ponce's channel
    0.015
    """
    k = gauging_unit(unit).manning_k
    q = _positive(discharge, "the discharge")
    s = _positive(slope, "the slope")
    a = _positive(area, "the wetted area")
    r = _positive(hydraulic_radius, "the hydraulic radius")
    return k / q * a * r ** (2.0 / 3.0) * math.sqrt(s)


def rows_holding(n: float, low: float | None = None, high: float | None = None):
    """Roughness rows (Chow 1959, Table 5-6) whose min-max holds ``n``, and those meeting
    ``[low, high]``: two tuples of :class:`RoughnessRow`.

    >>> [r.key for r in rows_holding(0.047)[0]]
    ['winding-weedy', 'mountain-gravel', 'mountain-boulders']
    """
    lo = n if low is None else low
    hi = n if high is None else high
    holding = tuple(row for row in ROUGHNESS if row.minimum <= n <= row.maximum)
    meeting = tuple(row for row in ROUGHNESS if row.minimum <= hi and lo <= row.maximum)
    return holding, meeting


def calibrate_n(
    section: Section,
    stage: float,
    discharge: float,
    slope: float,
    unit: str = "m",
    *,
    discharge_uncertainty: float = 0.0,
    slope_uncertainty: float = 0.0,
    precision: Precision | None = None,
) -> CalibratedN:
    """Manning's n of ``section`` that carries ``discharge`` (unit³/s) at ``stage`` on ``slope``.

    ``discharge_uncertainty`` is the relative standard uncertainty of Q (u(Q)/Q, e.g. from
    :func:`stakeline.gauging.uncertainty.ive_uncertainty`); ``slope_uncertainty`` the standard
    error of the slope (e.g. :attr:`WaterSurfaceSlope.standard_error`); ``precision`` the crew's
    reading/station precision for the section part (default for ``unit``; ``Precision(0, 0)``
    leaves it out).
    """
    water = section.at(float(stage))
    if water.area <= 0:
        raise GaugingError(
            f"the section is dry at water level {float(stage):g} {unit}: give the stage of the "
            "measurement"
        )
    n = manning_n(water.area, water.hydraulic_radius, discharge, slope, unit)
    u_q = _relative(discharge_uncertainty, "the discharge uncertainty")
    u_s = _relative(slope_uncertainty, "the slope uncertainty") / (2.0 * float(slope))
    readings = Precision.default(unit) if precision is None else precision
    if readings.reading == 0 and readings.station == 0:
        u_a = 0.0
    else:
        band = discharge_band(section, float(stage), 1.0, 1.0, unit, readings)
        u_a = band.relative / 2.0  # the band is expanded (k = 2)
    rel = math.sqrt(u_q**2 + u_s**2 + u_a**2)
    plus_minus = COVERAGE * rel * n
    holding, meeting = rows_holding(n, n - plus_minus, n + plus_minus)
    return CalibratedN(
        n=n,
        relative=rel,
        plus_minus=plus_minus,
        low=n - plus_minus,
        high=n + plus_minus,
        parts={"discharge": u_q, "slope": u_s, "section": u_a},
        stage=float(stage),
        discharge=float(discharge),
        slope=float(slope),
        area=water.area,
        hydraulic_radius=water.hydraulic_radius,
        unit=unit,
        rows=tuple(row.key for row in holding),
        rows_in_band=tuple(row.key for row in meeting),
    )


def describe_rows(rows: tuple[RoughnessRow, ...] | tuple[str, ...]) -> str:
    """``"clean-winding (0.033-0.045), ..."`` for keys or rows; ``"no row"`` when empty."""
    by_key = {row.key: row for row in ROUGHNESS}
    items = [by_key[r] if isinstance(r, str) else r for r in rows]
    if not items:
        return "no row"
    return ", ".join(f"{r.key} ({r.minimum:.3f}-{r.maximum:.3f})" for r in items)

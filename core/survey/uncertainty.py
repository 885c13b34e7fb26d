"""How the crew's reading precision carries through to area, perimeter and discharge.

Each plumb (or rod) reading and each tape station is taken to carry an independent error whose
standard deviation is the crew's stated precision (defaults ±5 mm on readings and ±10 mm on
stations, or ±0.02 ft / ±0.03 ft).  Points at one station (a vertical face) share one tape reading.
The water level and the line heights are held fixed: an error in the line moves every elevation
together and leaves the wetted figures relative to the water unchanged only if the water level was
read from the same line.

Two methods, numpy only, both in memory O(stations + draws):

* ``"monte-carlo"`` -- many perturbed copies of the section (fixed seed, so reports repeat),
  drawn and measured a chunk at a time;
* ``"linear"`` -- first-order propagation (the law of propagation of uncertainty, JCGM 100:2008
  eq. 10) with the exact sensitivities of :func:`stakeline.survey.geometry.figure_gradients`:
  each point moves only the two segments beside it.

``"auto"`` (the default) takes Monte Carlo while stations × draws stays small (about a
thousand stations at the default 4,000 draws) and first-order propagation beyond; the two agree
within the Monte Carlo sampling error (tested).

Bands are expanded uncertainties U = 2·u (coverage factor k = 2, about 95 %), following the
*Guide to the expression of uncertainty in measurement* (JCGM 100:2008).  Manning's n is far less
certain than any reading; :func:`discharge_for_roughness` shows Q at the low and high n of the
chosen table row, which is nearly always the wider spread.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey.geometry import Section, figure_gradients, profile_figures
from stakeline.survey.hydraulics import flow_at
from stakeline.survey.roughness import RoughnessRow
from stakeline.survey.units import UNITS_BY_KEY, unit_of

DEFAULT_PRECISION = {
    key: (unit.reading_precision, unit.station_precision) for key, unit in UNITS_BY_KEY.items()
}
"""(reading, station) precision by survey unit, common practice for a plumb and a tape."""

DEFAULT_SEED = 20_260_414
DEFAULT_DRAWS = 4000
COVERAGE = 2.0
FIGURES = ("area", "wetted_perimeter", "top_width", "hydraulic_radius")
METHODS = ("auto", "monte-carlo", "linear")
"""Ways of finding a band (see the module notes)."""

AUTO_LIMIT = 4_000_000
"""``"auto"`` takes Monte Carlo while stations × draws is at most this."""

CHUNK = 131_072
"""Stations × draws measured at once by Monte Carlo (1 MB per array: cache-sized, and memory
stays O(stations + draws))."""

figures_at = profile_figures
"""The vectorised many-profile figures (kept here under its old name)."""


@dataclass(frozen=True)
class Precision:
    """Standard deviation of one reading and of one station, survey unit.

    Examples
    --------
    >>> Precision.default("ft")
    Precision(reading=0.02, station=0.03)
    """

    reading: float
    station: float

    @classmethod
    def default(cls, unit: str) -> Precision:
        """The default precision for ``unit`` (``"m"`` or ``"ft"``)."""
        u = unit_of(unit)
        return cls(u.reading_precision, u.station_precision)

    def __post_init__(self):
        for name in ("reading", "station"):
            v = getattr(self, name)
            if not (math.isfinite(v) and v >= 0):
                raise SurveyError(f"{name} precision must be zero or a positive number, got {v!r}")


@dataclass(frozen=True)
class Band:
    """A figure with its expanded uncertainty ``plus_minus`` (k = 2) and its low/high ends.

    Examples
    --------
    >>> Band(2.5, 0.0123, 2.49, 2.51).text()
    '2.500 ± 0.012'
    """

    value: float
    plus_minus: float
    low: float
    high: float

    @property
    def relative(self) -> float:
        """``plus_minus`` as a fraction of the value (0 when the value is 0)."""
        return self.plus_minus / abs(self.value) if self.value else 0.0

    def text(self, digits: int = 3) -> str:
        """``"value ± U"`` with ``digits`` decimals."""
        return f"{self.value:.{digits}f} ± {self.plus_minus:.{digits}f}"


def method_for(section: Section, method: str = "auto", draws: int = DEFAULT_DRAWS) -> str:
    """``"monte-carlo"`` or ``"linear"``: the method ``method`` stands for on ``section``.

    >>> method_for(Section([0, 1, 2], [1, 0, 1])), method_for(Section([0, 1, 2], [1, 0, 1]), "linear")
    ('monte-carlo', 'linear')
    """
    if method not in METHODS:
        raise SurveyError(f"uncertainty method {method!r}: use 'monte-carlo', 'linear' or 'auto'")
    if method == "auto":
        return "monte-carlo" if len(section) * draws <= AUTO_LIMIT else "linear"
    if method == "monte-carlo" and draws < 100:
        raise SurveyError(f"at least 100 draws are needed for a Monte Carlo band, got {draws}")
    return method


def _linear(section: Section, stage: float, precision: Precision) -> dict[str, float]:
    """Standard uncertainty of each figure, and the relative one of A^(5/3)·P^(-2/3) (key
    ``"manning"``), by first-order propagation with exact sensitivities; O(stations)."""
    x, z = section.stations, section.elevations
    grads = figure_gradients(x, z, stage)
    starts = np.flatnonzero(np.r_[True, np.diff(x) != 0])  # points at one station: one tape
    water = section.at(stage)
    area, perimeter = water.area, water.wetted_perimeter
    grads["hydraulic_radius"] = tuple(
        (ga * perimeter - area * gp) / perimeter**2 if perimeter > 0 else 0.0 * ga
        for ga, gp in zip(grads["area"], grads["wetted_perimeter"], strict=True)
    )
    grads["manning"] = tuple(
        5 / 3 * ga / area - 2 / 3 * gp / perimeter if area > 0 else 0.0 * ga
        for ga, gp in zip(grads["area"], grads["wetted_perimeter"], strict=True)
    )
    out = {}
    for name, (gz, gx) in grads.items():
        by_station = np.add.reduceat(gx, starts)
        out[name] = math.sqrt(
            precision.reading**2 * float(np.dot(gz, gz))
            + precision.station**2 * float(np.dot(by_station, by_station))
        )
    return out


def _monte_carlo(
    section: Section, stage: float, precision: Precision, draws: int, seed: int
) -> dict[str, np.ndarray]:
    """The figures of ``draws`` perturbed copies, measured a chunk at a time (memory O(stations
    + draws))."""
    rng = np.random.default_rng(seed)
    x, z = section.stations, section.elevations
    unique, which = np.unique(x, return_inverse=True)
    out = {name: np.empty(draws) for name in FIGURES}
    step = max(1, CHUNK // x.size)
    for start in range(0, draws, step):
        k = min(step, draws - start)
        dx = rng.normal(0.0, precision.station, (k, unique.size))[:, which]
        dz = rng.normal(0.0, precision.reading, (k, x.size))
        # A draw that reverses two close stations is read as a vertical face, not a backward step.
        px = np.maximum.accumulate(x + dx, axis=1)
        fig = profile_figures(px, z + dz, stage)
        for name in FIGURES:
            out[name][start : start + k] = fig[name]
    return out


def geometry_bands(
    section: Section,
    stage: float,
    precision: Precision,
    method: str = "auto",
    draws: int = DEFAULT_DRAWS,
    seed: int = DEFAULT_SEED,
) -> dict[str, Band]:
    """Bands on area (unit²), wetted perimeter, top width and hydraulic radius (unit) at ``stage``.

    ``method`` is ``"monte-carlo"`` (``draws`` copies, generator seeded with ``seed``),
    ``"linear"`` (first-order) or ``"auto"`` (see the module notes).  The central value is
    always the exact figure of the section as surveyed.

    Examples
    --------
    >>> square = Section([0, 0, 4, 4], [2, 0, 0, 2])
    >>> bands = geometry_bands(square, 1.0, Precision(0.005, 0.01), "linear")
    >>> round(bands["area"].plus_minus, 4)  # 2·√(0.005²·(2² + 2²) + 0.01²·(1² + 1²))
    0.04
    """
    water = section.at(stage)
    exact = {name: getattr(water, name) for name in FIGURES}
    if method_for(section, method, draws) == "linear":
        u = _linear(section, float(stage), precision)
        return {
            name: Band(exact[name], COVERAGE * u[name], exact[name] - COVERAGE * u[name],
                       exact[name] + COVERAGE * u[name])
            for name in FIGURES
        }  # fmt: skip
    fig = _monte_carlo(section, float(stage), precision, draws, seed)
    return {name: _band(exact[name], fig[name]) for name in FIGURES}


def _band(value: float, samples: np.ndarray) -> Band:
    u = COVERAGE * float(np.std(samples, ddof=1))
    low, high = np.percentile(samples, [2.5, 97.5])
    return Band(float(value), u, float(low), float(high))


def discharge_band(
    section: Section,
    stage: float,
    n,
    slope: float,
    unit: str,
    precision: Precision,
    splits=None,
    draws: int = DEFAULT_DRAWS,
    seed: int = DEFAULT_SEED,
    method: str = "auto",
) -> Band:
    """Band on discharge (unit³/s) from the readings alone, n and slope held fixed.

    The relative spread of the single-channel Manning figure A^(5/3)·P^(-2/3) (over the perturbed
    copies, or by first-order propagation) is applied to the discharge (the divided-channel one
    when ``splits`` are given).  ``method`` as in :func:`geometry_bands`.

    Examples
    --------
    >>> square = Section([0, 0, 4, 4], [2, 0, 0, 2])
    >>> band = discharge_band(square, 1.0, 0.03, 0.001, "m", Precision(0.005, 0.01), method="linear")
    >>> round(band.value, 4), band.plus_minus > 0
    (3.2177, True)
    """
    value = flow_at(section, stage, n, slope, unit, splits).discharge
    water = section.at(stage)
    if water.area <= 0:
        return Band(0.0, 0.0, 0.0, 0.0)
    if method_for(section, method, draws) == "linear":
        u = COVERAGE * value * _linear(section, float(stage), precision)["manning"]
        return Band(value, u, value - u, value + u)
    fig = _monte_carlo(section, float(stage), precision, draws, seed)
    base = water.area ** (5 / 3) * water.wetted_perimeter ** (-2 / 3)
    perimeter = fig["wetted_perimeter"]
    ratio = np.zeros(draws)
    good = perimeter > 0
    ratio[good] = fig["area"][good] ** (5 / 3) * perimeter[good] ** (-2 / 3) / base
    return _band(value, value * ratio)


def discharge_for_roughness(
    section: Section, stage: float, row: RoughnessRow, slope: float, unit: str, splits=None, n=None
) -> dict[str, float]:
    """Discharge (unit³/s) at the minimum, normal and maximum n of a roughness table row.

    With ``splits``, ``n`` lists the subsection values used for the normal figure; every value is
    scaled by the row's minimum/normal and maximum/normal ratios.  Low n gives the high discharge.

    Examples
    --------
    >>> from stakeline.survey.roughness import roughness
    >>> q = discharge_for_roughness(Section([0, 0, 4, 4], [2, 0, 0, 2]), 1.0,
    ...                             roughness("clean-winding"), 0.001, "m")
    >>> round(q["minimum"] / q["normal"], 4)            # Q ∝ 1/n: 0.040 / 0.033
    1.2121
    """
    base = np.atleast_1d(np.asarray(row.normal if n is None else n, dtype=float))
    out = {}
    for which in ("minimum", "normal", "maximum"):
        values = base * row.value(which) / row.normal
        arg = values.tolist() if splits else float(values[0])
        out[which] = flow_at(section, stage, arg, slope, unit, splits).discharge
    return out

"""How the crew's reading precision carries through to area, perimeter and discharge.

Each plumb (or rod) reading and each tape station is taken to carry an independent error whose
standard deviation is the crew's stated precision (defaults ±5 mm on readings and ±10 mm on
stations, or ±0.02 ft / ±0.03 ft).  Points at one station (a vertical face) share one tape reading.
The water level and the line heights are held fixed: an error in the line moves every elevation
together and leaves the wetted figures relative to the water unchanged only if the water level was
read from the same line.

Two methods, numpy only:

* ``"monte-carlo"`` -- many perturbed copies of the section (fixed seed, so reports repeat);
* ``"linear"`` -- first-order propagation with the sensitivities found by central differences.

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
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_at
from stakeline.survey.reduction import check_unit
from stakeline.survey.roughness import RoughnessRow

DEFAULT_PRECISION = {"m": (0.005, 0.010), "ft": (0.02, 0.03)}
"""(reading, station) precision by survey unit, common practice for a plumb and a tape."""

DEFAULT_SEED = 20_260_414
DEFAULT_DRAWS = 4000
COVERAGE = 2.0
FIGURES = ("area", "wetted_perimeter", "top_width", "hydraulic_radius")


@dataclass(frozen=True)
class Precision:
    """Standard deviation of one reading and of one station, survey unit."""

    reading: float
    station: float

    @classmethod
    def default(cls, unit: str) -> Precision:
        """The default precision for ``unit`` (``"m"`` or ``"ft"``)."""
        reading, station = DEFAULT_PRECISION[check_unit(unit)]
        return cls(reading, station)

    def __post_init__(self):
        for name in ("reading", "station"):
            v = getattr(self, name)
            if not (math.isfinite(v) and v >= 0):
                raise SurveyError(f"{name} precision must be zero or a positive number, got {v!r}")


@dataclass(frozen=True)
class Band:
    """A figure with its expanded uncertainty ``plus_minus`` (k = 2) and its low/high ends."""

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


def figures_at(stations, elevations, stage: float) -> dict[str, np.ndarray]:
    """Area, wetted perimeter, top width and hydraulic radius of many profiles at one level.

    ``stations`` and ``elevations`` are arrays of shape ``(profiles, points)`` (or 1-D for one);
    every depression below the level is wet, exactly as :meth:`stakeline.survey.geometry.Section.at`.
    """
    x = np.atleast_2d(np.asarray(stations, dtype=float))
    z = np.atleast_2d(np.asarray(elevations, dtype=float))
    w = np.diff(x, axis=-1)
    d0, d1 = stage - z[..., :-1], stage - z[..., 1:]
    p0, p1 = np.maximum(d0, 0.0), np.maximum(d1, 0.0)
    crossing = d0 * d1 < 0
    with np.errstate(divide="ignore", invalid="ignore"):
        gap = np.abs(d0 - d1)
        wet = np.where(crossing, (p0 + p1) / np.where(crossing, gap, 1.0), (d0 > 0) | (d1 > 0))
        area = np.where(crossing, w * (p0**2 + p1**2) / (2 * np.where(crossing, gap, 1.0)), 0.0)
    area = np.where(crossing, area, w * (p0 + p1) / 2.0).sum(axis=-1)
    wet = np.where((d0 == 0) & (d1 == 0), 0.0, wet)
    perimeter = (np.hypot(w, d1 - d0) * wet).sum(axis=-1)
    top = (w * wet).sum(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        radius = np.where(perimeter > 0, area / perimeter, 0.0)
    return {
        "area": area,
        "wetted_perimeter": perimeter,
        "top_width": top,
        "hydraulic_radius": radius,
    }


def _perturbed(section: Section, precision: Precision, draws: int, seed: int):
    rng = np.random.default_rng(seed)
    x, z = section.stations, section.elevations
    unique, which = np.unique(x, return_inverse=True)
    dx = rng.normal(0.0, precision.station, (draws, unique.size))[:, which]
    dz = rng.normal(0.0, precision.reading, (draws, x.size))
    # A draw that reverses two close stations is read as a vertical face, not a backward step.
    px = np.maximum.accumulate(x + dx, axis=1)
    return px, z + dz


def _sensitivities(section: Section, stage: float, precision: Precision) -> dict[str, np.ndarray]:
    """Variance of each figure from first-order propagation (central differences)."""
    x, z = section.stations, section.elevations
    unique, which = np.unique(x, return_inverse=True)
    relief = max(float(z.max() - z.min()), 1e-9)
    hz = 1e-6 * relief
    hx = 1e-6 * max(float(x[-1] - x[0]), 1e-9)
    eye_z = np.eye(x.size)
    eye_x = np.eye(unique.size)[:, which]
    xs = np.concatenate([x + hx * eye_x, x - hx * eye_x, np.broadcast_to(x, (2 * x.size, x.size))])
    zs = np.concatenate(
        [np.broadcast_to(z, (2 * unique.size, x.size)), z + hz * eye_z, z - hz * eye_z]
    )
    fig = figures_at(xs, zs, stage)
    m, n = unique.size, x.size
    out = {}
    for name in FIGURES:
        f = fig[name]
        gx = (f[:m] - f[m : 2 * m]) / (2 * hx)
        gz = (f[2 * m : 2 * m + n] - f[2 * m + n :]) / (2 * hz)
        out[name] = np.sum((gx * precision.station) ** 2) + np.sum((gz * precision.reading) ** 2)
    return out


def geometry_bands(
    section: Section,
    stage: float,
    precision: Precision,
    method: str = "monte-carlo",
    draws: int = DEFAULT_DRAWS,
    seed: int = DEFAULT_SEED,
) -> dict[str, Band]:
    """Bands on area (unit²), wetted perimeter, top width and hydraulic radius (unit) at ``stage``.

    ``method`` is ``"monte-carlo"`` (``draws`` copies, generator seeded with ``seed``) or
    ``"linear"``.  The central value is always the exact figure of the section as surveyed.
    """
    water = section.at(stage)
    exact = {name: getattr(water, name) for name in FIGURES}
    if method == "linear":
        var = _sensitivities(section, float(stage), precision)
        bands = {}
        for name in FIGURES:
            u = COVERAGE * math.sqrt(var[name])
            bands[name] = Band(exact[name], u, exact[name] - u, exact[name] + u)
        return bands
    if method != "monte-carlo":
        raise SurveyError(f"uncertainty method {method!r}: use 'monte-carlo' or 'linear'")
    if draws < 100:
        raise SurveyError(f"at least 100 draws are needed for a Monte Carlo band, got {draws}")
    px, pz = _perturbed(section, precision, draws, seed)
    fig = figures_at(px, pz, float(stage))
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
) -> Band:
    """Band on discharge (unit³/s) from the readings alone, n and slope held fixed.

    The relative spread of the single-channel Manning figure A^(5/3)·P^(-2/3) over the perturbed
    copies is applied to the discharge (the divided-channel one when ``splits`` are given).
    """
    value = flow_at(section, stage, n, slope, unit, splits).discharge
    px, pz = _perturbed(section, precision, draws, seed)
    fig = figures_at(px, pz, float(stage))
    water = section.at(stage)
    if water.area <= 0:
        return Band(0.0, 0.0, 0.0, 0.0)
    base = water.area ** (5 / 3) * water.wetted_perimeter ** (-2 / 3)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(
            fig["wetted_perimeter"] > 0,
            fig["area"] ** (5 / 3) * fig["wetted_perimeter"] ** (-2 / 3) / base,
            0.0,
        )
    return _band(value, value * ratio)


def discharge_for_roughness(
    section: Section, stage: float, row: RoughnessRow, slope: float, unit: str, splits=None, n=None
) -> dict[str, float]:
    """Discharge (unit³/s) at the minimum, normal and maximum n of a roughness table row.

    With ``splits``, ``n`` lists the subsection values used for the normal figure; every value is
    scaled by the row's minimum/normal and maximum/normal ratios.  Low n gives the high discharge.
    """
    base = np.atleast_1d(np.asarray(row.normal if n is None else n, dtype=float))
    out = {}
    for which in ("minimum", "normal", "maximum"):
        values = base * row.value(which) / row.normal
        arg = values.tolist() if splits else float(values[0])
        out[which] = flow_at(section, stage, arg, slope, unit, splits).discharge
    return out

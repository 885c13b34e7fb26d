"""Discharge by the velocity-area method: depths x mean velocities x widths at the verticals.

Two published computations (Turnipseed & Sauer 2010, USGS TM 3-A8; ISO 748; USBR Water
Measurement Manual ch. 10):

* **midsection** -- vertical i carries ``q_i = v_i · d_i · (b_{i+1} - b_{i-1}) / 2``; the first
  and last verticals (the water's edges) reach half-way to their one neighbour;
* **meansection** -- the panel between verticals i and i+1 carries
  ``q = (v_i + v_{i+1})/2 · (d_i + d_{i+1})/2 · (b_{i+1} - b_i)``.

``b`` is the station and ``d`` the depth (survey unit), ``v`` the mean velocity in the vertical
normal to the section (unit/s).  The first and last verticals are the water's edges: normally of
zero depth (no flow), or a measured edge depth (a wall, a cut bank) whose velocity is read or
estimated as ``edge_factor`` x the velocity of the neighbouring vertical (an option; the factor
is the hydrographer's judgement).  A velocity not yet read is NaN: that vertical (and, in the
mean-section method, its two panels) carries nothing yet, so the discharge grows as velocities
are entered, and :func:`stakeline.gauging.findings.gauging_findings` names what is missing.

Cheap enough to run after every entered velocity (a few tens of microseconds for hundreds of
verticals; ``bench/bench_gauging.py``).

>>> r = velocity_area([0, 1, 2, 3, 4], [0, 0.5, 1.0, 0.5, 0], [0, 0.4, 0.6, 0.4, 0])
>>> round(r.discharge, 6), r.area, r.width, round(r.mean_velocity, 6)
(1.0, 2.0, 4.0, 0.5)
>>> r.panel_percent.round(1).tolist()
[0.0, 20.0, 60.0, 20.0, 0.0]
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from stakeline.gauging.units import GaugingError, gauging_unit, plain
from stakeline.gauging.vertical import normal_velocity
from stakeline.survey.geometry import Section, water_strip

DISCHARGE_METHODS = ("midsection", "meansection")
"""Computations of the discharge from the verticals."""

PANEL_KEYS = ("station", "left", "right", "width", "depth", "velocity", "discharge", "percent")
"""Keys of each panel in :meth:`Discharge.as_dict`, in print order."""


@dataclass(frozen=True, eq=False)
class Discharge:
    """A discharge by the velocity-area method, with its panels.

    Totals: ``discharge`` (unit³/s), ``area`` (unit²), ``width`` (unit, first to last vertical)
    and ``mean_velocity`` (discharge / area, unit/s).  The verticals as used: ``stations``,
    ``depths`` and ``velocities`` (normal to the section, edge estimates filled in, NaN where not
    read).  Panels, as arrays: one per vertical (midsection) or per pair of neighbouring
    verticals (meansection), each with its ``panel_station`` (the vertical, or the panel's
    middle), ``panel_left`` and ``panel_right`` bounds, ``panel_width``, ``panel_depth``,
    ``panel_velocity`` (NaN where not read), ``panel_discharge`` and ``panel_percent`` (of the
    discharge so far; all 0 while it is 0).  ``missing`` lists the wet verticals with no velocity.
    """

    method: str
    unit: str
    discharge: float
    area: float
    width: float
    mean_velocity: float
    stations: np.ndarray
    depths: np.ndarray
    velocities: np.ndarray
    panel_station: np.ndarray
    panel_left: np.ndarray
    panel_right: np.ndarray
    panel_width: np.ndarray
    panel_depth: np.ndarray
    panel_velocity: np.ndarray
    panel_discharge: np.ndarray
    panel_percent: np.ndarray
    missing: tuple[int, ...] = ()

    @property
    def complete(self) -> bool:
        """True when every wet vertical has a velocity."""
        return not self.missing

    def panels(self) -> list[dict]:
        """Panels as plain dicts keyed by :data:`PANEL_KEYS` (None for a velocity not read)."""
        columns = [
            self.panel_station,
            self.panel_left,
            self.panel_right,
            self.panel_width,
            self.panel_depth,
            self.panel_velocity,
            self.panel_discharge,
            self.panel_percent,
        ]
        rows = zip(*(c.tolist() for c in columns), strict=True)
        return [dict(zip(PANEL_KEYS, map(plain, row), strict=True)) for row in rows]

    def as_dict(self) -> dict:
        """JSON-ready dict: ``discharge``, ``area``, ``width``, ``mean_velocity``, ``method``,
        ``unit``, ``verticals``, ``complete``, ``missing`` (stations) and ``panels`` (see :meth:`panels`)."""
        return {
            "discharge": self.discharge,
            "area": self.area,
            "width": self.width,
            "mean_velocity": self.mean_velocity,
            "method": self.method,
            "unit": self.unit,
            "verticals": int(self.stations.size),
            "complete": self.complete,
            "missing": [float(self.stations[i]) for i in self.missing],
            "panels": self.panels(),
        }


def _array(values, name: str, n: int | None = None, allow_nan: bool = False) -> np.ndarray:
    try:
        arr = np.array(values, dtype=float)  # a copy: the result must not follow later edits
    except (TypeError, ValueError):
        arr = np.array([np.nan if v is None or v == "" else v for v in values], dtype=float)
    if arr.ndim != 1:
        raise GaugingError(f"{name} must be a 1-D sequence, got shape {arr.shape}")
    if n is not None and arr.size != n:
        raise GaugingError(f"{arr.size} {name} for {n} verticals: give one per vertical")
    bad = np.isinf(arr) if allow_nan else ~np.isfinite(arr)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        one = {"velocities": "velocity"}.get(name, name[:-1])
        raise GaugingError(f"vertical {i + 1}: {one} {arr[i]} is not a finite number", i)
    return arr


def _verticals(stations, depths, velocities, angles):
    x = _array(stations, "stations")
    n = x.size
    if n < 2:
        raise GaugingError(f"a gauging needs at least 2 verticals (the water's edges), got {n}")
    d = _array(depths, "depths", n)
    v = _array(velocities, "velocities", n, allow_nan=True)
    step = np.diff(x)
    if not (step > 0).all():
        i = int(np.flatnonzero(step <= 0)[0]) + 1
        raise GaugingError(
            f"vertical {i + 1}: station {x[i]:g} is not beyond the one before it ({x[i - 1]:g}); "
            "stations must increase across the water",
            i,
            float(x[i]),
        )
    if (d < 0).any():
        i = int(np.flatnonzero(d < 0)[0])
        raise GaugingError(
            f"vertical {i + 1}: depth {d[i]:g} at station {x[i]:g} is negative", i, float(x[i])
        )
    if angles is not None:
        angle = _array(angles, "angles", n, allow_nan=True)
        v = normal_velocity(v, np.where(np.isnan(angle), 0.0, angle))
    return x, d, v


def _fill_edges(d: np.ndarray, v: np.ndarray, edge_factor: float | None) -> np.ndarray:
    """Velocities with 0 where there is no water and estimated wet edges, as a new array."""
    v = np.where(np.isnan(v) & (d == 0), 0.0, v)
    if edge_factor is not None:
        factor = float(edge_factor)
        if not (np.isfinite(factor) and 0 <= factor <= 1):
            raise GaugingError(f"the edge factor must be between 0 and 1, got {edge_factor!r}")
        for edge, neighbour in ((0, 1), (v.size - 1, v.size - 2)):
            if np.isnan(v[edge]):
                v[edge] = factor * v[neighbour]
    return v


def velocity_area(
    stations,
    depths,
    velocities,
    method: str = "midsection",
    *,
    angles=None,
    edge_factor: float | None = None,
    unit: str = "m",
) -> Discharge:
    """Discharge by the velocity-area ``method`` (``"midsection"`` or ``"meansection"``).

    ``stations`` (increasing) and ``depths`` in the survey ``unit``; ``velocities`` the mean
    velocity in each vertical (unit/s; NaN or None where not read yet); ``angles`` (degrees,
    optional) the angle of the flow to the normal of the section at each vertical, applied as
    ``cos(angle)`` (NaN or None: 0); ``edge_factor`` estimates the velocity of a wet edge left unread as that
    share of its neighbour's.  Malformed input raises
    :class:`stakeline.gauging.units.GaugingError` naming the vertical.
    """
    gauging_unit(unit)  # refuses an unknown unit
    if method not in DISCHARGE_METHODS:
        raise GaugingError(f"discharge method {method!r}: use midsection or meansection")
    x, d, v = _verticals(stations, depths, velocities, angles)
    v = _fill_edges(d, v, edge_factor)
    missing = tuple(np.flatnonzero(np.isnan(v)).tolist())
    if method == "midsection":
        panels = _midsection(x, d, v)
    else:
        panels = _meansection(x, d, v)
    station, left, right, width, depth, velocity, q = panels
    q = np.where(np.isnan(q), 0.0, q)
    total = float(q.sum())
    area = float(np.dot(width, depth))
    percent = 100.0 * q / total if total != 0 else np.zeros_like(q)
    for arr in (x, d, v, *panels[:-1], q, percent):
        arr.flags.writeable = False
    return Discharge(
        method=method,
        unit=unit,
        discharge=total,
        area=area,
        width=float(x[-1] - x[0]),
        mean_velocity=total / area if area > 0 else 0.0,
        stations=x,
        depths=d,
        velocities=v,
        panel_station=station,
        panel_left=left,
        panel_right=right,
        panel_width=width,
        panel_depth=depth,
        panel_velocity=velocity,
        panel_discharge=q,
        panel_percent=percent,
        missing=missing,
    )


def _midsection(x, d, v):
    half = 0.5 * (x[1:] + x[:-1])
    left = np.concatenate(([x[0]], half))
    right = np.concatenate((half, [x[-1]]))
    width = right - left
    return x, left, right, width, d, v, v * d * width


def _meansection(x, d, v):
    left, right = x[:-1], x[1:]
    width = right - left
    depth = 0.5 * (d[:-1] + d[1:])
    velocity = 0.5 * (v[:-1] + v[1:])
    return 0.5 * (left + right), left, right, width, depth, velocity, velocity * depth * width


def verticals_from_section(section: Section, stage: float) -> tuple[np.ndarray, np.ndarray]:
    """Stations and depths (survey unit) of the verticals of a gauging at the surveyed stations.

    The section's stations from the first water's edge to the last, with the edges inserted at
    zero depth; a vertical face at an edge (two points at one station) gives one vertical with
    the measured depth at its foot.  Dry stations inside (a bar) stay, at zero depth.

    >>> s, d = verticals_from_section(Section([0, 1, 2, 3, 4], [2, 1, 0, 1, 2]), 1.5)
    >>> s.tolist(), d.tolist()
    ([0.5, 1.0, 2.0, 3.0, 3.5], [0.0, 0.5, 1.5, 0.5, 0.0])
    """
    level = float(stage)
    section.edges(level)  # refuses an overtopped or non-finite level with the section's message
    x, bottom = water_strip(section.stations, section.elevations, level)
    depth = level - bottom
    wet = np.flatnonzero(depth > 0)
    if wet.size == 0:
        return np.zeros(0), np.zeros(0)
    lo = max(int(wet[0]) - 1, 0)
    hi = min(int(wet[-1]) + 1, x.size - 1)
    x, depth = x[lo : hi + 1], depth[lo : hi + 1]
    keep = np.ones(x.size, dtype=bool)
    same = np.flatnonzero(np.diff(x) == 0)
    for i in same[::-1]:  # a vertical face: keep the deeper reading at that station
        deeper = i if depth[i] >= depth[i + 1] else i + 1
        keep[i + i + 1 - deeper] = False
        depth[deeper] = max(depth[i], depth[i + 1])
    return x[keep], depth[keep]

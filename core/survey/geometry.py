"""Exact geometry of a surveyed channel cross-section at a water level.

The ground between neighbouring points is a straight line, so every figure is exact for that
polygonal ground: the wetted area is piecewise quadratic in the stage and the top width and wetted
perimeter are piecewise linear, with breakpoints at the point elevations.  ``Section`` builds that
piecewise form once; figures for any number of stages are then a ``searchsorted`` and a few
multiplications.  numpy only (no shapely), so the field runtime stays easy to package.

All lengths are in the survey's one length unit (metres or feet); areas in that unit squared.

Examples
--------
>>> s = Section([0, 0, 4, 4], [2, 0, 0, 2])          # a 4-wide rectangle with vertical walls
>>> w = s.at(1.0)
>>> w.area, w.wetted_perimeter, w.top_width, w.edges
(4.0, 6.0, 4.0, [(0.0, 4.0)])
>>> s.at(0.0).area                                  # dry is a value, not an error
0.0
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from stakeline.errors import OvertoppedError, SectionError
from stakeline.survey.units import Unit

FIGURES = (
    "area",
    "wetted_perimeter",
    "top_width",
    "hydraulic_radius",
    "hydraulic_depth",
    "max_depth",
)
"""Names of the figures returned by :meth:`Section.at` (besides ``edges``) and :meth:`Section.table`."""

# Segments that rise less than this fraction of the section's relief (0.1 micrometre per metre)
# are taken as flat steps at their mid elevation.  That is exact for every stage outside the
# segment's own sliver of height, and it keeps the slopes 1/rise -- which would otherwise swamp
# the running sums in rounding error -- bounded.  Far below any readable difference.
_FLAT_FRACTION = 1e-7


@dataclass(frozen=True)
class WaterSection:
    """Figures of the wetted part of a section at one water level (see :meth:`Section.at`).

    Attributes
    ----------
    area : float
        Wetted area, unit².
    wetted_perimeter, top_width, hydraulic_radius, hydraulic_depth, max_depth : float
        Lengths in the survey unit (R = A/P, D = A/T, deepest water = level - lowest point).
    edges : list of (float, float)
        ``(left_station, right_station)`` of each wetted part, left to right.

    Examples
    --------
    >>> Section([0, 2, 4], [2, 0, 2]).at(1.0).as_dict()["edges"]
    [[1.0, 3.0]]
    """

    area: float
    wetted_perimeter: float
    top_width: float
    hydraulic_radius: float
    hydraulic_depth: float
    max_depth: float
    edges: list[tuple[float, float]] = field(default_factory=list)

    def as_dict(self) -> dict:
        """Plain dict with the figure names as keys and edges as a list of ``[left, right]`` pairs."""
        out = {name: getattr(self, name) for name in FIGURES}
        out["edges"] = [[left, right] for left, right in self.edges]
        return out


def point_array(values: Sequence[float], name: str, finite: bool = True) -> np.ndarray:
    """``values`` as a 1-D float array; a :class:`SectionError` names the first bad point (1-based).

    ``name`` is the quantity for messages (``"station"``); with ``finite`` NaN and inf are refused.
    """
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        for i, v in enumerate(values):
            try:
                float(v)
            except (TypeError, ValueError):
                raise SectionError(
                    f"point {i + 1}: {name} {v!r} is not a number", index=i
                ) from None
        raise SectionError(f"{name} are not a sequence of numbers") from None
    if arr.ndim != 1:
        raise SectionError(f"{name} must be a 1-D sequence, got shape {arr.shape}")
    bad = np.flatnonzero(~np.isfinite(arr)) if finite else ()
    if len(bad):
        i = int(bad[0])
        if isinstance(values, list | tuple) and values[i] is None:
            raise SectionError(f"point {i + 1}: {name} is missing (not recorded)", index=i)
        raise SectionError(f"point {i + 1}: {name} {arr[i]} is not a finite number", index=i)
    if finite:
        check_magnitude(arr, name)
    return arr


def snap_stations(x: np.ndarray) -> np.ndarray:
    """Sorted stations ``x`` with every one closer than :attr:`Unit.RESOLUTION` to the one before
    it moved onto it: no tape reads closer, so the two points are one station (a vertical face).

    >>> snap_stations(np.array([0.0, 1e-300, 2.0])).tolist()
    [0.0, 0.0, 2.0]
    """
    starts = np.r_[True, np.diff(x) >= Unit.RESOLUTION]
    if starts.all():
        return x
    return x[np.flatnonzero(starts)][np.cumsum(starts) - 1]


def close_stations(x: np.ndarray) -> np.ndarray:
    """Indices of stations closer than :attr:`Unit.RESOLUTION` (a micrometre in metres) to the
    station before them, yet not equal to it (stations sorted).

    >>> close_stations(np.array([0.0, 1e-300, 1.0, 1.0])).tolist()
    [1]
    """
    step = np.diff(np.asarray(x, dtype=float))
    return np.flatnonzero((step > 0) & (step < Unit.RESOLUTION)) + 1


def check_magnitude(values: np.ndarray, name: str) -> None:
    """Refuse stations or elevations beyond ±10^6 of the survey unit (no survey reaches them,
    and the figures of such numbers overflow): a :class:`SectionError` naming the point."""
    with np.errstate(invalid="ignore"):
        far = np.flatnonzero(np.abs(values) > Unit.LIMIT)
    if far.size:
        i = int(far[0])
        raise SectionError(
            f"point {i + 1}: {name} {values[i]:g} is beyond ±{Unit.LIMIT:,.0f} of the survey "
            "unit; check the number (a digit typed twice, or a wrong unit?)",
            index=i,
        )


def water_strip(x: np.ndarray, z: np.ndarray, level: float) -> tuple[np.ndarray, np.ndarray]:
    """Points of the water's bottom edge at ``level``: stations with the water's edges inserted.

    Returns ``(stations, bottoms)`` where ``bottoms = min(ground, level)``; a triangle strip between
    ``(stations, level)`` and ``(stations, bottoms)`` fills exactly the wetted area (dry stretches
    have zero height).  Lengths in the survey unit.

    >>> s, b = water_strip(np.array([0.0, 2.0, 4.0]), np.array([2.0, 0.0, 2.0]), 1.0)
    >>> s.tolist(), b.tolist()
    ([0.0, 1.0, 2.0, 3.0, 4.0], [1.0, 1.0, 0.0, 1.0, 1.0])
    """
    depth = z - level
    crossing = np.flatnonzero(depth[:-1] * depth[1:] < 0)
    if crossing.size:
        i = crossing
        edge = x[i] + (x[i + 1] - x[i]) * depth[i] / (depth[i] - depth[i + 1])
        x = np.insert(x, i + 1, edge)
        z = np.insert(z, i + 1, level)
    return x, np.minimum(z, level)


class Section:
    """A surveyed cross-section: stations (distance across) and ground elevations, one length unit.

    Stations must not decrease; two equal neighbouring stations describe a vertical face (a wall
    or cut bank), and stations closer than a micrometre (:attr:`Unit.RESOLUTION` of the unit)
    are taken as equal (the places where a person gives stations refuse them).  Stations and
    elevations beyond ±10^6 of the unit are refused.  Malformed input raises
    :class:`stakeline.errors.SectionError` (a ``ValueError``) naming the offending point
    (1-based, as a crew counts them).

    Parameters
    ----------
    stations : sequence of float
        Distance across from the origin stake, survey unit, not decreasing.
    elevations : sequence of float
        Ground elevation at each station, survey unit.

    Examples
    --------
    >>> s = Section([0, 1, 3, 4], [2.0, 0.0, 0.0, 2.0])   # a trapezoid, bed 2 wide
    >>> w = s.at(1.0)
    >>> w.area, w.top_width, round(w.wetted_perimeter, 6)  # (2 + 3)/2·1, 3, 2 + 2·√(0.5² + 1)
    (2.5, 3.0, 4.236068)
    >>> s.table([0.5, 1.0])["top_width"].tolist()
    [2.5, 3.0]
    >>> Section([0, 1], [1.0, float("nan")])
    Traceback (most recent call last):
    ...
    stakeline.errors.SectionError: point 2: elevation nan is not a finite number
    """

    def __init__(self, stations: Sequence[float], elevations: Sequence[float]):
        x = point_array(stations, "station")
        z = point_array(elevations, "elevation")
        if x.size != z.size:
            raise SectionError(
                f"{x.size} stations but {z.size} elevations: every station needs one elevation"
            )
        if x.size < 2:
            raise SectionError(f"a section needs at least 2 points, got {x.size}")
        back = np.flatnonzero(np.diff(x) < 0)
        if back.size:
            i = int(back[0]) + 1
            raise SectionError(
                f"point {i + 1}: station {x[i]:g} is less than the station before it "
                f"({x[i - 1]:g}); stations must not decrease",
                index=i,
                station=float(x[i]),
            )
        x = snap_stations(x)
        self.stations = x
        self.elevations = z
        self.stations.flags.writeable = False
        self.elevations.flags.writeable = False
        self._lowest = float(z.min())
        self._limit = float(min(z[0], z[-1]))
        self._build_piecewise()

    def __len__(self) -> int:
        return int(self.stations.size)

    def __repr__(self) -> str:
        return f"Section({len(self)} points, stations {self.stations[0]:g}–{self.stations[-1]:g})"

    @property
    def lowest(self) -> float:
        """Elevation of the lowest point (the thalweg), survey unit."""
        return self._lowest

    @property
    def breakpoints(self) -> np.ndarray:
        """Levels where the piecewise form changes (point elevations, survey unit), ascending.

        Between two of them the area is quadratic and the top width and perimeter linear in the
        stage; at one of them top width and perimeter may step up (a flat stretch flooding).
        """
        return self._breaks

    @property
    def highest_stage(self) -> float:
        """Highest water level the section can hold: the lower of its two ends, survey unit."""
        return self._limit

    def _build_piecewise(self) -> None:
        """Top width and perimeter as sums of ramps and steps in the stage; area as their integral."""
        x, z = self.stations, self.elevations
        width = np.diff(x)
        rise = np.abs(np.diff(z))
        length = np.hypot(width, rise)
        low = np.minimum(z[:-1], z[1:])
        high = np.maximum(z[:-1], z[1:])
        flat = rise <= _FLAT_FRACTION * max(float(z.max() - z.min()), 1.0)
        sloped = ~flat
        middle = 0.5 * (low + high)
        slope_width = np.where(sloped, width / np.where(sloped, rise, 1.0), 0.0)
        slope_length = np.where(sloped, length / np.where(sloped, rise, 1.0), 0.0)
        # Each sloped segment adds +c at its low end and -c at its high end to dT/dh (dP/dh);
        # each flat segment adds a step of its width to T (its length to P) just above it.
        at = np.concatenate([low, high, middle[flat]])
        dwidth = np.concatenate([slope_width, -slope_width, np.zeros(int(flat.sum()))])
        dlength = np.concatenate([slope_length, -slope_length, np.zeros(int(flat.sum()))])
        step_width = np.concatenate([np.zeros(2 * low.size), width[flat]])
        step_length = np.concatenate([np.zeros(2 * low.size), length[flat]])
        breaks, where = np.unique(at, return_inverse=True)
        rate_w = np.cumsum(np.bincount(where, dwidth, breaks.size))
        rate_p = np.cumsum(np.bincount(where, dlength, breaks.size))
        jump_w = np.bincount(where, step_width, breaks.size)
        jump_p = np.bincount(where, step_length, breaks.size)
        gap = np.diff(breaks)
        # Right-hand values at each breakpoint, accumulated interval by interval (all terms >= 0).
        top = np.cumsum(jump_w + np.concatenate([[0.0], rate_w[:-1] * gap]))
        perimeter = np.cumsum(jump_p + np.concatenate([[0.0], rate_p[:-1] * gap]))
        area = np.concatenate([[0.0], np.cumsum(top[:-1] * gap + 0.5 * rate_w[:-1] * gap**2)])
        self._breaks = breaks
        self._rate_w = np.maximum(rate_w, 0.0)
        self._rate_p = np.maximum(rate_p, 0.0)
        self._top = top
        self._perimeter = perimeter
        self._area = area
        # The same columns as Python lists: one at() per keystroke costs microseconds, not numpy calls.
        self._scalar = tuple(
            column.tolist() for column in (breaks, top, self._rate_w, area, perimeter, self._rate_p)
        )

    def _check_stage(self, stage: np.ndarray) -> None:
        if not np.all(np.isfinite(stage)):
            raise SectionError("water level must be a finite number")
        worst = float(stage.max()) if stage.size else -math.inf
        if worst > self._limit:
            x, z = self.stations, self.elevations
            side, i = ("left", 0) if z[0] <= z[-1] else ("right", x.size - 1)
            raise OvertoppedError(side, worst, float(z[i]), i, float(x[i]))

    def table(self, stages: Sequence[float] | float) -> dict[str, np.ndarray]:
        """Figures at many water levels, from the exact piecewise form.

        Returns a dict keyed by :data:`FIGURES`, each a float array shaped like ``stages``.  Lengths
        in the survey unit, area in unit².  A stage at or below the lowest point gives zeros.

        >>> Section([0, 1, 2], [1, 0, 1]).table([0.0, 0.5, 1.0])["area"].tolist()
        [0.0, 0.25, 1.0]
        """
        h = np.asarray(stages, dtype=float)
        self._check_stage(h.ravel())
        k = np.searchsorted(self._breaks, h, side="left") - 1
        wet = k >= 0
        kk = np.where(wet, k, 0)
        dh = np.where(wet, h - self._breaks[kk], 0.0)
        rate_w = self._rate_w[kk]
        top = np.where(wet, self._top[kk] + rate_w * dh, 0.0)
        area = np.where(wet, self._area[kk] + self._top[kk] * dh + 0.5 * rate_w * dh**2, 0.0)
        perimeter = np.where(wet, self._perimeter[kk] + self._rate_p[kk] * dh, 0.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            radius = np.where(perimeter > 0, area / perimeter, 0.0)
            depth = np.where(top > 0, area / top, 0.0)
        return {
            "area": area,
            "wetted_perimeter": perimeter,
            "top_width": top,
            "hydraulic_radius": radius,
            "hydraulic_depth": depth,
            "max_depth": np.maximum(h - self._lowest, 0.0),
        }

    def edges(self, stage: float) -> list[tuple[float, float]]:
        """Water's edges ``(left_station, right_station)`` of each wetted part at ``stage``.

        Edges are interpolated linearly between stations; a bar above the water splits the flow.

        >>> Section([0, 1, 2, 3, 4], [2, 0, 2, 0, 2]).edges(1.0)
        [(0.5, 1.5), (2.5, 3.5)]
        """
        h = self._check_scalar(stage)
        x, z = self.stations, self.elevations
        dry = z >= h
        # Both ends are dry (not overtopped), so the crossings alternate: edge in, edge out.
        i = np.flatnonzero(dry[:-1] != dry[1:])
        cross = (x[i] + (x[i + 1] - x[i]) * (z[i] - h) / (z[i] - z[i + 1])).tolist()
        return list(zip(cross[0::2], cross[1::2], strict=True))

    def _check_scalar(self, stage: float) -> float:
        h = float(stage)
        if not math.isfinite(h):
            raise SectionError("water level must be a finite number")
        if h > self._limit:
            self._check_stage(np.array([h]))
        return h

    def at(self, stage: float) -> WaterSection:
        """All figures at one water level (survey unit; area in unit²), with the water's edges.

        Raises :class:`stakeline.errors.OvertoppedError` when ``stage`` is above either end.
        """
        h = self._check_scalar(stage)
        k = bisect.bisect_left(self._scalar[0], h) - 1
        if k < 0:
            return WaterSection(0.0, 0.0, 0.0, 0.0, 0.0, 0.0, [])
        breaks, top, rate_w, area, perimeter, rate_p = (column[k] for column in self._scalar)
        dh = h - breaks
        top_width = top + rate_w * dh
        wetted_area = area + top * dh + 0.5 * rate_w * dh * dh
        wetted_perimeter = perimeter + rate_p * dh
        return WaterSection(
            area=wetted_area,
            wetted_perimeter=wetted_perimeter,
            top_width=top_width,
            hydraulic_radius=wetted_area / wetted_perimeter if wetted_perimeter > 0 else 0.0,
            hydraulic_depth=wetted_area / top_width if top_width > 0 else 0.0,
            max_depth=h - self._lowest,
            edges=self.edges(h),
        )

    def hand_estimate(self, stage: float) -> float:
        """Comparison only: wetted area by the crew's hand method, survey unit².

        Trapezoidal rule over the stations from the last dry station left of the water to the first
        dry station right of it, with the depths at those end stations taken as read (negative
        above the water).  It is what a field book gives; :meth:`at` gives the exact figure.
        """
        h = self._check_scalar(stage)
        x, z = self.stations, self.elevations
        wet = np.flatnonzero(z < h)
        if wet.size == 0:
            return 0.0
        first = max(int(wet[0]) - 1, 0)
        last = min(int(wet[-1]) + 1, x.size - 1)
        depth = h - z[first : last + 1]
        return float(np.sum(np.diff(x[first : last + 1]) * (depth[1:] + depth[:-1]) / 2))


# --- many profiles at once, and how the figures move with each point ----------------------------
_WETTED = ("area", "wetted_perimeter", "top_width")


def _segments(x0, x1, z0, z1, stage: float):
    """Per segment: width, rise, length, the depths at its ends and which parts are wet."""
    w, rise = x1 - x0, z1 - z0
    d0, d1 = stage - z0, stage - z1
    both = (d0 > 0) & (d1 > 0)
    cross = (d0 > 0) != (d1 > 0)
    wet_depth = np.maximum(d0, d1)  # in a crossing segment: the wet end's depth
    gap = np.where(cross, wet_depth - np.minimum(d0, d1), 1.0)  # = |rise| where crossing
    return w, rise, np.hypot(w, rise), d0, d1, both, cross, wet_depth, gap


def profile_figures(stations, elevations, stage: float) -> dict[str, np.ndarray]:
    """Area, wetted perimeter, top width and hydraulic radius of many profiles at one level.

    ``stations`` and ``elevations`` are arrays of shape ``(profiles, points)`` (or 1-D for one
    profile), stations not decreasing along each profile; every depression below ``stage`` is
    wet, exactly as :meth:`Section.at` (without its validation, for speed on many copies).
    Returns arrays of shape ``(profiles,)``; lengths in the survey unit, area in unit².

    >>> f = profile_figures([[0, 0, 2, 2], [0, 0, 4, 4]], [[2, 0, 0, 2]] * 2, 1.0)
    >>> f["area"].tolist(), f["wetted_perimeter"].tolist()
    ([2.0, 4.0], [4.0, 6.0])
    """
    x = np.atleast_2d(np.asarray(stations, dtype=float))
    z = np.atleast_2d(np.asarray(elevations, dtype=float))
    w, _, length, d0, d1, both, cross, e, gap = _segments(
        x[..., :-1], x[..., 1:], z[..., :-1], z[..., 1:], float(stage)
    )
    share = np.where(cross, e / gap, both)  # wetted share of each segment's width and length
    area = np.where(both, w * (d0 + d1) / 2.0, np.where(cross, w * e * e / (2.0 * gap), 0.0))
    area, perimeter, top = area.sum(axis=-1), (length * share).sum(-1), (w * share).sum(-1)
    radius = np.divide(area, perimeter, out=np.zeros_like(area), where=perimeter > 0)
    return {
        "area": area,
        "wetted_perimeter": perimeter,
        "top_width": top,
        "hydraulic_radius": radius,
    }


def figure_gradients(
    stations, elevations, stage: float
) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """How area, wetted perimeter and top width move with each point of one profile, exactly.

    Returns ``{name: (d_by_elevation, d_by_station)}``, each an array with one value per point:
    the partial derivative of the figure at ``stage`` with respect to that point's elevation
    and station (area in unit² per unit, lengths per unit).  Each point moves only the two
    segments beside it, so this costs O(points).  Where the water meets a point exactly the
    derivative from above is taken.

    >>> dz, dx = figure_gradients([0, 0, 4, 4], [2, 0, 0, 2], 1.0)["area"]
    >>> dz.tolist()                       # lowering a bed point adds half of each panel
    [0.0, -2.0, -2.0, 0.0]
    >>> dx.tolist()                       # a wall's two points share one tape reading: -1, +1
    [-0.25, -0.75, 0.75, 0.25]
    """
    x = np.asarray(stations, dtype=float)
    z = np.asarray(elevations, dtype=float)
    w, rise, length, d0, d1, both, cross, e, g = _segments(x[:-1], x[1:], z[:-1], z[1:], stage)
    q = np.where(cross, e - g, 0.0)  # the dry end's depth (<= 0) in a crossing segment
    safe = np.where(length > 0, length, 1.0)
    wet0 = d0 > 0
    out = {}
    # Partial derivatives by the wet depth e, the dry depth q and the width w (crossing), or by
    # the four coordinates directly (both ends wet); d/dz = -d/d(depth), d/dx1 = -d/dx0 = d/dw.
    crossing = {
        "area": (w * e * (2 * g - e) / (2 * g * g), w * e * e / (2 * g * g), e * e / (2 * g)),
        "top_width": (-w * q / (g * g), w * e / (g * g), e / g),
        "wetted_perimeter": (
            e / safe - length * q / (g * g),
            -e / safe + length * e / (g * g),
            w / safe * e / g,
        ),
    }
    wet = {
        "area": (-w / 2, -w / 2, (d0 + d1) / 2),
        "top_width": (np.zeros_like(w), np.zeros_like(w), np.ones_like(w)),
        "wetted_perimeter": (-rise / safe, rise / safe, w / safe),
    }
    for name in _WETTED:
        by_e, by_q, by_w = crossing[name]
        dz0_w, dz1_w, dw_w = wet[name]
        dz0 = np.where(both, dz0_w, np.where(cross, np.where(wet0, -by_e, -by_q), 0.0))
        dz1 = np.where(both, dz1_w, np.where(cross, np.where(wet0, -by_q, -by_e), 0.0))
        dw = np.where(both, dw_w, np.where(cross, by_w, 0.0))
        grad_z = np.concatenate([dz0, [0.0]]) + np.concatenate([[0.0], dz1])
        grad_x = np.concatenate([-dw, [0.0]]) + np.concatenate([[0.0], dw])
        out[name] = (grad_z, grad_x)
    return out

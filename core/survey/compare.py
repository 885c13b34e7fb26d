"""Repeat visits of one section on the same benchmark: scour, fill and what moved.

Both ground lines are piecewise linear in station.  Over the stations the two visits share, the
difference ``after - before`` is linear between the merged breakpoints, so the areas where the bed
dropped (scour) and rose (fill) are integrated exactly, splitting a panel where the lines cross.
Vertical faces (repeated stations) add no area.  Lengths in the survey unit, areas in unit².

>>> r = scour_fill([0, 2, 4], [1, 0, 1], [0, 2, 4], [1, 1, 1])      # the V filled to a flat
>>> r.scour_area, r.fill_area
(0.0, 2.0)
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey.geometry import Section


@dataclass(frozen=True)
class ScourFill:
    """Areas between two ground lines over their common stations (unit²) and that range (unit)."""

    scour_area: float
    fill_area: float
    net_change: float
    start: float
    end: float

    def as_dict(self) -> dict:
        """Plain dict of the figures."""
        return asdict(self)


def _values(x: np.ndarray, z: np.ndarray, left: np.ndarray, right: np.ndarray):
    """Ground of one line at the two ends of each open panel ``(left, right)`` (no faces inside)."""
    mid = 0.5 * (left + right)
    seg = np.clip(np.searchsorted(x, mid, side="right") - 1, 0, x.size - 2)
    x0, x1, z0, z1 = x[seg], x[seg + 1], z[seg], z[seg + 1]
    grade = (z1 - z0) / (x1 - x0)
    return z0 + grade * (left - x0), z0 + grade * (right - x0)


def _positive_part(width, a, b):
    """Exact integral of max(d, 0) for d linear from ``a`` to ``b`` over ``width``."""
    pa, pb = np.maximum(a, 0.0), np.maximum(b, 0.0)
    crossing = a * b < 0
    with np.errstate(divide="ignore", invalid="ignore"):
        split = width * (pa**2 + pb**2) / (2.0 * np.abs(a - b))
    return np.where(crossing, split, width * (pa + pb) / 2.0)


def profile_difference(before_x, before_z, after_x, after_z):
    """Merged panels of the common stations: ``(left, right, d_left, d_right)`` arrays.

    ``d = after - before`` at each panel end (unit); panels are open intervals between all
    stations of both lines.
    """
    left, right, b0, b1, a0, a1 = profile_panels(before_x, before_z, after_x, after_z)
    return left, right, a0 - b0, a1 - b1


def profile_panels(before_x, before_z, after_x, after_z):
    """Merged panels ``(left, right, before_left, before_right, after_left, after_right)``.

    Ground elevations of both lines at the two ends of every panel between the stations of
    either line, over the stations both cover (unit).
    """
    bx, bz = np.asarray(before_x, dtype=float), np.asarray(before_z, dtype=float)
    ax, az = np.asarray(after_x, dtype=float), np.asarray(after_z, dtype=float)
    for x, z, name in ((bx, bz, "before"), (ax, az, "after")):
        Section(x, z)  # validates: equal lengths, finite, stations not decreasing
        if x[-1] <= x[0]:
            raise SurveyError(f"the {name} line has no width")
    start, end = max(bx[0], ax[0]), min(bx[-1], ax[-1])
    if not end > start:
        raise SurveyError(
            f"the two visits share no stations (before {bx[0]:g}-{bx[-1]:g}, "
            f"after {ax[0]:g}-{ax[-1]:g}); check the tape origin"
        )
    knots = np.unique(np.concatenate([bx, ax]))
    knots = knots[(knots >= start) & (knots <= end)]
    left, right = knots[:-1], knots[1:]
    b0, b1 = _values(bx, bz, left, right)
    a0, a1 = _values(ax, az, left, right)
    return left, right, b0, b1, a0, a1


def scour_fill(before_x, before_z, after_x, after_z) -> ScourFill:
    """Scour (bed lowered) and fill (bed raised) areas between two visits, unit², exact.

    Only the stations both visits cover count; ``start``/``end`` give that range.

    Examples
    --------
    >>> scour_fill([0, 2, 4], [1, 1, 1], [0, 2, 4], [1, 0, 1]).scour_area   # a V dug in a flat
    2.0
    """
    left, right, d0, d1 = profile_difference(before_x, before_z, after_x, after_z)
    width = right - left
    fill = float(np.sum(_positive_part(width, d0, d1)))
    scour = float(np.sum(_positive_part(width, -d0, -d1)))
    return ScourFill(scour, fill, fill - scour, float(left[0]), float(right[-1]))


def deepest_point(stations, elevations) -> tuple[float, float]:
    """Station and elevation of the lowest point (the first, if several are equally low)."""
    x = np.asarray(stations, dtype=float)
    z = np.asarray(elevations, dtype=float)
    i = int(np.argmin(z))
    return float(x[i]), float(z[i])


def compare_visits(before: Section, after: Section, stage: float | None = None) -> dict:
    """Change from ``before`` to ``after``: scour/fill, deepest point, and figures at ``stage``.

    Returns a dict with ``scour_area``, ``fill_area``, ``net_change`` (unit²), ``start``/``end``,
    ``deepest_before``/``deepest_after`` as ``[station, elevation]``, ``deepest_shift`` and
    ``deepest_drop`` (unit; a drop is positive when the bed got deeper), and, when ``stage`` is
    given, ``area_before``/``area_after``/``area_change`` (unit²) and the same for ``top_width``.

    Examples
    --------
    >>> change = compare_visits(Section([0, 2, 4], [1, 0, 1]), Section([0, 2, 4], [1, -0.5, 1]), 1.0)
    >>> change["scour_area"], change["deepest_drop"], change["area_change"]
    (1.0, 0.5, 1.0)
    """
    sf = scour_fill(before.stations, before.elevations, after.stations, after.elevations)
    out = sf.as_dict()
    db = deepest_point(before.stations, before.elevations)
    da = deepest_point(after.stations, after.elevations)
    out["deepest_before"], out["deepest_after"] = list(db), list(da)
    out["deepest_shift"] = da[0] - db[0]
    out["deepest_drop"] = db[1] - da[1]
    if stage is not None:
        wb, wa = before.at(stage), after.at(stage)
        out["stage"] = float(stage)
        for name in ("area", "top_width"):
            out[f"{name}_before"] = getattr(wb, name)
            out[f"{name}_after"] = getattr(wa, name)
            out[f"{name}_change"] = getattr(wa, name) - getattr(wb, name)
    return out

"""Reduction of field readings to ground elevations, heights and depths.

Two ways of reading the bed are supported:

* **Level line and plumb** -- a line strung between two bank stakes; the plumb is read *down* from
  the line to the bed, so ``bed elevation = line elevation - reading``.  The line's elevation at
  each stake is tied to a benchmark or to an assumed datum (e.g. 100.000); if the two stake
  heights differ slightly the line is taken as straight between them.
* **Level and rod** -- ``height of instrument = benchmark elevation + backsight`` and
  ``elevation = height of instrument - foresight``.

Every survey has one length unit (``"m"`` or ``"ft"``), recorded with it; all inputs and outputs of a
function here are in that unit.  Conversion happens only where a person types or reads.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey.units import by_unit, unit_of

UNITS = by_unit("metres")
"""Length units a survey may use, with metres per unit (international foot); see
:class:`stakeline.survey.units.Unit`."""

ASSUMED_DATUM = 100.0
"""Elevation commonly assumed for a line or benchmark that is not tied to a known datum."""


def check_unit(unit: str) -> str:
    """Return ``unit`` if it is a survey length unit (``"m"`` or ``"ft"``), else raise SurveyError."""
    return unit_of(unit).key


def convert_length(value, from_unit: str, to_unit: str):
    """Convert lengths (scalar or array) between ``"m"`` and ``"ft"``."""
    factor = unit_of(from_unit).metres / unit_of(to_unit).metres
    if np.ndim(value) == 0:
        return float(value) * factor
    return np.asarray(value, dtype=float) * factor


def line_elevation(
    stations,
    left_station: float,
    left_elevation: float,
    right_station: float,
    right_elevation: float,
):
    """Elevation of the level line at ``stations`` (survey unit), straight between the two stakes.

    With equal stake heights this is simply that height.  Stations outside the stakes are
    extrapolated along the same straight line.

    >>> round(line_elevation(5.0, 0.0, 100.0, 10.0, 100.02), 6)
    100.01
    """
    x = np.asarray(stations, dtype=float)
    span = float(right_station) - float(left_station)
    if span == 0:
        raise SurveyError("the two stakes are at the same station; the line has no length")
    grade = (float(right_elevation) - float(left_elevation)) / span
    out = float(left_elevation) + grade * (x - float(left_station))
    return float(out) if out.ndim == 0 else out


def bed_from_line(readings, line_elevations):
    """Bed elevations from plumb readings taken down from the level line (survey unit).

    ``bed elevation = line elevation - reading``.

    >>> bed_from_line([0.42, 1.30], 100.0).tolist()
    [99.58, 98.7]
    """
    r = np.asarray(readings, dtype=float)
    return np.asarray(line_elevations, dtype=float) - r


def height_of_instrument(benchmark_elevation: float, backsight: float) -> float:
    """Height of instrument: benchmark elevation + backsight (survey unit)."""
    return float(benchmark_elevation) + float(backsight)


def bed_from_rod(benchmark_elevation: float, backsight: float, foresights):
    """Ground elevations from level-and-rod foresights: ``HI - foresight`` (survey unit).

    >>> bed_from_rod(100.0, 1.512, [1.0, 2.512]).tolist()
    [100.512, 99.0]
    """
    return height_of_instrument(benchmark_elevation, backsight) - np.asarray(
        foresights, dtype=float
    )


def heights_above_lowest(elevations) -> np.ndarray:
    """Height of each point above the lowest surveyed point (survey unit, all >= 0)."""
    z = np.asarray(elevations, dtype=float)
    return z - z.min()


def depths_below(elevations, water_level: float) -> np.ndarray:
    """Depth of water over each point at ``water_level`` (survey unit; 0 where the ground is dry)."""
    z = np.asarray(elevations, dtype=float)
    return np.maximum(float(water_level) - z, 0.0)


def level_loop_misclosure(backsights: Sequence[float], foresights: Sequence[float]) -> float:
    """Misclosure of a level loop that starts and ends on the same benchmark (survey unit).

    The loop closes perfectly when the sum of backsights equals the sum of foresights; the returned
    value is ``sum(backsights) - sum(foresights)`` (the computed minus the known benchmark height).
    """
    return float(
        np.sum(np.asarray(backsights, dtype=float)) - np.sum(np.asarray(foresights, dtype=float))
    )

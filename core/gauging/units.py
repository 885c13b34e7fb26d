"""Units and field limits of a gauging, and the gauging's error class.

A gauging is computed in the survey's one length unit (``"m"`` or ``"ft"``): stations, depths and
widths in that unit, velocities in unit/s, areas in unit², discharge in unit³/s.  This module is
the one place that turns the unit name into the constants a gauging needs, so that it can be
switched to a shared unit type in one edit.

>>> u = gauging_unit("ft")
>>> u.wading_limit, u.one_point_depth, u.discharge
(10.0, 2.5, 'ft³/s')
>>> round(gauging_unit("m").wading_limit, 3)
0.929
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from stakeline.errors import SurveyError
from stakeline.survey.hydraulics import MANNING_K
from stakeline.survey.reduction import UNITS, check_unit
from stakeline.survey.uncertainty import DEFAULT_PRECISION


class GaugingError(SurveyError):
    """A gauging (verticals, velocities, meter, slope or measurements) that cannot be used as given.

    ``station`` is the station (survey unit) of the vertical at fault when there is one, and
    ``index`` its 0-based position.
    """

    def __init__(self, message: str, index: int | None = None, station: float | None = None):
        super().__init__(message)
        self.index = index
        self.station = station


# Wading: do not wade where depth (ft) x velocity (ft/s) reaches 10 ft²/s (USGS field practice,
# from memory; widely repeated); 10 ft²/s is 0.929 m²/s.  One point at 0.6 depth below about
# 2.5 ft (0.75 m), two points deeper (Turnipseed & Sauer 2010, USGS TM 3-A8; from memory).
_WADING_FT = 10.0
_ONE_POINT = {"m": 0.75, "ft": 2.5}


@dataclass(frozen=True)
class GaugingUnit:
    """Constants of a gauging in one survey length unit.

    ``metres``: metres per unit; ``manning_k``: k of Manning's equation (1 for metres, 1.486 for
    feet); ``wading_limit``: the depth x velocity (unit²/s) at which wading stops;
    ``one_point_depth``: the deepest vertical (unit) for which one point at 0.6 depth is the
    suggested method; ``reading_precision``: the crew's usual standard deviation of one levelled
    reading (unit; 5 mm, 0.02 ft); the rest are symbols.
    """

    name: str
    metres: float
    manning_k: float
    wading_limit: float
    one_point_depth: float
    reading_precision: float
    length: str
    area: str
    velocity: str
    discharge: str
    product: str


def gauging_unit(unit: str) -> GaugingUnit:
    """The :class:`GaugingUnit` of survey length unit ``unit`` (``"m"`` or ``"ft"``).

    Every module of the gauging package takes its unit constants from here (unknown units are
    refused with the survey's own message).
    """
    if isinstance(unit, str) and unit in _MADE:
        return _MADE[unit]
    name = check_unit(unit)
    metres = UNITS[name]
    made = _MADE[name] = GaugingUnit(
        name=name,
        metres=metres,
        manning_k=MANNING_K[name],
        wading_limit=_WADING_FT * (UNITS["ft"] / metres) ** 2,
        one_point_depth=_ONE_POINT[name],
        reading_precision=DEFAULT_PRECISION[name][0],
        length=name,
        area=f"{name}²",
        velocity=f"{name}/s",
        discharge=f"{name}³/s",
        product=f"{name}²/s",
    )
    return made


_MADE: dict[str, GaugingUnit] = {}  # the constants of each unit, made once


def plain(value) -> float | None:
    """``value`` as a JSON-ready float, or ``None`` when it is missing (NaN) or not finite."""
    v = float(value)
    return v if math.isfinite(v) else None


def at_station(value: float, unit: str) -> str:
    """A station as a crew says it: ``"6.5 m"``, ``"12.25 ft"``."""
    return f"{round(float(value), 2):g} {unit}"

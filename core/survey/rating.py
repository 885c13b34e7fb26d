"""Stage-discharge (rating) table of a section under uniform flow, and its inverse.

Lengths in the survey unit, areas in unit², discharge in unit³/s (see :mod:`stakeline.survey.hydraulics`).
The table is computed exactly at each listed stage; between stages it is read by linear
interpolation, and :func:`stage_for` refines an inverse reading by root-finding.
"""

from __future__ import annotations

import math

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey.figures import figure_unit
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_table, stage_for_discharge
from stakeline.survey.numbers import parse_number

RATING_COLUMNS = (
    "stage",
    "area",
    "wetted_perimeter",
    "top_width",
    "hydraulic_radius",
    "velocity",
    "discharge",
)
"""Columns of a rating table, in print order."""

MAX_ROWS = 100_000


def level_count(start: float, stop: float, step: float, what: str = "the step") -> int:
    """How many levels ``start, start + step, ...`` up to ``stop`` holds (``stop`` itself
    included when it falls on a step); a :class:`SurveyError` in plain numbers when that is more
    than :data:`MAX_ROWS`.

    >>> level_count(0.0, 1.0, 0.25)
    5
    >>> level_count(0.0, 1.0, 1e-300)
    Traceback (most recent call last):
    ...
    stakeline.errors.SurveyError: too many levels: about 1e+300 asked for (at most 100,000); use a larger step
    """
    start = parse_number(start, "the lowest water level")
    stop = parse_number(stop, "the highest water level")
    step = parse_number(step, what, positive=True)
    if not stop >= start:
        raise SurveyError(f"the range of levels is empty: from {start:g} to {stop:g}")
    with np.errstate(over="ignore"):
        rows = (stop - start) / step
    if not rows + 1 <= MAX_ROWS:
        raise SurveyError(
            f"too many levels: about {rows + 1:.3g} asked for (at most {MAX_ROWS:,}); use a "
            "larger step"
        )
    return int(math.floor(rows + 1e-9)) + 1


def stage_range(start: float, stop: float, step: float) -> np.ndarray:
    """Water levels from ``start`` to ``stop`` inclusive every ``step`` (survey unit); at most
    :data:`MAX_ROWS` of them.

    >>> stage_range(1.0, 2.0, 0.5).tolist()
    [1.0, 1.5, 2.0]
    """
    count = level_count(start, stop, step)
    return np.minimum(float(start) + float(step) * np.arange(count), float(stop))


def rating_stages(
    section: Section, step: float, start: float | None = None, stop: float | None = None
) -> np.ndarray:
    """Water levels every ``step`` from ``start`` (default the lowest bed) to ``stop`` inclusive.

    ``stop`` defaults to the highest level the section holds; it is always included as the last row.

    Examples
    --------
    >>> rating_stages(Section([0, 0, 4, 4], [1.05, 0, 0, 1.05]), 0.25).tolist()
    [0.0, 0.25, 0.5, 0.75, 1.0, 1.05]
    """
    lo = section.lowest if start is None else parse_number(start, "the lowest water level")
    hi = section.highest_stage if stop is None else parse_number(stop, "the highest water level")
    step = parse_number(step, "the rating step", positive=True)
    if not hi > lo:
        raise SurveyError(f"the rating range is empty: from {lo:g} to {hi:g}")
    count = level_count(lo, hi, step, "the rating step")
    stages = np.minimum(lo + step * np.arange(count), hi)  # rounding never passes the top
    if hi - stages[-1] > 1e-9 * max(1.0, abs(hi)):
        stages = np.append(stages, hi)
    return stages


def rating_table(
    section: Section, stages, n, slope: float, unit: str = "m", splits=None
) -> dict[str, np.ndarray]:
    """Rating table at ``stages``: a dict of arrays keyed by :data:`RATING_COLUMNS`.

    ``n`` and ``splits`` as in :func:`stakeline.survey.hydraulics.flow_table` (one n, or one per
    subsection); lengths in the survey unit, discharge in unit³/s.

    Examples
    --------
    >>> table = rating_table(Section([0, 0, 4, 4], [2, 0, 0, 2]), [0.5, 1.0], 0.03, 0.001)
    >>> table["discharge"].round(4).tolist()
    [1.1445, 3.2177]
    """
    fig = flow_table(section, np.asarray(stages, dtype=float), n, slope, unit, splits)
    return {name: np.asarray(fig[name], dtype=float) for name in RATING_COLUMNS}


def column_heading(name: str, unit: str) -> str:
    """Heading of a rating column with its unit, e.g. ``"discharge (m³/s)"``."""
    return f"{name.replace('_', ' ')} ({figure_unit(name, unit)})"


def discharge_from_table(table: dict, stage: float) -> float:
    """Discharge read from the table at ``stage`` by linear interpolation (unit³/s)."""
    h, q = table["stage"], table["discharge"]
    if not h[0] <= stage <= h[-1]:
        raise SurveyError(f"water level {stage:g} is outside the table ({h[0]:g} to {h[-1]:g})")
    return float(np.interp(stage, h, q))


def stage_from_table(table: dict, discharge: float) -> float:
    """Lowest water level where the table reaches ``discharge``, by linear interpolation."""
    h, q = table["stage"], table["discharge"]
    above = np.flatnonzero(q >= discharge)
    if not above.size or discharge <= 0:
        raise SurveyError(
            f"discharge {discharge:g} is outside the table (0 to {float(q.max()):g}); "
            "extend the table or the survey"
        )
    i = int(above[0])
    if i == 0:
        return float(h[0])
    t = (discharge - q[i - 1]) / (q[i] - q[i - 1])
    return float(h[i - 1] + t * (h[i] - h[i - 1]))


def stage_for(
    section: Section, discharge: float, n, slope: float, unit: str = "m", splits=None
) -> float:
    """Exact inverse: the lowest water level carrying ``discharge`` (not a table reading).

    Examples
    --------
    >>> round(stage_for(Section([0, 0, 4, 4], [2, 0, 0, 2]), 3.2177, 0.03, 0.001), 4)
    1.0
    """
    return stage_for_discharge(section, discharge, n, slope, unit, splits)

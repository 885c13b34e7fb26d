"""The height every reading of a visit is measured down from, and the level check on it.

A visit reads the bed one of two ways (see :mod:`stakeline.survey.reduction`): down from a level
line strung between two bank stakes, or with a level and rod from a benchmark.  :class:`Datum`
holds what a visit recorded about that reference -- the line's heights at the stakes, the taped
distance between them and which stake the tape starts at, or the benchmark and backsight -- and
is the one place that turns readings into elevations (:meth:`Datum.elevations`, used by the
store), gives the line's height at any station (:meth:`Datum.line_at`, used by the field checks)
and judges the crew's check shot (:meth:`Datum.line_check`, used by the stakes screen and the
field checks, so the two always agree).

>>> d = Datum(line_left=100.0, line_right=100.015, stake_distance=10.0)
>>> d.line_at([0.0, 5.0, 10.0]).round(4).tolist()
[100.0, 100.0075, 100.015]
>>> d.elevations([5.0], [1.2]).round(4).tolist()
[98.8075]
>>> d.line_check(100.0075, tolerance=0.01).within
True
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey import reduction
from stakeline.survey.numbers import parse_number
from stakeline.survey.units import unit_of


@dataclass(frozen=True)
class LineVerdict:
    """The level check of a visit's line, as a value.

    Attributes
    ----------
    within : bool or None
        True when the check shot agrees with the recorded line within the tolerance, False when
        it does not, None when there is nothing to judge yet (no check shot, no line heights, or
        the level-and-rod method).
    difference : float or None
        How far the check shot is from the line where it is compared (survey unit).
    tolerance : float
        The tolerance it is judged against (survey unit).
    where : str
        Where the check was compared, in words ("at 4 m", "between the stakes").
    offsets : tuple
        ``(place, line height, line height - check)`` for each place named when the check
        fails: each stake, or the line at the check's station (survey unit).
    text : str
        One line for the crew.

    Examples
    --------
    >>> verdict = Datum(line_left=100.0, line_right=100.015).line_check(100.0075)
    >>> verdict.within, verdict.where
    (True, 'between the stakes')
    """

    within: bool | None
    difference: float | None
    tolerance: float
    where: str
    offsets: tuple[tuple[str, float, float], ...]
    text: str

    def __str__(self) -> str:
        return self.text


def _optional(visit: Mapping, key: str) -> float | None:
    return parse_number(visit.get(key), f"survey detail {key!r}", optional=True)


@dataclass(frozen=True)
class Datum:
    """A visit's reference height: the level line between the stakes, or the height of instrument.

    Attributes
    ----------
    method : str
        ``"line"`` (level line and plumb) or ``"rod"`` (level and rod).
    line_left, line_right : float or None
        The line's elevation at the left and right stakes (survey unit).
    stake_distance : float or None
        Taped distance between the stakes (survey unit).
    origin : str
        The stake the tape starts at, ``"left"`` or ``"right"``: the left stake is at station 0
        with origin left, at ``stake_distance`` with origin right.
    backsight : float or None
        Rod reading on the benchmark (level and rod).
    benchmark : float or None
        Benchmark elevation; 100.000 is assumed when unknown (common practice).
    unit : str
        ``"m"`` or ``"ft"``.

    Examples
    --------
    >>> rod = Datum(method="rod", backsight=1.512)           # benchmark 100.000 assumed
    >>> rod.height_of_instrument, rod.elevations([0.0], [2.512]).tolist()
    (101.512, [99.0])
    >>> Datum().missing[:36]
    'the visit has no line heights at the'
    """

    method: str = "line"
    line_left: float | None = None
    line_right: float | None = None
    stake_distance: float | None = None
    origin: str = "left"
    backsight: float | None = None
    benchmark: float | None = None
    unit: str = "m"

    @classmethod
    def from_visit(cls, visit: Mapping) -> Datum:
        """The datum of a visit dict (the store's, or a field-check ``meta``): keys ``method``,
        ``line_left``, ``line_right``, ``stake_distance``, ``origin``, ``backsight``,
        ``benchmark_elevation`` and ``unit``, any of them missing or None.

        >>> Datum.from_visit({"line_left": "100.2", "line_right": None}).line_at(3.0)
        100.2
        """
        return cls(
            method=visit.get("method") or "line",
            line_left=_optional(visit, "line_left"),
            line_right=_optional(visit, "line_right"),
            stake_distance=_optional(visit, "stake_distance") or None,
            origin=visit.get("origin") or "left",
            backsight=_optional(visit, "backsight"),
            benchmark=_optional(visit, "benchmark_elevation"),
            unit=unit_of(visit.get("unit") or "m").key,
        )

    # --- the reference height -------------------------------------------------------------
    @property
    def ready(self) -> bool:
        """True when readings can be reduced: a line height, or a backsight for the rod."""
        if self.method == "rod":
            return self.backsight is not None
        return self.line_left is not None or self.line_right is not None

    @property
    def missing(self) -> str:
        """Why readings cannot be reduced, in words (empty when :attr:`ready`)."""
        if self.ready:
            return ""
        if self.method == "rod":
            return (
                "the visit has no backsight on the benchmark, so its rod readings have no "
                "elevations; type the backsight on the stakes screen"
            )
        return (
            "the visit has no line heights at the stakes, so its readings have no elevations; "
            f"type the line heights on the stakes screen (or assume {reduction.ASSUMED_DATUM:.3f})"
        )

    @property
    def height_of_instrument(self) -> float | None:
        """Benchmark (100.000 assumed when unknown) + backsight, level and rod; else None."""
        if self.method != "rod" or self.backsight is None:
            return None
        benchmark = reduction.ASSUMED_DATUM if self.benchmark is None else self.benchmark
        return reduction.height_of_instrument(benchmark, self.backsight)

    def _heights(self) -> tuple[float, float] | None:
        left, right = self.line_left, self.line_right
        if left is None and right is None:
            return None
        return (right, right) if left is None else (left, left if right is None else right)

    @property
    def exact(self) -> bool:
        """False for a sloping line without the stake distance: it was reduced at the mean of
        the two heights, so where each reading's line height lies is not known."""
        heights = self._heights()
        return heights is None or heights[0] == heights[1] or self.stake_distance is not None

    def stake_stations(self) -> tuple[float, float] | None:
        """Stations of the left and right stakes on the tape, or None without the distance."""
        if not self.stake_distance:
            return None
        d = float(self.stake_distance)
        return (0.0, d) if self.origin != "right" else (d, 0.0)

    def line_at(self, stations):
        """Height of the reference at ``stations`` (survey unit): NaN when not :attr:`ready`.

        The line is straight between the stakes when their heights differ and the stake
        distance is known (extended beyond them), else level at the mean of the two heights;
        with a level and rod it is the height of instrument.  Scalar in, float out.
        """
        x = np.asarray(stations, dtype=float)
        heights, places = self._heights(), self.stake_stations()
        if self.method == "rod":
            hi = self.height_of_instrument
            out = np.full(x.shape, math.nan if hi is None else hi)
        elif heights is None:
            out = np.full(x.shape, math.nan)
        elif heights[0] == heights[1] or places is None:
            out = np.full(x.shape, 0.5 * (heights[0] + heights[1]))
        else:
            out = np.asarray(
                reduction.line_elevation(x, places[0], heights[0], places[1], heights[1])
            )
        return float(out) if out.ndim == 0 else out

    def elevations(self, stations, readings) -> np.ndarray:
        """Ground elevations of ``readings`` at ``stations`` (survey unit): reference height minus
        reading; NaN where a reading is missing or the datum is not :attr:`ready`."""
        r = np.asarray([math.nan if v is None else v for v in np.ravel(readings)], dtype=float)
        return np.asarray(self.line_at(np.ravel(stations)), dtype=float) - r

    # --- the level check ------------------------------------------------------------------
    def line_check(self, check, at=None, tolerance: float | None = None) -> LineVerdict:
        """Judge the crew's check shot on the line: a :class:`LineVerdict`.

        The rule: a line straight between two stakes of different heights is allowed (the
        reduction follows it), so the check shot verifies the recorded heights where it was
        taken.  With the check's station ``at`` known, it is compared with the line's height
        there.  Without it the shot may have been taken anywhere along the line, so it proves
        the recorded heights wrong only when it is farther than the tolerance from every point
        of the line between the stakes -- below the lower stake's height or above the higher
        one's.  For a level line (equal heights, the usual case) that is the common practice of
        comparing the check with the line height; a sagging line shows as a check below both.

        ``check`` (survey unit) may be None (nothing to judge); ``tolerance`` defaults to the
        unit's field-check tolerance (10 mm or 0.03 ft).

        >>> v = Datum(line_left=100.0, line_right=100.0).line_check(100.02)
        >>> v.within, round(v.difference, 3)
        (False, 0.02)
        """
        unit = unit_of(self.unit)
        tol = unit.check_defaults["line_tolerance"] if tolerance is None else float(tolerance)
        check = parse_number(check, "line check", optional=True)
        at = parse_number(at, "line check station", optional=True)
        if self.method == "rod":
            hi = self.height_of_instrument
            text = (
                "Level and rod: type the backsight on the benchmark."
                if hi is None
                else f"Level and rod: height of instrument {hi:.3f} {unit} (benchmark + backsight)."
            )
            return LineVerdict(None, None, tol, "", (), text)
        heights = self._heights()
        if heights is None or self.line_left is None or self.line_right is None:
            text = (
                f"Type the line elevation at both stakes (or assume {reduction.ASSUMED_DATUM:.3f})."
            )
            if heights is None or check is None:
                return LineVerdict(None, None, tol, "", (), text)
        if check is None:
            low, high = min(heights), max(heights)
            span = f"{low:.3f} {unit}" if low == high else f"{low:.3f} to {high:.3f} {unit}"
            text = f"Line heights {span}; type the check shot to verify them."
            return LineVerdict(None, None, tol, "", (), text)
        return self._judge(check, at, tol, heights)

    def _judge(self, check: float, at, tol: float, heights) -> LineVerdict:
        unit = unit_of(self.unit)
        if at is not None and self.exact:
            line = float(self.line_at(at))
            places = [(f"the line at {round(at, 2):g} {unit}", line)]
            difference, where = abs(check - line), f"at {round(at, 2):g} {unit}"
        else:
            low, high = min(heights), max(heights)
            difference = max(low - check, check - high, 0.0)
            where = "at the stakes" if low == high else "between the stakes"
            places = [("the left stake", heights[0]), ("the right stake", heights[1])]
            recorded = (self.line_left, self.line_right)
            places = [p for p, v in zip(places, recorded, strict=True) if v is not None]
        within = difference <= tol + 1e-9 * max(1.0, abs(check))
        offsets = () if within else tuple((name, h, h - check) for name, h in places)
        way = "above" if all(check > h for _, h in places) else "below"
        if within:
            text = (
                f"Line check: the check shot {check:.3f} {unit} agrees with the line {where} "
                f"to {difference:.3f} {unit}, within the tolerance of {tol:.3f} {unit}."
            )
        else:
            text = (
                f"Line check: the check shot {check:.3f} {unit} is {difference:.3f} {unit} "
                f"{way} the line {where}, OUTSIDE the tolerance of {tol:.3f} {unit}: re-level "
                "the line (has it slipped or sagged?) and re-enter its heights."
            )
        return LineVerdict(within, difference, tol, where, offsets, text)


def usable_elevations(stations: list[dict], datum: Datum | None = None, what: str = "the visit"):
    """Stations and elevations of station dicts, or a :class:`SurveyError` saying why there are
    none: the datum's :attr:`Datum.missing` when given, else which station lacks one."""
    missing = [s for s in stations if s.get("elevation") is None]
    if missing:
        if datum is not None and not datum.ready:
            raise SurveyError(datum.missing.replace("the visit", what, 1))
        raise SurveyError(
            f"{what}: station {missing[0].get('station')!r} has no elevation; re-enter its "
            "reading (or the line heights on the stakes screen)"
        )
    return (
        np.array([s["station"] for s in stations], dtype=float),
        np.array([s["elevation"] for s in stations], dtype=float),
    )


def plain_list(values) -> list:
    """A float array as a list with None where it is NaN (the store's plain data).

    >>> plain_list(np.array([1.5, np.nan]))
    [1.5, None]
    """
    return [None if math.isnan(v) else v for v in np.asarray(values, dtype=float).tolist()]

"""Field checks: find bad readings, gaps and missing edges while the crew is still at the section.

One call, :func:`review`, runs every check on the points as entered and returns a list of
:class:`Finding` -- each with a stable ``kind`` code, a ``severity``, the ``station`` it concerns, a
plain-language ``message`` with units, and a ``suggestion`` the crew can act on.  Pure numpy: no UI,
no SQL; called by the touch UI after every reading, by ``stakeline check`` and by office reports.

========== ======== ===============================================================================
kind       severity what it means
========== ======== ===============================================================================
order      block    a station entered after a larger one (stations go backwards), or the two
                    readings of a vertical face entered in reverse order
duplicate  warn     the same station and reading entered twice; block when two readings at one
                    station disagree and the ground either side shows no vertical face
overtopped block    the water level stands above an end of the survey
spike      warn     a reading out of line with its neighbours (block when far out)
gap        warn     a panel too wide: too large a share of the flow, much wider than the other
                    panels, or wide across a slope break
sparse     warn     fewer stations across the water than the crew's minimum
edge       warn     water present but no station near a water's edge, or a station coded
                    water's edge that is not at the water level
line       block    line heights disagree with the level check; a reading negative or longer than
                    the plumb; (warn) an elevation that is not line height minus reading
closure    block    level-loop misclosure beyond tolerance
========== ======== ===============================================================================

Severities: ``block`` must be fixed, or overridden with a written reason, before the visit is
finished; ``warn`` should be looked at; ``note`` is for information.  All lengths are in the
survey's one unit (``"m"`` or ``"ft"``), which also picks the default tolerances
(:meth:`CheckSettings.for_unit`).  The figures are field checks, not engineering review.

>>> found = review(range(11), [2.0, 1.6, 1.3, 1.1, 1.0, 1.6, 1.0, 1.1, 1.3, 1.6, 2.0])
>>> [(f.kind, f.severity, f.station) for f in found]
[('spike', 'block', 5.0)]
>>> review([0, 1, 2, 3, 4], [2.0, 1.0, 0.5, 1.0, 2.0], stage=2.2)[0].kind
'overtopped'
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, fields, replace

import numpy as np

from core.errors import SectionError, SurveyError
from core.reduction import check_unit

SEVERITIES = ("block", "warn", "note")
"""Severities, most serious first."""

KINDS = ("order", "duplicate", "overtopped", "spike", "gap", "sparse", "edge", "line", "closure")
"""Every finding kind :func:`review` can return."""

BREAK_CODES = frozenset({"bank_top", "toe", "break", "bench", "face", "undercut", "wall"})
"""Feature codes that mark a slope break: the ground may turn there at any angle."""

_BREAKS = np.array(sorted(BREAK_CODES), dtype=object)

FACE_CODES = frozenset({"bank_top", "toe", "face", "undercut", "wall"})
"""Feature codes that mark a vertical face: two readings at one such station are expected."""


@dataclass(frozen=True)
class Finding:
    """One problem found by a check.

    ``station`` is in the survey unit (``None`` for the whole survey, e.g. a level-loop closure);
    ``index`` is the 0-based position of the point in the sequence as entered (``None`` when the
    finding is not about one entered point); ``also`` the positions of other points that may be
    the one at fault (named in the suggestion: re-read them next).
    """

    kind: str
    severity: str
    station: float | None
    message: str
    suggestion: str
    index: int | None = None
    also: tuple[int, ...] = ()

    def as_dict(self) -> dict:
        """Plain dict with keys ``kind``, ``severity``, ``station``, ``message``, ``suggestion``."""
        return {
            "kind": self.kind,
            "severity": self.severity,
            "station": self.station,
            "message": self.message,
            "suggestion": self.suggestion,
        }


# Defaults per unit.  Precisions are the crew's usual +-5 mm reading and +-10 mm station (0.02 ft,
# 0.03 ft); the tolerances below are ours, set from those precisions and tuned on generated
# sections (bench/bench_checks.py).
_UNIT_DEFAULTS = {
    "m": {
        "reading_precision": 0.005,
        "station_precision": 0.01,
        "spike_floor": 0.02,
        "edge_distance": 0.15,
        "line_tolerance": 0.01,
        "closure_coefficient": 0.012,
        "closure_length_unit": 1000.0,
    },
    "ft": {
        "reading_precision": 0.02,
        "station_precision": 0.03,
        "spike_floor": 0.06,
        "edge_distance": 0.5,
        "line_tolerance": 0.03,
        "closure_coefficient": 0.05,
        "closure_length_unit": 5280.0,
    },
}


@dataclass(frozen=True)
class CheckSettings:
    """Tolerances of the checks; lengths in ``unit``.  Build with :meth:`for_unit`.

    - ``reading_precision``, ``station_precision``: the crew's precision (survey unit).
    - ``spike_score``, ``spike_side_score``: how many robust standard deviations (1.4826 x median
      absolute deviation of the chord residuals) a reading must be off the chord between its
      neighbours, and off the lines through the two points on either side (see
      :func:`spike_scores`); ``spike_coded_factor``: how much more a feature station needs;
      ``spike_floor`` (survey unit) and ``spike_depth_share`` (of the section's depth): the least
      miss that is flagged.
    - ``min_wet_stations``: fewest stations across the water (common practice: 20 or more).
    - ``max_panel_share``: largest share of the flow in one panel, by the depth^(5/3) x width
      proxy (USGS: no partial section over 10 %, ideally 5 %; Rantz 1982, WSP 2175; Turnipseed &
      Sauer 2010, TM 3-A8; from memory).
    - ``wide_panel_ratio``: a wetted panel wider than this times the wider of its neighbours
      and of the median wetted panel (and wider than 1/``min_wet_stations`` of the water
      width) is a gap.
    - ``break_area_share``: largest area the straight line across a panel may miss at a slope
      break, as a share of the panel's wetted area (USBR Water Measurement Manual ch. 10: 3 %);
      ``break_min_share``: and the least, as a share of the whole wetted area, worth a finding
      (ours: 1 %, so that bed roughness is not taken for a break).
    - ``edge_distance``: a water's edge farther than this from every station is unread;
      ``edge_height_share``: a station coded ``water_edge`` off the water level by more than
      this share of the deepest water was not read at the edge.
    - ``line_tolerance``: allowed disagreement of the line heights with the level check.
    - ``plumb_length``: longest reading the plumb (or rod) allows; ``None`` skips that check.
    - ``closure_coefficient`` per square root of ``closure_length_unit`` (survey unit): third-order
      levelling, 12 mm x sqrt(K km) or 0.05 ft x sqrt(M miles) (FGCC 1984; from memory);
      ``closure_tolerance`` (survey unit) replaces it when set.
    """

    unit: str = "m"
    reading_precision: float = 0.005
    station_precision: float = 0.01
    spike_score: float = 4.0
    spike_side_score: float = 1.25
    spike_coded_factor: float = 1.5
    spike_depth_share: float = 0.05
    spike_floor: float = 0.02
    min_wet_stations: int = 20
    max_panel_share: float = 0.10
    wide_panel_ratio: float = 1.75
    break_area_share: float = 0.03
    break_min_share: float = 0.01
    edge_distance: float = 0.15
    edge_height_share: float = 0.10
    line_tolerance: float = 0.01
    plumb_length: float | None = None
    closure_coefficient: float = 0.012
    closure_length_unit: float = 1000.0
    closure_tolerance: float | None = None

    @classmethod
    def for_unit(cls, unit: str = "m", **overrides) -> CheckSettings:
        """Defaults for a survey in ``unit`` ("m" or "ft"), with any fields replaced.

        Unknown names raise :class:`core.errors.SurveyError` naming them.

        >>> CheckSettings.for_unit("ft").edge_distance
        0.5
        """
        check_unit(unit)
        known = {f.name for f in fields(cls)} - {"unit"}
        unknown = sorted(set(overrides) - known)
        if unknown:
            raise SurveyError(
                f"unknown check setting {', '.join(map(repr, unknown))}; "
                f"known settings: {', '.join(sorted(known))}"
            )
        values = dict(_UNIT_DEFAULTS[unit], **overrides)
        return cls(unit=unit, **values)


def resolve_settings(settings=None, unit: str | None = None) -> CheckSettings:
    """Settings from ``None``, a :class:`CheckSettings` or a dict of overrides, for ``unit``."""
    if isinstance(settings, CheckSettings):
        if unit is not None and check_unit(unit) != settings.unit:
            raise SurveyError(
                f"the survey is in {unit!r} but the check settings are for {settings.unit!r}"
            )
        return settings
    overrides = dict(settings or {})
    unit = overrides.pop("unit", None) if unit is None else unit
    return CheckSettings.for_unit(unit or "m", **overrides)


# ----------------------------------------------------------------------------------- formatting
def _len(value: float, unit: str, places: int = 3) -> str:
    return f"{value:.{places}f} {unit}"


def _at(value: float, unit: str) -> str:
    """A station as a crew says it: 6.5 m, 12.25 m."""
    return f"{round(float(value), 2):g} {unit}"


def _new_station(value: float, unit: str) -> str:
    """A station to add, rounded to what a tape is read to in practice (0.05 m / 0.1 ft)."""
    step = 0.05 if unit == "m" else 0.1
    return _at(round(float(value) / step) * step, unit)


# ---------------------------------------------------------------------------------------- input
def _as_array(values, name: str, n: int | None = None) -> np.ndarray:
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
    if n is not None and arr.size != n:
        raise SectionError(f"{arr.size} {name} for {n} stations: give one per station")
    return arr


def _inputs(stations, elevations, codes, readings):
    x = _as_array(stations, "stations")
    z = _as_array(elevations, "elevations", x.size)
    for arr, name in ((x, "station"), (z, "elevation")):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            i = int(bad[0])
            raise SectionError(f"point {i + 1}: {name} {arr[i]} is not a finite number", index=i)
    codes = [""] * x.size if codes is None else [str(c or "").strip().lower() for c in codes]
    if len(codes) != x.size:
        raise SectionError(f"{len(codes)} feature codes for {x.size} stations: give one each")
    if readings is not None:
        try:
            readings = np.asarray(readings, dtype=float)
        except (TypeError, ValueError):  # None or "" for a reading not recorded
            readings = [np.nan if r is None or r == "" else r for r in readings]
        readings = _as_array(readings, "readings", x.size)
    return x, z, codes, readings


# ---------------------------------------------------------------------------- order, duplicate
def _longest_rising(x: np.ndarray) -> np.ndarray:
    """Mask of one longest non-decreasing subsequence of ``x`` (patience sorting)."""
    tails: list[float] = []
    tail_at: list[int] = []
    before = [-1] * x.size
    for i, v in enumerate(x.tolist()):
        k = bisect.bisect_right(tails, v)
        before[i] = tail_at[k - 1] if k else -1
        if k == len(tails):
            tails.append(v)
            tail_at.append(i)
        else:
            tails[k] = v
            tail_at[k] = i
    keep = np.zeros(x.size, dtype=bool)
    i = tail_at[-1] if tail_at else -1
    while i >= 0:
        keep[i] = True
        i = before[i]
    return keep


def order_findings(stations: Sequence[float], unit: str = "m") -> list[Finding]:
    """``order`` findings for stations that go backwards in the sequence as entered (``unit``).

    The fewest points that, moved, leave the stations rising are named; a survey entered from the
    other stake gives one finding for the whole sequence.

    >>> [f.station for f in order_findings([0, 1, 2, 7, 4, 5, 6])]
    [7.0]
    """
    x = np.asarray(stations, dtype=float)
    step = np.diff(x)
    if not np.any(step < 0):
        return []
    if np.count_nonzero(step < 0) > np.count_nonzero(step > 0):
        return [
            Finding(
                "order",
                "block",
                float(x[0]),
                f"stations run backwards (from {_at(x[0], unit)} down to {_at(x[-1], unit)}); "
                "stations must increase from the origin stake across the section",
                "measure stations from the origin stake, or reverse the order of the points "
                "(and say which stake is the origin)",
                0,
            )
        ]
    keep = _longest_rising(x)
    out = []
    for i in np.flatnonzero(~keep).tolist():
        lower = x[:i][keep[:i]]
        upper = x[i + 1 :][keep[i + 1 :]]
        low = _at(lower[-1], unit) if lower.size else "the start"
        high = _at(upper[0], unit) if upper.size else "the end"
        prev = _at(x[i - 1], unit) if i else "nothing"
        out.append(
            Finding(
                "order",
                "block",
                float(x[i]),
                f"point {i + 1}: station {_at(x[i], unit)} is out of order (entered after "
                f"{prev}); stations must increase across the section",
                f"check the tape at point {i + 1} and correct its station (a value between {low} "
                f"and {high} fits here), or move the reading to where it belongs",
                i,
            )
        )
    return out


def duplicate_findings(
    stations: Sequence[float],
    elevations: Sequence[float],
    codes: Sequence[str] | None = None,
    settings: CheckSettings | None = None,
) -> list[Finding]:
    """``duplicate`` findings for repeated stations (stations sorted, survey unit).

    Two readings at one station are a vertical face (wall, cut or undercut bank) when the ground
    either side steps the same way, or a code marks a face (:data:`FACE_CODES`); the same reading
    twice is a double entry (warn); two different readings with no step either side disagree
    (block); a face whose two readings step against the ground either side was entered in
    reverse order (an ``order`` finding, block).

    >>> [f.severity for f in duplicate_findings([0, 1, 1, 2], [1.0, 0.5, 0.5, 1.0])]
    ['warn']
    >>> duplicate_findings([0, 1, 1, 2], [2.0, 2.0, 0.5, 0.4])
    []
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    codes = list(codes) if codes is not None else [""] * x.size
    out = []
    for i in np.flatnonzero(np.diff(x) == 0).tolist():
        j, unit = i + 1, cfg.unit
        at, step = _at(x[i], unit), z[i + 1] - z[i]
        both = f"{_len(z[i], unit)} and {_len(z[j], unit)}"
        if abs(step) <= 2 * cfg.reading_precision:
            message = f"station {at} was entered twice with the same reading ({both})"
            todo = f"delete one of the two entries at {at}, then check that the next station "
            out.append(
                Finding("duplicate", "warn", float(x[i]), message, todo + "was not skipped", j)
            )
            continue
        left = z[i - 1] if i > 0 and x[i - 1] < x[i] else z[i]
        right = z[j + 1] if j + 1 < x.size and x[j + 1] > x[j] else z[j]
        outer = right - left  # a face: the ground either side steps the same way
        if outer * step < 0 and abs(outer) >= 0.5 * abs(step) and left != z[i] and right != z[j]:
            message = (
                f"the two readings of the vertical face at {at} ({both}) are in reverse order: "
                f"the ground steps from {_len(left, unit)} to {_len(right, unit)} across it"
            )
            todo = (
                f"swap the two entries at {at}: enter a face from left to right (on the left "
                "bank the top first, on the right bank the toe first)"
            )
            out.append(Finding("order", "block", float(x[i]), message, todo, j))
            continue
        if (
            codes[i] in FACE_CODES
            or codes[j] in FACE_CODES
            or (outer * step > 0 and abs(outer) >= 0.5 * abs(step))
        ):
            continue
        message = (
            f"station {at} has two readings {_len(abs(step), unit)} apart (elevations {both}) "
            "but the ground either side shows no vertical face"
        )
        todo = (
            f"re-read station {at} and delete the wrong entry; if it is a wall or cut bank, code "
            "the two points as bank top and toe"
        )
        out.append(Finding("duplicate", "block", float(x[i]), message, todo, j))
    return out


# ---------------------------------------------------------------------------------------- spike
_MAX_REACH = 3.0  # an extrapolation reaching over 3x its own baseline carries no information
_LEVEL_GRADE = 0.05  # "about level": within 1 in 20, where only one neighbour is known
_MOST_SPIKES = 25  # beyond that the points are hardly a surveyed section: stop looking


def _left_line(x: np.ndarray, z: np.ndarray):
    """Each elevation predicted by the line through the two points just left of it (i-2, i-1).

    None where the line would reach more than ``_MAX_REACH`` times its own length, or the two
    points share a station.  Returns prediction, noise gain and slope arrays (NaN where none).
    """
    pred, gain, slope = (np.full(x.size, np.nan) for _ in range(3))
    if x.size < 3:
        return pred, gain, slope
    base, reach = x[1:-1] - x[:-2], x[2:] - x[1:-1]
    with np.errstate(divide="ignore", invalid="ignore"):
        r = reach / base
        grade = (z[1:-1] - z[:-2]) / base
    ok = (base > 0) & (reach > 0) & (r <= _MAX_REACH)
    pred[2:] = np.where(ok, z[1:-1] + grade * reach, np.nan)
    gain[2:] = np.sqrt(1 + (1 + r) ** 2 + r**2)  # weights 1 + r and -r on the two points
    slope[2:] = grade
    return pred, gain, slope


def _predictions(x: np.ndarray, z: np.ndarray, breaks: np.ndarray | None = None):
    """Predictions of each elevation from its neighbours, without the point itself.

    Rows: the chord between the two neighbours; the line through the two points on the left,
    extended; the same on the right; where such a line is missing (near an end, at a vertical face,
    or reaching too far) the one neighbour on that side carried across level.  Returns
    predictions, noise gains (root sum of squared weights, the point's own weight 1 included), the
    slope of the line each used, and an allowance (survey unit) for the grade a level carry
    ignores; NaN where a prediction is not available.
    """
    n = x.size
    pred, gain, slope = (np.full((5, n), np.nan) for _ in range(3))
    allow = np.zeros((5, n))
    dx = np.diff(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        span = x[2:] - x[:-2]
        t = (x[1:-1] - x[:-2]) / span
        ok = (dx[:-1] > 0) & (dx[1:] > 0)
        pred[0, 1:-1] = np.where(ok, z[:-2] + t * (z[2:] - z[:-2]), np.nan)
        gain[0, 1:-1] = np.sqrt(1 + (1 - t) ** 2 + t**2)
        slope[0, 1:-1] = (z[2:] - z[:-2]) / span
    for row, flip in ((1, False), (2, True)):
        pred[row], gain[row], slope[row] = (
            _left_line(-x[::-1], z[::-1]) if flip else _left_line(x, z)
        )
        if flip:
            pred[row], gain[row], slope[row] = pred[row][::-1], gain[row][::-1], -slope[row][::-1]
    # a line through a coded slope break does not go on past it; an end has one side only; two
    # neighbouring coded breaks may be the corners of a bench: in those cases the neighbour
    # carried level is one more guess
    brk = np.zeros(n, dtype=bool) if breaks is None else np.asarray(breaks, dtype=bool)
    pred[1, 1:] = np.where(brk[:-1], np.nan, pred[1, 1:])
    pred[2, :-1] = np.where(brk[1:], np.nan, pred[2, :-1])
    carry = brk[1:] & brk[:-1]
    carry_left = carry | (np.arange(1, n) == n - 1)  # i = 1 .. n-1 from i-1, and the last point
    carry_right = carry | (np.arange(n - 1) == 0)  # i = 0 .. n-2 from i+1, and the first point
    level_left = (np.isnan(pred[1, 1:]) | carry_left) & (dx > 0)
    pred[3, 1:] = np.where(level_left, z[:-1], np.nan)
    allow[3, 1:] = _LEVEL_GRADE * dx
    level_right = (np.isnan(pred[2, :-1]) | carry_right) & (dx > 0)
    pred[4, :-1] = np.where(level_right, z[1:], np.nan)
    allow[4, :-1] = _LEVEL_GRADE * dx
    gain[3:] = np.sqrt(2.0)
    slope[3:] = 0.0
    return pred, gain, slope, allow


def _robust_spread(miss: np.ndarray, gain: np.ndarray, floor: float) -> float:
    """1.4826 x median absolute chord residual (per unit gain), leaving out the worst residual and
    its two neighbours (one spike moves three); at least ``floor``."""
    chord = np.abs(miss / gain)
    known = np.isfinite(chord)
    if known.sum() > 3:
        worst = int(np.argmax(np.where(known, chord, -1.0)))
        known[max(worst - 1, 0) : worst + 2] = False
    spread = 1.4826 * float(np.median(chord[known])) if known.any() else 0.0
    return max(spread, floor)


def spike_scores(stations, elevations, codes=None, settings: CheckSettings | None = None):
    """How far each reading is out of line with its neighbours (stations sorted, survey unit).

    Each elevation is predicted from its neighbours only: the chord between them (right on
    smooth ground), and the lines through the two points on either side extended (right when the
    point is a slope break: a toe, a bank top, the deepest point of a V); near an end or a
    vertical face, the one neighbour carried across level.  A spike is off the same way from every
    prediction -- on a smoothly curved bank the chord and the extended lines fall on opposite
    sides of the point, and at a break one line goes through it.  Each miss is scaled by the
    noise of its prediction: the robust spread of the chord residuals over the whole section
    (1.4826 x median absolute deviation, at least half the reading precision) times the
    prediction's gain, with the tape precision times the local slope added.  The foot of a
    vertical face needs twice the score (it may sit in an undercut, or on slumped bank); a coded
    slope break (:data:`BREAK_CODES`) stops the lines through it, and two neighbouring breaks
    (a bench) may be level with each other.

    Returns ``(score, miss, expected)``: ``score`` is 1 at the flagging threshold (the chord miss
    over ``spike_score`` scaled misses and each side miss over ``spike_side_score``, whichever is
    smaller; a point with no chord needs ``spike_score`` from its sides; 0 where predictions
    disagree in sign); ``miss`` the smallest miss (survey unit, signed: + is high);
    ``expected`` the prediction closest to the reading.
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    breaks = None if codes is None else np.isin(np.asarray(codes, dtype=object), _BREAKS)
    pred, gain, slope, allow = _predictions(x, z, breaks)
    miss = z - pred
    spread = _robust_spread(miss[0], gain[0], 0.5 * cfg.reading_precision)
    noise = gain * np.hypot(spread, 0.5 * cfg.station_precision * slope) + allow
    scaled = miss / noise
    have = np.isfinite(scaled)
    up = np.all(np.where(have, scaled > 0, True), axis=0)
    down = np.all(np.where(have, scaled < 0, True), axis=0)
    # the foot of a vertical face may sit in an undercut or on slumped bank
    step = np.diff(x)
    foot = np.zeros(x.size, dtype=bool)
    foot[1:] |= (step == 0) & (z[1:] < z[:-1])
    foot[:-1] |= (step == 0) & (z[:-1] < z[1:])
    agree = have.any(axis=0) & (up | down)
    side = np.where(have[1:], np.abs(scaled[1:]), np.inf).min(axis=0)
    chord = np.abs(scaled[0])
    score = np.where(
        have[0],
        np.minimum(chord / cfg.spike_score, side / cfg.spike_side_score),
        side / cfg.spike_score,
    )
    score = np.where(agree & np.isfinite(score), score, 0.0) / np.where(foot, 2.0, 1.0)
    best = np.argmin(np.where(have, np.abs(miss), np.inf), axis=0)
    closest = miss[best, np.arange(x.size)]
    expected = np.where(np.isfinite(closest), z - closest, np.nan)
    return score, np.where(agree, closest, 0.0), expected


def spike_findings(
    stations, elevations, codes=None, readings=None, settings: CheckSettings | None = None
) -> list[Finding]:
    """``spike`` findings (stations sorted, survey unit); see :func:`spike_scores` for the method.

    A reading is flagged when its score reaches 1 and it is off by at least ``spike_floor`` and
    ``spike_depth_share`` of the section's depth (lower end minus lowest point): bank-top lips
    and cobbles a few percent of the depth high are ground, not mistakes.  It blocks when off by
    twice both.  Feature stations (any code) need half as much again, since the crew chose those
    points for their shape.  Where a neighbour could as well be the wrong one, the suggestion
    names it too (``Finding.also``).
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    if x.size < 3:
        return []
    codes = np.asarray(list(codes) if codes is not None else [""] * x.size, dtype=object)
    need = np.where(codes != "", cfg.spike_coded_factor, 1.0)
    depth = min(z[0], z[-1]) - z.min()  # deepest water the section holds
    floor = max(cfg.spike_floor, cfg.spike_depth_share * (depth if depth > 0 else np.ptp(z)))
    flagged, keep, score, miss, expected = _worst_first(x, z, codes, need, floor, cfg)
    out = []
    unit = cfg.unit
    for i in sorted(flagged):
        far = score[i] >= 2 * need[i] and abs(miss[i]) >= 2 * floor
        way = "high" if miss[i] > 0 else "low"
        hint = f"elevation near {_len(expected[i], unit)}"
        if readings is not None and np.isfinite(readings[i]):
            hint += f", reading near {_len(readings[i] + miss[i], unit)}"
        also = _either_of_two(x, z, codes, keep, i, need, floor, cfg)
        then = "".join(f"; if it reads the same, re-read station {_at(x[j], unit)}" for j in also)
        out.append(
            Finding(
                "spike",
                "block" if far else "warn",
                float(x[i]),
                f"the reading at station {_at(x[i], unit)} is {_len(abs(miss[i]), unit)} too {way} "
                f"for the ground either side (elevation {_len(z[i], unit)}; the neighbours point "
                f"to about {_len(expected[i], unit)})",
                f"re-read station {_at(x[i], unit)} ({hint}){then}; if the ground really is like "
                "that (a boulder, a hole), add a station either side and note it",
                i,
                also,
            )
        )
    return out


def _worst_first(x, z, codes, need, floor, cfg):
    """Spikes found one at a time, worst first, each left out before looking again (a spike
    throws its neighbours' predictions out too).  Returns the flagged indices, the mask of the
    points left, and score, miss and expected value of each flagged point."""
    score, miss, expected = np.zeros(x.size), np.zeros(x.size), np.full(x.size, np.nan)
    keep = np.ones(x.size, dtype=bool)
    flagged: list[int] = []
    while len(flagged) < min(max(x.size // 5, 1), _MOST_SPIKES):
        where = np.flatnonzero(keep)
        sc, ms, ex = spike_scores(x[keep], z[keep], codes[keep], cfg)
        over = (sc >= need[keep]) & (np.abs(ms) >= floor)
        if not over.any() or where.size < 4:
            break
        k = int(np.argmax(np.where(over, sc / need[keep], -1.0)))
        i = int(where[k])
        score[i], miss[i], expected[i] = sc[k], ms[k], ex[k]
        flagged.append(i)
        keep[i] = False
    return flagged, keep, score, miss, expected


def _either_of_two(x, z, codes, keep, i, need, floor, cfg) -> tuple[int, ...]:
    """Neighbours of flagged point ``i`` whose removal would clear it: either may be wrong.

    Near an end or a vertical face a point has few neighbours to be judged by, and one wrong
    reading makes its neighbour look wrong too (a stake and the bank top beside it).
    """
    kept = np.flatnonzero(keep)
    at = np.searchsorted(kept, i)
    out = []
    for j in (kept[at - 1] if at > 0 else -1, kept[at] if at < kept.size else -1):
        if j < 0 or x[j] == x[i]:
            continue
        mask = keep.copy()
        mask[[i, j]] = True, False
        sc, ms, _ = spike_scores(x[mask], z[mask], codes[mask], cfg)
        k = int(np.searchsorted(np.flatnonzero(mask), i))
        if sc[k] < need[i] or abs(ms[k]) < floor:
            out.append(int(j))
    return tuple(out)


# ---------------------------------------------------------------------------------------- water
def overtopped_findings(stations, elevations, stage: float, unit: str = "m") -> list[Finding]:
    """``overtopped`` findings: the water level above the first or last point (survey unit).

    >>> overtopped_findings([0, 1, 2], [1.0, 0.0, 2.0], 1.5)[0].message[:40]
    'water level 1.500 m is 0.500 m above the'
    """
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    out = []
    for side, i, way in (("left", 0, "before"), ("right", x.size - 1, "beyond")):
        if stage > z[i]:
            out.append(
                Finding(
                    "overtopped",
                    "block",
                    float(x[i]),
                    f"water level {_len(stage, unit)} is {_len(stage - z[i], unit)} above the "
                    f"{side} end of the survey (station {_at(x[i], unit)}, elevation "
                    f"{_len(z[i], unit)}): the section does not hold the water",
                    f"extend the survey on the {side} bank: add stations {way} {_at(x[i], unit)} "
                    "until the ground is above the water level, or check the water level",
                    i,
                )
            )
    return out


def _wet_panels(x: np.ndarray, z: np.ndarray, stage: float):
    """Per panel: wetted width, mean depth, mean depth^(5/3) and the water's edge inside it."""
    d = np.maximum(stage - z, 0.0)
    width = np.diff(x)
    da, db = d[:-1], d[1:]
    both = (da > 0) & (db > 0)
    one = (da > 0) ^ (db > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        part = np.where(one, np.maximum(da, db) / np.abs(z[1:] - z[:-1]), 0.0)
    wet_width = width * np.where(both, 1.0, part)
    mean_depth = np.where(both, 0.5 * (da + db), 0.5 * np.maximum(da, db))
    # depth varies linearly across the wetted part: mean of d^(5/3) = [d^(8/3)] / (8/3 * [d])
    lo, hi = np.where(both, da, 0.0), np.maximum(da, db)
    hi = np.where(both, db, hi)
    with np.errstate(divide="ignore", invalid="ignore"):
        mean_f = (hi ** (8 / 3) - lo ** (8 / 3)) / ((8 / 3) * (hi - lo))
    mean_f = np.where(np.abs(hi - lo) > 1e-9, mean_f, lo ** (5 / 3))
    edge = np.where(one, np.where(da > 0, x[:-1] + wet_width, x[1:] - wet_width), np.nan)
    return wet_width, mean_depth, mean_f, edge


def edge_findings(stations, elevations, stage: float, codes=None, settings=None) -> list[Finding]:
    """``edge`` findings: a water's edge not read (stations sorted, survey unit).

    Edges are found as :meth:`core.geometry.Section.edges` finds them (straight ground between
    stations); one farther than ``edge_distance`` from both stations of its panel lies in a panel
    wider than twice that, so the real edge -- and the wetted width -- is guessed, not read.  A
    station coded ``water_edge`` more than ``edge_height_share`` of the deepest water (at least
    three times the reading precision, and twice the station precision times the bank's slope)
    above or below the water level was not read at the edge (or the water level has changed).
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    unit, out = cfg.unit, []
    for j, at in enumerate(_wet_panels(x, z, stage)[3].tolist()):
        gap = min(at - x[j], x[j + 1] - at) if math.isfinite(at) else 0.0
        thin = stage - min(z[j], z[j + 1]) <= 2 * cfg.reading_precision
        brim = max(z[j], z[j + 1]) - stage <= 2 * cfg.reading_precision
        if gap <= cfg.edge_distance or thin or brim:
            continue  # near a station, or water or bank within reading of the water level
        message = (
            f"the {'left' if z[j] > z[j + 1] else 'right'} water's edge falls about "
            f"{_at(at, unit)}, inside the {_len(x[j + 1] - x[j], unit, 2)} panel from "
            f"{_at(x[j], unit)} to {_at(x[j + 1], unit)}; no station was read within "
            f"{_len(gap, unit, 2)} of it"
        )
        todo = f"add a station at the water's edge, near {_new_station(at, unit)} (read where the water meets the ground)"
        out.append(Finding("edge", "warn", float(at), message, todo))
    allowed = max(cfg.edge_height_share * (stage - z.min()), 3 * cfg.reading_precision)
    for i in [i for i, c in enumerate(codes or []) if c == "water_edge"]:
        lo, hi = max(i - 1, 0), min(i + 1, x.size - 1)
        steep = abs(z[hi] - z[lo]) / (x[hi] - x[lo]) if x[hi] > x[lo] else 0.0
        if abs(z[i] - stage) <= max(allowed, 2 * cfg.station_precision * steep):
            continue  # on a steep bank a tape error of the station moves the height a lot
        way = "above" if z[i] > stage else "below"
        message = (
            f"station {_at(x[i], unit)} is coded water's edge but lies "
            f"{_len(abs(z[i] - stage), unit)} {way} the water level ({_len(stage, unit)})"
        )
        todo = f"re-read station {_at(x[i], unit)} at the water's edge, or check the water level"
        out.append(Finding("edge", "warn", float(x[i]), message, todo, i))
    return out


def sparse_findings(stations, elevations, stage: float, settings=None) -> list[Finding]:
    """``sparse`` finding when fewer than ``min_wet_stations`` stations lie across the water.

    Counted from the first water's edge to the last (bars inside included), with stations read
    at an edge (within the reading precision of the water level) counted.
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    wet = np.flatnonzero(z < stage)
    if wet.size == 0:
        return []
    lo, hi = int(wet[0]), int(wet[-1])
    lo -= int(lo > 0 and z[lo - 1] <= stage + cfg.reading_precision)
    hi += int(hi < x.size - 1 and z[hi + 1] <= stage + cfg.reading_precision)
    count = hi - lo + 1
    need = cfg.min_wet_stations
    if count >= need:
        return []
    _, _, _, edge = _wet_panels(x, z, stage)
    edges = edge[np.isfinite(edge)]
    left = float(edges[0]) if edges.size else float(x[lo])
    right = float(edges[-1]) if edges.size else float(x[hi])
    spacing = (right - left) / need
    unit = cfg.unit
    return [
        Finding(
            "sparse",
            "warn",
            float(x[lo]),
            f"only {count} stations across the water from {_at(left, unit)} to "
            f"{_at(right, unit)}; at least {need} are asked for (common practice: 20 or more)",
            f"add stations about every {_len(spacing, unit, 2)} across the water, starting near "
            f"{_new_station(left + spacing, unit)}",
            lo,
        )
    ]


def _break_miss(x: np.ndarray, z: np.ndarray, stage: float):
    """Area the straight line across each panel may miss at a slope break, and where the break is.

    The lines of the two neighbouring segments are extended into the panel; where they meet
    inside it, the ground may bend there, and the triangle between that bend and the straight
    line is the area the panel may be wrong by (survey unit²).  NaN where there is no such bend.
    """
    n = x.size
    miss = np.full(n - 1, np.nan)
    where = np.full(n - 1, np.nan)
    if n < 4:
        return miss, where
    dx = np.diff(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        seg = np.diff(z) / dx
        a, b = slice(1, n - 2), slice(2, n - 1)  # panels 1 .. n-3 have a segment either side
        sl, sr = seg[:-2], seg[2:]
        xa, xb, za, zb = x[a], x[b], z[a], z[b]
        cross = (zb - za - sr * xb + sl * xa) / (sl - sr)
        inside = (dx[:-2] > 0) & (dx[2:] > 0) & (cross > xa) & (cross < xb)
        bend = za + sl * (cross - xa)
        chord = za + (zb - za) * (cross - xa) / (xb - xa)
        area = 0.5 * (xb - xa) * np.abs(chord - bend)
    wet = (za < stage) & (zb < stage) & (bend < stage)
    miss[1:-1] = np.where(inside & wet, area, np.nan)
    where[1:-1] = np.where(inside & wet, cross, np.nan)
    return miss, where


def gap_findings(stations, elevations, stage: float, settings=None) -> list[Finding]:
    """``gap`` findings: wetted panels too wide for the channel (stations sorted, survey unit).

    Three rules, each named in the finding:

    - flow share: a panel carrying more than ``max_panel_share`` of the flow, with
      depth^(5/3) x width as the share proxy (Manning's equation at one slope and roughness);
      USGS discharge-measurement practice asks that no partial section carry more than about
      10 %, ideally 5 % (Rantz 1982, WSP 2175; Turnipseed & Sauer 2010, TM 3-A8; from memory);
    - wide panel: wider than ``wide_panel_ratio`` times the wider of its neighbours and the
      median wetted panel, and wider than 1/``min_wet_stations`` of the water surface (common
      practice: 20 or more stations across);
    - slope break: the neighbouring segments, extended, meet inside the panel and the straight
      line may miss more than ``break_area_share`` of the panel's area (USBR Water Measurement
      Manual ch. 10: verticals so that straight lines between them are within 3 % in area) and
      more than ``break_min_share`` of the whole wetted area.

    The suggestion names the station to add: the likely break, else the middle of the panel.
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    wet_width, mean_depth, mean_f, _ = _wet_panels(x, z, stage)
    if np.sum(wet_width * mean_f) <= 0:
        return []
    why: dict[int, list[str]] = {}
    for j, reason in _gap_reasons(x, wet_width, mean_f, cfg):
        why.setdefault(j, []).append(reason)
    add_at = {}  # the likely break, where there is one
    for j, reason, at in _break_reasons(x, z, stage, wet_width * mean_depth, cfg):
        why.setdefault(j, []).append(reason)
        add_at[j] = at
    unit = cfg.unit
    return [
        Finding(
            "gap",
            "warn",
            float(x[j]),
            f"the panel from {_at(x[j], unit)} to {_at(x[j + 1], unit)} "
            f"({_len(x[j + 1] - x[j], unit, 2)} wide) is too wide: {'; '.join(reasons)}",
            f"add a station at {_new_station(add_at.get(j, 0.5 * (x[j] + x[j + 1])), unit)}",
            j,
        )
        for j, reasons in sorted(why.items())
    ]


def _gap_reasons(x, wet_width, mean_f, cfg):
    """(panel, reason) for the flow-share and wide-panel rules of :func:`gap_findings`."""
    flow = wet_width * mean_f
    share = flow / flow.sum()
    for j in np.flatnonzero(share > cfg.max_panel_share).tolist():
        yield (
            j,
            (
                f"it carries about {100 * share[j]:.1f} % of the flow by the depth^(5/3) x width "
                f"proxy (USGS practice: no panel over {100 * cfg.max_panel_share:.0f} %)"
            ),
        )
    width = np.diff(x)
    full = np.where(wet_width >= 0.5 * width, width, 0.0)  # wetted panels (edge slivers left out)
    beside = np.maximum(np.r_[0.0, full[:-1]], np.r_[full[1:], 0.0])
    typical = float(np.median(full[full > 0])) if np.any(full > 0) else 0.0
    wide = (full > cfg.wide_panel_ratio * np.maximum(beside, typical)) & (beside > 0)
    for j in np.flatnonzero(wide & (width > wet_width.sum() / cfg.min_wet_stations)).tolist():
        yield (
            j,
            (
                f"it is {width[j] / beside[j]:.1f} times as wide as the panels beside it (common "
                "practice: 20 or more stations across the water)"
            ),
        )


def _break_reasons(x, z, stage, panel_area, cfg):
    """(panel, reason, station of the likely break) for the slope-break rule."""
    miss, bend = _break_miss(x, z, stage)
    with np.errstate(invalid="ignore"):
        bad = (miss > cfg.break_area_share * panel_area) & (
            miss > cfg.break_min_share * panel_area.sum()
        )
    for j in np.flatnonzero(bad).tolist():
        yield (
            j,
            f"it spans a slope break: straight ground across it may be out by about "
            f"{_len(miss[j], cfg.unit + '²')}, {100 * miss[j] / panel_area[j]:.0f} % of its area "
            f"(USBR practice: within {100 * cfg.break_area_share:.0f} %)",
            float(bend[j]),
        )


# ---------------------------------------------------------------------------- line and closure
def _number(meta: Mapping, key: str) -> float | None:
    value = meta.get(key)
    if value is None or value == "":
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise SurveyError(f"survey detail {key!r} is {value!r}, not a number") from None
    if not math.isfinite(number):
        raise SurveyError(f"survey detail {key!r} is {value!r}, not a finite number")
    return number


def _line_at(meta: Mapping, stations) -> np.ndarray | None:
    """Elevation of the level line at ``stations`` (survey unit), or None without line heights.

    As the store reduces readings: straight between the stakes (at 0 and ``stake_distance``,
    from the ``origin`` stake) when their heights differ and the distance is known, else their
    mean.
    """
    left, right = _number(meta, "line_left"), _number(meta, "line_right")
    if left is None and right is None:
        return None
    left = right if left is None else left
    right = left if right is None else right
    x = np.asarray(stations, dtype=float)
    distance = _number(meta, "stake_distance")
    if left == right or not distance:
        return np.full(x.shape, 0.5 * (left + right))
    at_left, at_right = (0.0, distance) if meta.get("origin", "left") == "left" else (distance, 0.0)
    return left + (right - left) * (x - at_left) / (at_right - at_left)


def line_findings(meta: Mapping, settings=None) -> list[Finding]:
    """``line`` findings: the line heights at the stakes against the crew's level check.

    ``meta`` keys (survey unit): ``line_left``, ``line_right`` (line heights recorded at the
    stakes), ``line_check`` (the line's height found by the level check) and optionally
    ``line_check_station`` (where the check was taken; the line is straight between the stakes,
    see ``stake_distance`` and ``origin``).  Without a station the line is meant to be level and
    each stake's height must agree with the check within ``settings.line_tolerance``.
    """
    cfg = settings or CheckSettings()
    left, right = _number(meta, "line_left"), _number(meta, "line_right")
    check = _number(meta, "line_check")
    if check is None or (left is None and right is None):
        return []
    at = _number(meta, "line_check_station")
    if at is not None:
        ends = [(f"the line at {_at(at, cfg.unit)}", float(_line_at(meta, at)))]
    else:
        ends = [
            (n, v)
            for n, v in (("the left stake", left), ("the right stake", right))
            if v is not None
        ]
    out = []
    for name, height in ends:
        off = height - check
        if abs(off) > cfg.line_tolerance:
            out.append(
                Finding(
                    "line",
                    "block",
                    None,
                    f"the line height at {name} ({_len(height, cfg.unit)}) differs from the level "
                    f"check ({_len(check, cfg.unit)}) by {_len(abs(off), cfg.unit)}; tolerance "
                    f"{_len(cfg.line_tolerance, cfg.unit)}",
                    f"re-level the line at {name.removeprefix('the ')} (check it has not "
                    "slipped or sagged), then re-enter its height",
                )
            )
    return out


def reading_findings(stations, readings, elevations=None, meta=None, settings=None):
    """``line`` findings for readings no plumb (or rod) could give, and for elevations that are
    not line height minus reading (stations, readings, elevations in the survey unit; NaN for a
    reading not recorded)."""
    cfg, meta = settings or CheckSettings(), meta or {}
    x, r = np.asarray(stations, dtype=float), np.asarray(readings, dtype=float)
    unit = cfg.unit
    tool = "rod" if meta.get("method") == "rod" else "plumb"
    longest = _number(meta, "plumb_length") or cfg.plumb_length
    too_long = r > longest if longest is not None else np.zeros(r.size, dtype=bool)
    out = []
    for i in np.flatnonzero((r < 0) | too_long).tolist():
        at, reading = _at(x[i], unit), _len(r[i], unit)
        if r[i] < 0:
            message = (
                f"the reading at station {at} is negative ({reading}); a {tool} reading cannot be"
            )
            why = "a sign typed by mistake, or the line lifted?"
        else:
            message = f"the reading at station {at} ({reading}) is longer than the {tool} ({_len(longest, unit)})"
            why = "a digit typed twice or missed?"
        out.append(
            Finding("line", "block", float(x[i]), message, f"re-read station {at} ({why})", i)
        )
    left, right = _number(meta, "line_left"), _number(meta, "line_right")
    sloped = None not in (left, right) and left != right and not _number(meta, "stake_distance")
    line = None if elevations is None or tool == "rod" or sloped else _line_at(meta, x)
    if line is None:  # a sloping line with no stake distance: how it was reduced is not known
        return out
    expected = line - r
    off = np.asarray(elevations, dtype=float) - expected
    for i in np.flatnonzero(np.abs(off) > cfg.reading_precision).tolist():
        at = _at(x[i], unit)
        message = (
            f"at station {at} the elevation {_len(off[i] + expected[i], unit)} is not line "
            f"height minus reading ({_len(expected[i], unit)})"
        )
        todo = f"re-enter station {at} so that reading and elevation agree"
        out.append(Finding("line", "warn", float(x[i]), message, todo, i))
    return out


def closure_tolerance(loop_length: float | None, settings=None) -> float:
    """Allowed level-loop misclosure (survey unit) for a loop ``loop_length`` long (survey unit).

    Third-order levelling: 12 mm x sqrt(K), K the loop length in km; 0.05 ft x sqrt(M), M in
    miles (FGCC 1984; from memory).  Unknown length: 1 km (or 1 mile) is assumed.
    ``settings.closure_tolerance`` replaces the formula when set.

    >>> round(closure_tolerance(250.0), 4)
    0.006
    """
    cfg = settings or CheckSettings()
    if cfg.closure_tolerance is not None:
        return float(cfg.closure_tolerance)
    length = cfg.closure_length_unit if loop_length is None else float(loop_length)
    return cfg.closure_coefficient * math.sqrt(max(length, 0.0) / cfg.closure_length_unit)


def closure_findings(meta: Mapping, settings=None) -> list[Finding]:
    """``closure`` finding for a level loop that closes on its benchmark beyond tolerance.

    ``meta`` keys: ``backsights`` and ``foresights`` (lists, survey unit) or ``misclosure``, and
    ``loop_length`` (survey unit, the distance levelled out and back).
    """
    cfg = settings or CheckSettings()
    misclosure = _number(meta, "misclosure")
    if misclosure is None and meta.get("backsights") is not None:
        back = _as_array(meta["backsights"], "backsights")
        fore = _as_array(meta.get("foresights") or [], "foresights")
        misclosure = float(np.sum(back) - np.sum(fore))
    if misclosure is None:
        return []
    length = _number(meta, "loop_length")
    tol = closure_tolerance(length, cfg)
    if abs(misclosure) <= tol:
        return []
    unit = cfg.unit
    basis = (
        "the tolerance set by the crew"
        if cfg.closure_tolerance is not None
        else "third-order levelling, FGCC 1984"
        + (
            ""
            if length is not None
            else f", loop length not given: 1 {'km' if unit == 'm' else 'mile'} assumed"
        )
    )
    return [
        Finding(
            "closure",
            "block",
            None,
            f"the level loop misses the benchmark by {_len(misclosure, unit)}; allowed "
            f"{_len(tol, unit)} ({basis})",
            "re-run the level loop back to the benchmark (check the backsight, the turning "
            "points and the rod foot), then re-enter the readings",
        )
    ]


# --------------------------------------------------------------------------------------- review
_RANK = {severity: rank for rank, severity in enumerate(SEVERITIES)}


def review(
    stations: Sequence[float],
    elevations: Sequence[float],
    stage: float | None = None,
    meta: Mapping | None = None,
    codes: Sequence[str] | None = None,
    readings: Sequence[float | None] | None = None,
    settings: CheckSettings | Mapping | None = None,
) -> list[Finding]:
    """Run every field check on a section as entered; findings sorted by severity, then station.

    ``stations``, ``elevations`` (survey unit) in the order entered -- stations may go backwards
    or repeat, that is what the order and duplicate checks look for.  ``stage``: water level
    (elevation) during the survey, or ``None`` to skip the checks that need water.  ``meta``: the
    visit's details (``unit``, ``method`` "line" or "rod", ``line_left``, ``line_right``,
    ``line_check``, ``line_check_station``, ``stake_distance``, ``origin``, ``plumb_length``,
    ``backsights``, ``foresights``, ``misclosure``, ``loop_length``; other keys are ignored, so
    a visit record can be passed as it is).
    ``codes``: feature code of each point ("bank_top", "toe", "water_edge", "deepest", "bar" ...).
    ``readings``: raw reading of each point (``None`` or NaN when unknown).  ``settings``: a
    :class:`CheckSettings`, or a dict of overrides of the defaults for the survey's unit.

    Fewer than 2 points give no findings; malformed input (non-numbers, NaN, lengths that differ)
    raises :class:`core.errors.SectionError` naming the point.  Indices in the findings refer to
    the sequence as entered.
    """
    meta = dict(meta or {})
    cfg = resolve_settings(settings, meta.get("unit") or None)
    x, z, codes, readings = _inputs(stations, elevations, codes, readings)
    out = line_findings(meta, cfg) + closure_findings(meta, cfg)
    if readings is not None:
        out += reading_findings(x, readings, z, meta, cfg)
    if x.size < 2:
        return _sorted(out)
    out += order_findings(x, cfg.unit)
    order = np.argsort(x, kind="stable")
    xs, zs = x[order], z[order]
    cs = [codes[i] for i in order]
    rs = readings[order] if readings is not None else None
    inner = duplicate_findings(xs, zs, cs, cfg)
    twice = {f.station for f in inner if f.severity == "block"}  # one cause, one finding
    inner += [f for f in spike_findings(xs, zs, cs, rs, cfg) if f.station not in twice]
    if stage is not None:
        stage = float(stage)
        if not math.isfinite(stage):
            raise SurveyError("the water level must be a finite number")
        over = overtopped_findings(xs, zs, stage, cfg.unit)
        inner += over
        if not over and np.any(zs < stage):
            inner += sparse_findings(xs, zs, stage, cfg)
            inner += edge_findings(xs, zs, stage, cs, cfg)
            inner += gap_findings(xs, zs, stage, cfg)
    for f in inner:
        if f.index is not None:
            f = replace(f, index=int(order[f.index]), also=tuple(int(order[j]) for j in f.also))
        out.append(f)
    return _sorted(out)


def _sorted(findings: list[Finding]) -> list[Finding]:
    far = math.inf
    return sorted(
        findings,
        key=lambda f: (_RANK[f.severity], far if f.station is None else f.station, f.kind),
    )

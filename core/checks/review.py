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

Import everything from this module.  The code lives in four: this one (review, order, duplicate,
line and closure checks), :mod:`stakeline.checks.spike` (spike), :mod:`stakeline.checks.water` (overtopped,
sparse, edge, gap) and :mod:`stakeline.checks.common` (:class:`Finding`, :class:`CheckSettings`,
formatting and input helpers shared by the others, importing none of them).

>>> found = review(range(11), [2.0, 1.6, 1.3, 1.1, 1.0, 1.6, 1.0, 1.1, 1.3, 1.6, 2.0])
>>> [(f.kind, f.severity, f.station) for f in found]
[('spike', 'block', 5.0)]
>>> review([0, 1, 2, 3, 4], [2.0, 1.0, 0.5, 1.0, 2.0], stage=2.2)[0].kind
'overtopped'
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import replace

import numpy as np
from stakeline.checks.common import (
    BREAK_CODES,
    FACE_CODES,
    KINDS,
    SEVERITIES,
    CheckSettings,
    Finding,
    _at,
    _inputs,
    _len,
    resolve_settings,
)
from stakeline.checks.line import (
    closure_findings,
    closure_tolerance,
    line_findings,
    reading_findings,
)
from stakeline.checks.spike import spike_findings, spike_scores
from stakeline.checks.water import edge_findings, gap_findings, overtopped_findings, sparse_findings
from stakeline.errors import SurveyError
from stakeline.survey.geometry import close_stations, snap_stations

__all__ = [
    "BREAK_CODES",
    "FACE_CODES",
    "KINDS",
    "POINT_KINDS",
    "SEVERITIES",
    "CheckSettings",
    "Finding",
    "closure_findings",
    "closure_tolerance",
    "duplicate_findings",
    "edge_findings",
    "flagged_stations",
    "gap_findings",
    "line_findings",
    "order_findings",
    "overtopped_findings",
    "reading_findings",
    "resolve_settings",
    "review",
    "sparse_findings",
    "spike_findings",
    "spike_scores",
]


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

    Three or more readings at one station that go down and back up describe a slit of no width,
    which no plumb can read, yet it counts twice its depth as wetted perimeter: ``block``.

    >>> [(f.kind, f.severity) for f in duplicate_findings([0, 2, 2, 2, 4], [1, 1, 0, 1, 1])]
    [('duplicate', 'block')]
    """
    cfg = settings or CheckSettings()
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    codes = list(codes) if codes is not None else [""] * x.size
    out, in_slit = _slit_findings(x, z, cfg)
    for i in np.flatnonzero(np.diff(x) == 0).tolist():
        if i in in_slit:
            continue
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


def _slit_findings(x: np.ndarray, z: np.ndarray, cfg: CheckSettings):
    """Block findings for slits -- runs of three or more readings at one station going down and
    back up -- and the positions ``i`` of the pairs ``(i, i + 1)`` inside them."""
    out, inside = [], set()
    edges = np.flatnonzero(np.r_[True, np.diff(x) != 0, True])
    for start, stop in zip(edges[:-1].tolist(), edges[1:].tolist(), strict=True):
        if stop - start < 3:
            continue
        run = z[start:stop]
        before = np.maximum.accumulate(run)
        after = np.maximum.accumulate(run[::-1])[::-1]
        depth = np.minimum(before, after) - run
        k = int(np.argmax(depth))
        if depth[k] <= 2 * cfg.reading_precision:
            continue
        inside.update(range(start, stop - 1))
        unit, at = cfg.unit, _at(x[start], cfg.unit)
        read = ", ".join(f"{v:.3f}" for v in run.tolist())
        message = (
            f"station {at} was read {stop - start} times going down and back up (elevations "
            f"{read} {unit}): a slit of no width, which no plumb can read, that counts "
            f"{_len(2 * depth[k], unit)} of wetted perimeter and no area"
        )
        todo = (
            f"re-read station {at}: a vertical face has two readings (top and foot), so delete "
            "the others; a narrow hole needs its own stations either side"
        )
        out.append(Finding("duplicate", "block", float(x[start]), message, todo, start + k))
    return out, inside


def _close_findings(x: np.ndarray, unit: str) -> list[Finding]:
    """Block findings for stations closer than a micrometre to the one before (sorted)."""
    out = []
    for i in close_stations(x).tolist():
        message = (
            f"stations {x[i - 1]!r} and {x[i]!r} {unit} are closer than a micrometre, which no "
            "tape reads"
        )
        todo = (
            f"give both points one station (a vertical face), or correct the tape reading at "
            f"{_at(x[i], unit)}"
        )
        out.append(Finding("duplicate", "block", float(x[i]), message, todo, i))
    return out


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

    Fewer than 2 points give no findings; malformed input (non-numbers, NaN, lengths that differ,
    values beyond ±10^6 of the unit) raises :class:`stakeline.errors.SectionError` naming the
    point.  Indices in the findings refer to the sequence as entered.

    Examples
    --------
    >>> found = review([0, 1, 2, 2, 2, 3, 4], [2.0, 1.0, 1.0, 0.0, 1.0, 1.0, 2.0])
    >>> [(f.kind, f.severity, f.station) for f in found]      # a slit: read down and back up
    [('duplicate', 'block', 2.0)]
    >>> review([0, 1, 2], [1.0, 0.5, 1.0], meta={"line_left": 101, "line_right": 101,
    ...                                          "line_check": 101.03})[0].kind
    'line'
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
    close = _close_findings(xs, cfg.unit)
    xs = snap_stations(xs)  # the checks below read them as one station
    inner = close + [f for f in duplicate_findings(xs, zs, cs, cfg) if f.index not in
                     {c.index for c in close}]  # fmt: skip
    twice = {xs[f.index] for f in inner if f.severity == "block"}  # one cause, one finding
    inner += [f for f in spike_findings(xs, zs, cs, rs, cfg) if xs[f.index] not in twice]
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


POINT_KINDS = ("spike", "duplicate", "order", "line")
"""Finding kinds about one reading: the ones that flag its station on a drawing or a table."""


def flagged_stations(findings: Iterable) -> dict[float, str]:
    """The stations the findings flag, each with the message of its most serious finding.

    The one rule every screen and report follows: a ``block`` or ``warn`` finding about one
    reading (:data:`POINT_KINDS`: a spike, a repeat, a station out of order, a reading the line
    disagrees with) flags its station; findings about panels, edges or the whole survey do not.
    ``findings`` may be :class:`Finding` objects or their dicts (:meth:`Finding.as_dict`).

    Examples
    --------
    >>> found = review(range(11), [2.0, 1.6, 1.3, 1.1, 1.0, 1.6, 1.0, 1.1, 1.3, 1.6, 2.0])
    >>> list(flagged_stations(found))
    [5.0]
    """
    rows = [f.as_dict() if isinstance(f, Finding) else f for f in findings]
    rows.sort(key=lambda f: _RANK.get(f.get("severity"), len(_RANK)))
    out: dict[float, str] = {}
    for f in rows:
        loud = f.get("severity") in ("block", "warn") and f.get("kind") in POINT_KINDS
        if loud and f.get("station") is not None:
            out.setdefault(f["station"], f.get("message", ""))
    return out

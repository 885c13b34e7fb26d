"""Field checks, ``spike``: readings out of line with their neighbours (see :func:`spike_scores`).

Part of the field checks; import the public names from :mod:`stakeline.checks`.  Stations sorted,
lengths in the survey unit; pure numpy.
"""

from __future__ import annotations

import numpy as np
from stakeline.checks.common import _BREAKS, CheckSettings, Finding, _at, _len

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
    # a vertical face (base 0) gives no line: its inf and NaN are masked out by ``ok``
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
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

"""Field checks of the line and the level: ``line`` (the level check on the line heights, readings
no plumb could give, elevations that are not line height minus reading) and ``closure``.

Part of the field checks; import the public names from :mod:`stakeline.checks`.  The line's
height and the level check's verdict come from :class:`stakeline.survey.datum.Datum`, the same
object the store reduces readings with and the stakes screen shows, so they always agree.
Lengths in the survey unit; pure numpy.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
from stakeline.checks.common import CheckSettings, Finding, _as_array, _at, _len
from stakeline.survey.datum import Datum
from stakeline.survey.numbers import parse_number
from stakeline.survey.units import unit_of


def _detail(meta: Mapping, key: str) -> float | None:
    return parse_number(meta.get(key), f"survey detail {key!r}", optional=True)


def _datum(meta: Mapping, cfg: CheckSettings) -> Datum:
    return Datum.from_visit(dict(meta, unit=cfg.unit))


def _line_at(meta: Mapping, stations) -> np.ndarray | None:
    """Elevation of the level line at ``stations`` (survey unit), or None without line heights
    (see :meth:`stakeline.survey.datum.Datum.line_at`)."""
    datum = Datum.from_visit(meta)
    return np.asarray(datum.line_at(stations), dtype=float) if datum.ready else None


def line_findings(meta: Mapping, settings=None) -> list[Finding]:
    """``line`` findings: the crew's level check against the line heights at the stakes.

    ``meta`` keys (survey unit): ``line_left``, ``line_right`` (line heights recorded at the
    stakes), ``line_check`` (the line's height found by the level check), optionally
    ``line_check_station`` (where the check was taken), ``stake_distance`` and ``origin`` (where
    the stakes are on the tape).  The rule is :meth:`stakeline.survey.datum.Datum.line_check`:
    with the check's station known it is compared with the line there; without it, it must lie
    within ``settings.line_tolerance`` of the line somewhere between the stakes.  A failed check
    names each stake (or the check's place) and how far its height is from the check.

    >>> meta = {"line_left": 100.0, "line_right": 100.015, "line_check": 100.0075}
    >>> line_findings(meta)                       # a line sloping 15 mm between the stakes
    []
    >>> [f.severity for f in line_findings(dict(meta, line_check=100.03))]
    ['block', 'block']
    """
    cfg = settings or CheckSettings()
    verdict = _datum(meta, cfg).line_check(
        meta.get("line_check"), meta.get("line_check_station"), cfg.line_tolerance
    )
    out = []
    for name, height, off in verdict.offsets if verdict.within is False else ():
        out.append(
            Finding(
                "line",
                "block",
                None,
                f"the line height at {name} ({_len(height, cfg.unit)}) differs from the level "
                f"check ({_len(height - off, cfg.unit)}) by {_len(abs(off), cfg.unit)}; "
                f"tolerance {_len(cfg.line_tolerance, cfg.unit)}",
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
    longest = _detail(meta, "plumb_length") or cfg.plumb_length
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
    datum = _datum(meta, cfg)
    if elevations is None or tool == "rod" or not datum.ready or not datum.exact:
        return out  # a sloping line with no stake distance: how it was reduced is not known
    line = datum.line_at(x)
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
    misclosure = _detail(meta, "misclosure")
    if misclosure is None and meta.get("backsights") is not None:
        back = _as_array(meta["backsights"], "backsights")
        fore = _as_array(meta.get("foresights") or [], "foresights")
        misclosure = float(np.sum(back) - np.sum(fore))
    if misclosure is None:
        return []
    length = _detail(meta, "loop_length")
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
            else f", loop length not given: 1 {unit_of(unit).long_name} assumed"
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

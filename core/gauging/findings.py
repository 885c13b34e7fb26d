"""Checks of a gauging while the crew is still in the water, as :class:`stakeline.checks.Finding`.

========== ======== ===============================================================================
kind       severity what it means
========== ======== ===============================================================================
wading     warn     depth x velocity at a vertical reaches the wading limit (about 0.93 m²/s,
                    10 ft²/s; USGS field practice, from memory); note when it comes near
unmeasured block    a wet vertical with no velocity: the discharge leaves it out
reversed   warn     a negative velocity (flow running upstream), in the vertical or at a point
share      warn     a panel carrying over 10 % of the discharge; note over 5 % (USGS practice:
                    none over 10 %, ideally 5 %; Rantz 1982, WSP 2175; from memory)
profile    warn     a 0.2/0.8 pair off the usual profile: v02/v08 outside 1 to 2 (USGS practice;
                    see :data:`stakeline.gauging.vertical.PROFILE_RATIO`); note when 0.6 was read
meter      warn     a velocity outside the meter's rated range
verticals  warn     fewer verticals in the water than asked for (25-30 recommended; USGS
                    practice, Turnipseed & Sauer 2010, TM 3-A8; from memory)
========== ======== ===============================================================================

Severities as in :mod:`stakeline.checks`: ``block`` must be fixed (or overridden with a written
reason) before the visit is finished, ``warn`` should be looked at, ``note`` is for information.
Findings come wading first, then by severity and station.  Lengths in the survey unit.  These are
field checks: wading safety is the crew's judgement on the day, and the figures are not a
substitute for licensed engineering review.

>>> from stakeline.gauging.discharge import velocity_area
>>> r = velocity_area([0, 1, 2, 3], [0, 1.2, 0.9, 0], [0, 0.9, float("nan"), 0])
>>> [(f.kind, f.severity, f.station) for f in gauging_findings(r)]
[('wading', 'warn', 1.0), ('unmeasured', 'block', 2.0), ('share', 'warn', 1.0), ('verticals', 'warn', None)]
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, fields

import numpy as np
from stakeline.checks import Finding
from stakeline.gauging.discharge import Discharge
from stakeline.gauging.units import GaugingError, at_station, gauging_unit
from stakeline.gauging.vertical import POINTS, PROFILE_RATIO, MeterRating, suggested_method

GAUGING_KINDS = ("wading", "unmeasured", "reversed", "share", "profile", "meter", "verticals")
"""Every finding kind :func:`gauging_findings` can return."""

_SEVERITY = {"block": 0, "warn": 1, "note": 2}


@dataclass(frozen=True)
class GaugingSettings:
    """Limits of the gauging checks; lengths in ``unit``.  Build with :meth:`for_unit`.

    ``max_panel_share`` and ``aim_panel_share`` (None: no note): shares of the discharge one
    panel may carry; ``min_verticals``: fewest verticals in the water; ``wading_limit``:
    depth x velocity (unit²/s) where wading stops, ``wading_caution``: the share of it that
    gives a note; ``profile_low``/``profile_high``: usual range of v02/v08.
    """

    unit: str = "m"
    max_panel_share: float = 0.10
    aim_panel_share: float | None = 0.05
    min_verticals: int = 25
    wading_limit: float = gauging_unit("m").wading_limit
    wading_caution: float = 0.8
    profile_low: float = PROFILE_RATIO[0]
    profile_high: float = PROFILE_RATIO[1]

    @classmethod
    def for_unit(cls, unit: str = "m", **overrides) -> GaugingSettings:
        """Defaults for a gauging in ``unit``, with any fields replaced (unknown names refused).

        >>> GaugingSettings.for_unit("ft").wading_limit
        10.0
        """
        known = {f.name for f in fields(cls)} - {"unit"}
        unknown = sorted(set(overrides) - known)
        if unknown:
            raise GaugingError(
                f"unknown gauging setting {', '.join(map(repr, unknown))}; "
                f"known settings: {', '.join(sorted(known))}"
            )
        values = {"wading_limit": gauging_unit(unit).wading_limit, **overrides}
        return cls(unit=unit, **values)


def _settings(settings, unit: str | None) -> GaugingSettings:
    if isinstance(settings, GaugingSettings):
        if unit is not None and settings.unit != unit:
            raise GaugingError(
                f"the gauging is in {unit!r} but the settings are for {settings.unit!r}"
            )
        return settings
    return GaugingSettings.for_unit(unit or "m", **dict(settings or {}))


def _num(value: float, places: int = 2) -> str:
    return f"{float(value):.{places}f}"


def wading_findings(
    stations, depths, velocities, settings=None, unit: str | None = None
) -> list[Finding]:
    """``wading`` findings: verticals where depth x |velocity| reaches the limit (or comes near).

    Stations and depths in ``unit`` (default the settings' unit, else metres), velocities in
    unit/s.  Cheap enough to call on every entered velocity; NaN velocities are skipped.
    """
    cfg = _settings(settings, unit)
    u = gauging_unit(cfg.unit)
    x = np.asarray(stations, dtype=float)
    d = np.asarray(depths, dtype=float)
    v = np.abs(np.asarray(velocities, dtype=float))
    with np.errstate(invalid="ignore"):
        product = np.where(np.isnan(v), 0.0, d * v)
    out = []
    limit = cfg.wading_limit
    for i in np.flatnonzero(product >= cfg.wading_caution * limit).tolist():
        at = at_station(x[i], u.length)
        said = (
            f"station {at}: depth {_num(d[i])} {u.length} x velocity {_num(v[i])} {u.velocity} "
            f"= {_num(product[i])} {u.product}"
        )
        if product[i] >= limit:
            message = (
                f"{said} reaches the wading limit of about {_num(limit)} {u.product} "
                "(10 ft²/s; USGS field practice)"
            )
            todo = (
                "do not wade this vertical: measure it from a bridge, cableway or boat, or leave "
                "it; cold water, a soft bed or rising water lower the limit"
            )
            out.append(Finding("wading", "warn", float(x[i]), message, todo, i))
        else:
            message = f"{said} is near the wading limit of about {_num(limit)} {u.product}"
            todo = "take care here, keep a safety line, and watch for rising water"
            out.append(Finding("wading", "note", float(x[i]), message, todo, i))
    return out


def _point_arrays(points: Mapping | None, n: int) -> dict[str, np.ndarray]:
    out = {}
    for name, values in (points or {}).items():
        if name not in POINTS:
            raise GaugingError(f"point velocity {name!r} is not known; use {', '.join(POINTS)}")
        arr = np.asarray([np.nan if v is None else v for v in np.ravel(values)], dtype=float)
        if arr.size != n:
            raise GaugingError(f"{arr.size} {name} velocities for {n} verticals: give one each")
        out[name] = arr
    return out


def _unmeasured(r: Discharge, u) -> list[Finding]:
    out = []
    last = r.stations.size - 1
    for i in r.missing:
        at = at_station(r.stations[i], u.length)
        method = suggested_method(r.depths[i], u.name)
        todo = f"read the velocity at station {at} ({method} method)"
        if i in (0, last):
            todo += ", or estimate the edge velocity with an edge factor"
        message = (
            f"station {at} is wet ({_num(r.depths[i])} {u.length} deep) but has no velocity; "
            "the discharge leaves it out"
        )
        out.append(Finding("unmeasured", "block", float(r.stations[i]), message, todo, i))
    return out


def _reversed(r: Discharge, pts: dict, u) -> list[Finding]:
    negative = r.velocities < 0
    for arr in pts.values():
        negative |= arr < 0
    out = []
    for i in np.flatnonzero(negative & (r.depths > 0)).tolist():
        at = at_station(r.stations[i], u.length)
        read = [f"{n}={_num(a[i])}" for n, a in pts.items() if a[i] < 0]
        shown = ", ".join(read) if read else f"mean {_num(r.velocities[i])}"
        message = f"station {at}: negative velocity ({shown} {u.velocity}), flow running upstream"
        todo = (
            "check the meter faces into the flow and the sign was entered right; if the water "
            "really runs upstream here (an eddy), keep it negative so it is subtracted"
        )
        out.append(Finding("reversed", "warn", float(r.stations[i]), message, todo, i))
    return out


def _share(r: Discharge, cfg: GaugingSettings, u) -> list[Finding]:
    if r.discharge <= 0:
        return []
    share = r.panel_percent / 100.0
    out = []
    aim = cfg.aim_panel_share
    flagged = share > (cfg.max_panel_share if aim is None else min(aim, cfg.max_panel_share))
    for j in np.flatnonzero(flagged).tolist():
        big = share[j] > cfg.max_panel_share
        at = at_station(r.panel_station[j], u.length)
        left, right = r.panel_left[j], r.panel_right[j]
        if r.method == "midsection":
            where = f"the panel at station {at}"
            add = [edge for edge in (left, right) if edge != r.panel_station[j]]
        else:
            where = f"the panel from {at_station(left, u.length)} to {at_station(right, u.length)}"
            add = [0.5 * (left + right)]
        said = ", ".join(at_station(a, u.length) for a in add)
        limit = cfg.max_panel_share if big else aim
        message = (
            f"{where} carries {share[j] * 100:.1f} % of the discharge; over {limit * 100:g} % "
            f"(USGS practice: no panel over {cfg.max_panel_share * 100:g} %, ideally 5 %)"
        )
        todo = f"add {'a vertical' if len(add) == 1 else 'verticals'} at {said}"
        out.append(
            Finding("share", "warn" if big else "note", float(r.panel_station[j]), message, todo, j)
        )
    return out


def _profile(r: Discharge, pts: dict, cfg: GaugingSettings, u) -> list[Finding]:
    if "v02" not in pts or "v08" not in pts:
        return []
    a, b = pts["v02"], pts["v08"]
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = a / b
        off = (a > 0) & (b >= 0) & ~((ratio >= cfg.profile_low) & (ratio <= cfg.profile_high))
    out = []
    for i in np.flatnonzero(off & (r.depths > 0)).tolist():
        at = at_station(r.stations[i], u.length)
        why = (
            "the 0.8-depth velocity is the larger"
            if b[i] > a[i]
            else "the 0.8-depth velocity is under half the 0.2-depth one"
        )
        message = (
            f"station {at}: v0.2 = {_num(a[i])} and v0.8 = {_num(b[i])} {u.velocity}: {why} "
            f"(v0.2/v0.8 = {_num(ratio[i])}; the usual profile gives {cfg.profile_low:g} to "
            f"{cfg.profile_high:g}, USGS practice)"
        )
        three = "v06" in pts and not np.isnan(pts["v06"][i])
        todo = (
            "the 0.6-depth reading is in the mean (three-point method); look for a rock, weed or "
            "debris just upstream"
            if three
            else "read at 0.6 depth as well and use the three-point method; look for a rock, "
            "weed or debris just upstream"
        )
        severity = "note" if three else "warn"
        out.append(Finding("profile", severity, float(r.stations[i]), message, todo, i))
    return out


def _meter(r: Discharge, pts: dict, meter: MeterRating, u) -> list[Finding]:
    low, high = meter.rated_range(u.name)
    if low is None and high is None:
        return []
    read = pts or {"mean": r.velocities}
    out = []
    rated = f"{_num(low if low is not None else 0)}-{_num(high) if high is not None else '...'}"
    for i in np.flatnonzero(r.depths > 0).tolist():
        bad = []
        for name, arr in read.items():
            speed = abs(arr[i])
            if np.isnan(speed):
                continue
            if (low is not None and speed < low) or (high is not None and speed > high):
                bad.append(f"{name} {_num(arr[i])}")
        if bad:
            at = at_station(r.stations[i], u.length)
            message = (
                f"station {at}: {', '.join(bad)} {u.velocity} outside the rated range of meter "
                f"{meter.serial} ({rated} {u.velocity})"
            )
            todo = "re-read with a longer count, or with a meter rated for this velocity"
            out.append(Finding("meter", "warn", float(r.stations[i]), message, todo, i))
    return out


def _verticals(r: Discharge, cfg: GaugingSettings, u) -> list[Finding]:
    wet = int(np.count_nonzero(r.depths > 0))
    need = cfg.min_verticals
    if wet == 0 or wet >= need:
        return []
    spacing = r.width / (need + 2)
    message = (
        f"only {wet} verticals in the water; {need} or more are asked for (25-30 recommended, "
        "USGS practice)"
    )
    todo = f"space the verticals about every {spacing:.2f} {u.length} across the water"
    return [Finding("verticals", "warn", None, message, todo)]


def gauging_findings(
    result: Discharge,
    *,
    points: Mapping | None = None,
    meter: MeterRating | None = None,
    settings=None,
) -> list[Finding]:
    """Every gauging check on a :class:`Discharge` (see the module table).

    ``points`` maps point names (``v02``, ``v06``, ``v08``, ``surface``, ``bed``) to the velocities
    read at each vertical (unit/s, NaN or None where not read), for the profile, reversed and
    meter checks; ``meter`` gives the rated range; ``settings`` a :class:`GaugingSettings` or a
    dict of overrides.
    """
    cfg = _settings(settings, result.unit)
    u = gauging_unit(cfg.unit)
    pts = _point_arrays(points, result.stations.size)
    found = wading_findings(result.stations, result.depths, result.velocities, cfg, cfg.unit)
    found += _unmeasured(result, u)
    found += _reversed(result, pts, u)
    found += _share(result, cfg, u)
    found += _profile(result, pts, cfg, u)
    if meter is not None:
        found += _meter(result, pts, meter, u)
    found += _verticals(result, cfg, u)

    def order(f: Finding):
        station = np.inf if f.station is None else f.station
        return (f.kind != "wading", _SEVERITY[f.severity], station)

    return sorted(found, key=order)

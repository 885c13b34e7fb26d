"""Field checks that need the water level: ``overtopped``, ``sparse``, ``edge`` and ``gap``.

Part of the field checks; import the public names from :mod:`stakeline.checks`.  Stations sorted,
lengths in the survey unit, ``stage`` the water level (elevation); pure numpy.
"""

from __future__ import annotations

import math

import numpy as np
from stakeline.checks.common import CheckSettings, Finding, _at, _len, _new_station
from stakeline.survey.numbers import decimals_for


def overtopped_findings(stations, elevations, stage: float, unit: str = "m") -> list[Finding]:
    """``overtopped`` findings: the water level above the first or last point (survey unit).

    >>> overtopped_findings([0, 1, 2], [1.0, 0.0, 2.0], 1.5)[0].message[:40]
    'water level 1.500 m is 0.500 m above the'
    """
    x, z = np.asarray(stations, dtype=float), np.asarray(elevations, dtype=float)
    out = []
    for side, i, way in (("left", 0, "before"), ("right", x.size - 1, "beyond")):
        if stage > z[i]:
            d = decimals_for(stage - z[i])  # a tiny excess still shows as non-zero
            out.append(
                Finding(
                    "overtopped",
                    "block",
                    float(x[i]),
                    f"water level {_len(stage, unit, d)} is {_len(stage - z[i], unit, d)} above "
                    f"the {side} end of the survey (station {_at(x[i], unit)}, elevation "
                    f"{_len(z[i], unit, d)}): the section does not hold the water",
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

    Edges are found as :meth:`stakeline.survey.geometry.Section.edges` finds them (straight ground between
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
            f"only {count} station{'' if count == 1 else 's'} across the water from "
            f"{_at(left, unit)} to "
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

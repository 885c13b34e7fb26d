"""Generated natural cross-sections, surveyed the way a careful crew would, and error injection.

Used by the tests and the benchmark of :mod:`stakeline.checks`.  A section is built in two steps:

1. **Ground**: a dense polyline (1 cm resolution) of an invented natural channel -- floodplain
   margins where the stakes stand, two banks (sloped, steep, vertical, undercut at the toe, or with
   a bench), a bed with an off-centre thalweg, optional mid-channel or point bar and pool, and
   spatially correlated bed roughness of a gravel bed (standard deviation 3-12 mm plus up to
   1.5 % of the depth, correlated over 8-40 cm; the floodplain 6 mm).
2. **Survey**: what a crew following common practice reads on that ground at one water level --
   both stakes, the bank tops, the toes, both water's edges of every wetted part, the deepest
   point, the bar top, and regular stations at a round spacing giving 22-32 stations across the
   water (twice that spacing on the dry banks), with a station added in any panel carrying more
   than 8 % of the flow by the depth^(5/3) x width proxy, as USGS practice asks.  Stations are taped to 1 cm with a small placement error; the plumb is read to 1 mm with a
   small reading error.  Vertical faces are read twice at one station (top, then toe).

Everything is generated in metres and converted at the end when ``unit="ft"``.  Numbers only: the
creek is invented, nothing here describes a real site.

>>> import numpy as np
>>> s = natural_section(np.random.default_rng(1))
>>> bool(np.all(np.diff(s.stations) >= 0)) and len(s.stations) == len(s.codes)
True
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from stakeline.survey.reduction import UNITS, check_unit

BANK_SHAPES = ("sloped", "steep", "vertical", "undercut", "bench")
"""Bank forms the generator draws (one per side)."""

_BANK_WEIGHTS = (0.40, 0.22, 0.13, 0.13, 0.12)
_NICE_SPACINGS = (0.05, 0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0)
_GRID = 0.01  # m, resolution of the dense ground polyline
_TAPE_SD = 0.004  # m, where the plumb really touched versus the taped station
_READ_SD = 0.0025  # m, plumb reading error (read to 1 mm; precision about +-5 mm)


@dataclass(frozen=True)
class SyntheticSection:
    """One surveyed section: stations, elevations, codes and readings in ``unit``.

    ``stage`` is the water level during the survey; ``channel_depth`` the lower bank top minus the
    lowest surveyed point (the deepest water the channel holds); ``meta`` holds the visit's line
    heights and check (keys as :func:`stakeline.checks.review` reads them); ``shape`` says what was
    generated (e.g. ``"left=vertical right=sloped bar"``); ``injected`` lists the indices of any
    points changed by an injection function.
    """

    stations: np.ndarray
    elevations: np.ndarray
    codes: tuple[str, ...]
    readings: np.ndarray
    stage: float
    unit: str
    channel_depth: float
    meta: dict
    shape: str
    injected: tuple[int, ...] = ()

    def __len__(self) -> int:
        return int(self.stations.size)

    @property
    def max_water_depth(self) -> float:
        """Deepest water at ``stage`` (survey unit)."""
        return float(self.stage - self.elevations.min())


# --------------------------------------------------------------------------------------- ground
def _bank_profile(rng: np.random.Generator, shape: str, height: float) -> tuple[np.ndarray, ...]:
    """Bank from top (u=0) to toe: horizontal run and drop arrays (m), plus the face flag."""
    if shape in ("vertical", "undercut"):
        return np.array([0.0, 0.0]), np.array([0.0, height]), True
    if shape == "bench":
        run1, run2 = height * rng.uniform(0.4, 1.2), height * rng.uniform(0.4, 1.2)
        bench = rng.uniform(0.4, 1.5)
        split = rng.uniform(0.35, 0.65) * height
        u = np.array([0.0, run1, run1 + bench, run1 + bench + run2])
        return u, np.array([0.0, split, split + 0.02 * bench, height]), False
    ratio = rng.uniform(1.0, 3.0) if shape == "sloped" else rng.uniform(0.15, 0.9)
    run = height * ratio
    u = np.linspace(0.0, run, 9)
    power = rng.uniform(0.75, 1.4)  # convex or concave bank face
    return u, height * (u / run) ** power, False


def _roughness(rng: np.random.Generator, x: np.ndarray, sd: float, length: float) -> np.ndarray:
    """Spatially correlated noise (m) with standard deviation ``sd`` and correlation ``length``."""
    if sd <= 0 or x.size < 2:
        return np.zeros_like(x)
    half = max(int(length / _GRID), 1)
    kernel = np.exp(-0.5 * (np.arange(-3 * half, 3 * half + 1) / half) ** 2)
    white = rng.normal(size=x.size + kernel.size - 1)
    smooth = np.convolve(white, kernel / np.sqrt(np.sum(kernel**2)), mode="valid")
    return sd * smooth


def _bed(rng: np.random.Generator, width: float, toe_left: float, toe_right: float, depth: float):
    """Bed elevations (m) between the toes on a 1 cm grid, with thalweg, bar and pool; features."""
    v = np.linspace(0.0, 1.0, max(int(round(width / _GRID)), 2) + 1)
    thalweg = rng.uniform(0.2, 0.8)
    q = rng.uniform(1.6, 4.0)  # 2: parabolic, larger: flat-bottomed
    side = np.where(v < thalweg, (thalweg - v) / thalweg, (v - thalweg) / (1 - thalweg))
    toe = np.where(v < thalweg, toe_left, toe_right)
    bottom = -depth
    z = bottom + (toe - bottom) * side**q
    features: dict[str, float] = {}
    if rng.random() < 0.3:  # a bar: a smooth hump away from the thalweg
        centre = thalweg + rng.choice([-1, 1]) * rng.uniform(0.25, 0.45)
        centre = float(np.clip(centre, 0.12, 0.88))
        spread = rng.uniform(0.06, 0.14)
        rise = rng.uniform(0.3, 0.9) * depth
        z = z + rise * np.exp(-0.5 * ((v - centre) / spread) ** 2)
        features["bar"] = centre * width
    if rng.random() < 0.25:  # a pool: a broad extra scour next to the thalweg
        centre = float(np.clip(thalweg + rng.normal(0, 0.1), 0.1, 0.9))
        z = z - rng.uniform(0.1, 0.3) * depth * np.exp(-0.5 * ((v - centre) / 0.1) ** 2)
    sd = rng.uniform(0.003, 0.012) + rng.uniform(0.0, 0.015) * depth
    z = z + _roughness(rng, v * width, sd, rng.uniform(0.08, 0.4))
    return v * width, z, features


def _ground(rng: np.random.Generator, shapes: tuple[str, str], depth: float, width: float):
    """Dense ground polyline (x, z in m; a face is two points at one x) and named feature points."""
    top_left, top_right = 0.0, rng.uniform(0.0, 0.35) * depth
    if rng.random() < 0.5:
        top_left, top_right = top_right, top_left
    bx, bz, bed_feats = _bed(
        rng, width, -depth * rng.uniform(0.45, 0.85), -depth * rng.uniform(0.45, 0.85), depth
    )
    for side, shape in zip((bx, width - bx), shapes, strict=True):
        if shape == "undercut":  # scour pocket at the foot of the face
            bz = bz - rng.uniform(0.1, 0.3) * depth * np.exp(-side / rng.uniform(0.3, 0.8))
    feats: dict[str, list[float]] = {"bank_top": [], "toe": [], "face": [], "break": []}
    margin = rng.uniform(0.4, 2.5)
    fx = np.arange(0.0, margin, _GRID)
    xs = [fx]
    zs = [top_left + rng.uniform(-0.04, 0.04) * (fx - margin) + _roughness(rng, fx, 0.006, 0.3)]
    u, drop, face = _bank_profile(rng, shapes[0], top_left - bz[0])
    feats["bank_top"].append(margin)
    feats["face"] += [margin] if face else []
    feats["break"] += (margin + u[1:-1]).tolist() if shapes[0] == "bench" else []
    xs.append(margin + u)
    zs.append(top_left - drop)
    x0 = margin + u[-1]
    feats["toe"].append(x0)
    xs.append(x0 + bx[1:-1])
    zs.append(bz[1:-1])
    for name, at in bed_feats.items():
        feats[name] = [x0 + at]
    x0 += width
    feats["toe"].append(x0)
    u, drop, face = _bank_profile(rng, shapes[1], top_right - bz[-1])
    back = u[-1] - u[::-1]
    xs.append(x0 + back)
    zs.append(top_right - drop[::-1])
    feats["break"] += (x0 + back[1:-1]).tolist() if shapes[1] == "bench" else []
    x0 += u[-1]
    feats["bank_top"].append(x0)
    feats["face"] += [x0] if face else []
    fx = np.arange(0.0, rng.uniform(0.4, 2.5), _GRID) + _GRID
    xs.append(x0 + fx)
    zs.append(top_right + rng.uniform(-0.04, 0.04) * fx + _roughness(rng, fx, 0.006, 0.3))
    return np.concatenate(xs), np.concatenate(zs), feats


def _sample(x: np.ndarray, z: np.ndarray, at: np.ndarray) -> np.ndarray:
    """Ground elevation at ``at`` (m) away from faces (a face's own station is read separately)."""
    keep = np.concatenate([np.diff(x) > 0, [True]])
    return np.interp(at, x[keep], z[keep])


def _water_edges(x: np.ndarray, z: np.ndarray, stage: float) -> list[float]:
    """Stations (m) where the dense ground crosses the water level."""
    wet = z < stage
    change = np.flatnonzero(wet[:-1] != wet[1:])
    t = (z[change] - stage) / np.where(z[change] == z[change + 1], 1.0, z[change] - z[change + 1])
    return (x[change] + t * (x[change + 1] - x[change])).tolist()


# --------------------------------------------------------------------------------------- survey
def _plan(rng, x, z, feats, stage, stations_across):
    """Stations (m) a careful crew reads, sorted, with their feature codes ("" for regular)."""
    edges = _water_edges(x, z, stage)
    first, last = edges[0], edges[-1]
    target = stations_across if stations_across else int(rng.integers(22, 33))
    raw = (last - first) / target
    spacing = max([s for s in _NICE_SPACINGS if s <= raw], default=_NICE_SPACINGS[0])
    dry_spacing = min([s for s in _NICE_SPACINGS if s >= 2 * spacing], default=_NICE_SPACINGS[-1])
    plan: dict[float, str] = {}
    for at in np.arange(np.ceil(x[0] / spacing) * spacing, x[-1], spacing):
        on_dry_bank = at < min(first, feats["toe"][0]) or at > max(last, feats["toe"][1])
        if not on_dry_bank or abs(at / dry_spacing - round(at / dry_spacing)) < 1e-6:
            plan[round(float(at), 2)] = ""
    wanted = [(x[0], "stake"), (x[-1], "stake")]
    wanted += [(e, "water_edge") for e in edges]
    wanted += [(t, "bank_top") for t in feats["bank_top"]]
    wanted += [(t, "toe") for t in feats["toe"]]
    wanted += [(t, "break") for t in feats["break"]]
    wet = z < stage
    wanted.append((float(x[np.argmin(np.where(wet, z, np.inf))]), "deepest"))
    if "bar" in feats:
        wanted.append((feats["bar"][0], "bar"))
    for at, code in wanted:
        at = round(float(at), 2)
        for near in [k for k in plan if abs(k - at) < 0.3 * spacing and plan[k] == ""]:
            del plan[near]
        plan[at] = "" if code == "stake" else code
    return _more_where_flow_is(x, z, stage, sorted(plan.items()))


def _more_where_flow_is(x, z, stage, plan, most=0.08):
    """Split panels carrying over ``most`` of the flow (depth^(5/3) x width proxy), as a crew
    following USGS practice would (no partial section over about 10 %; Rantz 1982, from memory)."""
    for _ in range(4):
        at = np.array([p[0] for p in plan])
        depth = np.maximum(stage - _sample(x, z, at), 0.0) ** (5 / 3)
        flow = np.diff(at) * 0.5 * (depth[:-1] + depth[1:])
        over = np.flatnonzero(flow > most * flow.sum())
        if over.size == 0:
            break
        plan = sorted(plan + [(round(float(at[j] + at[j + 1]) / 2, 2), "") for j in over])
    return plan


def _read(rng, x, z, plan, line):
    """Stations, elevations and codes as read (m); faces give two points at one station."""
    face_at = np.flatnonzero(np.diff(x) == 0)
    faces = {round(float(x[i]), 2): (float(z[i]), float(z[i + 1])) for i in face_at}
    stations, elevations, codes = [], [], []
    for at, code in plan:
        if at in faces:
            for elev in faces[at]:  # left to right: top then toe on the left bank
                stations.append(at)
                elevations.append(elev + rng.normal(0, _READ_SD))
                codes.append("bank_top" if elev == max(faces[at]) else "toe")
            continue
        true_at = at + rng.normal(0, _TAPE_SD)
        for f in x[face_at]:  # the plumb stays on the side of the face it was taped on
            if abs(at - f) < 0.03:
                true_at = f + np.sign(at - f) * max(abs(true_at - f), 0.011)
        stations.append(at)
        elevations.append(float(_sample(x, z, np.array([true_at]))[0]) + rng.normal(0, _READ_SD))
        codes.append(code)
    elevations = np.round(line - np.round(line - np.array(elevations), 3), 3)
    return np.array(stations), elevations, tuple(codes)


def natural_section(
    rng: np.random.Generator,
    *,
    unit: str = "m",
    banks: tuple[str, str] | None = None,
    depth: float | None = None,
    width_ratio: float | None = None,
    stage_fraction: float | None = None,
    stations_across: int | None = None,
) -> SyntheticSection:
    """Generate one natural section surveyed by good practice.

    ``banks`` picks the left and right bank forms from :data:`BANK_SHAPES` (random by default);
    ``depth`` the channel depth in metres (0.4-2.5 m); ``width_ratio`` bed width over depth (4-20);
    ``stage_fraction`` the water depth as a fraction of the channel depth (0.25-0.85);
    ``stations_across`` the crew's target count of stations across the water (22-32).  Lengths of
    the result are in ``unit`` ("m" or "ft").
    """
    check_unit(unit)
    if banks is None:
        banks = tuple(rng.choice(BANK_SHAPES, size=2, p=_BANK_WEIGHTS).tolist())
    depth = float(depth if depth is not None else rng.uniform(0.4, 2.5))
    ratio = float(
        width_ratio if width_ratio is not None else np.exp(rng.uniform(np.log(4), np.log(20)))
    )
    x, z, feats = _ground(rng, banks, depth, depth * ratio)
    deepest = float(z.min())
    lower_end = float(min(z[0], z[-1]))
    fraction = stage_fraction if stage_fraction is not None else rng.uniform(0.25, 0.85)
    stage = deepest + fraction * (lower_end - deepest)
    line = round(float(z.max()) + rng.uniform(0.15, 0.6), 2) + 100.0
    z = z + 100.0
    stage = round(stage + 100.0, 3)
    plan = _plan(rng, x, z, feats, stage, stations_across)
    stations, elevations, codes = _read(rng, x, z, plan, line)
    section = SyntheticSection(
        stations=stations,
        elevations=elevations,
        codes=codes,
        readings=np.round(line - elevations, 3),
        stage=stage,
        unit="m",
        channel_depth=float(min(elevations[0], elevations[-1]) - elevations.min()),
        meta={
            "unit": "m",
            "method": "line",
            "line_left": line,
            "line_right": line,
            "line_check": round(line + rng.normal(0, 0.001), 3),
        },
        shape=f"left={banks[0]} right={banks[1]}" + (" bar" if "bar" in feats else ""),
    )
    return in_unit(section, unit)


def in_unit(section: SyntheticSection, unit: str) -> SyntheticSection:
    """The same section with every length converted to ``unit`` (stations to 0.01, levels 0.001)."""
    check_unit(unit)
    if unit == section.unit:
        return section
    f = UNITS[section.unit] / UNITS[unit]
    meta = dict(section.meta, unit=unit)
    for key in ("line_left", "line_right", "line_check"):
        meta[key] = round(meta[key] * f, 3)
    elevations = np.round(section.elevations * f, 3)
    return replace(
        section,
        stations=np.round(section.stations * f, 2),
        elevations=elevations,
        readings=np.round(meta["line_left"] - elevations, 3),
        stage=round(section.stage * f, 3),
        unit=unit,
        channel_depth=section.channel_depth * f,
        meta=meta,
    )


# ------------------------------------------------------------------------------------ injection
def with_point_error(section: SyntheticSection, index: int, error: float) -> SyntheticSection:
    """The section with the elevation at ``index`` off by ``error`` (survey unit; + is higher).

    The reading changes the opposite way (a plumb read ``error`` too short puts the bed too high).
    """
    elevations = section.elevations.copy()
    readings = section.readings.copy()
    elevations[index] += error
    readings[index] -= error
    return replace(section, elevations=elevations, readings=readings, injected=(int(index),))


def random_point_error(
    section: SyntheticSection,
    rng: np.random.Generator,
    low: float = 0.10,
    high: float = 0.50,
) -> tuple[SyntheticSection, int, float]:
    """Inject one error at a random station, sized ``low``-``high`` of the channel depth.

    Returns the changed section, the index and the error (survey unit, signed).
    """
    index = int(rng.integers(len(section)))
    error = float(rng.choice([-1.0, 1.0]) * rng.uniform(low, high) * section.channel_depth)
    return with_point_error(section, index, error), index, error


def without_points(section: SyntheticSection, indices) -> SyntheticSection:
    """The section with the points at ``indices`` not read (a gap, or a missing water's edge)."""
    keep = np.ones(len(section), dtype=bool)
    keep[np.asarray(indices, dtype=int)] = False
    codes = tuple(c for c, k in zip(section.codes, keep, strict=True) if k)
    return replace(
        section,
        stations=section.stations[keep],
        elevations=section.elevations[keep],
        readings=section.readings[keep],
        codes=codes,
        injected=(),
    )


def with_station_typo(section: SyntheticSection, index: int, station: float) -> SyntheticSection:
    """The section with the station at ``index`` entered as ``station`` (kept in entered order)."""
    stations = section.stations.copy()
    stations[index] = station
    return replace(section, stations=stations, injected=(int(index),))


def with_repeated_entry(
    section: SyntheticSection, index: int, error: float = 0.0
) -> SyntheticSection:
    """The section with point ``index`` entered a second time right after itself.

    ``error`` (survey unit) makes the second entry a different reading of the same station.
    """
    at = int(index) + 1
    codes = list(section.codes)
    codes.insert(at, "")
    return replace(
        section,
        stations=np.insert(section.stations, at, section.stations[index]),
        elevations=np.insert(section.elevations, at, section.elevations[index] + error),
        readings=np.insert(section.readings, at, section.readings[index] - error),
        codes=tuple(codes),
        injected=(at,),
    )


def uniform_stations(
    section: SyntheticSection, count: int, keep_codes: bool = False
) -> SyntheticSection:
    """The section re-read at only ``count`` evenly spread original points (a sparse survey).

    The two ends are always kept; with ``keep_codes`` the feature stations are kept too.
    """
    n = len(section)
    keep = set(np.unique(np.linspace(0, n - 1, count).round().astype(int)).tolist())
    if keep_codes:
        keep |= {i for i, c in enumerate(section.codes) if c}
    drop = [i for i in range(n) if i not in keep]
    return without_points(section, drop)

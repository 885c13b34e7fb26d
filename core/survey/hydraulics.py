"""Uniform-flow hydraulics of a surveyed section: Manning's equation and the figures built on it.

Manning's equation ``Q = (k/n)·A·R^(2/3)·S^(1/2)`` with ``k = 1`` for metres and ``k = 1.486`` for
feet (Chow 1959, eq. 5-7).  Figures follow the survey's one length unit:

====================  ===============  =================
figure                metres ("m")     feet ("ft")
====================  ===============  =================
area                  m²               ft²
discharge             m³/s             ft³/s
velocity              m/s              ft/s
conveyance K = Q/√S   m³/s             ft³/s
shear stress γRS      Pa (N/m²)        lb/ft²
stream power γQS/T    W/m²             ft·lb/s per ft²
Froude V/√(gD)        --               --
====================  ===============  =================

A compound section is split at given stations (normally the bank tops) into subsections with
their own n; conveyance is summed by subsection (the divided-channel method), the vertical
dividers not counted as wetted perimeter.  numpy only.

>>> from stakeline.survey.geometry import Section
>>> f = flow_at(Section([0, 0, 4, 4], [2, 0, 0, 2]), 1.0, n=0.03, slope=0.001)
>>> round(f.discharge, 4)                    # (1/0.03)·4·(4/6)^(2/3)·0.001^(1/2)
3.2177
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass

import numpy as np
from stakeline.errors import SectionError, SurveyError
from stakeline.survey.codes import BANK_TOP, normal_code
from stakeline.survey.figures import figure_unit  # noqa: F401  (its old home)
from stakeline.survey.geometry import Section
from stakeline.survey.numbers import parse_number
from stakeline.survey.units import Unit, by_unit, unit_of

MANNING_K = by_unit("manning_k")
"""Unit constant k of Manning's equation for each survey length unit (see :class:`Unit`)."""

GRAVITY = by_unit("gravity")
"""Standard gravity, m/s² and ft/s²."""

UNIT_WEIGHT = by_unit("unit_weight")
"""Unit weight of water γ: N/m³ (1000 kg/m³ × g) and lb/ft³ (common practice)."""

SUBSECTION_NAMES = ("left overbank", "main channel", "right overbank")


def _positive(value: float, name: str) -> float:
    return parse_number(value, name, positive=True)


def manning_discharge(area, hydraulic_radius, slope: float, n: float, unit: str = "m"):
    """Discharge by Manning's equation (unit³/s) from area (unit²) and hydraulic radius (unit)."""
    k = unit_of(unit).manning_k
    a = np.asarray(area, dtype=float)
    r = np.asarray(hydraulic_radius, dtype=float)
    q = (
        k
        / _positive(n, "Manning's n")
        * a
        * r ** (2.0 / 3.0)
        * math.sqrt(_positive(slope, "slope"))
    )
    return float(q) if q.ndim == 0 else q


def conveyance(area, hydraulic_radius, n: float, unit: str = "m"):
    """Conveyance K = (k/n)·A·R^(2/3) (unit³/s), so that Q = K·√S."""
    return manning_discharge(area, hydraulic_radius, 1.0, n, unit)


def froude_number(velocity, hydraulic_depth, unit: str = "m"):
    """Froude number V/√(g·D) (dimensionless); 0 where the depth is 0."""
    v = np.asarray(velocity, dtype=float)
    d = np.asarray(hydraulic_depth, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        fr = np.where(d > 0, v / np.sqrt(unit_of(unit).gravity * d), 0.0)
    return float(fr) if fr.ndim == 0 else fr


def shear_stress(hydraulic_radius, slope: float, unit: str = "m"):
    """Mean boundary shear stress γ·R·S: Pa for metres, lb/ft² for feet."""
    out = unit_of(unit).unit_weight * np.asarray(hydraulic_radius, dtype=float) * float(slope)
    return float(out) if out.ndim == 0 else out


def stream_power(discharge, slope: float, top_width, unit: str = "m"):
    """Unit stream power γ·Q·S/T: W/m² for metres, ft·lb/s per ft² for feet; 0 where T is 0."""
    q = np.asarray(discharge, dtype=float)
    t = np.asarray(top_width, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(t > 0, unit_of(unit).unit_weight * q * float(slope) / t, 0.0)
    return float(out) if out.ndim == 0 else out


def slope_from_water_levels(upstream: float, downstream: float, distance: float) -> float:
    """Water-surface (energy) slope from levels read at two sections ``distance`` apart (same unit).

    Examples
    --------
    >>> slope_from_water_levels(100.30, 100.10, 50.0)
    0.004
    """
    length = _positive(distance, "the distance between the two sections")
    fall = float(upstream) - float(downstream)
    if not (math.isfinite(fall) and fall > 0):
        raise SurveyError(
            f"the upstream water level {upstream} is not above the downstream one {downstream}; "
            "check which section is upstream"
        )
    return round(fall / length, 15)


def bank_top_splits(stations, elevations, codes: Sequence[str]) -> list[float]:
    """Stations where a compound section splits: the bank tops nearest the deepest point.

    The nearest ``bank_top`` left of the deepest point and the nearest right of it; a bank top at
    either end of the section leaves no overbank on that side and gives no split.

    Examples
    --------
    >>> bank_top_splits([0, 2, 3, 5, 6, 8], [3, 1, 0, 0, 1, 3], ["", "bank_top", "", "", "bank_top", ""])
    [2.0, 6.0]
    """
    x = np.asarray(stations, dtype=float)
    z = np.asarray(elevations, dtype=float)
    if len(codes) != x.size:
        raise SurveyError(f"{len(codes)} feature codes for {x.size} stations")
    deepest = int(np.argmin(z))
    tops = [i for i, c in enumerate(codes) if normal_code(c) == BANK_TOP]
    left = [float(x[i]) for i in tops if i < deepest and x[i] > x[0]]
    right = [float(x[i]) for i in tops if i > deepest and x[i] < x[-1]]
    return ([max(left)] if left else []) + ([min(right)] if right else [])


class CompoundSection:
    """A section split at ``splits`` stations into subsections, each with its own Manning's n.

    ``n`` has one value per subsection, left to right (``len(splits) + 1`` values).  A vertical
    ground face at a split belongs to the subsection on the deepest point's side.

    Examples
    --------
    >>> two_stage = Section([0, 0, 10, 10, 14, 14, 24, 24], [3, 1, 1, 0, 0, 1, 1, 3])
    >>> compound = CompoundSection(two_stage, [10, 14], [0.05, 0.03, 0.05])
    >>> compound.names()
    ['left overbank', 'main channel', 'right overbank']
    >>> round(float(compound.table(0.5)["conveyance"]), 4)    # (1/0.03)·2·(2/5)^(2/3)
    36.1922
    """

    def __init__(self, section: Section, splits: Sequence[float], n: Sequence[float]):
        self.section = section
        self.splits = [float(s) for s in splits]
        self.n = [_positive(v, "Manning's n") for v in n]
        if len(self.n) != len(self.splits) + 1:
            raise SurveyError(
                f"{len(self.splits)} split stations need {len(self.splits) + 1} values of n, "
                f"got {len(self.n)}"
            )
        if any(b <= a for a, b in zip(self.splits, self.splits[1:], strict=False)):
            raise SurveyError("split stations must increase from left to right")
        self.parts = self._build_parts()

    def names(self) -> list[str]:
        """Subsection names, left to right: overbanks either side of the main channel."""
        main = int(np.argmin([piece.lowest for piece, _ in self.parts]))
        left, right = main, len(self.n) - main - 1
        names = [SUBSECTION_NAMES[0] + (f" {i + 1}" if left > 1 else "") for i in range(left)]
        names.append(SUBSECTION_NAMES[1])
        names += [SUBSECTION_NAMES[2] + (f" {i + 1}" if right > 1 else "") for i in range(right)]
        return names

    def _build_parts(self) -> list[tuple[Section, list[float]]]:
        x = self.section.stations.copy()
        z = self.section.elevations.copy()
        thalweg = float(x[int(np.argmin(z))])
        cuts = []
        for s in self.splits:
            if not x[0] < s < x[-1]:
                raise SectionError(
                    f"split station {s:g} is not inside the section ({x[0]:g} to {x[-1]:g})",
                    station=s,
                )
            hits = np.flatnonzero(np.abs(x - s) < Unit.RESOLUTION)  # at a station: no sliver
            if hits.size:
                cuts.append(int(hits[0] if s <= thalweg else hits[-1]))
                continue
            j = int(np.searchsorted(x, s))
            zs = z[j - 1] + (z[j] - z[j - 1]) * (s - x[j - 1]) / (x[j] - x[j - 1])
            x, z = np.insert(x, j, s), np.insert(z, j, zs)
            cuts.append(j)
        top = self.section.highest_stage
        bounds = [0, *cuts, x.size - 1]
        parts = []
        for k in range(len(bounds) - 1):
            px, pz = list(x[bounds[k] : bounds[k + 1] + 1]), list(z[bounds[k] : bounds[k + 1] + 1])
            walls = []  # ground elevations at dividers that get an imaginary vertical wall
            if k > 0 and pz[0] < top:
                walls.append(pz[0])
                px, pz = [px[0], *px], [top, *pz]
            if k < len(bounds) - 2 and pz[-1] < top:
                walls.append(pz[-1])
                px, pz = [*px, px[-1]], [*pz, top]
            parts.append((Section(px, pz), walls))
        return parts

    def table(self, stages, unit: str = "m") -> dict:
        """Totals (area, wetted_perimeter, top_width, conveyance, ...) and ``parts`` per subsection.

        ``parts`` is a list of dicts with ``area``, ``wetted_perimeter``, ``top_width``,
        ``hydraulic_radius`` and ``conveyance`` arrays; conveyance in unit³/s.
        """
        h = np.asarray(stages, dtype=float)
        whole = self.section.table(h)  # raises when overtopped
        parts, total_k, total_p = [], np.zeros_like(h), np.zeros_like(h)
        for (piece, walls), n in zip(self.parts, self.n, strict=True):
            fig = piece.table(h)
            perimeter = fig["wetted_perimeter"]
            for ground in walls:
                perimeter = perimeter - np.maximum(h - ground, 0.0)
            perimeter = np.maximum(perimeter, 0.0)
            with np.errstate(divide="ignore", invalid="ignore"):
                radius = np.where(perimeter > 0, fig["area"] / perimeter, 0.0)
            k = conveyance(fig["area"], radius, n, unit)
            parts.append(
                {
                    "area": fig["area"],
                    "wetted_perimeter": perimeter,
                    "top_width": fig["top_width"],
                    "hydraulic_radius": radius,
                    "conveyance": k,
                }
            )
            total_k = total_k + k
            total_p = total_p + perimeter
        out = dict(whole)
        out["wetted_perimeter"] = total_p
        with np.errstate(divide="ignore", invalid="ignore"):
            out["hydraulic_radius"] = np.where(total_p > 0, whole["area"] / total_p, 0.0)
        out["conveyance"] = total_k
        out["parts"] = parts
        return out


@dataclass(frozen=True)
class Flow:
    """Uniform-flow figures at one water level; units as in the module table.

    Examples
    --------
    >>> f = flow_at(Section([0, 0, 4, 4], [2, 0, 0, 2]), 1.0, n=0.03, slope=0.001)
    >>> round(f.velocity, 4), round(f.froude, 4)             # Q/A, V/√(gD)
    (0.8044, 0.2569)
    """

    stage: float
    area: float
    wetted_perimeter: float
    top_width: float
    hydraulic_radius: float
    hydraulic_depth: float
    max_depth: float
    conveyance: float
    discharge: float
    velocity: float
    froude: float
    shear_stress: float
    stream_power: float

    def as_dict(self) -> dict:
        """Plain dict of every figure."""
        return asdict(self)


def _channel_table(section: Section, stages, n, unit: str, splits) -> dict:
    if splits:
        values = list(np.ravel(n)) if np.ndim(n) else [float(n)] * (len(splits) + 1)
        return CompoundSection(section, splits, values).table(stages, unit)
    if np.ndim(n):
        if np.size(n) != 1:
            raise SurveyError(f"{np.size(n)} values of n given for a section with no splits")
        n = float(np.ravel(n)[0])
    fig = dict(section.table(stages))
    fig["conveyance"] = conveyance(fig["area"], fig["hydraulic_radius"], n, unit)
    return fig


def flow_table(
    section: Section, stages, n, slope: float, unit: str = "m", splits=None
) -> dict[str, np.ndarray]:
    """Every :class:`Flow` figure at many water levels, as arrays shaped like ``stages``.

    ``n`` is one Manning's n, or one per subsection when ``splits`` (stations) are given; then the
    conveyance is summed by subsection and ``parts`` holds the subsection figures.

    Examples
    --------
    >>> table = flow_table(Section([0, 0, 4, 4], [2, 0, 0, 2]), [0.5, 1.0], 0.03, 0.001)
    >>> table["discharge"].round(4).tolist()
    [1.1445, 3.2177]
    """
    s = _positive(slope, "slope")
    fig = _channel_table(section, stages, n, unit_of(unit).key, splits)
    q = fig["conveyance"] * math.sqrt(s)
    with np.errstate(divide="ignore", invalid="ignore"):
        v = np.where(fig["area"] > 0, q / fig["area"], 0.0)
    fig["stage"] = np.asarray(stages, dtype=float)
    fig["discharge"] = q
    fig["velocity"] = v
    fig["froude"] = froude_number(v, fig["hydraulic_depth"], unit)
    fig["shear_stress"] = shear_stress(fig["hydraulic_radius"], s, unit)
    fig["stream_power"] = stream_power(q, s, fig["top_width"], unit)
    return fig


def flow_at(section: Section, stage: float, n, slope: float, unit: str = "m", splits=None) -> Flow:
    """All uniform-flow figures at one water level, a :class:`Flow`.

    Parameters
    ----------
    section : Section
    stage : float
        Water level (elevation), survey unit.
    n : float or list of float
        Manning's n, or one per subsection when ``splits`` are given.
    slope : float
        Energy slope (dimensionless).
    unit : str
        ``"m"`` or ``"ft"`` (k = 1 or 1.486).
    splits : list of float, optional
        Stations where the section is divided (divided-channel method).

    Examples
    --------
    >>> round(flow_at(Section([0, 0, 4, 4], [2, 0, 0, 2]), 1.0, 0.03, 0.001, "ft").discharge, 4)
    4.7815
    """
    fig = flow_table(section, float(stage), n, slope, unit, splits)
    return Flow(**{name: float(fig[name]) for name in Flow.__dataclass_fields__})


def _lowest_root(breaks, value, target: float, what: str, lo: float, hi: float) -> float:
    """Lowest stage in ``[lo, hi]`` where ``value(stages)`` reaches ``target``.

    ``value`` must be what the hydraulic figures are on a surveyed section: continuous between
    the levels ``breaks`` where the piecewise form changes, stepping only *down* at one of them
    (a flat stretch flooding adds perimeter and width at once, not area), and on each piece
    between two breaks falling first (or not at all) and then rising.  For a single channel both
    Manning's A^(5/3)·P^(-2/3) and the critical-flow factor A^(3/2)·T^(-1/2) are so: with A
    quadratic and P, T linear in the stage on a piece, the sign of their slope is that of
    ``5TP - 2A·dP/dh`` (``3T² - A·dT/dh``), which only grows with the stage.  The scan therefore
    takes every break and a fine grid; below the first scanned level that reaches the target no
    level does, and within the last step the levels that reach it form one interval, whose start
    bisection finds to machine precision.  (For a divided channel each subsection is so; the
    scan holds every subsection's breaks.)
    """
    inside = breaks[(breaks > lo) & (breaks < hi)]
    grid = np.unique(np.concatenate([np.linspace(lo, hi, 1025), inside]))
    values = value(grid)
    above = np.flatnonzero(values >= target)
    if not above.size:
        most = int(np.argmax(values))
        raise SurveyError(
            f"{what} {target:.6g} is more than the section carries at any level up to full "
            f"(at most {float(values[most]):.6g}, at water level {grid[most]:.3f}); extend the "
            "survey on the banks"
        )
    i = int(above[0])
    if i == 0:
        return float(lo)
    a, b = float(grid[i - 1]), float(grid[i])
    for _ in range(200):
        mid = 0.5 * (a + b)
        if mid in (a, b):
            break
        if float(value(np.array([mid]))[0]) >= target:
            b = mid
        else:
            a = mid
    return b


def _breaks(section: Section, n, splits) -> np.ndarray:
    """Every level where the figures' piecewise form changes, subsections included."""
    if not splits:
        return section.breakpoints
    values = list(np.ravel(n)) if np.ndim(n) else [float(n)] * (len(splits) + 1)
    parts = CompoundSection(section, splits, values).parts
    return np.unique(np.concatenate([piece.breakpoints for piece, _ in parts]))


def stage_for_discharge(
    section: Section, discharge: float, n, slope: float, unit: str = "m", splits=None
) -> float:
    """Water level (survey unit) at which uniform flow carries ``discharge`` (unit³/s).

    The lowest such level, found exactly on the piecewise form (see :func:`_lowest_root`); with
    a known slope this is the normal depth added to the lowest bed elevation.

    Examples
    --------
    >>> rect = Section([0, 0, 2, 2], [2, 0, 0, 2])
    >>> h = stage_for_discharge(rect, 1.0, 0.03, 0.001)
    >>> round(flow_at(rect, h, 0.03, 0.001).discharge, 9)
    1.0
    """
    target = _positive(discharge, "discharge")
    _positive(slope, "slope")

    def q(stages):
        return flow_table(section, stages, n, slope, unit, splits)["discharge"]

    breaks = _breaks(section, n, splits)
    return _lowest_root(breaks, q, target, "discharge", section.lowest, section.highest_stage)


def critical_stage(section: Section, discharge: float, unit: str = "m") -> float:
    """Water level (survey unit) of critical flow for ``discharge`` (unit³/s): Q²·T / (g·A³) = 1.

    The lowest such level, found exactly on the piecewise form.

    Examples
    --------
    >>> rect = Section([0, 0, 2, 2], [3, 0, 0, 3])      # y_c = (q²/g)^(1/3), q = Q/b
    >>> round(critical_stage(rect, 2.0), 6) == round((1.0 / 9.80665) ** (1 / 3), 6)
    True
    """
    target = _positive(discharge, "discharge") / math.sqrt(unit_of(unit).gravity)

    def section_factor(stages):  # Z = A·√(A/T), which equals Q/√g at critical flow
        fig = section.table(stages)
        return fig["area"] * np.sqrt(fig["hydraulic_depth"])

    return _lowest_root(
        section.breakpoints,
        section_factor,
        target,
        "discharge / √g",
        section.lowest,
        section.highest_stage,
    )


def bankfull_stage(stations, elevations, codes: Sequence[str]) -> float | None:
    """Lower of the two bank tops either side of the deepest point (survey unit), or None.

    Water spills from the section at the lower bank top, so that is the default bankfull level;
    a person may choose a field indicator instead.

    Examples
    --------
    >>> bankfull_stage([0, 1, 2, 3, 4], [2.5, 2.0, 0.0, 1.8, 2.5], ["", "bank_top", "", "bank_top", ""])
    1.8
    """
    z = np.asarray(elevations, dtype=float)
    if len(codes) != z.size or len(stations) != z.size:
        raise SurveyError(f"{len(codes)} feature codes for {z.size} stations")
    deepest = int(np.argmin(z))
    tops = [i for i, c in enumerate(codes) if normal_code(c) == BANK_TOP]
    left = [i for i in tops if i < deepest]
    right = [i for i in tops if i > deepest]
    if not left or not right:
        return None
    return float(min(z[max(left)], z[min(right)]))  # the bank tops nearest the deepest point


def bankfull_summary(section: Section, stage: float) -> dict[str, float]:
    """Bankfull figures at ``stage``: width, mean depth (A/T), max depth, width/depth ratio, area.

    Lengths in the survey unit, area in unit²; the ratio is dimensionless (inf when dry).

    Examples
    --------
    >>> b = bankfull_summary(Section([0, 0, 4, 4], [2, 0, 0, 2]), 1.0)
    >>> b["width"], b["mean_depth"], b["width_depth_ratio"]
    (4.0, 1.0, 4.0)
    """
    w = section.at(float(stage))
    mean_depth = w.hydraulic_depth
    return {
        "stage": float(stage),
        "width": w.top_width,
        "mean_depth": mean_depth,
        "max_depth": w.max_depth,
        "width_depth_ratio": w.top_width / mean_depth if mean_depth > 0 else math.inf,
        "area": w.area,
        "wetted_perimeter": w.wetted_perimeter,
        "hydraulic_radius": w.hydraulic_radius,
    }

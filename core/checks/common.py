"""Shared parts of the field checks: severities and kinds, :class:`Finding`, :class:`CheckSettings`,
message formatting and input validation.

Imported by :mod:`stakeline.checks` (which re-exports the public names: import them from there),
:mod:`stakeline.checks.spike` and :mod:`stakeline.checks.water`; it imports none of them, so the split
modules never import :mod:`stakeline.checks` itself.  The underscore helpers are for those modules only.
Pure numpy: no UI, no SQL.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np
from stakeline.errors import SectionError, SurveyError
from stakeline.survey.codes import BREAK_CODES, FACE_CODES, normal_code  # noqa: F401 (re-exported)
from stakeline.survey.geometry import check_magnitude, point_array
from stakeline.survey.units import unit_of

SEVERITIES = ("block", "warn", "note")
"""Severities, most serious first."""

KINDS = ("order", "duplicate", "overtopped", "spike", "gap", "sparse", "edge", "line", "closure")
"""Every finding kind :func:`review` can return."""

_BREAKS = np.array(sorted(BREAK_CODES), dtype=object)


@dataclass(frozen=True)
class Finding:
    """One problem found by a check.

    ``station`` is in the survey unit (``None`` for the whole survey, e.g. a level-loop closure);
    ``index`` is the 0-based position of the point in the sequence as entered (``None`` when the
    finding is not about one entered point); ``also`` the positions of other points that may be
    the one at fault (named in the suggestion: re-read them next).

    Examples
    --------
    >>> Finding("gap", "warn", 3.0, "the panel is too wide", "add a station").as_dict()["kind"]
    'gap'
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


@dataclass(frozen=True)
class CheckSettings:
    """Tolerances of the checks; lengths in ``unit``.  Build with :meth:`for_unit`.

    Examples
    --------
    >>> CheckSettings.for_unit("m", min_wet_stations=15).min_wet_stations
    15

    Attributes
    ----------

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

        Unknown names raise :class:`stakeline.errors.SurveyError` naming them.

        >>> CheckSettings.for_unit("ft").edge_distance
        0.5
        """
        defaults = unit_of(unit).check_defaults
        unit = unit_of(unit).key
        known = {f.name for f in fields(cls)} - {"unit"}
        unknown = sorted(set(overrides) - known)
        if unknown:
            raise SurveyError(
                f"unknown check setting {', '.join(map(repr, unknown))}; "
                f"known settings: {', '.join(sorted(known))}"
            )
        values = dict(defaults, **overrides)
        return cls(unit=unit, **values)


def resolve_settings(settings=None, unit: str | None = None) -> CheckSettings:
    """Settings from ``None``, a :class:`CheckSettings` or a dict of overrides, for ``unit``."""
    if isinstance(settings, CheckSettings):
        if unit is not None and unit_of(unit).key != settings.unit:
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
    step = unit_of(unit).tape_step
    return _at(round(float(value) / step) * step, unit)


# ---------------------------------------------------------------------------------------- input
def _as_array(values, name: str, n: int | None = None) -> np.ndarray:
    arr = point_array(values, name, finite=False)
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
        check_magnitude(arr, name)
    codes = [""] * x.size if codes is None else [normal_code(c) for c in codes]
    if len(codes) != x.size:
        raise SectionError(f"{len(codes)} feature codes for {x.size} stations: give one each")
    if readings is not None:
        try:
            readings = np.asarray(readings, dtype=float)
        except (TypeError, ValueError):  # None or "" for a reading not recorded
            readings = [np.nan if r is None or r == "" else r for r in readings]
        readings = _as_array(readings, "readings", x.size)
        check_magnitude(np.where(np.isfinite(readings), readings, 0.0), "reading")
    return x, z, codes, readings

"""The two length units a survey may use, with every constant that depends on them.

A survey is recorded in one length unit, metres or feet; everything the domain computes stays in
that unit.  :class:`Unit` carries what changes with it: the length of the unit in metres, the
constant k of Manning's equation, standard gravity g and the unit weight of water γ, the symbols
of derived quantities, and the crew's usual precisions and the field checks' tolerances.  The
public API takes and returns the plain strings ``"m"`` and ``"ft"``; :func:`unit_of` turns them
into a :class:`Unit` at the boundary.

>>> unit_of("ft").manning_k, unit_of("m").symbol("discharge")
(1.486, 'm³/s')
>>> unit_of("ft").to_metres(1.0)
0.3048
"""

from __future__ import annotations

from dataclasses import dataclass, field

from stakeline.errors import SurveyError

KINDS = ("length", "area", "discharge", "velocity", "shear_stress", "stream_power", "none")
"""Kinds of quantity a figure may be (see :mod:`stakeline.survey.figures`)."""


@dataclass(frozen=True, eq=False)
class Unit:
    """A survey length unit and the constants that go with it.

    Attributes
    ----------
    key : str
        ``"m"`` or ``"ft"``: the string stored with a survey and used in the public API.
    name : str
        The unit's name in words (``"metre"``).
    metres : float
        Length of one unit in metres (the international foot is 0.3048 m exactly).
    manning_k : float
        k of Manning's equation ``Q = (k/n)·A·R^(2/3)·S^(1/2)``: 1 for metres, 1.486 for feet
        (Chow 1959, eq. 5-7).
    gravity : float
        Standard gravity, unit/s² (9.80665 m/s², CGPM 1901; 32.174 ft/s²).
    unit_weight : float
        Unit weight of water γ: 9806.65 N/m³ (1000 kg/m³ × g) or 62.4 lb/ft³ (common practice).
    symbols : dict
        Symbol of each kind of quantity (:data:`KINDS`), e.g. ``"m²"`` for ``"area"``.
    reading_precision, station_precision : float
        The crew's usual ± of one plumb (or rod) reading and one tape station (common practice:
        5 mm and 10 mm, or 0.02 ft and 0.03 ft).
    check_defaults : dict
        Tolerances of the field checks in this unit (see
        :class:`stakeline.checks.CheckSettings`).
    tape_step : float
        Step a station to add is rounded to (what a tape is read to in practice).
    long_name : str
        The long distance a level loop is measured in (``"km"`` or ``"mile"``).

    Examples
    --------
    >>> FOOT.gravity, FOOT.unit_weight, str(FOOT)
    (32.174, 62.4, 'ft')
    """

    key: str
    name: str
    metres: float
    manning_k: float
    gravity: float
    unit_weight: float
    symbols: dict = field(repr=False)
    reading_precision: float
    station_precision: float
    check_defaults: dict = field(repr=False)
    tape_step: float
    long_name: str

    LIMIT = 1e6
    """Largest magnitude of a station or elevation that makes physical sense, in the unit."""

    RESOLUTION = 1e-6
    """Closest two distinct stations may be, in the unit (a micrometre in metres)."""

    def symbol(self, kind: str) -> str:
        """Symbol of a kind of quantity in this unit (``"length"`` gives ``"m"``).

        >>> FOOT.symbol("shear_stress")
        'lb/ft²'
        """
        return self.symbols[kind]

    def to_metres(self, value: float) -> float:
        """``value`` (this unit) in metres."""
        return float(value) * self.metres

    def __str__(self) -> str:
        return self.key


METRE = Unit(
    key="m",
    name="metre",
    metres=1.0,
    manning_k=1.0,
    gravity=9.80665,
    unit_weight=9806.65,
    symbols={
        "length": "m",
        "area": "m²",
        "discharge": "m³/s",
        "velocity": "m/s",
        "shear_stress": "Pa",
        "stream_power": "W/m²",
        "none": "",
    },
    reading_precision=0.005,
    station_precision=0.010,
    # Ours, set from the precisions and tuned on generated sections (bench/bench_checks.py);
    # closure: third-order levelling, 12 mm × √K km (FGCC 1984; from memory).
    check_defaults={
        "reading_precision": 0.005,
        "station_precision": 0.01,
        "spike_floor": 0.02,
        "edge_distance": 0.15,
        "line_tolerance": 0.01,
        "closure_coefficient": 0.012,
        "closure_length_unit": 1000.0,
    },
    tape_step=0.05,
    long_name="km",
)
"""The metre."""

FOOT = Unit(
    key="ft",
    name="foot",
    metres=0.3048,
    manning_k=1.486,
    gravity=32.174,
    unit_weight=62.4,
    symbols={
        "length": "ft",
        "area": "ft²",
        "discharge": "ft³/s",
        "velocity": "ft/s",
        "shear_stress": "lb/ft²",
        "stream_power": "ft·lb/s/ft²",
        "none": "",
    },
    reading_precision=0.02,
    station_precision=0.03,
    # closure: third-order levelling, 0.05 ft × √M miles (FGCC 1984; from memory).
    check_defaults={
        "reading_precision": 0.02,
        "station_precision": 0.03,
        "spike_floor": 0.06,
        "edge_distance": 0.5,
        "line_tolerance": 0.03,
        "closure_coefficient": 0.05,
        "closure_length_unit": 5280.0,
    },
    tape_step=0.1,
    long_name="mile",
)
"""The international foot (0.3048 m)."""

UNITS_BY_KEY = {unit.key: unit for unit in (METRE, FOOT)}
"""Every survey unit by its key."""


def unit_of(unit: str | Unit) -> Unit:
    """The :class:`Unit` for ``"m"`` or ``"ft"`` (a Unit is returned as it is).

    Raises :class:`stakeline.errors.SurveyError` for any other value.

    Examples
    --------
    >>> unit_of("m").name
    'metre'
    >>> unit_of("yd")
    Traceback (most recent call last):
    ...
    stakeline.errors.SurveyError: length unit 'yd' is not supported; use 'm' or 'ft'
    """
    if isinstance(unit, Unit):
        return unit
    try:
        return UNITS_BY_KEY[unit]
    except (KeyError, TypeError):
        raise SurveyError(f"length unit {unit!r} is not supported; use 'm' or 'ft'") from None


def by_unit(name: str) -> dict[str, float]:
    """``{"m": ..., "ft": ...}`` of one attribute of :class:`Unit` (for the old keyed tables).

    >>> by_unit("gravity")
    {'m': 9.80665, 'ft': 32.174}
    """
    return {key: getattr(unit, name) for key, unit in UNITS_BY_KEY.items()}

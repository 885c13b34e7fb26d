"""Typical Manning's n for natural channels, for choosing a roughness when none was measured.

Values are the minimum, normal and maximum of Chow, V. T. (1959), *Open-Channel Hydraulics*,
McGraw-Hill, Table 5-6 (natural streams, D-1 minor streams with top width at flood stage below
about 100 ft, and D-2 flood plains).  The keys and short descriptions are our own.  n is
dimensionless in Manning's equation as used here (the unit constant k carries the units).

>>> row = roughness("clean-winding")
>>> row.minimum, row.normal, row.maximum
(0.033, 0.04, 0.045)
"""

from __future__ import annotations

from dataclasses import dataclass

from stakeline.errors import SurveyError

SOURCE = "Chow, V. T. (1959). Open-Channel Hydraulics. McGraw-Hill. Table 5-6."
"""Published source of every value in :data:`ROUGHNESS`."""


@dataclass(frozen=True)
class RoughnessRow:
    """One kind of channel with its minimum, normal and maximum Manning's n (dimensionless)."""

    key: str
    description: str
    minimum: float
    normal: float
    maximum: float

    def value(self, which: str = "normal") -> float:
        """n for ``which`` of ``"minimum"``, ``"normal"`` or ``"maximum"``."""
        if which not in ("minimum", "normal", "maximum"):
            raise SurveyError(f"roughness value {which!r}: use minimum, normal or maximum")
        return float(getattr(self, which))


ROUGHNESS: tuple[RoughnessRow, ...] = (
    RoughnessRow(
        "clean-straight", "clean, straight, full stage, no rifts or deep pools", 0.025, 0.030, 0.033
    ),
    RoughnessRow(
        "clean-straight-stony", "as clean-straight, more stones and weeds", 0.030, 0.035, 0.040
    ),
    RoughnessRow("clean-winding", "clean, winding, some pools and shoals", 0.033, 0.040, 0.045),
    RoughnessRow("winding-weedy", "as clean-winding, some weeds and stones", 0.035, 0.045, 0.050),
    RoughnessRow("sluggish-weedy", "sluggish reaches, weedy, deep pools", 0.050, 0.070, 0.080),
    RoughnessRow(
        "very-weedy",
        "very weedy reaches, deep pools, heavy timber and underbrush",
        0.075,
        0.100,
        0.150,
    ),
    RoughnessRow(
        "mountain-gravel",
        "mountain stream, bed of gravels, cobbles and few boulders",
        0.030,
        0.040,
        0.050,
    ),
    RoughnessRow(
        "mountain-boulders",
        "mountain stream, bed of cobbles with large boulders",
        0.040,
        0.050,
        0.070,
    ),
    RoughnessRow("pasture-short", "flood plain, pasture, short grass", 0.025, 0.030, 0.035),
)
"""The table, in the order it is offered to a person."""

_BY_KEY = {row.key: row for row in ROUGHNESS}


def roughness_keys() -> list[str]:
    """Keys of :data:`ROUGHNESS`, in table order."""
    return [row.key for row in ROUGHNESS]


def roughness(key: str) -> RoughnessRow:
    """The table row named ``key``; an unknown key raises SurveyError listing the known ones.

    Examples
    --------
    >>> roughness("mountain-gravel").normal
    0.04
    """
    try:
        return _BY_KEY[key]
    except KeyError:
        raise SurveyError(
            f"roughness {key!r} is not in the table; choose one of: {', '.join(roughness_keys())}"
        ) from None


def row_for_n(n: float) -> RoughnessRow | None:
    """The first table row whose normal n equals ``n`` (to 1e-9), or None when none does."""
    for row in ROUGHNESS:
        if abs(row.normal - float(n)) <= 1e-9:
            return row
    return None

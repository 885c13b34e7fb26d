"""Feature codes: what the crew marks a point as, and what each mark means to the figures.

Every code a point may carry lives here with its plain label and properties: a *slope break*
(the ground may turn there at any angle, so the field checks do not carry a straight line
through it), a *vertical face* (two readings at one station are expected there), the *bank top*
(compound sections split there; the lower bank top is the default bankfull level) and the
*water's edge*.  The field checks, the hydraulics and the readings screen's quick chips all read
this one table; codes are stored lower-case, and a point with no code has ``""``.

>>> [code for code, _label in CHIPS]
['bank_top', 'toe', 'water_edge', 'deepest', 'bar']
>>> "toe" in BREAK_CODES and "toe" in FACE_CODES, "bar" in BREAK_CODES
(True, False)
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class FeatureCode:
    """One feature code and what it means.

    Attributes
    ----------
    code : str
        The stored code (lower case, no spaces).
    label : str
        Plain words for a button or a report.
    slope_break : bool
        The ground may turn at any angle at this point.
    vertical_face : bool
        The point is the top or foot of a vertical face: two readings at its station are expected.
    chip : bool
        Offered as a quick chip on the readings screen.

    Examples
    --------
    >>> BY_CODE["undercut"].vertical_face, BY_CODE["deepest"].slope_break
    (True, False)
    """

    code: str
    label: str
    slope_break: bool = False
    vertical_face: bool = False
    chip: bool = False


BANK_TOP = "bank_top"
"""Code of a bank top; compound sections split there and bankfull is read there."""

WATER_EDGE = "water_edge"
"""Code of a station read where the water meets the ground."""

FEATURE_CODES: tuple[FeatureCode, ...] = (
    FeatureCode(BANK_TOP, "Bank top", slope_break=True, vertical_face=True, chip=True),
    FeatureCode("toe", "Toe", slope_break=True, vertical_face=True, chip=True),
    FeatureCode(WATER_EDGE, "Water's edge", chip=True),
    FeatureCode("deepest", "Deepest", chip=True),
    FeatureCode("bar", "Bar", chip=True),
    FeatureCode("break", "Slope break", slope_break=True),
    FeatureCode("bench", "Bench", slope_break=True),
    FeatureCode("face", "Face", slope_break=True, vertical_face=True),
    FeatureCode("undercut", "Undercut", slope_break=True, vertical_face=True),
    FeatureCode("wall", "Wall", slope_break=True, vertical_face=True),
)
"""Every feature code, the readings screen's chips first in the order shown."""

BY_CODE = {feature.code: feature for feature in FEATURE_CODES}

BREAK_CODES = frozenset(f.code for f in FEATURE_CODES if f.slope_break)
"""Codes that mark a slope break: the ground may turn there at any angle."""

FACE_CODES = frozenset(f.code for f in FEATURE_CODES if f.vertical_face)
"""Codes that mark a vertical face: two readings at one such station are expected."""

CHIPS: list[tuple[str, str]] = [(f.code, f.label) for f in FEATURE_CODES if f.chip]
"""The readings screen's quick chips as ``(code, label)``, in the order shown."""


def normal_code(code) -> str:
    """A code as stored: stripped and lower case; None gives ``""``.

    >>> normal_code(" Bank_Top "), normal_code(None)
    ('bank_top', '')
    """
    return str(code or "").strip().lower()


def code_label(code) -> str:
    """Plain words for ``code`` (an unknown code is shown as it is, underscores as spaces).

    >>> code_label("water_edge"), code_label("riffle_crest")
    ("Water's edge", 'riffle crest')
    """
    known = BY_CODE.get(normal_code(code))
    return known.label if known else str(code or "").replace("_", " ")

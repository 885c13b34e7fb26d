"""Error classes shared by the core: each is both Stakeline's own and a builtin ``ValueError``.

A caller that only knows Python catches ``ValueError``; a caller that wants the detail reads the
structured fields (which point, which end, by how much).
"""

from __future__ import annotations


class SurveyError(ValueError):
    """Base class of every malformed-input error raised by Stakeline's domain.

    Examples
    --------
    >>> issubclass(SurveyError, ValueError)
    True
    """


class SectionError(SurveyError):
    """A cross-section that cannot be used as given.

    ``index`` is the 0-based position of the offending point (``None`` when the whole input is at
    fault) and ``station`` its station distance when known.

    Examples
    --------
    >>> SectionError("point 2: station is missing", index=1).index
    1
    """

    def __init__(self, message: str, index: int | None = None, station: float | None = None):
        super().__init__(message)
        self.index = index
        self.station = station


class OvertoppedError(SectionError):
    """The water level is above one end of the surveyed section.

    ``side`` is ``"left"`` or ``"right"``; ``excess`` is how far the water stands above that end
    (same length unit as the section); the message shows enough decimals to make it non-zero.

    Examples
    --------
    >>> str(OvertoppedError("left", 1.5000001, 1.5, 0, 0.0))[:42]
    'water level 1.5000001 is 0.0000001 above t'
    """

    def __init__(self, side: str, stage: float, end_elevation: float, index: int, station: float):
        self.side = side
        self.stage = stage
        self.end_elevation = end_elevation
        self.excess = stage - end_elevation
        from stakeline.survey.numbers import decimals_for  # shows a tiny excess as non-zero

        d = decimals_for(self.excess, most=16)
        message = (
            f"water level {stage:.{d}f} is {self.excess:.{d}f} above the {side} end of the "
            f"section (point {index + 1}, station {station:g}, elevation {end_elevation:.{d}f}); "
            f"extend the survey on the {side} bank"
        )
        super().__init__(message, index=index, station=station)


class SectionFileError(SurveyError):
    """A section file (CSV) that cannot be read; ``row`` is the 1-based line number in the file."""

    def __init__(self, message: str, row: int | None = None):
        super().__init__(message)
        self.row = row

"""The station plan check: every planned station has a reading before the crew leaves.

A station the crew planned and never read (the thalweg, a slope break) leaves a hole the
figures quietly bridge with a straight line; only a reading on site can fill it.  So each unread
planned station is a blocking finding of kind ``"unread"``: read it, take it out of the plan, or
write why the visit is finished without it.  Pure numpy: no UI, no SQL.
"""

from __future__ import annotations

import numpy as np
from stakeline.checks.common import Finding
from stakeline.survey.reduction import check_unit

UNREAD = "unread"
"""Kind of the finding for a planned station that has no reading."""

SAME_STATION = 1e-6
"""Stations closer than this (survey unit) are one station (stored plans are rounded to 1e-6)."""


def unread_stations(planned, read) -> np.ndarray:
    """The planned stations (survey unit) that have no reading, in tape order.

    >>> unread_stations([0.0, 0.5, 1.0, 1.5], [0.0, 1.0, 1.2]).tolist()
    [0.5, 1.5]
    >>> unread_stations([], [0.0]).tolist(), unread_stations([2.0], []).tolist()
    ([], [2.0])
    """
    plan = np.unique(np.asarray(planned, dtype=float).ravel())
    done = np.asarray(read, dtype=float).ravel()
    if plan.size == 0 or done.size == 0:
        return plan
    gap = np.abs(plan[:, None] - done[None, :]).min(axis=1)
    return plan[gap > SAME_STATION]


def plan_findings(planned, read, unit: str = "m") -> list[Finding]:
    """One blocking ``"unread"`` finding per planned station without a reading, by station.

    ``planned``: the visit's planned stations; ``read``: the stations that have a reading (both
    in the survey unit ``unit``, "m" or "ft").

    >>> [(f.kind, f.severity, f.station) for f in plan_findings([0, 1, 2, 3], [0, 2], "m")]
    [('unread', 'block', 1.0), ('unread', 'block', 3.0)]
    >>> plan_findings([0, 1], [0, 1])
    []
    """
    unit = check_unit(unit)
    unread = unread_stations(planned, read)
    total = np.unique(np.asarray(planned, dtype=float).ravel()).size
    return [
        Finding(
            UNREAD,
            "block",
            float(station),
            f"planned station {station:g} {unit} has no reading ({total - unread.size} of "
            f"{total} planned stations read)",
            f"read station {station:g} {unit}, take it out of the plan on Spacing, or write why "
            "the visit is finished without it",
        )
        for station in unread
    ]

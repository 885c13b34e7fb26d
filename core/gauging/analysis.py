"""One gauging analysis for the tablet, the report and the command line.

:func:`analyse_gauging` computes the discharge by the velocity-area method, its uncertainty by
the interpolated variance estimator and the field findings in one call; every front end shows
the same figures by calling it.

>>> a = analyse_gauging([0, 1, 2, 3, 4], [0, 0.4, 0.6, 0.4, 0], [0, 0.3, 0.5, 0.3, 0])
>>> round(a.discharge.discharge, 3), a.uncertainty.estimable, round(a.as_dict()["area"], 6)
(0.54, True, 1.4)
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from stakeline.checks import Finding
from stakeline.gauging.discharge import Discharge, velocity_area
from stakeline.gauging.findings import gauging_findings
from stakeline.gauging.uncertainty import MeasurementUncertainty, ive_uncertainty
from stakeline.gauging.vertical import MeterRating

CAUTION = (
    "Wading is the crew's judgement on the day; figures are for checking and are not a substitute "
    "for licensed engineering review and local codes."
)
"""The caution every front end shows with a gauging."""


@dataclass(frozen=True, eq=False)
class GaugingAnalysis:
    """A gauging's :class:`Discharge`, :class:`MeasurementUncertainty` and findings."""

    discharge: Discharge
    uncertainty: MeasurementUncertainty
    findings: tuple[Finding, ...]

    def as_dict(self) -> dict:
        """The discharge's dict (``discharge``, ``area``, ``width``, ``mean_velocity``, ``panels``
        ...) with ``uncertainty``, ``findings`` and ``caution`` added (JSON-ready)."""
        out = self.discharge.as_dict()
        out["uncertainty"] = self.uncertainty.as_dict()
        out["findings"] = [f.as_dict() for f in self.findings]
        out["caution"] = CAUTION
        return out


def analyse_gauging(
    stations,
    depths,
    velocities,
    method: str = "midsection",
    *,
    unit: str = "m",
    angles=None,
    edge_factor: float | None = None,
    points: Mapping | None = None,
    meter: MeterRating | None = None,
    settings=None,
) -> GaugingAnalysis:
    """Discharge, uncertainty and findings of one gauging (arguments as
    :func:`stakeline.gauging.discharge.velocity_area` and
    :func:`stakeline.gauging.findings.gauging_findings`)."""
    result = velocity_area(
        stations, depths, velocities, method, angles=angles, edge_factor=edge_factor, unit=unit
    )
    found = gauging_findings(result, points=points, meter=meter, settings=settings)
    return GaugingAnalysis(result, ive_uncertainty(result), tuple(found))

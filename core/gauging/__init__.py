"""Gauging: the discharge measured at the section's stations, and what it calibrates.

Mean velocity in a vertical and current-meter ratings (:mod:`~stakeline.gauging.vertical`),
discharge by the velocity-area method (:mod:`~stakeline.gauging.discharge`), field findings
(:mod:`~stakeline.gauging.findings`), the measurement's uncertainty by the interpolated variance
estimator (:mod:`~stakeline.gauging.uncertainty`), water-surface slope
(:mod:`~stakeline.gauging.slope`), Manning's n back-calculated (:mod:`~stakeline.gauging.calibrate`)
and the stage-discharge rating fitted to measurements (:mod:`~stakeline.gauging.measured_rating`);
:func:`analyse_gauging` runs the first four in one call, :func:`visit_gauging` all of them on a
visit's records (:mod:`~stakeline.gauging.visit`) and :func:`measured_rating` fits a section's
rating to its visits' measurements with the Manning extension
(:mod:`~stakeline.gauging.section_rating`).  Lengths in the survey unit.  numpy only:
no UI, no SQL.  Import everything from here.
"""

from stakeline.gauging.analysis import CAUTION, GaugingAnalysis, analyse_gauging
from stakeline.gauging.calibrate import CalibratedN, calibrate_n, manning_n, rows_holding
from stakeline.gauging.discharge import (
    DISCHARGE_METHODS,
    PANEL_KEYS,
    Discharge,
    velocity_area,
    verticals_from_section,
)
from stakeline.gauging.findings import (
    GAUGING_KINDS,
    GaugingSettings,
    gauging_findings,
    wading_findings,
)
from stakeline.gauging.measured_rating import RatingCurve, RatingFit, fit_rating, rating_curve
from stakeline.gauging.section_rating import MeasuredRating, measured_rating
from stakeline.gauging.slope import WaterSurfaceSlope, water_surface_slope
from stakeline.gauging.uncertainty import (
    MeasurementUncertainty,
    interpolated_variance,
    ive_uncertainty,
)
from stakeline.gauging.units import GaugingError, GaugingUnit, gauging_unit
from stakeline.gauging.vertical import (
    POINTS,
    PROFILE_RATIO,
    SURFACE_COEFFICIENT,
    VERTICAL_METHODS,
    MeterRating,
    mean_velocity,
    method_for_points,
    normal_velocity,
    profile_ratio,
    suggested_method,
)
from stakeline.gauging.visit import VisitGauging, visit_gauging

__all__ = [
    "CAUTION",
    "DISCHARGE_METHODS",
    "GAUGING_KINDS",
    "PANEL_KEYS",
    "POINTS",
    "PROFILE_RATIO",
    "SURFACE_COEFFICIENT",
    "VERTICAL_METHODS",
    "CalibratedN",
    "Discharge",
    "GaugingAnalysis",
    "GaugingError",
    "GaugingSettings",
    "GaugingUnit",
    "MeasuredRating",
    "MeasurementUncertainty",
    "MeterRating",
    "RatingCurve",
    "RatingFit",
    "VisitGauging",
    "WaterSurfaceSlope",
    "analyse_gauging",
    "calibrate_n",
    "fit_rating",
    "gauging_findings",
    "gauging_unit",
    "interpolated_variance",
    "ive_uncertainty",
    "manning_n",
    "mean_velocity",
    "measured_rating",
    "method_for_points",
    "normal_velocity",
    "profile_ratio",
    "rating_curve",
    "rows_holding",
    "suggested_method",
    "velocity_area",
    "verticals_from_section",
    "visit_gauging",
    "wading_findings",
    "water_surface_slope",
]

"""A section's measured rating: the stage-discharge rating fitted to its visits' gaugings,
extended above the highest measurement by Manning's equation with the calibrated n.

:func:`measured_rating` takes the measurements as plain dicts (one per gauged visit: ``stage``
and ``discharge``, with ``n`` and ``slope`` when the visit calibrated n; as
:meth:`stakeline.gauging.visit.VisitGauging.measurement` gives them, plus ``visit`` and
``date``) and the surveyed section of the visit analysed.  It fits ``Q = C (h - e)^b``
(:func:`stakeline.gauging.measured_rating.fit_rating`; WMO-No. 1044; ISO 18320) with ``e``:

* given (``offset``), or
* fitted (``fit_offset``; four measurements or more), or else
* fixed at the section's lowest point -- the lowest control point of a section control such
  as a riffle (common practice: the gauge height of zero flow is the lowest point of the
  control).

Above the highest measurement the curve follows Manning's equation on the section with the n
and the slope of the highest measurement that calibrated one (the n nearest the stages to be
extended to; :func:`stakeline.gauging.measured_rating.rating_curve`), each stage flagged by its
source so that a plot draws the extension differently.  Stages in the survey unit, discharge
in unit³/s.  A rating from a few wading measurements is a guide for checking, not a substitute
for licensed engineering review.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from stakeline.errors import SurveyError
from stakeline.gauging.measured_rating import (
    MIN_MEASUREMENTS,
    RatingCurve,
    RatingFit,
    fit_rating,
    rating_curve,
)
from stakeline.gauging.units import GaugingError, gauging_unit
from stakeline.survey.geometry import Section

CURVE_POINTS = 60
"""Stages of the drawn curve, from e to the top of the lower bank."""

OFFSET_SOURCES = ("given", "fitted", "the lowest point of the section")
"""Where the rating's e came from."""


@dataclass(frozen=True, eq=False)
class MeasuredRating:
    """A fitted rating with its measurements and its Manning extension; lengths in ``unit``.

    ``fit`` (:class:`RatingFit`), ``curve`` (:class:`RatingCurve`, from e to the top of the
    section's lower bank), ``measurements`` (the dicts used, each with ``departure``: percent
    from the curve), ``offset_source`` (one of :data:`OFFSET_SOURCES`), ``extension`` (``n``,
    ``slope``, ``visit``, ``date``, ``from_stage``; None when no measurement calibrated n, with
    ``extension_note`` saying so).
    """

    unit: str
    fit: RatingFit
    curve: RatingCurve
    measurements: tuple[dict, ...]
    offset_source: str
    extension: dict | None
    extension_note: str

    def as_dict(self) -> dict:
        """JSON-ready: ``coefficient``, ``exponent``, ``offset``, ``offset_fitted``,
        ``offset_source``, ``standard_error`` (log units), ``standard_error_percent``,
        ``exponent_error``, ``low``/``high`` (measured stages), ``cautions``,
        ``poorly_determined``, ``measurements`` (visit, date, stage, discharge,
        departure_percent, plus_minus, n, n_plus_minus, slope), ``extension`` (n, slope, visit, date,
        from_stage, stages, discharges, junction_ratio; None without a calibrated n),
        ``extension_note``, ``curve`` (stages, discharges, source) and ``unit``."""
        fit = self.fit.as_dict()
        out = {k: fit[k] for k in ("coefficient", "exponent", "offset", "offset_fitted",
                                   "standard_error", "standard_error_percent", "exponent_error",
                                   "low", "high", "cautions", "poorly_determined")}  # fmt: skip
        out["offset_source"] = self.offset_source
        out["unit"] = self.unit
        out["measurements"] = [
            {"visit": m.get("visit"), "date": m.get("date"), "stage": m["stage"],
             "discharge": m["discharge"], "departure_percent": m["departure"],
             "plus_minus": m.get("plus_minus"), "n": m.get("n"),
             "n_plus_minus": m.get("n_plus_minus"), "slope": m.get("slope")}
            for m in self.measurements
        ]  # fmt: skip
        curve = self.curve.as_dict()
        out["curve"] = {k: curve[k] for k in ("stages", "discharges", "source")}
        out["extension"] = None
        if self.extension is not None:
            above = [i for i, s in enumerate(self.curve.source) if s == "manning"]
            out["extension"] = {
                **self.extension,
                "stages": [curve["stages"][i] for i in above],
                "discharges": [curve["discharges"][i] for i in above],
                "junction_ratio": self.curve.junction_ratio,
            }
        out["extension_note"] = self.extension_note
        return out


def usable(measurements: Sequence[Mapping]) -> list[dict]:
    """The measurements with a positive discharge and a stage, in stage order."""
    found = [
        dict(m)
        for m in measurements
        if m.get("stage") is not None and (m.get("discharge") or 0) > 0
    ]
    return sorted(found, key=lambda m: (m["stage"], m.get("date") or ""))


def _extension(measurements: list[dict], fit: RatingFit) -> tuple[dict | None, str]:
    with_n = [m for m in measurements if m.get("n") and m.get("slope")]
    if not with_n:
        return None, (
            "no measurement calibrated Manning's n (a complete gauging with a water-surface "
            "slope): the rating is not extended above the highest measurement"
        )
    top = max(with_n, key=lambda m: m["stage"])
    return {"n": float(top["n"]), "slope": float(top["slope"]), "visit": top.get("visit"),
            "date": top.get("date"), "from_stage": fit.high}, ""  # fmt: skip


def measured_rating(
    measurements: Sequence[Mapping],
    section: Section,
    unit: str = "m",
    *,
    offset: float | None = None,
    fit_offset: bool = False,
) -> MeasuredRating:
    """The rating fitted to ``measurements`` with its Manning extension on ``section``.

    ``measurements``: dicts with ``stage`` (survey unit) and ``discharge`` (unit³/s), optional
    ``n``, ``slope``, ``plus_minus``, ``visit`` and ``date``; those without a positive
    discharge are left out.  ``offset`` fixes e; ``fit_offset`` fits it; otherwise e is the
    section's lowest point.  Raises :class:`~stakeline.gauging.units.GaugingError` with fewer
    than three measurements (four to fit e) or a measurement at or below e.

    Examples
    --------
    >>> ground = Section([0, 0, 4, 4], [102.0, 99.0, 99.0, 102.0])
    >>> pairs = [{"stage": 99.0 + h, "discharge": 4 * h**1.5} for h in (0.4, 0.6, 0.9, 1.2)]
    >>> r = measured_rating(pairs, ground)
    >>> round(r.fit.coefficient, 6), round(r.fit.exponent, 6), r.offset_source
    (4.0, 1.5, 'the lowest point of the section')
    """
    gauging_unit(unit)
    used = usable(measurements)
    if len(used) < MIN_MEASUREMENTS + (1 if fit_offset and offset is None else 0):
        need = MIN_MEASUREMENTS + (1 if fit_offset and offset is None else 0)
        raise GaugingError(
            f"a measured rating needs at least {need} gauged visits with a complete discharge, "
            f"got {len(used)}; gauge the section again at other water levels"
        )
    if offset is not None:
        source, e = "given", float(offset)
    elif fit_offset:
        source, e = "fitted", None
    else:
        source, e = OFFSET_SOURCES[2], section.lowest
    stages = [m["stage"] for m in used]
    fit = fit_rating(stages, [m["discharge"] for m in used], e)
    departures = fit.departures
    measured = tuple({**m, "departure": d} for m, d in zip(used, departures, strict=True))
    extension, note = _extension(used, fit)
    top = section.highest_stage
    curve_stages = np.union1d(np.linspace(fit.offset, max(top, fit.high), CURVE_POINTS), fit.high)
    if extension is None:
        curve_stages = curve_stages[curve_stages <= fit.high]
    curve = rating_curve(
        fit, curve_stages, section, None if extension is None else extension["n"],
        None if extension is None else extension["slope"], unit,
    )  # fmt: skip
    return MeasuredRating(unit, fit, curve, measured, source, extension, note)


def rating_or_note(
    measurements: Sequence[Mapping],
    own: Mapping | None,
    visit: Mapping,
    section: Section,
    unit: str,
    offset: float | None = None,
    fit_offset: bool = False,
) -> tuple[MeasuredRating | None, str]:
    """:func:`measured_rating` of a section's ``measurements`` with the analysed ``visit``'s
    ``own`` measurement (it replaces one of the same ``visit``), or None and a note saying
    why there is none: for an analysis that goes on."""
    rows = [m for m in measurements if m.get("visit") != visit.get("uuid")]
    rows += [{**own, "visit": visit.get("uuid"), "date": visit.get("date")}] if own else []
    try:
        return measured_rating(rows, section, unit, offset=offset, fit_offset=fit_offset), ""
    except SurveyError as exc:
        return None, f"No measured rating: {exc}"

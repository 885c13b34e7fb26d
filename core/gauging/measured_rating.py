"""A stage-discharge rating fitted to measured (stage, discharge) pairs, and its extension.

    Q = C · (h - e)^b

fitted by least squares on ln Q against ln(h - e) (WMO 2010, *Manual on Stream Gauging*,
WMO-No. 1044, Vol. II; ISO 18320), with ``e`` the gauge height of zero flow: fixed (e.g. the
section's lowest control point) or fitted -- the e in a bracket below the lowest measured stage
that gives the least residual standard error (C and b follow from a straight-line fit for each
e).  Reported: the standard error of estimate ``s = √(Σ r² / (N - p))`` of the log residuals r
(p = 2 fitted parameters, 3 with e), with its percent form ``100·√(Σ((Q - Qc)/Qc)² / (N - p))``,
and each measurement's percent departure ``100·(Q - Qc)/Qc``.

Above the highest measurement the rating is extended by Manning's equation with a calibrated n
(:func:`rating_curve`), each stage flagged by its source so a report can draw the extension
differently.  Stages and e in the survey unit, discharge in unit³/s.

>>> fit = fit_rating([1.2, 1.5, 2.0, 2.6], [0.4 * 0.2**1.6, 0.4 * 0.5**1.6, 0.4, 0.4 * 1.6**1.6],
...                  offset=1.0)
>>> round(fit.coefficient, 6), round(fit.exponent, 6), fit.poorly_determined
(0.4, 1.6, False)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stakeline.gauging.units import GaugingError
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import flow_table

MIN_MEASUREMENTS = 3
"""Fewest measurements for a fit with e fixed (one more when e is fitted)."""

USUAL_EXPONENT = (1.0, 3.5)
"""Exponents b outside this range are flagged: section controls give about 1.5 (rectangular) to
2.5 (triangular), channel controls about 1.67 for a wide channel (common practice)."""


@dataclass(frozen=True)
class RatingFit:
    """A fitted rating ``Q = coefficient · (h - offset)^exponent``.

    ``offset_fitted`` says whether e was fitted; ``standard_error`` (log units) and
    ``standard_error_percent``; ``exponent_error``: standard error of b; ``stages``,
    ``discharges`` and ``departures`` (percent) per measurement; ``low``/``high``: the measured
    stage range; ``cautions``: why the fit is poorly determined (empty when it is not).
    """

    coefficient: float
    exponent: float
    offset: float
    offset_fitted: bool
    standard_error: float | None
    standard_error_percent: float | None
    exponent_error: float | None
    stages: tuple[float, ...]
    discharges: tuple[float, ...]
    departures: tuple[float, ...]
    low: float
    high: float
    cautions: tuple[str, ...] = ()

    @property
    def poorly_determined(self) -> bool:
        """True when any caution applies."""
        return bool(self.cautions)

    def discharge(self, stages):
        """Q (unit³/s) of the fitted curve at ``stages``; 0 at or below the offset."""
        h = np.asarray(stages, dtype=float)
        depth = np.maximum(h - self.offset, 0.0)
        q = self.coefficient * depth**self.exponent
        return float(q) if q.ndim == 0 else q

    def as_dict(self) -> dict:
        """Plain dict of every field (JSON-ready; tuples as lists) plus ``poorly_determined``."""
        out = {name: getattr(self, name) for name in self.__dataclass_fields__}
        for name in ("stages", "discharges", "departures", "cautions"):
            out[name] = list(out[name])
        out["poorly_determined"] = self.poorly_determined
        return out


def _pairs(stages, discharges) -> tuple[np.ndarray, np.ndarray]:
    try:
        h = np.asarray(stages, dtype=float)
        q = np.asarray(discharges, dtype=float)
    except (TypeError, ValueError):
        raise GaugingError("measurements must be numbers (stage, discharge)") from None
    if h.ndim != 1 or h.shape != q.shape:
        raise GaugingError(f"{h.size} stages and {q.size} discharges: give one discharge per stage")
    for i in range(h.size):
        if not (math.isfinite(h[i]) and math.isfinite(q[i])):
            raise GaugingError(f"measurement {i + 1}: stage and discharge must be finite", i)
        if q[i] <= 0:
            raise GaugingError(
                f"measurement {i + 1} (stage {h[i]:g}): discharge {q[i]:g} is not positive; a "
                "rating is fitted to flowing measurements only",
                i,
            )
    if h.size < MIN_MEASUREMENTS:
        raise GaugingError(
            f"a rating needs at least {MIN_MEASUREMENTS} measurements, got {h.size}; "
            "measure again at other stages"
        )
    if np.ptp(h) == 0:
        raise GaugingError(
            f"every measurement is at stage {h[0]:g}; a rating needs measurements at different "
            "stages"
        )
    return h, q


def _line(x: np.ndarray, y: np.ndarray):
    """Least-squares line(s) y = a + b·x along the last axis: (a, b, sum of squared residuals)."""
    xm = x.mean(axis=-1, keepdims=True)
    ym = y.mean(axis=-1, keepdims=True)
    dx = x - xm
    sxx = np.sum(dx * dx, axis=-1)
    b = np.sum(dx * (y - ym), axis=-1) / sxx
    a = ym[..., 0] - b * xm[..., 0]
    r = y - (a[..., None] + b[..., None] * x)
    return a, b, np.sum(r * r, axis=-1), sxx


def _best_offset(h: np.ndarray, y: np.ndarray, bracket) -> tuple[float, bool]:
    """The e in ``bracket`` with the least residual sum of squares; and whether it is inside."""
    lo, hi = float(bracket[0]), float(bracket[1])
    top = float(h.min())
    if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi <= top):
        raise GaugingError(
            f"the bracket for e ({lo:g} to {hi:g}) must lie below the lowest measured stage "
            f"({top:g}) and be in increasing order"
        )
    hi = min(hi, top - 1e-9 * max(1.0, abs(top)))
    for _ in range(3):  # a grid, then two finer grids about its best point
        grid = np.linspace(lo, hi, 201)
        _, _, sse, _ = _line(np.log(h[None, :] - grid[:, None]), np.broadcast_to(y, (201, y.size)))
        k = int(np.argmin(sse))
        lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, 200)]
        best = float(grid[k])
    inside = float(bracket[0]) < best < min(float(bracket[1]), top) - 1e-6 * max(1.0, np.ptp(h))
    return best, inside


def fit_rating(
    stages, discharges, offset: float | None = None, *, bracket: tuple[float, float] | None = None
) -> RatingFit:
    """Fit ``Q = C (h - e)^b`` to measured ``stages`` (survey unit) and ``discharges`` (unit³/s).

    With ``offset`` given, e is fixed there (every stage must lie above it).  Otherwise e is
    fitted within ``bracket`` (default: from one measured stage range below the lowest stage up
    to it).  At least 3 measurements are needed with e fixed, 4 with e fitted.
    """
    h, q = _pairs(stages, discharges)
    y = np.log(q)
    if offset is not None:
        e = float(offset)
        below = np.flatnonzero(h <= e)
        if not math.isfinite(e) or below.size:
            i = int(below[0]) if below.size else 0
            raise GaugingError(
                f"measurement {i + 1}: stage {h[i]:g} is not above e = {offset}; e must be below "
                "every measured stage (the gauge height of zero flow)",
                i,
            )
        fitted, inside, params = False, True, 2
    else:
        if h.size < MIN_MEASUREMENTS + 1:
            raise GaugingError(
                f"fitting e needs at least {MIN_MEASUREMENTS + 1} measurements, got {h.size}; "
                "give e (the gauge height of zero flow, e.g. the lowest point of the control)"
            )
        span = float(np.ptp(h))
        e, inside = _best_offset(h, y, bracket or (float(h.min()) - span, float(h.min())))
        fitted, params = True, 3
    x = np.log(h - e)
    a, b, sse, sxx = _line(x, y)
    a, b, sse, sxx = float(a), float(b), float(sse), float(sxx)
    dof = h.size - params
    qc = math.exp(a) * (h - e) ** b
    departures = 100.0 * (q - qc) / qc
    if dof > 0:
        s = math.sqrt(sse / dof)
        s_pct = 100.0 * math.sqrt(float(np.sum(((q - qc) / qc) ** 2)) / dof)
        b_err = s / math.sqrt(sxx)
    else:
        s = s_pct = b_err = None
    cautions = _cautions(h, e, b, b_err, dof, fitted, inside)
    return RatingFit(
        coefficient=math.exp(a),
        exponent=b,
        offset=e,
        offset_fitted=fitted,
        standard_error=s,
        standard_error_percent=s_pct,
        exponent_error=b_err,
        stages=tuple(h.tolist()),
        discharges=tuple(q.tolist()),
        departures=tuple(departures.tolist()),
        low=float(h.min()),
        high=float(h.max()),
        cautions=cautions,
    )


def _cautions(h, e, b, b_err, dof, fitted, inside) -> tuple[str, ...]:
    out = []
    if dof < 2:
        out.append(f"only {dof} degree(s) of freedom: measure at more stages before relying on it")
    depth = h - e
    if depth.max() / depth.min() < 1.5:
        out.append(
            "the measurements span a narrow range of depth above e: the exponent is poorly "
            "determined; measure at a higher or lower stage"
        )
    if not USUAL_EXPONENT[0] <= b <= USUAL_EXPONENT[1]:
        out.append(
            f"exponent {b:.2f} is outside the usual {USUAL_EXPONENT[0]:g}-{USUAL_EXPONENT[1]:g}: "
            "check e and the measurements"
        )
    if b_err is not None and b_err > 0.1 * abs(b):
        out.append(f"the exponent's standard error ({b_err:.2f}) is over 10 % of it")
    if fitted and not inside:
        out.append("the best e lies at the end of its bracket: fix e from the section instead")
    return tuple(out)


@dataclass(frozen=True, eq=False)
class RatingCurve:
    """Discharges at ``stages`` from a fitted rating and its Manning extension.

    ``source`` per stage: ``"measured"`` (the fit, within the measured range), ``"below"`` (the
    fit, extrapolated below the lowest measurement; 0 at or below e) or ``"manning"`` (above the
    highest measurement, Manning's equation with ``n`` on ``slope``).  ``junction_ratio`` is
    Manning's Q over the fit's Q at the highest measured stage (1 when they join exactly).
    """

    stages: np.ndarray
    discharges: np.ndarray
    source: tuple[str, ...]
    n: float | None
    slope: float | None
    junction_ratio: float | None

    def as_dict(self) -> dict:
        """Plain dict: ``stages``, ``discharges``, ``source`` lists and the Manning figures."""
        return {
            "stages": self.stages.tolist(),
            "discharges": self.discharges.tolist(),
            "source": list(self.source),
            "n": self.n,
            "slope": self.slope,
            "junction_ratio": self.junction_ratio,
        }


def rating_curve(
    fit: RatingFit,
    stages,
    section: Section | None = None,
    n: float | None = None,
    slope: float | None = None,
    unit: str = "m",
) -> RatingCurve:
    """Q at ``stages``: the fit up to the highest measurement, Manning above it.

    Above the measured range ``section``, ``n`` (e.g. :attr:`CalibratedN.n`) and ``slope`` are
    needed; without them stages above the range are refused.  A stage above either end of the
    section raises :class:`stakeline.errors.OvertoppedError`.
    """
    h = np.atleast_1d(np.asarray(stages, dtype=float))
    if h.ndim != 1 or not np.isfinite(h).all():
        raise GaugingError("stages must be a 1-D sequence of finite numbers")
    q = np.asarray(fit.discharge(h), dtype=float).reshape(h.shape)
    source = np.where(h < fit.low, "below", "measured").astype(object)
    above = h > fit.high
    junction = None
    if above.any():
        if section is None or n is None or slope is None:
            raise GaugingError(
                f"stage {float(h[above][0]):g} is above the highest measurement ({fit.high:g}): "
                "give the section, a calibrated n and the slope to extend the rating"
            )
        ends = np.concatenate(([fit.high], h[above]))
        manning = flow_table(section, ends, float(n), float(slope), unit)["discharge"]
        q[above] = manning[1:]
        source[above] = "manning"
        junction = float(manning[0] / fit.discharge(fit.high))
    return RatingCurve(
        stages=h,
        discharges=q,
        source=tuple(source.tolist()),
        n=None if n is None else float(n),
        slope=None if slope is None else float(slope),
        junction_ratio=junction,
    )

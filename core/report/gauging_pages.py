"""Report pages of a visit's gauging and of its section's measured rating (matplotlib, Agg).

Drawn from :class:`stakeline.report.ReportData` when the analysis had the visit's gauging
records (:attr:`ReportData.gauging`) or the section's measurements
(:attr:`ReportData.measured_rating`):

* **velocity-area gauging** -- the velocity in each vertical drawn over the section, the
  measured discharge with its ± (interpolated variance estimator), the water-surface slope with
  its ±, Manning's n calibrated from them and where it falls in the roughness table, and the
  gauging's findings;
* **panels** -- every vertical's width, depth, velocity, partial discharge and share;
* **measured rating** -- the fitted rating with the measurements and their departures, and
  the Manning extension above the highest measurement drawn dashed and labelled.

Every page carries the cautions (wading; figures are for checking, not a substitute for
licensed engineering review and local codes) and names the units of every figure.  The page
tools (header, tables, paragraphs) are those of :mod:`stakeline.report.pages`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.figure import Figure
from stakeline.gauging.calibrate import describe_rows
from stakeline.gauging.uncertainty import METHOD as IVE_METHOD
from stakeline.report import pages as tools
from stakeline.report.plots import FLAG_COLOUR, WATER_COLOUR, _single_plot
from stakeline.survey.figures import figure_unit
from stakeline.survey.roughness import SOURCE

GAUGING_CAUTIONS = (
    "Wading is dangerous: do not wade where depth × velocity reaches about 10 ft²/s "
    "(0.93 m²/s; USGS field practice); cold water, soft beds and rising water lower that limit. "
    "Wading is the crew's judgement on the day.",
    "These figures are for checking. They are not a substitute for licensed engineering review "
    "and the codes and standards that apply where you work; a rating from a few wading "
    "measurements is a guide, and its extension by Manning's equation is an extrapolation.",
)
"""Cautions printed on every gauging page."""

METHOD_WORDS = {
    "midsection": "midsection method (Turnipseed & Sauer 2010, USGS TM 3-A8; ISO 748)",
    "meansection": "mean-section method (ISO 748; USBR Water Measurement Manual)",
}
PANEL_ROWS = 40
VELOCITY_COLOUR = "#117a65"
MANNING_COLOUR = "#a04000"


def gauging_pages(data) -> list[Figure]:
    """The gauging pages of a report (none when the visit has no gauging or rating)."""
    pages = []
    if data.gauging is not None:
        pages += [*_gauging_pages(data), *_panel_pages(data)]
    elif data.gauging_note:
        pages.append(_note_page(data, data.gauging_note))
    if data.measured_rating is not None:
        pages.append(_measured_rating_page(data))
    return pages


def _q(unit: str) -> str:
    return figure_unit("discharge", unit)


def _cautions(fig: Figure, top: float = 0.13) -> None:
    top = tools._heading(fig, top, "Cautions")
    tools._paragraph(fig, top, "\n".join(f"• {c}" for c in GAUGING_CAUTIONS), 7.2, width=140)


def _note_page(data, note: str) -> Figure:
    fig = tools._page()
    tools._header(fig, data, "velocity-area gauging")
    tools._paragraph(fig, 0.92, note, 9)
    _cautions(fig)
    return fig


# --- velocity across the section -------------------------------------------------------------
def velocity_profile(ax, data) -> None:
    """The section with its water, each vertical drawn from the surface to the bed, and the
    velocity in each vertical (normal to the section) on a second axis above it."""
    g, unit = data.gauging, data.unit
    x = np.array([s["station"] for s in data.stations])
    z = np.array([s["elevation"] for s in data.stations])
    ax.fill_between(x, z, g.stage, where=z < g.stage, interpolate=True, color=WATER_COLOUR,
                    alpha=0.45, lw=0)  # fmt: skip
    ax.axhline(g.stage, color="#1f618d", lw=1, label=f"water level {g.stage:.3f} {unit}")
    ax.plot(x, z, "-", color="#4a3520", lw=1.2, label="ground (this visit)")
    for v in g.verticals:
        if v["depth"] > 0:
            colour = "0.35" if v["observation"] else FLAG_COLOUR
            ax.plot([v["station"]] * 2, [g.stage, g.stage - v["depth"]], color=colour, lw=0.6)
    ax.set_xlabel(f"station from the {data.visit.get('origin') or 'left'} stake ({unit})")
    ax.set_ylabel(f"elevation ({unit})")
    ax.grid(alpha=0.3)
    twin = ax.twinx()
    stations = np.array([v["station"] for v in g.verticals])
    speed = np.array([np.nan if v["velocity"] is None else v["velocity"] for v in g.verticals])
    twin.plot(stations, speed, "-o", color=VELOCITY_COLOUR, ms=3.5, lw=1.2,
              label="mean velocity in the vertical")  # fmt: skip
    missing = [v["station"] for v in g.verticals if v["depth"] > 0 and v["velocity"] is None]
    if missing:
        twin.plot(missing, [0.0] * len(missing), "x", color=FLAG_COLOUR, ms=7,
                  label="wet vertical not read")  # fmt: skip
    twin.set_ylabel(f"velocity normal to the section ({figure_unit('velocity', unit)})",
                    color=VELOCITY_COLOUR)  # fmt: skip
    top = np.nanmax(speed) if np.isfinite(speed).any() else 1.0
    twin.set_ylim(min(0.0, np.nanmin(speed) if np.isfinite(speed).any() else 0.0), 2.2 * top)
    lines = ax.get_legend_handles_labels()
    more = twin.get_legend_handles_labels()
    ax.legend(lines[0] + more[0], lines[1] + more[1], fontsize=7, loc="lower left")


def _measured_text(data) -> str:
    g, unit = data.gauging, data.unit
    q, u = g.discharge, g.analysis.uncertainty
    read = g.observed
    wet = sum(1 for v in g.verticals if v["depth"] > 0)
    lines = [
        f"Gauged at water level {g.stage:.3f} {unit} ({data.stage_source or 'the level given'}) "
        f"by the {METHOD_WORDS.get(g.method, g.method)}; {read} of {wet} wet verticals read; "
        f"surface coefficient {g.surface_coefficient:g}.",
    ]
    so_far = "" if q.complete else " (so far: some wet verticals have no velocity)"
    lines.append(f"Measured discharge Q = {q.discharge:.3f} {_q(unit)}{so_far}.")
    if u.estimable:
        lines.append(
            f"± {u.plus_minus:.3f} {_q(unit)} ({100 * u.expanded:.1f} %, k = 2; {IVE_METHOD}; "
            "random error only: the meter's rating and the edges are not in it)."
        )
    else:
        lines.append(f"± not estimated: {u.reason}.")
    lines.append(
        f"Wetted area {q.area:.3f} {figure_unit('area', unit)}, width {q.width:.3f} {unit}, "
        f"mean velocity Q/A {q.mean_velocity:.3f} {figure_unit('velocity', unit)}."
    )
    return "\n".join(lines)


def _slope_and_n_text(data) -> str:
    g, unit = data.gauging, data.unit
    lines = []
    s = g.slope
    if s is None:
        lines.append(f"Water-surface slope: {g.slope_note}")
    else:
        lines.append(
            f"Water-surface slope S = {s.slope:.5f} ± {s.plus_minus:.5f} (k = 2; {s.method} "
            f"through {s.points} points over {s.length:g} {unit}; fall {s.fall:.3f} {unit})."
        )
    c = g.calibrated
    if c is None:
        lines.append(f"Manning's n not calibrated: {g.n_note}")
    else:
        lines.append(
            f"Manning's n calibrated from the measured Q, the surveyed section and the measured "
            f"slope: n = (k/Q)·A·R^(2/3)·S^(1/2) = {c.n:.4f} ± {c.plus_minus:.4f} (k = 2; "
            f"A = {c.area:.3f} {figure_unit('area', unit)}, R = {c.hydraulic_radius:.3f} {unit})."
        )
        lines.append(
            f"In the roughness table ({SOURCE}) it lies within: {describe_rows(c.rows)}; its "
            f"band meets: {describe_rows(c.rows_in_band)}. A calibrated n belongs to this reach "
            "at this stage."
        )
    return "\n".join(lines)


def _finding_blocks(data) -> list[tuple[str, str]]:
    unit = data.unit
    found = [("p", tools.finding_text(f.severity, f.kind, f.station, f.message, f.suggestion, unit))
             for f in data.gauging.findings]  # fmt: skip
    return [("h", "Gauging findings"), *(found or [("p", "none")])]


def _gauging_pages(data) -> list[Figure]:
    fig = tools._page()
    tools._header(fig, data, "velocity-area gauging")
    velocity_profile(fig.add_axes((0.1, 0.6, 0.76, 0.32)), data)
    top = tools._heading(fig, 0.55, "Measured discharge")
    top = tools._paragraph(fig, top, _measured_text(data), 7.4, width=135)
    top = tools._heading(fig, top, "Water-surface slope and Manning's n")
    top = tools._paragraph(fig, top, _slope_and_n_text(data), 7.4, width=135)
    _cautions(fig)
    pages = [fig]
    tools._flow(data, pages, top, _finding_blocks(data), "velocity-area gauging", bottom=0.16)
    return pages


def _panel_rows(data) -> list[list[str]]:
    g = data.gauging
    rows = []
    by_station = {v["station"]: v for v in g.verticals}
    for p in g.discharge.panels():
        v = by_station.get(p["station"], {})
        velocity = "—" if p["velocity"] is None else f"{p['velocity']:.3f}"
        how = v.get("vertical_method") or ("edge" if p["depth"] == 0 else "not read")
        if v.get("depth_source") == "rod":
            how += ", rod depth"
        if v.get("angle"):
            how += f", {v['angle']:g}°"
        rows.append([f"{p['station']:.2f}", f"{p['width']:.3f}", f"{p['depth']:.3f}", velocity,
                     f"{p['discharge']:.4f}", f"{p['percent']:.1f}", how])  # fmt: skip
    return rows


def _panel_pages(data) -> list[Figure]:
    unit, rows = data.unit, _panel_rows(data)
    header = [f"station ({unit})", f"width ({unit})", f"depth ({unit})",
              f"velocity ({figure_unit('velocity', unit)})", f"discharge ({_q(unit)})",
              "share (%)", "method"]  # fmt: skip
    chunks = [rows[i : i + PANEL_ROWS] for i in range(0, len(rows), PANEL_ROWS)] or [[]]
    pages = []
    for chunk in chunks:
        fig = tools._page()
        tools._header(fig, data, "gauging panels and their shares of the discharge")
        top = tools._paragraph(
            fig, 0.925,
            f"One panel per vertical ({METHOD_WORDS.get(data.gauging.method, '')}). USGS "
            "practice: no panel over 10 % of the discharge, ideally 5 %. Velocity is the mean "
            "in the vertical, normal to the section (cosine of the angle of the flow).", 7.4,
        )  # fmt: skip
        tools._table(fig, top, header, chunk, [0.12, 0.11, 0.11, 0.14, 0.14, 0.1, 0.28], size=6.6)
        _cautions(fig)
        pages.append(fig)
    return pages


# --- the measured rating ---------------------------------------------------------------------
def rating_plot(ax, rating, unit: str, this_visit: str | None = None) -> None:
    """The measured rating on ``ax``: the fitted curve (solid), its extrapolation below the
    lowest measurement (thin), the Manning extension (dashed, labelled) and the measurements
    with their ± and percent departures; water level against discharge, units named."""
    curve = rating.curve
    source = np.array(curve.source)
    for kind, style in (("below", dict(color="#1f618d", lw=0.8, alpha=0.6)),
                        ("measured", dict(color="#1f618d", lw=1.6))):  # fmt: skip
        keep = source == kind
        if keep.any():
            label = "fitted rating" if kind == "measured" else "fit below the measurements"
            ax.plot(curve.discharges[keep], curve.stages[keep], "-", label=label, **style)
    if rating.extension is not None:
        keep = (source == "manning") | (curve.stages == rating.fit.high)
        e = rating.extension
        ax.plot(curve.discharges[keep], curve.stages[keep], "--", color=MANNING_COLOUR, lw=1.4,
                label=f"Manning extension (n = {e['n']:.4f} from {e.get('date') or 'a gauging'}, "
                f"S = {e['slope']:.4f})")  # fmt: skip
    for m in rating.measurements:
        mine = this_visit is not None and m.get("visit") == this_visit
        err = m.get("plus_minus") or 0.0
        ax.errorbar([m["discharge"]], [m["stage"]], xerr=[[err], [err]], fmt="o",
                    color=FLAG_COLOUR if mine else "black", ms=5 if mine else 4, capsize=2)  # fmt: skip
        ax.annotate(f"{m.get('date') or ''} {m['departure']:+.1f} %", (m["discharge"], m["stage"]),
                    xytext=(6, -3), textcoords="offset points", fontsize=6.5)  # fmt: skip
    ax.plot([], [], "o", color="black", ms=4, label="measurements (± k = 2)")
    ax.set_xlabel(f"discharge ({_q(unit)})")
    ax.set_ylabel(f"water level ({unit})")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="lower right")


def _fit_text(rating, unit: str) -> str:
    fit = rating.fit
    lines = [
        f"Q = C·(h − e)^b fitted by least squares on ln Q against ln(h − e) (WMO-No. 1044, "
        f"Vol. II; ISO 18320): C = {fit.coefficient:.4g}, b = {fit.exponent:.3f}"
        + (f" ± {fit.exponent_error:.3f}" if fit.exponent_error is not None else "")
        + f", e = {fit.offset:.3f} {unit} ({rating.offset_source}).",
    ]
    if fit.standard_error is not None:
        lines.append(
            f"Standard error of estimate {fit.standard_error:.4f} (log units), about "
            f"{fit.standard_error_percent:.1f} %; {len(fit.stages)} measurements from "
            f"{fit.low:.3f} to {fit.high:.3f} {unit}."
        )
    lines += [f"Caution: {c}." for c in fit.cautions]
    if rating.extension is not None:
        lines.append(
            f"Above {fit.high:.3f} {unit} the rating follows Manning's equation on this visit's "
            f"section with n = {rating.extension['n']:.4f} and S = {rating.extension['slope']:.4f} "
            f"(the highest measurement that calibrated n); at the join Manning's Q is "
            f"{rating.curve.junction_ratio:.3f} × the fitted Q. It is an extrapolation."
        )
    else:
        lines.append(rating.extension_note[:1].upper() + rating.extension_note[1:] + ".")
    return "\n".join(lines)


def _measurement_rows(rating) -> list[list[str]]:
    rows = []
    for m in sorted(rating.measurements, key=lambda m: m.get("date") or ""):
        pm = m.get("plus_minus")
        rows.append([m.get("date") or "", f"{m['stage']:.3f}", f"{m['discharge']:.3f}",
                     "—" if pm is None else f"{pm:.3f}", f"{m['departure']:+.1f}",
                     "—" if m.get("n") is None else f"{m['n']:.4f}"])  # fmt: skip
    return rows


def _measured_rating_page(data) -> Figure:
    rating, unit = data.measured_rating, data.unit
    fig = tools._page()
    tools._header(fig, data, "measured stage-discharge rating of the section")
    rating_plot(fig.add_axes((0.12, 0.58, 0.8, 0.34)), rating, unit, data.visit.get("uuid"))
    top = tools._heading(fig, 0.53, "Fitted rating")
    top = tools._paragraph(fig, top, _fit_text(rating, unit), 7.4, width=135)
    top = tools._heading(fig, top, "Measurements (gauged visits of this section)")
    header = ["visit", f"water level ({unit})", f"discharge ({_q(unit)})", f"± ({_q(unit)})",
              "departure (%)", "calibrated n"]  # fmt: skip
    tools._table(fig, top, header, _measurement_rows(rating), size=7)
    _cautions(fig)
    return fig


def write_measured_rating_plot(rating, unit: str, title: str, path) -> Path:
    """Plot a :class:`~stakeline.gauging.MeasuredRating` (water level against discharge) to
    ``.png`` or ``.pdf``, with its measurements and the Manning extension drawn dashed."""
    return _single_plot(path, title, lambda ax: rating_plot(ax, rating, unit))

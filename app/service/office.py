"""Office figures of one visit for the section-detail screen, as a mixin of the field service.

:class:`OfficeFigures` reads what a visit's figures need from the store on the UI thread (one
quick read, :meth:`OfficeFigures.office_inputs`), then runs the one office analysis,
:func:`stakeline.analysis.analyse_visit`, off it (:meth:`OfficeFigures.office_figures_async`)
and formats its result for the screen: wetted figures with their ± bands, Manning's figures for
a chosen roughness row and energy slope with the discharge at the row's low and high n, the
bankfull summary and the change since the section's earlier visit.  The report and the command
line show the same analysis, so the same numbers.  Every figure carries its unit symbol.
"""

from __future__ import annotations

import math

from stakeline.app.service.util import ServiceError, parse_number
from stakeline.errors import SurveyError
from stakeline.survey.figures import figure_title, figure_unit

FIGURE_WORDS = {
    key: figure_title(key)
    for key in ("area", "wetted_perimeter", "top_width", "hydraulic_radius", "discharge",
                "velocity", "froude", "shear_stress", "stream_power")
}  # fmt: skip
"""Plain names of the office figures (from :mod:`stakeline.survey.figures`)."""

ROUGHNESS_LABELS = {
    "clean-straight": "Clean, straight",
    "clean-straight-stony": "Straight, stony",
    "clean-winding": "Winding, pools",
    "winding-weedy": "Winding, weedy",
    "sluggish-weedy": "Sluggish, weedy",
    "very-weedy": "Very weedy, timber",
    "mountain-gravel": "Mountain, gravel",
    "mountain-boulders": "Mountain, boulders",
    "pasture-short": "Floodplain pasture",
}
"""Short chip labels for the rows of :data:`stakeline.survey.roughness.ROUGHNESS`."""

N_SENTENCE = (
    "Manning's n dominates the uncertainty of discharge: the spread between the low and high n "
    "of the roughness row is far wider than the ± from the readings."
)


def _row(key: str, value: float, unit: str, plus_minus: float | None = None, **extra) -> dict:
    """One figure for the screen: name, value, its ± (or None) and the unit symbol."""
    return {
        "key": key,
        "name": extra.pop("name", figure_title(key)),
        "value": float(value),
        "plus_minus": None if plus_minus is None else float(plus_minus),
        "unit": extra.pop("symbol", None) or figure_unit(key, unit),
        **extra,
    }


class OfficeFigures:
    """Mixin of :class:`stakeline.app.service.FieldService`: the office figures of a visit."""

    @staticmethod
    def roughness_rows() -> list[dict]:
        """Rows of the built-in roughness table (Chow 1959, Table 5-6): key, label,
        description, minimum, normal, maximum (Manning's n, dimensionless) and source."""
        from stakeline.survey.roughness import ROUGHNESS, SOURCE

        return [
            {
                "key": row.key,
                "label": ROUGHNESS_LABELS.get(row.key, row.key.replace("-", " ").capitalize()),
                "description": row.description,
                "minimum": row.minimum,
                "normal": row.normal,
                "maximum": row.maximum,
                "source": SOURCE,
            }
            for row in ROUGHNESS
        ]

    def office_inputs(self, visit_uuid: str) -> dict:
        """What the office figures of a visit need, read from the store (UI thread, quick).

        Plain values in the visit's unit: the ground (stations, elevations, codes), the visit's
        water level (``recorded_level``: :func:`stakeline.analysis.visit_water_level`, the mean
        of the levels recorded), the crew's ± of one reading and of one station from the device
        settings (``precision``: [reading, station], converted to the visit's unit), the earlier
        visit to compare (``earlier``: visit, date, stations, elevations, picked by
        :func:`stakeline.analysis.earlier_visit`) or None, and ``no_ground``: why the visit has
        no ground line yet (empty when it has one).
        """
        from stakeline.survey.datum import Datum

        visit = self.store.visit(visit_uuid)
        readings = self.readings(visit_uuid)
        rows = [r for r in readings if r.get("elevation") is not None]
        return {
            "visit": visit_uuid,
            "unit": visit["unit"],
            "site": visit["site"],
            "section": visit["section"],
            "date": visit["date"],
            "finished": visit["finished"],
            "stations": [r["station"] for r in rows],
            "elevations": [r["elevation"] for r in rows],
            "codes": [r["code"] or "" for r in rows],
            "recorded_level": self.water_level(visit_uuid),
            "precision": list(self.plus_minus(visit["unit"])),
            "earlier": self._earlier_ground(visit),
            "no_ground": Datum.from_visit(visit).missing if readings and not rows else "",
        }

    def _earlier_ground(self, visit: dict) -> dict | None:
        """The earlier visit to compare with (:func:`stakeline.analysis.earlier_visit`)."""
        from stakeline.analysis import earlier_visit

        visits = self.store.visits(visit["section_uuid"])
        found = earlier_visit(visit, visits, self.store.stations)
        if found is None:
            return None
        return {
            "visit": found["visit"]["uuid"],
            "date": found["visit"]["date"],
            "stations": [s["station"] for s in found["stations"]],
            "elevations": [s["elevation"] for s in found["stations"]],
        }

    @staticmethod
    def office_request(level_text: str, slope_text: str) -> tuple[float, float | None]:
        """The typed water level and energy slope as numbers (slope None when not typed yet);
        ServiceError with a one-line message when either cannot be used."""
        if not str(level_text).strip():
            raise ServiceError("type the water level (elevation) to see the figures")
        level = parse_number(level_text, "water level")
        if not str(slope_text).strip():
            return level, None
        slope = parse_number(slope_text, "energy slope")
        if not 0 < slope < 1:
            raise ServiceError(
                f"energy slope {slope:g} cannot be used: type the fall per length as a positive "
                "fraction below 1 (0.002 for 0.2 %)"
            )
        return level, slope

    @staticmethod
    def office_figures(
        inputs: dict, level: float, roughness_key: str | None = None, slope: float | None = None
    ) -> dict:
        """Every office figure at ``level`` (pure: safe on a worker thread).

        Runs :func:`stakeline.analysis.analyse_visit` (first-order ± bands) and returns a dict:
        ``unit``, ``level``, ``geometry`` (rows with ± bands), ``precision``; with a roughness
        row and a slope ``flow`` (rows), ``roughness``, ``slope``, ``splits`` and ``n_range``
        (Q at the row's low and high n), else ``flow_note``; ``bankfull`` (rows and stage) or
        ``bankfull_note``; ``change`` (date, rows) or ``change_note``.  ``error`` replaces the
        figures when the level cannot be used.  Rows: dicts with ``name``, ``value``,
        ``plus_minus`` and ``unit``.
        """
        unit = inputs["unit"]
        out = {"unit": unit, "level": float(level)}
        if len(inputs["stations"]) < 2:
            why = inputs.get("no_ground") or "The visit has fewer than two readings"
            return {**out, "error": f"{why[:1].upper()}{why[1:]}: nothing to show."}
        try:
            result = analyse_inputs(inputs, level, roughness_key, slope)
        except SurveyError as exc:
            return {**out, "error": str(exc)}
        precision = result.precision
        out["precision"] = {"reading": precision.reading, "station": precision.station}
        out["geometry"] = [
            _row(name, result.bands[name].value, unit, result.bands[name].plus_minus)
            for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius")
        ]
        _flow(out, result, roughness_key, slope)
        _bankfull(out, result)
        _change(out, result, inputs)
        return out

    def office_figures_async(
        self,
        inputs: dict,
        level_text: str,
        roughness_key: str | None,
        slope_text: str,
        on_done,
        on_error=None,
    ) -> None:
        """:meth:`office_figures` for the typed level and slope on the worker thread;
        ``on_done(figures)`` on the UI thread.  Typing problems raise ServiceError at once."""
        level, slope = self.office_request(level_text, slope_text)
        self.worker.run(
            lambda: self.office_figures(inputs, level, roughness_key, slope), on_done, on_error
        )


def analyse_inputs(inputs: dict, level: float, roughness_key: str | None, slope: float | None):
    """:func:`stakeline.analysis.analyse_visit` on :meth:`OfficeFigures.office_inputs` at the
    typed ``level`` with the chosen roughness row and slope (the crew's ± from the settings)."""
    from stakeline.analysis import AnalysisOptions, analyse_visit
    from stakeline.survey.uncertainty import Precision

    stations = [
        {"station": x, "elevation": z, "code": c}
        for x, z, c in zip(inputs["stations"], inputs["elevations"], inputs["codes"], strict=True)
    ]
    given = inputs.get("precision")
    options = AnalysisOptions(
        stage=level,
        roughness=roughness_key,
        slope=slope,
        precision=Precision(*given) if given else None,
    )
    earlier = inputs.get("earlier")
    if earlier:
        before = [{"station": x, "elevation": z} for x, z in
                  zip(earlier["stations"], earlier["elevations"], strict=True)]  # fmt: skip
        earlier = {"visit": {"uuid": earlier["visit"], "date": earlier["date"]}, "stations": before}
    return analyse_visit({"unit": inputs["unit"]}, stations, options, earlier)


def _flow(out: dict, result, roughness_key, slope) -> None:
    """Manning's figures for the chosen roughness row and slope, split at the bank tops."""
    from stakeline.survey.roughness import SOURCE

    unit = result.unit
    if result.flow is None:
        missing = [
            what
            for what, value in (
                ("pick a roughness row", roughness_key),
                ("type the energy slope", slope),
            )
            if value is None
        ]
        out["flow_note"] = " and ".join(missing).capitalize() + " to see the discharge."
        return
    row, flow = result.row, result.flow
    out["roughness"] = {
        "key": row.key,
        "description": row.description,
        "minimum": row.minimum,
        "normal": row.normal,
        "maximum": row.maximum,
        "source": SOURCE,
    }
    out["slope"] = result.slope
    out["splits"] = result.splits
    band = result.bands["discharge"]
    out["flow"] = [_row("discharge", flow["discharge"], unit, band.plus_minus)] + [
        _row(name, flow[name], unit)
        for name in ("velocity", "froude", "shear_stress", "stream_power")
    ]
    out["n_range"] = {
        "low_n": row.minimum,
        "high_n": row.maximum,
        "discharge_low_n": result.n_range["minimum"],
        "discharge_high_n": result.n_range["maximum"],
        "unit": out["flow"][0]["unit"],
        "sentence": N_SENTENCE,
    }


def _bankfull(out: dict, result) -> None:
    """Bankfull summary at the lower bank top either side of the deepest point, if coded."""
    unit, summary = result.unit, result.bankfull
    if summary is None:
        out["bankfull_note"] = result.bankfull_note.replace(
            "code the bank tops", "code the bank tops on the readings screen"
        )
        return
    ratio = summary["width_depth_ratio"]
    out["bankfull"] = {
        "stage": summary["stage"],
        "rows": [
            _row("stage", summary["stage"], unit, name="Bankfull level (lower bank top)"),
            _row("width", summary["width"], unit, name="Bankfull width"),
            _row("mean_depth", summary["mean_depth"], unit, name="Mean depth (A/T)"),
            _row("max_depth", summary["max_depth"], unit, name="Maximum depth"),
            _row("width_depth_ratio", ratio if math.isfinite(ratio) else 0.0, unit),
            _row("area", summary["area"], unit, name="Bankfull area"),
        ],
    }


def _change(out: dict, result, inputs: dict) -> None:
    """Scour, fill and the deepest point's move since the section's earlier visit."""
    change, unit = result.comparison, result.unit
    if change is None:
        out["change_note"] = result.comparison_note or (
            "No earlier visit of this section in the same unit to compare with."
        )
        return
    rows = [
        _row("scour_area", change["scour_area"], unit),
        _row("fill_area", change["fill_area"], unit),
        _row("net_change", change["net_change"], unit, signed=True),
        _row("deepest_shift", change["deepest_shift"], unit, signed=True),
        _row("deepest_change", -change["deepest_drop"], unit, signed=True),
    ]
    if "area_change" in change:
        rows.append(_row("area_change", change["area_change"], unit, signed=True))
        rows.append(_row("top_width_change", change["top_width_change"], unit, signed=True))
    out["change"] = {
        "date": inputs["earlier"]["date"],
        "start": change["start"],
        "end": change["end"],
        "rows": rows,
        "raw": change,
    }

"""Office figures of one visit for the section-detail screen, as a mixin of the field service.

:class:`OfficeFigures` reads what a visit's figures need from the store on the UI thread (one
quick read, :meth:`OfficeFigures.office_inputs`), then computes them off it
(:meth:`OfficeFigures.office_figures_async`): wetted figures at a water level with their ±
bands from the crew's reading precision, uniform-flow hydraulics for a chosen roughness row and
energy slope with the discharge at the row's low and high n, the bankfull summary and the change
since the section's earlier visit.  Everything is returned as plain values in the visit's unit,
with the unit symbol beside every figure.
"""

from __future__ import annotations

import math

from stakeline.app.service.util import ServiceError, parse_number
from stakeline.errors import SurveyError

FIGURE_WORDS = {
    "area": "Area",
    "wetted_perimeter": "Wetted perimeter",
    "top_width": "Top width",
    "hydraulic_radius": "Hydraulic radius",
    "discharge": "Discharge",
    "velocity": "Mean velocity",
    "froude": "Froude number",
    "shear_stress": "Shear stress (γRS)",
    "stream_power": "Unit stream power (γQS/T)",
}
"""Plain names of the office figures, keyed by the core's figure names."""

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
    from stakeline.survey.hydraulics import figure_unit

    return {
        "key": key,
        "name": extra.pop("name", FIGURE_WORDS.get(key, key.replace("_", " ").capitalize())),
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

        Plain values in the visit's unit: the ground (stations, elevations, codes), the latest
        recorded water level, the crew's ± of one reading and of one station from the device
        settings (``precision``: [reading, station], converted to the visit's unit), and the
        latest earlier visit of the section in the same unit (``earlier``: date, stations,
        elevations) or None.  Reads the store (and stakeline.survey.uncertainty's default ±); the other
        office modules are imported on the worker thread when the figures are first computed.
        """
        visit = self.store.visit(visit_uuid)
        rows = [r for r in self.readings(visit_uuid) if r.get("elevation") is not None]
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
        }

    def _earlier_ground(self, visit: dict) -> dict | None:
        """The section's latest visit before ``visit`` (earlier date, same unit) with a ground
        line, as the office report picks it."""
        earlier = [
            v
            for v in self.store.visits(visit["section_uuid"])
            if v["date"] < visit["date"] and v["unit"] == visit["unit"]
        ]
        for other in reversed(earlier):
            rows = [r for r in self.store.stations(other["uuid"]) if r.get("elevation") is not None]
            if len(rows) >= 2:
                return {
                    "visit": other["uuid"],
                    "date": other["date"],
                    "stations": [r["station"] for r in rows],
                    "elevations": [r["elevation"] for r in rows],
                }
        return None

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

        Returns a dict: ``unit``, ``level``, ``geometry`` (rows with ± bands, linear
        propagation), ``precision``; with a roughness row and a slope ``flow`` (rows),
        ``roughness``, ``splits`` and ``n_range`` (Q at the row's low and high n), else
        ``flow_note``; ``bankfull`` (rows and stage) or ``bankfull_note``; ``change`` (date,
        rows) or ``change_note``.  ``error`` replaces the figures when the level
        cannot be used.  Rows: dicts with ``name``, ``value``, ``plus_minus`` and ``unit``.
        """
        from stakeline.survey.geometry import Section
        from stakeline.survey.uncertainty import Precision, geometry_bands

        unit = inputs["unit"]
        out = {"unit": unit, "level": float(level)}
        if len(inputs["stations"]) < 2:
            return {**out, "error": "The visit has fewer than two readings: nothing to show."}
        section = Section(inputs["stations"], inputs["elevations"])
        given = inputs.get("precision")
        precision = Precision(*given) if given else Precision.default(unit)
        out["precision"] = {"reading": precision.reading, "station": precision.station}
        try:
            bands = geometry_bands(section, float(level), precision, method="linear")
        except SurveyError as exc:
            return {**out, "error": str(exc)}
        out["geometry"] = [
            _row(name, band.value, unit, band.plus_minus) for name, band in bands.items()
        ]
        _flow(out, inputs, section, float(level), roughness_key, slope, precision)
        _bankfull(out, inputs, section)
        _change(out, inputs, section, float(level))
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


def _flow(out: dict, inputs: dict, section, level, roughness_key, slope, precision) -> None:
    """Manning's figures for the chosen roughness row and slope, split at the bank tops."""
    from stakeline.survey.hydraulics import bank_top_splits, flow_at
    from stakeline.survey.roughness import SOURCE, roughness
    from stakeline.survey.uncertainty import discharge_band, discharge_for_roughness

    unit = inputs["unit"]
    if roughness_key is None or slope is None:
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
    row = roughness(roughness_key)
    out["roughness"] = {
        "key": row.key,
        "description": row.description,
        "minimum": row.minimum,
        "normal": row.normal,
        "maximum": row.maximum,
        "source": SOURCE,
    }
    out["slope"] = slope
    splits = bank_top_splits(section.stations, section.elevations, inputs["codes"])
    n = [row.normal] * (len(splits) + 1) if splits else row.normal
    try:
        flow = flow_at(section, level, n, slope, unit, splits or None)
        band = discharge_band(section, level, n, slope, unit, precision, splits or None)
        spread = discharge_for_roughness(section, level, row, slope, unit, splits or None)
    except SurveyError as exc:
        out["flow_note"] = str(exc)
        return
    out["splits"] = splits
    out["flow"] = [_row("discharge", flow.discharge, unit, band.plus_minus)] + [
        _row(name, getattr(flow, name), unit)
        for name in ("velocity", "froude", "shear_stress", "stream_power")
    ]
    out["n_range"] = {
        "low_n": row.minimum,
        "high_n": row.maximum,
        "discharge_low_n": spread["minimum"],
        "discharge_high_n": spread["maximum"],
        "unit": out["flow"][0]["unit"],
        "sentence": N_SENTENCE,
    }


def _bankfull(out: dict, inputs: dict, section) -> None:
    """Bankfull summary at the lower bank top either side of the deepest point, if coded."""
    from stakeline.survey.hydraulics import bankfull_stage, bankfull_summary

    unit = inputs["unit"]
    stage = bankfull_stage(section.stations, section.elevations, inputs["codes"])
    if stage is None:
        out["bankfull_note"] = (
            "No bank top coded on both sides of the deepest point: code the bank tops on the "
            "readings screen to see the bankfull summary."
        )
        return
    try:
        summary = bankfull_summary(section, stage)
    except SurveyError as exc:
        out["bankfull_note"] = str(exc)
        return
    ratio = summary["width_depth_ratio"]
    out["bankfull"] = {
        "stage": stage,
        "rows": [
            _row("stage", stage, unit, name="Bankfull level (lower bank top)"),
            _row("width", summary["width"], unit, name="Bankfull width"),
            _row("mean_depth", summary["mean_depth"], unit, name="Mean depth (A/T)"),
            _row("max_depth", summary["max_depth"], unit, name="Maximum depth"),
            _row(
                "width_depth_ratio",
                ratio if math.isfinite(ratio) else 0.0,
                unit,
                name="Width/depth ratio",
            ),
            _row("area", summary["area"], unit, name="Bankfull area"),
        ],
    }


def _change(out: dict, inputs: dict, section, level: float) -> None:
    """Scour, fill and the deepest point's move since the section's earlier visit."""
    from stakeline.survey.compare import compare_visits
    from stakeline.survey.geometry import Section

    earlier = inputs.get("earlier")
    if not earlier:
        out["change_note"] = "No earlier visit of this section in the same unit to compare with."
        return
    unit = inputs["unit"]
    before = Section(earlier["stations"], earlier["elevations"])
    stage = level if level <= min(before.highest_stage, section.highest_stage) else None
    try:
        change = compare_visits(before, section, stage)
    except SurveyError as exc:
        out["change_note"] = str(exc)
        return
    rows = [
        _row(
            "scour_area", change["scour_area"], unit, symbol=f"{unit}²", name="Scour (bed lowered)"
        ),
        _row("fill_area", change["fill_area"], unit, symbol=f"{unit}²", name="Fill (bed raised)"),
        _row(
            "net_change",
            change["net_change"],
            unit,
            symbol=f"{unit}²",
            signed=True,
            name="Net change (fill - scour)",
        ),
        _row(
            "deepest_shift",
            change["deepest_shift"],
            unit,
            signed=True,
            name="Deepest point moved along the tape",
        ),
        _row(
            "deepest_change",
            -change["deepest_drop"],
            unit,
            signed=True,
            name="Deepest bed elevation change",
        ),
    ]
    if stage is not None:
        rows.append(
            _row(
                "area_change",
                change["area_change"],
                unit,
                symbol=f"{unit}²",
                signed=True,
                name="Wetted area change at this level",
            )
        )
        rows.append(
            _row(
                "top_width_change",
                change["top_width_change"],
                unit,
                signed=True,
                name="Top width change at this level",
            )
        )
    out["change"] = {
        "date": earlier["date"],
        "start": change["start"],
        "end": change["end"],
        "rows": rows,
        "raw": change,
    }

"""Stakeline: stream and canal cross-sections surveyed with stakes, a level line and a plumb.

The names a script needs are importable from here; each lives in one module of a subpackage by
concept -- ``stakeline.survey`` (units, feature codes, figure names, numbers, the datum and
reduction, geometry, hydraulics, rating, comparison, uncertainty, roughness),
``stakeline.checks`` (field checks), ``stakeline.gauging`` (the discharge measured at the
stations, the calibrated n and measured ratings), ``stakeline.analysis`` (the office analysis of
a visit),
``stakeline.store`` (the SQLite store and visit packages), ``stakeline.report`` (office
reports) and ``stakeline.files`` (section CSV files and exports); the touch app and the command
line live in ``stakeline.app``.  Importing ``stakeline`` is cheap: a name's module is imported
when the name is first used.

Figures are estimates for field and office checking, not a substitute for licensed engineering
review under local codes.

Examples
--------
>>> from stakeline import Section, flow_at, review, critical_stage
>>> channel = Section([0, 0, 4, 4], [2, 0, 0, 2])          # 4 wide, vertical walls, metres
>>> channel.at(1.0).area
4.0
>>> round(flow_at(channel, 1.0, n=0.03, slope=0.001).discharge, 4)
3.2177
>>> round(critical_stage(channel, 3.2177), 4)               # y_c = (q²/g)^(1/3), q = Q/b
0.4041
>>> review([0, 1, 2], [1.0, 0.5, 1.0])
[]

The demo survey, analysed as the report and the tablet show it:

>>> from stakeline import Store, analyse_visit, AnalysisOptions, earlier_visit
>>> store = Store.memory()
>>> visits = store.load_demo()
>>> autumn = store.visit(next(v["uuid"] for v in visits if v["date"] == "2026-09-22"))
>>> before = earlier_visit(autumn, store.visits(), store.stations)
>>> result = analyse_visit(autumn, store.stations(autumn["uuid"]),
...                        AnalysisOptions(roughness="mountain-gravel", slope=0.004), before)
>>> before["visit"]["date"], result.comparison["scour_area"] > 0
('2026-04-14', True)
>>> store.close()
"""

from __future__ import annotations

import importlib

__version__ = "0.2.0"

_HOMES = {
    # geometry and hydraulics
    "Section": "stakeline.survey.geometry",
    "WaterSection": "stakeline.survey.geometry",
    "flow_at": "stakeline.survey.hydraulics",
    "flow_table": "stakeline.survey.hydraulics",
    "Flow": "stakeline.survey.hydraulics",
    "CompoundSection": "stakeline.survey.hydraulics",
    "critical_stage": "stakeline.survey.hydraulics",
    "stage_for_discharge": "stakeline.survey.hydraulics",
    "bank_top_splits": "stakeline.survey.hydraulics",
    "bankfull_stage": "stakeline.survey.hydraulics",
    "bankfull_summary": "stakeline.survey.hydraulics",
    "slope_from_water_levels": "stakeline.survey.hydraulics",
    "rating_table": "stakeline.survey.rating",
    "rating_stages": "stakeline.survey.rating",
    "stage_for": "stakeline.survey.rating",
    "compare_visits": "stakeline.survey.compare",
    "scour_fill": "stakeline.survey.compare",
    "geometry_bands": "stakeline.survey.uncertainty",
    "discharge_band": "stakeline.survey.uncertainty",
    "discharge_for_roughness": "stakeline.survey.uncertainty",
    "Precision": "stakeline.survey.uncertainty",
    "Band": "stakeline.survey.uncertainty",
    "roughness": "stakeline.survey.roughness",
    "ROUGHNESS": "stakeline.survey.roughness",
    # vocabulary
    "Unit": "stakeline.survey.units",
    "unit_of": "stakeline.survey.units",
    "FeatureCode": "stakeline.survey.codes",
    "FEATURE_CODES": "stakeline.survey.codes",
    "FIGURE_TABLE": "stakeline.survey.figures",
    "figure_label": "stakeline.survey.figures",
    "figure_unit": "stakeline.survey.figures",
    "parse_number": "stakeline.survey.numbers",
    "NumberError": "stakeline.survey.numbers",
    "Datum": "stakeline.survey.datum",
    "LineVerdict": "stakeline.survey.datum",
    # field checks
    "review": "stakeline.checks",
    "Finding": "stakeline.checks",
    "CheckSettings": "stakeline.checks",
    "flagged_stations": "stakeline.checks",
    # office analysis and report
    "analyse_visit": "stakeline.analysis",
    "AnalysisOptions": "stakeline.analysis",
    "VisitAnalysis": "stakeline.analysis",
    "earlier_visit": "stakeline.analysis",
    "visit_water_level": "stakeline.analysis",
    # gauging: the discharge measured at the stations, and the rating it gives
    "visit_gauging": "stakeline.gauging",
    "measured_rating": "stakeline.gauging",
    "section_measurements": "stakeline.measurements",
    "prepare_report": "stakeline.report",
    "write_report": "stakeline.report",
    # files and the store
    "read_section_csv": "stakeline.files.section_csv",
    "Store": "stakeline.store",
    "import_files": "stakeline.store.package",
    "pack_visits": "stakeline.store.package",
    # errors
    "SurveyError": "stakeline.errors",
    "SectionError": "stakeline.errors",
    "OvertoppedError": "stakeline.errors",
}

__all__ = sorted(_HOMES)


def __getattr__(name: str):
    """Import a public name's module when the name is first used (PEP 562)."""
    home = _HOMES.get(name)
    if home is None:
        raise AttributeError(f"module 'stakeline' has no attribute {name!r}")
    value = getattr(importlib.import_module(home), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOMES))

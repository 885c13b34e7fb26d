"""Office report of one visit: the analysis gathered into plain data, then drawn with matplotlib.

:func:`prepare_report` takes plain data (the visit's stations and metadata, as the store returns
them) and :class:`ReportOptions`, and runs the office analysis: hydraulics at the water level with
uncertainty bands, discharge at the low and high n of the roughness row, the rating table, the
bankfull summary and the change since an earlier visit.  :func:`write_report` draws the result to
a PDF (several A4 pages) or a PNG (the same pages one under the other).  Agg backend, no display.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey.compare import compare_visits
from stakeline.survey.geometry import Section
from stakeline.survey.hydraulics import (
    CompoundSection,
    bank_top_splits,
    bankfull_stage,
    bankfull_summary,
    flow_at,
)
from stakeline.survey.rating import rating_stages, rating_table
from stakeline.survey.roughness import RoughnessRow, roughness, row_for_n
from stakeline.survey.uncertainty import (
    Precision,
    discharge_band,
    discharge_for_roughness,
    geometry_bands,
)

CAUTIONS = (
    "Every figure here is an estimate for field and office checking. Designs and safety "
    "decisions need review by a licensed engineer under the codes and standards that apply "
    "where you work.",
    "Discharge assumes uniform flow (Manning's equation) at the slope given. Manning's n "
    "dominates its uncertainty: the spread between the low and high n of the roughness row is "
    "far wider than the spread from the readings.",
    "Wading is dangerous: do not wade where depth × velocity reaches about 10 ft²/s "
    "(0.93 m²/s); cold water, soft beds and rising water lower that limit.",
)
"""Cautions printed in every report."""


@dataclass(frozen=True)
class ReportOptions:
    """Analysis choices for a report; lengths in the survey unit, slope dimensionless.

    ``n`` (typed) or ``roughness`` (a key of :data:`stakeline.survey.roughness.ROUGHNESS`) gives the main
    channel's Manning's n; ``n_overbank`` that of the overbanks (default: the same).  ``splits``
    are subsection stations (default: the interior bank tops).  ``stage`` defaults to the mean of
    the water levels read; ``bankfull`` to the lower bank top.
    """

    stage: float | None = None
    n: float | None = None
    roughness: str | None = None
    n_overbank: float | None = None
    slope: float | None = None
    splits: tuple[float, ...] | None = None
    bankfull: float | None = None
    precision: Precision | None = None
    rating_step: float | None = None


@dataclass
class ReportData:
    """Everything a report shows, as plain values (see :func:`prepare_report`)."""

    title: str
    unit: str
    visit: dict
    stations: list[dict]
    stage: float | None
    water_levels: list[dict]
    findings: list[dict] | None = field(default_factory=list)
    overrides: list[dict] = field(default_factory=list)
    flagged: list[float] = field(default_factory=list)
    splits: list[float] = field(default_factory=list)
    subsections: list[dict] = field(default_factory=list)
    n_values: list[float] = field(default_factory=list)
    row: RoughnessRow | None = None
    slope: float | None = None
    flow: dict | None = None
    bands: dict = field(default_factory=dict)
    n_range: dict | None = None
    rating: dict | None = None
    bankfull: dict | None = None
    comparison: dict | None = None
    previous: dict | None = None
    precision: Precision | None = None
    missing: list[str] = field(default_factory=list)


def nice_step(span: float, rows: int = 25) -> float:
    """A round step (1, 2, 2.5 or 5 × 10^k) giving about ``rows`` rows over ``span``.

    >>> nice_step(1.44), nice_step(30.0)
    (0.1, 2.0)
    """
    raw = max(span, 1e-9) / rows
    power = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * power >= raw:
            return round(m * power, 12)
    return 10 * power


def _section_of(stations: Sequence[dict]) -> Section:
    return Section([s["station"] for s in stations], [s["elevation"] for s in stations])


def _choose_n(options: ReportOptions) -> tuple[float | None, RoughnessRow | None]:
    if options.roughness:
        row = roughness(options.roughness)
        return (row.normal if options.n is None else float(options.n)), row
    if options.n is None:
        return None, None
    return float(options.n), row_for_n(options.n)


def _stage(options: ReportOptions, water_levels: Sequence[dict]) -> float | None:
    if options.stage is not None:
        return float(options.stage)
    levels = [float(w["elevation"]) for w in water_levels if w.get("elevation") is not None]
    return float(np.mean(levels)) if levels else None


def prepare_report(
    visit: dict,
    stations: Sequence[dict],
    options: ReportOptions,
    findings: Sequence[dict] | None = (),
    overrides: Sequence[dict] = (),
    previous: dict | None = None,
) -> ReportData:
    """Run the office analysis of one visit into :class:`ReportData`.

    ``visit`` is the store's visit dict (site, section, date, crew, unit, water_levels, notes);
    ``stations`` its station dicts (station, reading, elevation, code, note); ``previous`` an
    earlier visit of the same section as ``{"visit": dict, "stations": list}`` for comparison.
    ``findings`` of None means the field checks could not be run (the report says so).
    """
    live = [s for s in stations if not s.get("removed")]
    if len(live) < 2:
        raise SurveyError("the visit has fewer than 2 stations; nothing to report")
    unit = visit.get("unit", "m")
    section = _section_of(live)
    codes = [s.get("code", "") or "" for s in live]
    data = ReportData(
        title=f"{visit.get('site', '')} — {visit.get('section', '')}",
        unit=unit,
        visit=visit,
        stations=live,
        stage=_stage(options, visit.get("water_levels", [])),
        water_levels=list(visit.get("water_levels", [])),
        findings=None if findings is None else list(findings),
        overrides=list(overrides),
        precision=options.precision or Precision.default(unit),
    )
    data.flagged = sorted(
        {
            float(f["station"])
            for f in findings
            if f.get("station") is not None and f.get("severity") in ("block", "warn")
        }
    )
    data.splits = (
        list(options.splits)
        if options.splits is not None
        else bank_top_splits(section.stations, section.elevations, codes)
    )
    n, data.row = _choose_n(options)
    data.slope = options.slope
    if n is None:
        data.missing.append("Manning's n (give --n or --roughness)")
    if options.slope is None:
        data.missing.append("energy slope (give --slope)")
    if data.stage is None:
        data.missing.append("water level (none read; give --stage)")
    _hydraulics(data, section, n, options)
    _rating_and_bankfull(data, section, codes, n, options)
    if previous:
        _comparison(data, section, previous)
    return data


def _hydraulics(
    data: ReportData, section: Section, n: float | None, options: ReportOptions
) -> None:
    if data.stage is None:
        return
    data.bands = geometry_bands(section, data.stage, data.precision)
    if n is None or data.slope is None:
        return
    overbank = float(options.n_overbank) if options.n_overbank is not None else n
    if data.splits:
        compound = CompoundSection(section, data.splits, [n] * (len(data.splits) + 1))
        names = compound.names()
        data.n_values = [n if name == "main channel" else overbank for name in names]
        parts = CompoundSection(section, data.splits, data.n_values).table(data.stage, data.unit)[
            "parts"
        ]
        data.subsections = [
            {"name": name, "n": nv, **{k: float(v) for k, v in part.items()}}
            for name, nv, part in zip(names, data.n_values, parts, strict=True)
        ]
    else:
        data.n_values = [n]
    arg = data.n_values if data.splits else n
    data.flow = flow_at(
        section, data.stage, arg, data.slope, data.unit, data.splits or None
    ).as_dict()
    data.bands["discharge"] = discharge_band(
        section, data.stage, arg, data.slope, data.unit, data.precision, data.splits or None
    )
    if data.row is not None:
        data.n_range = discharge_for_roughness(
            section, data.stage, data.row, data.slope, data.unit, data.splits or None, data.n_values
        )


def _rating_and_bankfull(
    data: ReportData, section: Section, codes, n, options: ReportOptions
) -> None:
    stage = (
        options.bankfull
        if options.bankfull is not None
        else bankfull_stage(section.stations, section.elevations, codes)
    )
    if stage is not None:
        data.bankfull = bankfull_summary(section, stage)
    step = options.rating_step or nice_step(section.highest_stage - section.lowest)
    start = math.ceil(section.lowest / step) * step
    stages = rating_stages(section, step, start if start < section.highest_stage else None)
    if n is not None and data.slope is not None:
        arg = data.n_values if data.splits else n
        data.rating = rating_table(section, stages, arg, data.slope, data.unit, data.splits or None)
    else:
        fig = section.table(stages)
        data.rating = {
            "stage": stages,
            **{k: fig[k] for k in ("area", "wetted_perimeter", "top_width", "hydraulic_radius")},
        }


def _comparison(data: ReportData, section: Section, previous: dict) -> None:
    before = _section_of([s for s in previous["stations"] if not s.get("removed")])
    stage = data.stage
    if stage is not None and stage > min(before.highest_stage, section.highest_stage):
        stage = None
    data.comparison = compare_visits(before, section, stage)
    data.previous = previous


def field_findings(visit: dict, stations: list[dict], stage: float | None) -> list[dict] | None:
    """Field-check findings of a visit as dicts, or None when ``stakeline.checks`` is not available.

    ``stations`` (survey unit) are checked in station order, then entry order (``seq``) at one
    station, as :meth:`stakeline.store.Store.stations` returns them: a station inserted later is in
    its place, not an ``order`` finding (that is caught as it is typed), while the two readings
    of a vertical face keep the order they were read in.  ``stage``: water level or ``None``.
    """
    try:
        from stakeline.checks import review
    except ImportError:  # hook: reports still work in a build without the field checks
        return None
    ordered = sorted(stations, key=lambda s: (s["station"], s.get("seq", 0)))
    found = review(
        [s["station"] for s in ordered],
        [s["elevation"] for s in ordered],
        stage=stage,
        meta=visit,
        codes=[s.get("code", "") or "" for s in ordered],
        readings=[s.get("reading") for s in ordered],
    )
    return [f.as_dict() for f in found]


def write_report(data: ReportData, path: str | Path) -> Path:
    """Draw ``data`` to ``path``: ``.pdf`` (A4 pages) or ``.png`` (pages stacked); returns the path."""
    from stakeline.report import pages as report_pages

    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in (".pdf", ".png"):
        raise SurveyError(
            f"{path}: a report is written as .pdf or .png, not {suffix or 'no extension'}"
        )
    if not path.parent.exists():
        raise SurveyError(f"{path.parent}: no such folder")
    figures = report_pages.draw_pages(data)
    tmp = path.with_name(path.name + ".part")
    try:
        report_pages.save(figures, tmp, suffix[1:])
        tmp.replace(path)
    except OSError as exc:
        raise SurveyError(f"{path}: cannot be written ({exc.strerror or exc})") from None
    return path

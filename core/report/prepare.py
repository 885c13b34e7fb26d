"""Office report of one visit: the office analysis gathered into plain data, then drawn.

:func:`prepare_report` runs :func:`stakeline.analysis.analyse_visit` -- the one office analysis
the tablet and the command line show too -- and adds what only a report carries (title, field
findings, overrides, flagged stations).  :func:`write_report` draws the result to a PDF
(several A4 pages) or a PNG (the same pages one under the other).  Agg backend, no display.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from stakeline.analysis import AnalysisOptions, analyse_visit, nice_step  # noqa: F401
from stakeline.checks.review import flagged_stations
from stakeline.errors import SurveyError
from stakeline.files.durable import atomic_path
from stakeline.gauging import MeasuredRating, VisitGauging
from stakeline.survey.roughness import RoughnessRow
from stakeline.survey.uncertainty import Precision

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


ReportOptions = AnalysisOptions
"""Analysis choices for a report: :class:`stakeline.analysis.AnalysisOptions` (the water level
defaults to the mean of the levels read, bankfull to the lower bank top)."""


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
    notes: list[str] = field(default_factory=list)
    method: str = "linear"
    stage_source: str = ""
    gauging: VisitGauging | None = None
    gauging_note: str = ""
    measured_rating: MeasuredRating | None = None
    measured_rating_note: str = ""


def prepare_report(
    visit: dict,
    stations: Sequence[dict],
    options: ReportOptions,
    findings: Sequence[dict] | None = (),
    overrides: Sequence[dict] = (),
    previous: dict | None = None,
    gauging: dict | None = None,
    measurements: Sequence[dict] | None = None,
) -> ReportData:
    """Run the office analysis of one visit into :class:`ReportData`.

    ``visit`` is the store's visit dict (site, section, date, crew, unit, water_levels, notes);
    ``stations`` its station dicts (station, reading, elevation, code, note); ``previous`` an
    earlier visit of the same section as ``{"visit": dict, "stations": list}`` for comparison
    (see :func:`stakeline.analysis.earlier_visit`).  ``findings`` of None means the field checks
    could not be run (the report says so); flagged stations follow
    :func:`stakeline.checks.flagged_stations`.  ``gauging`` (the visit's gauging records) and
    ``measurements`` (the section's measured discharges) add the gauging pages: see
    :func:`stakeline.analysis.analyse_visit`.

    Examples
    --------
    >>> ground = [{"station": x, "elevation": z} for x, z in [(0, 2.0), (2, 0.0), (4, 2.0)]]
    >>> visit = {"site": "Demo", "section": "XS", "unit": "m", "water_levels": [{"elevation": 1.0}]}
    >>> data = prepare_report(visit, ground, ReportOptions(n=0.035, slope=0.002))
    >>> data.title, data.bands["area"].value, data.missing
    ('Demo — XS', 1.0, [])
    """
    result = analyse_visit(visit, stations, options, previous, gauging, measurements)
    notes = [n for n in (result.bankfull_note, result.comparison_note if previous else "") if n]
    return ReportData(
        title=f"{visit.get('site', '')} — {visit.get('section', '')}",
        unit=result.unit,
        visit=visit,
        stations=result.stations,
        stage=result.stage,
        water_levels=list(visit.get("water_levels", [])),
        findings=None if findings is None else list(findings),
        overrides=list(overrides),
        flagged=sorted(flagged_stations(findings or [])),
        splits=result.splits,
        subsections=result.subsections,
        n_values=result.n_values,
        row=result.row,
        slope=result.slope,
        flow=result.flow,
        bands=result.bands,
        n_range=result.n_range,
        rating=result.rating,
        bankfull=result.bankfull,
        comparison=result.comparison,
        previous=result.previous,
        precision=result.precision,
        missing=list(result.missing),
        notes=notes,
        method=result.method,
        stage_source=result.stage_source,
        gauging=result.gauging,
        gauging_note=result.gauging_note,
        measured_rating=result.measured_rating,
        measured_rating_note=result.measured_rating_note,
    )


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
    """Draw ``data`` to ``path``: ``.pdf`` (A4 pages) or ``.png`` (pages stacked); returns the path.

    Written to a temporary file first and renamed, so a half-written report never stands.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> ground = [{"station": x, "elevation": z} for x, z in [(0, 2.0), (2, 0.0), (4, 2.0)]]
    >>> data = prepare_report({"unit": "m"}, ground, ReportOptions(stage=1.0))
    >>> out = write_report(data, pathlib.Path(tempfile.mkdtemp()) / "xs.pdf")
    >>> out.read_bytes()[:4]
    b'%PDF'
    """
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
    try:
        with atomic_path(path) as tmp:  # exclusive temporary file, fsynced, renamed (0644)
            report_pages.save(figures, tmp, suffix[1:])
    except OSError as exc:
        raise SurveyError(f"{path}: cannot be written ({exc.strerror or exc})") from None
    return path

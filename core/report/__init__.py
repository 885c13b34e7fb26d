"""Office report of one visit: the analysis as plain data (:mod:`.prepare`), drawn by :mod:`.pages`."""

from stakeline.report.prepare import (
    CAUTIONS,
    ReportData,
    ReportOptions,
    field_findings,
    nice_step,
    prepare_report,
    write_report,
)

__all__ = [
    "CAUTIONS",
    "ReportData",
    "ReportOptions",
    "field_findings",
    "nice_step",
    "prepare_report",
    "write_report",
]

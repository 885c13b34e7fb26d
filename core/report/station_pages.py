"""The stations pages of a report: the visit's stations as a table (every one, or for a dense
survey the flagged, coded and noted ones), then every field-check finding, override and long
note in full, flowing on to further pages as needed.  The drawing tools (header, tables,
paragraphs, flowing text) are those of :mod:`stakeline.report.pages`.
"""

from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure
from stakeline.report import pages as tools
from stakeline.report.prepare import ReportData

STATIONS_PER_PAGE = 48
STATIONS_LISTED = 2000
"""Most stations a report lists one by one; a longer visit lists its flagged, coded and noted
stations (every station is in the stations CSV, ``stakeline export``), so a report of a dense
20,000-station survey stays a few pages and takes seconds, not hundreds of pages."""


def _listed_stations(data: ReportData) -> tuple[list[dict], str]:
    """The stations a report lists, and a sentence when some are left to the stations CSV."""
    if len(data.stations) <= STATIONS_LISTED:
        return list(data.stations), ""
    flagged = set(data.flagged)
    keep = [s for s in data.stations
            if s["station"] in flagged or s.get("code") or s.get("note")]  # fmt: skip
    kept = keep[:STATIONS_LISTED]
    return kept, (
        f"{len(data.stations):,} stations: listed here are the {len(kept):,} flagged, coded or "
        "noted ones; every station is in the stations CSV (stakeline export)."
    )


def _column_table(fig: Figure, top: float, header, rows, widths, size: float = 7.0) -> float:
    """A long plain table drawn as one text block per column with rules between rows (a few
    artists per page, where a matplotlib table draws one per cell); returns the height below."""
    step = size * 2.1 / (tools.A4[1] * 72)
    height = (len(rows) + 1) * step
    ax = fig.add_axes((0.05, top - height, 0.9, height))
    ax.axis("off")
    ax.set_xlim(0, 1)
    ax.set_ylim(-(len(rows) + 1), 0)
    ax.axhspan(-1, 0, color="#e8e8e8", lw=0)
    ax.hlines(-np.arange(len(rows) + 2), 0, 1, colors="0.3", linewidth=0.3)
    left = np.concatenate([[0.0], np.cumsum(widths)[:-1]])
    ax.vlines([*left, 1.0], -(len(rows) + 1), 0, colors="0.3", linewidth=0.3)
    for x, name, column in zip(left, header, zip(*rows, strict=True), strict=True):
        ax.text(x + 0.008, -0.5, name, fontsize=size, weight="bold", va="center")
        # One line per row (an empty cell is a no-break space, so every column has the same
        # lines); line spacing is in font sizes: 2.1 of them is one row of the rules.
        text = "\n".join(cell or "\u00a0" for cell in column)
        ax.text(x + 0.008, -1.5, text, fontsize=size, va="center", linespacing=2.1)
        ax.texts[-1].set_y(-1 - len(column) / 2)  # the block's middle is the rows' middle
    return top - height - 0.012


def station_pages(data: ReportData) -> list[Figure]:
    """The stations table and the field checks in full, on as many pages as they take."""
    unit, flagged = data.unit, set(data.flagged)
    listed, left_out = _listed_stations(data)
    rows = [
        [f"{s['station']:.3f}", "" if s.get("reading") is None else f"{s['reading']:.3f}",
         f"{s['elevation']:.3f}", (s.get("code") or "").replace("_", " "),
         ("FLAGGED  " if s["station"] in flagged else "") + tools._clip(s.get("note") or "", tools.NOTE_CHARS)]
        for s in listed
    ]  # fmt: skip
    header = [f"station ({unit})", f"reading ({unit})", f"elevation ({unit})", "code", "note"]
    chunks = [rows[i : i + STATIONS_PER_PAGE] for i in range(0, len(rows), STATIONS_PER_PAGE)]
    pages, top = [], 0.91
    for k, chunk in enumerate(chunks or [[]]):
        fig = tools._page()
        tools._header(fig, data, "stations and field checks")
        pages.append(fig)
        top = 0.91
        if left_out and k == 0:
            top = tools._paragraph(fig, top, left_out)
        if chunk:
            top = _column_table(fig, top, header, chunk, [0.13, 0.13, 0.13, 0.14, 0.47], size=7)
    tools._flow(data, pages, top, _check_blocks(data, listed), "stations and field checks")
    return pages


def _check_blocks(data: ReportData, listed: list[dict]) -> list[tuple[str, str]]:
    """The field checks as headings (``"h"``) and paragraphs (``"p"``), every word of every
    finding, override and long note kept."""
    unit = data.unit
    blocks: list[tuple[str, str]] = [("h", "Field-check findings")]
    if data.findings is None:
        blocks.append(("p", "Field checks were not available when this report was made."))
    for f in data.findings or []:
        blocks.append(("p", tools.finding_text(f.get("severity", ""), f.get("kind", ""), f.get("station"),
                                         f.get("message", ""), f.get("suggestion", ""), unit)))  # fmt: skip
    if data.findings == []:
        blocks.append(("p", "none"))
    blocks.append(("h", "Overrides (findings accepted with a written reason)"))
    for o in data.overrides:
        where = "" if o.get("station") is None else f" at {o['station']:g} {unit}"
        device = f"  (device {o['device']})" if o.get("device") else ""
        kind = str(o.get("kind", "")).replace("_", " ")
        blocks.append(("p", f"{kind}{where}: {o.get('reason', '')}{device}"))
    if not data.overrides:
        blocks.append(("p", "none"))
    long_notes = [s for s in listed if len(s.get("note") or "") > tools.NOTE_CHARS]
    if long_notes:
        blocks.append(("h", "Station notes in full (shortened in the table)"))
        blocks += [("p", f"{s['station']:.3f} {unit}: {s['note']}") for s in long_notes]
    return blocks

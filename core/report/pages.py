"""Drawing of the office report pages (matplotlib, Agg; no pyplot state, no display).

Called by :func:`stakeline.report.write_report`; every page is an A4 portrait figure with the cautions
in its footer, and every plot and table names its units.
"""

from __future__ import annotations

import io
import textwrap
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.backends.backend_pdf import PdfPages
from matplotlib.figure import Figure
from stakeline.files.exports import signed_by
from stakeline.report.plots import (  # noqa: F401  (write_*: their old home)
    FLAG_COLOUR,
    FOOTER,
    overlay_plot,
    section_plot,
    write_overlay_plot,
    write_rating_plot,
)
from stakeline.report.prepare import CAUTIONS, ReportData
from stakeline.survey.figures import FIGURE_TABLE, figure_label, figure_unit
from stakeline.survey.rating import RATING_COLUMNS
from stakeline.survey.roughness import SOURCE
from stakeline.survey.units import unit_of

A4 = (8.27, 11.69)
RATING_ROWS = 28
METHOD_WORDS = {
    "linear": "first-order propagation with exact sensitivities (JCGM 100:2008)",
    "monte-carlo": "Monte Carlo with a fixed seed",
}


def draw_pages(data: ReportData) -> list[Figure]:
    """All pages of the report, in order."""
    from stakeline.report.gauging_pages import gauging_pages  # they draw with this module's tools
    from stakeline.report.station_pages import station_pages

    pages = [_summary_page(data), _rating_page(data), *gauging_pages(data)]
    if data.comparison is not None:
        pages.append(_comparison_page(data))
    pages += station_pages(data)
    for number, fig in enumerate(pages, start=1):
        fig.text(0.5, 0.018, FOOTER, ha="center", fontsize=7, style="italic")
        fig.text(0.95, 0.018, f"page {number} of {len(pages)}", ha="right", fontsize=7)
        fig.text(0.05, 0.018, data.visit.get("date", ""), ha="left", fontsize=7)
    return pages


def save(figures: list[Figure], path: Path, fmt: str) -> None:
    """Write ``figures`` as a multi-page PDF, or as one PNG with the pages stacked."""
    if fmt == "pdf":
        with PdfPages(path, metadata={"Title": "Stakeline section report"}) as pdf:
            for fig in figures:
                pdf.savefig(fig)
        return
    images = []
    for fig in figures:
        canvas = FigureCanvasAgg(fig)
        canvas.draw()
        images.append(np.asarray(canvas.buffer_rgba())[..., :3])
    from matplotlib.image import imsave

    buffer = io.BytesIO()
    imsave(buffer, np.concatenate(images, axis=0), format="png")
    Path(path).write_bytes(buffer.getvalue())


def _page() -> Figure:
    fig = Figure(figsize=A4)
    FigureCanvasAgg(fig)
    return fig


def _u(name: str, unit: str) -> str:
    return figure_unit(name, unit)


def _header(fig: Figure, data: ReportData, subtitle: str) -> None:
    v = data.visit
    fig.text(0.05, 0.965, data.title, fontsize=14, weight="bold")
    crew = ", ".join(v.get("crew") or []) or "not recorded"
    line = f"{subtitle}   ·   visit {v.get('date', '?')}   ·   crew {crew}   ·   lengths in {data.unit}"
    fig.text(0.05, 0.945, line, fontsize=8.5)


def _table(fig: Figure, top: float, header, rows, widths=None, size: float = 7.5) -> float:
    """Draw a table whose top edge is at figure height ``top``; returns the height below it."""
    if not rows:
        fig.text(0.05, top - 0.015, "none", fontsize=size)
        return top - 0.025
    height = (len(rows) + 1) * size * 2.1 / (A4[1] * 72)
    ax = fig.add_axes((0.05, top - height, 0.9, height))
    ax.axis("off")
    table = ax.table(
        cellText=rows, colLabels=header, colWidths=widths, bbox=(0, 0, 1, 1), cellLoc="left"
    )
    table.auto_set_font_size(False)
    table.set_fontsize(size)
    for (r, _), cell in table.get_celld().items():
        cell.set_linewidth(0.3)
        cell.PAD = 0.03
        if r == 0:
            cell.set_facecolor("#e8e8e8")
            cell.set_text_props(weight="bold")
    return top - height - 0.012


def _paragraph(
    fig: Figure, top: float, text: str, size: float = 7.5, width: int = 150, **kw
) -> float:
    """Wrapped text from figure height ``top`` down; returns the height below it."""
    lines = [line for part in text.split("\n") for line in (textwrap.wrap(part, width) or [""])]
    drawn = fig.text(0.05, top, "\n".join(lines), fontsize=size, va="top", **kw)
    return top - _height(fig, drawn) - 0.01


def _height(fig: Figure, drawn) -> float:
    """The height of a drawn text as a fraction of the figure's (measured, not estimated)."""
    return drawn.get_window_extent(fig.canvas.get_renderer()).height / fig.bbox.height


def _figure_rows(data: ReportData) -> list[list[str]]:
    unit, rows = data.unit, []
    if data.stage is None:
        return rows
    rows.append([figure_label("stage"), f"{data.stage:.3f}", "", unit])
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius"):
        band = data.bands.get(name)
        if band is not None:
            rows.append(
                [_label(name), f"{band.value:.3f}", f"± {band.plus_minus:.3f}", _u(name, unit)]
            )
    flow = data.flow
    if flow is None:
        return rows
    for name in ("hydraulic_depth", "max_depth", "discharge", "velocity", "conveyance", "froude",
                 "shear_stress", "stream_power"):  # fmt: skip
        band = data.bands.get(name) if name == "discharge" else None
        spread = f"± {band.plus_minus:.3f}" if band else ""
        rows.append([_label(name), f"{flow[name]:.3f}", spread, _u(name, unit) or "—"])
    return rows


def _label(name: str) -> str:
    """A figure's label with its formula, from the one table of figure names."""
    formula = FIGURE_TABLE[name].formula
    return f"{figure_label(name)} {formula}" if formula and len(formula) > 1 else figure_label(name)


def _roughness_text(data: ReportData) -> str:
    if data.flow is None:
        return (
            "Discharge not computed: missing " + "; ".join(data.missing) + "."
            if data.missing
            else ""
        )
    n = (
        data.n_values[0]
        if len(data.n_values) == 1
        else ", ".join(f"{v:.3f}" for v in data.n_values)
    )
    lines = [
        f"Manning's n = {n}   ·   energy slope S = {data.slope:g}   ·   k = {unit_of(data.unit).manning_k:g}"
    ]
    if data.row is not None:
        lines.append(
            f"Roughness row: {data.row.description} (n {data.row.minimum:.3f} / {data.row.normal:.3f} / {data.row.maximum:.3f}; {SOURCE})"
        )
    if data.n_range is not None:
        qu = _u("discharge", data.unit)
        r = data.n_range
        lines.append(
            f"Manning's n dominates the discharge uncertainty: Q = {r['minimum']:.3f} {qu} at the low n, "
            f"{r['normal']:.3f} {qu} at the normal n, {r['maximum']:.3f} {qu} at the high n "
            f"(readings alone: ± {data.bands['discharge'].plus_minus:.3f} {qu})."
        )
    else:
        lines.append(
            "n was typed, not chosen from the table: Manning's n still dominates the discharge uncertainty; choose a roughness row to see Q at its low and high n."
        )
    return "\n".join(lines)


def _heading(fig: Figure, top: float, text: str) -> float:
    fig.text(0.05, top, text, fontsize=9, weight="bold", va="top")
    return top - 0.022


def _summary_page(data: ReportData) -> Figure:
    fig = _page()
    _header(fig, data, f"section {data.visit.get('section', '')}")
    levels = ", ".join(
        f"{w['elevation']:.3f} ({w.get('time') or 'no time'})" for w in data.water_levels
    )
    info = f"Water levels read ({data.unit}): {levels or 'none read'}"
    if data.stage is not None:
        info += f"; figures at {data.stage:.3f}, {data.stage_source or 'the water level given'}"
    for note in data.notes:
        info += f"\n{note}"
    if data.visit.get("notes"):
        info += f"\nNotes: {data.visit['notes']}"
    top = 0.925
    if "signer" in data.visit:  # the command line names who vouches for the records
        custody = "Chain of custody: " + signed_by(data.visit["signer"], data.visit)
        fig.text(0.05, 0.931, custody, fontsize=7.5, style="italic")
        top = 0.915
    _paragraph(fig, top, info, 8)
    section_plot(fig.add_axes((0.1, 0.57, 0.85, 0.3)), data)
    p = data.precision
    top = _heading(fig, 0.525, "Figures at the water level")
    top = _paragraph(
        fig,
        top,
        f"± is the expanded uncertainty (k = 2, about 95 %) from the readings alone: reading "
        f"± {p.reading:g} {data.unit}, station ± {p.station:g} {data.unit}, "
        + METHOD_WORDS.get(data.method, data.method)
        + ".",
        7.2,
    )
    top = _table(
        fig,
        top,
        ["figure", "value", "± (readings)", "unit"],
        _figure_rows(data),
        [0.4, 0.2, 0.2, 0.2],
    )
    top = _paragraph(fig, top, _roughness_text(data), 7.2)
    top = _heading(fig, top - 0.005, "Cautions")
    _paragraph(fig, top, "\n".join(f"• {c}" for c in CAUTIONS), 7.2)
    return fig


def _rating_rows(data: ReportData) -> tuple[list[str], list[list[str]]]:
    table = data.rating
    names = [n for n in RATING_COLUMNS if n in table]
    header = [f"{n.replace('_', ' ')} ({_u(n, data.unit)})" for n in names]
    count = len(table["stage"])
    pick = np.unique(np.linspace(0, count - 1, min(count, RATING_ROWS)).round().astype(int))
    return header, [[f"{float(table[n][i]):.3f}" for n in names] for i in pick]


def _rating_page(data: ReportData) -> Figure:
    fig = _page()
    _header(fig, data, "rating table and bankfull summary")
    ax = fig.add_axes((0.12, 0.68, 0.8, 0.23))
    table, has_q = data.rating, "discharge" in data.rating
    key = "discharge" if has_q else "area"
    ax.plot(table[key], table["stage"], "-", color="#1f618d")
    ax.set_xlabel(f"{'discharge' if has_q else 'wetted area'} ({_u(key, data.unit)})")
    ax.set_ylabel(f"water level ({data.unit})")
    ax.grid(alpha=0.3)
    if data.stage is not None and data.flow is not None:
        ax.plot(
            [data.flow["discharge"]],
            [data.stage],
            "o",
            color=FLAG_COLOUR,
            label="at the water level read",
        )
        ax.legend(fontsize=7)
    top = _heading(fig, 0.63, "Rating table (uniform flow)" if has_q else "Section table")
    if not has_q:
        top = _paragraph(
            fig, top, "Discharge not computed: missing " + "; ".join(data.missing) + "."
        )
    header, rows = _rating_rows(data)
    top = _table(fig, top, header, rows, size=6.8)
    _bankfull_and_parts(fig, data, top)
    return fig


def _bankfull_and_parts(fig: Figure, data: ReportData, top: float) -> None:
    unit, b = data.unit, data.bankfull
    top = _heading(fig, top, "Bankfull summary")
    if b is None:
        text = "No bank top coded on both sides of the deepest point; give --bankfull."
    else:
        text = (
            f"At {b['stage']:.3f} {unit}: width {b['width']:.3f} {unit}, mean depth "
            f"{b['mean_depth']:.3f} {unit}, maximum depth {b['max_depth']:.3f} {unit}, width/depth "
            f"ratio {b['width_depth_ratio']:.1f}, area {b['area']:.3f} {_u('area', unit)}."
        )
    top = _paragraph(fig, top, text)
    if data.subsections:
        top = _heading(
            fig, top, "Divided-channel method at the water level (split at the bank tops)"
        )
        rows = [
            [
                p["name"],
                f"{p['n']:.3f}",
                f"{p['area']:.3f}",
                f"{p['wetted_perimeter']:.3f}",
                f"{p['conveyance']:.3f}",
            ]
            for p in data.subsections
        ]
        header = ["subsection", "n", f"area ({_u('area', unit)})", f"wetted perimeter ({unit})",
                  f"conveyance ({_u('conveyance', unit)})"]  # fmt: skip
        _table(fig, top, header, rows, size=7)


def _comparison_page(data: ReportData) -> Figure:
    fig = _page()
    before = data.previous["visit"].get("date", "before")
    _header(fig, data, f"change since the visit of {before}")
    overlay_plot(
        fig.add_axes((0.1, 0.55, 0.85, 0.36)),
        data.previous["stations"],
        data.stations,
        data.unit,
        (before, data.visit.get("date", "after")),
    )
    _table(fig, 0.49, ["change", "value", "unit"], _comparison_rows(data), [0.55, 0.25, 0.2])
    return fig


def _comparison_rows(data: ReportData) -> list[list[str]]:
    c, unit, area = data.comparison, data.unit, _u("area", data.unit)
    rows = [
        ["scour (bed lowered), area", f"{c['scour_area']:.3f}", area],
        ["fill (bed raised), area", f"{c['fill_area']:.3f}", area],
        ["net change (fill − scour)", f"{c['net_change']:+.3f}", area],
        ["compared over stations", f"{c['start']:g} to {c['end']:g}", unit],
        [
            "deepest point before: station, elevation",
            f"{c['deepest_before'][0]:g}, {c['deepest_before'][1]:.3f}",
            unit,
        ],
        [
            "deepest point now: station, elevation",
            f"{c['deepest_after'][0]:g}, {c['deepest_after'][1]:.3f}",
            unit,
        ],
        ["deepest point moved (+ = away from origin)", f"{c['deepest_shift']:+.3f}", unit],
        ["deepest point lowered by", f"{c['deepest_drop']:+.3f}", unit],
    ]
    if "stage" in c:
        rows += [
            [
                f"wetted area at {c['stage']:.3f}: before → now",
                f"{c['area_before']:.3f} → {c['area_after']:.3f}",
                area,
            ],
            ["change in wetted area", f"{c['area_change']:+.3f}", area],
            [
                f"top width at {c['stage']:.3f}: before → now",
                f"{c['top_width_before']:.3f} → {c['top_width_after']:.3f}",
                unit,
            ],
            ["change in top width", f"{c['top_width_change']:+.3f}", unit],
        ]
    return rows


FLOW_BOTTOM = 0.06
"""Figure height below which flowing text goes on to a new page (the footer is under it)."""

FLOW_CHARS = 135
"""Characters per line of flowing text at 7.2 pt across the page's text width."""


def finding_text(severity: str, kind: str, station, message: str, suggestion: str, unit: str):
    """One finding as one line of prose: severity, kind and station first, then what to do."""
    where = "" if station is None else f" at {station:g} {unit}"
    to_do = f"  To do: {suggestion}" if suggestion else ""
    return f"{str(severity).upper()} · {str(kind).replace('_', ' ')}{where}: {message}{to_do}"


def _flow(
    data: ReportData, pages: list[Figure], top: float, blocks, subtitle: str, bottom=FLOW_BOTTOM
) -> float:
    """Draw ``blocks`` (headings and wrapped paragraphs) from ``top`` on the last of ``pages``
    down to ``bottom`` (figure height; FLOW_BOTTOM on the pages it adds as they fill); returns
    the height below the last block."""
    size, fig = 7.2, pages[-1]
    line = _line_height(fig, size)
    lines_here: list[str] = []  # the paragraphs on this page since the last heading: one text
    block_top = top

    def draw_block() -> None:
        if lines_here:
            fig.text(0.05, block_top, "\n".join(lines_here), fontsize=size, va="top")
            lines_here.clear()

    for k, (kind, text) in enumerate(blocks):
        lines = (textwrap.wrap(text, FLOW_CHARS) or [""]) if kind == "p" else [text]
        need = (len(lines) + 1) * line
        if kind == "h":  # a heading keeps its first paragraph with it
            follow = blocks[k + 1][1] if k + 1 < len(blocks) else ""
            need = 0.027 + (len(textwrap.wrap(follow, FLOW_CHARS)) or 1) * line
        if top - need < bottom:
            draw_block()
            bottom = FLOW_BOTTOM
            fig = _page()
            _header(fig, data, f"{subtitle} (continued)")
            pages.append(fig)
            top = 0.91
        if kind == "h":
            draw_block()
            top = _heading(fig, top - 0.005, text)
            continue
        if lines_here:
            lines_here.append("")  # a blank line between paragraphs
        else:
            block_top = top
        lines_here.extend(lines)
        top = block_top - len(lines_here) * line
    draw_block()
    return top - 0.006


def _line_height(fig: Figure, size: float) -> float:
    """The height one more line adds to a text of ``size`` points (figure fraction), measured."""
    one = fig.text(0, 0, "Xg", fontsize=size)
    eleven = fig.text(0, 0, "\n".join(["Xg"] * 11), fontsize=size)
    height = (_height(fig, eleven) - _height(fig, one)) / 10
    one.remove()
    eleven.remove()
    return height


NOTE_CHARS = 70
"""A note longer than this is shortened in the station table and given in full below it."""


def _clip(text: str, width: int) -> str:
    return text if len(text) <= width else text[: width - 1] + "…"

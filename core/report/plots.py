"""Plots of the office report (matplotlib, Agg; no pyplot state, no display): the section with its
water, the overlay of two visits' ground lines, and single-plot files for the command line.

Every plot names the units of both axes.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from stakeline.survey.compare import profile_panels
from stakeline.survey.figures import figure_unit

FLAG_COLOUR = "#c0392b"
WATER_COLOUR = "#5dade2"
FOOTER = (
    "Estimates for field and office checking, not a design. Designs and safety decisions need "
    "licensed review under local codes."
)


def _u(name: str, unit: str) -> str:
    return figure_unit(name, unit)


def section_plot(ax, data) -> None:
    x = np.array([s["station"] for s in data.stations])
    z = np.array([s["elevation"] for s in data.stations])
    if data.previous is not None:
        px = [s["station"] for s in data.previous["stations"]]
        pz = [s["elevation"] for s in data.previous["stations"]]
        ax.plot(
            px,
            pz,
            "--",
            color="0.55",
            lw=1,
            label=f"ground {data.previous['visit'].get('date', 'before')}",
        )
    if data.stage is not None:
        ax.fill_between(
            x,
            z,
            data.stage,
            where=z < data.stage,
            interpolate=True,
            color=WATER_COLOUR,
            alpha=0.5,
            lw=0,
        )
        ax.axhline(
            data.stage, color="#1f618d", lw=1, label=f"water level {data.stage:.3f} {data.unit}"
        )
    ax.plot(x, z, "-o", color="#4a3520", ms=3, lw=1.2, label="ground (this visit)")
    flagged = np.isin(x, data.flagged)
    if flagged.any():
        ax.plot(x[flagged], z[flagged], "X", color=FLAG_COLOUR, ms=9, label="flagged station")
    if data.bankfull is not None:
        ax.axhline(
            data.bankfull["stage"],
            color="#a04000",
            ls=":",
            lw=1.2,
            label=f"bankfull {data.bankfull['stage']:.3f} {data.unit}",
        )
    for k, s in enumerate(data.splits):
        ax.axvline(s, color="0.3", ls="-.", lw=0.9, label="subsection split" if k == 0 else None)
    if data.subsections:
        edges = [x[0], *data.splits, x[-1]]
        for part, a, b in zip(data.subsections, edges, edges[1:], strict=False):
            if b - a < 0.12 * (x[-1] - x[0]):
                continue  # too narrow to label; the table on page 2 names every subsection
            ax.text(
                (a + b) / 2,
                0.97,
                f"{part['name']}\nn = {part['n']:.3f}",
                transform=ax.get_xaxis_transform(),
                ha="center",
                va="top",
                fontsize=7,
            )
    for s in data.stations:
        if s.get("code"):
            ax.annotate(
                s["code"].replace("_", " "),
                (s["station"], s["elevation"]),
                xytext=(0, -11),
                textcoords="offset points",
                fontsize=5.5,
                ha="center",
                color="0.35",
            )
    ax.set_xlabel(f"station from the {data.visit.get('origin') or 'left'} stake ({data.unit})")
    ax.set_ylabel(f"elevation ({data.unit})")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="best")


def overlay_plot(ax, before: list[dict], after: list[dict], unit: str, labels=("before", "after")):
    """Both ground lines on ``ax`` with scour shaded red and fill blue; axes labelled in ``unit``."""
    bx, bz = [s["station"] for s in before], [s["elevation"] for s in before]
    nx, nz = [s["station"] for s in after], [s["elevation"] for s in after]
    left, right, b0, b1, a0, a1 = profile_panels(bx, bz, nx, nz)
    xs = np.column_stack([left, right]).ravel()
    base, now = np.column_stack([b0, b1]).ravel(), np.column_stack([a0, a1]).ravel()
    for where, colour, label in (
        (now < base, FLAG_COLOUR, "scour"),
        (now > base, "#2e86c1", "fill"),
    ):
        ax.fill_between(
            xs,
            base,
            now,
            where=where,
            interpolate=True,
            color=colour,
            alpha=0.45,
            lw=0,
            label=label,
        )
    ax.plot(bx, bz, "--", color="0.45", lw=1, label=f"ground {labels[0]}")
    ax.plot(nx, nz, "-", color="#4a3520", lw=1.2, label=f"ground {labels[1]}")
    ax.set_xlabel(f"station ({unit})")
    ax.set_ylabel(f"elevation ({unit})")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7)


def _single_plot(path, title: str, draw) -> Path:
    from stakeline.errors import SurveyError

    path = Path(path)
    if path.suffix.lower() not in (".png", ".pdf"):
        raise SurveyError(f"{path}: a plot is written as .png or .pdf")
    fig = Figure(figsize=(7, 5))
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.12, 0.12, 0.83, 0.76))
    draw(ax)
    ax.set_title(title, fontsize=10)
    fig.text(0.5, 0.015, FOOTER, ha="center", fontsize=6.5, style="italic")
    try:
        fig.savefig(path)
    except OSError as exc:
        raise SurveyError(f"{path}: cannot be written ({exc.strerror or exc})") from None
    return path


def write_rating_plot(table: dict, unit: str, title: str, path) -> Path:
    """Plot a rating curve (water level against discharge, with units) to ``.png`` or ``.pdf``."""

    def draw(ax):
        ax.plot(table["discharge"], table["stage"], "-", color="#1f618d")
        ax.set_xlabel(f"discharge ({_u('discharge', unit)})")
        ax.set_ylabel(f"water level ({unit})")
        ax.grid(alpha=0.3)

    return _single_plot(path, title, draw)


def write_overlay_plot(before: list[dict], after: list[dict], unit: str, labels, path) -> Path:
    """Plot two visits' ground lines with scour and fill shaded to ``.png`` or ``.pdf``."""
    title = f"change from {labels[0]} to {labels[1]}"
    return _single_plot(path, title, lambda ax: overlay_plot(ax, before, after, unit, labels))

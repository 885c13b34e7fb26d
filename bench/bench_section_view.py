"""Benchmark: Python cost of one live section-view update at 500 stations.

One update is what happens on every keystroke or drag step on the section screen: the wetted
figures at the new water level (``Section.at`` through the service) plus redrawing the water
fill and the level line with canvas instructions.  A full redraw (after a zoom or pan) is timed
too.  The baseline, measured in the same run, is the bare cost of handing 500 points to one
canvas ``Line``.  Goal: one update <= 2 ms.  Frames per second are not measured: the software
renderer on these machines is fill-bound, so the Python update is what the app controls.

Run: ``.venv/bin/python bench/bench_section_view.py``
"""

from __future__ import annotations

import os
import tempfile

from timing import best  # bench/timing.py

STATIONS = 500
GOAL_MS = 2.0


def _headless() -> None:
    home = tempfile.mkdtemp(prefix="stakeline-bench-")
    for name, value in {
        "SDL_VIDEODRIVER": "offscreen",
        "SDL_AUDIODRIVER": "dummy",
        "KIVY_NO_ARGS": "1",
        "KIVY_NO_CONSOLELOG": "1",
        "KIVY_NO_FILELOG": "1",
        "KIVY_HOME": home,
        "KIVY_METRICS_DENSITY": "1",
        "KIVY_DPI": "96",
    }.items():
        os.environ.setdefault(name, value)


def _timed(function, repeats: int = 7, number: int = 200) -> float:
    """Best-of-``repeats`` mean time of one call, in milliseconds."""
    return best(function, repeats, number) * 1e3


def main() -> int:
    """Print the update costs and their ratios to the bare Line baseline."""
    _headless()
    import numpy as np
    from kivy.core.window import Window
    from kivy.graphics import Color, Line
    from stakeline.app.service import FieldService
    from stakeline.app.widgets.section_view import SectionView
    from stakeline.survey.geometry import Section

    Window.size = (1280, 800)
    rng = np.random.default_rng(7)
    x = np.linspace(0.0, 25.0, STATIONS)
    z = 100.0 - 2.0 * np.sin(np.pi * x / 25.0) ** 2 + rng.normal(0.0, 0.01, STATIONS)
    section = Section(x, z)
    view = SectionView(size=(1200, 700))
    view.set_section(x, z, flagged=x[::50], current=x[100])
    levels = np.linspace(98.5, 99.6, 97)
    state = {"i": 0}

    def one_update() -> None:
        level = float(levels[state["i"] % levels.size])
        state["i"] += 1
        FieldService.figures(section, level)
        view.water_level = level  # its observer redraws the water mesh and level line

    def full_redraw() -> None:
        view.pan(1.0, 0.0)

    line_points = np.column_stack([x * 40.0, z * 5.0]).ravel()
    with view.canvas:
        Color(0, 0, 0, 1)
        bare = Line(points=[0, 0, 1, 1])

    def baseline() -> None:
        bare.points = line_points.tolist()

    base = _timed(baseline)
    update = _timed(one_update)
    redraw = _timed(full_redraw, number=50)
    print(f"section view, {STATIONS} stations (best of 7, Python time per call)")
    print(f"  baseline: bare canvas Line of {STATIONS} points  {base:8.3f} ms")
    print(
        f"  one update (figures + water + level line)  {update:8.3f} ms  "
        f"= {update / base:5.1f}x baseline   goal <= {GOAL_MS} ms: "
        f"{'met' if update <= GOAL_MS else 'NOT met'}"
    )
    print(
        f"  full redraw (zoom/pan: ground, points, ticks) {redraw:6.3f} ms  = {redraw / base:5.1f}x baseline"
    )
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

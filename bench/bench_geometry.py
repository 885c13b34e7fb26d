"""Benchmark of the geometry core: ratios against baselines measured in the same run.

    .venv/bin/python bench/bench_geometry.py

Prints, as speed-up ratios (baseline time / Stakeline time, higher is better):
1. a 2,000-station section at 1,000 stages, ``Section.table`` (including building the Section)
   against per-stage polygon clipping with shapely (goal >= 2,000x);
2. the same against a plain vectorised pass over every segment for every stage (goal >= 20x);
3. a single ``Section.at`` on a 200-station section against one shapely clip (goal >= 10x).
Goals are checked and reported; the exit code is 1 if any is missed.

Needs shapely, the independent reference: it is in the test extra (``pip install -e '.[test]'``),
not a dependency of Stakeline itself.
"""

from __future__ import annotations

import numpy as np
from shapely.geometry import LineString, Polygon, box
from stakeline.survey.geometry import Section
from timing import best  # bench/timing.py


def natural_section(n: int, seed: int = 7) -> tuple[np.ndarray, np.ndarray]:
    """A rough natural-looking channel with banks higher than the bed (metres)."""
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(0, 40, n))
    x[0], x[-1] = 0.0, 40.0
    z = 100 + 0.08 * (x - 20) ** 2 / 4 + 0.05 * rng.standard_normal(n)
    z[0] = z[-1] = z.max() + 0.5
    return x, z


def clip_figures(x, z, stage):
    """Area, wetted perimeter and top width by clipping with shapely (the baseline)."""
    top = float(z.max()) + 1
    ground = Polygon(list(zip(x, z, strict=True)) + [(x[-1], top), (x[0], top)])
    below = box(x[0] - 1, z.min() - 1, x[-1] + 1, stage)
    water = ground.intersection(below)
    perimeter = LineString(list(zip(x, z, strict=True))).intersection(below).length
    width = sum(p.bounds[2] - p.bounds[0] for p in getattr(water, "geoms", [water]))
    return water.area, perimeter, width


def all_segments(x, z, stages):
    """Area, perimeter and top width for every stage by a vectorised pass over every segment."""
    h = np.asarray(stages)[:, None]
    z0, z1, dx = z[:-1], z[1:], np.diff(x)
    low, high = np.minimum(z0, z1), np.maximum(z0, z1)
    rise = high - low
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(rise > 0, np.clip((h - low) / rise, 0, 1), (h > low).astype(float))
    width = dx * frac
    depth_low, depth_high = np.maximum(h - low, 0), np.maximum(h - high, 0)
    area = np.where(frac >= 1, dx * (depth_low + depth_high) / 2, width * depth_low / 2)
    length = np.hypot(dx, rise) * frac
    return area.sum(1), length.sum(1), width.sum(1)


def main() -> int:
    x, z = natural_section(2000)
    stages = np.linspace(z.min(), min(z[0], z[-1]), 1000)

    fast = best(lambda: Section(x, z).table(stages), repeat=7)
    sample = stages[::50]
    clip = (
        best(lambda: [clip_figures(x, z, s) for s in sample], repeat=3) * len(stages) / len(sample)
    )
    plain = best(lambda: all_segments(x, z, stages), repeat=3)

    # Correctness of the comparison: all three agree.
    table = Section(x, z).table(stages)
    area, perimeter, width = all_segments(x, z, stages)
    np.testing.assert_allclose(table["area"], area, rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(table["wetted_perimeter"], perimeter, rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(table["top_width"], width, rtol=1e-9, atol=1e-9)
    ref = clip_figures(x, z, stages[500])
    np.testing.assert_allclose(ref[0], table["area"][500], rtol=1e-9)

    xs, zs = natural_section(200, seed=3)
    small = Section(xs, zs)
    stage = float(zs.min() + 0.6 * (min(zs[0], zs[-1]) - zs.min()))
    one_at = best(lambda: small.at(stage), repeat=7, number=2000)
    one_clip = best(lambda: clip_figures(xs, zs, stage), repeat=7, number=200)
    np.testing.assert_allclose(small.at(stage).area, clip_figures(xs, zs, stage)[0], rtol=1e-9)

    rows = [
        ("2,000 stations x 1,000 stages: table() vs shapely clipping", clip / fast, 2000),
        ("2,000 stations x 1,000 stages: table() vs plain all-segment pass", plain / fast, 20),
        ("200 stations, one at() vs one shapely clip", one_clip / one_at, 10),
    ]
    print(
        f"table(): {fast * 1e3:.2f} ms (incl. building the Section); clipping: {clip * 1e3:.0f} ms;"
    )
    print(f"  all-segment pass: {plain * 1e3:.1f} ms; at(): {one_at * 1e6:.1f} us;")
    print(f"  one clip: {one_clip * 1e6:.1f} us")
    missed = 0
    for label, ratio, goal in rows:
        ok = ratio >= goal
        missed += not ok
        print(f"{label}: {ratio:,.0f}x (goal >= {goal:,}x) {'ok' if ok else 'MISSED'}")
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

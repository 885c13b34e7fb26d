"""Benchmark of the gauging core: cheap enough to run after every entered velocity.

    .venv/bin/python bench/bench_gauging.py

A 300-vertical gauging (the verticals of a 300-point section at one water level).  Prints, with
the times, ratios against baselines measured in the same run:
1. cost of ``velocity_area`` (midsection) in units of one ``Section.at`` of the same section
   (goal <= 40: the live discharge costs no more than a few dozen area look-ups);
2. the same for the whole live update, ``analyse_gauging`` (discharge, uncertainty, findings)
   (goal <= 250);
3. ``velocity_area`` (checks, edges, every panel and share) against a bare Python loop giving the
   total alone (goal: at least 0.5x its speed; at a few hundred verticals numpy's per-call cost
   is most of both).
Goals are checked and reported; the exit code is 1 if any is missed.
"""

from __future__ import annotations

import numpy as np
from stakeline.gauging import analyse_gauging, velocity_area, verticals_from_section
from stakeline.survey.geometry import Section
from timing import best  # bench/timing.py


def channel(n: int, seed: int = 11) -> tuple[Section, float]:
    """A wadeable natural-looking channel of ``n`` points (1 m deep) and a level 0.6 of that."""
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(0, 40, n))
    x[0], x[-1] = 0.0, 40.0
    z = 100 + 0.0025 * (x - 20) ** 2 + 0.02 * rng.standard_normal(n)
    z[0] = z[-1] = z.max() + 0.5
    stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
    return Section(x, z), stage


def midsection_loop(b, d, v) -> float:
    """The midsection sum vertical by vertical in plain Python (the baseline)."""
    total = 0.0
    last = len(b) - 1
    for i in range(len(b)):
        left = b[i - 1] if i > 0 else b[i]
        right = b[i + 1] if i < last else b[i]
        total += v[i] * d[i] * (right - left) / 2
    return total


def main() -> int:
    section, stage = channel(300)
    x, d = verticals_from_section(section, stage)
    v = 0.6 * (d / d.max()) ** (2 / 3)
    bl, dl, vl = x.tolist(), d.tolist(), v.tolist()
    assert abs(velocity_area(x, d, v).discharge - midsection_loop(bl, dl, vl)) < 1e-9
    found = analyse_gauging(x, d, v).findings

    at = best(lambda: section.at(stage), repeat=7, number=2000)
    area = best(lambda: velocity_area(x, d, v), repeat=7, number=500)
    mean = best(lambda: velocity_area(x, d, v, "meansection"), repeat=7, number=500)
    whole = best(lambda: analyse_gauging(x, d, v), repeat=7, number=100)
    loop = best(lambda: midsection_loop(bl, dl, vl), repeat=7, number=500)

    print(f"{x.size} verticals: Section.at {at * 1e6:.1f} us; velocity_area {area * 1e6:.1f} us")
    print(f"  meansection {mean * 1e6:.1f} us; analyse_gauging {whole * 1e6:.1f} us;")
    print(f"  plain Python midsection loop {loop * 1e6:.1f} us; {len(found)} findings")
    rows = [
        ("velocity_area, in Section.at calls", area / at, 40, "<="),
        ("analyse_gauging, in Section.at calls", whole / at, 250, "<="),
        ("velocity_area vs a bare Python loop (speed ratio)", loop / area, 0.5, ">="),
    ]
    missed = 0
    for label, ratio, goal, sense in rows:
        ok = ratio <= goal if sense == "<=" else ratio >= goal
        missed += not ok
        print(f"{label}: {ratio:,.1f}x (goal {sense} {goal}x) {'ok' if ok else 'MISSED'}")
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

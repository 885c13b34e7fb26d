"""Benchmark of the live velocity step: what the tablet does after each entered velocity.

    .venv/bin/python bench/bench_gauging_visit.py

On the demo riffle's high-flow gauging (30 verticals, a file store with the durable settings
the app uses).  Prints, with the times, ratios against baselines measured in the same run:
1. the gauging of the visit from its records (``visit_gauging`` without n: verticals from the
   section, velocities through the meter's rating, discharge, IVE, findings) in units of
   ``analyse_gauging`` on the same ready-made verticals (goal <= 15: reading the records costs
   little on top of the discharge itself);
2. the whole live state the screen shows (``gauging_view``) in the same units (goal <= 20);
3. saving one point and getting the new state back (``save_velocity_point``: reading the
   records, a durable commit and the state) in units of one station reading saved
   (``save_station``, a durable commit) plus one ``gauging_view`` (goal <= 4: the round trip
   costs little more than its two unavoidable parts; fsync speed varies with the disk, so the
   commit is in the baseline).
Goals are checked and reported; the exit code is 1 if any is missed.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
from stakeline.app.service import FieldService
from stakeline.app.service.gauging import GaugingService, gauging_inputs, gauging_view
from stakeline.gauging import analyse_gauging, visit_gauging
from stakeline.store import Store
from stakeline.survey.geometry import Section
from timing import best  # bench/timing.py


class Service(FieldService, GaugingService):
    """The field service with the gauging mixin."""


def main() -> int:
    with tempfile.TemporaryDirectory() as folder:
        store = Store.open(Path(folder) / "bench.sqlite")
        store.load_demo()
        visit = next(v["uuid"] for v in store.visits() if v["date"] == "2026-10-20")
        service = Service(store)
        inputs = gauging_inputs(store, visit)
        section = Section(inputs["stations"], inputs["elevations"])
        found = visit_gauging(section, inputs["stage"], inputs["gauging"], calibrate=False)
        x = np.array([r["station"] for r in found.verticals])
        d = np.array([r["depth"] for r in found.verticals])
        v = np.nan_to_num(np.array([r["velocity"] or 0.0 for r in found.verticals]))

        core = best(lambda: analyse_gauging(x, d, v), repeat=7, number=50)
        records = best(lambda: visit_gauging(section, inputs["stage"], inputs["gauging"],
                                             calibrate=False), repeat=7, number=50)  # fmt: skip
        view = best(lambda: gauging_view(inputs), repeat=7, number=50)
        stations = iter(np.arange(20.0, 2000.0, 0.5))
        saving = best(lambda: store.save_station(visit, float(next(stations)), 1.0), 5, 5)
        counts = iter(range(10, 10_000))
        live = best(lambda: service.save_velocity_point(visit, 5.0, "v06", f"0.{next(counts)}",
                                                        method="one-point"), 5, 5)  # fmt: skip
        store.close()
    print(f"{x.size} verticals: analyse_gauging {core * 1e3:.2f} ms; visit_gauging "
          f"{records * 1e3:.2f} ms; gauging_view {view * 1e3:.2f} ms")  # fmt: skip
    print(f"  save_station {saving * 1e3:.2f} ms; save_velocity_point + state {live * 1e3:.2f} ms")
    rows = [
        ("visit_gauging, in analyse_gauging calls", records / core, 15),
        ("gauging_view, in analyse_gauging calls", view / core, 20),
        (
            "save_velocity_point + state, in (save_station + gauging_view)",
            live / (saving + view),
            4,
        ),
    ]
    missed = 0
    for label, ratio, goal in rows:
        ok = ratio <= goal
        missed += not ok
        print(f"{label}: {ratio:,.1f}x (goal <= {goal}x) {'ok' if ok else 'MISSED'}")
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

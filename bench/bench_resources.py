"""Benchmark of the ± bands' time and memory on large sections (issue 11, bounded resources).

    .venv/bin/python bench/bench_resources.py

Each workload runs in its own Python process, so its peak memory (``ru_maxrss``) is its own.
Prints time and peak memory of:

1. the baseline measured in this run: the former Monte Carlo (all draws × stations at once) and
   the former linear method (dense (2m + 2n) × n sensitivities) on a 2,000-station section --
   the former code's size limit is far below 20,000 stations (10,000 took 22 s and 3.8 GB);
2. the same bands now (first-order with exact sensitivities, and chunked Monte Carlo) on the
   same section, as ratios against the baseline;
3. ``stakeline flow`` with its ± bands on a 20,000-station section file (goal: < 5 s, < 500 MB);
4. the office analysis of a 20,000-station visit as ``stakeline report`` runs it -- the field
   checks and :func:`stakeline.report.prepare_report` (goal: < 15 s);
5. the whole ``stakeline report`` command (store, checks, analysis, drawing, writing the PDF)
   on a 20,000-station visit in a store (goal: < 15 s);
6. a Monte Carlo band asked for explicitly on 20,000 stations: memory stays bounded (goal:
   < 500 MB; ``"auto"`` takes first-order propagation at that size).

Exit code 1 if a goal is missed.
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

SETUP = """
import json, resource, sys, time
import numpy as np

def ground(n, seed=7):
    rng = np.random.default_rng(seed)
    width = max(40.0, n / 100.0)
    x = np.sort(rng.uniform(0, width, n))
    x[0], x[-1] = 0.0, width
    z = 100 + 3.0 * ((x - width / 2) / (width / 2)) ** 2 + 0.02 * rng.standard_normal(n)
    z[0] = z[-1] = z.max() + 0.5
    return np.round(x, 4), np.round(z, 4)

def report(seconds):
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps({"seconds": seconds, "peak_mb": peak_mb}))
"""

OLD_BANDS = """
from stakeline.survey.geometry import Section, profile_figures
from stakeline.survey.uncertainty import Precision
x, z = ground(N)
section = Section(x, z)
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
p = Precision.default("m")
start = time.perf_counter()
# the former Monte Carlo: every draw of every station in memory at once
rng = np.random.default_rng(20260414)
unique, which = np.unique(x, return_inverse=True)
dx = rng.normal(0.0, p.station, (4000, unique.size))[:, which]
dz = rng.normal(0.0, p.reading, (4000, x.size))
fig = profile_figures(np.maximum.accumulate(x + dx, axis=1), z + dz, stage)
mc = {k: 2 * float(np.std(v, ddof=1)) for k, v in fig.items()}
del dx, dz, fig
# the former linear method: (2m + 2n) perturbed copies of n points, by central differences
hz, hx = 1e-6 * float(np.ptp(z)), 1e-6 * float(x[-1] - x[0])
eye_z, eye_x = np.eye(x.size), np.eye(unique.size)[:, which]
xs = np.concatenate([x + hx * eye_x, x - hx * eye_x, np.broadcast_to(x, (2 * x.size, x.size))])
zs = np.concatenate([np.broadcast_to(z, (2 * unique.size, x.size)), z + hz * eye_z, z - hz * eye_z])
fig = profile_figures(xs, zs, stage)
report(time.perf_counter() - start)
"""

NEW_BANDS = """
from stakeline.survey.geometry import Section
from stakeline.survey.uncertainty import Precision, geometry_bands, discharge_band
x, z = ground(N)
section = Section(x, z)
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
p = Precision.default("m")
start = time.perf_counter()
geometry_bands(section, stage, p, method="monte-carlo")
geometry_bands(section, stage, p, method="linear")
discharge_band(section, stage, 0.035, 0.002, "m", p, method="monte-carlo")
discharge_band(section, stage, 0.035, 0.002, "m", p, method="linear")
report(time.perf_counter() - start)
"""

FLOW_CLI = """
import csv
x, z = ground(N)
path = sys.argv[1]
with open(path, "w", newline="") as handle:
    out = csv.writer(handle)
    out.writerow(["station", "elevation"])
    out.writerows(zip(x.tolist(), z.tolist()))
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
import subprocess
start = time.perf_counter()
done = subprocess.run([sys.executable, "-m", "stakeline", "flow", path, "--stage", str(stage),
                       "--n", "0.035", "--slope", "0.002"], capture_output=True, text=True)
seconds = time.perf_counter() - start
assert done.returncode == 0 and "±" in done.stdout, done.stderr
peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
print(json.dumps({"seconds": seconds, "peak_mb": peak_mb}))
"""

MONTE_CARLO = """
from stakeline.survey.geometry import Section
from stakeline.survey.uncertainty import Precision, geometry_bands
x, z = ground(N)
section = Section(x, z)
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
start = time.perf_counter()
geometry_bands(section, stage, Precision.default("m"), method="monte-carlo")
report(time.perf_counter() - start)
"""

REPORT_ANALYSIS = """
from stakeline.report import ReportOptions, field_findings, prepare_report
x, z = ground(N)
line = float(z.max()) + 0.5
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
visit = {"site": "Bench", "section": "XS-20k", "date": "2026-05-01", "unit": "m",
         "method": "line", "line_left": line, "line_right": line, "line_check": line,
         "water_levels": [{"elevation": stage, "time": "2026-05-01T10:00"}]}
stations = [{"station": a, "reading": round(line - b, 4), "elevation": b, "code": "",
             "seq": i} for i, (a, b) in enumerate(zip(x.tolist(), z.tolist()))]
earlier = {"visit": dict(visit, date="2025-05-01"),
           "stations": [dict(s, elevation=s["elevation"] + 0.01) for s in stations]}
start = time.perf_counter()
findings = field_findings(visit, stations, stage)
data = prepare_report(visit, stations, ReportOptions(n=0.035, slope=0.002), findings, [], earlier)
assert data.flow is not None and data.comparison is not None
report(time.perf_counter() - start)
"""

REPORT_CLI = """
import subprocess
from stakeline.store import Store
x, z = ground(N)
line = float(z.max()) + 0.5
stage = float(z.min() + 0.6 * (min(z[0], z[-1]) - z.min()))
path = sys.argv[1]
with Store.open(path) as store:
    site = store.create_site("Bench")
    section = store.create_section(site["uuid"], "XS-20k")
    visit = store.start_visit(section["uuid"], "2026-05-01", line_left=line, line_right=line)
    with store.transaction():
        for a, b in zip(x.tolist(), z.tolist()):
            store.save_station(visit["uuid"], a, round(line - b, 6))
    store.add_water_level(visit["uuid"], stage)
start = time.perf_counter()
done = subprocess.run([sys.executable, "-m", "stakeline", "report", "--store", path, "--visit",
                       visit["uuid"], "--out", path + ".pdf", "--n", "0.035", "--slope", "0.002"],
                      capture_output=True, text=True)
seconds = time.perf_counter() - start
assert done.returncode == 0, done.stderr
peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
print(json.dumps({"seconds": seconds, "peak_mb": peak_mb}))
"""


def run(body: str, n: int, *args: str) -> dict:
    code = SETUP + f"\nN = {n}\n" + body
    done = subprocess.run(
        [sys.executable, "-c", code, *args], capture_output=True, text=True, cwd=ROOT
    )
    if done.returncode != 0:
        raise SystemExit(f"workload failed:\n{done.stderr}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> int:
    base = run(OLD_BANDS, 2000)
    now = run(NEW_BANDS, 2000)
    with tempfile.TemporaryDirectory() as folder:
        flow = run(FLOW_CLI, 20_000, str(Path(folder) / "xs.csv"))
        whole = run(REPORT_CLI, 20_000, str(Path(folder) / "big.sqlite"))
    analysis = run(REPORT_ANALYSIS, 20_000)
    carlo = run(MONTE_CARLO, 20_000)
    print(f"baseline, former bands, 2,000 stations: {base['seconds']:.2f} s, "
          f"{base['peak_mb']:.0f} MB peak")  # fmt: skip
    print(f"bands now (Monte Carlo and first-order, geometry and discharge), 2,000 stations: "
          f"{now['seconds']:.2f} s, {now['peak_mb']:.0f} MB peak -- "
          f"{base['seconds'] / now['seconds']:.1f}x faster, "
          f"{base['peak_mb'] / now['peak_mb']:.1f}x less memory")  # fmt: skip
    goals = [
        ("stakeline flow with ±, 20,000 stations: time (s)", flow["seconds"], 5.0),
        ("stakeline flow with ±, 20,000 stations: peak memory (MB)", flow["peak_mb"], 500.0),
        ("report analysis (checks + analysis), 20,000 stations: time (s)",
         analysis["seconds"], 15.0),
        ("stakeline report (whole command, PDF), 20,000 stations: time (s)",
         whole["seconds"], 15.0),
        ("Monte Carlo band when asked for, 20,000 stations x 4,000 draws: peak memory (MB)",
         carlo["peak_mb"], 500.0),
    ]  # fmt: skip
    print(f"report analysis, 20,000 stations: {analysis['peak_mb']:.0f} MB peak")
    print(f"stakeline report, 20,000 stations: {whole['peak_mb']:.0f} MB peak")
    print(f"Monte Carlo band when asked for, 20,000 stations: {carlo['seconds']:.1f} s")
    missed = 0
    for label, value, goal in goals:
        ok = value < goal
        missed += not ok
        print(f"{label}: {value:.2f} (goal < {goal:g}) {'ok' if ok else 'MISSED'}")
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

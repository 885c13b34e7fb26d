"""Benchmark of the store and office sync: ratios and rates measured in the same run.

    .venv/bin/python bench/bench_store.py [--packages N]

Prints:
1. durable per-reading write latency: ``Store.save_station`` (validation, reduction, one
   transaction, WAL + ``synchronous=FULL`` commit) against a bare ``sqlite3`` insert + commit of
   the same row into the same table with the same pragmas (goal: ratio <= 1.5x; medians of
   interleaved blocks, so both see the same disk and the same load);
2. importing N (default 1,000) visit packages into a new office store (goal >= 200 packages/s);
3. importing the same N packages again, nothing changed (goal >= 2,000 packages/s).
Goals are checked and reported; the exit code is 1 if any is missed.
"""

from __future__ import annotations

import argparse
import random
import sqlite3
import statistics
import tempfile
import time
import uuid
from pathlib import Path

from stakeline.store import Store
from stakeline.store.package import import_files, pack_visits

WRITES = 1500
BLOCK = 50


def _bare_connection(path: Path) -> sqlite3.Connection:
    """A plain sqlite3 connection with the store's pragmas and a table laid out like the
    store's ``station_versions`` (same columns, same indexes)."""
    conn = sqlite3.connect(path)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("PRAGMA synchronous = FULL")
    conn.execute(
        "CREATE TABLE station_versions (id INTEGER PRIMARY KEY, uuid TEXT, station_uuid TEXT,"
        " visit_uuid TEXT, action TEXT, station REAL, reading REAL, code TEXT, note TEXT,"
        " seq INTEGER, undoes TEXT, created TEXT, device TEXT)"
    )
    conn.execute("CREATE UNIQUE INDEX v_uuid ON station_versions (uuid)")
    conn.execute("CREATE INDEX v_visit ON station_versions (visit_uuid, id)")
    conn.execute("CREATE INDEX v_seq ON station_versions (visit_uuid, seq)")
    conn.commit()
    return conn


def write_latency(folder: Path) -> tuple[float, float]:
    """Median seconds per durable reading: (Store.save_station, bare insert + commit)."""
    bare = _bare_connection(folder / "bare.db")
    store = Store.open(folder / "store.db", device_id="bench")
    site = store.create_site("Bench")
    section = store.create_section(site["uuid"], "XS")
    visit = store.start_visit(section["uuid"], "2026-04-14", line_left=101.2, line_right=101.2)
    rows = [
        (str(uuid.uuid4()), str(uuid.uuid4()), visit["uuid"], "add", 0.25 * i, 1.0, "", "",
         i + 1, None, "2026-04-14T10:00:00.000000+00:00", "bench")
        for i in range(WRITES)
    ]  # fmt: skip
    sql = "INSERT INTO station_versions (uuid, station_uuid, visit_uuid, action, station, reading, "
    sql += "code, note, seq, undoes, created, device) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)"
    ours, theirs = [], []
    for block, start in enumerate(range(0, WRITES, BLOCK)):
        for which in (0, 1) if block % 2 else (1, 0):  # alternate who goes first
            t0 = time.perf_counter()
            if which == 0:
                for i in range(start, start + BLOCK):
                    store.save_station(visit["uuid"], 0.25 * i, 1.0)
            else:
                for row in rows[start : start + BLOCK]:
                    bare.execute(sql, row)
                    bare.commit()
            (ours if which == 0 else theirs).append((time.perf_counter() - t0) / BLOCK)
    store.close()
    bare.close()
    return statistics.median(ours), statistics.median(theirs)


def make_packages(folder: Path, count: int) -> Path:
    """Pack ``count`` finished visits like the demo's (27 readings, a water level, a
    correction each) into ``folder / "outbox"``."""
    rng = random.Random(11)
    store = Store.open(folder / "field.db", device_id="bench-tablet")
    with store.transaction():
        site = store.create_site("Bench creek")
        section = store.create_section(site["uuid"], "XS bench")
        for n in range(count):
            visit = store.start_visit(
                section["uuid"],
                "2026-04-14",
                crew=["A", "B"],
                line_left=101.2,
                line_right=101.2,
                notes=f"visit {n}",
            )
            store.add_water_level(visit["uuid"], 99.98, "2026-04-14T10:05")
            saved = [store.save_station(visit["uuid"], 0.5 * i, rng.uniform(0.2, 1.8))
                     for i in range(27)]  # fmt: skip
            store.correct_station(saved[5]["uuid"], reading=1.0)
            store.finish_visit(visit["uuid"])
    pack_visits(store, folder / "outbox")
    store.close()
    return folder / "outbox"


def import_rates(outbox: Path, office_path: Path) -> tuple[float, float, int]:
    """(first import packages/s, re-import packages/s, package count)."""
    files = sorted(str(p) for p in outbox.iterdir())
    office = Store.open(office_path, device_id="office")
    t0 = time.perf_counter()
    first = import_files(office, files)
    t1 = time.perf_counter()
    again = import_files(office, files)
    t2 = time.perf_counter()
    office.close()
    assert {r["status"] for r in first} == {"imported"}, "first import did not import all"
    assert {r["status"] for r in again} == {"present"}, "re-import changed something"
    return len(files) / (t1 - t0), len(files) / (t2 - t1), len(files)


def main() -> int:
    """Run the benchmarks, print ratios and rates, return 1 if a goal is missed."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--packages", type=int, default=1000, help="packages to import")
    args = parser.parse_args()
    missed = 0
    with tempfile.TemporaryDirectory(prefix="stakeline-bench-") as tmp:
        folder = Path(tmp)
        ours, bare = write_latency(folder)
        ratio = ours / bare
        ok = ratio <= 1.5
        missed += not ok
        print(f"durable write per reading: Store.save_station {ours * 1e6:8.1f} us, "
              f"bare sqlite3 insert+commit {bare * 1e6:8.1f} us, ratio {ratio:5.2f}x "
              f"(goal <= 1.5x) {'ok' if ok else 'MISSED'}")  # fmt: skip
        outbox = make_packages(folder, args.packages)
        first, again, count = import_rates(outbox, folder / "office.db")
        for label, rate, goal in [("import", first, 200), ("re-import", again, 2000)]:
            ok = rate >= goal
            missed += not ok
            print(f"{label:<9} {count} packages: {rate:8.0f} packages/s "
                  f"(goal >= {goal}/s) {'ok' if ok else 'MISSED'}")  # fmt: skip
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

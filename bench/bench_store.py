"""Benchmark of the store and office sync: ratios and rates measured in the same run.

    .venv/bin/python bench/bench_store.py [--packages N] [--lock-packages M] [--health V]

Prints:
1. durable per-reading write latency: ``Store.save_station`` (validation, reduction, one
   transaction, WAL + ``synchronous=FULL`` commit) against a bare ``sqlite3`` insert + commit of
   the same row into the same table with the same pragmas (goal: ratio <= 1.5x; medians of
   interleaved blocks, so both see the same disk and the same load);
2. importing N (default 1,000) signed visit packages into a new office store that trusts the
   device (goal >= 200 packages/s);
3. importing the same N packages again, nothing changed (goal >= 2,000 packages/s);
4. the longest write lock held while importing M (default 20) maximum-size packages (20,000
   station versions, near the 8 MiB limit) -- goal <= 2 s, so a concurrent writer is never
   kept waiting long;
5. sqlite-utils against raw sqlite3 for the store's two kinds of statement (one-row insert in a
   transaction, one-row read), per call -- the measurement behind keeping raw SQL for writes;
6. with ``--health V``: ``PRAGMA quick_check`` on an office store of V visits (27 readings
   each, and its import log), built here with plain SQL -- the figure behind the health-check
   schedule in ``stakeline.store.health`` (V = 100000 takes a few minutes and 3.5 GB of disk).
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
from stakeline.store.values import now

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
    store.export_device_key(folder / "bench-tablet.key.json")
    store.close()
    return folder / "outbox"


def import_rates(outbox: Path, office_path: Path) -> tuple[float, float, int]:
    """(first import packages/s, re-import packages/s, package count)."""
    files = sorted(str(p) for p in outbox.iterdir())
    office = Store.open(office_path, device_id="office")
    office.trust_device(outbox.parent / "bench-tablet.key.json", by="bench")
    t0 = time.perf_counter()
    first = import_files(office, files)
    t1 = time.perf_counter()
    again = import_files(office, files)
    t2 = time.perf_counter()
    office.close()
    assert {r["status"] for r in first} == {"imported"}, "first import did not import all"
    assert {r["status"] for r in again} == {"present"}, "re-import changed something"
    return len(files) / (t1 - t0), len(files) / (t2 - t1), len(files)


def lock_time(folder: Path, count: int) -> tuple[float, float, int]:
    """(longest write lock in s, whole import in s, mean package MiB) importing ``count``
    maximum-size packages (20,000 station versions each)."""
    field = Store.open(folder / "big-field.db", device_id="big-tablet")
    site = field.create_site("Bench creek")
    section = field.create_section(site["uuid"], "XS long")
    for n in range(count):
        with field.transaction():
            visit = field.start_visit(section["uuid"], "2026-04-14", line_left=101.2,
                                      notes=f"long visit {n}")  # fmt: skip
            for i in range(20_000):
                field.save_station(visit["uuid"], 0.01 * i, 0.5 + (i % 97) / 100)
            field.finish_visit(visit["uuid"])
    results = pack_visits(field, folder / "big-outbox")
    field.export_device_key(folder / "big.key.json")
    field.close()
    sizes = [Path(r["path"]).stat().st_size for r in results]
    office = Store.open(folder / "big-office.db", device_id="office")
    office.trust_device(folder / "big.key.json", by="bench")
    held, began = [], [0.0]

    def trace(sql: str) -> None:
        word = sql.strip().split()[0].upper()
        if word == "BEGIN":
            began[0] = time.perf_counter()
        elif word == "COMMIT":
            held.append(time.perf_counter() - began[0])

    office.conn.set_trace_callback(trace)
    t0 = time.perf_counter()
    done = import_files(office, [folder / "big-outbox"])
    total = time.perf_counter() - t0
    office.conn.set_trace_callback(None)
    office.close()
    assert {r["status"] for r in done} == {"imported"}, "a big package was not imported"
    return max(held), total, statistics.mean(sizes) / 2**20


def sqlite_utils_costs(folder: Path) -> dict[str, float]:
    """Microseconds per call: one-row insert (in a transaction) and one-row read, raw sqlite3
    against sqlite-utils (``Table.insert``, ``Database.query``)."""
    store = Store.open(folder / "su.db", device_id="bench")
    site = store.create_site("S")
    conn, db = store.conn, store.db
    record = {"uuid": "", "name": "n", "stream": "", "description": "", "created": now(),
              "modified": now(), "device": "bench"}  # fmt: skip
    sql = f"INSERT INTO sites ({', '.join(record)}) VALUES ({', '.join('?' * len(record))})"
    out = {}
    for label, insert in [
        ("insert, raw sqlite3", lambda r: conn.execute(sql, list(r.values()))),
        ("insert, sqlite-utils", lambda r: db["sites"].insert(r)),
    ]:
        conn.execute("BEGIN IMMEDIATE")
        t0 = time.perf_counter()
        for i in range(2000):
            insert({**record, "uuid": f"{label}-{i}"})
        out[label] = (time.perf_counter() - t0) / 2000 * 1e6
        conn.execute("COMMIT")
    query = "SELECT * FROM sites WHERE uuid = ?"
    for label, read in [
        ("read, raw sqlite3", lambda: conn.execute(query, [site["uuid"]]).fetchall()),
        ("read, sqlite-utils", lambda: list(db.query(query, [site["uuid"]]))),
    ]:
        t0 = time.perf_counter()
        for _ in range(5000):
            read()
        out[label] = (time.perf_counter() - t0) / 5000 * 1e6
    store.close()
    return out


def quick_check_cost(folder: Path, visits: int) -> tuple[float, float, float]:
    """(seconds of PRAGMA quick_check, of the small-table check, file GB) on an office store of
    ``visits`` visits with 27 readings each and a 25 kB package each in its import log."""

    path = folder / "health.db"
    store = Store.open(path, device_id="office")
    site = store.create_site("S")
    section = store.create_section(site["uuid"], "X")
    store.close()
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA synchronous = OFF")
    stamp, content = now(), "x" * 25_000
    conn.execute("BEGIN")
    for _ in range(visits):
        v = str(uuid.uuid4())
        conn.execute(
            "INSERT INTO visits VALUES (?,?,'2026-04-14','[]','m','line',101.2,101.2,NULL,NULL,"
            "NULL,'','[]','{}',?,?,?,'office')",
            (v, section["uuid"], stamp, stamp, stamp),
        )
        conn.executemany(
            "INSERT INTO station_versions (uuid, station_uuid, visit_uuid, action, station,"
            " reading, code, note, seq, created, device) VALUES (?,?,?,'add',?,1.0,'','',?,?,'o')",
            [(str(uuid.uuid4()), str(uuid.uuid4()), v, 0.5 * i, i + 1, stamp) for i in range(27)],
        )
        conn.execute(
            "INSERT INTO packages (file_sha, content_sha, visit_uuid, device, status,"
            " reason, content, imported) VALUES (?, ?, ?, 'o', 'imported', '', ?, ?)",
            (uuid.uuid4().hex * 2, "c", v, content, stamp),
        )
    conn.execute("COMMIT")
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.execute("PRAGMA quick_check").fetchall()  # warm the page cache, as a working office
    conn.close()
    with Store.open(path) as office:
        t0 = time.perf_counter()
        office.check_health(full=True)
        whole = time.perf_counter() - t0
        small = office.check_health(full=False)["seconds"]
    size = path.stat().st_size / 1e9
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    return whole, small, size


def main() -> int:
    """Run the benchmarks, print ratios and rates, return 1 if a goal is missed."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--packages", type=int, default=1000, help="packages to import")
    parser.add_argument("--lock-packages", type=int, default=20,
                        help="maximum-size packages for the lock-time measurement")  # fmt: skip
    parser.add_argument("--health", type=int, default=0, metavar="V",
                        help="visits of the store for the quick_check cost (0: skip)")  # fmt: skip
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
        if args.lock_packages:
            longest, total, mib = lock_time(folder, args.lock_packages)
            ok = longest <= 2.0
            missed += not ok
            print(f"import of {args.lock_packages} maximum-size packages ({mib:.1f} MiB each): "
                  f"{total:.1f} s, longest write lock {longest:.2f} s (goal <= 2 s) "
                  f"{'ok' if ok else 'MISSED'}")  # fmt: skip
        costs = sqlite_utils_costs(folder)
        print("per call: " + ", ".join(f"{k} {v:.1f} us" for k, v in costs.items()))
        if args.health:
            whole, small, size = quick_check_cost(folder, args.health)
            print(f"store of {args.health} visits ({size:.2f} GB): whole quick_check "
                  f"{whole:.2f} s, small-table check {small:.3f} s")  # fmt: skip
    return 1 if missed else 0


if __name__ == "__main__":
    raise SystemExit(main())

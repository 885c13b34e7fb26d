"""Durability: a separate process saving readings is killed with SIGKILL at random moments.

Every change the writer reported as saved (it prints only after the store method returned) must
be in the store afterwards, and SQLite's own ``PRAGMA integrity_check`` must pass.  Real
subprocess, real file, real SIGKILL -- no mocks.
"""

from __future__ import annotations

import os
import random
import signal
import sqlite3
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest
from stakeline.store import Store

ROOT = Path(__file__).resolve().parents[2]
WRITER = Path(__file__).with_name("store_writer.py")
KILLS = 50

pytestmark = pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs POSIX SIGKILL")


def _run_and_kill(store: Path, seed: int, delay: float) -> tuple[list[str], float]:
    """Start the writer, SIGKILL it after ``delay`` seconds; returns its complete output lines
    and the time it took to print 'ready' (inf if it never did)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    start = time.perf_counter()
    proc = subprocess.Popen(
        [sys.executable, str(WRITER), str(store), str(seed)],
        stdout=subprocess.PIPE,
        stderr=subprocess.DEVNULL,
        cwd=ROOT,
        env=env,
    )
    lines: list[str] = []
    ready = [float("inf")]

    def read() -> None:
        for raw in proc.stdout:
            if raw.endswith(b"\n"):  # a half-printed line proves nothing either way
                line = raw.decode().strip()
                if line == "ready":
                    ready[0] = time.perf_counter() - start
                lines.append(line)

    reader = threading.Thread(target=read)
    reader.start()
    time.sleep(delay)
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    reader.join()
    proc.stdout.close()
    assert proc.returncode == -signal.SIGKILL, "the writer stopped before it was killed"
    return lines, ready[0]


def _check(store: Path, saved: set[str], undid: set[str]) -> None:
    conn = sqlite3.connect(store)  # plain sqlite3: an independent reader of the file
    try:
        assert conn.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
        versions = {r[0] for r in conn.execute("SELECT uuid FROM station_versions")}
        undone = {r[0] for r in conn.execute("SELECT undoes FROM station_versions")}
    finally:
        conn.close()
    assert saved - versions == set(), "a change reported as saved was lost"
    assert undid - undone == set(), "an undo reported as done was lost"


def test_sigkill_never_loses_a_reported_reading(tmp_path):
    store = tmp_path / "field.db"
    rng = random.Random(20260501)
    saved: set[str] = set()
    undid: set[str] = set()
    startup = 0.5
    killed_while_writing = 0
    for kill in range(KILLS):
        # Most kills land while readings are being written; some during start-up and open.
        delay = rng.uniform(0.5 * startup, startup + 0.3)
        lines, ready = _run_and_kill(store, seed=kill, delay=delay)
        if ready != float("inf"):
            startup = 0.8 * startup + 0.2 * ready
        saved.update(line.split()[1] for line in lines if line.startswith("saved "))
        undid.update(line.split()[1] for line in lines if line.startswith("undid "))
        killed_while_writing += any(line != "ready" for line in lines)
        if store.exists():
            _check(store, saved, undid)
    assert killed_while_writing >= KILLS // 2, "too few kills landed while writing readings"
    assert len(saved) > 500
    with Store.open(store) as reopened:  # the store still opens and reads after all that
        visit = reopened.get_setting("kill_visit")
        for station in reopened.stations(visit):
            history = reopened.station_history(station["uuid"])
            assert station["version"] in {v["version"] for v in history if not v["undone"]}
        assert reopened.integrity_check() == "ok"

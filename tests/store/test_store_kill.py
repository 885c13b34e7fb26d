"""Durability: a separate process saving readings is killed with SIGKILL at random moments.

Every change the writer reported as saved (it prints only after the store method returned) must
be in the store afterwards, and SQLite's own ``PRAGMA integrity_check`` must pass.  Real
subprocess, real file, real SIGKILL -- no mocks.

Kills are timed by the writer's own output, not by a guess of how long it takes to start: an
earlier version slept a delay drawn around a running estimate of the start-up time, and on a
loaded machine (the full suite on two shared cores) start-up took longer than every delay it
drew, no 'ready' was ever seen to correct the estimate, and most kills landed before the first
write ("too few kills landed while writing readings").  Now a writing kill waits for a random
number of reported changes and then a random fraction of a write, and a start-up kill draws its
delay within the start-up time measured in the same run.
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


def _run_and_kill(store: Path, seed: int, delay: float | None, after: int, jitter: float):
    """Start the writer and SIGKILL it: ``delay`` seconds after it starts (a kill during
    start-up and open), or, when ``delay`` is None, ``jitter`` seconds after it has printed
    ``after`` changes (a kill while writing, whatever the machine's load).  Returns its
    complete output lines and the time it took to print 'ready' (inf if it never did)."""
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
    enough = threading.Event()

    def read() -> None:
        for raw in proc.stdout:
            if raw.endswith(b"\n"):  # a half-printed line proves nothing either way
                line = raw.decode().strip()
                if line == "ready":
                    ready[0] = time.perf_counter() - start
                lines.append(line)
                if ready[0] != float("inf") and len(lines) > after:
                    enough.set()
        enough.set()  # the writer ended (it must not: the assert below says so)

    reader = threading.Thread(target=read)
    reader.start()
    if delay is not None:
        time.sleep(delay)
    else:
        assert enough.wait(120), "the writer printed nothing for two minutes"
        time.sleep(jitter)
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
    startup = None  # seconds from start to 'ready', as measured in this run
    killed_while_writing = 0
    for kill in range(KILLS):
        # Most kills land while readings are being written: after a random number of saved
        # changes plus a random fraction of a write, so they land at any point of a write
        # however loaded the machine is.  One in five lands during start-up and open, at a
        # random moment of the start-up time measured in this run.
        if startup is not None and rng.random() < 0.2:
            delay, after, jitter = rng.uniform(0, startup), 0, 0.0
        else:
            delay, after, jitter = None, rng.randint(5, 40), rng.uniform(0, 0.004)
        lines, ready = _run_and_kill(store, kill, delay, after, jitter)
        if ready != float("inf"):
            startup = ready if startup is None else max(startup, ready)
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

"""Faults of the store file itself: damage, a full disk, a read-only file system, several
processes creating one store, another program holding the lock.  Each is noticed, named in one
line with what to do, and never leaves a half-done change.  Real files, real processes, real
file systems where the machine allows (tmpfs mounts when running as root)."""

from __future__ import annotations

import hashlib
import os
import shutil
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from custody_helpers import trust
from stakeline.store import (
    Store,
    StoreCorruptError,
    StoreError,
    StoreFullError,
    StoreLockedError,
    StoreReadOnlyError,
    salvage,
)
from stakeline.store.package import import_files, pack_visits
from stakeline.store.schema import LATEST

ROOT = Path(__file__).resolve().parents[2]
OPENER = Path(__file__).with_name("store_opener.py")


@pytest.fixture
def synced(tmp_path):
    """(office path, outbox): an office store holding the six demo visits, closed."""
    with Store.open(tmp_path / "field.db", device_id="tablet-A") as field:
        field.load_demo()
        pack_visits(field, tmp_path / "outbox")
        with Store.open(tmp_path / "office.db", device_id="office") as office:
            trust(office, field)
            assert {r["status"] for r in import_files(office, [tmp_path / "outbox"])} == {
                "imported"
            }
    return tmp_path / "office.db", tmp_path / "outbox"


def _leaf_page(path: Path, table: str) -> tuple[int, int]:
    """(page number, page size) of a leaf page of ``table`` (SQLite's dbstat table; the middle
    page of the file when this SQLite lacks it)."""
    conn = sqlite3.connect(path)
    try:
        size = conn.execute("PRAGMA page_size").fetchone()[0]
        try:
            pages = [r[0] for r in conn.execute(
                "SELECT pageno FROM dbstat WHERE name = ? AND pagetype = 'leaf' ORDER BY pageno",
                [table],
            )]  # fmt: skip
        except sqlite3.OperationalError:
            pages = [conn.execute("PRAGMA page_count").fetchone()[0] // 2]
    finally:
        conn.close()
    return pages[len(pages) // 2], size


def _zero_page(path: Path, table: str) -> None:
    page, size = _leaf_page(path, table)
    with open(path, "r+b") as handle:
        handle.seek((page - 1) * size)
        handle.write(bytes(size))


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_damaged_office_store_is_refused_before_import_and_salvaged(synced, tmp_path):
    office, outbox = synced
    _zero_page(office, "station_versions")
    before = _digest(office)
    with Store.open(office) as damaged:
        with pytest.raises(StoreCorruptError) as info:
            import_files(damaged, [outbox])
    message = str(info.value)
    assert "damaged" in message and "stakeline salvage --store" in message
    assert "run the same import again" not in message and "\n" not in message
    assert _digest(office) == before  # nothing was written into it
    report = salvage(office, tmp_path / "saved.db")
    assert _digest(office) == before  # salvage only reads the damaged file
    assert report["check"] == "ok"
    versions = report["tables"]["station_versions"]
    assert versions["copied"] > 0 and versions["unreadable"] > 0
    assert report["tables"]["visits"]["copied"] == 6
    with Store.open(tmp_path / "saved.db") as saved:
        assert saved.integrity_check() == "ok"
        assert len(saved.visits()) == 6 and saved.stations(saved.visits()[0]["uuid"])
    with pytest.raises(StoreError, match="already exists"):
        salvage(office, tmp_path / "saved.db")


def test_damage_met_during_an_import_says_how_to_recover(synced, tmp_path):
    office, outbox = synced
    _zero_page(office, "packages")
    with Store.open(office) as damaged:
        with pytest.raises(StoreCorruptError, match="salvage") as info:
            import_files(damaged, [outbox], check=False)  # the check skipped: SQLite finds it
    assert "run the same import again" not in str(info.value)


def test_health_check_schedule_for_large_stores(synced):
    office, _ = synced
    with Store.open(office) as store:
        assert store.check_health()["checked"] == "whole"  # a small store: every time
        assert store.check_health(full=False)["checked"] == "tables"
        store.set_setting("store_check_hours", 0)
        assert store.check_health()["checked"] == "whole"


def test_full_disk_says_disk_full_and_keeps_nothing_half_done(synced, tmp_path):
    office, outbox = synced
    with Store.open(tmp_path / "field2.db", device_id="tablet-B") as other:
        other.load_demo()
        pack_visits(other, tmp_path / "outbox2")
        with Store.open(office) as store:
            trust(store, other)
            pages = store.conn.execute("PRAGMA page_count").fetchone()[0]
            # SQLite's own size limit stands in for the disk: SQLITE_FULL, as on a full disk.
            store.conn.execute(f"PRAGMA max_page_count = {pages + 2}")
            before = store.visits()
            with pytest.raises(StoreFullError) as info:
                import_files(store, [tmp_path / "outbox2"])
            assert "full" in str(info.value) and "savepoint" not in str(info.value)
            assert store.visits() == before
            store.conn.execute("PRAGMA max_page_count = 1073741823")
            results = import_files(store, [tmp_path / "outbox2"])
            assert {r["status"] for r in results} == {"imported"}


def _mount_tmpfs(folder: Path, size: str) -> bool:
    folder.mkdir()
    if not hasattr(os, "geteuid") or os.geteuid() != 0 or shutil.which("mount") is None:
        return False
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(folder)],
                          capture_output=True)  # fmt: skip
    return done.returncode == 0


def _umount(folder: Path) -> None:
    subprocess.run(["umount", str(folder)], capture_output=True)


def test_a_really_full_file_system(synced, tmp_path):
    office, outbox = synced
    small = tmp_path / "small"
    if not _mount_tmpfs(small, "600k"):
        pytest.skip("needs root to mount a small tmpfs")
    store = None
    try:
        store = Store.open(small / "office.db")
        with Store.open(office) as trusted:
            for device in trusted.devices():
                store.conn.execute(
                    "INSERT INTO devices (public_key, device_id, created, own, trusted_by,"
                    " trusted_at, lost) VALUES (?, ?, ?, 0, 'test', ?, 0)",
                    [device["public_key"], device["device"], device["created"],
                     device["trusted_at"]],
                )  # fmt: skip
        with pytest.raises(StoreFullError, match="full") as info:
            for _ in range(50):  # each import adds to the journal until the disk is full
                import_files(store, [outbox])
                with store.transaction():
                    store.conn.execute("DELETE FROM packages")
        assert "savepoint" not in str(info.value) and "\n" not in str(info.value)
    finally:
        if store is not None:
            try:
                store.close()
            except StoreFullError:
                store.conn.close()  # the last checkpoint may not fit either
        _umount(small)


def test_read_only_file_system_still_reads(synced, tmp_path):
    office, _ = synced
    mount = tmp_path / "ro"
    if not _mount_tmpfs(mount, "4m"):
        pytest.skip("needs root to mount a read-only tmpfs")
    try:
        shutil.copy(office, mount / "office.db")
        done = subprocess.run(["mount", "-o", "remount,ro", str(mount)], capture_output=True)
        assert done.returncode == 0
        with Store.open(mount / "office.db", readonly=True) as store:
            visits = store.visits()
            assert len(visits) == 6 and store.stations(visits[0]["uuid"])
            with pytest.raises(StoreReadOnlyError, match="read-only"):
                store.set_setting("unit", "ft")
        with pytest.raises(StoreReadOnlyError) as info:
            Store.open(mount / "office.db")
        assert "\n" not in str(info.value) and "read" in str(info.value)
    finally:
        _umount(mount)


def test_readonly_open_changes_nothing(synced):
    office, _ = synced
    before = _digest(office)
    with Store.open(office, readonly=True) as store:
        assert store.readonly and len(store.visits()) == 6
        with pytest.raises(StoreError, match="read-only"):
            store.create_site("new")
    assert _digest(office) == before
    with pytest.raises(StoreError, match="no store file"):
        Store.open(office.with_name("missing.db"), readonly=True)


def test_four_processes_create_one_store_at_once(tmp_path):
    trials = 30
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    procs = [
        subprocess.Popen(
            [sys.executable, str(OPENER), str(tmp_path), str(trials)],
            stdout=subprocess.PIPE,
            text=True,
            env=env,
        )  # fmt: skip
        for _ in range(4)
    ]
    failures = []
    try:
        for trial in range(trials):
            for proc in procs:
                assert proc.stdout.readline().split() == ["ready", str(trial)]
            (tmp_path / f"go-{trial}").touch()
            outcomes = [proc.stdout.readline().strip() for proc in procs]
            failures += [line for line in outcomes if not line.startswith("ok")]
    finally:
        for proc in procs:
            proc.wait(60)
    assert failures == []
    for trial in range(trials):
        with Store.open(tmp_path / f"store-{trial}.db") as store:
            assert store.schema_version == LATEST and store.integrity_check() == "ok"
            ids = store.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchall()
            assert len(ids) == 1 and store.device_id == ids[0][0]


_HOLD = (
    "import sqlite3, sys, time\n"
    "c = sqlite3.connect(sys.argv[1], isolation_level=None)\n"
    "c.execute('BEGIN IMMEDIATE')\n"
    "print('locked', flush=True)\n"
    "time.sleep(float(sys.argv[2]))\n"
    "c.execute('COMMIT')\n"
)


def _hold_lock(path: Path, seconds: float) -> subprocess.Popen:
    proc = subprocess.Popen([sys.executable, "-c", _HOLD, str(path), str(seconds)],
                            stdout=subprocess.PIPE, text=True)  # fmt: skip
    assert proc.stdout.readline().strip() == "locked"
    return proc


def test_a_writer_waits_for_a_locked_store_and_says_so(synced, capsys):
    office, outbox = synced
    with Store.open(office) as store:
        holder = _hold_lock(office, 3.5)
        try:
            started = time.monotonic()
            store.set_setting("unit", "m")  # waits for the other program, then writes
            waited = time.monotonic() - started
        finally:
            holder.wait(30)
        assert waited > 2 and store.get_setting("unit") == "m"
    err = capsys.readouterr().err
    assert "waiting for the store" in err and err.count("\n") == 1


def test_a_writer_gives_up_with_a_clear_message(synced):
    office, _ = synced
    heard = []
    with Store.open(office, on_wait=heard.append, lock_wait=0.5) as store:
        holder = _hold_lock(office, 60)
        try:
            with pytest.raises(StoreLockedError, match="stayed locked") as info:
                store.set_setting("unit", "m")
        finally:
            holder.kill()  # the other program, ended once we have given up
            holder.wait(30)
    assert heard == [str(office)] and "\n" not in str(info.value)


def test_import_commits_in_batches_by_size(synced, tmp_path):
    office, outbox = synced
    with Store.open(tmp_path / "field3.db", device_id="tablet-C") as other:
        other.load_demo()
        pack_visits(other, tmp_path / "outbox3")
        with Store.open(tmp_path / "office3.db") as store:
            trust(store, other)
            commits = []
            store.conn.set_trace_callback(
                lambda sql: commits.append(sql) if sql.strip().upper() == "COMMIT" else None
            )
            files = sorted((tmp_path / "outbox3").iterdir())
            results = import_files(store, files[:2], batch_bytes=1)  # a batch per file
            assert len(commits) == 2
            results += import_files(store, files[2:] + files[:2])  # one batch
            store.conn.set_trace_callback(None)
    assert [r["status"] for r in results] == ["imported"] * 6 + ["present"] * 2
    assert len(commits) == 3

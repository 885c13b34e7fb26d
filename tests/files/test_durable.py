"""Files written whole or not at all, created exclusively, synced, with the right mode; stale
temporary files of killed writers removed; special files never read.  Real files, a real
subprocess for a live writer, real named pipes."""

from __future__ import annotations

import os
import stat
import subprocess
import sys

import pytest
from stakeline.files import durable
from stakeline.files.durable import (
    NotRegularFileError,
    read_regular,
    remove_stale_partials,
    write_atomic,
)
from stakeline.files.exports import write_text


def _mode(path) -> int:
    return stat.S_IMODE(os.stat(path).st_mode)


def test_written_whole_with_mode_and_nothing_left(tmp_path):
    target = tmp_path / "out.csv"
    write_atomic(target, b"station,elevation\n")
    assert target.read_bytes() == b"station,elevation\n" and _mode(target) == 0o644
    write_atomic(target, b"new\n", mode=0o600)
    assert target.read_bytes() == b"new\n" and _mode(target) == 0o600
    assert sorted(os.listdir(tmp_path)) == ["out.csv"]


def test_a_planted_link_at_a_predictable_name_is_never_followed(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me")
    target = tmp_path / "out.stakeline-visit.json"
    # The name an earlier Stakeline used for its temporary file, planted as a link.
    (tmp_path / f".{target.name}.{os.getpid()}.partial").symlink_to(victim)
    (tmp_path / f"{target.name}.part").symlink_to(victim)
    write_atomic(target, b"package\n")
    write_text(target, "package\n")
    assert victim.read_text() == "keep me" and target.read_text() == "package\n"


def test_failed_write_leaves_the_old_file_and_no_temporary(tmp_path, monkeypatch):
    target = tmp_path / "out.csv"
    target.write_text("old")

    def unplugged(*args):
        raise OSError("USB stick pulled")

    monkeypatch.setattr(durable.os, "replace", unplugged)
    with pytest.raises(OSError):
        write_atomic(target, b"new")
    monkeypatch.undo()
    assert target.read_text() == "old" and os.listdir(tmp_path) == ["out.csv"]


def test_every_write_is_synced(tmp_path, monkeypatch):
    synced = []
    real = os.fsync

    def spy(handle):
        synced.append(handle)
        real(handle)

    monkeypatch.setattr(durable.os, "fsync", spy)
    write_text(tmp_path / "stations.csv", "station\n")
    assert len(synced) >= 2  # the file, then its folder (the rename)
    assert _mode(tmp_path / "stations.csv") == 0o644


def test_stale_partials_of_dead_writers_go_live_ones_stay(tmp_path):
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True).stdout.strip()  # fmt: skip
    live = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        stale = tmp_path / f".a.json.{dead}.x1y2.partial"
        busy = tmp_path / f".b.json.{live.pid}.z3w4.partial"
        other = tmp_path / ".notes.txt"
        for path in (stale, busy, other):
            path.write_text("half")
        old = tmp_path / ".c.json.partial"  # no process id: removed once a day old
        old.write_text("half")
        os.utime(old, (0, 0))
        removed = remove_stale_partials(tmp_path)
        assert sorted(removed) == sorted([stale.name, old.name])
        assert busy.exists() and other.exists()
    finally:
        live.kill()
        live.wait()
    assert remove_stale_partials(tmp_path) == [busy.name]


def test_report_file_is_synced_and_0644(tmp_path, monkeypatch):
    from stakeline.report import ReportOptions, prepare_report, write_report
    from stakeline.store import Store

    with Store.memory() as store:
        visit = store.load_demo()[0]
        data = prepare_report(visit, store.stations(visit["uuid"]), ReportOptions())
    synced = []
    real = os.fsync
    monkeypatch.setattr(durable.os, "fsync", lambda h: (synced.append(h), real(h)))
    path = write_report(data, tmp_path / "report.png")
    assert path.exists() and _mode(path) == 0o644 and len(synced) >= 2
    assert os.listdir(tmp_path) == ["report.png"]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_special_files_are_refused_before_reading(tmp_path):
    pipe = tmp_path / "pipe"
    os.mkfifo(pipe)
    with pytest.raises(NotRegularFileError, match="named pipe"):
        read_regular(pipe, 100)  # would block for ever if it were opened for reading
    with pytest.raises(NotRegularFileError, match="folder"):
        read_regular(tmp_path, 100)
    (tmp_path / "f").write_bytes(b"x" * 300)
    assert len(read_regular(tmp_path / "f", 100)) == 101  # one past the limit: "too large"

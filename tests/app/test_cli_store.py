"""``stakeline pack``, ``import``, ``demo`` and ``visits`` as a person types them."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import click
import pytest
from stakeline.app.cli import cli, main
from stakeline.app.cli import store as cli_store
from stakeline.store import Store

ROOT = Path(__file__).resolve().parents[2]


def _trust(office: Path, *fields: Path) -> None:
    """The office trusts the field stores' device keys (as the office does once per device)."""
    with Store.open(office) as trusting:
        for field in fields:
            with Store.open(field) as store:
                key_file = Path(f"{field}.stakeline-device-key.json")
                store.export_device_key(key_file)
            trusting.trust_device(key_file, by="test office")


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_every_store_command_has_help():
    for name in ("pack", "import", "demo", "visits", "conflicts", "resolve"):
        command = cli.commands[name]
        assert command.short_help, f"{name} has no help line"
        assert command.help
        for param in command.params:
            described = param.help if isinstance(param, click.Option) else param.description
            assert described, f"{name} {param.name} has no help"
    assert cli_store.__doc__


def test_demo_then_visits_json(tmp_path, capsys):
    store = tmp_path / "demo.db"
    code, out, _ = _run(capsys, "demo", "--store", store)
    assert code == 0 and "6 demo visits" in out
    code, out, _ = _run(capsys, "visits", "--store", store, "--json")
    rows = json.loads(out)
    assert code == 0 and len(rows) == 6
    assert all(set(r) == {"uuid", "site", "section", "date", "station_count", "finished"}
               for r in rows)  # fmt: skip
    assert [(r["section"], r["date"], r["station_count"]) for r in rows] == [
        ("XS1 riffle", "2026-04-14", 33),
        ("XS2 pool", "2026-04-14", 29),
        ("XS1 riffle", "2026-09-22", 35),
        ("XS1 riffle", "2026-10-20", 35),
        ("XS1 riffle", "2026-11-05", 35),
        ("XS1 riffle", "2026-11-24", 35),
    ]
    code, out, _ = _run(capsys, "visits", "--store", store)
    assert code == 0 and out.count("finished") == 6


@pytest.mark.parametrize(
    "argv, message",
    [
        (["visits", "--store", "{tmp}/missing.db"], "no store file"),
        (["pack", "--store", "{tmp}/missing.db", "--outbox", "{tmp}/o"], "no store file"),
        (["demo", "--store", "{tmp}/exists.db"], "already exists"),
        (["import", "{tmp}/empty-folder", "--into", "{tmp}/office.db"], "no package files"),
        (["import", "x", "--into", "{tmp}"], "folder"),
        (["visits", "--store", "{tmp}/text.db"], "not a Stakeline store"),
    ],
)
def test_bad_input_exits_2_with_one_line(tmp_path, capsys, argv, message):
    (tmp_path / "exists.db").write_bytes(b"")
    (tmp_path / "empty-folder").mkdir()
    (tmp_path / "text.db").write_text("not a database, just words\n" * 50)
    code, out, err = _run(capsys, *[a.format(tmp=tmp_path) for a in argv])
    assert code == 2 and message in err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_pack_import_round_trip_and_exit_codes(tmp_path, capsys):
    field, office, outbox = tmp_path / "field.db", tmp_path / "office.db", tmp_path / "out"
    _run(capsys, "demo", "--store", field)
    code, out, _ = _run(capsys, "pack", "--store", field, "--outbox", outbox)
    assert code == 0 and out.count("written") == 6
    code, out, _ = _run(capsys, "pack", "--store", field, "--outbox", outbox)
    assert code == 0 and out.count("unchanged") == 6
    files = sorted(outbox.iterdir())
    _trust(office, field)
    code, out, _ = _run(capsys, "import", *files, "--into", office, "--json")
    results = json.loads(out)
    assert code == 0 and [r["status"] for r in results] == ["imported"] * 6
    code, out, _ = _run(capsys, "import", outbox, "--into", office)
    assert code == 0 and out.count("already imported") == 6 and len(out.splitlines()) == 6
    damaged = tmp_path / "damaged.stakeline-visit.json"
    data = bytearray(files[0].read_bytes())
    data[len(data) // 2] ^= 0x10
    damaged.write_bytes(bytes(data))
    code, out, _ = _run(capsys, "import", files[1], damaged, "--into", office)
    assert code == 1
    lines = out.splitlines()
    assert len(lines) == 2 and "already imported" in lines[0] and "rejected" in lines[1]
    with Store.open(field) as a, Store.open(office) as b:
        for visit in a.visits():
            assert b.stations(visit["uuid"]) == a.stations(visit["uuid"])


def test_conflict_exits_1(tmp_path, capsys):
    field, office = tmp_path / "field.db", tmp_path / "office.db"
    _run(capsys, "demo", "--store", field)
    shutil.copy(field, tmp_path / "other.db")
    for path, device, reading in [(field, "tablet-A", 0.3), (tmp_path / "other.db", "B", 0.4)]:
        with Store.open(path, device_id=device) as store:
            visit = store.visits()[0]["uuid"]
            store.correct_station(store.stations(visit)[0]["uuid"], reading=reading)
            store.set_setting("x", 1)
    _run(capsys, "pack", "--store", field, "--outbox", tmp_path / "a")
    _run(capsys, "pack", "--store", tmp_path / "other.db", "--outbox", tmp_path / "b")
    _trust(office, field, tmp_path / "other.db")
    assert _run(capsys, "import", tmp_path / "a", "--into", office)[0] == 0
    code, out, _ = _run(capsys, "import", tmp_path / "b", "--into", office, "--json")
    assert code == 1
    assert [r["status"] for r in json.loads(out)].count("conflict") == 1
    code, out, _ = _run(capsys, "visits", "--store", office)
    assert "conflict to resolve" in out
    code, out, _ = _run(capsys, "conflicts", "--store", office, "--json")
    (entry,) = json.loads(out)
    code, out, err = _run(capsys, "resolve", "abc", "--store", office, "--keep", "merge")
    assert code == 2 and "no unresolved conflicts" in err
    code, out, _ = _run(capsys, "resolve", entry["file_sha"][:10], "--store", office,
                        "--keep", "merge")  # fmt: skip
    assert code == 0 and "resolved (merge)" in out
    code, out, _ = _run(capsys, "conflicts", "--store", office)
    assert "no conflicts" in out
    with Store.open(office) as store:  # B's correction came last
        visit = store.visits()[0]["uuid"]
        assert store.stations(visit)[0]["reading"] == 0.4


def test_real_command_process(tmp_path):
    # The whole path a person uses: a separate `python -m stakeline` process per command.
    env = {**os.environ, "PYTHONPATH": str(ROOT)}

    def run(*argv):
        return subprocess.run(
            [sys.executable, "-m", "stakeline", *map(str, argv)],
            capture_output=True, text=True, cwd=ROOT, env=env, timeout=120,
        )  # fmt: skip

    assert run("demo", "--store", tmp_path / "f.db").returncode == 0
    assert run("pack", "--store", tmp_path / "f.db", "--outbox", tmp_path / "o").returncode == 0
    (tmp_path / "o" / "junk.stakeline-visit.json").write_text("{}")
    _trust(tmp_path / "office.db", tmp_path / "f.db")
    done = run("import", tmp_path / "o", "--into", tmp_path / "office.db")
    assert done.returncode == 1 and done.stderr == ""
    assert "junk.stakeline-visit.json: rejected: not a Stakeline visit package" in done.stdout
    listed = run("visits", "--store", tmp_path / "office.db", "--json")
    assert len(json.loads(listed.stdout)) == 6

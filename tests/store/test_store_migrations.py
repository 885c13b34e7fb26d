"""Forward migrations: a store file of every earlier schema version opens, keeps its data and
gains the newer tables; a failed step leaves the file at its old version, whole."""

from __future__ import annotations

import sqlite3

import pytest
import sqlite_utils
from custody_helpers import trust
from stakeline.store import Store
from stakeline.store import schema as store_schema
from stakeline.store.package import import_files, pack_visits
from stakeline.store.schema import LATEST, MIGRATIONS, migrate, schema_version

SITE, SECTION, VISIT = (
    "11111111-1111-4111-8111-111111111111",
    "22222222-2222-4222-8222-222222222222",
    "33333333-3333-4333-8333-333333333333",
)
T = "2026-04-14T10:00:00.000000+00:00"


def _old_store(path, version: int) -> None:
    """A store file at ``version`` holding one visit with two readings, written with plain SQL
    as the Stakeline of that version would have."""
    conn = sqlite3.connect(path, isolation_level=None)
    migrate(sqlite_utils.Database(conn), target=version)
    if version >= 1:
        stamps = (T, T, "old-tablet")
        conn.execute("INSERT INTO meta VALUES ('device_id', 'old-tablet')")
        conn.execute("INSERT INTO sites VALUES (?, 'Old site', '', '', ?, ?, ?)", (SITE, *stamps))
        conn.execute(
            "INSERT INTO sections VALUES (?, ?, 'XS1', 'L', 'R', 'left', 'BM', 100.0, 0,"
            " NULL, NULL, NULL, NULL, ?, ?, ?)",
            (SECTION, SITE, *stamps),
        )
        conn.execute(
            "INSERT INTO visits VALUES (?, ?, '2026-04-14', '[\"A\"]', 'm', 'line', 101.2, 101.2,"
            " NULL, NULL, NULL, '', '[]', '{}', ?, ?, ?, ?)",
            (VISIT, SECTION, T, *stamps),
        )
        for seq, (x, reading) in enumerate([(0.0, 0.25), (0.5, 0.405)], start=1):
            conn.execute(
                "INSERT INTO station_versions (uuid, station_uuid, visit_uuid, action, station,"
                " reading, code, note, seq, undoes, created, device)"
                " VALUES (?, ?, ?, 'add', ?, ?, '', '', ?, NULL, ?, 'old-tablet')",
                (f"4444444{seq}-4444-4444-8444-444444444444",
                 f"5555555{seq}-5555-4555-8555-555555555555", VISIT, x, reading, seq, T),
            )  # fmt: skip
    conn.close()


@pytest.mark.parametrize("version", range(LATEST))
def test_every_earlier_version_migrates_to_the_latest(tmp_path, version):
    path = tmp_path / f"v{version}.db"
    _old_store(path, version)
    with Store.open(path) as store:
        assert store.schema_version == LATEST
        store.set_setting("unit", "ft")  # version 2
        assert store.get_setting("unit") == "ft"
        assert store.conflicts() == []  # version 3
        if version >= 1:
            assert store.device_id == "old-tablet"
            visit = store.visit(VISIT)
            assert visit["finished"] and visit["station_count"] == 2
            assert [s["elevation"] for s in store.stations(VISIT)] == pytest.approx(
                [101.2 - 0.25, 101.2 - 0.405]
            )
            store.save_station(VISIT, 1.0, 0.58)  # the migrated file takes new readings
            assert store.visit(VISIT)["station_count"] == 3
            # ... and a gauging (version 6): a velocity at a vertical, a water-surface point
            store.save_velocity(VISIT, 0.5, "one-point", {"v06": {"velocity": 0.31}})
            store.add_water_surface_point(VISIT, -20.0, 100.95)
            assert [v["station"] for v in store.velocities(VISIT)] == [0.5]
            assert store.gauging_settings(VISIT)["method"] == "midsection"
    with Store.open(path) as store:  # and opens again without migrating twice
        assert store.schema_version == LATEST


@pytest.mark.parametrize("version", range(1, LATEST))
def test_migrated_store_packs_and_imports(tmp_path, version):
    _old_store(tmp_path / "old.db", version)
    with Store.open(tmp_path / "old.db") as field, Store.open(tmp_path / "office.db") as office:
        trust(office, field)
        pack_visits(field, tmp_path / "out")
        results = import_files(office, [tmp_path / "out"])
        assert [r["status"] for r in results] == ["imported"]
        assert office.stations(VISIT) == field.stations(VISIT)


def test_each_step_adds_what_it_says(tmp_path):
    conn = sqlite3.connect(tmp_path / "steps.db", isolation_level=None)
    db = sqlite_utils.Database(conn)
    migrate(db, target=1)
    assert {"sites", "sections", "visits", "station_versions"} <= set(db.table_names())
    assert "settings" not in db.table_names()
    migrate(db, target=2)
    assert "settings" in db.table_names()
    assert any(i.columns == ["section_uuid", "date"] for i in db["visits"].indexes)
    migrate(db, target=3)
    assert "packages" in db.table_names()
    migrate(db, target=4)
    assert any(i.columns == ["visit_uuid", "seq"] for i in db["station_versions"].indexes)
    assert schema_version(conn) == 4
    migrate(db, target=5)
    assert "devices" in db.table_names()
    assert "signer_key" in db["packages"].columns_dict
    assert schema_version(conn) == 5
    migrate(db, target=6)
    assert {"meters", "visit_meters", "velocity_versions", "water_surface_versions"} <= set(
        db.table_names()
    )
    assert any(i.columns == ["visit_uuid", "meter_uuid"] and i.unique
               for i in db["visit_meters"].indexes)  # fmt: skip
    assert any(i.columns == ["vertical_uuid"] for i in db["velocity_versions"].indexes)
    assert schema_version(conn) == 6 == LATEST
    conn.close()


def test_a_failed_step_leaves_the_old_version_whole(tmp_path, monkeypatch):
    path = tmp_path / "half.db"
    _old_store(path, 1)

    def broken(db):
        MIGRATIONS[1](db)  # creates the settings table...
        raise OSError("disk unplugged")  # ...then dies before the step completes

    monkeypatch.setattr(store_schema, "MIGRATIONS", [MIGRATIONS[0], broken, *MIGRATIONS[2:]])
    with pytest.raises(OSError):
        Store.open(path)
    conn = sqlite3.connect(path)
    assert schema_version(conn) == 1
    tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")}
    assert "settings" not in tables
    conn.close()
    monkeypatch.undo()
    with Store.open(path) as store:
        assert store.schema_version == LATEST
        assert store.visit(VISIT)["station_count"] == 2

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
    assert schema_version(conn) == 6
    migrate(db, target=7)  # demo marks: data only, no new tables
    assert schema_version(conn) == 7 == LATEST
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


def _unmark_demo(path) -> None:
    """Make ``path`` look like a store from before the app marked the demo: its visits without
    the ``demo`` mark, at schema version 6."""
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("UPDATE visits SET settings = '{}'")
    conn.execute("PRAGMA user_version = 6")
    conn.close()


def test_demo_visits_of_an_older_store_are_marked_and_never_packed(tmp_path):
    """Version 7: the invented demo's visits (its site and device ids, from
    demo_data/tessaly_creek.json) get the demo mark; the crew's visits -- even on a site of the
    same name, or a demo device id on another site -- do not, and the app never packs demo."""
    import json

    from stakeline.store.schema import DEMO_DEVICES, DEMO_SITE
    from stakeline.store.store import DEMO_PATH

    demo = json.loads(DEMO_PATH.read_text(encoding="utf-8"))
    assert DEMO_SITE == demo["site"]["name"]  # the frozen names are the demo's own
    assert set(DEMO_DEVICES) == {v["device"] for s in demo["sections"] for v in s["visits"]}
    path = tmp_path / "old-device.sqlite"
    with Store.open(path, device_id="dev-crew") as store:
        loaded = store.load_demo()
        site = next(s for s in store.sites() if s["name"] == DEMO_SITE)
        section = store.create_section(site["uuid"], "XS3 crew's own")
        own = store.start_visit(section["uuid"], "2026-12-01", unit="m", line_left=100.0,
                                line_right=100.0)  # fmt: skip
        store.save_station(own["uuid"], 0.0, 0.5)
        store.finish_visit(own["uuid"])
        other = store.create_section(store.create_site("Orrin Brook")["uuid"], "XS1")
        with store.as_device("tablet-01"):  # a real tablet that happens to share the id
            elsewhere = store.start_visit(other["uuid"], "2026-12-02", unit="m",
                                          line_left=100.0, line_right=100.0)  # fmt: skip
            store.save_station(elsewhere["uuid"], 0.0, 0.5)
            store.finish_visit(elsewhere["uuid"])
    _unmark_demo(path)
    with Store.open(path) as store:
        assert store.schema_version == LATEST
        marked = {v["uuid"] for v in store.visits() if store.visit(v["uuid"])["settings"]}
        assert marked == {v["uuid"] for v in loaded}
        assert store.visit(loaded[0]["uuid"])["settings"] == {"demo": True}
        packed = pack_visits(store, tmp_path / "outbox", skip_demo=True)
        assert sorted(r["visit"] for r in packed) == sorted([own["uuid"], elsewhere["uuid"]])

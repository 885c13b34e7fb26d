"""The store: records, reduction of readings, supersede-never-overwrite history, undo, settings."""

from __future__ import annotations

import json
import sqlite3
import uuid

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from stakeline.store import DEMO_PATH, Store, StoreError
from stakeline.store.schema import LATEST

STAMP_KEYS = {"uuid", "created", "modified", "device"}


@pytest.fixture
def store():
    s = Store.memory(device_id="tablet-T")
    yield s
    s.close()


@pytest.fixture
def visit(store):
    site = store.create_site("Test site", stream="Test stream")
    section = store.create_section(site["uuid"], "XS1", "L1", "R1", benchmark_elevation=100.0)
    return store.start_visit(
        section["uuid"], "2026-04-14", crew=["A", "B"], line_left=101.2, line_right=101.2
    )


def test_every_record_has_uuid_times_and_device(store, visit):
    station = store.save_station(visit["uuid"], 0.0, 0.25)
    level = store.add_water_level(visit["uuid"], 99.98, "2026-04-14T10:05")
    override = store.add_override(visit["uuid"], "spike", 0.0, "checked twice")
    records = [store.sites()[0], store.sections()[0], visit, station, level, override]
    for record in records:
        assert STAMP_KEYS <= set(record)
        uuid.UUID(record["uuid"])
        assert record["device"] == "tablet-T"
        assert record["created"] <= record["modified"]


def test_file_store_uses_wal_and_full_sync(tmp_path):
    with Store.open(tmp_path / "a.db") as store:
        assert store.conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert store.conn.execute("PRAGMA synchronous").fetchone()[0] == 2  # FULL
        assert store.schema_version == LATEST
        device = store.device_id
    with Store.open(tmp_path / "a.db") as again:
        assert again.device_id == device  # kept in the file
    with Store.open(tmp_path / "a.db", device_id="tablet-9") as named:
        assert named.device_id == "tablet-9"


def test_line_reduction_is_line_minus_reading(store, visit):
    # Level line and plumb: bed elevation = line elevation - reading (common practice).
    record = store.save_station(visit["uuid"], 2.0, 1.301, code="toe")
    assert record["elevation"] == pytest.approx(101.2 - 1.301, abs=1e-12)
    assert record["seq"] == 1 and record["code"] == "toe"


def test_sloped_line_interpolates_between_stakes(store, visit):
    # A line whose stake heights differ is straight between them; numpy.interp is the
    # independent reference for the straight-line height at each station.
    store.update_visit(visit["uuid"], line_right=101.3, stake_distance=12.0)
    stations = [0.0, 3.0, 6.5, 12.0]
    readings = [0.3, 1.1, 1.7, 0.4]
    for x, r in zip(stations, readings, strict=True):
        store.save_station(visit["uuid"], x, r)
    line = np.interp(stations, [0.0, 12.0], [101.2, 101.3])
    got = [s["elevation"] for s in store.stations(visit["uuid"])]
    np.testing.assert_allclose(got, line - np.array(readings), atol=1e-12)
    # Tape from the right stake: the right stake is at station 0.
    store.update_section(visit["section_uuid"], origin="right")
    line = np.interp(stations, [0.0, 12.0], [101.3, 101.2])
    got = [s["elevation"] for s in store.stations(visit["uuid"])]
    np.testing.assert_allclose(got, line - np.array(readings), atol=1e-12)


def test_rod_reduction_is_hi_minus_foresight(store, visit):
    # Differential levelling: HI = benchmark + backsight, elevation = HI - foresight
    # (standard levelling practice, e.g. any elementary surveying text; from memory).
    rod = store.start_visit(visit["section_uuid"], "2026-05-01", method="rod", backsight=1.512)
    record = store.save_station(rod["uuid"], 1.0, 2.512)
    assert record["elevation"] == pytest.approx(100.0 + 1.512 - 2.512, abs=1e-12)


def test_elevation_unknown_until_line_is_set(store, visit):
    bare = store.start_visit(visit["section_uuid"], "2026-05-02")
    assert store.save_station(bare["uuid"], 0.0, 0.5)["elevation"] is None
    store.update_visit(bare["uuid"], line_left=100.0)
    assert store.stations(bare["uuid"])[0]["elevation"] == pytest.approx(99.5)


def test_vertical_face_keeps_entry_order(store, visit):
    for x, r, code in [(12.6, 1.89, "toe"), (12.6, 0.28, "bank_top"), (12.0, 2.2, "")]:
        store.save_station(visit["uuid"], x, r, code=code)
    got = [(s["station"], s["code"]) for s in store.stations(visit["uuid"])]
    assert got == [(12.0, ""), (12.6, "toe"), (12.6, "bank_top")]


def test_correction_supersedes_and_keeps_history(store, visit):
    first = store.save_station(visit["uuid"], 1.0, 0.58)
    fixed = store.correct_station(first["uuid"], reading=0.85, note="misread")
    assert fixed["uuid"] == first["uuid"] and fixed["version"] != first["version"]
    assert fixed["elevation"] == pytest.approx(101.2 - 0.85)
    history = store.station_history(first["uuid"])
    assert [h["reading"] for h in history] == [0.58, 0.85]
    assert [h["action"] for h in history] == ["add", "correct"]
    assert store.stations(visit["uuid"])[0]["reading"] == 0.85
    raw = store.conn.execute("SELECT count(*) FROM station_versions").fetchone()[0]
    assert raw == 2  # nothing overwritten


def test_remove_and_undo(store, visit):
    a = store.save_station(visit["uuid"], 0.0, 0.3)
    b = store.save_station(visit["uuid"], 0.5, 0.4)
    store.correct_station(b["uuid"], reading=0.45)
    store.remove_station(a["uuid"])
    assert [s["uuid"] for s in store.stations(visit["uuid"])] == [b["uuid"]]
    undone = store.undo(visit["uuid"])  # brings a back
    assert undone["action"] == "remove" and undone["current"]["reading"] == 0.3
    undone = store.undo(visit["uuid"])  # takes b back to 0.4
    assert undone["current"]["reading"] == 0.4
    assert store.undo(visit["uuid"])["current"] is None  # b's entry undone
    assert store.undo(visit["uuid"])["current"] is None  # a's entry undone
    assert store.undo(visit["uuid"]) is None
    assert store.stations(visit["uuid"]) == []
    assert [h["undone"] for h in store.station_history(b["uuid"])] == [True, True]
    with pytest.raises(StoreError, match="removed or undone"):
        store.correct_station(a["uuid"], reading=1.0)


@settings(max_examples=40, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.sampled_from(["save", "save", "correct", "remove", "undo"]),
            st.floats(0, 50, allow_nan=False),
            st.floats(-1, 5, allow_nan=False),
            st.integers(0, 10),
        ),
        max_size=30,
    )
)
def test_history_replay_matches_a_simple_model(operations):
    # Model: a log of (station, state) changes; undo marks the latest live change undone; a
    # station's value is its latest live change.  The store must agree after any sequence.
    store = Store.memory()
    site = store.create_site("s")
    section = store.create_section(site["uuid"], "x")
    visit = store.start_visit(section["uuid"], "2026-01-01", line_left=10.0)["uuid"]
    log: list[list] = []  # [station_uuid, state or None, undone]

    def current():
        state = {}
        for sid, value, undone in log:
            if not undone:
                state[sid] = value
        return {k: v for k, v in state.items() if v is not None}

    for op, x, reading, pick in operations:
        live = sorted(current())
        if op == "save":
            record = store.save_station(visit, x, reading)
            log.append([record["uuid"], (x, reading), False])
        elif op in ("correct", "remove") and live:
            sid = live[pick % len(live)]
            if op == "correct":
                store.correct_station(sid, reading=reading)
                log.append([sid, (current()[sid][0], reading), False])
            else:
                store.remove_station(sid)
                log.append([sid, None, False])
        elif op == "undo":
            target = next((e for e in reversed(log) if not e[2]), None)
            result = store.undo(visit)
            assert (result is None) == (target is None)
            if target:
                target[2] = True
    got = {s["uuid"]: (s["station"], s["reading"]) for s in store.stations(visit)}
    assert got == current()
    assert store.visit(visit)["station_count"] == len(got)


def test_overrides_need_a_reason(store, visit):
    with pytest.raises(StoreError, match="reason"):
        store.add_override(visit["uuid"], "spike", 3.0, "  ")
    store.add_override(visit["uuid"], "gap", None, "bank too steep to read between")
    assert [o["kind"] for o in store.overrides(visit["uuid"])] == ["gap"]


def test_visit_fields_plan_and_finish(store, visit):
    store.set_planned_stations(visit["uuid"], [0, 0.5, 1.0])
    assert store.planned_stations(visit["uuid"]) == [0.0, 0.5, 1.0]
    store.add_water_level(visit["uuid"], 99.97, "2026-04-14T11:20")
    store.add_water_level(visit["uuid"], 99.98, "2026-04-14T10:05")
    updated = store.update_visit(visit["uuid"], notes="clear water", crew=["A"])
    assert updated["crew"] == ["A"] and updated["notes"] == "clear water"
    assert [w["elevation"] for w in updated["water_levels"]] == [99.98, 99.97]
    assert not updated["finished"]
    finished = store.finish_visit(visit["uuid"])
    assert finished["finished"] and finished["finished_at"]
    section = store.section(visit["section_uuid"])
    assert section["last_visit_date"] == "2026-04-14"
    assert section["last_visit_status"] == "finished"
    history = store.field_history(visit["uuid"])
    notes = [h for h in history if "notes" in h["after"]]
    assert notes[0]["before"]["notes"] == "" and notes[0]["after"]["notes"] == "clear water"
    assert history[-1]["after"]["finished"] == finished["finished_at"]
    assert all(STAMP_KEYS <= set(h) for h in history)


def test_unit_is_fixed_once_readings_exist(store, visit):
    store.update_visit(visit["uuid"], unit="ft")
    store.save_station(visit["uuid"], 0.0, 1.0)
    with pytest.raises(StoreError, match="unit cannot change"):
        store.update_visit(visit["uuid"], unit="m")
    assert store.visit(visit["uuid"])["unit"] == "ft"


@pytest.mark.parametrize(
    "call, message",
    [
        (lambda s, v: s.save_station(v["uuid"], float("nan"), 1.0), "finite"),
        (lambda s, v: s.save_station(v["uuid"], 1.0, "abc"), "number"),
        (lambda s, v: s.save_station("nope", 1.0, 1.0), "no visit"),
        (lambda s, v: s.start_visit(v["section_uuid"], "14/04/2026"), "date"),
        (lambda s, v: s.start_visit(v["section_uuid"], "2026-04-14", unit="yd"), "unit"),
        (lambda s, v: s.start_visit(v["section_uuid"], "2026-04-14", method="gps"), "method"),
        (lambda s, v: s.update_visit(v["uuid"], colour="red"), "cannot set"),
        (lambda s, v: s.update_section(v["section_uuid"], origin="middle"), "origin"),
        (lambda s, v: s.update_section(v["section_uuid"], left_coordinates=(200, 0)), "degrees"),
        (lambda s, v: s.create_site(""), "name"),
        (lambda s, v: s.save_station(v["uuid"], 1.0, 1.0, note="x" * 20_000), "longer"),
    ],
)
def test_bad_input_is_a_one_line_store_error(store, visit, call, message):
    before = store.conn.execute("SELECT count(*) FROM station_versions").fetchone()[0]
    with pytest.raises(StoreError, match=message) as info:
        call(store, visit)
    assert "\n" not in str(info.value)
    assert isinstance(info.value, ValueError)
    assert store.conn.execute("SELECT count(*) FROM station_versions").fetchone()[0] == before


def test_settings_hold_json_values(store):
    assert store.get_setting("unit", "m") == "m"
    store.set_setting("unit", "ft")
    store.set_setting("tolerances", {"line": 0.005})
    assert store.get_setting("unit") == "ft"
    assert store.get_setting("tolerances") == {"line": 0.005}
    with pytest.raises(StoreError):
        store.set_setting("bad", object())


def test_demo_matches_its_json(store):
    demo = json.loads(DEMO_PATH.read_text())
    visits = store.load_demo()
    expected = [v for s in demo["sections"] for v in s["visits"]]
    assert len(visits) == len(expected) == 6
    for got, spec in zip(visits, expected, strict=True):
        assert got["finished"] and got["date"] == spec["date"]
        assert got["device"] == spec["device"] and got["unit"] == spec["unit"]
        assert got["station_count"] == len(spec["stations"])
        assert [w["elevation"] for w in got["water_levels"]] == [
            w["elevation"] for w in spec["water_levels"]
        ]
        stations = store.stations(got["uuid"])
        want = sorted(spec["stations"], key=lambda p: p["station"])  # stable, like the store
        assert [s["reading"] for s in stations] == [p["reading"] for p in want]
        np.testing.assert_allclose(
            [s["elevation"] for s in stations],
            [spec["line_left"] - p["reading"] for p in want],
            atol=1e-12,
        )
    xs1 = [v for v in store.visits() if v["section"] == "XS1 riffle"]
    assert len(xs1) == 5 and len({v["section_uuid"] for v in xs1}) == 1


def test_visits_list_keys(store):
    store.load_demo()
    for row in store.visits():
        assert {"uuid", "site", "section", "date", "station_count", "finished"} <= set(row)


def test_foreign_files_are_refused(tmp_path):
    text = tmp_path / "notes.db"
    text.write_text("shopping list\n" * 100)
    with pytest.raises(StoreError, match="not a Stakeline store"):
        Store.open(text)
    other = tmp_path / "other.db"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE invoices (id INTEGER)")
    conn.commit()
    conn.close()
    with pytest.raises(StoreError, match="not a Stakeline store"):
        Store.open(other)
    with pytest.raises(StoreError, match="folder"):
        Store.open(tmp_path)


def test_newer_schema_is_refused(tmp_path):
    path = tmp_path / "future.db"
    Store.open(path).close()
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA user_version = {LATEST + 1}")
    conn.close()
    with pytest.raises(StoreError, match="newer"):
        Store.open(path)


def test_failed_change_leaves_nothing_behind(store, visit):
    with pytest.raises(RuntimeError):
        with store.transaction():
            store.save_station(visit["uuid"], 0.0, 1.0)
            raise RuntimeError("power cut")
    assert store.stations(visit["uuid"]) == []


def test_close_does_not_wait_for_another_reader(tmp_path):
    import time

    path = tmp_path / "two.db"
    main_store = Store.open(path)
    main_store.load_demo()
    reader = main_store.conn.execute("SELECT * FROM station_versions")  # an open read
    reader.fetchone()
    started = time.perf_counter()
    Store.open(path).close()  # e.g. the package writer's own connection on a worker thread
    assert time.perf_counter() - started < 5
    reader.fetchall()
    main_store.close()
    with Store.open(path) as again:
        assert len(again.visits()) == 6


def test_new_uuids_are_unique_random_version_4():
    from stakeline.store.values import new_uuid

    made = [uuid.UUID(new_uuid()) for _ in range(5000)]
    assert len(set(made)) == len(made)
    # RFC 4122: version 4 (random), variant bits 10.
    assert all(u.version == 4 and u.variant == uuid.RFC_4122 for u in made)


def test_checkpoint_empties_the_journal(tmp_path):
    # SQLite's WAL mode: wal_checkpoint(TRUNCATE) copies the journal into the main file and
    # truncates the -wal file to zero bytes (sqlite.org, "PRAGMA wal_checkpoint").
    import os
    import shutil

    path = tmp_path / "device.sqlite"
    wal = tmp_path / "device.sqlite-wal"
    with Store.open(path) as store:
        store.load_demo()
        visit = store.visits()[0]["uuid"]
        store.add_water_level(visit, 99.5)
        assert wal.exists() and os.path.getsize(wal) > 0  # the writes sit in the journal
        assert store.checkpoint() is True
        assert not wal.exists() or os.path.getsize(wal) == 0
        store.save_station(visit, 99.0, 0.5)  # the store keeps working after a checkpoint
        assert store.checkpoint() is True
        assert not wal.exists() or os.path.getsize(wal) == 0
        levels = len(store.visit(visit)["water_levels"])
        # The main file alone (copied without any journal) now holds every write.
        shutil.copyfile(path, tmp_path / "copy.sqlite")
    plain = sqlite3.connect(tmp_path / "copy.sqlite")
    try:
        query = "SELECT count(*) FROM water_levels WHERE visit_uuid = ?"
        assert plain.execute(query, [visit]).fetchone()[0] == levels
        query = "SELECT count(*) FROM station_versions WHERE visit_uuid = ? AND station = 99.0"
        assert plain.execute(query, [visit]).fetchone()[0] == 1
    finally:
        plain.close()


def test_checkpoint_of_memory_and_closed_stores():
    store = Store.memory()
    assert store.checkpoint() is True  # no journal file: nothing to do
    store.close()
    with pytest.raises(StoreError, match="closed"):
        store.checkpoint()

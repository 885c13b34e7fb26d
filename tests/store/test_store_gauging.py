"""The store's gauging records: meters, velocities at the verticals, water-surface points and
the gauging's settings -- saved at once, never overwritten, undoable, with history."""

from __future__ import annotations

import pytest
from stakeline.store import Store, StoreError
from stakeline.store.columns import GAUGING_DEFAULTS

VERTICAL_KEYS = {"uuid", "version", "visit_uuid", "action", "station", "method", "points",
                 "meter_uuid", "angle", "depth", "note", "seq", "removed", "created",
                 "modified", "device"}  # fmt: skip
POINT_KEYS = {"uuid", "version", "visit_uuid", "action", "distance", "elevation", "note", "seq",
              "removed", "created", "modified", "device"}  # fmt: skip
METER_KEYS = {"uuid", "serial", "kind", "unit", "a", "b", "split", "a_high", "b_high", "lowest",
              "highest", "note", "created", "modified", "device"}  # fmt: skip


@pytest.fixture
def store(tmp_path):
    s = Store.open(tmp_path / "gauging.db", device_id="tablet-G")
    yield s
    s.close()


@pytest.fixture
def visit(store):
    site = store.create_site("Test site")
    section = store.create_section(site["uuid"], "XS1", benchmark_elevation=100.0)
    return store.start_visit(section["uuid"], "2026-06-01", line_left=101.0, line_right=101.0)[
        "uuid"
    ]


@pytest.fixture
def meter(store):
    return store.add_meter("R-1", "rotating", 0.012, 0.648, lowest=0.03, highest=3.5)


def one_point(v: float) -> dict:
    return {"v06": {"velocity": v}}


# --- meters ----------------------------------------------------------------------------------
def test_meters_are_kept_with_their_rating(store, meter):
    direct = store.add_meter("E-4", "electromagnetic", lowest=0.0, highest=4.0, unit="ft")
    assert set(meter) == METER_KEYS and meter["device"] == "tablet-G"
    assert (meter["a"], meter["b"], meter["lowest"], meter["highest"]) == (0.012, 0.648, 0.03, 3.5)
    assert direct["a"] is None and direct["unit"] == "ft"
    assert [m["serial"] for m in store.meters()] == ["E-4", "R-1"]
    assert store.meter(meter["uuid"]) == meter
    two = store.add_meter("R-2", "rotating", 0.01, 0.6, split=2.0, a_high=0.0, b_high=0.65)
    assert (two["split"], two["a_high"], two["b_high"]) == (2.0, 0.0, 0.65)


@pytest.mark.parametrize(
    "args, kwargs, message",
    [
        (("R-9", "rotating"), {}, "needs its rating"),
        (("R-9", "rotating", 0.01, 0.0), {}, "b must be positive"),
        (("R-9", "rotating", 0.01, 0.6), {"split": 2.0}, "second rating line"),
        (("E-9", "acoustic", 0.01, 0.6), {}, "no a or b"),
        (("E-9", "acoustic"), {"lowest": 2.0, "highest": 1.0}, "rated range"),
        (("", "acoustic"), {}, "serial"),
        (("R-9", "propeller", 0.0, 0.6), {}, "meter kind"),
        (("R-9", "rotating", "0.01", 0.6), {}, "must be a number"),
        (("R-9", "rotating", 0.01, float("nan")), {}, "number"),
    ],
)
def test_a_meter_that_cannot_be_used_is_refused(store, args, kwargs, message):
    with pytest.raises(StoreError, match=message):
        store.add_meter(*args, **kwargs)
    assert store.meters() == []


# --- velocities ------------------------------------------------------------------------------
def test_each_velocity_is_committed_before_the_method_returns(store, visit, tmp_path):
    saved = store.save_velocity(visit, 2.0, "one-point", one_point(0.41), note="cobbles")
    assert set(saved) == VERTICAL_KEYS and saved["action"] == "add" and saved["seq"] == 1
    with Store.open(tmp_path / "gauging.db") as other:  # another connection sees it at once
        assert [v["points"] for v in other.velocities(visit)] == [one_point(0.41)]


def test_corrections_supersede_and_undo_walks_back(store, visit, meter):
    first = store.save_velocity(visit, 2.0, "two-point", {"v02": {"revolutions": 31, "seconds": 40}},
                                meter_uuid=meter["uuid"])  # fmt: skip
    points = {**first["points"], "v08": {"revolutions": 22, "seconds": 40}}
    second = store.correct_velocity(first["uuid"], points=points, angle=12.0)
    assert second["uuid"] == first["uuid"] and second["version"] != first["version"]
    assert store.velocities(visit)[0]["points"] == points and second["angle"] == 12.0
    other = store.save_velocity(visit, 1.6, "one-point", one_point(0.2), depth=0.31)
    assert [v["station"] for v in store.velocities(visit)] == [1.6, 2.0]  # by station
    undone = store.undo_velocity(visit)  # the vertical at 1.6 goes
    assert undone["uuid"] == other["uuid"] and undone["current"] is None
    undone = store.undo_velocity(visit)  # then the correction at 2.0
    assert undone["current"]["points"] == first["points"] and undone["current"]["angle"] is None
    history = store.velocity_history(first["uuid"])
    assert [(h["action"], h["undone"]) for h in history] == [("add", False), ("correct", True)]
    assert store.undo_velocity(visit)["current"] is None
    assert store.undo_velocity(visit) is None  # nothing left
    assert store.velocities(visit) == []


def test_remove_is_a_version_too(store, visit):
    saved = store.save_velocity(visit, 3.0, "surface", {"surface": {"velocity": 0.8}})
    removed = store.remove_velocity(saved["uuid"])
    assert removed["removed"] and store.velocities(visit) == []
    with pytest.raises(StoreError, match="removed or undone"):
        store.correct_velocity(saved["uuid"], note="again")
    store.undo_velocity(visit)
    assert [v["uuid"] for v in store.velocities(visit)] == [saved["uuid"]]


def test_one_vertical_per_station(store, visit):
    saved = store.save_velocity(visit, 2.0, "one-point", one_point(0.4))
    with pytest.raises(StoreError, match="already has a velocity"):
        store.save_velocity(visit, 2.0, "one-point", one_point(0.5))
    other = store.save_velocity(visit, 2.4, "one-point", one_point(0.5))
    with pytest.raises(StoreError, match="already has a velocity"):
        store.correct_velocity(other["uuid"], station=2.0)
    assert store.correct_velocity(saved["uuid"], station=2.0)["station"] == 2.0  # itself: fine


def test_a_meter_is_recorded_with_the_first_visit_that_uses_it(store, visit, meter):
    counted = {"v06": {"revolutions": 25, "seconds": 40}}
    store.save_velocity(visit, 2.0, "one-point", counted, meter_uuid=meter["uuid"])
    store.save_velocity(visit, 2.4, "one-point", counted, meter_uuid=meter["uuid"])
    (copy,) = store.visit_meters(visit)
    assert copy["meter_uuid"] == meter["uuid"] and copy["visit_uuid"] == visit
    assert {k: copy[k] for k in ("serial", "kind", "unit", "a", "b", "lowest", "highest")} == {
        k: meter[k] for k in ("serial", "kind", "unit", "a", "b", "lowest", "highest")
    }
    assert store.gauging(visit)["meters"] == [copy]


@pytest.mark.parametrize(
    "method, points, kwargs, message",
    [
        ("one-point", {"v02": {"velocity": 0.4}}, {}, "not read by the one-point method"),
        ("two-point", {"v02": {"velocity": 0.4, "revolutions": 3}}, {}, "holds a velocity"),
        ("one-point", {"v06": {"revolutions": 30, "seconds": 40}}, {}, "need the meter"),
        ("one-point", {"v06": {"revolutions": -3, "seconds": 40}}, {"meter": True}, "negative"),
        ("one-point", {"v06": {"revolutions": 3, "seconds": 0}}, {"meter": True}, "positive"),
        ("one-point", {"v06": {"velocity": "0.4"}}, {}, "must be a number"),
        ("one-point", {"v06": {"velocity": float("inf")}}, {}, "finite"),
        ("one-point", one_point(0.4), {"angle": 90.0}, "between -90° and 90°"),
        ("one-point", one_point(0.4), {"depth": -0.1}, "negative"),
        ("six-point", one_point(0.4), {}, "method"),
        ("one-point", [0.4], {}, "readings by point"),
    ],
)
def test_a_vertical_that_cannot_be_used_is_refused(store, visit, meter, method, points, kwargs,
                                                   message):  # fmt: skip
    if kwargs.pop("meter", False):
        kwargs["meter_uuid"] = meter["uuid"]
    with pytest.raises(StoreError, match=message):
        store.save_velocity(visit, 2.0, method, points, **kwargs)
    assert store.velocities(visit) == [] and store.visit_meters(visit) == []


def test_revolutions_need_a_rotating_meter_and_a_known_one(store, visit):
    direct = store.add_meter("E-4", "electromagnetic")
    counted = {"v06": {"revolutions": 25, "seconds": 40}}
    with pytest.raises(StoreError, match="reads velocities directly"):
        store.save_velocity(visit, 2.0, "one-point", counted, meter_uuid=direct["uuid"])
    with pytest.raises(StoreError, match="no meter with id"):
        store.save_velocity(visit, 2.0, "one-point", counted, meter_uuid="nonsense")
    assert store.velocities(visit) == [] and store.visit_meters(visit) == []  # nothing half-kept
    with pytest.raises(StoreError, match="no visit"):
        store.save_velocity("no-such-visit", 2.0, "one-point", one_point(0.3))


# --- water-surface points and settings -------------------------------------------------------
def test_water_surface_points_with_undo_and_history(store, visit):
    up = store.add_water_surface_point(visit, -30.0, 100.11, "at the fence")
    down = store.add_water_surface_point(visit, 25.0, 99.93)
    assert set(up) == POINT_KEYS
    fixed = store.correct_water_surface_point(down["uuid"], elevation=99.94)
    assert [p["elevation"] for p in store.water_surface_points(visit)] == [100.11, 99.94]
    assert store.undo_water_surface_point(visit)["current"]["elevation"] == 99.93
    history = store.water_surface_history(fixed["uuid"])
    assert [(h["action"], h["undone"]) for h in history] == [("add", False), ("correct", True)]
    store.remove_water_surface_point(up["uuid"])
    assert [p["uuid"] for p in store.water_surface_points(visit)] == [down["uuid"]]
    with pytest.raises(StoreError, match="distance along the stream"):
        store.add_water_surface_point(visit, "upstream", 100.0)


def test_gauging_settings_live_in_the_visit_settings_with_history(store, visit):
    assert store.gauging_settings(visit) == GAUGING_DEFAULTS
    store.update_visit(visit, settings={"demo": True})
    assert store.set_gauging_settings(visit, method="meansection") == {
        "method": "meansection", "surface_coefficient": 0.85,
    }  # fmt: skip
    store.set_gauging_settings(visit, surface_coefficient=0.9)
    assert store.visit(visit)["settings"] == {
        "demo": True, "gauging": {"method": "meansection", "surface_coefficient": 0.9},
    }  # fmt: skip
    assert len(store.field_history(visit)) == 3  # every change logged with the visit's edits
    for bad, message in (({"method": "thirds"}, "gauging method"),
                         ({"surface_coefficient": 0.0}, "surface coefficient")):  # fmt: skip
        with pytest.raises(StoreError, match=message):
            store.set_gauging_settings(visit, **bad)
    assert store.gauging_settings(visit)["surface_coefficient"] == 0.9


def test_the_whole_gauging_of_a_visit(store, visit):
    store.save_velocity(visit, 2.0, "one-point", one_point(0.4))
    store.add_water_surface_point(visit, -10.0, 100.02)
    found = store.gauging(visit)
    assert set(found) == {"settings", "verticals", "meters", "water_surface"}
    assert [v["station"] for v in found["verticals"]] == [2.0]
    assert [p["distance"] for p in found["water_surface"]] == [-10.0]


def test_salvage_copies_the_gauging_records(tmp_path):
    from stakeline.store import salvage

    with Store.open(tmp_path / "field.db") as field:
        field.load_demo()
        gauged = {v["uuid"]: field.gauging(v["uuid"]) for v in field.visits()}
    report = salvage(tmp_path / "field.db", tmp_path / "saved.db")
    for table in ("meters", "visit_meters", "velocity_versions", "water_surface_versions"):
        assert report["tables"][table]["copied"] > 0 and report["tables"][table]["unreadable"] == 0
    with Store.open(tmp_path / "saved.db") as saved:
        assert {uuid: saved.gauging(uuid) for uuid in gauged} == gauged
        assert len(saved.meters()) == 2

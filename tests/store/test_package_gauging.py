"""Gauging records in visit packages (format 3): they arrive whole in the office, merge by
history like station versions, conflict like them, and are checked strictly at import; format 2
packages (no gauging records) are still read."""

from __future__ import annotations

import hashlib
import json
import shutil

import pytest
from custody_helpers import trust
from stakeline.store import Store
from stakeline.store.package import (
    FORMAT,
    PREVIOUS_FORMAT,
    import_file,
    import_files,
    pack_visits,
    parse_package,
)
from stakeline.store.records import GAUGING_LISTS

SPRING = "2026-04-14"


def _riffle(store: Store, date: str = SPRING) -> str:
    return next(v["uuid"] for v in store.visits() if v["section"] == "XS1 riffle"
                and v["date"] == date)  # fmt: skip


def _gauging_of(store: Store, visit: str) -> dict:
    found = store.gauging(visit)
    found["history"] = [store.velocity_history(v["uuid"]) for v in found["verticals"]]
    found["surface_history"] = [
        store.water_surface_history(p["uuid"]) for p in found["water_surface"]
    ]
    return found


def _package(store: Store, records: dict, fmt: str = FORMAT) -> bytes:
    """Package bytes of ``records`` signed by ``store``'s key under format tag ``fmt`` (as the
    package module documents: signature over the text with sha256 and signature blanked)."""
    key = store.signing_key()
    manifest = {"created": "2026-04-15T08:00:00+00:00", "device": "tablet-A", "format": fmt,
                "key": bytes(key.verify_key).hex(), "sha256": "0" * 64,
                "signature": "0" * 128, "visit": records["visit"]["uuid"]}  # fmt: skip

    def text() -> bytes:
        return (json.dumps({"manifest": manifest, "records": records}, sort_keys=True,
                           separators=(",", ":")) + "\n").encode("ascii")  # fmt: skip

    manifest["signature"] = key.sign(text()).signature.hex()
    manifest["sha256"] = hashlib.sha256(text()).hexdigest()
    return text()


def test_a_gauged_visit_arrives_whole(field, office, tmp_path):
    results = pack_visits(field, tmp_path / "out")
    visit = _riffle(field)
    path = next(r["path"] for r in results if r["visit"] == visit)
    manifest, records = parse_package(open(path, "rb").read())
    assert manifest["format"] == FORMAT == "stakeline-visit/3"
    assert all(records[kind] for kind in GAUGING_LISTS)
    assert {r["status"] for r in import_files(office, [tmp_path / "out"])} == {"imported"}
    for listed in field.visits():
        uuid = listed["uuid"]
        assert _gauging_of(office, uuid) == _gauging_of(field, uuid)
    assert office.visit_meters(visit)[0]["serial"] == "TC-R17"  # the rating travelled with it


def test_gauging_changes_update_the_office_and_conflict_like_readings(field, office, tmp_path):
    import_files(office, [pack_visits(field, tmp_path / "out") and tmp_path / "out"])
    visit = _riffle(field)
    field.close()
    shutil.copy(tmp_path / "field.db", tmp_path / "second.db")
    a = Store.open(tmp_path / "field.db")
    b = Store.open(tmp_path / "second.db", device_id="tablet-B")
    try:
        vertical = a.velocities(visit)[5]
        a.correct_velocity(vertical["uuid"], note="re-read: weed on the cups")
        trust(office, a, b)
        pack_visits(a, tmp_path / "from-a")
        b.add_water_surface_point(visit, 50.0, 99.80)
        b.undo_velocity(visit)  # the last vertical read goes
        pack_visits(b, tmp_path / "from-b")
    finally:
        a.close()
        b.close()
    statuses = [r["status"] for r in import_files(office, [tmp_path / "from-a"])]
    assert statuses.count("updated") == 1  # only the one visit changed
    assert office.velocities(visit)[5]["note"] == "re-read: weed on the cups"
    results = import_files(office, [tmp_path / "from-b"])
    assert [r["status"] for r in results].count("conflict") == 1
    (entry,) = office.conflicts()
    office.resolve_conflict(entry["file_sha"], keep="merge")
    # Both devices' changes are kept: A's note, B's water-surface point and B's undo.
    assert any(p["distance"] == 50.0 for p in office.water_surface_points(visit))
    notes = [v["note"] for v in office.velocities(visit)]
    assert "re-read: weed on the cups" in notes
    assert len(office.velocities(visit)) == len(field_velocities(tmp_path, visit)) - 1


def field_velocities(tmp_path, visit: str) -> list[dict]:
    with Store.open(tmp_path / "field.db") as again:
        return again.velocities(visit)


def test_format_2_packages_without_gauging_still_import(field, office):
    records = field.visit_records(_riffle(field))
    for kind in GAUGING_LISTS:
        del records[kind]
    data = _package(field, records, PREVIOUS_FORMAT)
    assert parse_package(data)[0]["format"] == PREVIOUS_FORMAT
    path = office.path.replace("office.db", "v2.stakeline-visit.json")
    open(path, "wb").write(data)
    assert import_file(office, path)["status"] == "imported"
    assert office.stations(_riffle(field)) == field.stations(_riffle(field))
    assert office.velocities(_riffle(field)) == []


def _forge(field, tmp_path, change, fmt=FORMAT):
    records = field.visit_records(_riffle(field))
    change(records)
    path = tmp_path / "forged.stakeline-visit.json"
    path.write_bytes(_package(field, records, fmt))
    return path


def _first(records, kind):
    return records[kind][0]


@pytest.mark.parametrize(
    "change, fmt, reason",
    [
        (lambda r: None, PREVIOUS_FORMAT, "not those of a visit package"),
        (lambda r: r.pop("velocity_versions"), FORMAT, "not those of a visit package"),
        (lambda r: _first(r, "visit_meters").update(b=0.0), FORMAT, "b must be positive"),
        (lambda r: _first(r, "visit_meters").update(kind="propeller"), FORMAT, "bad kind"),
        (
            lambda r: r["visit_meters"].append(
                dict(_first(r, "visit_meters"), uuid="0" * 8 + "-0000-4000-8000-" + "0" * 12)
            ),
            FORMAT,
            "already has",
        ),  # fmt: skip
        (lambda r: r["visit_meters"].clear(), FORMAT, "does not carry"),
        (
            lambda r: _first(r, "visit_meters").update(kind="acoustic", a=None, b=None),
            FORMAT,
            "counts revolutions on a meter that reads velocities",
        ),  # fmt: skip
        (lambda r: _first(r, "velocity_versions").update(method="six-point"), FORMAT, "method"),
        (
            lambda r: _first(r, "velocity_versions")["points"].update(v02={"velocity": 1.0}),
            FORMAT,
            "not read by the one-point method",
        ),  # fmt: skip
        (
            lambda r: _first(r, "velocity_versions")["points"]["v06"].update(seconds=0),
            FORMAT,
            "counting time",
        ),  # fmt: skip
        (lambda r: _first(r, "velocity_versions").update(angle=95.0), FORMAT, "angle"),
        (lambda r: _first(r, "velocity_versions").update(station=None), FORMAT, "station"),
        (lambda r: _first(r, "velocity_versions").update(action="undo"), FORMAT, "undo"),
        (
            lambda r: _first(r, "water_surface_versions").update(elevation=None),
            FORMAT,
            "water-surface elevation",
        ),  # fmt: skip
        (
            lambda r: _first(r, "water_surface_versions").update(visit_uuid=r["site"]["uuid"]),
            FORMAT,
            "another visit",
        ),  # fmt: skip
        (
            lambda r: r["visit"].update(settings={"gauging": {"method": "thirds"}}),
            FORMAT,
            "gauging method",
        ),  # fmt: skip
    ],
)
def test_bad_gauging_records_are_rejected_and_change_nothing(
    field, office, tmp_path, change, fmt, reason
):
    before = list(office.conn.iterdump())
    result = import_file(office, _forge(field, tmp_path, change, fmt))
    assert result["status"] == "rejected" and reason in result["message"], result
    assert "\n" not in result["message"]
    assert list(office.conn.iterdump()) == before

"""Visit packages: a survey arrives whole in the office; damage of any kind is detected and
changes nothing; import is idempotent; edits on two devices are kept and reported."""

from __future__ import annotations

import json
import os
import random
import shutil
from pathlib import Path

import pytest
from custody_helpers import trust
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stakeline.store import Store, StoreError, package
from stakeline.store.package import (
    MAX_BYTES,
    SUFFIX,
    PackageError,
    build_package,
    import_file,
    import_files,
    pack_visits,
    parse_package,
)


def _dump(store: Store) -> list[str]:
    """Every row of the store, to prove an import changed nothing."""
    return list(store.conn.iterdump())


@pytest.fixture
def outbox(field, tmp_path):
    pack_visits(field, tmp_path / "outbox")
    return tmp_path / "outbox"


def _one(outbox: Path, section: str = "xs2-pool") -> Path:
    return next(p for p in sorted(outbox.iterdir()) if section in p.name)


def test_survey_arrives_whole_in_the_office(field, office, outbox):
    results = import_files(office, [outbox])
    assert [r["status"] for r in results] == ["imported"] * 6
    field.correct_station(field.stations(field.visits()[0]["uuid"])[3]["uuid"], reading=0.6)
    field.add_override(field.visits()[0]["uuid"], "spike", 1.5, "re-read, bed is rocky")
    pack_visits(field, outbox)
    assert [r["status"] for r in import_files(office, [outbox])] == ["updated"] + ["present"] * 5
    assert office.sites() == field.sites()
    assert office.sections() == field.sections()
    for visit in field.visits():
        uuid = visit["uuid"]
        assert office.visit(uuid) == field.visit(uuid)
        assert office.stations(uuid) == field.stations(uuid)
        assert office.overrides(uuid) == field.overrides(uuid)
        for station in field.stations(uuid):
            history = field.station_history(station["uuid"])
            assert office.station_history(station["uuid"]) == history


def test_import_twice_changes_nothing_and_says_so(office, outbox):
    import_files(office, [outbox])
    before = _dump(office)
    again = import_files(office, [outbox])
    assert {r["status"] for r in again} == {"present"}
    assert all("already imported" in r["message"] for r in again)
    assert _dump(office) == before


def test_repacked_unchanged_visit_is_not_rewritten(field, outbox):
    stamps = {p: p.stat().st_mtime_ns for p in outbox.iterdir()}
    assert {r["status"] for r in pack_visits(field, outbox)} == {"unchanged"}
    assert {p: p.stat().st_mtime_ns for p in outbox.iterdir()} == stamps
    assert all(p.name.endswith(SUFFIX) for p in outbox.iterdir())  # no temporary files left


def test_same_content_packed_again_is_present(field, office, outbox, tmp_path):
    import_files(office, [outbox])
    pack_visits(field, tmp_path / "second")  # new manifest times, same records
    results = import_files(office, [tmp_path / "second"])
    assert {r["status"] for r in results} == {"present"}


def test_every_flipped_byte_is_detected(outbox):
    data = _one(outbox).read_bytes()
    parse_package(data)  # the intact file is fine
    rng = random.Random(4)
    flips = [(i, data[i] ^ 0x01) for i in range(len(data))]
    flips += [(i, (data[i] + rng.randrange(1, 256)) % 256) for i in range(0, len(data), 3)]
    missed = []
    for position, value in flips:
        damaged = bytearray(data)
        damaged[position] = value
        try:
            parse_package(bytes(damaged))
            missed.append(position)
        except PackageError:
            pass
    assert missed == []


def test_damaged_files_leave_the_office_unchanged(office, outbox, tmp_path):
    import_files(office, [p for p in outbox.iterdir() if "xs2" not in p.name])
    before = _dump(office)
    data = _one(outbox).read_bytes()
    target = tmp_path / "damaged.stakeline-visit.json"
    for position in range(0, len(data), 41):
        damaged = bytearray(data)
        damaged[position] ^= 0x04
        target.write_bytes(bytes(damaged))
        result = import_file(office, target)
        assert result["status"] == "rejected", position
        assert "\n" not in result["message"]
    assert _dump(office) == before


def test_truncated_files_are_rejected(outbox):
    data = _one(outbox).read_bytes()
    for length in [*range(1, len(data), 97), len(data) - 2, len(data) - 1]:
        with pytest.raises(PackageError):
            parse_package(data[:length])
    with pytest.raises(PackageError, match="truncated"):
        parse_package(data[: len(data) // 2])


@pytest.mark.parametrize(
    "content, reason",
    [
        (b"", "empty"),
        (b"\x89PNG\r\n\x1a\n" + bytes(200), "not a Stakeline"),
        (b"PK\x03\x04" + bytes(200), "not a Stakeline"),
        (b"station,elevation\n0,100\n", "not a Stakeline"),
        (Path(__file__).read_bytes(), "not a Stakeline"),
        (b'{"manifest":' + b"[" * 100_000 + b"]" * 100_000 + b"}\n", "damaged"),
        (b'{"manifest":{"format":"other/9"},"records":{}}\n', "manifest"),
    ],
)
def test_empty_and_foreign_files_are_rejected(office, tmp_path, content, reason):
    path = tmp_path / "foreign.stakeline-visit.json"
    path.write_bytes(content)
    before = _dump(office)
    result = import_file(office, path)
    assert result["status"] == "rejected" and reason in result["message"]
    assert _dump(office) == before


def test_demo_json_is_not_a_package(office):
    from stakeline.store import DEMO_PATH

    assert import_file(office, DEMO_PATH)["status"] == "rejected"


def test_size_limit_stops_huge_files(office, tmp_path):
    huge = tmp_path / "huge.stakeline-visit.json"
    with open(huge, "wb") as handle:
        handle.write(b'{"manifest":')
        handle.truncate(MAX_BYTES + 10)  # sparse: no need to write 8 MiB
    result = import_file(office, huge)
    assert result["status"] == "rejected" and "limit" in result["message"]


def _resign(path: Path, change, signer: Store) -> bytes:
    """A tampered package with a freshly computed checksum and signature (what a forger holding
    a trusted device's key could make)."""
    document = json.loads(path.read_bytes())
    change(document["records"])
    manifest = document["manifest"]
    return build_package(
        document["records"], manifest["device"], manifest["created"], signer.signing_key()
    )


@pytest.mark.parametrize(
    "change, reason",
    [
        (lambda r: r["station_versions"][0].update(visit_uuid=r["site"]["uuid"]), "another"),
        (lambda r: r["station_versions"][0].update(reading="1; DROP TABLE sites"), "bad"),
        (lambda r: r["station_versions"][0].update({"x) VALUES (1); --": 1}), "fields"),
        (lambda r: r["visit"].update(unit="furlong"), "bad unit"),
        (lambda r: r["visit"].update(uuid="../../etc/passwd"), "no visit"),
        (lambda r: r["section"].update(site_uuid=r["visit"]["uuid"]), "belong"),
        (lambda r: r["edits"].append(dict(r["edits"][0], uuid=r["site"]["uuid"])), "repeats"),
        (lambda r: r.pop("overrides"), "records"),
    ],
)
def test_tampered_records_are_rejected_even_with_a_valid_checksum(
    field, office, outbox, tmp_path, change, reason
):
    forged = tmp_path / "forged.stakeline-visit.json"
    forged.write_bytes(_resign(_one(outbox), change, field))
    before = _dump(office)
    result = import_file(office, forged)
    assert result["status"] == "rejected" and reason in result["message"], result
    assert _dump(office) == before


def test_record_clashing_with_another_visit_is_rejected(field, office, outbox, tmp_path):
    import_files(office, [outbox])
    other = json.loads(_one(outbox, "2026-09-22").read_bytes())["records"]
    stolen = other["station_versions"][0]["uuid"]

    def clash(records):
        records["station_versions"][0]["uuid"] = stolen
        records["visit"]["uuid"] = "99999999-9999-4999-8999-999999999999"
        for kind in ("station_versions", "water_levels", "overrides"):
            for row in records[kind]:
                row["visit_uuid"] = records["visit"]["uuid"]
        records["edits"] = [e for e in records["edits"] if e["record_table"] != "visits"]

    forged = tmp_path / "clash.stakeline-visit.json"
    doc = json.loads(_resign(_one(outbox), clash, field))
    doc["manifest"]["visit"] = doc["records"]["visit"]["uuid"]
    forged.write_bytes(
        build_package(doc["records"], "tablet-A", doc["manifest"]["created"], field.signing_key())
    )
    before = _dump(office)
    result = import_file(office, forged)
    assert result["status"] == "rejected" and "clash" in result["message"]
    assert _dump(office) == before


def test_same_visit_edited_on_two_devices_is_a_conflict_keeping_both(
    field, office, outbox, tmp_path
):
    import_files(office, [outbox])
    visit = field.visits()[0]["uuid"]
    field.close()
    shutil.copy(tmp_path / "field.db", tmp_path / "second.db")
    a = Store.open(tmp_path / "field.db")
    b = Store.open(tmp_path / "second.db", device_id="tablet-B")
    try:
        station = a.stations(visit)[4]["uuid"]
        a.correct_station(station, reading=1.111)
        b.correct_station(station, reading=1.999)
        trust(office, a, b)
        pack_visits(a, tmp_path / "from-a")
        pack_visits(b, tmp_path / "from-b")
    finally:
        a.close()
        b.close()
    assert [r["status"] for r in import_files(office, [tmp_path / "from-a"])].count("updated") == 1
    results = import_files(office, [tmp_path / "from-b"])
    conflict = [r for r in results if r["status"] == "conflict"]
    assert len(conflict) == 1 and "tablet-B" in conflict[0]["message"]
    # Both versions are kept: A's in the office records, B's whole in the import log.
    assert [s["reading"] for s in office.stations(visit) if s["uuid"] == station] == [1.111]
    (entry,) = office.conflicts()
    kept = office.package_content(entry["file_sha"])
    readings = [v["reading"] for v in kept["station_versions"] if v["station_uuid"] == station]
    assert 1.999 in readings
    assert office.visit(visit)["conflict"] is True
    assert import_files(office, [tmp_path / "from-b"])[0]["status"] == "conflict"  # unresolved
    office.resolve_conflict(entry["file_sha"])
    assert office.conflicts() == [] and office.visit(visit)["conflict"] is False


def test_older_package_after_newer_changes_nothing(field, office, outbox, tmp_path):
    shutil.copytree(outbox, tmp_path / "old")
    visit = field.visits()[0]["uuid"]
    field.remove_station(field.stations(visit)[0]["uuid"])
    pack_visits(field, outbox)
    import_files(office, [outbox])
    before = _dump(office)
    results = import_files(office, [_one(tmp_path / "old", "2026-04-14_xs1")])
    assert results[0]["status"] == "present" and "office copy is newer" in results[0]["message"]
    assert office.visit(visit)["station_count"] == 32  # demo XS1 2026-04-14 (33) less one
    rows_before = [r for r in before if 'INSERT INTO "packages"' not in r]
    assert [r for r in _dump(office) if 'INSERT INTO "packages"' not in r] == rows_before


def test_nothing_in_a_package_becomes_a_path(field, office, tmp_path):
    site = field.create_site("../../escape")
    section = field.create_section(site["uuid"], "/etc/passwd ../../x")
    visit = field.start_visit(section["uuid"], "2026-06-01", line_left=100.0)
    field.save_station(visit["uuid"], 0.0, 0.5, note="../../../tmp/evil")
    field.finish_visit(visit["uuid"])
    outbox = tmp_path / "box"
    written = [Path(r["path"]) for r in pack_visits(field, outbox)]
    assert all(p.parent == outbox for p in written)
    listing = sorted(str(p) for p in tmp_path.rglob("*") if "office.db" not in p.name)
    results = import_files(office, [outbox])
    assert {r["status"] for r in results} == {"imported"}
    after = sorted(str(p) for p in tmp_path.rglob("*") if "office.db" not in p.name)
    assert after == listing


def test_pack_is_atomic_and_refuses_a_file_as_outbox(field, tmp_path, monkeypatch):
    (tmp_path / "afile").write_text("x")
    with pytest.raises(PackageError, match="not a folder"):
        pack_visits(field, tmp_path / "afile")

    def crash(*args):
        raise OSError("USB stick pulled")

    monkeypatch.setattr(package.os, "replace", crash)
    with pytest.raises(OSError):
        pack_visits(field, tmp_path / "box")
    assert os.listdir(tmp_path / "box") == []  # no half-written package under any name


def test_a_rejected_file_in_a_batch_leaves_no_trace(field, office, outbox, tmp_path):
    files = sorted(outbox.iterdir())
    import_files(office, files[:1])
    first = json.loads(files[0].read_bytes())["records"]

    def clash(records):  # a new visit that reuses a station version id already in the office
        records["station_versions"][-1]["uuid"] = first["station_versions"][0]["uuid"]

    forged = tmp_path / "clash.stakeline-visit.json"
    forged.write_bytes(_resign(files[1], clash, field))
    results = import_files(office, [files[2], forged, files[1]])
    assert [r["status"] for r in results] == ["imported", "rejected", "imported"]
    assert "clash" in results[1]["message"]
    assert len(office.visits()) == 3
    assert office.visit(first["visit"]["uuid"])["station_count"] == 33  # demo XS1 2026-04-14


def test_section_edited_on_two_devices_is_reported(field, office, outbox, tmp_path):
    import_files(office, [outbox])
    field.close()
    shutil.copy(tmp_path / "field.db", tmp_path / "second.db")
    a = Store.open(tmp_path / "field.db")
    b = Store.open(tmp_path / "second.db", device_id="tablet-B")
    try:
        section = a.sections()[0]["uuid"]
        a.update_section(section, benchmark_name="BM-A (re-set 2026)")
        b.update_section(section, left_coordinates=(-2.6121, 51.4301))
        trust(office, a, b)
        for store, box in ((a, "from-a"), (b, "from-b")):
            visit = store.start_visit(section, "2026-10-01", line_left=101.2)
            store.save_station(visit["uuid"], 0.0, 0.3)
            store.finish_visit(visit["uuid"])
            pack_visits(store, tmp_path / box)
    finally:
        a.close()
        b.close()
    assert "conflict" not in {r["status"] for r in import_files(office, [tmp_path / "from-a"])}
    results = import_files(office, [tmp_path / "from-b"])
    conflicts = [r for r in results if r["status"] == "conflict"]
    assert conflicts and all("differs from the office copy" in r["message"] for r in conflicts)
    assert office.section(section)["benchmark_name"] == "BM-A (re-set 2026)"
    # The new visit from tablet-B is still imported (nothing dropped), on the office's section.
    assert len([v for v in office.visits() if v["date"] == "2026-10-01"]) == 2


@settings(
    max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    names=st.lists(st.text(max_size=30), min_size=3, max_size=3),
    points=st.lists(
        st.tuples(
            st.floats(-1e6, 1e6, allow_nan=False),
            st.floats(-1e3, 1e3, allow_nan=False),
            st.text(max_size=12),
        ),
        max_size=20,
    ),
    unit=st.sampled_from(["m", "ft"]),
)
def test_any_visit_round_trips_through_a_package(tmp_path_factory, names, points, unit):
    folder = tmp_path_factory.mktemp("round")
    field = Store.open(folder / "f.db", device_id="tablet-Ü")
    office = Store.open(folder / "o.db", device_id="office")
    trust(office, field)
    try:
        site = field.create_site(names[0].strip() or "site", stream=names[1])
        section = field.create_section(site["uuid"], names[2].strip() or "xs")
        visit = field.start_visit(section["uuid"], "2026-07-01", unit=unit, line_left=10.0,
                                  notes=" ".join(names))  # fmt: skip
        for x, reading, note in points:
            field.save_station(visit["uuid"], x, reading, note=note)
        if points:
            field.undo(visit["uuid"])
        field.finish_visit(visit["uuid"])
        pack_visits(field, folder / "out")
        assert [r["status"] for r in import_files(office, [folder / "out"])] == ["imported"]
        assert office.visit(visit["uuid"]) == field.visit(visit["uuid"])
        assert office.stations(visit["uuid"]) == field.stations(visit["uuid"])
    finally:
        field.close()
        office.close()


def test_conflict_merged_keeps_both_devices_changes(field, office, outbox, tmp_path):
    import_files(office, [outbox])
    visit = field.visits()[0]["uuid"]
    field.close()
    shutil.copy(tmp_path / "field.db", tmp_path / "second.db")
    a = Store.open(tmp_path / "field.db")
    b = Store.open(tmp_path / "second.db", device_id="tablet-B")
    try:
        stations = a.stations(visit)
        a.correct_station(stations[2]["uuid"], reading=0.61)  # only A touches station 2
        a.correct_station(stations[4]["uuid"], reading=1.111)  # both touch station 4
        b.correct_station(stations[4]["uuid"], reading=1.999)
        b.remove_station(stations[9]["uuid"])  # only B removes station 9
        b.update_visit(visit, notes="B's notes", crew=["R. Okafor", "T. Berg"])
        b.add_water_level(visit, 99.95, "2026-04-14T13:00")
        trust(office, a, b)
        pack_visits(a, tmp_path / "from-a")
        pack_visits(b, tmp_path / "from-b")
    finally:
        a.close()
        b.close()
    import_files(office, [tmp_path / "from-a"])
    import_files(office, [tmp_path / "from-b"])
    (entry,) = office.conflicts()
    resolved = office.resolve_conflict(entry["file_sha"][:12], keep="merge")
    assert resolved["resolved"] and "resolved: merge" in resolved["reason"]
    now = {s["uuid"]: s["reading"] for s in office.stations(visit)}
    assert now[stations[2]["uuid"]] == 0.61  # A's change kept
    assert now[stations[4]["uuid"]] == 1.999  # B's change comes last
    assert stations[9]["uuid"] not in now  # B's removal applied
    history = office.station_history(stations[4]["uuid"])
    assert {1.111, 1.999} <= {h["reading"] for h in history}  # both kept in history
    merged = office.visit(visit)
    assert merged["notes"] == "B's notes" and merged["crew"] == ["R. Okafor", "T. Berg"]
    assert 99.95 in [w["elevation"] for w in merged["water_levels"]]
    assert office.conflicts() == [] and not merged["conflict"]
    with pytest.raises(StoreError, match="no unresolved"):
        office.resolve_conflict(entry["file_sha"])

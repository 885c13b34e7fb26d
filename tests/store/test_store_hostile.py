"""Hostile and careless input to the store and to import: each is a one-line refusal of that
input only, never a traceback, a hang, a broken visit or a lost batch.  Packages here are signed
by a device the office trusts, so nothing but the checks under test can stop them."""

from __future__ import annotations

import json
import os
import threading

import pytest
from stakeline.store import Store, StoreError
from stakeline.store.package import build_package, import_files, pack_visits


def _dump(store: Store) -> list[str]:
    return list(store.conn.iterdump())


def _forge(field: Store, tmp_path, change, name="forged") -> os.PathLike:
    """A package of the field's first visit changed by ``change`` and signed by the field's
    own (trusted) key -- only the office's checks can stop it."""
    records = field.visit_records(field.visits()[0]["uuid"])
    change(records)
    path = tmp_path / f"{name}.stakeline-visit.json"
    path.write_bytes(build_package(records, "tablet-A", "2026-04-15T08:00:00+00:00",
                                   field.signing_key()))  # fmt: skip
    return path


def _text(records: dict, digits: int) -> None:
    records["station_versions"][0]["reading"] = 10**digits  # a 'reading' of that many digits


@pytest.mark.parametrize(
    "change, reason",
    [
        (lambda r: r["station_versions"][0].update(seq=2**63), "bad seq"),
        (lambda r: r["station_versions"][0].update(reading=10**399), "400 digits"),
        (lambda r: r["water_levels"].append(dict(r["station_versions"][0])), "fields"),
    ],
)
def test_out_of_range_integer_rejects_that_file_only(field, office, tmp_path, change, reason):
    pack_visits(field, tmp_path / "good")
    good = sorted((tmp_path / "good").iterdir())
    bad = _forge(field, tmp_path, change)
    results = import_files(office, [good[0], bad, *good[1:]])
    assert [r["status"] for r in results] == ["imported", "rejected"] + ["imported"] * 5
    assert reason in results[1]["message"] and "\n" not in results[1]["message"]


def test_a_4300_digit_integer_says_what_is_wrong(field, office, tmp_path):
    bad = _forge(field, tmp_path, lambda r: _text(r, 4299))
    (result,) = import_files(office, [bad])
    assert result["status"] == "rejected"
    assert "whole number of 4300 digits" in result["message"]
    assert "near byte 0" not in result["message"]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
@pytest.mark.parametrize("in_folder", [False, True])
def test_a_named_pipe_is_refused_without_hanging(office, tmp_path, in_folder):
    folder = tmp_path / "inbox"
    folder.mkdir()
    pipe = folder / "trap.stakeline-visit.json"
    os.mkfifo(pipe)
    results: list = []

    def run() -> None:
        with Store.open(office.path) as own:  # a connection of the importing thread
            results.extend(import_files(own, [folder if in_folder else pipe]))

    worker = threading.Thread(target=run, daemon=True)
    worker.start()
    worker.join(20)
    if worker.is_alive():  # release the hung reader so the test run can end
        os.close(os.open(pipe, os.O_WRONLY | os.O_NONBLOCK))
        worker.join(5)
        pytest.fail("import hung on a named pipe")
    (result,) = results
    assert result["status"] == "rejected" and "named pipe" in result["message"]


@pytest.mark.parametrize(
    "table, after, reason",
    [
        ("visits", {"unit": "furlong"}, "unit must be one of"),
        ("visits", {"line_left": "abc"}, "must be a number"),
        ("visits", {"uuid": "99999999-9999-4999-8999-999999999999"}, "never changes"),
        ("visits", {"notes": {}}, "must be text"),
        ("visits", {"crew": ["A"]}, "JSON list"),
        ("visits", {"date": "2026-99-99"}, "calendar date"),
        ("sections", {"site_uuid": "99999999-9999-4999-8999-999999999999"}, "never changes"),
        ("sections", {"left_lat": 95.0}, "degrees"),
        ("sites", {"name": ""}, "name"),
    ],
)
def test_package_edits_obey_the_store_rules(field, office, tmp_path, table, after, reason):
    def change(records):
        owner = {"visits": "visit", "sections": "section", "sites": "site"}[table]
        uuid = records[owner]["uuid"]
        before = {k: records[owner].get(k) for k in after}
        records["edits"].append(
            {"uuid": "abababab-abab-4bab-8bab-abababababab", "record_table": table,
             "record_uuid": uuid, "before": before, "after": after,
             "created": "2026-04-15T08:00:00+00:00", "device": "tablet-A"}
        )  # fmt: skip

    before = _dump(office)
    (result,) = import_files(office, [_forge(field, tmp_path, change)])
    assert result["status"] == "rejected" and reason in result["message"], result
    assert "\n" not in result["message"]
    assert _dump(office) == before


def _logged_conflict(office: Store, content: dict, file_sha: str = "ab" * 32) -> str:
    """A conflict entry as an older Stakeline (without edit checks) logged it."""
    with office.transaction():
        office.conn.execute(
            "INSERT INTO packages (file_sha, content_sha, visit_uuid, device, status, reason,"
            " content, imported, resolved) VALUES (?, 'c', ?, 'tablet-B', 'conflict', 'both',"
            " ?, '2026-04-15T08:00:00+00:00', NULL)",
            [file_sha, content["records"]["visit"]["uuid"], json.dumps(content)],
        )
    return file_sha


@pytest.mark.parametrize(
    "after, reason",
    [
        ({"unit": "furlong"}, "unit"),
        ({"line_left": "abc"}, "number"),
        ({"uuid": "99999999-9999-4999-8999-999999999999"}, "never changes"),
        ({"notes": {}}, "text"),
        ({"settings": [1, 2]}, "JSON object"),
    ],
)
def test_resolve_merge_refuses_bad_edits_and_changes_nothing(
    field, office, tmp_path, after, reason
):
    pack_visits(field, tmp_path / "out")
    import_files(office, [tmp_path / "out"])
    visit = field.visits()[0]["uuid"]
    records = field.visit_records(visit)
    records["edits"].append(
        {"uuid": "cdcdcdcd-cdcd-4dcd-8dcd-cdcdcdcdcdcd", "record_table": "visits",
         "record_uuid": visit, "before": {}, "after": after,
         "created": "2026-04-15T08:00:00+00:00", "device": "tablet-B"}
    )  # fmt: skip
    sha = _logged_conflict(office, {"manifest": {}, "records": records})
    before = [row for row in _dump(office) if 'INSERT INTO "packages"' not in row]
    with pytest.raises(StoreError, match=reason) as info:
        office.resolve_conflict(sha[:12], keep="merge")
    assert "\n" not in str(info.value) and "keep the office copy" in str(info.value)
    assert [row for row in _dump(office) if 'INSERT INTO "packages"' not in row] == before
    assert office.visit(visit)["unit"] == "m" and office.stations(visit)  # still whole


def test_resolve_matches_hex_prefixes_only(field, office, tmp_path):
    records = field.visit_records(field.visits()[0]["uuid"])
    _logged_conflict(office, {"manifest": {}, "records": records})
    for wild in ("%%%%%%%%", "________", "ab%", "abababa_"):
        with pytest.raises(StoreError, match="no unresolved conflicts"):
            office.resolve_conflict(wild)
    assert len(office.conflicts()) == 1
    assert office.resolve_conflict("ABABABAB")["resolved"]  # hex, either case


@pytest.mark.parametrize(
    "date", ["2026-99-99", "2026-04-14\n", "2026-02-30", "20260414", " 2026-04-14"]
)
def test_dates_are_strict_in_the_store_and_in_packages(field, office, tmp_path, date):
    section = field.sections()[0]["uuid"]
    with pytest.raises(StoreError, match="calendar date"):
        field.start_visit(section, date)
    with pytest.raises(StoreError, match="calendar date"):
        field.update_visit(field.visits()[0]["uuid"], date=date)
    bad = _forge(field, tmp_path, lambda r: r["visit"].update(date=date))
    (result,) = import_files(office, [bad])
    assert result["status"] == "rejected" and "bad date" in result["message"]


def test_station_without_reading_is_rejected_and_readers_cope(field, office, tmp_path):
    def hollow(records):
        records["station_versions"][3].update(station=None, reading=None)

    (result,) = import_files(office, [_forge(field, tmp_path, hollow)])
    assert result["status"] == "rejected" and "no station or no reading" in result["message"]
    # A store that already holds such a version (an older import) still reads.
    visit = field.visits()[0]["uuid"]
    count = field.visit(visit)["station_count"]
    with field.transaction():
        field.conn.execute(
            "UPDATE station_versions SET station = NULL, reading = NULL WHERE id = "
            "(SELECT min(id) FROM station_versions WHERE visit_uuid = ?)",
            [visit],
        )
    stations = field.stations(visit)
    assert len(stations) == count - 1 == field.visit(visit)["station_count"]
    assert all(s["elevation"] is not None for s in stations)
    hollow_uuid = field.conn.execute(
        "SELECT station_uuid FROM station_versions WHERE station IS NULL"
    ).fetchone()[0]
    assert field.station_history(hollow_uuid)[0]["elevation"] is None
    from stakeline.report import ReportOptions, prepare_report

    data = prepare_report(field.visit(visit), stations, ReportOptions())
    assert data is not None  # the report is prepared without that version


def test_pack_removes_what_a_killed_pack_left(field, tmp_path):
    outbox = tmp_path / "outbox"
    pack_visits(field, outbox)
    dead = os.getpid() + 1
    while True:  # a process id nobody uses now, as after a killed pack
        try:
            os.kill(dead, 0)
            dead += 1
        except ProcessLookupError:
            break
        except PermissionError:
            dead += 1
    names = [f".2026-04-14_xs1_00000000.stakeline-visit.json.{dead}.k2j4h1.partial",
             f".2026-04-14_xs1_00000000.stakeline-visit.json.{dead}.partial"]  # fmt: skip
    for name in names:
        (outbox / name).write_bytes(b'{"manifest":')
    assert {r["status"] for r in pack_visits(field, outbox)} == {"unchanged"}
    assert not any(p.name.startswith(".") for p in outbox.iterdir())
    assert all(os.stat(p).st_mode & 0o777 == 0o644 for p in outbox.iterdir())

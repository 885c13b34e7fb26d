"""Fuzzing the package reader (hypothesis): valid packages mutated field by field and signed
again with a test key the office trusts, and raw bytes mutated at random.  The only outcomes
allowed are a merge, a hold, or a rejection with Stakeline's own error and a one-line message;
whatever merges must read back without error."""

from __future__ import annotations

import hashlib
import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stakeline.store import Store, StoreError
from stakeline.store.package import (
    FORMAT,
    PackageError,
    import_file,
    pack_visits,
    parse_package,
)
from stakeline.store.records import FIELDS

OUTCOMES = {"imported", "updated", "present", "conflict", "held", "rejected"}


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """A field store with the demo survey, its packed visit records and its device key file."""
    folder = tmp_path_factory.mktemp("fuzz")
    field = Store.open(folder / "field.db", device_id="tablet-F")
    field.load_demo()
    visit = field.visits()[1]["uuid"]  # the smallest demo visit
    records = field.visit_records(visit)
    key_file = folder / "tablet-F.stakeline-device-key.json"
    field.export_device_key(key_file)
    pack_visits(field, folder / "out")
    package = next((folder / "out").iterdir()).read_bytes()
    yield {"field": field, "records": records, "key_file": key_file, "folder": folder,
           "package": package}  # fmt: skip
    field.close()


def _office(world) -> Store:
    office = Store.memory(device_id="office")
    office.trust_device(world["key_file"], by="fuzz")
    return office


def _reads_back(office: Store) -> None:
    for visit in office.visits():
        office.visit(visit["uuid"])
        for station in office.stations(visit["uuid"]):
            office.station_history(station["uuid"])
        office.overrides(visit["uuid"])
        office.field_history(visit["uuid"])
        office.visit_signer(visit["uuid"])
    office.sections()
    office.sites()


def _check_import(world, data: bytes, name: str) -> dict:
    path = world["folder"] / f"{name}.stakeline-visit.json"
    path.write_bytes(data)
    office = _office(world)
    try:
        result = import_file(office, path)
        assert result["status"] in OUTCOMES
        assert "\n" not in result["message"] and "Traceback" not in result["message"]
        _reads_back(office)
    finally:
        office.close()
    return result


def _forged(records: dict, visit: str, key) -> bytes:
    """Package bytes as the package module documents them, for any records (a forger's tool:
    Stakeline's own writer only ever packs records of its store): canonical JSON, signed with
    ``sha256`` and ``signature`` blanked, then the checksum over the signed text."""
    manifest = {"created": "2026-04-15T08:00:00+00:00", "device": "tablet-F",
                "format": FORMAT, "key": bytes(key.verify_key).hex(),
                "sha256": "0" * 64, "signature": "0" * 128, "visit": visit}  # fmt: skip

    def text() -> bytes:
        document = {"manifest": manifest, "records": records}
        dumped = json.dumps(document, sort_keys=True, separators=(",", ":"), allow_nan=False)
        return (dumped + "\n").encode("ascii")

    manifest["signature"] = key.sign(text()).signature.hex()
    manifest["sha256"] = hashlib.sha256(text()).hexdigest()
    return text()


json_values = st.recursive(
    st.none()
    | st.booleans()
    | st.integers(min_value=-(10**30), max_value=10**30)
    | st.sampled_from([2**53, 2**53 + 1, 2**63, -(2**63) - 1, 10**400])
    | st.floats(allow_nan=False, allow_infinity=False)
    | st.text(max_size=20)
    | st.sampled_from(["", "2026-99-99", "2026-04-14\n", "furlong", "rod", "add", "undo",
                       "00000000-0000-4000-8000-000000000000", "visits", "left"]),
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=8), inner, max_size=3),
    max_leaves=6,
)  # fmt: skip

kinds = st.sampled_from(sorted(FIELDS))


@settings(
    max_examples=150,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(kind=kinds, data=st.data(), value=json_values, drop=st.booleans())
def test_field_by_field_mutations_signed_again(world, kind, data, value, drop):
    records = json.loads(json.dumps(world["records"]))
    target = records[kind] if kind in ("site", "section", "visit") else None
    if target is None:
        rows = records[kind]
        if not rows:
            return
        target = rows[data.draw(st.integers(0, len(rows) - 1), label="row")]
    field = data.draw(st.sampled_from(sorted(target) + ["extra"]), label="field")
    if drop and field in target:
        del target[field]
    else:
        target[field] = value
    try:
        package = _forged(records, world["records"]["visit"]["uuid"], world["field"].signing_key())
    except ValueError:
        return  # not even JSON (a non-finite float): no file could hold it
    try:
        parse_package(package)
    except PackageError as exc:
        assert "\n" not in str(exc) and str(exc)
    result = _check_import(world, package, "mutated")
    if result["status"] in ("imported", "updated"):
        # What merged obeys the store's rules: its numbers are finite.
        office = _office(world)
        try:
            import_file(office, world["folder"] / "mutated.stakeline-visit.json")
            for visit in office.visits():
                for station in office.stations(visit["uuid"]):
                    assert math.isfinite(station["station"]) and math.isfinite(station["reading"])
        finally:
            office.close()


@settings(
    max_examples=200,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(
    edits=st.lists(
        st.tuples(st.integers(0, 10**7), st.integers(0, 255), st.sampled_from("fid")),
        min_size=1, max_size=4,
    ),
    cut=st.one_of(st.none(), st.integers(0, 10**7)),
)  # fmt: skip
def test_byte_level_mutations(world, edits, cut):
    data = bytearray(world["package"])
    for where, byte, how in edits:
        at = where % (len(data) + 1)
        if how == "f" and at < len(data):
            data[at] = byte
        elif how == "i":
            data[at:at] = bytes([byte])
        elif at < len(data):
            del data[at]
    if cut is not None:
        del data[cut % (len(data) + 1) :]
    try:
        parse_package(bytes(data))
    except PackageError as exc:
        assert "\n" not in str(exc) and str(exc)
    except StoreError:
        pytest.fail("a store error that is not a package error")
    _check_import(world, bytes(data), "bytes")

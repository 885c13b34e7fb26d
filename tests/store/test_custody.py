"""Chain of custody: packages are signed by the device's Ed25519 key; the office merges only
packages whose signature holds and whose device it has trusted; everything else is held whole,
listed with its reason, and never merged.  Real keys, real signatures (PyNaCl), real files."""

from __future__ import annotations

import json
import os
import stat

import pytest
from custody_helpers import trust
from nacl.signing import SigningKey, VerifyKey
from stakeline.store import Store, StoreError
from stakeline.store.package import (
    FORMAT,
    LEGACY_FORMAT,
    build_package,
    import_files,
    pack_visits,
    parse_package,
    retry_held,
    signature_valid,
)
from stakeline.store.signing import fingerprint, key_file_for, read_device_key


@pytest.fixture
def office(tmp_path):
    store = Store.open(tmp_path / "office.db", device_id="office")
    yield store
    store.close()


def _dump(store: Store) -> list[str]:
    return [row for row in store.conn.iterdump() if 'INSERT INTO "packages"' not in row]


def test_key_made_once_beside_the_store_private_and_exclusive(field, tmp_path):
    key = field.device_key()
    path = key_file_for(tmp_path / "field.db")
    assert key["key_file"] == str(path) and path.exists()
    assert stat.S_IMODE(os.stat(path).st_mode) == 0o600
    assert len(bytes.fromhex(key["public_key"])) == 32  # raw Ed25519 public key
    own = [d for d in field.devices() if d["own"]]
    assert [d["public_key"] for d in own] == [key["public_key"]]
    assert own[0]["device"] == "tablet-A"
    field.close()
    with Store.open(tmp_path / "field.db") as again:  # the same key on every later start
        assert again.device_key()["public_key"] == key["public_key"]
    # The private half never appears in the store file.
    seed = path.read_text().split("\n")[1]
    assert seed.encode() not in (tmp_path / "field.db").read_bytes()


def test_package_is_signed_over_its_canonical_bytes(field, tmp_path):
    (written,) = [p for p in pack_visits(field, tmp_path / "out")][:1]
    data = open(written["path"], "rb").read()
    manifest, _ = parse_package(data)
    assert manifest["format"] == FORMAT and manifest["key"] == field.device_key()["public_key"]
    assert signature_valid(data, manifest)
    # Checked independently with PyNaCl: the signature is over the text with sha256 and
    # signature blanked (zeros), as the package module documents.
    document = json.loads(data)
    document["manifest"]["sha256"] = "0" * 64
    document["manifest"]["signature"] = "0" * 128
    blank = (json.dumps(document, sort_keys=True, separators=(",", ":")) + "\n").encode()
    VerifyKey(bytes.fromhex(manifest["key"])).verify(blank, bytes.fromhex(manifest["signature"]))


def test_untrusted_device_is_held_not_merged_then_merges_once_trusted(field, office, tmp_path):
    pack_visits(field, tmp_path / "out")
    before = _dump(office)
    results = import_files(office, [tmp_path / "out"])
    assert [r["status"] for r in results] == ["held"] * 6
    assert all("does not trust" in r["message"] and "\n" not in r["message"] for r in results)
    assert _dump(office) == before  # nothing merged
    held = office.held_packages()
    assert len(held) == 6 and {h["fingerprint"] for h in held} == {
        fingerprint(field.device_key()["public_key"])
    }
    assert office.visits() == []
    # Importing the same files again without trust: still held, not duplicated.
    assert {r["status"] for r in import_files(office, [tmp_path / "out"])} == {"held"}
    assert len(office.held_packages()) == 6
    trust(office, field)
    assert [r["status"] for r in retry_held(office)] == ["imported"] * 6
    assert office.held_packages() == [] and len(office.visits()) == 6
    visit = field.visits()[0]["uuid"]
    signer = office.visit_signer(visit)
    assert signer["device"] == "tablet-A" and signer["trusted_by"] == "test office"
    assert signer["public_key"] == field.device_key()["public_key"]
    assert field.visit_signer(visit) is None  # made on the tablet itself


def test_changed_after_signing_is_held_even_with_a_good_checksum(field, office, tmp_path):
    trust(office, field)
    out = tmp_path / "out"
    path = pack_visits(field, out)[0]["path"]
    document = json.loads(open(path, "rb").read())
    document["records"]["station_versions"][0]["reading"] += 0.5  # a forged reading
    manifest = document["manifest"]
    # The forger recomputes the checksum but cannot re-sign with the device's key: they
    # keep the old signature and key.
    forged = build_package(document["records"], manifest["device"], manifest["created"])
    doc = json.loads(forged)
    doc["manifest"].update(format=FORMAT, key=manifest["key"], signature=manifest["signature"])
    doc["manifest"]["sha256"] = "0" * 64
    text = (json.dumps(doc, sort_keys=True, separators=(",", ":")) + "\n").encode()
    import hashlib

    text = text.replace(b"0" * 64, hashlib.sha256(text).hexdigest().encode(), 1)
    target = tmp_path / "forged.stakeline-visit.json"
    target.write_bytes(text)
    (result,) = import_files(office, [target])
    assert result["status"] == "held" and "changed after it was signed" in result["message"]
    assert office.visits() == []


def test_package_signed_by_another_key_is_held(field, office, tmp_path):
    trust(office, field)
    path = pack_visits(field, tmp_path / "out")[0]["path"]
    document = json.loads(open(path, "rb").read())
    thief = SigningKey.generate()  # re-signed with a key the office never trusted
    forged = build_package(document["records"], "tablet-A", document["manifest"]["created"], thief)
    target = tmp_path / "resigned.stakeline-visit.json"
    target.write_bytes(forged)
    (result,) = import_files(office, [target])
    assert result["status"] == "held" and "does not trust" in result["message"]


def test_unsigned_old_format_is_held_as_unsigned(field, office, tmp_path):
    trust(office, field)
    records = field.visit_records(field.visits()[0]["uuid"])
    old = tmp_path / "old.stakeline-visit.json"
    old.write_bytes(build_package(records, "tablet-A", "2026-04-14T10:00:00+00:00"))
    assert parse_package(old.read_bytes())[0]["format"] == LEGACY_FORMAT
    (result,) = import_files(office, [old])
    assert result["status"] == "held" and "unsigned" in result["message"]


def test_retired_key_holds_what_it_signs_afterwards(field, office, tmp_path):
    trust(office, field)
    pack_visits(field, tmp_path / "before")
    office.retire_device("tablet-A", by="office lead", at="2000-01-01T00:00:00+00:00")
    results = import_files(office, [tmp_path / "before"])
    assert {r["status"] for r in results} == {"held"}
    assert all("after its key was retired" in r["message"] for r in results)
    device = office.device(field.device_key()["public_key"])
    assert device["retired_by"] == "office lead" and device["retired_at"].startswith("2000")
    with pytest.raises(StoreError, match="never trusted again"):
        trust(office, field)


def test_rotated_key_keeps_what_was_signed_before_but_a_lost_key_holds_everything(
    field, office, tmp_path
):
    trust(office, field)
    pack_visits(field, tmp_path / "out")
    office.retire_device(field.device_key()["public_key"], at="2999-01-01T00:00:00+00:00")
    assert {r["status"] for r in import_files(office, [tmp_path / "out"])} == {"imported"}
    other = Store.open(tmp_path / "office2.db")
    try:
        trust(other, field)
        other.retire_device(field.device_key()["fingerprint"], lost=True)
        results = import_files(other, [tmp_path / "out"])
        assert {r["status"] for r in results} == {"held"}
        assert all("reported lost" in r["message"] for r in results)
    finally:
        other.close()


def test_device_key_file_round_trip_and_listing(field, office, tmp_path):
    key_file = tmp_path / "tablet-A.stakeline-device-key.json"
    exported = field.export_device_key(key_file)
    assert stat.S_IMODE(os.stat(key_file).st_mode) == 0o644
    found = read_device_key(key_file)
    assert found == {"device": "tablet-A", "public_key": exported["public_key"],
                     "created": exported["created"]}  # fmt: skip
    trusted = office.trust_device(key_file, by="R. Okafor@office-pc")
    assert trusted["trusted_by"] == "R. Okafor@office-pc" and trusted["trusted_at"]
    assert office.trust_device(key_file)["trusted_at"] == trusted["trusted_at"]  # once only
    listed = office.devices()
    assert [(d["device"], d["own"]) for d in listed if not d["own"]] == [("tablet-A", False)]
    default = Store.open(tmp_path / "o3.db")
    try:
        assert "@" in default.trust_device(key_file)["trusted_by"]  # user@host by default
    finally:
        default.close()


@pytest.mark.parametrize(
    "content, reason",
    [
        (b"", "not a Stakeline device key"),
        (b'{"format":"stakeline-device-key/1"}', "not a Stakeline device key"),
        (
            b'{"created":"x","device":"t","format":"stakeline-device-key/1","public_key":"zz"}',
            "no valid public key",
        ),
    ],
)
def test_bad_device_key_files_are_refused(office, tmp_path, content, reason):
    path = tmp_path / "bad.json"
    path.write_bytes(content)
    with pytest.raises(StoreError, match=reason) as info:
        office.trust_device(path)
    assert "\n" not in str(info.value)
    assert office.devices() == []


def test_a_loose_or_damaged_key_file_is_refused(tmp_path):
    store = Store.open(tmp_path / "f.db")
    store.device_key()
    store.close()
    path = key_file_for(tmp_path / "f.db")
    os.chmod(path, 0o644)
    with Store.open(tmp_path / "f.db") as again:
        with pytest.raises(StoreError, match="chmod 600"):
            again.device_key()
    os.chmod(path, 0o600)
    path.write_text("stakeline-signing-key/1\nnot hex\n")
    with Store.open(tmp_path / "f.db") as again:
        with pytest.raises(StoreError, match="not a Stakeline signing key"):
            again.device_key()


def test_copied_store_makes_its_own_key(field, tmp_path):
    import shutil

    first = field.device_key()["public_key"]
    field.close()
    shutil.copy(tmp_path / "field.db", tmp_path / "copy.db")
    with Store.open(tmp_path / "copy.db") as copy:
        assert copy.device_key()["public_key"] != first  # the private key was not copied

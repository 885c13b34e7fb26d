"""Visit packages: one self-contained, checksummed, signed file per finished visit, for office
sync by file copy (USB stick, shared folder).  Data only -- JSON, no code, no pickle.

A package is the canonical JSON text (sorted keys, no spaces, ASCII) of::

    {"manifest": {"format": "stakeline-visit/3", "visit": UUID, "device": ..., "created": ...,
                  "key": HEX64, "sha256": HEX64, "signature": HEX128},
     "records": {site, section, visit, edits, station_versions, water_levels, overrides,
                 visit_meters, velocity_versions, water_surface_versions}}

followed by one newline.  ``signature`` is the Ed25519 signature, by the device's key
(``key``, its public half), of the canonical text with ``sha256`` and ``signature`` blanked
(zeros): it covers the manifest and every record and proves which device wrote them.
``sha256`` is taken over the text with only ``sha256`` blanked, so it covers the signature too
and tells plain damage (a bad copy) from a change made after signing.  On import the file must
be exactly its canonical form and the checksum must match (else: rejected, damaged); then the
signature must hold and its key be trusted by the office and not retired (else: *held* -- kept
whole, listed, not merged).  Format 3 added the gauging records (the meters a visit was gauged
with, velocity versions, water-surface versions); packages of format 2 (signed the same way,
without gauging records) are still read and merged, those of format ``stakeline-visit/1`` have
no signature and are held as unsigned.

Files are written through :mod:`stakeline.files.durable` (exclusive temporary file, fsync,
rename), so a half-written file never carries the package name.  Nothing inside a package is
ever used as a file path; size and row limits stop a hostile file from filling the office disk.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import time
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import Any

from nacl.signing import SigningKey
from stakeline.files import durable
from stakeline.files.durable import NotRegularFileError, read_regular, remove_stale_partials
from stakeline.store import signing
from stakeline.store.faults import StoreFaultError
from stakeline.store.records import MAX_ROWS, PackageError, check_records, value_ok
from stakeline.store.values import StoreError, canonical_json, now

__all__ = ["FORMAT", "PREVIOUS_FORMAT", "LEGACY_FORMAT", "SUFFIX", "MAX_BYTES", "MAX_ROWS", "PackageError",
           "build_package", "parse_package", "signature_valid", "pack_visits", "import_file",
           "import_files", "retry_held", "expand_paths", "read_limited", "package_name",
           "records_sha", "sha256_hex", "write_atomic"]  # fmt: skip

FORMAT = "stakeline-visit/3"
"""Format tag of the (signed) package files this code writes."""

PREVIOUS_FORMAT = "stakeline-visit/2"
"""Format tag of signed packages written before gauging records: still read and merged."""

LEGACY_FORMAT = "stakeline-visit/1"
"""Format tag of the older unsigned packages: still read, always held."""

SUFFIX = ".stakeline-visit.json"
"""File name ending of a visit package."""

MAX_BYTES = 8 * 1024 * 1024
"""Largest package file accepted (bytes); a real visit is a few tens of kilobytes."""

BATCH_BYTES = 12 * 1024 * 1024
"""Package bytes merged under one write lock (one durable commit); with
:data:`LOCK_BUDGET` it keeps the lock short so the app and other imports are not kept waiting."""

LOCK_BUDGET = 1.5
"""Seconds an import merges under one write lock before committing and letting others in."""

MAX_DIGITS = 19
"""Longest whole number (digits) a package may hold; Stakeline writes none longer than 16."""

_BLANK_SHA = "0" * 64
_BLANK_SIGNATURE = "0" * 128
_SHA_KEY = b'"sha256":"'
_SIGNATURE_KEY = b'"signature":"'
_RECORDS_KEY = b',"records":'
_MANIFEST_V1 = {"format", "visit", "device", "created", "sha256"}
_MANIFEST_V2 = _MANIFEST_V1 | {"key", "signature"}


def sha256_hex(data: bytes) -> str:
    """SHA-256 of ``data`` as 64 lowercase hex digits."""
    return hashlib.sha256(data).hexdigest()


def _canonical_bytes(document: Any) -> bytes:
    return (json.dumps(document, sort_keys=True, separators=(",", ":"), ensure_ascii=True,
                       allow_nan=False) + "\n").encode("ascii")  # fmt: skip


def _field_at(data: bytes, key: bytes) -> int:
    """Offset of a manifest field's hex value in canonical package bytes.  The manifest comes
    first and its string values cannot hold a bare quote, so the first match is the field."""
    return data.index(key) + len(key)


def _splice(data: bytes, key: bytes, value: str) -> bytes:
    start = _field_at(data, key)
    return data[:start] + value.encode("ascii") + data[start + len(value) :]


def build_package(records: dict, device: str, created: str, key: SigningKey | None = None) -> bytes:
    """The bytes of a package holding ``records`` (as ``Store.visit_records``), signed by
    ``key``; without a key, an unsigned package of the older format (held on import)."""
    manifest = {"format": LEGACY_FORMAT if key is None else FORMAT,
                "visit": records["visit"]["uuid"], "device": device, "created": created,
                "sha256": _BLANK_SHA}  # fmt: skip
    if key is not None:
        manifest.update(key=signing.public_hex(key), signature=_BLANK_SIGNATURE)
    data = _canonical_bytes({"manifest": manifest, "records": records})
    if key is not None:
        data = _splice(data, _SIGNATURE_KEY, signing.sign(key, data))
    return _splice(data, _SHA_KEY, sha256_hex(data))


def records_sha(records: dict) -> str:
    """SHA-256 of the records alone (same content packed twice gives the same value)."""
    return sha256_hex(canonical_json(records).encode("ascii"))


def _records_sha_of(data: bytes) -> str:
    """:func:`records_sha` of verified package bytes, from the records' own canonical text."""
    start = data.index(_RECORDS_KEY) + len(_RECORDS_KEY)
    return sha256_hex(data[start:-2])


def _whole_number(digits: str) -> int:
    if len(digits.lstrip("-")) > MAX_DIGITS:
        raise PackageError(
            f"damaged or forged: it holds a whole number of {len(digits.lstrip('-'))} digits, "
            "far beyond any survey value"
        )
    return int(digits)


def _damaged(data: bytes, exc: ValueError) -> PackageError:
    position = getattr(exc, "pos", 0) or 0
    if not data.endswith(b"\n") or position >= len(data) - 2:
        return PackageError("truncated: the file ends early (incomplete copy?)")
    return PackageError(f"damaged: not valid package text near byte {position}")


def _document(data: bytes) -> dict:
    if not data:
        raise PackageError("empty file")
    if len(data) > MAX_BYTES:
        raise PackageError(f"larger than the {MAX_BYTES // (1024 * 1024)} MiB package limit")
    if not data.startswith(b'{"manifest":'):
        raise PackageError("not a Stakeline visit package")
    try:
        document = json.loads(data.decode("ascii"), parse_int=_whole_number)
    except PackageError:
        raise
    except UnicodeDecodeError:
        raise PackageError("damaged: a byte that Stakeline never writes") from None
    except RecursionError:
        raise PackageError("damaged: nested too deeply") from None
    except ValueError as exc:
        raise _damaged(data, exc) from None
    if not isinstance(document, dict) or set(document) != {"manifest", "records"}:
        raise PackageError("not a Stakeline visit package")
    return document


def parse_package(data: bytes) -> tuple[dict, dict]:
    """Verify package bytes (form, checksum, records); returns (manifest, records) or raises
    PackageError (one line).  The signature is checked apart: :func:`signature_valid`."""
    document = _document(data)
    manifest = document["manifest"]
    if not isinstance(manifest, dict) or set(manifest) not in (_MANIFEST_V1, _MANIFEST_V2):
        raise PackageError("damaged or foreign: its manifest is not a Stakeline manifest")
    wanted = (FORMAT, PREVIOUS_FORMAT) if "key" in manifest else (LEGACY_FORMAT,)
    if manifest["format"] not in wanted:
        raise PackageError(
            f"format {str(manifest['format'])[:40]!r} is not {' or '.join(map(repr, wanted))}"
        )
    try:
        canonical = _canonical_bytes(document)
    except ValueError:
        raise PackageError("damaged: a number that is not finite") from None
    if canonical != data:
        raise PackageError("damaged: the file differs from the form Stakeline writes")
    if manifest["sha256"] != sha256_hex(_splice(data, _SHA_KEY, _BLANK_SHA)):
        raise PackageError("checksum mismatch: the file was damaged or altered")
    if not value_ok("uuid", manifest["visit"]) or not value_ok("text", manifest["device"]):
        raise PackageError("damaged: its manifest names no visit or device")
    if not value_ok("time", manifest["created"]):
        raise PackageError("damaged: its manifest has no creation time")
    if "key" in manifest and not (
        signing.is_public_key(manifest["key"]) and signing.is_signature(manifest["signature"])
    ):
        raise PackageError("damaged: its manifest holds no valid key or signature")
    gauging = {FORMAT: True, PREVIOUS_FORMAT: False}.get(manifest["format"])
    check_records(document["records"], manifest["visit"], gauging)
    return manifest, document["records"]


def signature_valid(data: bytes, manifest: dict) -> bool:
    """Whether verified package bytes carry a good signature by the key they name (False for
    an unsigned package)."""
    if "key" not in manifest:
        return False
    signed = _splice(_splice(data, _SHA_KEY, _BLANK_SHA), _SIGNATURE_KEY, _BLANK_SIGNATURE)
    return signing.verify(manifest["key"], signed, manifest["signature"])


def read_limited(path: str | os.PathLike) -> bytes:
    """The bytes of a regular file of at most MAX_BYTES; PackageError otherwise (a named pipe
    or device is refused before a byte is read)."""
    try:
        data = read_regular(path, MAX_BYTES)
    except NotRegularFileError as exc:
        raise PackageError(f"{exc}; not a package file") from None
    except FileNotFoundError:
        raise PackageError("no such file") from None
    except OSError as exc:
        raise PackageError(f"cannot be read ({exc.strerror})") from None
    if len(data) > MAX_BYTES:
        raise PackageError(f"larger than the {MAX_BYTES // (1024 * 1024)} MiB package limit")
    return data


def package_name(records: dict) -> str:
    """File name of a visit's package: date, section name (letters and digits only) and the
    start of the visit's UUID, ending in SUFFIX."""
    slug = "-".join(re.findall(r"[a-z0-9]+", records["section"]["name"].lower()))[:40]
    return f"{records['visit']['date']}_{slug or 'section'}_{records['visit']['uuid'][:8]}{SUFFIX}"


def write_atomic(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` whole or not at all (see :mod:`stakeline.files.durable`)."""
    durable.write_atomic(path, data, mode=0o644)


def _is_current(path: Path, records: dict, public_key: str) -> bool:
    """Whether ``path`` already holds these records, signed by this store's key."""
    try:
        data = read_limited(path)
        manifest, packed = parse_package(data)
    except PackageError:
        return False
    return (
        manifest.get("key") == public_key
        and records_sha(packed) == records_sha(records)
        and signature_valid(data, manifest)
    )


def pack_visits(
    store,
    outbox: str | os.PathLike,
    progress: Callable[[int, int], None] | None = None,
    skip_demo: bool = False,
) -> list[dict]:
    """Write a signed package for every finished visit of ``store`` into the folder ``outbox``;
    ``skip_demo`` leaves out the invented demo visits (``settings["demo"]``, as the app does).

    Returns one dict per visit: {visit, path, status} with status ``written`` or ``unchanged``
    (the outbox already holds a package with the same records, signed by this store's key).
    Temporary files left by a killed earlier run are removed first.  ``progress(done, total)``
    is called after each package.

    Examples
    --------
    >>> import tempfile
    >>> from stakeline.store import Store
    >>> folder = tempfile.mkdtemp()
    >>> field = Store.open(f"{folder}/field.sqlite", device_id="tablet-demo")
    >>> visits = field.load_demo()                      # invented, finished visits
    >>> [r["status"] for r in pack_visits(field, f"{folder}/outbox")][:2]
    ['written', 'written']
    >>> pack_visits(field, f"{folder}/outbox", skip_demo=True)  # the app never packs demo data
    []
    >>> field.close()
    """
    folder = Path(outbox)
    if folder.exists() and not folder.is_dir():
        raise PackageError(f"outbox {folder} is a file, not a folder")
    folder.mkdir(parents=True, exist_ok=True)
    remove_stale_partials(folder)
    key = store.signing_key()
    public_key = signing.public_hex(key)
    results = []
    finished = [
        visit
        for visit in store.visits()
        if visit["finished"] and not (skip_demo and visit["settings"].get("demo"))
    ]
    for visit in finished:
        records = store.visit_records(visit["uuid"])
        path = folder / package_name(records)
        status = "unchanged"
        if not _is_current(path, records, public_key):
            write_atomic(path, build_package(records, store.device_id, now(), key))
            status = "written"
        results.append({"visit": visit["uuid"], "path": str(path), "status": status})
        if progress is not None:
            progress(len(results), len(finished))
    return results


def expand_paths(paths: Iterable[str | os.PathLike]) -> list[str]:
    """The files to import: each path as given, a folder replaced by its packages (sorted)."""
    files: list[str] = []
    for path in paths:
        if os.path.isdir(path):
            files.extend(
                str(p) for p in sorted(Path(path).iterdir())
                if p.name.endswith(SUFFIX) and not p.name.startswith(".")
            )  # fmt: skip
        else:
            files.append(os.fspath(path))
    return files


def _prepare(store, path: str) -> dict:
    """Read and verify one file without the write lock: {file, size, result (final, or None),
    data, file_sha, manifest, records, signed (signature holds)}."""
    item: dict[str, Any] = {"file": path, "size": 0, "result": None}
    try:
        data = read_limited(path)
        item.update(size=len(data), data=data, file_sha=sha256_hex(data))
        seen = store.package_seen(item["file_sha"])
        if seen is not None and seen["status"] != "held":
            unresolved = seen["status"] == "conflict" and seen["resolved"] is None
            note = "unresolved conflict" if unresolved else "nothing changed"
            item["result"] = {
                "file": path,
                "visit": seen["visit_uuid"],
                "status": "conflict" if unresolved else "present",
                "message": f"already imported on {seen['imported'][:10]}; {note}",
            }
            return item  # fmt: skip
        item["manifest"], item["records"] = parse_package(data)
        item["signed"] = signature_valid(data, item["manifest"])
    except StoreFaultError:
        raise
    except StoreError as exc:
        item["result"] = {"file": path, "visit": None, "status": "rejected",
                          "message": f"rejected: {exc}"}  # fmt: skip
    return item


def _hold_reason(store, manifest: dict, signed: bool) -> str | None:
    if "key" not in manifest:
        return (
            "unsigned: it was packed by a Stakeline older than signed packages; update "
            "Stakeline on the device and pack the visit again"
        )
    if not signed:
        return (
            "its signature does not match its content: it was changed after it was signed "
            "(or signed by another key than it names); ask the device for a fresh copy"
        )
    return store.signer_verdict(manifest["key"], manifest["device"], manifest["created"])


def _merge(store, item: dict) -> dict:
    """Merge (or hold) one prepared file; call under the write lock."""
    if item["result"] is not None:
        return item["result"]
    out = {"file": item["file"], "visit": item["manifest"]["visit"]}
    manifest, data = item["manifest"], item["data"]
    try:
        reason = _hold_reason(store, manifest, item["signed"])
        content = data.decode("ascii")
        if reason is not None:
            held = store.hold_package(item["file_sha"], manifest["visit"], manifest["device"],
                                      content, manifest.get("key"), reason)  # fmt: skip
            return {**out, **held}
        result = store.import_visit_records(
            item["records"], item["file_sha"], _records_sha_of(data), manifest["device"],
            content, signer_key=manifest["key"],
        )  # fmt: skip
    except StoreFaultError:
        raise  # the store itself failed: not this file's fault, stop the import
    except StoreError as exc:
        return {**out, "visit": None, "status": "rejected", "message": f"rejected: {exc}"}
    return {**out, **result}


def import_file(store, path: str | os.PathLike) -> dict:
    """Import one package file into ``store``: {file, status, visit, message}.

    status: ``imported``, ``updated``, ``present`` (nothing changed), ``conflict`` (both copies
    kept, a person must choose), ``held`` (kept whole, not merged: unsigned, signature fails,
    or its device's key is not trusted or retired; message says which) or ``rejected`` (store
    unchanged; message says why).  Raises a StoreFaultError when the store itself fails.
    """
    item = _prepare(store, os.fspath(path))
    with store.transaction():
        return _merge(store, item)


def import_files(
    store,
    paths: Iterable[str | os.PathLike],
    batch: int = 200,
    batch_bytes: int = BATCH_BYTES,
    check: bool = True,
    progress: Callable[[int, int], None] | None = None,
) -> list[dict]:
    """Import package files (folders expand to their packages); one :func:`import_file` dict
    per file, in order.

    Examples
    --------
    >>> import tempfile
    >>> from stakeline.store import Store
    >>> folder = tempfile.mkdtemp()
    >>> field = Store.open(f"{folder}/field.sqlite", device_id="tablet-demo")
    >>> visits = field.load_demo()
    >>> packed = pack_visits(field, f"{folder}/outbox")
    >>> key = field.export_device_key(f"{folder}/tablet.key.json")
    >>> office = Store.open(f"{folder}/office.sqlite")
    >>> {r["status"] for r in import_files(office, [f"{folder}/outbox"])}   # not trusted yet
    {'held'}
    >>> trusted = office.trust_device(f"{folder}/tablet.key.json", by="office")
    >>> {r["status"] for r in retry_held(office)}
    {'imported'}
    >>> field.close(); office.close()

    The store is checked first (:meth:`Store.check_health`: a damaged store is refused with
    how to recover).  Files are read and verified without the write lock; then each is merged
    atomically on its own (a savepoint: a rejected file leaves no trace), up to ``batch`` files
    and ``batch_bytes`` bytes sharing one durable commit, and no commit holding the lock for
    much more than :data:`LOCK_BUDGET` seconds.  A fault of the store itself (full disk,
    damage) stops the import with a StoreFaultError; files committed before stay imported.
    ``progress(done, total)`` is called after each file.
    """
    files = expand_paths(paths)
    if check and files:
        store.check_health()
    results: list[dict] = []
    at = 0
    while at < len(files):
        prepared, size = [], 0
        while at < len(files) and len(prepared) < batch and (not prepared or size < batch_bytes):
            prepared.append(_prepare(store, files[at]))
            size += prepared[-1]["size"]
            at += 1
        while prepared:
            with store.transaction():
                started = time.monotonic()
                while prepared and (time.monotonic() - started < LOCK_BUDGET):
                    results.append(_merge(store, prepared.pop(0)))
                    if progress is not None:
                        progress(len(results), len(files))
    return results


def retry_held(store) -> list[dict]:
    """Verify every held package again (after a device was trusted, say) and merge those
    that may merge now; one :func:`import_file`-like dict per held package, ``file`` being
    ``held:<checksum>``."""
    results = []
    for entry in store.held_packages():
        data = store.held_content(entry["file_sha"]).encode("ascii")
        item: dict[str, Any] = {
            "file": f"held:{entry['file_sha']}",
            "size": len(data),
            "result": None,
            "data": data,
            "file_sha": entry["file_sha"],
        }
        try:  # fmt: skip
            item["manifest"], item["records"] = parse_package(data)
            item["signed"] = signature_valid(data, item["manifest"])
        except PackageError as exc:
            item["result"] = {"file": item["file"], "visit": entry["visit_uuid"],
                              "status": "held", "message": f"held: {exc}"}  # fmt: skip
        with store.transaction():
            results.append(_merge(store, item))
    return results

"""Visit packages: one self-contained, checksummed file per finished visit, for office sync by
file copy (USB stick, shared folder).  Data only -- JSON, no code, no pickle.

A package is the canonical JSON text (sorted keys, no spaces, ASCII) of::

    {"manifest": {"format": "stakeline-visit/1", "visit": UUID, "device": ..., "created": ...,
                  "sha256": HEX},
     "records": {site, section, visit, edits, station_versions, water_levels, overrides}}

followed by one newline.  ``sha256`` is taken over the canonical text of the same document without
the ``sha256`` field, so it covers the manifest and every record.  On import the file must be
exactly its canonical form and the checksum must match, so any changed byte -- in a value, in
the manifest or in the layout -- is detected.  Files are written under a temporary name, synced
and renamed, so a half-written file never carries the package name.  Nothing inside a package is
ever used as a file path; size and row limits stop a hostile file from filling the office disk.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import Any

from stakeline.store.values import METHODS, TEXT_LIMIT, StoreError, canonical_json, now
from stakeline.survey.reduction import UNITS

FORMAT = "stakeline-visit/1"
"""Format tag of the package files this code writes and reads."""

SUFFIX = ".stakeline-visit.json"
"""File name ending of a visit package."""

MAX_BYTES = 8 * 1024 * 1024
"""Largest package file accepted (bytes); a real visit is a few tens of kilobytes."""

MAX_ROWS = 20_000
"""Most records of one kind (station versions, edits...) accepted in one package."""

_BLANK = "0" * 64
_SHA_KEY = b'"sha256":"'
_RECORDS_KEY = b',"records":'
_UUID = re.compile(r"^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$")
_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")
_STAMPS = {"created": "time", "modified": "time", "device": "text"}
FIELDS: dict[str, dict[str, str]] = {
    "site": {"uuid": "uuid", "name": "text", "stream": "text", "description": "text", **_STAMPS},
    "section": {
        "uuid": "uuid", "site_uuid": "uuid", "name": "text", "left_stake": "text",
        "right_stake": "text", "origin": "origin", "benchmark_name": "text",
        "benchmark_elevation": "number?", "benchmark_assumed": "flag", "left_lon": "number?",
        "left_lat": "number?", "right_lon": "number?", "right_lat": "number?", **_STAMPS,
    },
    "visit": {
        "uuid": "uuid", "section_uuid": "uuid", "date": "date", "crew": "names", "unit": "unit",
        "method": "method", "line_left": "number?", "line_right": "number?",
        "line_check": "number?", "stake_distance": "number?", "backsight": "number?",
        "notes": "text", "planned": "numbers", "settings": "object", "finished": "time?",
        **_STAMPS,
    },
    "edits": {
        "uuid": "uuid", "record_table": "table", "record_uuid": "uuid", "before": "object",
        "after": "object", "created": "time", "device": "text",
    },
    "station_versions": {
        "uuid": "uuid", "station_uuid": "uuid", "visit_uuid": "uuid", "action": "action",
        "station": "number?", "reading": "number?", "code": "text?", "note": "text?",
        "seq": "count", "undoes": "uuid?", "created": "time", "device": "text",
    },
    "water_levels": {
        "uuid": "uuid", "visit_uuid": "uuid", "elevation": "number", "time": "time", **_STAMPS,
    },
    "overrides": {
        "uuid": "uuid", "visit_uuid": "uuid", "kind": "text", "station": "number?",
        "reason": "text", **_STAMPS,
    },
}  # fmt: skip
"""Every field of every record kind in a package, with its kind of value."""

LISTS = ("edits", "station_versions", "water_levels", "overrides")
CHOICES = {
    "origin": ("left", "right"),
    "unit": tuple(UNITS),
    "method": METHODS,
    "table": ("sites", "sections", "visits"),
    "action": ("add", "correct", "remove", "undo"),
}


class PackageError(StoreError):
    """A package file that cannot be imported; the message is the one-line reason."""


def sha256_hex(data: bytes) -> str:
    """SHA-256 of ``data`` as 64 lowercase hex digits."""
    return hashlib.sha256(data).hexdigest()


def _canonical_bytes(document: Any) -> bytes:
    return (json.dumps(document, sort_keys=True, separators=(",", ":"), ensure_ascii=True,
                       allow_nan=False) + "\n").encode("ascii")  # fmt: skip


def build_package(records: dict, device: str, created: str) -> bytes:
    """The bytes of a package holding ``records`` (as ``Store.visit_records``)."""
    manifest = {"format": FORMAT, "visit": records["visit"]["uuid"], "device": device,
                "created": created, "sha256": _BLANK}  # fmt: skip
    unsigned = _canonical_bytes({"manifest": manifest, "records": records})
    start = _checksum_at(unsigned)
    return unsigned[:start] + sha256_hex(unsigned).encode("ascii") + unsigned[start + 64 :]


def _checksum_at(data: bytes) -> int:
    """Offset of the manifest checksum's 64 hex digits in canonical package bytes.

    The manifest is the first key and its string values cannot hold a bare quote, so the first
    ``"sha256":"`` is the manifest's own."""
    return data.index(_SHA_KEY) + len(_SHA_KEY)


def records_sha(records: dict) -> str:
    """SHA-256 of the records alone (same content packed twice gives the same value)."""
    return sha256_hex(canonical_json(records).encode("ascii"))


def _records_sha_of(data: bytes) -> str:
    """:func:`records_sha` of verified package bytes, from the records' own canonical text."""
    start = data.index(_RECORDS_KEY) + len(_RECORDS_KEY)
    return sha256_hex(data[start:-2])


def _is_number(value: Any) -> bool:
    return (type(value) is float or type(value) is int) and math.isfinite(value)


def _is_text(value: Any, limit: int = TEXT_LIMIT) -> bool:
    return type(value) is str and len(value) <= limit


_CHECKS: dict[str, Callable[[Any], bool]] = {
    "number": _is_number,
    "count": lambda v: type(v) is int and v >= 0,
    "text": _is_text,
    "time": lambda v: _is_text(v, 40),
    "uuid": lambda v: type(v) is str and len(v) == 36 and _UUID.match(v) is not None,
    "date": lambda v: type(v) is str and _DATE.match(v) is not None,
    "flag": lambda v: type(v) is int and v in (0, 1),
    "names": lambda v: type(v) is list and all(_is_text(n) for n in v),
    "numbers": lambda v: type(v) is list and all(_is_number(n) for n in v),
    "object": lambda v: type(v) is dict,
    **{kind: (lambda v, allowed=allowed: v in allowed) for kind, allowed in CHOICES.items()},
}


def _checker(kind: str) -> Callable[[Any], bool]:
    check = _CHECKS[kind.rstrip("?")]
    if kind.endswith("?"):
        return lambda v: v is None or check(v)
    return check


_RECORD_CHECKS = {
    kind: (frozenset(fields), [(name, _checker(k)) for name, k in fields.items()])
    for kind, fields in FIELDS.items()
}


def _value_ok(kind: str, value: Any) -> bool:
    """Whether ``value`` is a valid value of a field of kind ``kind`` (see FIELDS)."""
    return _checker(kind)(value)


def _check_record(kind: str, record: Any, where: str) -> None:
    names, checks = _RECORD_CHECKS[kind]
    if type(record) is not dict or record.keys() != names:
        raise PackageError(f"{where} does not have the fields of a {kind} record")
    for name, check in checks:
        if not check(record[name]):
            raise PackageError(f"{where} has a bad {name} value {str(record[name])[:40]!r}")


def check_records(records: Any, visit_uuid: str) -> None:
    """Raise PackageError unless ``records`` is a well-formed, self-consistent visit."""
    if not isinstance(records, dict) or set(records) != {"site", "section", "visit", *LISTS}:
        raise PackageError("its records are not those of a visit package")
    for kind in ("site", "section", "visit"):
        _check_record(kind, records[kind], kind)
    site, section, visit = records["site"], records["section"], records["visit"]
    if section["site_uuid"] != site["uuid"] or visit["section_uuid"] != section["uuid"]:
        raise PackageError("its site, section and visit do not belong together")
    if visit["uuid"] != visit_uuid:
        raise PackageError("its manifest names a different visit than its records")
    owners = {site["uuid"]: "sites", section["uuid"]: "sections", visit["uuid"]: "visits"}
    seen = set(owners)
    for kind in LISTS:
        rows = records[kind]
        if not isinstance(rows, list) or len(rows) > MAX_ROWS:
            raise PackageError(f"its {kind} are not a list of at most {MAX_ROWS} records")
        for i, row in enumerate(rows):
            _check_record(kind, row, f"{kind} record {i + 1}")
            if row["uuid"] in seen:
                raise PackageError(f"{kind} record {i + 1} repeats an id")
            seen.add(row["uuid"])
            if kind == "edits":
                if owners.get(row["record_uuid"]) != row["record_table"]:
                    raise PackageError(f"edit {i + 1} is not about this visit's records")
            elif row["visit_uuid"] != visit_uuid:
                raise PackageError(f"{kind} record {i + 1} belongs to another visit")


def _damaged(data: bytes, exc: ValueError) -> PackageError:
    position = getattr(exc, "pos", 0) or 0
    if not data.endswith(b"\n") or position >= len(data) - 2:
        return PackageError("truncated: the file ends early (incomplete copy?)")
    return PackageError(f"damaged: not valid package text near byte {position}")


def parse_package(data: bytes) -> tuple[dict, dict]:
    """Verify package bytes; returns (manifest, records) or raises PackageError (one line)."""
    if not data:
        raise PackageError("empty file")
    if len(data) > MAX_BYTES:
        raise PackageError(f"larger than the {MAX_BYTES // (1024 * 1024)} MiB package limit")
    if not data.startswith(b'{"manifest":'):
        raise PackageError("not a Stakeline visit package")
    try:
        document = json.loads(data.decode("ascii"))
    except UnicodeDecodeError:
        raise PackageError("damaged: a byte that Stakeline never writes") from None
    except RecursionError:
        raise PackageError("damaged: nested too deeply") from None
    except ValueError as exc:
        raise _damaged(data, exc) from None
    if not isinstance(document, dict) or set(document) != {"manifest", "records"}:
        raise PackageError("not a Stakeline visit package")
    manifest = document["manifest"]
    if not isinstance(manifest, dict) or set(manifest) != {
        "format", "visit", "device", "created", "sha256"
    }:  # fmt: skip
        raise PackageError("damaged or foreign: its manifest is not a Stakeline manifest")
    if manifest["format"] != FORMAT:
        raise PackageError(f"format {str(manifest['format'])[:40]!r} is not {FORMAT!r}")
    try:
        canonical = _canonical_bytes(document)
    except ValueError:
        raise PackageError("damaged: a number that is not finite") from None
    if canonical != data:
        raise PackageError("damaged: the file differs from the form Stakeline writes")
    start = _checksum_at(data)
    unsigned = data[:start] + _BLANK.encode("ascii") + data[start + 64 :]
    if manifest["sha256"] != sha256_hex(unsigned):
        raise PackageError("checksum mismatch: the file was damaged or altered")
    if not _value_ok("uuid", manifest["visit"]) or not _value_ok("text", manifest["device"]):
        raise PackageError("damaged: its manifest names no visit or device")
    check_records(document["records"], manifest["visit"])
    return manifest, document["records"]


def read_limited(path: str | os.PathLike) -> bytes:
    """The bytes of a regular file of at most MAX_BYTES; PackageError otherwise."""
    try:
        with open(path, "rb") as handle:
            if not os.path.isfile(path):
                raise PackageError("not a regular file")
            data = handle.read(MAX_BYTES + 1)
    except FileNotFoundError:
        raise PackageError("no such file") from None
    except IsADirectoryError:
        raise PackageError("a folder, not a package file") from None
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
    """Write ``data`` to ``path`` so that ``path`` is either absent, the old file or the whole
    new one: write a temporary file in the same folder, fsync, rename, fsync the folder."""
    temporary = path.with_name(f".{path.name}.{os.getpid()}.partial")
    try:
        with open(temporary, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(temporary, path)
    finally:
        if temporary.exists():
            temporary.unlink()
    folder = os.open(path.parent, os.O_RDONLY)
    try:
        os.fsync(folder)
    finally:
        os.close(folder)


def _packed_records_sha(path: Path) -> str | None:
    try:
        return records_sha(parse_package(read_limited(path))[1])
    except PackageError:
        return None


def pack_visits(
    store, outbox: str | os.PathLike, progress: Callable[[int, int], None] | None = None
) -> list[dict]:
    """Write a package for every finished visit of ``store`` into the folder ``outbox``.

    Returns one dict per visit: {visit, path, status} with status ``written`` or ``unchanged``
    (the outbox already holds a package with the same records).  ``progress(done, total)`` is
    called after each package.
    """
    folder = Path(outbox)
    if folder.exists() and not folder.is_dir():
        raise PackageError(f"outbox {folder} is a file, not a folder")
    folder.mkdir(parents=True, exist_ok=True)
    results = []
    finished = [visit for visit in store.visits() if visit["finished"]]
    for visit in finished:
        records = store.visit_records(visit["uuid"])
        path = folder / package_name(records)
        status = "unchanged"
        if not path.exists() or _packed_records_sha(path) != records_sha(records):
            write_atomic(path, build_package(records, store.device_id, now()))
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


def import_file(store, path: str | os.PathLike) -> dict:
    """Import one package file into ``store``: {file, status, visit, message}.

    status: ``imported``, ``updated``, ``present`` (nothing changed), ``conflict`` (both copies
    kept, a person must choose) or ``rejected`` (store unchanged; message says why).
    """
    out = {"file": os.fspath(path), "visit": None}
    try:
        data = read_limited(path)
        file_sha = sha256_hex(data)
        seen = store.package_seen(file_sha)
        if seen is not None:
            unresolved = seen["status"] == "conflict" and seen["resolved"] is None
            note = "unresolved conflict" if unresolved else "nothing changed"
            return {**out, "visit": seen["visit_uuid"],
                    "status": "conflict" if unresolved else "present",
                    "message": f"already imported on {seen['imported'][:10]}; {note}"}  # fmt: skip
        manifest, records = parse_package(data)
        result = store.import_visit_records(
            records, file_sha, _records_sha_of(data), manifest["device"], data.decode("ascii")
        )
    except StoreError as exc:
        return {**out, "status": "rejected", "message": f"rejected: {exc}"}
    return {**out, **result}


def import_files(
    store,
    paths: Iterable[str | os.PathLike],
    batch: int = 200,
    progress: Callable[[int, int], None] | None = None,
) -> list[dict]:
    """Import package files (folders expand to their packages); one :func:`import_file` dict
    per file, in order.

    Each file is atomic on its own (a savepoint: a rejected file leaves no trace); up to
    ``batch`` files share one durable commit, so the office waits for the disk once per batch.
    ``progress(done, total)`` is called after each file.
    """
    files = expand_paths(paths)
    results: list[dict] = []
    for start in range(0, len(files), batch):
        with store.transaction():
            for path in files[start : start + batch]:
                results.append(import_file(store, path))
                if progress is not None:
                    progress(len(results), len(files))
    return results

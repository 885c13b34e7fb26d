"""What went wrong with the store file itself, said so a person can act on it.

SQLite reports a full disk, a damaged file, a read-only folder or a lock held by another
program as ``sqlite3`` exceptions with terse texts ("database or disk is full", "database disk
image is malformed", "unable to open database file").  :func:`store_fault` turns each into a
:class:`StoreError` subclass whose one-line message names the store, the cause and what to do.
No SQL here.
"""

from __future__ import annotations

import sqlite3

from stakeline.store.values import StoreError

SQLITE_BUSY, SQLITE_LOCKED, SQLITE_READONLY = 5, 6, 8
SQLITE_IOERR, SQLITE_CORRUPT, SQLITE_FULL, SQLITE_CANTOPEN = 10, 11, 13, 14
SQLITE_NOTADB = 26


class StoreFaultError(StoreError):
    """The store file could not be used (disk, damage, permissions, lock); nothing was changed
    by the failed operation."""


class StoreFullError(StoreFaultError):
    """The disk holding the store (or the store's size limit) is full."""


class StoreCorruptError(StoreFaultError):
    """The store file is damaged; only a salvage into a new file can help."""


class StoreReadOnlyError(StoreFaultError):
    """The store file or its folder cannot be written (read-only file system or permissions)."""


class StoreLockedError(StoreFaultError):
    """Another program kept the store locked for longer than this one would wait."""


def salvage_hint(path: str | None) -> str:
    """The one sentence that says how to recover a damaged store at ``path``."""
    where = path or "STORE"
    return (
        f"stop using it and copy what can still be read into a new file with "
        f"'stakeline salvage --store {where} --into NEW-FILE' (the damaged file is left as it is)"
    )


def _code(exc: BaseException) -> int | None:
    code = getattr(exc, "sqlite_errorcode", None)
    return None if code is None else code & 0xFF


def is_locked(exc: BaseException) -> bool:
    """Whether ``exc`` says another connection holds the lock (SQLITE_BUSY/LOCKED)."""
    code = _code(exc)
    if code is not None:
        return code in (SQLITE_BUSY, SQLITE_LOCKED)
    return "locked" in str(exc) or "busy" in str(exc)


def store_fault(exc: sqlite3.Error, path: str | None) -> StoreError | None:
    """The :class:`StoreFaultError` for an SQLite error about the file itself, or None when
    ``exc`` is about the statement (a constraint, a bad value) and should be handled as such."""
    where = f"the store {path}" if path else "the in-memory store"
    text = str(exc)
    code = _code(exc)
    if code == SQLITE_FULL or "disk is full" in text:
        return StoreFullError(
            f"the disk holding {where} is full (SQLite: {text}); nothing of the failed change "
            "was kept -- free some space on that disk and do it again"
        )
    if code in (SQLITE_CORRUPT, SQLITE_NOTADB) or "malformed" in text:
        return StoreCorruptError(f"{where} is damaged (SQLite: {text}); {salvage_hint(path)}")
    if code == SQLITE_READONLY or "readonly database" in text:
        return StoreReadOnlyError(
            f"{where} cannot be written: the file or its folder is read-only (SQLite: {text}); "
            "commands that only read still work -- copy the store to a writable folder to "
            "change it"
        )
    if code == SQLITE_CANTOPEN:
        return StoreReadOnlyError(
            f"{where} cannot be opened for writing (SQLite: {text}); check that its folder "
            "exists and can be written, or copy the store to a writable folder"
        )
    if code == SQLITE_IOERR or "disk I/O error" in text:
        return StoreFaultError(
            f"reading or writing {where} failed (SQLite: {text}); check the disk or the "
            "USB connection, then do it again -- nothing of the failed change was kept"
        )
    if is_locked(exc):
        return StoreLockedError(
            f"{where} stayed locked by another program (SQLite: {text}); wait until that "
            "program has finished, then do it again"
        )
    return None

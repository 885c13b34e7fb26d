"""Writing files so they are whole or absent, and reading only regular files.

One helper for every file Stakeline writes (visit packages, exports, reports, key files): the
bytes go to a temporary file created exclusively (``O_EXCL``, a random name) in the target's
folder, are flushed and fsynced, the file gets its mode (0644, or 0600 for a key), is renamed
over the target, and the folder is fsynced so the rename itself survives a power cut.  A
temporary file left by a killed process (``.NAME.PID.RANDOM.partial``) is removed by the next
writer into that folder once its process is gone.

Reading refuses anything but a regular file *before* reading a byte: a named pipe would block
for ever, a device would never end.  The check is made on the opened descriptor (opened
non-blocking), so nothing can be swapped in between the check and the read.
"""

from __future__ import annotations

import os
import stat
import tempfile
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from stakeline.errors import SurveyError

PARTIAL = ".partial"
"""Ending of the temporary files of an unfinished write."""

STALE_AFTER = 24 * 3600.0
"""A temporary file whose process id cannot be read is stale after this long (seconds)."""


class NotRegularFileError(SurveyError):
    """A path that is not a regular file (a pipe, device, socket or folder) was to be read."""


def fsync_folder(folder: str | os.PathLike) -> None:
    """Flush a folder's entries (a rename into it) to disk; a no-op where folders cannot be
    opened (Windows)."""
    try:
        handle = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(handle)
    except OSError:
        pass  # some file systems cannot sync a folder; the file itself was synced
    finally:
        os.close(handle)


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True  # it exists but belongs to someone else
    return True


def remove_stale_partials(folder: str | os.PathLike) -> list[str]:
    """Remove temporary files of killed writers in ``folder``; returns the names removed.

    A temporary file is stale when the process named in it is gone, or when it is older than
    :data:`STALE_AFTER` (its process id may have been reused since).
    """
    removed = []
    try:
        names = os.listdir(folder)
    except OSError:
        return removed
    for name in names:
        if not (name.startswith(".") and name.endswith(PARTIAL)):
            continue
        path = os.path.join(folder, name)
        parts = name[: -len(PARTIAL)].split(".")
        # .NAME.PID.RANDOM.partial (this module) or .NAME.PID.partial (earlier Stakeline)
        digits = [p for p in parts[-2:] if p.isdigit()] if len(parts) >= 3 else []
        pid = int(digits[-1]) if digits else None
        try:
            info = os.lstat(path)
        except OSError:
            continue
        if not stat.S_ISREG(info.st_mode):
            continue
        old = time.time() - info.st_mtime > STALE_AFTER
        if pid != os.getpid() and (old or (pid is not None and not _alive(pid))):
            try:
                os.unlink(path)
                removed.append(name)
            except OSError:
                pass
    return removed


@contextmanager
def atomic_path(path: str | os.PathLike, mode: int = 0o644) -> Iterator[Path]:
    """A temporary path to write ``path``'s new content to; on leaving the block it is
    fsynced, given ``mode``, renamed over ``path`` and the folder fsynced.  On an error the
    temporary file is removed and ``path`` is left as it was.

    The temporary file exists (empty, created exclusively, mode 0600) when the block starts;
    writers may reopen it by name (matplotlib, say).
    """
    target = Path(path)
    folder = target.parent
    remove_stale_partials(folder)
    handle, name = tempfile.mkstemp(
        prefix=f".{target.name}.{os.getpid()}.", suffix=PARTIAL, dir=folder
    )
    os.close(handle)
    temporary = Path(name)
    try:
        yield temporary
        with open(temporary, "rb+") as written:
            written.flush()
            os.fsync(written.fileno())
        os.chmod(temporary, mode)
        os.replace(temporary, target)
    except BaseException:
        try:
            temporary.unlink()
        except OSError:
            pass
        raise
    fsync_folder(folder)


def write_atomic(path: str | os.PathLike, data: bytes, mode: int = 0o644) -> Path:
    """Write ``data`` to ``path`` so that ``path`` is the old file or the whole new one, never a
    part; durable (fsynced) before returning.  ``mode`` 0o644, or 0o600 for a secret."""
    target = Path(path)
    with atomic_path(target, mode) as temporary:
        with open(temporary, "wb") as handle:
            handle.write(data)
    return target


def create_exclusive(path: str | os.PathLike, data: bytes, mode: int = 0o600) -> Path:
    """Create ``path`` holding ``data`` with ``mode``; FileExistsError if anything (a file or a
    link) is already there.  Durable before returning."""
    target = Path(path)
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
    handle = os.open(target, flags, mode)
    try:
        os.write(handle, data)
        os.fchmod(handle, mode)
        os.fsync(handle)
    except BaseException:
        os.close(handle)
        target.unlink()
        raise
    os.close(handle)
    fsync_folder(target.parent)
    return target


_KINDS = {
    stat.S_IFIFO: "a named pipe",
    stat.S_IFCHR: "a character device",
    stat.S_IFBLK: "a block device",
    stat.S_IFSOCK: "a socket",
    stat.S_IFDIR: "a folder",
}


def read_regular(path: str | os.PathLike, limit: int) -> bytes:
    """The bytes of the regular file at ``path``, at most ``limit + 1`` of them (so a caller
    can tell a file over the limit).  Raises :class:`NotRegularFileError` for anything that is
    not a regular file, without reading it, and OSError when the file cannot be read.
    """
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0)
    try:
        handle = os.open(path, flags)
    except IsADirectoryError:
        raise NotRegularFileError("a folder, not a file") from None
    try:
        kind = stat.S_IFMT(os.fstat(handle).st_mode)
        if kind != stat.S_IFREG:
            raise NotRegularFileError(f"{_KINDS.get(kind, 'a special file')}, not a regular file")
        chunks, size = [], 0
        while size <= limit:
            chunk = os.read(handle, min(1 << 20, limit + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        return b"".join(chunks)
    finally:
        os.close(handle)

"""Devices and their signing keys: one part of :class:`stakeline.store.Store` (chain of custody).

A store holds its own key pair (private half in the file beside it, see
:mod:`stakeline.store.signing`) and the public keys of the devices it trusts, each with who
trusted it and when.  A key is retired when its device is replaced or lost: packages that say
they were signed at or after the retirement are held; when the key was *lost*, every package
it signed that arrives afterwards is held, whatever time it claims, because a thief holding the
key can write any time into the package.
"""

from __future__ import annotations

import getpass
import os
import socket
from datetime import UTC, datetime
from typing import Any

from nacl.signing import SigningKey
from stakeline.files.durable import write_atomic
from stakeline.store import signing
from stakeline.store.connection import StoreConnection
from stakeline.store.values import StoreError, now, text

DEVICE_KEYS = ("device", "public_key", "fingerprint", "created", "own", "trusted_by",
               "trusted_at", "retired_at", "retired_by", "lost", "note")  # fmt: skip
"""Keys of each device dict returned by :meth:`Devices.devices`."""


def office_user() -> str:
    """Who is doing this, for the record: ``user@host`` from the environment."""
    try:
        user = getpass.getuser()
    except (OSError, KeyError):
        user = os.environ.get("USER") or os.environ.get("USERNAME") or "unknown"
    return f"{user}@{socket.gethostname() or 'unknown-host'}"


def _time(value: Any) -> datetime | None:
    try:
        moment = datetime.fromisoformat(str(value))
    except ValueError:
        return None
    return moment if moment.tzinfo else moment.replace(tzinfo=UTC)


class Devices:
    """This store's signing key and the devices it trusts, over its shared connection."""

    def __init__(self, db: StoreConnection):
        self.db = db
        self._key: SigningKey | None = None

    # -- this store's own key -----------------------------------------------------------------
    def signing_key(self) -> SigningKey:
        """This store's signing key, made (file beside the store, mode 0600) on first use."""
        if self._key is not None:
            return self._key
        if self.db.path is None:
            key = signing.generate_key()  # an in-memory store keeps its key in memory only
        else:
            path = signing.key_file_for(self.db.path)
            if os.path.lexists(path):
                key = signing.load_key_file(path)
            elif self.db.readonly:
                raise StoreError(
                    f"the store {self.db.path} has no signing key yet; open it once where it "
                    "can be written to make one"
                )
            else:
                key = signing.create_key_file(path)
        if not self.db.readonly:
            self._record_own(signing.public_hex(key))
        self._key = key
        return key

    def _record_own(self, public_key: str) -> None:
        if self.db.row("SELECT 1 FROM devices WHERE public_key = ?", [public_key]):
            return
        stamp = now()
        with self.db.transaction():
            self.db.conn.execute(
                "INSERT OR IGNORE INTO devices (public_key, device_id, created, own, trusted_by,"
                " trusted_at, lost, note) VALUES (?, ?, ?, 1, ?, ?, 0, ?)",
                [public_key, self.db.device_id, stamp, "this store's own key", stamp,
                 "made on first use"],
            )  # fmt: skip

    def device_key(self) -> dict:
        """This store's public key, made on first use: {device, public_key, fingerprint,
        created, key_file (path of the private half, None in memory)}.  Call it at the app's
        first start so the key exists before the first package."""
        public_key = signing.public_hex(self.signing_key())
        row = self.db.row("SELECT * FROM devices WHERE public_key = ?", [public_key])
        created = row["created"] if row else now()
        device = row["device_id"] if row else self.db.device_id
        key_file = None if self.db.path is None else str(signing.key_file_for(self.db.path))
        return {"device": device, "public_key": public_key,
                "fingerprint": signing.fingerprint(public_key), "created": created,
                "key_file": key_file}  # fmt: skip

    def export_device_key(self, out: str | os.PathLike) -> dict:
        """Write this device's public key file (device id, public key, created) to ``out``
        (mode 0644) for the office to trust; returns :meth:`device_key`'s dict with ``path``."""
        key = self.device_key()
        document = signing.device_key_document(key["device"], key["public_key"], key["created"])
        if os.path.isdir(out):
            raise StoreError(f"{out} is a folder; give the key file's name")
        try:
            write_atomic(out, document, mode=0o644)
        except OSError as exc:
            raise StoreError(f"cannot write the device key file {out} ({exc.strerror})") from None
        return {**key, "path": os.fspath(out)}

    # -- devices this store trusts ------------------------------------------------------------
    def trust_device(self, key_file: str | os.PathLike, by: str | None = None) -> dict:
        """Trust the device whose key file is ``key_file``: its packages merge from now on.
        Records who (``by``, default ``user@host``) and when; returns the device's dict (as
        :meth:`devices`).  A retired key is never trusted again."""
        found = signing.read_device_key(key_file)
        who = text(by, "name of who trusts the device").strip() or office_user()
        existing = self.device(found["public_key"])
        if existing is not None and existing["retired_at"]:
            raise StoreError(
                f"the key {existing['fingerprint']} of device {existing['device']!r} was retired "
                f"on {existing['retired_at'][:10]}; a retired key is never trusted again -- ask "
                "for the device's new key file"
            )
        if existing is not None and existing["trusted_at"]:
            return existing
        with self.db.transaction():
            self.db.conn.execute(
                "INSERT INTO devices (public_key, device_id, created, own, trusted_by, "
                "trusted_at, lost, note) VALUES (?, ?, ?, 0, ?, ?, 0, '') "
                "ON CONFLICT (public_key) DO UPDATE SET trusted_by = excluded.trusted_by, "
                "trusted_at = excluded.trusted_at",
                [found["public_key"], found["device"], found["created"], who, now()],
            )
        return self.device(found["public_key"])

    def retire_device(
        self, which: str, by: str | None = None, lost: bool = False, at: str | None = None
    ) -> dict:
        """Retire a key (``which``: public key, its start >= 8 hex, fingerprint or a device id
        with one key in use).  Packages it signs from ``at`` (default now) on are held; with
        ``lost`` every package of it imported from now on is held.  Returns the device dict."""
        row = self._find(which)
        when = now() if at is None else text(at, "retirement time")
        if _time(when) is None:
            raise StoreError(f"retirement time {when[:40]!r} is not a time like 2026-05-02T08:00")
        who = text(by, "name of who retires the key").strip() or office_user()
        with self.db.transaction():
            self.db.conn.execute(
                "UPDATE devices SET retired_at = ?, retired_by = ?, lost = ? WHERE public_key = ?",
                [when, who, int(bool(lost)), row["public_key"]],
            )
        if row["own"] and self._key is not None:
            self._key = None
        return self.device(row["public_key"])

    def _find(self, which: str) -> dict:
        which = text(which, "device or key").strip().lower()
        rows = [d for d in self.devices() if which in (d["public_key"], d["fingerprint"])]
        if not rows and len(which) >= 8 and all(c in "0123456789abcdef" for c in which):
            rows = [d for d in self.devices() if d["public_key"].startswith(which)]
        if not rows:
            rows = [d for d in self.devices() if d["device"].lower() == which]
            rows = [d for d in rows if not d["retired_at"]] or rows
        if len(rows) != 1:
            found = "several keys" if rows else "no key"
            raise StoreError(f"{found} in this store match {which[:70]!r}; see the device list")
        return rows[0]

    def device(self, public_key: str) -> dict | None:
        """One device key's dict (as :meth:`devices`), or None when the store does not know it."""
        row = self.db.row("SELECT * FROM devices WHERE public_key = ?", [public_key])
        return None if row is None else self._device_dict(row)

    @staticmethod
    def _device_dict(row: dict) -> dict:
        return {
            "device": row["device_id"],
            "public_key": row["public_key"],
            "fingerprint": signing.fingerprint(row["public_key"]),
            "created": row["created"],
            "own": bool(row["own"]),
            "trusted_by": row["trusted_by"],
            "trusted_at": row["trusted_at"],
            "retired_at": row["retired_at"],
            "retired_by": row["retired_by"],
            "lost": bool(row["lost"]),
            "note": row["note"] or "",
        }

    def devices(self) -> list[dict]:
        """Every key this store knows, by device then date: {device, public_key, fingerprint,
        created, own (this store's own key), trusted_by, trusted_at (None: not trusted),
        retired_at, retired_by (None: in use), lost, note}."""
        rows = self.db.rows("SELECT * FROM devices ORDER BY device_id, created, public_key")
        return [self._device_dict(row) for row in rows]

    def signer_verdict(self, public_key: str, device: str, signed_at: str) -> str | None:
        """None when a package signed by ``public_key`` at ``signed_at`` (as the package says)
        may merge; else the reason to hold it (one line)."""
        known = self.device(public_key)
        label = f"device {device[:60]!r} (key {signing.fingerprint(public_key)})"
        if known is None or not known["trusted_at"]:
            return (
                f"signed by {label}, which this office does not trust; if the device is yours, "
                "trust its device key file and import the package again"
            )
        if known["retired_at"]:
            retired = known["retired_at"][:19]
            if known["lost"]:
                return f"signed by {label}, whose key was reported lost on {retired}"
            claimed, since = _time(signed_at), _time(known["retired_at"])
            if claimed is None or since is None or claimed >= since:
                return (
                    f"signed by {label} at {signed_at[:19]}, after its key was retired on {retired}"
                )
        return None

"""Ed25519 signing keys of devices (PyNaCl), their key files and public-key files.  No SQL.

Each store file has its own key pair.  The private half lives in one file beside the store,
``<store file>.signing-key`` (for the app: ``stakeline.sqlite.signing-key`` in its data
folder), created exclusively with mode 0600 and never copied anywhere by Stakeline.  The public
half is recorded in the store and written, with the device id, to a small *device key file*
that the office trusts once (:func:`device_key_document`).

Only the stable PyNaCl API is used: ``SigningKey.generate()``, ``SigningKey(seed)``,
``sign``, ``VerifyKey(raw).verify``, raw 32-byte keys and 64-byte signatures.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import stat
from pathlib import Path

from nacl.exceptions import CryptoError
from nacl.signing import SigningKey, VerifyKey
from stakeline.files.durable import NotRegularFileError, create_exclusive, read_regular
from stakeline.store.values import StoreError, canonical_json

KEY_SUFFIX = ".signing-key"
"""Ending of the private key file beside a store file."""

KEY_HEADER = "stakeline-signing-key/1"
"""First line of a private key file (the second holds the 32-byte seed in hex)."""

DEVICE_KEY_FORMAT = "stakeline-device-key/1"
"""Format tag of a device key file (the public half, for the office to trust)."""

DEVICE_KEY_SUFFIX = ".stakeline-device-key.json"
"""Suggested file name ending of a device key file."""

MAX_DEVICE_KEY_BYTES = 4096
"""Largest device key file accepted (bytes)."""

_HEX64 = re.compile(r"\A[0-9a-f]{64}\Z")
_HEX128 = re.compile(r"\A[0-9a-f]{128}\Z")


class KeyFileError(StoreError):
    """A key file that cannot be used; the message says which and what to do."""


def key_file_for(store_path: str | os.PathLike) -> Path:
    """The private key file of the store file at ``store_path``."""
    return Path(os.fspath(store_path) + KEY_SUFFIX)


def is_public_key(value: object) -> bool:
    """Whether ``value`` is an Ed25519 public key as Stakeline writes it (64 lowercase hex)."""
    return isinstance(value, str) and _HEX64.match(value) is not None


def is_signature(value: object) -> bool:
    """Whether ``value`` is an Ed25519 signature as Stakeline writes it (128 lowercase hex)."""
    return isinstance(value, str) and _HEX128.match(value) is not None


def generate_key() -> SigningKey:
    """A new random Ed25519 key pair (in memory)."""
    return SigningKey.generate()


def public_hex(key: SigningKey) -> str:
    """The public half of ``key`` as 64 lowercase hex digits."""
    return bytes(key.verify_key).hex()


def fingerprint(public_key: str) -> str:
    """A short form of a public key for people to compare aloud (16 hex digits in 4 groups).

    >>> fingerprint("00" * 32)  # the first 16 hex digits of SHA-256 of the 32 key bytes
    '6668-7aad-f862-bd77'
    """
    digest = hashlib.sha256(bytes.fromhex(public_key)).hexdigest()[:16]
    return "-".join(digest[i : i + 4] for i in range(0, 16, 4))


def create_key_file(path: str | os.PathLike) -> SigningKey:
    """Make a new key pair and keep its private half in ``path`` (created exclusively, mode
    0600); returns the key.  StoreError when something is already at ``path``."""
    key = generate_key()
    text = f"{KEY_HEADER}\n{bytes(key).hex()}\n".encode("ascii")
    try:
        create_exclusive(path, text, mode=0o600)
    except FileExistsError:
        raise KeyFileError(
            f"{path} already exists; Stakeline never overwrites a signing key file"
        ) from None
    except OSError as exc:
        raise KeyFileError(f"cannot create the signing key file {path} ({exc.strerror})") from None
    return key


def load_key_file(path: str | os.PathLike) -> SigningKey:
    """The key pair kept in ``path``; StoreError when it is not a private, sound key file."""
    try:
        info = os.lstat(path)
        if not stat.S_ISREG(info.st_mode):
            raise KeyFileError(f"the signing key {path} is not a regular file")
        if info.st_mode & 0o077:
            raise KeyFileError(
                f"the signing key {path} can be read by other users; make it private "
                f"(chmod 600 {path}) and try again"
            )
        data = read_regular(path, 256)
    except (OSError, NotRegularFileError) as exc:
        raise KeyFileError(f"cannot read the signing key {path} ({exc})") from None
    lines = data.decode("ascii", "replace").split("\n")
    if len(lines) < 2 or lines[0] != KEY_HEADER or not _HEX64.match(lines[1]):
        raise KeyFileError(f"{path} is not a Stakeline signing key file (damaged?)")
    return SigningKey(bytes.fromhex(lines[1]))


def sign(key: SigningKey, data: bytes) -> str:
    """The Ed25519 signature of ``data`` by ``key``, as 128 lowercase hex digits."""
    return key.sign(data).signature.hex()


def verify(public_key: str, data: bytes, signature: str) -> bool:
    """Whether ``signature`` (hex) is ``public_key``'s (hex) signature of ``data``."""
    if not is_public_key(public_key) or not is_signature(signature):
        return False
    try:
        VerifyKey(bytes.fromhex(public_key)).verify(data, bytes.fromhex(signature))
    except (CryptoError, ValueError, TypeError):
        return False
    return True


def device_key_document(device_id: str, public_key: str, created: str) -> bytes:
    """The bytes of a device key file: canonical JSON of {format, device, public_key,
    created} and a newline."""
    return (
        canonical_json(
            {"format": DEVICE_KEY_FORMAT, "device": device_id, "public_key": public_key,
             "created": created}
        )
        + "\n"
    ).encode("ascii")  # fmt: skip


def read_device_key(path: str | os.PathLike) -> dict:
    """The {device, public_key, created} of the device key file at ``path``; StoreError
    saying what is wrong otherwise."""
    try:
        data = read_regular(path, MAX_DEVICE_KEY_BYTES)
    except FileNotFoundError:
        raise KeyFileError(f"{path}: no such device key file") from None
    except (OSError, NotRegularFileError) as exc:
        raise KeyFileError(f"{path}: cannot be read ({exc})") from None
    if len(data) > MAX_DEVICE_KEY_BYTES:
        raise KeyFileError(f"{path} is too large to be a device key file")
    try:
        found = json.loads(data.decode("ascii"))
    except (UnicodeDecodeError, ValueError, RecursionError):
        found = None
    fields = {"format", "device", "public_key", "created"}
    if not isinstance(found, dict) or set(found) != fields:
        raise KeyFileError(f"{path} is not a Stakeline device key file")
    if found["format"] != DEVICE_KEY_FORMAT:
        raise KeyFileError(
            f"{path}: format {str(found['format'])[:40]!r} is not {DEVICE_KEY_FORMAT}"
        )
    device, key, created = found["device"], found["public_key"], found["created"]
    if not isinstance(device, str) or not device.strip() or len(device) > 200:
        raise KeyFileError(f"{path} names no device")
    if not is_public_key(key):
        raise KeyFileError(f"{path} holds no valid public key (64 hex digits)")
    if not isinstance(created, str) or len(created) > 40:
        raise KeyFileError(f"{path} has no valid creation time")
    try:
        VerifyKey(bytes.fromhex(key))
    except (CryptoError, ValueError, TypeError):
        raise KeyFileError(f"{path} holds no valid Ed25519 public key") from None
    return {"device": device, "public_key": key, "created": created}

"""Test helpers for the chain of custody: an office that trusts the devices of a test."""

from __future__ import annotations

import tempfile
from pathlib import Path


def trust(office, *fields) -> None:
    """Make ``office`` trust each field store's signing key, the way a person does it: the
    field store writes its device key file, the office trusts that file."""
    with tempfile.TemporaryDirectory() as folder:
        for n, field in enumerate(fields):
            key_file = Path(folder) / f"device-{n}.stakeline-device-key.json"
            field.export_device_key(key_file)
            office.trust_device(key_file, by="test office")

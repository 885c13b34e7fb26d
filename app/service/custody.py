"""Chain of custody on the device, as a mixin of the field service: the device's signing key
(made at the app's first start, see :func:`stakeline.app.service.open_service`), its fingerprint
for the crew to read to the office over the phone, and the device key file written into the
outbox so that it travels to the office with the packages.

The private half of the key never leaves the device's data folder; only the public key file is
written (:meth:`stakeline.store.Store.export_device_key`).
"""

from __future__ import annotations

import os

from stakeline.app.service.util import ServiceError
from stakeline.errors import SurveyError


class DeviceCustody:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``store`` and ``outbox``)."""

    def device_custody(self) -> dict:
        """This device's signing key as the crew sees it: ``device`` (its id), ``fingerprint``
        (16 hex digits in four groups, to read aloud), ``public_key``, ``created`` and
        ``key_file_name`` (the name the key file gets in the outbox)."""
        from stakeline.store.signing import DEVICE_KEY_SUFFIX

        key = self.store.device_key()
        return {
            "device": key["device"],
            "fingerprint": key["fingerprint"],
            "public_key": key["public_key"],
            "created": key["created"],
            "key_file_name": f"{_safe_name(key['device'])}{DEVICE_KEY_SUFFIX}",
        }

    def write_device_key(self, folder: str | None = None) -> dict:
        """Write this device's public key file into ``folder`` (default: the outbox, created
        when missing) for the office to trust; returns :meth:`device_custody` with ``path``."""
        custody = self.device_custody()
        folder = self.outbox() if folder is None else folder
        try:
            os.makedirs(folder, exist_ok=True)
        except OSError as exc:
            raise ServiceError(
                f"cannot make the folder {folder} ({exc.strerror}): choose another outbox in "
                "Settings"
            ) from None
        path = os.path.join(folder, custody["key_file_name"])
        try:
            written = self.store.export_device_key(path)
        except SurveyError as exc:
            raise ServiceError(str(exc)) from None
        return {**custody, "path": written["path"]}


def _safe_name(device: str) -> str:
    """``device`` as a file name: letters, digits, dot, dash and underscore kept, the rest ``_``.

    >>> _safe_name("tablet 07/B")
    'tablet_07_B'
    """
    return "".join(c if c.isalnum() or c in "._-" else "_" for c in device) or "device"

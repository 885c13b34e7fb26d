"""Device settings (unit, crew, precision, tolerances, office choices): one part of
:class:`stakeline.store.Store`.  Each value is any JSON value, kept as canonical JSON text."""

from __future__ import annotations

import json
from typing import Any

from stakeline.store.connection import StoreConnection
from stakeline.store.values import StoreError, canonical_json, now, text


class Settings:
    """The settings of a store, over its shared connection."""

    def __init__(self, db: StoreConnection):
        self.db = db

    def get_setting(self, key: str, default: Any = None) -> Any:
        """A device setting's value (any JSON value), or ``default`` when unset."""
        row = self.db.row("SELECT value FROM settings WHERE key = ?", [key])
        return default if row is None else json.loads(row["value"])

    def set_setting(self, key: str, value: Any) -> None:
        """Set a device setting (unit, crew, precision, tolerances...) to a JSON value."""
        try:
            value_json = canonical_json(value)
        except (TypeError, ValueError):
            raise StoreError(
                f"setting {key!r} must be a JSON value (text, number, list...)"
            ) from None
        with self.db.transaction():
            self.db.conn.execute(
                "INSERT INTO settings (key, value, modified) VALUES (?, ?, ?) "
                "ON CONFLICT (key) DO UPDATE SET value = excluded.value, "
                "modified = excluded.modified",
                [text(key, "setting name"), value_json, now()],
            )

    def get_meta(self, key: str) -> str | None:
        """A value the store keeps about itself (``meta`` table), or None."""
        row = self.db.row("SELECT value FROM meta WHERE key = ?", [key])
        return None if row is None else row["value"]

    def set_meta(self, key: str, value: str) -> None:
        """Keep a value about the store itself (``meta`` table), in its own transaction."""
        with self.db.transaction():
            self.db.conn.execute(
                "INSERT INTO meta (key, value) VALUES (?, ?) "
                "ON CONFLICT (key) DO UPDATE SET value = excluded.value",
                [key, value],
            )

"""The durable store (the only SQL in Stakeline) and visit packages for office sync."""

from stakeline.store.faults import (
    StoreCorruptError,
    StoreFaultError,
    StoreFullError,
    StoreLockedError,
    StoreReadOnlyError,
)
from stakeline.store.health import salvage
from stakeline.store.store import DEMO_PATH, METHODS, Store, StoreError

__all__ = [
    "DEMO_PATH",
    "METHODS",
    "Store",
    "StoreError",
    "StoreFaultError",
    "StoreCorruptError",
    "StoreFullError",
    "StoreLockedError",
    "StoreReadOnlyError",
    "salvage",
]

"""Fixtures of the store tests: a field tablet's store holding the invented demo survey, and an
office store that has trusted that tablet's key (a test file may define its own ``office``)."""

from __future__ import annotations

import pytest
from custody_helpers import trust
from stakeline.store import Store


@pytest.fixture
def field(tmp_path):
    """The field tablet's store with the demo survey (device ``tablet-A``)."""
    store = Store.open(tmp_path / "field.db", device_id="tablet-A")
    store.load_demo()
    yield store
    store.close()


@pytest.fixture
def office(tmp_path, field):
    """The office store, which has trusted the field tablet's key file."""
    store = Store.open(tmp_path / "office.db", device_id="office")
    trust(store, field)
    yield store
    store.close()

"""The public API a user scripts against: importable from ``stakeline``, documented with examples,
and cheap to import."""

from __future__ import annotations

import subprocess
import sys

import pytest
import stakeline

STORE_NAMES: set[str] = set()
"""Documented in stakeline.store (and exercised by the package's own example)."""


@pytest.mark.parametrize("name", stakeline.__all__)
def test_every_public_name_is_importable_and_documented(name):
    value = getattr(stakeline, name)
    assert value is getattr(stakeline, name)  # resolved once, then kept
    if not callable(value) or name in STORE_NAMES:
        return
    doc = value.__doc__ or ""
    assert "Examples" in doc and ">>>" in doc, f"{name} has no numpy-style Examples section"


def test_unknown_names_raise_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'Sektion'"):
        stakeline.Sektion  # noqa: B018
    assert "Section" in dir(stakeline)


HEAVY = ("numpy", "matplotlib", "sqlite_utils", "sqlite3", "kivy", "shapely")


def _loaded_after(code: str) -> list[str]:
    probe = f"import sys; {code}; print(','.join(m for m in {HEAVY!r} if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True)
    return [m for m in out.stdout.strip().split(",") if m]


def test_importing_stakeline_is_cheap():
    assert _loaded_after("import stakeline") == []
    assert _loaded_after("from stakeline import Section") == ["numpy"]
    # The command line loads the drawing and the touch app only for the commands that use them.
    cli = _loaded_after("import stakeline.app.cli")
    assert not {"matplotlib", "kivy", "shapely"} & set(cli)

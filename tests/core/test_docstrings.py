"""The examples in the core's docstrings run and give what they show (doctest)."""

from __future__ import annotations

import doctest
import importlib
from pathlib import Path

import pytest

CORE = Path(__file__).resolve().parents[2] / "core"
WITH_EXAMPLES = sorted(p.stem for p in CORE.glob("*.py") if ">>>" in p.read_text("utf-8"))


def test_the_core_has_examples():
    assert {"geometry", "reduction", "hydraulics", "checks"} <= set(WITH_EXAMPLES)


@pytest.mark.parametrize("name", WITH_EXAMPLES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(f"core.{name}"))
    assert result.failed == 0 and result.attempted > 0

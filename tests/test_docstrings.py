"""The examples in the core's docstrings run and give what they show (doctest)."""

from __future__ import annotations

import doctest
import importlib
from pathlib import Path

import pytest

CORE = Path(__file__).resolve().parents[1] / "core"
WITH_EXAMPLES = sorted(
    ".".join(("stakeline", *p.relative_to(CORE).with_suffix("").parts)).removesuffix(".__init__")
    for p in CORE.rglob("*.py")
    if ">>>" in p.read_text("utf-8")
)


def test_the_core_has_examples():
    names = {name.rsplit(".", 1)[-1] for name in WITH_EXAMPLES}
    assert {"geometry", "reduction", "hydraulics", "review"} <= names


@pytest.mark.parametrize("name", WITH_EXAMPLES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name))
    assert result.failed == 0 and result.attempted > 0

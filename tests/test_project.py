"""The project's promises about itself: README commands, CI, layout."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return [block.strip() for block in re.findall(r"```sh\n(.*?)```", text, flags=re.S)][:2]


def test_readme_opens_with_the_job_and_has_two_setup_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    first = text.split("\n\n")[1]
    for word in ("stakes", "plumb", "wetted area", "Stakeline"):
        assert word in first
    setup = text.split("## Set up")[1].split("\n## ")[0]
    blocks = re.findall(r"```sh\n(.*?)```", setup, flags=re.S)
    assert len(blocks) == 2
    assert all(len(b.strip().splitlines()) == 1 for b in blocks)
    assert "libgl1-mesa-dri" in blocks[0] and "libegl1" in blocks[1]
    assert blocks[0].strip().endswith(".venv/bin/stakeline")
    assert "pytest" in blocks[1]


def test_ci_runs_exactly_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert readme_commands()[1] in ci.splitlines()


def test_layout_and_metadata():
    for name in ("README.md", "DEVELOPERS.md", "pyproject.toml", "app", "core", "tests"):
        assert (ROOT / name).exists(), name
    for name in ("assets", "demo_data", "bench"):
        assert (ROOT / name).is_dir(), name
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    assert meta["name"] == "stakeline"
    assert meta["scripts"]["stakeline"] == "stakeline.app.cli:main"
    assert meta["requires-python"] == ">=3.11"
    deps = " ".join(meta["dependencies"])
    for dep in ("kivy", "numpy", "shapely", "sqlite-utils"):
        assert dep in deps

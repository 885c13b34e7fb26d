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
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())
    meta = project["project"]
    assert meta["name"] == "stakeline"
    assert meta["scripts"]["stakeline"] == "stakeline.app.cli:main"
    assert meta["requires-python"] == ">=3.11"
    deps = " ".join(meta["dependencies"])
    for dep in ("kivy", "numpy", "sqlite-utils", "matplotlib", "click"):
        assert dep in deps
    # shapely is the tests' independent reference only; import-linter runs with the tests.
    assert "shapely" not in deps
    test_extra = " ".join(meta["optional-dependencies"]["test"])
    assert "shapely" in test_extra and "import-linter" in test_extra
    # One import package: core/ is `stakeline`, app/ is `stakeline.app`; nothing named app or
    # core is installed, and the demo data and the .kv layouts travel in the wheel.
    setup = project["tool"]["setuptools"]
    assert setup["package-dir"] == {
        "stakeline": "core",
        "stakeline.app": "app",
        "stakeline.demo_data": "demo_data",
    }
    assert all(name == "stakeline" or name.startswith("stakeline.") for name in setup["packages"])
    assert {"stakeline.app.screens", "stakeline.app.widgets"} <= set(setup["package-data"])
    assert "*.kv" in setup["package-data"]["stakeline.app.screens"]
    assert "*.csv" in setup["package-data"]["stakeline.demo_data"]


def test_every_source_folder_and_layout_file_goes_into_the_wheel():
    setup = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    folders = {folder: package for package, folder in setup["package-dir"].items()}
    expected = set()
    for folder, package in folders.items():
        for init in (ROOT / folder).rglob("__init__.py"):
            parts = init.parent.relative_to(ROOT / folder).parts
            if "__pycache__" not in parts:
                expected.add(".".join((package, *parts)))
    assert set(setup["packages"]) == expected
    for layout in [*(ROOT / "app").rglob("*.kv")]:
        package = ".".join(("stakeline.app", *layout.parent.relative_to(ROOT / "app").parts))
        assert "*.kv" in setup["package-data"].get(package, []), layout

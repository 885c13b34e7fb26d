"""The layer rules: import-linter's contracts in pyproject.toml, checked on every test run.

import-linter reads a package from one folder tree, while the checkout keeps ``core/`` (the
``stakeline`` package) and ``app/`` (``stakeline.app``) side by side; so the test lays the
package out as the wheel does (``[tool.setuptools.package-dir]``) in a temporary folder and runs
``lint-imports`` on that copy.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PYPROJECT = ROOT / "pyproject.toml"


def lay_out_package(target: Path) -> Path:
    """Copy the source folders to ``target`` as installed (core -> stakeline, app -> .app, ...)."""
    mapping = tomllib.loads(PYPROJECT.read_text())["tool"]["setuptools"]["package-dir"]
    for package, folder in sorted(mapping.items(), key=lambda item: item[0].count(".")):
        shutil.copytree(
            ROOT / folder,
            target / package.replace(".", "/"),
            ignore=shutil.ignore_patterns("__pycache__"),
            dirs_exist_ok=True,
        )
    return target


def test_layer_contracts_hold(tmp_path):
    lay_out_package(tmp_path)
    lint = shutil.which("lint-imports", path=str(Path(sys.executable).parent)) or "lint-imports"
    env = {**os.environ, "PYTHONPATH": str(tmp_path)}
    done = subprocess.run(
        [lint, "--config", str(PYPROJECT), "--no-cache"],
        capture_output=True, text=True, cwd=tmp_path, env=env, timeout=300,
    )  # fmt: skip
    assert done.returncode == 0, done.stdout + done.stderr
    assert "0 broken" in done.stdout


def test_the_contracts_cover_the_house_rules():
    contracts = {
        c["id"]: c
        for c in tomllib.loads(PYPROJECT.read_text())["tool"]["importlinter"]["contracts"]
    }
    pure = contracts["pure-domain"]
    assert {"stakeline.survey", "stakeline.checks"} <= set(pure["source_modules"])
    assert {"kivy", "sqlite3", "sqlite_utils", "shapely", "matplotlib"} <= set(
        pure["forbidden_modules"]
    )
    assert contracts["kivy-in-app"]["allowed_importers"] == ["stakeline.app"]
    assert contracts["domain-below-app"]["protected_modules"] == ["stakeline.app"]
    assert contracts["sql-in-store"]["allowed_importers"] == ["stakeline.store"]
    assert contracts["plots-in-report"]["allowed_importers"] == ["stakeline.report"]
    screens = contracts["screens-ask-the-service"]
    assert set(screens["forbidden_modules"]) >= {
        f"stakeline.{name}" for name in ("survey", "checks", "store", "report", "files")
    }

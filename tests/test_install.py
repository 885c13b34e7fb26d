"""The wheel works on its own: built from the sources, installed into a fresh virtual environment
outside the checkout, and used from another folder -- commands, packaged demo data, the app.

Slow (about a minute, mostly installing the dependencies from the package index or pip's cache);
part of the README's test command.  Deselect it while working: ``pytest -m "not install"``.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

pytestmark = pytest.mark.install

ROOT = Path(__file__).resolve().parents[1]
SOURCES = ("pyproject.toml", "README.md", "core", "app", "demo_data")
"""What the build reads (pyproject.toml names the rest: readme, package folders)."""


def clean_env(**extra: str) -> dict[str, str]:
    """This process's environment without anything pointing at the checkout or its venv."""
    drop = {"PYTHONPATH", "VIRTUAL_ENV", "PYTHONHOME", "PYTHONSTARTUP"}
    env = {k: v for k, v in os.environ.items() if k not in drop and not k.startswith("KIVY_")}
    env["PATH"] = os.pathsep.join(
        p for p in env.get("PATH", "").split(os.pathsep) if not p.startswith(str(ROOT))
    )
    return {**env, **extra}


def run(argv, cwd, timeout=600, **env) -> subprocess.CompletedProcess:
    done = subprocess.run(
        [str(a) for a in argv],
        capture_output=True, text=True, cwd=cwd, env=clean_env(**env), timeout=timeout,
    )  # fmt: skip
    assert done.returncode == 0, f"{argv}\n{done.stdout}\n{done.stderr}"
    return done


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    """A fresh venv (outside the checkout) with the wheel built from the sources installed."""
    base = tmp_path_factory.mktemp("install")
    assert not base.is_relative_to(ROOT)
    source = base / "source"  # build from a copy: nothing is written into the checkout
    source.mkdir()
    for name in SOURCES:
        if (ROOT / name).is_dir():
            shutil.copytree(
                ROOT / name, source / name, ignore=shutil.ignore_patterns("__pycache__")
            )
        else:
            shutil.copy2(ROOT / name, source / name)
    wheels = base / "wheels"
    started = time.monotonic()
    run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", wheels, source], base)
    (wheel,) = wheels.glob("stakeline-*.whl")
    venv = base / "venv"
    run([sys.executable, "-m", "venv", venv], base)
    run([venv / "bin" / "python", "-m", "pip", "install", "-q", wheel], base)
    print(f"wheel built and installed in {time.monotonic() - started:.0f} s")
    work = base / "elsewhere"
    work.mkdir()
    return venv, work, wheel


def test_the_wheel_carries_data_and_layouts_and_no_app_or_core(installed):
    venv, work, wheel = installed
    import zipfile

    names = zipfile.ZipFile(wheel).namelist()
    assert "stakeline/demo_data/tessaly_creek.json" in names
    assert (
        "stakeline/app/screens/readings.kv" in names and "stakeline/app/widgets/keypad.kv" in names
    )
    assert not [n for n in names if n.split("/")[0] in ("app", "core", "tests", "synthetic.py")]
    site = Path(run([venv / "bin" / "python", "-c", "import stakeline, os; print(os.path.dirname("
                     "os.path.dirname(stakeline.__file__)))"], work).stdout.strip())  # fmt: skip
    assert site.is_relative_to(venv) and (site / "stakeline" / "app" / "cli").is_dir()
    assert not (site / "app").exists() and not (site / "core").exists()
    for name in ("app", "core"):
        done = subprocess.run([venv / "bin" / "python", "-c", f"import {name}"], cwd=work,
                              env=clean_env(), capture_output=True, text=True)  # fmt: skip
        assert done.returncode != 0 and "ModuleNotFoundError" in done.stderr


def test_commands_work_from_another_folder(installed):
    venv, work, _ = installed
    stakeline = venv / "bin" / "stakeline"
    assert "Commands:" in run([stakeline, "--help"], work).stdout
    assert "demo visits" in run([stakeline, "demo", "--store", "x.db"], work).stdout
    visits = json.loads(run([stakeline, "visits", "--store", "x.db", "--json"], work).stdout)
    assert len(visits) == 6
    demo_csv = run([venv / "bin" / "python", "-c", "from importlib.resources import files; "
                    "print(files('stakeline.demo_data') / 'xs1_2026-04-14.csv')"], work)  # fmt: skip
    path = demo_csv.stdout.strip()
    assert Path(path).is_relative_to(venv)
    figures = json.loads(
        run([stakeline, "section", path, "--stage", "99.98", "--json"], work).stdout
    )
    assert figures["area"] > 0 and len(figures["edges"]) == 1
    for module in ("stakeline", "stakeline.app"):
        assert run([venv / "bin" / "python", "-m", module, "roughness", "--json"], work).stdout


def test_the_app_starts_headless_on_a_fresh_home(installed, tmp_path):
    venv, work, _ = installed
    home = tmp_path / "home"
    home.mkdir()
    env = {k: v for k, v in clean_env().items() if not k.startswith("XDG_")}
    env.update(HOME=str(home), SDL_VIDEODRIVER="offscreen", SDL_AUDIODRIVER="dummy",
               KIVY_NO_ARGS="1", KIVY_NO_FILELOG="1", MPLBACKEND="Agg")  # fmt: skip
    log = tmp_path / "app.log"
    with open(log, "w") as sink:
        app = subprocess.Popen([venv / "bin" / "stakeline"], cwd=work, env=env,
                               stdout=sink, stderr=subprocess.STDOUT, start_new_session=True)  # fmt: skip
        try:
            store = home / ".config" / "stakeline" / "stakeline.sqlite"
            deadline = time.monotonic() + 60
            while not store.exists() and app.poll() is None and time.monotonic() < deadline:
                time.sleep(0.2)
            time.sleep(3)  # a few seconds of running: building the home screen, first frames
            running = app.poll() is None
        finally:
            if app.poll() is None:
                os.killpg(app.pid, signal.SIGKILL)
            app.wait(timeout=30)
    text = log.read_text(errors="replace")
    assert running, text[-3000:]
    assert store.is_file() and store.stat().st_size > 0, text[-3000:]
    assert "Traceback" not in text, text[-3000:]

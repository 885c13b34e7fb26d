"""Benchmark: cold start of the Stakeline app to its first drawn home screen, against a bare Kivy
app showing one label, each in a fresh Python process (same headless environment, same run).

Time runs from just before the process is started to the first frame the window presents (the
child reports the moment of its first ``on_flip``).  The Stakeline start is timed twice: the very
first start on a device (creates the store and loads the demo survey) and a later start (store
already there).  Goal: ratio to the bare app <= 2x.

Run: ``.venv/bin/python bench/bench_startup.py``
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
ROUNDS = 5
GOAL = 2.0

_FIRST_FRAME = """
import sys, time
from kivy.core.window import Window

def _first_frame(*_args):
    print("FIRST_FRAME", time.time(), flush=True)
    Window.unbind(on_flip=_first_frame)
    from kivy.app import App
    App.get_running_app().stop()

Window.bind(on_flip=_first_frame)
"""

BARE = (
    _FIRST_FRAME
    + """
from kivy.app import App
from kivy.uix.label import Label

class Bare(App):
    def build(self):
        return Label(text="Stakeline")

Bare().run()
"""
)

STAKELINE = (
    _FIRST_FRAME
    + """
from stakeline.app.main import StakelineApp
StakelineApp(data_dir=sys.argv[1]).run()
"""
)


def _environment(home: str) -> dict:
    env = dict(os.environ)
    env.update(
        SDL_VIDEODRIVER="offscreen",
        SDL_AUDIODRIVER="dummy",
        KIVY_NO_ARGS="1",
        KIVY_NO_CONSOLELOG="1",
        KIVY_NO_FILELOG="1",
        KIVY_HOME=os.path.join(home, "kivy"),
        XDG_CONFIG_HOME=os.path.join(home, "config"),
        KIVY_METRICS_DENSITY="1",
        KIVY_DPI="96",
        PYTHONPATH=ROOT,
    )
    return env


def _start(script: str, env: dict, *args: str) -> float:
    """Seconds from launching a child (a script file) to its first presented frame."""
    began = time.time()
    done = subprocess.run(
        [sys.executable, script, *args],
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
    )
    stamps = [
        line.split()[1] for line in done.stdout.splitlines() if line.startswith("FIRST_FRAME")
    ]
    if not stamps:
        raise RuntimeError(f"the child never drew a frame:\n{done.stderr[-2000:]}")
    return float(stamps[0]) - began


def main() -> int:
    """Print median start times and the ratios to the bare Kivy app."""
    home = tempfile.mkdtemp(prefix="stakeline-bench-start-")
    env = _environment(home)
    scripts = {}
    for name, text in (("bare", BARE), ("stakeline", STAKELINE)):  # Kivy needs a source file
        scripts[name] = os.path.join(home, f"start_{name}.py")
        with open(scripts[name], "w", encoding="utf-8") as handle:
            handle.write(text)
    _start(scripts["bare"], env)  # warm the disk cache for both (Kivy's own files are shared)
    bare, first, later = [], [], []
    for i in range(ROUNDS):
        bare.append(_start(scripts["bare"], env))
        device = os.path.join(home, f"device{i}")
        first.append(_start(scripts["stakeline"], env, device))
        later.append(_start(scripts["stakeline"], env, device))
    base = statistics.median(bare)
    print(f"cold start to first frame, median of {ROUNDS} fresh processes")
    print(f"  baseline: bare Kivy app, one label      {base * 1e3:7.0f} ms")
    for name, values in (
        ("Stakeline, later start", later),
        ("Stakeline, first start + demo", first),
    ):
        value = statistics.median(values)
        ratio = value / base
        verdict = "met" if ratio <= GOAL else "NOT met"
        print(f"  {name:<30} {value * 1e3:7.0f} ms  = {ratio:4.2f}x   goal <= {GOAL}x: {verdict}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

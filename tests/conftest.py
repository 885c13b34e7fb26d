"""Test-wide set-up: headless Kivy (offscreen SDL, software GL) kept out of $HOME.

The environment must be set before the first ``import kivy`` anywhere in the test process.
"""

from __future__ import annotations

import os
import tempfile

_HOME = tempfile.mkdtemp(prefix="stakeline-tests-")
for _name, _value in {
    "SDL_VIDEODRIVER": "offscreen",
    "SDL_AUDIODRIVER": "dummy",
    "KIVY_NO_ARGS": "1",
    "KIVY_NO_FILELOG": "1",
    "KIVY_LOG_MODE": "PYTHON",
    "KIVY_CLIPBOARD": "sdl2",
    "KIVY_NO_CONSOLELOG": "1",
    "KIVY_METRICS_DENSITY": "1",
    "KIVY_DPI": "96",
    "KIVY_HOME": os.path.join(_HOME, "kivy"),
    "XDG_CONFIG_HOME": os.path.join(_HOME, "config"),
    "XDG_CACHE_HOME": os.path.join(_HOME, "cache"),
    "XDG_DATA_HOME": os.path.join(_HOME, "data"),
    "MPLCONFIGDIR": os.path.join(_HOME, "mpl"),
    "MPLBACKEND": "Agg",
}.items():
    os.environ[_name] = _value
for _dir in ("kivy", "config", "cache", "data", "mpl"):
    os.makedirs(os.path.join(_HOME, _dir), exist_ok=True)

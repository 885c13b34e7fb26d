"""The installed app in a real X window, driven only by real input events.

:class:`Desktop` starts a virtual X server (Xvfb, on one of the displays :80 to :89 that is free;
``STAKELINE_X_DISPLAYS=90-99`` picks another range)
with a small desktop window manager (openbox: without one, "maximised" means nothing) and takes
screenshots of it (ImageMagick's ``import``).  :class:`RealApp` starts ``stakeline`` as its own
process on that display with a fresh home folder, finds where its controls are from the layout
it writes (``STAKELINE_DUMP_LAYOUT``), and clicks, types and presses keys with ``xdotool`` --
so key routing, focus, styles loaded on each entry path and the window's size are all real.
Everything started here is stopped by its process id.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time

TOOLS = ("Xvfb", "openbox", "xdotool", "import")
"""Programs these tests need (Debian packages xvfb, openbox, xdotool, imagemagick)."""


def _displays(text: str | None) -> range:
    """X display numbers to try: ``STAKELINE_X_DISPLAYS`` as ``first-last`` (e.g. ``90-99``),
    else :80 to :89."""
    try:
        first, last = (int(part) for part in (text or "").split("-"))
    except ValueError:
        return range(80, 90)
    return range(first, last + 1)


DISPLAYS = _displays(os.environ.get("STAKELINE_X_DISPLAYS"))
SETTLED = 0.3  # s: the layout has not moved for this long before a click


def missing_tools() -> list[str]:
    """The programs of :data:`TOOLS` that are not installed."""
    return [tool for tool in TOOLS if shutil.which(tool) is None]


def _stop(process: subprocess.Popen | None, sig=signal.SIGTERM) -> None:
    if process is None or process.poll() is not None:
        return
    process.send_signal(sig)
    try:
        process.wait(timeout=10)
    except subprocess.TimeoutExpired:
        process.kill()
        process.wait(timeout=10)


class Desktop:
    """An Xvfb screen of ``size`` pixels with openbox running on it."""

    def __init__(self, size: tuple[int, int], folder):
        self.size = size
        self.folder = folder
        self.display = None
        self.xvfb = self.openbox = None

    def __enter__(self) -> Desktop:
        for number in DISPLAYS:
            if os.path.exists(f"/tmp/.X{number}-lock"):
                continue
            xvfb = subprocess.Popen(
                [
                    "Xvfb",
                    f":{number}",
                    "-screen",
                    "0",
                    f"{self.size[0]}x{self.size[1]}x24",
                    "-nolisten",
                    "tcp",
                ],  # fmt: skip
                stdout=subprocess.DEVNULL,
                stderr=subprocess.DEVNULL,
            )
            deadline = time.monotonic() + 10
            while time.monotonic() < deadline and xvfb.poll() is None:
                if os.path.exists(f"/tmp/.X11-unix/X{number}"):
                    break
                time.sleep(0.05)
            if xvfb.poll() is None:
                self.display, self.xvfb = f":{number}", xvfb
                break
        if self.display is None:
            raise RuntimeError(f"no free X display between :{DISPLAYS[0]} and :{DISPLAYS[-1]}")
        self.openbox = subprocess.Popen(
            ["openbox"], env=self.env(), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
        )
        time.sleep(0.5)
        return self

    def __exit__(self, *_exc) -> None:
        _stop(self.openbox)
        _stop(self.xvfb)

    def env(self) -> dict:
        """The environment of a program on this display."""
        env = {k: v for k, v in os.environ.items() if k != "SDL_VIDEODRIVER"}
        env["DISPLAY"] = self.display
        return env

    def run(self, *args: str) -> str:
        """Run a program on this display (xdotool, import); its output."""
        done = subprocess.run(
            args, env=self.env(), capture_output=True, text=True, timeout=30, check=True
        )
        return done.stdout

    def screenshot(self, path) -> None:
        """The whole screen as a PNG."""
        self.run("import", "-window", "root", str(path))


class RealApp:
    """``stakeline`` on ``desktop`` with its home in ``home``; ``density`` is Kivy's."""

    def __init__(self, desktop: Desktop, home, density: int = 1, shots=None):
        self.desktop = desktop
        self.home = home
        self.density = density
        self.shots = shots
        self.layout_path = os.path.join(str(home), "layout.json")
        self.process = None
        self.window = None
        self.last = {}
        self.shape = None  # the controls' rectangles last seen, and since when
        self.shape_since = 0.0

    def start(self) -> dict:
        """Start the app; returns its first layout."""
        env = self.desktop.env()
        for name in ("KIVY_HOME", "XDG_CONFIG_HOME", "XDG_DATA_HOME", "XDG_CACHE_HOME",
                     "XDG_DOCUMENTS_DIR", "KIVY_NO_CONSOLELOG"):  # fmt: skip
            env.pop(name, None)
        env.update(
            HOME=str(self.home),
            KIVY_METRICS_DENSITY=str(self.density),
            KIVY_DPI=str(96 * self.density),
            STAKELINE_DUMP_LAYOUT=self.layout_path,
            SDL_AUDIODRIVER="dummy",
        )
        if os.path.exists(self.layout_path):
            os.remove(self.layout_path)
        self.last, self.shape = {}, None  # nothing seen of this run yet
        command = os.path.join(os.path.dirname(sys.executable), "stakeline")
        self.process = subprocess.Popen(
            [command], env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True
        )
        self.wait(lambda d: d.get("controls"), "the first screen", timeout=60)
        ids = self.desktop.run("xdotool", "search", "--sync", "--pid", str(self.process.pid))
        self.window = ids.split()[0]
        # the window manager may still be resizing it (maximised): wait for the app to follow
        return self.wait(
            lambda d: d["size"] == list(self.geometry()) and self.settled(d),
            "the window at its size",
        )

    def stop(self, sig=signal.SIGTERM) -> None:
        """Stop the app (SIGKILL: as a flat battery would)."""
        _stop(self.process, sig)

    def errors(self) -> str:
        """What the app wrote on stderr (after it stopped)."""
        if self.process is None or self.process.stderr is None:
            return ""
        return self.process.stderr.read()

    # --- reading the layout ---------------------------------------------------------------------
    def layout(self) -> dict:
        """The latest layout the app wrote."""
        try:
            with open(self.layout_path, encoding="utf-8") as handle:
                self.last = json.load(handle)
        except (OSError, ValueError):
            pass  # being replaced: keep the last one
        shape = json.dumps(
            [self.last.get("screen"), self.last.get("dialog"), self.last.get("moving"),
             {n: [c["x"], c["y"], c["w"], c["h"]] for n, c in self.last.get("controls", {}).items()}]
        )  # fmt: skip
        if shape != self.shape:  # since when (by the app's clock) the controls stand still
            self.shape, self.shape_since = shape, self.last.get("clock", 0.0)
        return self.last

    def settled(self, layout: dict) -> bool:
        """True when no screen is sliding and the app has shown the controls where they are for
        a moment (by its own clock: a long frame does not count as standing still)."""
        return not layout.get("moving") and layout.get("clock", 0.0) - self.shape_since > SETTLED

    def wait(self, condition, what: str, timeout: float = 20) -> dict:
        """The first layout for which ``condition(layout)`` is true."""
        deadline = time.monotonic() + timeout
        while True:
            if self.process is not None and self.process.poll() is not None:
                raise AssertionError(f"the app stopped while waiting for {what}:\n{self.errors()}")
            layout = self.layout()
            if layout and condition(layout):
                return layout
            if time.monotonic() > deadline:
                raise AssertionError(f"timed out waiting for {what}; last layout: {layout}")
            time.sleep(0.05)

    def on(self, screen: str, timeout: float = 20) -> dict:
        """Wait until ``screen`` is shown with no dialog."""
        return self.wait(
            lambda d: d["screen"] == screen and d["dialog"] is None, f"screen {screen}", timeout
        )

    # --- real input --------------------------------------------------------------------------
    def click(self, name: str, timeout: float = 10) -> None:
        """Click the middle of the control ``name``, once it is shown and the layout has not
        moved for a moment (a screen just shown may still be laying itself out); returns when
        the app has handled the click (so keys typed next come after it)."""
        layout = self.wait(
            lambda d: name in d["controls"] and self.settled(d), f"control {name}", timeout
        )
        box = layout["controls"][name]
        x, y = box["x"] + box["w"] // 2, box["y"] + box["h"] // 2
        self.desktop.run("xdotool", "mousemove", "--window", self.window, str(x), str(y),
                         "click", "1")  # fmt: skip
        self.wait(lambda d: d["touches"] > layout["touches"], f"the click on {name}", timeout)

    def keypad(self, text: str) -> None:
        """Click the on-screen keypad keys for ``text``."""
        for ch in text:
            self.click(f"key:{ch}")

    def type(self, text: str) -> None:
        """Type ``text`` on the keyboard."""
        self.desktop.run("xdotool", "type", "--delay", "30", text)

    def key(self, *keys: str) -> None:
        """Press keys by name (Tab, shift+Tab, Return, Escape, BackSpace)."""
        self.desktop.run("xdotool", "key", "--delay", "30", *keys)

    def screenshot(self, name: str) -> None:
        """Save the screen as ``<name>.png`` in the screenshots folder."""
        if self.shots is not None:
            time.sleep(0.5)  # a screen slides in and the software renderer draws it
            self.desktop.screenshot(os.path.join(str(self.shots), f"{name}.png"))

    def geometry(self) -> tuple[int, int]:
        """The app window's size in pixels, as the window manager gave it."""
        out = self.desktop.run("xdotool", "getwindowgeometry", self.window)
        size = out.split("Geometry:")[1].split()[0]
        width, height = size.split("x")
        return int(width), int(height)

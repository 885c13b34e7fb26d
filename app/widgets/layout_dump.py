"""A test aid: the window rectangle of every control a person can tap, written as JSON.

With ``STAKELINE_DUMP_LAYOUT=path`` set, the app writes ``path`` ten times a second: when
(``clock``, the system's monotonic clock), whether a screen is sliding in (``moving``), the
screen and a few of its properties (``state``), the open dialog, the focused field, the keypad's
text, the message line, how many touches it has handled (``touches``), and for each visible control its name and rectangle in window pixels,
origin top left as ``xdotool`` counts (``whole`` is false when a scrolling list shows only part
of it).  A real-window test reads it to know where to click, so a layout change never breaks
the test.  Names: the control's id in its rule (``save``, ``tab_checks``, ``keep``...),
``key:<action>`` for keypad keys, ``chip:<text>`` / ``button:<text>`` for controls without an id,
``row:<station>`` / ``vertical:<station>`` / ``finding:<n>`` for the rows of a list (top to
bottom); a control built in
code names itself (``dump_name``: ``point:v02:revolutions``, ``meter:<serial>``...).
"""

from __future__ import annotations

import json
import os
import time

from kivy.clock import Clock
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.scrollview import ScrollView
from kivy.uix.textinput import TextInput

STATE = ("station", "entry_state", "position_text", "running", "finished", "package_path",
         "blocking", "summary", "level", "tone", "method", "counting", "meter_text",
         "discharge_text", "wading_text", "read_text", "slope_text", "point_count",
         "fingerprint")  # fmt: skip
"""Properties of the screen shown written with the layout (when it has them), so a test knows
when an action has taken effect."""


def _visible_rect(widget, window_height: float):
    """The part of ``widget`` not clipped by scrolling lists, as [x, top, w, h] or None."""
    x0, y0 = widget.to_window(widget.x, widget.y)
    x1, y1 = x0 + widget.width, y0 + widget.height
    node = widget.parent
    while node is not None and node is not node.parent:
        if isinstance(node, ScrollView):
            sx, sy = node.to_window(node.x, node.y)
            x0, y0 = max(x0, sx), max(y0, sy)
            x1, y1 = min(x1, sx + node.width), min(y1, sy + node.height)
        node = node.parent
    if x1 - x0 < 4 or y1 - y0 < 4:
        return None
    return [round(x0), round(window_height - y1), round(x1 - x0), round(y1 - y0)]


def _shown(widget) -> bool:
    node = widget
    while node is not None and node is not node.parent:
        if node.opacity == 0 or node.disabled or node.height <= 0:
            return False
        node = node.parent
    return True


def _id_names(root) -> dict:
    """id(proxy) -> name for every widget with an id in a rule under ``root`` (``ids`` hold
    each widget's one ``proxy_ref``)."""
    names = {}
    for widget in root.walk(restrict=True):
        for name, target in getattr(widget, "ids", {}).items():
            names.setdefault(id(target), name)
    for name, target in getattr(root, "ids", {}).items():
        names[id(target)] = name  # the screen's own ids win
    return names


def controls(root, window_height: float) -> dict:
    """Name -> {x, y, w, h, text} of every visible control under ``root`` (see module doc)."""
    from stakeline.app.widgets.common import Chip, NumberField

    names = _id_names(root)
    out: dict = {}
    rows = findings = 0
    for widget in root.walk(restrict=True):
        if not isinstance(widget, (ButtonBehavior, TextInput, NumberField)):
            continue
        kind = type(widget).__name__
        if getattr(widget, "dump_name", ""):  # controls built in code name themselves
            name = widget.dump_name
        elif kind == "ReadingRow":
            name = f"row:{getattr(widget, 'station_text', rows)}"
            rows += 1
        elif kind == "VerticalRow":
            name = f"vertical:{widget.station_text}"
        elif kind == "FindingRow":
            name, findings = f"finding:{findings}", findings + 1
        elif hasattr(widget, "action") and hasattr(widget, "keypad"):
            name = f"key:{widget.action}"
        elif id(widget.proxy_ref) in names:
            name = names[id(widget.proxy_ref)]
            owner = widget.parent
            while owner is not None and owner is not root and not hasattr(owner, "dump_key"):
                owner = owner.parent
            if owner is not None and hasattr(owner, "dump_key"):
                name = f"{owner.dump_key}:{name}"
        elif isinstance(widget, Chip):
            name = f"chip:{widget.text}"
        else:
            name = f"button:{getattr(widget, 'text', kind)}"
        if name in out or not _shown(widget):
            continue
        rect = _visible_rect(widget, window_height)
        if rect is None:
            continue
        x, y, w, h = rect
        text = getattr(widget, "text", "") or getattr(widget, "heading", "")
        whole = h >= widget.height - 1 and w >= widget.width - 1
        out[name] = {"x": x, "y": y, "w": w, "h": h, "text": str(text), "whole": whole}
    return out


class LayoutDump:
    """Writes the layout of ``app`` to ``path`` whenever it changes (see the module doc)."""

    def __init__(self, app, path: str):
        self.app = app
        self.path = path
        self.last = ""
        self.sequence = 0
        self.touches = 0  # touches handled so far (a test waits for its click to count)
        self.event = Clock.schedule_interval(self.write, 0.1)
        from kivy.core.window import Window

        Window.bind(on_touch_up=self._touched)

    def _touched(self, *_args) -> None:
        self.touches += 1

    def snapshot(self) -> dict:
        """What is shown now."""
        from kivy.core.window import Window
        from kivy.metrics import Metrics

        screen = self.app.manager.current_screen
        dialog = self.app.dialog()
        root = dialog if dialog is not None else screen
        typing = self.app.typing_field()
        focus = None
        if typing is not None:
            focus = _id_names(root).get(id(typing.proxy_ref), "text")
        elif getattr(screen, "active_field", None) is not None and screen.active_field.active:
            field = screen.active_field
            focus = getattr(field, "dump_name", "") or _id_names(screen).get(id(field.proxy_ref))
        keypad = screen.ids.get("keypad")
        state = {name: getattr(screen, name) for name in STATE if hasattr(screen, name)}
        return {
            "state": state,
            "keypad": keypad.text if keypad is not None else None,
            "touches": self.touches,
            "clock": time.monotonic(),  # the system's monotonic clock, shared by processes
            "moving": self.app.manager.transition.is_active,
            "screen": self.app.manager.current,
            "size": [int(Window.size[0]), int(Window.size[1])],
            "density": Metrics.density,
            "dialog": type(dialog).__name__ if dialog is not None else None,
            "focus": focus,
            "message": getattr(screen, "message", ""),
            "controls": controls(root, Window.height),
        }

    def write(self, *_args) -> None:
        """Write the snapshot (``sequence`` counts the changes; ``clock`` says when it was
        last seen true, so a reader knows the app is not stuck in a long frame)."""
        snapshot = self.snapshot()
        clock = snapshot.pop("clock")
        text = json.dumps(snapshot, sort_keys=True)
        if text != self.last:
            self.last = text
            self.sequence += 1
        temporary = f"{self.path}.partial"
        with open(temporary, "w", encoding="utf-8") as handle:
            handle.write(text[:-1] + f', "sequence": {self.sequence}, "clock": {clock}}}')
        os.replace(temporary, self.path)

    def stop(self) -> None:
        """Stop writing."""
        from kivy.core.window import Window

        Window.unbind(on_touch_up=self._touched)
        self.event.cancel()

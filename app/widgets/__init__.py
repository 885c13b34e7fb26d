"""Stakeline's own widgets: buttons and fields sized for gloves, the keypad, dialogs, layouts
that fit every window, and the section view.

:func:`load_styles` loads every ``.kv`` file of the app -- these widgets' and every screen's --
once, when the app starts, so no screen depends on another having been shown first (a visit
resumed after a flat battery opens straight on Readings, and its Checks and Note must work).
"""

from __future__ import annotations

STYLE_FILES = (
    "widgets/common.kv",
    "widgets/keypad.kv",
    "widgets/popups.kv",
    "screens/home.kv",
    "screens/settings.kv",
    "screens/stakes.kv",
    "screens/spacing.kv",
    "screens/readings.kv",
    "screens/section.kv",
    "screens/velocity.kv",
    "screens/meters.kv",
    "screens/surface.kv",
    "screens/checks.kv",
    "screens/detail.kv",
)
"""Every .kv file of the app (relative to ``stakeline.app``), in load order: shared styles
first."""

_loaded = False


def load_styles() -> None:
    """Register the widget classes and load every .kv rule of the app; later calls do nothing.

    Reads the files through :func:`stakeline.app.kv.load` (importlib.resources), so it works from
    a wheel as well as from the checkout.  Call after the window exists (the sizes follow it).
    """
    global _loaded
    if _loaded:
        return
    from kivy.core.window import Window
    from stakeline.app import kv
    from stakeline.app.widgets import (  # noqa: F401  (importing registers the widget classes)
        common,
        keypad,
        layout,
        popups,
        section_view,
    )

    common.SIZES.follow(Window)
    for name in STYLE_FILES:
        kv.load(name)
    _loaded = True

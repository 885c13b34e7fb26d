"""Stakeline's sunlight theme: dark ink on warm paper, big targets for wet hands and gloves.

Colours are RGBA tuples (0..1) for Kivy; sizes are plain numbers that the ``.kv`` files pass
through ``dp()`` (lengths) or ``sp()`` (text), so importing this module never touches Kivy's
metrics.  ``contrast_ratio`` computes the WCAG 2.x contrast of two sRGB colours; the theme test
checks that every text/background pair used for body text reaches 7:1 (WCAG level AAA).
"""

from __future__ import annotations


def hex_colour(code: str, alpha: float = 1.0) -> tuple[float, float, float, float]:
    """RGBA tuple (0..1) from ``"#RRGGBB"``."""
    code = code.lstrip("#")
    r, g, b = (int(code[i : i + 2], 16) / 255.0 for i in (0, 2, 4))
    return (r, g, b, alpha)


# --- colours -------------------------------------------------------------------------------------
PAPER = hex_colour("#FAF8F2")  # screen background: warm off-white, no glare-blue
PANEL = hex_colour("#ECE8DC")  # grouped panels
INK = hex_colour("#101418")  # body text
INK_SOFT = hex_colour("#33393F")  # secondary text, still AAA on paper and panel
ON_DARK = hex_colour("#FFFFFF")  # text on the dark buttons
BUTTON = hex_colour("#163A56")  # ordinary buttons: deep slate blue
BUTTON_DOWN = hex_colour("#0A1E2E")
ACCEPT = hex_colour("#0B5324")  # save / finish: deep green
DANGER = hex_colour("#8E1020")  # flagged / blocking: deep red
CAUTION = hex_colour("#6B3A00")  # unsaved / warnings: dark amber-brown
TOGGLE_ON = hex_colour("#FFD23F")  # selected feature code / active field: signal yellow
ACTIVE_FIELD = hex_colour("#FFF1B0")  # background of the field the keypad types into
OUTLINE = hex_colour("#101418")
WATER = hex_colour("#2C7BC0", 0.55)  # water fill in the section view
WATER_LINE = hex_colour("#0B3C78")
GROUND = hex_colour("#3B2A12")  # ground line: dark earth
POINT = hex_colour("#101418")
FLAG = hex_colour("#C8102E")  # flagged station marker (graphic, not text)
CURRENT = hex_colour("#E08A00")  # the station being read (graphic, not text)
GRID = hex_colour("#C9C3B3")
VELOCITY = hex_colour("#00695C")  # velocity bars over the water (graphic, not text)

STATE_COLOURS = {"saved": ACCEPT, "unsaved": CAUTION, "flagged": DANGER, "none": INK_SOFT}
"""Text colour of each entry state on paper; words always accompany the colour."""

TONE_COLOURS = {
    "plain": BUTTON,
    "accept": ACCEPT,
    "danger": DANGER,
    "caution": CAUTION,
    "selected": TOGGLE_ON,
}
"""Background of a button of each tone (text is ON_DARK, or INK on the light ``selected``)."""

SEVERITY_COLOURS = {"block": DANGER, "warn": CAUTION, "note": INK_SOFT}
"""Text and stripe colour of a field-check finding of each severity, on a panel."""

TEXT_PAIRS = {
    "body on paper": (INK, PAPER),
    "secondary on paper": (INK_SOFT, PAPER),
    "body on panel": (INK, PANEL),
    "secondary on panel": (INK_SOFT, PANEL),
    "button text": (ON_DARK, BUTTON),
    "pressed button text": (ON_DARK, BUTTON_DOWN),
    "accept button text": (ON_DARK, ACCEPT),
    "danger button text": (ON_DARK, DANGER),
    "caution button text": (ON_DARK, CAUTION),
    "toggled button text": (INK, TOGGLE_ON),
    "active field text": (INK, ACTIVE_FIELD),
    "saved on paper": (ACCEPT, PAPER),
    "unsaved on paper": (CAUTION, PAPER),
    "flagged on paper": (DANGER, PAPER),
    "flagged on panel": (DANGER, PANEL),
    "saved on panel": (ACCEPT, PANEL),
    "caution on panel": (CAUTION, PANEL),
    "secondary on active field": (INK_SOFT, ACTIVE_FIELD),
    "secondary on signal yellow": (INK_SOFT, TOGGLE_ON),
    "dialog text": (INK, PAPER),
}
"""Every foreground/background pair the screens use for text (checked >= 7:1 in the tests)."""

# --- sizes (dp for lengths, sp for text) -----------------------------------------------------------
TARGET = 64  # dp: every tappable thing is at least this tall (gloves want 64-72 dp)
TARGET_COMPACT = 52  # dp: targets on short windows (under COMPACT_BELOW); Material's minimum is 48
MIN_TARGET = 48  # dp: no target is ever smaller (Material Design's minimum touch target)
COMPACT_BELOW = 720  # dp: a window less tall than this uses the compact sizes
KEY = 72  # dp: keypad keys (at most; they shrink to MIN_TARGET to fit a short window)
GAP = 8  # dp: spacing between targets
PAD = 12  # dp: panel padding
TEXT = 20  # sp: body text
SMALL = 17  # sp: secondary text (still large for a tablet)
VALUE = 28  # sp: numbers a crew reads (>= 24 sp)
BIG = 44  # sp: the reading being typed
BIG_COMPACT = 36  # sp: the reading being typed, on a short window
HUGE = 60  # sp: the station distance on the readings screen
HUGE_COMPACT = 44  # sp: the station distance, on a short window
MIN_VALUE = 24  # sp: no number a crew reads is ever smaller
KEY_TEXT = 34  # sp: keypad digits


def _linear(channel: float) -> float:
    """sRGB channel (0..1) to linear light, as defined in WCAG 2.x."""
    return channel / 12.92 if channel <= 0.04045 else ((channel + 0.055) / 1.055) ** 2.4


def relative_luminance(colour) -> float:
    """WCAG relative luminance (0 black .. 1 white) of an sRGB colour (RGB or RGBA, 0..1)."""
    r, g, b = (_linear(c) for c in colour[:3])
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def contrast_ratio(foreground, background) -> float:
    """WCAG contrast ratio (1..21) between two opaque sRGB colours."""
    a, b = relative_luminance(foreground), relative_luminance(background)
    lighter, darker = max(a, b), min(a, b)
    return (lighter + 0.05) / (darker + 0.05)


def decimals_for(precision: float) -> int:
    """Number of decimals to show for a reading precision in survey units (0.001 -> 3)."""
    places = 0
    step = float(precision)
    while places < 6 and abs(round(step, places) - step) > 1e-12:
        places += 1
    return max(places, 1)

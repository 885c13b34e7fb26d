"""The sunlight theme: text contrast (WCAG 2.x AAA, 7:1) and glove-sized targets."""

from __future__ import annotations

import pytest
from stakeline.app import theme


def wcag_luminance(rgb) -> float:
    """Relative luminance as defined in WCAG 2.x (W3C, "relative luminance"), recomputed here
    independently of stakeline.app.theme."""

    def channel(c: float) -> float:
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (channel(c) for c in rgb[:3])
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def wcag_contrast(a, b) -> float:
    """WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05), lighter over darker."""
    la, lb = sorted((wcag_luminance(a), wcag_luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


def test_contrast_formula_anchors():
    # WCAG 2.x: black on white is 21:1 and a colour on itself 1:1, by definition of the ratio.
    assert theme.contrast_ratio((0, 0, 0), (1, 1, 1)) == pytest.approx(21.0)
    assert theme.contrast_ratio(theme.PAPER, theme.PAPER) == pytest.approx(1.0)
    # #767676 on white is the lightest grey that reaches 4.5:1 (WebAIM contrast checker; from
    # memory: 4.54:1).
    grey = theme.hex_colour("#767676")
    assert theme.contrast_ratio(grey, (1, 1, 1)) == pytest.approx(4.54, abs=0.01)


@pytest.mark.parametrize("name", sorted(theme.TEXT_PAIRS))
def test_every_text_colour_pair_reaches_aaa(name):
    foreground, background = theme.TEXT_PAIRS[name]
    ratio = wcag_contrast(foreground, background)
    assert ratio >= 7.0, f"{name}: {ratio:.2f}:1 is below WCAG AAA (7:1)"
    assert theme.contrast_ratio(foreground, background) == pytest.approx(ratio)


def test_state_colours_are_aaa_on_paper():
    for state, colour in theme.STATE_COLOURS.items():
        assert wcag_contrast(colour, theme.PAPER) >= 7.0, state


def test_sizes_suit_gloves_and_sunlight():
    # Common practice: Material's minimum target is 48 dp; gloves want 64-72 dp.
    assert 64 <= theme.TARGET <= 72
    assert theme.KEY >= 64
    # Values a crew reads at arm's length: at least 24 sp.
    for size in (theme.VALUE, theme.BIG, theme.HUGE, theme.KEY_TEXT):
        assert size >= 24


@pytest.mark.parametrize(
    "precision, decimals", [(0.001, 3), (0.005, 3), (0.01, 2), (0.02, 2), (0.05, 2), (0.1, 1)]
)
def test_decimals_follow_the_reading_precision(precision, decimals):
    assert theme.decimals_for(precision) == decimals

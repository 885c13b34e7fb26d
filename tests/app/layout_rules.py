"""What a person sees must be readable and tappable: the rules the layout test checks on a
screen's widget tree (and any dialog open over it), at one window size.

- every label's text fits its box (texture within the widget) and no word is broken in two
  (each word narrower than the width the label wraps at: no "Bac k", no "UNSA VED");
- nothing a person reads or taps overlaps anything else (so nothing covers the step bar), and
  nothing lies outside the window, except inside a scrolling list that can bring it into view;
- every touch target is at least 48 dp on both sides (Material Design's minimum target) and
  every number a crew reads is at least 24 sp (common practice for outdoor reading);
- every figure's name and its value share one row (the name beside its own value);
- a scrolling list whose content is taller than the list can scroll.

``problems(roots, window)`` returns one line per breach, naming the widget and its text.
"""

from __future__ import annotations

import re

from kivy.metrics import dp, sp
from kivy.uix.behaviors import ButtonBehavior
from kivy.uix.label import Label
from kivy.uix.scrollview import ScrollView
from kivy.uix.textinput import TextInput
from stakeline.app.widgets.common import FigureRow, NumberField, ValueLabel, word_width
from stakeline.app.widgets.section_view import SectionView

MIN_TARGET_DP = 48  # Material Design's minimum touch target
MIN_VALUE_SP = 24
SLACK = 1.0  # px: rounding of layouts

_MARKUP = re.compile(r"\[/?[a-z]+[^\]]*\]")


def _chain(widget):
    node = widget
    while node is not None:
        yield node
        if node.parent is node:
            return
        node = node.parent


def shown(widget) -> bool:
    """Visible: no invisible or zero-sized widget on the way up."""
    return all(n.opacity > 0 and n.width > 0 and n.height > 0 for n in _chain(widget))


def visible_rect(widget):
    """Window rectangle (x0, y0, x1, y1) of the part of ``widget`` not clipped by the scrolling
    lists around it, or None when it is scrolled out of view."""
    x0, y0 = widget.to_window(widget.x, widget.y)
    x1, y1 = x0 + widget.width, y0 + widget.height
    for node in list(_chain(widget))[1:]:
        if isinstance(node, ScrollView):
            sx, sy = node.to_window(node.x, node.y)
            x0, y0 = max(x0, sx), max(y0, sy)
            x1, y1 = min(x1, sx + node.width), min(y1, sy + node.height)
    if x1 - x0 <= SLACK or y1 - y0 <= SLACK:
        return None
    return (x0, y0, x1, y1)


def _in_scroller(widget) -> bool:
    return any(isinstance(n, ScrollView) for n in list(_chain(widget))[1:])


def _name(widget) -> str:
    text = getattr(widget, "text", "")
    text = text if isinstance(text, str) else ""
    return f"{type(widget).__name__} {text[:40]!r}"


def _is_target(widget) -> bool:
    return isinstance(widget, (ButtonBehavior, TextInput, NumberField))


def _is_leaf(widget) -> bool:
    """Something a person reads or taps (its own children aside)."""
    if _is_target(widget) or isinstance(widget, SectionView):
        return True
    return isinstance(widget, Label) and bool(widget.text.strip())


def _label_problems(label) -> list[str]:
    out = []
    if not label.text.strip() or label.texture is None:
        return out
    tw, th = label.texture_size
    if not label.shorten and (tw > label.width + SLACK or th > label.height + SLACK):
        out.append(
            f"{_name(label)}: text {tw:.0f}x{th:.0f} px overflows its {label.width:.0f}x"
            f"{label.height:.0f} px box"
        )
    wrap = label.text_size[0]
    if wrap is not None and not label.shorten:
        plain = _MARKUP.sub("", label.text) if label.markup else label.text
        widest = word_width(plain, label.font_size, bold=True)  # bold: the wider case
        if widest > wrap + SLACK:
            out.append(f"{_name(label)}: a word {widest:.0f} px wide is broken at {wrap:.0f} px")
    return out


def _figure_problems(row) -> list[str]:
    name, value = row.ids.name_label, row.ids.value_label
    if not shown(row):
        return []
    out = []
    if abs(name.center_y - value.center_y) > SLACK or name.right > value.x + SLACK:
        out.append(f"figure {row.name!r}: its name and value are not side by side in one row")
    return out


def problems(roots, window) -> list[str]:
    """Every breach of the rules above in the trees under ``roots`` (a screen and the dialogs
    open over it) in ``window``."""
    out: list[str] = []
    leaves = []
    width, height = window.size
    for root in roots:
        for widget in root.walk(restrict=True):
            if not shown(widget):
                continue
            rect = visible_rect(widget)
            if isinstance(widget, ScrollView) and widget.children:
                content = widget.children[0]
                if content.height > widget.height + SLACK and not widget.do_scroll_y:
                    out.append(
                        f"{_name(widget)}: content taller than the list, which cannot scroll"
                    )
            if rect is None:
                continue
            if isinstance(widget, Label):
                out += _label_problems(widget)
            if isinstance(widget, ValueLabel) and widget.font_size < sp(MIN_VALUE_SP) - 0.01:
                out.append(f"{_name(widget)}: value font {widget.font_size:.0f} px < 24 sp")
            if isinstance(widget, FigureRow):
                out += _figure_problems(widget)
            if _is_target(widget) and (
                widget.width < dp(MIN_TARGET_DP) - SLACK
                or widget.height < dp(MIN_TARGET_DP) - SLACK
            ):
                out.append(
                    f"{_name(widget)}: target {widget.width:.0f}x{widget.height:.0f} px < 48 dp"
                )
            if _is_leaf(widget):
                x0, y0, x1, y1 = rect
                if x0 < -SLACK or y0 < -SLACK or x1 > width + SLACK or y1 > height + SLACK:
                    out.append(f"{_name(widget)}: outside the {width}x{height} window")
                leaves.append((widget, rect))
    out += _overlaps(leaves)
    out += _under_scroll_bars(roots, leaves)
    return out


def _under_scroll_bars(roots, leaves) -> list[str]:
    """Text or targets drawn under the bar of a list that scrolls (the bar hides them)."""
    out = []
    for root in roots:
        for view in root.walk(restrict=True):
            if not isinstance(view, ScrollView) or not view.children or not shown(view):
                continue
            if not view.do_scroll_y or view.children[0].height <= view.height + SLACK:
                continue
            sx, sy = view.to_window(view.x, view.y)
            bar = (sx + view.width - view.bar_width - view.bar_margin, sy, sx + view.width,
                   sy + view.height)  # fmt: skip
            for widget, rect in leaves:
                if view not in list(_chain(widget)):
                    continue
                dx = min(rect[2], bar[2]) - max(rect[0], bar[0])
                dy = min(rect[3], bar[3]) - max(rect[1], bar[1])
                if dx > SLACK and dy > SLACK:
                    out.append(f"{_name(widget)} lies under the scroll bar of {_name(view)}")
    return out


def _overlaps(leaves) -> list[str]:
    out = []
    for i, (a, ra) in enumerate(leaves):
        chain_a = set(map(id, _chain(a)))
        for b, rb in leaves[i + 1 :]:
            if id(b) in chain_a or id(a) in set(map(id, _chain(b))):
                continue  # a widget and its own parts
            dx = min(ra[2], rb[2]) - max(ra[0], rb[0])
            dy = min(ra[3], rb[3]) - max(ra[1], rb[1])
            if dx > SLACK and dy > SLACK:
                out.append(f"{_name(a)} overlaps {_name(b)} by {dx:.0f}x{dy:.0f} px")
    return out

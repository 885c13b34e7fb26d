"""Layouts that keep every screen usable from an 800 x 600 laptop to a portrait tablet.

- :class:`FlowRow`: buttons side by side in as many columns as fit, wrapping onto more rows on
  a narrow window, so no button text is ever broken inside a word.
- :class:`FitScroll` with one :class:`FitBox`: a column that fits its window -- as tall as the
  view when its content fits (stretching children such as the keypad share the spare height,
  each between its ``size_hint_min_y`` and ``size_hint_max_y``) and scrolling when it does not,
  so a short window never makes widgets overlap.
"""

from __future__ import annotations

import math

from kivy.clock import Clock
from kivy.properties import BooleanProperty, NumericProperty
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.gridlayout import GridLayout
from kivy.uix.scrollview import ScrollView

_WATCHED = ("height", "size_hint_y", "size_hint_min_y", "size_hint_max_y")


class FlowRow(GridLayout):
    """Children in equal columns, as many as fit (at most ``max_cols``), rows as tall as their
    tallest child; a child's ``min_width`` (px) is the least width it may get."""

    max_cols = NumericProperty(0)  # 0: as many as there are children
    min_cell = NumericProperty(0)  # px: least cell width, besides the children's own

    def __init__(self, **kwargs):
        kwargs.setdefault("size_hint_y", None)
        super().__init__(**kwargs)
        self.cols = 1
        self._trigger_flow = Clock.create_trigger(self._flow, -1)
        self.bind(minimum_height=self.setter("height"))
        for name in ("width", "max_cols", "min_cell", "spacing", "padding"):
            self.fbind(name, self._trigger_flow)

    def add_widget(self, widget, *args, **kwargs):
        """Add a child and reflow when its least width changes."""
        super().add_widget(widget, *args, **kwargs)
        if hasattr(widget, "min_width"):
            widget.fbind("min_width", self._trigger_flow)
        self._trigger_flow()

    def remove_widget(self, widget, *args, **kwargs):
        """Remove a child and reflow."""
        if hasattr(widget, "min_width"):
            widget.funbind("min_width", self._trigger_flow)
        super().remove_widget(widget, *args, **kwargs)
        self._trigger_flow()

    def _flow(self, *_args) -> None:
        count = len(self.children)
        if count == 0 or self.width <= 1:
            return
        spacing = self.spacing[0]
        need = max([self.min_cell, *(getattr(c, "min_width", 0) for c in self.children)])
        room = self.width - self.padding[0] - self.padding[2]
        fits = int((room + spacing) // (need + spacing)) if need > 0 else count
        cols = max(1, min(count, fits, int(self.max_cols) or count))
        rows = math.ceil(count / cols)
        self.cols = math.ceil(count / rows)  # balanced rows: 3 + 3 rather than 4 + 2


class FitBox(BoxLayout):
    """The one child of a :class:`FitScroll`: a vertical box as tall as the view, or as its
    content's least height when that is more (then the view scrolls).

    ``minimum_needed`` is that least height: fixed children at their height, stretching ones at
    their ``size_hint_min_y``; ``natural_height`` has stretching children at their
    ``size_hint_max_y`` (or minimum), for a column that takes only the height it needs.
    """

    minimum_needed = NumericProperty(0)
    natural_height = NumericProperty(0)

    def __init__(self, **kwargs):
        kwargs.setdefault("orientation", "vertical")
        kwargs.setdefault("size_hint_y", None)
        super().__init__(**kwargs)
        self._trigger_measure = Clock.create_trigger(self._measure, -1)
        self.fbind("padding", self._trigger_measure)
        self.fbind("spacing", self._trigger_measure)
        self.fbind("parent", self._trigger_measure)

    def add_widget(self, widget, *args, **kwargs):
        """Add a child and measure again whenever its height or stretch changes."""
        super().add_widget(widget, *args, **kwargs)
        for name in _WATCHED:
            widget.fbind(name, self._trigger_measure)
        self._trigger_measure()

    def remove_widget(self, widget, *args, **kwargs):
        """Remove a child and measure again."""
        for name in _WATCHED:
            widget.funbind(name, self._trigger_measure)
        super().remove_widget(widget, *args, **kwargs)
        self._trigger_measure()

    def _measure(self, *_args) -> None:
        fixed = least = most = 0.0
        for child in self.children:
            if child.size_hint_y is None:
                fixed += child.height
            else:
                low = child.size_hint_min_y or 0.0
                least += low
                most += child.size_hint_max_y or low
        extra = self.padding[1] + self.padding[3] + self.spacing * max(len(self.children) - 1, 0)
        self.minimum_needed = fixed + least + extra
        self.natural_height = fixed + most + extra
        if isinstance(self.parent, FitScroll):
            self.parent.fit()


class FitScroll(ScrollView):
    """A column that fits its window (see :class:`FitBox`, its one child); it scrolls only when
    the content cannot fit.  With ``natural`` set, the column takes the height its content
    needs (stretching children at their greatest), at most ``share`` of its parent's height."""

    natural = BooleanProperty(False)
    share = NumericProperty(0.62)

    def __init__(self, **kwargs):
        kwargs.setdefault("do_scroll_x", False)
        super().__init__(**kwargs)
        self.fbind("height", self._trigger_fit)
        self.fbind("natural", self._trigger_fit)
        self.fbind("share", self._trigger_fit)
        self.fbind("parent", self._on_parent)

    def _trigger_fit(self, *_args) -> None:
        Clock.schedule_once(lambda _dt: self.fit(), -1)

    def _on_parent(self, *_args) -> None:
        if self.parent is not None:
            self.parent.fbind("height", self._trigger_fit)
        self._trigger_fit()

    def fit(self) -> None:
        """Size the content (and, when ``natural``, this column) to the view."""
        if not self.children:
            return
        box = self.children[0]
        if self.natural:
            self.size_hint_y = None
            limit = box.natural_height if self.parent is None else self.share * self.parent.height
            wanted = min(box.natural_height, limit)
            if abs(self.height - wanted) > 0.5:
                self.height = wanted
                return  # the height changes: fit() runs again
        elif self.size_hint_y is None:
            self.size_hint_y = 1  # turned back from portrait: stretch again
        box.height = max(self.height, box.minimum_needed)
        scrolls = box.height > self.height + 0.5
        self.do_scroll_y = scrolls
        # keep the content clear of the scroll bar while there is one
        right = self.bar_width + self.bar_margin + 2 if scrolls else 0
        if box.padding[2] != right:
            box.padding = [box.padding[0], box.padding[1], right, box.padding[3]]
        if not scrolls:
            self.scroll_y = 1

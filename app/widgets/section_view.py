"""The live cross-section drawing: ground line, stations, water fill, flags, zoom, pan and drag.

Drawn with Kivy canvas instructions only (a ``Line`` for the ground, one ``Point`` instruction per
kind of marker, one ``Mesh`` triangle strip for the water between the surface and the bed, cached
label textures for the ticks), so one update is a few numpy operations on the points.

Velocities read at the verticals (:meth:`SectionView.set_velocities`) are drawn as bars standing
on the water surface, as tall as the velocity (the fastest reaching about a third of the
drawing), joined at their tops; a negative velocity (flow running upstream) hangs below the
surface in red.

Touch: a one-finger drag that starts on the water-level line (or its grip at the right) moves the
water level and fires ``on_level_dragged``; any other one-finger drag pans; two fingers pinch to
zoom; the mouse wheel zooms; a double tap fits the whole section again.
"""

from __future__ import annotations

import math

import numpy as np
from kivy.core.text import Label as CoreLabel
from kivy.graphics import Color, InstructionGroup, Line, Mesh, Point, Rectangle
from kivy.metrics import dp, sp
from kivy.properties import BooleanProperty, NumericProperty, ObjectProperty
from kivy.uix.stencilview import StencilView
from stakeline.app import theme as T

_MARGIN_LEFT, _MARGIN_BOTTOM, _MARGIN_RIGHT, _MARGIN_TOP = 78, 40, 40, 16  # dp
_GRAB_DISTANCE = 32  # dp: how near the water line a drag must start to move it


class SectionView(StencilView):
    """A zoomable drawing of one cross-section with its water level.

    Call :meth:`set_section` with stations and elevations (survey unit), the flagged stations and
    the current station; set ``water_level`` (or ``None``) to fill the water.  ``level_step`` is
    the rounding of a dragged level (survey unit).
    """

    water_level = ObjectProperty(None, allownone=True)
    level_step = NumericProperty(0.005)
    draggable = BooleanProperty(True)
    """False where the water level is only shown (the velocity step): a drag then pans."""
    flip = BooleanProperty(False)
    """True when the tape starts at the right stake: stations then grow to the left, so the
    drawing is mirrored to keep the left bank (looking downstream) on the left."""
    strip = ObjectProperty(None, allownone=True)
    """``strip(stations, elevations, level) -> (stations, bottoms)``: the water's bottom edge
    with the water's edges inserted (the screen passes the service's); None draws no water."""
    __events__ = ("on_level_dragged",)

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._x = np.zeros(0)
        self._z = np.zeros(0)
        self._flagged = np.zeros(0)
        self._current: float | None = None
        self._view: list[float] | None = None  # x0, x1, z0, z1 in survey units
        self._user_view = False  # True once the crew zoomed or panned: keep their view
        self._touches: dict = {}
        self._dragging_level = False
        self._pinch: tuple | None = None
        self._label_cache: dict[str, object] = {}
        self._index_cache: dict[int, list[int]] = {}
        self._velocity_x = np.zeros(0)
        self._velocity_v = np.zeros(0)
        self._velocity_current: float | None = None
        with self.canvas:
            Color(*T.PAPER)
            self._background = Rectangle()
            Color(*T.GRID)
            self._grid = Line(width=1)
        self._ticks = InstructionGroup()  # tick labels, rebuilt when the view changes
        self.canvas.add(self._ticks)
        with self.canvas:
            Color(*T.WATER)
            self._water = Mesh(mode="triangle_strip", fmt=[(b"vPosition", 2, "float")])
            Color(*T.WATER_LINE)
            self._level_line = Line(width=dp(1.5))
            self._grip = Rectangle()
            Color(*T.GROUND)
            self._ground = Line(width=dp(2.5), joint="round")
            Color(*T.FLAG)
            self._flags = Point(pointsize=dp(9))
            Color(*T.CURRENT)
            self._current_mark = Point(pointsize=dp(8))
            Color(*T.POINT)
            self._points = Point(pointsize=dp(3.5))
        self._bars = InstructionGroup()  # velocity bars, rebuilt with the water
        self.canvas.add(self._bars)
        self.bind(pos=self._on_geometry, size=self._on_geometry)

    # --- data ---------------------------------------------------------------------------------
    def set_section(self, stations, elevations, flagged=(), current=None, refit=False) -> None:
        """Show these stations and elevations (survey unit); flagged stations get a red mark."""
        self._x = np.asarray(stations, dtype=float)
        self._z = np.asarray(elevations, dtype=float)
        self._flagged = np.asarray(list(flagged), dtype=float)
        self._current = current
        if refit or not self._user_view:
            self._view = None
        self.redraw()

    def set_velocities(self, stations, velocities, current=None) -> None:
        """Draw a bar for the velocity (unit/s, normal to the section) read at each station;
        ``current`` is the vertical being read (drawn thicker).  Empty lists clear them."""
        self._velocity_x = np.asarray(stations, dtype=float)
        self._velocity_v = np.asarray(velocities, dtype=float)
        self._velocity_current = current
        if not self._user_view:
            self._view = None
        self.redraw()

    def on_flip(self, *_args) -> None:
        """Mirror the drawing."""
        self.redraw()

    def on_water_level(self, *_args) -> None:
        """Redraw the water when the level changes."""
        self.update_water()

    def on_level_dragged(self, *_args) -> None:
        """Fired after the crew drags the water line; ``water_level`` holds the new level."""

    # --- view ---------------------------------------------------------------------------------
    def fit(self) -> list[float]:
        """The view that shows the whole section and the water level with a small margin."""
        if self._x.size == 0:
            return [0.0, 10.0, 0.0, 2.0]
        z_values = self._z if self.water_level is None else np.append(self._z, self.water_level)
        x0, x1 = float(self._x.min()), float(self._x.max())
        z0, z1 = float(z_values.min()), float(z_values.max())
        dx, dz = max(x1 - x0, 0.5), max(z1 - z0, 0.25)
        top = z1 + 0.12 * dz
        if self._velocity_x.size and self.water_level is not None:
            top = max(top, float(self.water_level) + 0.5 * dz)  # room for the velocity bars
        return [x0 - 0.03 * dx, x1 + 0.03 * dx, z0 - 0.08 * dz, top]

    def _frame(self) -> tuple[float, float, float, float]:
        """Plot box in window pixels: left, bottom, width, height."""
        left = self.x + dp(_MARGIN_LEFT)
        bottom = self.y + dp(_MARGIN_BOTTOM)
        width = max(self.width - dp(_MARGIN_LEFT + _MARGIN_RIGHT), 1.0)
        height = max(self.height - dp(_MARGIN_BOTTOM + _MARGIN_TOP), 1.0)
        return left, bottom, width, height

    def _scale(self):
        if self._view is None:
            self._view = self.fit()
        x0, x1, z0, z1 = self._view
        left, bottom, width, height = self._frame()
        kx, kz = width / (x1 - x0), height / (z1 - z0)
        if self.flip:
            return left + x1 * kx, -kx, bottom - z0 * kz, kz
        return left - x0 * kx, kx, bottom - z0 * kz, kz

    def to_screen(self, x, z):
        """Window pixels of survey points (arrays or scalars)."""
        ax, kx, az, kz = self._scale()
        return ax + np.asarray(x) * kx, az + np.asarray(z) * kz

    def level_at(self, y: float) -> float:
        """Water level (survey unit) at window height ``y``, rounded to ``level_step``."""
        _ax, _kx, az, kz = self._scale()
        level = (y - az) / kz
        step = self.level_step or 0.001
        return round(round(level / step) * step, 6)

    # --- drawing ------------------------------------------------------------------------------
    def _on_geometry(self, *_args) -> None:
        self._background.pos = self.pos
        self._background.size = self.size
        self.redraw()

    def redraw(self) -> None:
        """Redraw everything (after new data, a resize, a zoom or a pan)."""
        if self._x.size:
            px, pz = self.to_screen(self._x, self._z)
            flat = np.column_stack([px, pz]).ravel()
            self._ground.points = flat.tolist()
            self._points.points = flat.tolist()
            if self._flagged.size:
                hit = np.isin(self._x, self._flagged)
                self._flags.points = np.column_stack([px[hit], pz[hit]]).ravel().tolist()
            else:
                self._flags.points = []
            if self._current is not None and np.any(self._x == self._current):
                i = int(np.flatnonzero(self._x == self._current)[0])
                self._current_mark.points = [float(px[i]), float(pz[i])]
            else:
                self._current_mark.points = []
        else:
            self._ground.points = []
            self._points.points = []
            self._flags.points = []
            self._current_mark.points = []
        self._draw_ticks()
        self.update_water()

    def update_water(self) -> None:
        """Redraw the water fill and the level line only (the per-keystroke / per-drag update)."""
        level = self.water_level
        self._draw_velocities()
        if level is None or self._x.size < 2 or self.strip is None:
            self._water.vertices = []
            self._water.indices = []
            self._level_line.points = []
            self._grip.size = (0, 0)
            return
        level = float(level)
        stations, bottoms = self.strip(self._x, self._z, level)
        ax, kx, az, kz = self._scale()
        count = stations.size
        vertices = np.empty((count, 2, 2), dtype=np.float32)
        vertices[:, :, 0] = (ax + stations * kx)[:, None]
        vertices[:, 0, 1] = az + level * kz
        vertices[:, 1, 1] = az + bottoms * kz
        self._water_vertices = vertices.ravel()  # the mesh reads this buffer; keep it alive
        self._water.vertices = self._water_vertices
        indices = self._index_cache.get(count)
        if indices is None:
            indices = self._index_cache[count] = list(range(2 * count))
        self._water.indices = indices
        y = az + level * kz
        left, _bottom, width, _height = self._frame()
        self._level_line.points = [left, y, left + width, y]
        self._grip.pos = (left + width, y - dp(10))
        self._grip.size = (dp(_MARGIN_RIGHT) - dp(4), dp(20))

    def _draw_velocities(self) -> None:
        """Bars from the water surface, as tall as each velocity, joined at their tops."""
        self._bars.clear()
        keep = np.isfinite(self._velocity_v)
        x, v = self._velocity_x[keep], self._velocity_v[keep]
        if self.water_level is None or x.size == 0:
            return
        largest = float(np.max(np.abs(v)))
        if largest <= 0:
            largest = 1.0
        px, surface = self.to_screen(x, float(self.water_level))
        _left, bottom, _width, height = self._frame()
        room = max(bottom + height - float(surface), height * 0.2) * 0.9
        tops = float(surface) + v / largest * room
        self._bars.add(Color(*T.VELOCITY))
        if x.size > 1:
            order = np.argsort(px)
            line = np.column_stack([px[order], tops[order]]).ravel().tolist()
            self._bars.add(Line(points=line, width=dp(1.2)))
        for sx, top, speed, station in zip(px.tolist(), tops.tolist(), v.tolist(), x.tolist(),
                                           strict=True):  # fmt: skip
            current = (
                self._velocity_current is not None and abs(station - self._velocity_current) < 1e-6
            )
            colour = T.CURRENT if current else (T.FLAG if speed < 0 else T.VELOCITY)
            self._bars.add(Color(*colour))
            self._bars.add(Line(points=[sx, float(surface), sx, top],
                                width=dp(4.5 if current else 3)))  # fmt: skip

    def _label(self, text: str):
        texture = self._label_cache.get(text)
        if texture is None:
            label = CoreLabel(text=text, font_size=sp(T.SMALL), color=T.INK)
            label.refresh()
            texture = self._label_cache[text] = label.texture
        return texture

    def _draw_ticks(self) -> None:
        """Grid lines and tick labels at round numbers along both axes."""
        self._ticks.clear()
        if self._view is None:
            self._view = self.fit()
        x0, x1, z0, z1 = self._view
        left, bottom, width, height = self._frame()
        grid = [left, bottom, left + width, bottom, left + width, bottom + height]
        grid += [left, bottom + height, left, bottom]
        self._ticks.add(Color(*T.INK))
        for value in _ticks(x0, x1, max(2, int(width / dp(110)))):
            sx, _ = self.to_screen(value, 0.0)
            texture = self._label(_format_tick(value, x1 - x0))
            self._ticks.add(
                Rectangle(
                    texture=texture,
                    size=texture.size,
                    pos=(float(sx) - texture.width / 2, bottom - texture.height - dp(4)),
                )
            )
            grid += [float(sx), bottom, float(sx), bottom + height, float(sx), bottom]
        grid += [left, bottom]
        for value in _ticks(z0, z1, max(2, int(height / dp(60)))):
            _, sz = self.to_screen(0.0, value)
            texture = self._label(_format_tick(value, z1 - z0))
            self._ticks.add(
                Rectangle(
                    texture=texture,
                    size=texture.size,
                    pos=(left - texture.width - dp(6), float(sz) - texture.height / 2),
                )
            )
            grid += [left, float(sz), left + width, float(sz), left, float(sz)]
        self._grid.points = grid

    # --- touch --------------------------------------------------------------------------------
    def on_touch_down(self, touch):
        """Start a pan, a pinch or a level drag; the wheel zooms; a double tap refits."""
        if not self.collide_point(*touch.pos):
            return False
        if touch.is_mouse_scrolling:
            factor = 0.85 if touch.button == "scrolldown" else 1 / 0.85
            self.zoom(factor, touch.pos)
            return True
        if touch.is_double_tap:
            self._view = None
            self._user_view = False
            self.redraw()
            return True
        touch.grab(self)
        self._touches[touch.uid] = touch.pos
        if len(self._touches) == 1 and self.water_level is not None and self.draggable:
            _, y = self.to_screen(0.0, float(self.water_level))
            self._dragging_level = abs(touch.y - float(y)) <= dp(_GRAB_DISTANCE)
        else:
            self._dragging_level = False
        if len(self._touches) == 2:
            self._pinch = self._spread()
        return True

    def on_touch_move(self, touch):
        """Move the level, pan, or pinch-zoom."""
        if touch.grab_current is not self:
            return False
        previous = self._touches.get(touch.uid, touch.pos)
        self._touches[touch.uid] = touch.pos
        if len(self._touches) >= 2 and self._pinch:
            spread = self._spread()
            if self._pinch[0] > 0 and spread[0] > 0:
                self.zoom(spread[0] / self._pinch[0], spread[1])
            self._pinch = spread
        elif self._dragging_level:
            self.water_level = self.level_at(touch.y)
            self.dispatch("on_level_dragged")
        else:
            self.pan(touch.x - previous[0], touch.y - previous[1])
        return True

    def on_touch_up(self, touch):
        """End whatever the touch was doing."""
        if touch.grab_current is not self:
            return False
        touch.ungrab(self)
        self._touches.pop(touch.uid, None)
        if len(self._touches) < 2:
            self._pinch = None
        self._dragging_level = False
        return True

    def _spread(self):
        (ax, ay), (bx, by) = list(self._touches.values())[:2]
        return math.hypot(bx - ax, by - ay), ((ax + bx) / 2, (ay + by) / 2)

    def zoom(self, factor: float, centre) -> None:
        """Zoom in by ``factor`` (> 1 zooms in) about a window point."""
        ax, kx, az, kz = self._scale()
        cx, cz = (centre[0] - ax) / kx, (centre[1] - az) / kz
        x0, x1, z0, z1 = self._view
        self._view = [
            cx - (cx - x0) / factor,
            cx + (x1 - cx) / factor,
            cz - (cz - z0) / factor,
            cz + (z1 - cz) / factor,
        ]
        self._user_view = True
        self.redraw()

    def pan(self, dx: float, dy: float) -> None:
        """Move the drawing by window pixels."""
        _ax, kx, _az, kz = self._scale()
        x0, x1, z0, z1 = self._view
        self._view = [x0 - dx / kx, x1 - dx / kx, z0 - dy / kz, z1 - dy / kz]
        self._user_view = True
        self.redraw()


def _ticks(low: float, high: float, count: int) -> list[float]:
    """Round tick values between ``low`` and ``high``, about ``count`` of them."""
    span = max(high - low, 1e-9)
    raw = span / count
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 5, 10) if m * power >= raw)
    first = math.ceil(low / step) * step
    return [round(first + i * step, 9) for i in range(int((high - first) / step) + 1)]


def _format_tick(value: float, span: float) -> str:
    """Tick text with as many decimals as the span needs."""
    decimals = 0 if span >= 20 else 1 if span >= 2 else 2 if span >= 0.2 else 3
    return f"{value:.{decimals}f}"

"""Small helpers of the service layer: typed-number parsing, station plans, the worker thread.

Pure functions (no Kivy, no store) except :class:`Worker`, which reports back on the Kivy clock.
"""

from __future__ import annotations

import math
import threading

import numpy as np
from stakeline.errors import SurveyError
from stakeline.survey import numbers


class ServiceError(SurveyError):
    """A request from a screen that cannot be done; the message is shown to the crew as is."""


def parse_number(text: str, what: str) -> float:
    """The number typed in ``text`` (a decimal comma counts as a point), else ServiceError."""
    return numbers.parse_number(text, what, decimal_comma=True, error=ServiceError)


def uniform_stations(distance: float, count: int, step_round: float = 0.05) -> list[float]:
    """A uniform station plan from 0 to ``distance`` (survey unit) with about ``count`` stations.

    The spacing ``distance / (count - 1)`` is rounded to a multiple of ``step_round`` (easy to
    mark on a tape); the far stake is always the last station.  Returns stations in order.

    >>> uniform_stations(10.0, 11)
    [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0]
    >>> uniform_stations(9.3, 5)
    [0.0, 2.3, 4.6, 6.9, 9.3]
    """
    if not (distance > 0 and math.isfinite(distance)):
        raise ServiceError(f"distance between stakes {distance:g} must be a positive number")
    if count < 2:
        raise ServiceError(f"station count {count} is too small; plan at least 2 stations")
    spacing = max(round(distance / (count - 1) / step_round) * step_round, step_round)
    stations = np.arange(0.0, distance, spacing)
    stations = stations[distance - stations >= 0.5 * spacing]
    return [round(float(s), 6) for s in stations] + [round(float(distance), 6)]


def short_path(path: str, home: str | None = None, limit: int = 48) -> str:
    """``path`` for a person to read in a line of text: the home folder written as ``~``, and a
    path still longer than ``limit`` characters shortened in the middle (its first folder and
    its last two parts kept).

    >>> short_path("/home/ana/Documents/Stakeline outbox", home="/home/ana")
    '~/Documents/Stakeline outbox'
    >>> short_path("/media/usb/outbox", home="/home/ana")
    '/media/usb/outbox'
    >>> short_path("/tmp/a-rather-long-folder-name/and-another-one/documents/Stakeline outbox")
    '/tmp/…/documents/Stakeline outbox'
    """
    import os

    home = (os.path.expanduser("~") if home is None else home).rstrip(os.sep)
    if home and (path == home or path.startswith(home + os.sep)):
        path = "~" + path[len(home) :]
    parts = path.split(os.sep)
    if len(path) > limit and len(parts) > 4:
        path = os.sep.join([*parts[:2], "…", *parts[-2:]])
    return path


def count_words(count: int, noun: str = "station") -> str:
    """``"1 station"``, ``"21 stations"``: a count with its noun in the right number.

    >>> count_words(1), count_words(0), count_words(21, "finding")
    ('1 station', '0 stations', '21 findings')
    """
    return f"{count} {noun}" + ("" if count == 1 else "s")


def next_station(plan: list[float], read: set[float], current: float | None) -> float | None:
    """The station to read after ``current``: the next planned one not yet read, else the first
    unread planned station, else ``None`` (every planned station has a reading)."""
    unread = [s for s in sorted(plan) if s not in read]
    if current is not None:
        later = [s for s in unread if s > current]
        if later:
            return later[0]
    return unread[0] if unread else None


class Worker:
    """Runs functions on a background thread and hands results back on the Kivy clock.

    A request made under a ``key`` (e.g. the screen asking) carries a token: when a newer request
    under the same key has been made by the time a result arrives, the older result is dropped,
    so a late answer never overwrites a newer one.
    """

    def __init__(self):
        self.pending = 0
        self.cancelled = False  # set when the app stops: late results are dropped
        self._latest: dict = {}  # key -> token of the newest request under that key

    def request(self, key):
        """Start a new request under ``key``; returns ``guard(callback)``, which wraps a callback
        so that it runs only while this request is still the newest under ``key``."""
        token = self._latest[key] = self._latest.get(key, 0) + 1

        def guard(callback):
            if callback is None:
                return None

            def guarded(value):
                if self._latest.get(key) == token:
                    callback(value)

            return guarded

        return guard

    def run(self, function, on_done, on_error=None, key=None) -> None:
        """Call ``function()`` on a thread; then ``on_done(result)`` or ``on_error(exc)`` on the UI
        thread (dropped when a newer request under the same ``key`` was made meanwhile)."""
        from kivy.clock import Clock

        if key is not None:
            guard = self.request(key)
            on_done, on_error = guard(on_done), guard(on_error)
        self.pending += 1

        def job():
            try:
                result = function()
            except Exception as exc:  # reported to the crew, never swallowed
                Clock.schedule_once(lambda _dt, e=exc: self._finish(on_error, e), 0)
            else:
                Clock.schedule_once(lambda _dt: self._finish(on_done, result), 0)

        threading.Thread(target=job, daemon=True).start()

    def _finish(self, callback, value) -> None:
        self.pending -= 1
        if callback is not None and not self.cancelled:
            callback(value)

"""The device settings, as a mixin of the field service: length unit for new surveys, crew,
reading precision (decimals shown), check tolerances, the outbox folder, and the crew's ± of one
reading and of one station that the office figures carry into their bands.

Settings live in the store's settings table (:meth:`stakeline.store.Store.get_setting`), lengths in
the device's unit; the ± follow a change of unit by conversion
(:func:`stakeline.survey.reduction.convert_length`).
"""

from __future__ import annotations

import os

from stakeline.app.service.util import ServiceError
from stakeline.survey.numbers import parse_number

OUTBOX_NAME = "Stakeline outbox"
"""Name of the default outbox folder, in the user's documents."""


def documents_folder(environ=None) -> str:
    """The user's documents folder: ``$XDG_DOCUMENTS_DIR``, else its entry in the XDG user-dirs
    file (``$XDG_CONFIG_HOME/user-dirs.dirs``, as ``xdg-user-dir DOCUMENTS`` reads it), else
    ``~/Documents``."""
    environ = os.environ if environ is None else environ
    home = environ.get("HOME") or os.path.expanduser("~")
    folder = environ.get("XDG_DOCUMENTS_DIR", "")
    if not folder:
        config = environ.get("XDG_CONFIG_HOME") or os.path.join(home, ".config")
        try:
            with open(os.path.join(config, "user-dirs.dirs"), encoding="utf-8") as handle:
                for line in handle:
                    name, _, value = line.strip().partition("=")
                    if name == "XDG_DOCUMENTS_DIR":
                        folder = value.strip().strip('"').replace("$HOME", home)
        except OSError:
            pass
    if not folder or os.path.normpath(folder) == os.path.normpath(home):
        folder = os.path.join(home, "Documents")  # the spec's "disabled" means: not home itself
    return folder


def default_outbox(environ=None) -> str:
    """The outbox when the settings name none: a visible folder in the user's documents."""
    return os.path.join(documents_folder(environ), OUTBOX_NAME)


DEFAULT_SETTINGS = {
    "unit": "m",
    "crew": [],
    "precision": 0.001,
    "line_tolerance": None,
    "min_wetted_stations": 20,
    "outbox": "",
    "reading_plus_minus": None,
    "station_plus_minus": None,
}
"""Device settings and their defaults (``precision``, ``line_tolerance`` and the two ± in the
device's unit; ``line_tolerance`` None means the field checks' default for the unit).
``precision`` is the step of the numbers shown; ``reading_plus_minus`` and ``station_plus_minus``
are the crew's ± of one plumb (or rod) reading and of one tape station, carried into the office
figures' bands (None: :meth:`stakeline.survey.uncertainty.Precision.default` for the unit)."""

PLUS_MINUS_KEYS = ("reading_plus_minus", "station_plus_minus")
"""Settings holding the crew's reading and station ± (device unit; None for the unit's default)."""


class DeviceSettings:
    """Mixin of :class:`stakeline.app.service.FieldService` (needs ``self.store``): the device settings."""

    def settings(self) -> dict:
        """Device settings with defaults filled in (see :data:`DEFAULT_SETTINGS`); the reading
        and station ± are numbers in the device's unit (the unit's default when not set)."""
        out = {key: self.store.get_setting(key, value) for key, value in DEFAULT_SETTINGS.items()}
        out.update(zip(PLUS_MINUS_KEYS, self.plus_minus(out["unit"]), strict=True))
        return out

    def plus_minus(self, unit: str) -> tuple[float, float]:
        """The crew's ± of one reading and of one station, in ``unit`` (m or ft): the stored
        settings converted from the device's unit, or the unit's default for any not set."""
        from stakeline.survey.reduction import convert_length

        device_unit = self.store.get_setting("unit", DEFAULT_SETTINGS["unit"])
        stored = [self.store.get_setting(key) for key in PLUS_MINUS_KEYS]
        return tuple(
            fallback if value is None else convert_length(float(value), device_unit, unit)
            for value, fallback in zip(stored, self.default_plus_minus(unit), strict=True)
        )

    @staticmethod
    def default_plus_minus(unit: str) -> tuple[float, float]:
        """The usual ± of one reading and of one station in ``unit`` (m or ft), from
        :meth:`stakeline.survey.uncertainty.Precision.default`."""
        from stakeline.survey.uncertainty import Precision

        default = Precision.default(unit)
        return default.reading, default.station

    def outbox(self) -> str:
        """Folder for finished visit packages (created when first used): the one set in
        Settings, else the default (:func:`default_outbox`, or the one the app was given)."""
        return self.settings()["outbox"] or self.default_outbox

    def outbox_setting(self, text: str) -> str:
        """What to store for the outbox typed in Settings: "" (follow the default) when it is
        empty or the default itself, else the folder with ``~`` expanded."""
        folder = os.path.expanduser(str(text).strip())
        if not folder or os.path.normpath(folder) == os.path.normpath(self.default_outbox):
            return ""
        return folder

    def save_settings(self, **values) -> dict:
        """Store changed settings after checking them all; returns all settings.

        The reading and station ± given are in the unit being saved (the new one when ``unit``
        changes too; None resets one to the unit's default).  Stored ± not given keep their
        length when the unit changes: they are converted to the new unit.
        """
        for key, value in values.items():
            values[key] = _checked_setting(key, value)
        old_unit = self.store.get_setting("unit", DEFAULT_SETTINGS["unit"])
        new_unit = values.get("unit", old_unit)
        if new_unit != old_unit:
            converted = dict(zip(PLUS_MINUS_KEYS, self.plus_minus(new_unit), strict=True))
            for key in PLUS_MINUS_KEYS:
                if key not in values and self.store.get_setting(key) is not None:
                    values[key] = round(converted[key], 6)
        for key, value in values.items():
            self.store.set_setting(key, value)
        return self.settings()


def _checked_setting(key: str, value):
    """``value`` for the setting ``key`` if it can be stored, else ServiceError (one line)."""
    if key not in DEFAULT_SETTINGS:
        raise ServiceError(f"unknown setting {key!r}")
    if key == "unit" and value not in ("m", "ft"):
        raise ServiceError(f"length unit {value!r} is not m or ft")
    words = key.replace("_plus_minus", " ±").replace("_", " ")
    if key in ("precision", "line_tolerance", *PLUS_MINUS_KEYS) and value is not None:
        return parse_number(value, words, positive=True, error=ServiceError)
    if key == "min_wetted_stations" and int(value) < 2:
        raise ServiceError("minimum stations across the water must be at least 2")
    return value

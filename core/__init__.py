"""Stakeline: stream and canal cross-sections surveyed with stakes, a level line and a plumb.

The domain lives here -- ``stakeline.survey`` (reduction, geometry, hydraulics, rating,
comparison, uncertainty, roughness), ``stakeline.checks`` (field checks), ``stakeline.store``
(the SQLite store and visit packages), ``stakeline.report`` (office reports) and
``stakeline.files`` (section CSV files and exports); the touch app and the command line live in
``stakeline.app``.
"""

__version__ = "0.2.0"

"""Field checks: find bad readings, gaps and missing edges while the crew is still at the section.

Everything public is importable from here; see :mod:`stakeline.checks.review`.
"""

from stakeline.checks.review import *  # noqa: F403
from stakeline.checks.review import __all__  # noqa: F401

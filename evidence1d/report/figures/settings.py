"""The ``figures`` setting now lives below the report, in :mod:`evidence1d.figure_settings`
(the case loader checks it there).  This module only keeps the old import path working for
callers not yet moved to it; import from :mod:`evidence1d.figure_settings` instead.
"""
from __future__ import annotations

from ...figure_settings import DEFAULT_DRAWS as MAX_DRAWS
from ...figure_settings import DEFAULT_SETTINGS, figure_settings

__all__ = ["DEFAULT_SETTINGS", "MAX_DRAWS", "figure_settings"]

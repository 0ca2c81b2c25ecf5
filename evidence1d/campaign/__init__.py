"""Campaigns of many simulate -> fit cycles: calibration of the model comparison
(``evidence1d calibrate``) and counting-time planning (``evidence1d plan``), one job per
replicate on a Dask cluster or a process pool, one result file per replicate.

Modules: :mod:`~.truths` (true parameters), :mod:`~.replicate` (one simulate -> fit job),
:mod:`~.store` (the campaign folder), :mod:`~.engine` (running the jobs),
:mod:`~.cluster` (where they run), :mod:`~.generators` (out-of-family generator files),
:mod:`~.scores` (calibration scores),
:mod:`~.calibration` (:func:`calibrate`), :mod:`~.planning` (:func:`plan`),
:mod:`~.figures`, :mod:`~.page`.
"""
from __future__ import annotations

from .calibration import calibrate
from .cluster import campaign_executor
from .planning import plan

__all__ = ["calibrate", "plan", "campaign_executor"]

"""Analyses of a finished fit that need no sampling of their own (or little): goodness of
fit per dataset, parameters piled on a prior bound, and the evidence budget (how much each
dataset contributes to the Bayes factor of the two leading families).

Computation only: the results are plain, JSON-ready dicts that the runner keeps in the
results record and :mod:`evidence1d.report` renders.  No physics imports; a family is seen
only through the public :class:`~evidence1d.problem.JointProblem` API.
"""
from __future__ import annotations

from .bounds import BOUND_MASS_MAX, BOUND_WINDOW, bound_flags
from .budget import budget_subsets, evidence_budget, subset_island
from .fit import FIT_THRESHOLDS, goodness_of_fit, chi2_limit

__all__ = ["goodness_of_fit", "chi2_limit", "FIT_THRESHOLDS", "bound_flags", "BOUND_WINDOW",
           "BOUND_MASS_MAX", "evidence_budget", "budget_subsets", "subset_island"]

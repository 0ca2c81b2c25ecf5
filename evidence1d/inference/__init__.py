"""Generic inference: priors, likelihoods, posterior sampling, evidences, diagnostics, comparison.

This layer knows no physics.  It works on a vectorised log-likelihood ``f(theta)`` with
``theta`` of shape (k, m) returning (k,), and a :class:`JointPrior` over the m free parameters.
arviz is imported only by :mod:`evidence1d.inference.diagnostics`, and only when used.

References
----------
.. [1] Kass & Raftery, JASA 90, 773 (1995); Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006);
   Foreman-Mackey et al., PASP 125, 306 (2013).
"""
from evidence1d.inference.compare import compare_models, kass_raftery_wording, savage_dickey
from evidence1d.inference.evidence import EvidenceResult, tempered_evidence
from evidence1d.inference.laplace import bic, laplace_evidence
from evidence1d.inference.likelihood import (gaussian_loglike, gaussian_loglike_pointwise,
                                             student_t_loglike, student_t_loglike_pointwise)
from evidence1d.inference.posterior import PosteriorResult, sample_posterior
from evidence1d.inference.prior_specs import prior_from_spec
from evidence1d.inference.priors import (Fixed, JointPrior, LogUniform, Normal, TruncatedNormal,
                                         Uniform)

__all__ = ["Uniform", "LogUniform", "Normal", "TruncatedNormal", "Fixed", "JointPrior",
           "prior_from_spec", "gaussian_loglike", "gaussian_loglike_pointwise",
           "student_t_loglike", "student_t_loglike_pointwise", "sample_posterior",
           "PosteriorResult", "tempered_evidence", "EvidenceResult", "laplace_evidence", "bic",
           "compare_models", "kass_raftery_wording", "savage_dickey"]

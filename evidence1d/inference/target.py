"""The vectorised log target every sampler of the package calls.

emcee, the tempered evidence and the Laplace approximation all evaluate a log-likelihood
``f(theta (k, m)) -> (k,)`` (nats) on batches of parameter sets.  :class:`LogTarget` wraps it
once for all of them: it counts the parameter sets passed, calls ``f`` only inside the prior
support, and turns NaN and +inf into −inf (zero likelihood), tallying them so that a sampler
can warn about a broken model.

References
----------
.. [1] D. Foreman-Mackey, D. W. Hogg, D. Lang and J. Goodman, PASP 125, 306 (2013), §3: the
   log-probability function of an ensemble sampler.
"""
from __future__ import annotations

import numpy as np

__all__ = ["LogTarget"]


class LogTarget:
    """Vectorised log posterior: log-likelihood + log prior, −inf outside the support.

    The likelihood is only called on rows inside the prior support; NaN and +inf results
    count as −inf (and are tallied in ``n_nonfinite``).  Picklable when ``log_likelihood`` is.

    Parameters
    ----------
    log_likelihood : callable
        ``f(theta (k, m)) -> (k,)`` in nats.
    prior : JointPrior, optional
        Prior over the m free parameters.  None: the caller passes points inside the support
        only, and the target is the log-likelihood alone.
    add_prior : bool
        If False, the result is the log-likelihood alone and the prior only bounds it (or
        ``log_likelihood`` already is the log posterior).

    Attributes
    ----------
    n_evaluations : int
        Parameter sets passed to ``log_likelihood`` so far.
    n_nonfinite : int
        Of those, the ones whose value was NaN or +inf.

    References
    ----------
    .. [1] Foreman-Mackey et al., PASP 125, 306 (2013), §3.
    """

    def __init__(self, log_likelihood, prior=None, add_prior=True):
        self.log_likelihood = log_likelihood
        self.prior = prior
        self.add_prior = add_prior and prior is not None
        self.n_evaluations = 0
        self.n_nonfinite = 0

    def _likelihood(self, theta):
        ll = np.asarray(self.log_likelihood(theta), dtype=float).reshape(-1)
        self.n_evaluations += theta.shape[0]
        bad = np.isnan(ll) | (ll == np.inf)
        self.n_nonfinite += int(bad.sum())
        return np.where(bad, -np.inf, ll)

    def __call__(self, theta):
        theta = np.atleast_2d(np.asarray(theta, dtype=float))
        if self.prior is None:
            return self._likelihood(theta) if theta.shape[0] else np.empty(0)
        lp = self.prior.log_prob(theta)
        ok = np.isfinite(lp)
        out = np.full(theta.shape[0], -np.inf)
        if ok.any():
            ll = self._likelihood(theta[ok])
            out[ok] = ll + lp[ok] if self.add_prior else ll
        return out

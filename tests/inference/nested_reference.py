"""Reference evidences from dynesty's static nested sampler, for any likelihood/prior pair.

The helper takes a vectorised ``log_likelihood(theta (k, m)) -> (k,)`` and a
``prior_transform(u (k, m)) -> (k, m)``, so that the same comparison works on a physics case
(``Case.log_likelihood`` / ``Case.prior_transform``).

References
----------
J. S. Speagle, "dynesty: a dynamic nested sampling package for estimating Bayesian posteriors
and evidences", MNRAS 493, 3132 (2020).
"""
import numpy as np


def dynesty_log_z(log_likelihood, prior_transform, ndim, rng, nlive=400, dlogz=0.05):
    """Return (ln Z, its error) from dynesty.NestedSampler."""
    import dynesty

    def ll(x):
        return float(np.asarray(log_likelihood(np.asarray(x)[None, :])).reshape(-1)[0])

    def pt(u):
        return np.asarray(prior_transform(np.asarray(u)[None, :]))[0]

    sampler = dynesty.NestedSampler(ll, pt, ndim, nlive=nlive, rstate=rng, bound="multi",
                                    sample="rwalk")
    sampler.run_nested(dlogz=dlogz, print_progress=False)
    res = sampler.results
    return float(res.logz[-1]), float(res.logzerr[-1])

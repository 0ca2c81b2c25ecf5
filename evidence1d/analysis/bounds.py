"""Parameters whose posterior piles up on a bound of their prior.

For every parameter with a finite prior bound, the posterior mass within ``BOUND_WINDOW``
(1 %) of the prior width of that bound — or within half the posterior's own standard
deviation if that is narrower, so that a posterior far narrower than a very wide prior (the
data-free default priors of the intensity scales span ten decades) is judged on its own
scale: 2.9 ± 0.1 is not "within 1 % of the width" of 0 on [0, 3.6 × 10⁹] in any useful sense
— plus any mass beyond it, is measured on the posterior samples.  The width is measured where the prior is flat: in ln θ for a
log-uniform prior, in θ otherwise; for a truncated normal it is the truncation interval.
A posterior that the data do not constrain puts about 1 % of its mass in each window; a
bound is flagged when the mass exceeds ``BOUND_MASS_MAX`` (5 %, five times that: a
reporting choice of this package).  Such a posterior is shaped by the prior's edge, not
only by the data: quantiles, the evidence (through its Occam factor) and the Bayes factor
then depend on where the edge was put, so the edge must be widened or justified.  Mass
beyond the bound would mean draws outside the declared prior; the analytic marginalisation
keeps the declared bounds (:mod:`evidence1d.inference.truncated`), so it is reported (and
expected to be 0) as a check.  When the bound is the family's nested
one-dimensional limit (e.g. an interchain coupling of zero), the pile-up is itself a
finding, and the Savage–Dickey ratio is the number to read.

References
----------
.. [1] A. Gelman, J. B. Carlin, H. S. Stern, D. B. Dunson, A. Vehtari and D. B. Rubin,
   *Bayesian Data Analysis*, 3rd ed. (CRC, 2013), §2.8 and §5.7: posteriors at the
   boundary of the parameter space and the sensitivity to the prior (from memory).
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["BOUND_WINDOW", "BOUND_MASS_MAX", "bound_flags"]

#: width of the window at a bound, as a fraction of the prior width
BOUND_WINDOW = 0.01
#: posterior mass in the window above which a bound is flagged (a reporting choice)
BOUND_MASS_MAX = 0.05


def _flat_coordinate(prior):
    """The function mapping θ to the coordinate in which the prior's width is measured."""
    from ..inference.priors import LogUniform
    if isinstance(prior, LogUniform):
        return lambda v: np.log(np.maximum(v, 1e-300))
    return lambda v: v


def bound_flags(names, samples, priors, nested=None) -> list:
    """Bounds of the prior on which the posterior piles up (module notes).

    Parameters
    ----------
    names : sequence of str
        Parameter names, the columns of ``samples``.
    samples : ndarray, shape (n, len(names))
        Posterior samples, parameter units.
    priors : dict of str to Prior
        The declared prior of every name (others are skipped).
    nested : dict, optional
        ``{"parameter": name, "value": v}``: the family's nested one-dimensional limit.

    Returns
    -------
    list of dict
        One entry per flagged bound: ``parameter``, ``bound`` ("lower" or "upper"),
        ``bound_value`` (parameter units), ``mass`` (fraction of samples within the window
        or beyond), ``mass_outside`` (fraction beyond the bound), ``nested_limit`` (bool)
        and ``advice`` (one sentence).

    References
    ----------
    .. [1] Gelman et al., *Bayesian Data Analysis* (2013), §5.7 (from memory).
    """
    x = np.atleast_2d(np.asarray(samples, dtype=float))
    out = []
    for j, name in enumerate(names):
        pr = priors.get(name)
        if pr is None or x.shape[0] == 0:
            continue
        lo, hi = pr.support
        if not (math.isfinite(lo) and math.isfinite(hi)) or not hi > lo:
            # a one-sided bound: measure the window in units of the posterior's spread
            # would be arbitrary; only priors with two finite bounds have a width
            continue
        f = _flat_coordinate(pr)
        flo, fhi = float(f(np.array(lo))), float(f(np.array(hi)))
        v = f(x[:, j])
        spread = float(np.std(v[np.isfinite(v)])) if np.isfinite(v).any() else 0.0
        win = min(BOUND_WINDOW * (fhi - flo), 0.5 * spread) if spread > 0 else \
            BOUND_WINDOW * (fhi - flo)
        for side, edge, near, beyond in (
                ("lower", lo, v <= flo + win, x[:, j] < lo),
                ("upper", hi, v >= fhi - win, x[:, j] > hi)):
            mass = float(np.mean(near | beyond))
            if mass <= BOUND_MASS_MAX:
                continue
            outside = float(np.mean(beyond))
            is_limit = bool(nested and nested.get("parameter") == name
                            and math.isclose(float(nested.get("value")), edge,
                                             abs_tol=1e-12 * max(1.0, abs(edge))))
            if is_limit:
                advice = ("this bound is the family's nested one-dimensional limit: the "
                          "pile-up favours that limit; read the Savage–Dickey ratio")
            elif outside > 0:
                advice = (f"{outside:.0%} of the posterior lies beyond the declared bound, "
                          "which the marginalisation should not allow: sample the parameter "
                          "(sampler: {marginalise: false}) and report the problem")
            else:
                advice = ("the posterior is cut by the prior: widen the prior if the bound "
                          "is not physical, or state why it is")
            out.append({"parameter": name, "bound": side, "bound_value": float(edge),
                        "mass": mass, "mass_outside": outside, "nested_limit": is_limit,
                        "advice": advice})
    return out

"""True parameters of simulated replicates: drawn from the priors a fit declares, or from the
saved posterior of a finished run.

Every parameter a family's predictions need is set: the sampled parameters (physical ones,
sample extras and any sampled nuisance) are drawn from the priors the case declares; the
linear nuisances that the fit integrates out analytically are set to their best fit (the
constrained conditional mode) to the case's own data at the drawn parameters.  Their
default priors do not look at the data, so on data in arbitrary units they carry no scale:
a draw from them would give intensities of order 10⁹ and counting errors far below any
real measurement.

References
----------
.. [1] S. R. Cook, A. Gelman and D. B. Rubin, J. Comput. Graph. Stat. 15, 675 (2006):
   validation of Bayesian software by draws from the prior.
.. [2] L. Devroye, *Non-Uniform Random Variate Generation* (Springer, 1986), ch. 2
   (inverse-CDF draws).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError

__all__ = ["prior_truth", "posterior_truth", "load_posteriors"]


def prior_truth(problem, rng) -> dict:
    """One draw of the sampled parameters from their declared priors, the marginalised
    linear nuisances at their best fit to the case's data given that draw (module notes).

    Parameters
    ----------
    problem : JointProblem
    rng : numpy.random.Generator

    Returns
    -------
    dict of str to float
        :attr:`~evidence1d.problem.JointProblem.full_names` to values, in their units.
    """
    theta = np.array([[float(np.asarray(problem.declared_priors[n].sample(rng)).ravel()[0])
                       for n in problem.names]])
    full = problem.params(theta)
    return {n: float(np.asarray(full[n]).ravel()[0]) for n in problem.full_names}


def load_posteriors(folder, case) -> dict:
    """The posterior samples of every family of ``case`` in a finished run folder.

    Parameters
    ----------
    folder : str or pathlib.Path
        The output folder of ``evidence1d run`` on this case (its ``saved/results.npz``).
    case : Case

    Returns
    -------
    dict of str to (list of str, ndarray)
        Per family: parameter names (sampled, then marginalised nuisances) and the
        posterior samples, one row each.

    Raises
    ------
    InputError
        No saved results, or a family of the case missing from them or with other
        parameters (the run was made on another case).
    """
    from ..results import load_results
    res = load_results(folder)
    out = {}
    for name in case.models:
        if name not in res.models:
            raise InputError(f"the run in {folder} has no results of model '{name}'; give "
                             "the output folder of a run of this case (--from)")
        mr = res.models[name]
        problem = case.problem(name)
        if list(mr.full_names) != list(problem.full_names):
            raise InputError(f"the run in {folder} fitted model '{name}' with other "
                             "parameters than this case; give a run of this case (--from)")
        out[name] = (list(mr.full_names), np.asarray(mr.full_samples))
    return out


def posterior_truth(names, samples, rng) -> dict:
    """One posterior sample, drawn uniformly from a run's samples.

    Parameters
    ----------
    names : list of str
    samples : ndarray, shape (n_samples, len(names))
    rng : numpy.random.Generator

    Returns
    -------
    dict of str to float
    """
    row = samples[int(rng.integers(len(samples)))]
    return {n: float(v) for n, v in zip(names, row)}

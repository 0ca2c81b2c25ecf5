"""The parameter table of a fitted family: quantiles against the priors, and which datasets
constrain which parameter.

Computed during the run (it needs the family's priors and predictions) and kept in the
results record, so that the report renders it without model code.

Which datasets constrain which parameter
----------------------------------------
At the posterior median θ̂ the derivative of every dataset's prediction μ_i with respect to
each parameter θ_j is taken by central finite differences (step 1 % of the posterior
standard deviation, one-sided at a prior bound).  For Gaussian errors σ_i the diagonal
Fisher information a dataset d carries about θ_j is F_dj = Σ_{i∈d} (∂μ_i/∂θ_j)² / σ_i²
(Tegmark, Taylor & Heavens 1997).  The report gives its share F_dj / Σ_d F_dj and the shift
√F_dj · sd_j: the root-sum-square change of dataset d, in units of its errors, when θ_j moves
by one posterior standard deviation.  Error inflation and Student-t noise are ignored in
this measure.

References
----------
.. [1] M. Tegmark, A. N. Taylor and A. F. Heavens, "Karhunen–Loève eigenvalue problems in
   cosmology: how should we tackle large data sets?", ApJ 480, 22 (1997), eq. 15 (Fisher
   matrix of Gaussian data; from memory).
.. [2] R. J. Hyndman and Y. Fan, Am. Stat. 50, 361 (1996): sample quantiles.
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["QUANTILES", "parameter_role", "quantile_summary", "prior_interval",
           "dataset_sensitivity", "draw_indices", "parameter_table"]

#: quantiles quoted for every parameter (median and the central 68 % interval)
QUANTILES = (0.16, 0.5, 0.84)


def parameter_role(name: str, card) -> str:
    """``"physical"`` (a model-card parameter), ``"nuisance"`` (``dataset:what``) or ``"extra"``.

    References
    ----------
    .. [1] The naming of :mod:`evidence1d.families.predict` (``<dataset>:<what>`` nuisances).
    """
    if name in card.parameters:
        return "physical"
    return "nuisance" if ":" in name else "extra"


def quantile_summary(samples, names, units) -> dict:
    """Median and 16/84 % quantiles of every parameter.

    Parameters
    ----------
    samples : ndarray, shape (n_samples, m)
        Posterior samples, parameter units.
    names : sequence of str
        The m parameter names.
    units : dict of str to str

    Returns
    -------
    dict
        name -> {"median", "q16", "q84", "unit"} (parameter units).

    References
    ----------
    .. [1] R. J. Hyndman and Y. Fan, Am. Stat. 50, 361 (1996): sample quantiles (numpy's
       default, their definition 7).
    """
    q = np.quantile(np.asarray(samples, dtype=float), QUANTILES, axis=0)
    return {n: {"median": float(q[1, j]), "q16": float(q[0, j]), "q84": float(q[2, j]),
                "unit": units.get(n, "") or "1"} for j, n in enumerate(names)}


def prior_interval(prior) -> tuple:
    """16 % and 84 % quantiles of a one-parameter prior (inverse CDF), parameter units.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions* (1994).
    """
    lo, hi = prior.transform(np.array([0.16, 0.84]))
    return float(lo), float(hi)


def _steps(theta, sd, support):
    lo = np.array([s[0] for s in support])
    hi = np.array([s[1] for s in support])
    h = 0.01 * np.where(sd > 0, sd, 1e-6 * (np.abs(theta) + 1.0))
    up = np.minimum(theta + h, hi)
    dn = np.maximum(theta - h, lo)
    return up, dn


def dataset_sensitivity(problem, theta, sd) -> dict:
    """Fisher-information share and shift of every dataset for every parameter.

    Parameters
    ----------
    problem : JointProblem
    theta : ndarray, shape (m,)
        The point (posterior median), parameter units.
    sd : ndarray, shape (m,)
        Posterior standard deviations, parameter units.

    Returns
    -------
    dict
        parameter -> dataset -> {"information_share", "shift"}; the share is None when no
        dataset's prediction depends on the parameter (e.g. an error inflation factor).

    References
    ----------
    .. [1] Tegmark, Taylor & Heavens, ApJ 480, 22 (1997): F = Σ (∂μ/∂θ)² / σ² (from memory).
    """
    theta = np.asarray(theta, dtype=float)
    sd = np.asarray(sd, dtype=float)
    m = theta.size
    support = [problem.prior.prior_of(n).support
               for n in problem.names]
    up, dn = _steps(theta, sd, support)
    batch = np.repeat(theta[None, :], 2 * m, axis=0)
    batch[np.arange(m), np.arange(m)] = up
    batch[m + np.arange(m), np.arange(m)] = dn
    pred = problem.predict(batch)
    errs = {pr.dataset.name: pr.dataset.err for pr in problem.predictors}
    fisher = {}
    for ds, f in pred.items():
        deriv = (f[:m] - f[m:]) / np.where(up > dn, up - dn, np.inf)[:, None]
        fisher[ds] = np.nansum((deriv / errs[ds][None, :]) ** 2, axis=1)
    out = {}
    for j, name in enumerate(problem.names):
        total = sum(float(fisher[d][j]) for d in fisher)
        out[name] = {d: {"information_share": float(fisher[d][j]) / total if total > 0
                         else None,
                         "shift": float(math.sqrt(fisher[d][j]) * sd[j])} for d in fisher}
    return out





def _rows(samples, names, units, priors, card, note=""):
    rows = quantile_summary(samples, names, units)
    for n in names:
        pr = priors[n]
        lo, hi = prior_interval(pr)
        p = rows[n]
        width = hi - lo
        p.update(role=parameter_role(n, card), prior=pr.describe() + note, prior_q16=lo,
                 prior_q84=hi,
                 width_ratio=(p["q84"] - p["q16"]) / width if width > 0 else math.nan)
    return rows


def parameter_table(problem, samples, nuisance_samples=None) -> dict:
    """Quantiles, priors and dataset constraints of one fitted family.

    Parameters
    ----------
    problem : JointProblem
    samples : ndarray, shape (n_samples, m)
        Posterior samples of ``problem.names``, parameter units.
    nuisance_samples : ndarray, shape (n_rows, k), optional
        Draws of the analytically marginalised nuisances ``problem.marginalised`` (for all
        the samples or an evenly spaced subset of them).

    Returns
    -------
    dict
        ``parameters`` (name -> median, q16, q84, unit, role, prior, prior_q16, prior_q84,
        width_ratio; marginalised nuisances flagged), ``fixed_parameters`` (name -> value,
        unit) and ``constraints`` (:func:`dataset_sensitivity` at the medians).

    References
    ----------
    .. [1] Tegmark, Taylor & Heavens, ApJ 480, 22 (1997) (from memory).
    """
    samples = np.asarray(samples, dtype=float)
    names, units = list(problem.names), dict(problem.units)
    priors = {n: problem.prior.prior_of(n) for n in names}
    params = _rows(samples, names, units, priors, problem.card)
    nuis = list(problem.marginalised)
    if nuis and nuisance_samples is not None:
        params.update(_rows(np.asarray(nuisance_samples, float), nuis, units,
                            {n: problem.declared_priors[n] for n in nuis}, problem.card,
                            " (integrated out analytically under this prior, bounds "
                            "included)"))
        for n in nuis:
            params[n]["marginalised"] = True
    fixed = {n: {"value": float(pr.value), "unit": units.get(n, "") or "1"}
             for n, pr in zip(problem.prior.names, problem.prior.priors)
             if n not in names and hasattr(pr, "value")}
    theta = np.array([params[n]["median"] for n in names])
    sd = np.std(samples, axis=0, ddof=1) if samples.shape[0] > 1 else np.zeros(theta.size)
    return {"parameters": params, "fixed_parameters": fixed,
            "constraints": dataset_sensitivity(problem, theta, sd)}


def draw_indices(n_samples: int, n_max: int) -> np.ndarray:
    """Evenly spaced indices of at most ``n_max`` samples (deterministic, no random numbers).

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996): predictive draws.
    """
    return np.unique(np.linspace(0, n_samples - 1, min(n_max, n_samples)).astype(int))

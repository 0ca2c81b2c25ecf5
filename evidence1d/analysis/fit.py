"""Goodness of fit of one family to each dataset: χ² at the posterior median and a
posterior-predictive p-value.

χ² at the posterior median
--------------------------
χ² = Σ_i ((y_i − μ_i(θ̃)) / (s σ_i))² over the N points of a dataset, with θ̃ the posterior
median of every parameter (the analytically integrated nuisances at the median of their
conditional-posterior draws) and s the dataset's error-inflation factor (1 if it has none).
χ²/N is quoted per point, not per degree of freedom: in a nonlinear joint fit with shared
parameters the number of degrees of freedom a dataset loses is not defined.  For a correct
model with correct errors, χ² over N points has mean N and standard deviation √(2N)
(the χ² distribution; Cramér 1946, from memory), so χ²/N has standard deviation √(2/N).

Posterior-predictive p-value
----------------------------
With the discrepancy D(y, θ) = χ²(y; θ), p = Pr[D(y_rep, θ) ≥ D(y, θ) | y], θ drawn from the
posterior and y_rep from the likelihood at θ (Gelman, Meng & Stern 1996, eq. 7; Meng 1994).
For Gaussian noise D(y_rep, θ) follows χ²_N exactly at every θ, so the inner probability is
the χ² tail function Q(N/2, D(y, θ)/2) and

    p = (1/S) Σ_s Q(N/2, D(y, θ_s)/2)

over S posterior draws, with no replicated-data noise.  For Student-t noise the replicated
discrepancies are simulated (``REPLICATES`` per draw, a fixed random stream).

Which fits are called bad
-------------------------
A dataset fits badly when χ²/N exceeds 1 + 5 √(2/N) (five standard deviations of χ²/N
above its mean for a correct model: common practice for a "5σ" misfit) or when the
posterior-predictive p-value is below 0.001 (common practice).  Both are stated in every
output; either makes the fit "bad".  The χ²/N rule is what a reader checks by eye; the
p-value also accounts for the posterior spread and is the stricter of the two for large N.
The χ²/N rule is applied to the smaller of χ² at the median and the smallest χ² among the
posterior draws: the component-wise median of a curved or multimodal posterior can be a
point no posterior draw is near, and a misfit there is the median's fault, not the
family's (``median_unrepresentative`` says when χ² at the median is itself above the
limit while some draw is below it).

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, "Posterior predictive assessment of model
   fitness via realized discrepancies", Statistica Sinica 6, 733 (1996).
.. [2] X.-L. Meng, "Posterior predictive p-values", Ann. Statist. 22, 1142 (1994).
.. [3] H. Cramér, *Mathematical Methods of Statistics* (Princeton, 1946), §18.1 (moments of
   χ²; from memory).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special

__all__ = ["FIT_THRESHOLDS", "chi2_limit", "goodness_of_fit", "N_DRAWS", "REPLICATES"]

#: thresholds of a bad fit (module notes): χ²/N above 1 + sigmas √(2/N), or p below p_min
FIT_THRESHOLDS = {"chi2_sigmas": 5.0, "p_min": 1e-3}
#: posterior draws used for the p-value (evenly spaced over the samples)
N_DRAWS = 400
#: replicated datasets per draw for Student-t noise
REPLICATES = 50


def chi2_limit(n_points: int, sigmas: float = FIT_THRESHOLDS["chi2_sigmas"]) -> float:
    """χ²/N above which a fit of N points is called bad: 1 + sigmas √(2/N).

    Parameters
    ----------
    n_points : int
        N ≥ 1.
    sigmas : float
        Standard deviations of χ²_N / N above its mean.

    Returns
    -------
    float

    References
    ----------
    .. [1] Cramér (1946), §18.1: mean N and variance 2N of χ²_N (from memory).
    """
    return 1.0 + sigmas * math.sqrt(2.0 / max(int(n_points), 1))


def _even(n: int, k: int) -> np.ndarray:
    return np.unique(np.linspace(0, n - 1, min(k, n)).astype(int))


def _chi2(model, y, sigma) -> np.ndarray:
    return np.sum(((y[None, :] - model) / sigma) ** 2, axis=1)


def goodness_of_fit(problem, full_samples, *, rng, n_draws: int = N_DRAWS) -> dict:
    """χ², χ²/N and the posterior-predictive p-value of every dataset (module notes).

    Parameters
    ----------
    problem : JointProblem
        The family's problem; only ``predict``, ``params`` and ``predictors[].dataset`` are
        used.
    full_samples : ndarray, shape (n, len(problem.full_names))
        Posterior samples of the sampled parameters followed by the drawn marginalised
        nuisances (parameter units).
    n_draws : int
        Posterior draws for the p-value (evenly spaced over the samples).
    rng : numpy.random.Generator
        For the replicated data of the posterior-predictive check (used by Student-t
        noise only).

    Returns
    -------
    dict
        dataset -> {"chi2", "n_points", "chi2_per_point", "chi2_per_point_limit",
        "chi2_min_draws", "p_value", "p_value_method", "n_draws", "bad_fit",
        "median_unrepresentative"}.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    x = np.atleast_2d(np.asarray(full_samples, dtype=float))
    median = np.median(x, axis=0)[None, :]
    draws = x[_even(x.shape[0], int(n_draws))]
    at_median = problem.predict(median)
    at_draws = problem.predict(draws)
    p_med = problem.params(median)
    p_draws = problem.params(draws)
    out = {}
    for pr in problem.predictors:
        ds = pr.dataset
        y, err, n = np.asarray(ds.y, float), np.asarray(ds.err, float), int(ds.n)
        key = f"{ds.name}:inflate"
        s_med = np.asarray(p_med[key], float) if key in p_med else 1.0
        s_draw = np.asarray(p_draws[key], float) if key in p_draws else 1.0
        chi2_med = float(_chi2(at_median[ds.name], y, err[None, :] * s_med)[0])
        with np.errstate(all="ignore"):
            chi2_d = _chi2(at_draws[ds.name], y, err[None, :] * s_draw)
        chi2_d = np.where(np.isfinite(chi2_d), chi2_d, np.inf)
        if ds.options.get("noise") == "student_t":
            nu = float(ds.options.get("nu", 4.0))
            t = rng.standard_t(nu, size=(REPLICATES, draws.shape[0], n))
            rep = np.sum(t ** 2, axis=2)                      # (REPLICATES, S)
            p = float(np.mean(rep >= chi2_d[None, :]))
            method = (f"χ² discrepancy (Gelman, Meng & Stern 1996), Student-t (ν = {nu:g}) "
                      f"replicated data, {REPLICATES} per draw")
        else:
            p = float(np.mean(special.gammaincc(0.5 * n, 0.5 * chi2_d)))
            method = ("χ² discrepancy (Gelman, Meng & Stern 1996); replicated χ² follows "
                      "χ²_N exactly for Gaussian noise, so p is the mean χ²_N tail "
                      "probability over the posterior draws")
        limit = chi2_limit(n)
        per = chi2_med / n
        best = min(chi2_med, float(np.min(chi2_d))) / n
        out[ds.name] = {
            "chi2": chi2_med, "n_points": n, "chi2_per_point": per,
            "chi2_per_point_limit": limit, "chi2_min_draws": float(np.min(chi2_d)),
            "p_value": p, "p_value_method": method, "n_draws": int(draws.shape[0]),
            "bad_fit": bool(not best <= limit or p < FIT_THRESHOLDS["p_min"]),
            "median_unrepresentative": bool(not per <= limit and best <= limit),
        }
    return out

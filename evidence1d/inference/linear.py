"""Analytic marginalisation of parameters that enter the model linearly.

For data y with independent Gaussian errors σ, a model y = f(θ) + M(θ) a that is linear in
the nuisance vector a, and a Gaussian prior a ~ N(μ, diag τ²), the integral over a is exact:

    p(y | θ) = N(y | f + M μ, Σ + M T Mᵀ),   Σ = diag σ², T = diag τ².

With whitened quantities r̃ = (y − f − M μ)/σ, M̃ = M/σ, A = T⁻¹ + M̃ᵀM̃ and b = M̃ᵀ r̃
(Woodbury identity and the matrix determinant lemma),

    ln p(y | θ) = −½ (r̃ᵀr̃ − bᵀA⁻¹b) − Σ ln σ_i − Σ ln τ_j − ½ ln|A| − (n/2) ln 2π,

and the conditional posterior of the nuisances is a | y, θ ~ N(μ + A⁻¹ b, A⁻¹).

References
----------
C. E. Rasmussen & C. K. I. Williams, Gaussian Processes for Machine Learning (MIT Press,
2006), appendix A.3 (Woodbury, determinant lemma); D. S. Sivia & J. Skilling, Data Analysis:
A Bayesian Tutorial, 2nd ed. (OUP, 2006), §3.5 (marginalising linear amplitudes).
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["marginal_loglike", "conditional_draw", "gaussian_moments"]


def _system(resid_w, design_w, tau):
    """A (k,p,p) and b (k,p) from whitened residuals (k,n) and design (k,n,p)."""
    dt = np.swapaxes(design_w, 1, 2)
    A = dt @ design_w                                   # batched matmul: faster than einsum
    idx = np.arange(tau.size)
    A[:, idx, idx] += 1.0 / tau ** 2
    b = (dt @ resid_w[..., None])[..., 0]
    return A, b


def marginal_loglike(resid_w, design_w, sigma, tau):
    """Log-likelihood with the linear nuisances integrated out under their Gaussian prior.

    Parameters
    ----------
    resid_w : ndarray, shape (k, n)
        Whitened residuals (y − f(θ) − M(θ) μ) / σ for k parameter sets.
    design_w : ndarray, shape (k, n, p)
        Whitened design M(θ) / σ (one column per linear nuisance).
    sigma : ndarray, shape (n,)
        Data errors (one standard deviation).
    tau : ndarray, shape (p,)
        Prior standard deviations of the nuisances.

    Returns
    -------
    ndarray, shape (k,)
        ln p(y | θ) in nats, normalised (see the module notes).
    """
    n = resid_w.shape[1]
    A, b = _system(resid_w, design_w, tau)
    L = np.linalg.cholesky(A)
    z = np.linalg.solve(L, b[..., None])[..., 0]            # L z = b  ->  bᵀA⁻¹b = |z|²
    logdet_A = 2.0 * np.sum(np.log(np.diagonal(L, axis1=1, axis2=2)), axis=1)
    quad = np.sum(resid_w ** 2, axis=1) - np.sum(z ** 2, axis=1)
    const = -np.sum(np.log(sigma)) - np.sum(np.log(tau)) - 0.5 * n * math.log(2 * math.pi)
    return -0.5 * quad - 0.5 * logdet_A + const


def conditional_draw(resid_w, design_w, tau, mu, rng):
    """Draw the linear nuisances from their conditional posterior N(μ + A⁻¹b, A⁻¹).

    Parameters
    ----------
    resid_w, design_w, tau
        As in :func:`marginal_loglike`.
    mu : ndarray, shape (p,)
        Prior means.
    rng : numpy.random.Generator

    Returns
    -------
    ndarray, shape (k, p)
    """
    A, b = _system(resid_w, design_w, tau)
    L = np.linalg.cholesky(A)
    mean = mu + np.linalg.solve(A, b[..., None])[..., 0]
    z = rng.standard_normal(b.shape)
    # A⁻¹ = L⁻ᵀ L⁻¹, so x = L⁻ᵀ z has covariance A⁻¹
    x = np.linalg.solve(np.swapaxes(L, 1, 2), z[..., None])[..., 0]
    return mean + x


def gaussian_moments(prior, n: int = 4001):
    """Mean and standard deviation of a one-dimensional prior (for its Gaussian stand-in).

    Computed from the inverse CDF on a midpoint grid in the unit interval, which works for
    every prior kind of :mod:`evidence1d.inference.priors`.

    Parameters
    ----------
    prior : Prior
    n : int
        Grid points.

    Returns
    -------
    (float, float)
        Mean and standard deviation in the parameter's unit.
    """
    u = (np.arange(n) + 0.5) / n
    x = np.asarray(prior.transform(u), dtype=float)
    return float(np.mean(x)), float(np.std(x))

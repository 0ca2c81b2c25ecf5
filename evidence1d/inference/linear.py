"""Analytic marginalisation of parameters that enter the model linearly, under their declared
(possibly bounded) priors.

For data y with independent Gaussian errors σ, a model y = f(θ) + M(θ) a that is linear in
the nuisance vector a, and a Gaussian prior a ~ N(μ, diag τ²), the integral over a is exact:

    p(y | θ) = N(y | f + M μ, Σ + M T Mᵀ),   Σ = diag σ², T = diag τ².

With whitened quantities r̃ = (y − f − M μ)/σ, M̃ = M/σ, A = T⁻¹ + M̃ᵀM̃ and b = M̃ᵀ r̃
(Woodbury identity and the matrix determinant lemma),

    ln p(y | θ) = −½ (r̃ᵀr̃ − bᵀA⁻¹b) − Σ ln σ_i − Σ ln τ_j − ½ ln|A| − (n/2) ln 2π,

and the conditional posterior of the nuisances is a | y, θ ~ N(m, A⁻¹), m = μ + A⁻¹ b.

Bounded priors.  A prior that is this Gaussian restricted to a box B = [lo, hi] (a truncated
normal; a half-normal) has the density N(a | μ, T) 1_B(a) / P(a ∈ B), so

    p_B(y | θ) = p(y | θ) · P(a ∈ B | y, θ) / P(a ∈ B),

the first probability under the conditional posterior N(m, A⁻¹) (a multivariate normal box
probability, :func:`~evidence1d.inference.truncated.log_box_probability`), the second under
the prior (a product of one-dimensional normal probabilities, the prior being a product).
A uniform prior on [lo, hi] is written as the working Gaussian N(μ_w, τ_w²) with
τ_w = K (hi − lo), K = :data:`UNIFORM_WIDTH_FACTOR` = 10⁴, centred inside the box, times
the constant K√(2π) that turns its density into 1/(hi − lo): over the box the working
Gaussian varies by a factor within exp(±½K⁻²), so ln p_B is exact to 5·10⁻⁹ nats (and A
stays invertible where the data do not constrain a coefficient).  Every other prior kind
(log-uniform, fixed) is not integrated out here: those nuisances are sampled
(:class:`~evidence1d.problem.LinearBlock`).  Conditional draws come from the truncated
conditional N(m, A⁻¹) restricted to B, so they never leave the prior support.

References
----------
C. E. Rasmussen & C. K. I. Williams, Gaussian Processes for Machine Learning (MIT Press,
2006), appendix A.3 (Woodbury, determinant lemma); D. S. Sivia & J. Skilling, Data Analysis:
A Bayesian Tutorial, 2nd ed. (OUP, 2006), §3.5 (marginalising linear amplitudes);
A. Genz & F. Bretz, Computation of Multivariate Normal and t Probabilities (Springer, 2009)
(the box probabilities); N. L. Johnson, S. Kotz & N. Balakrishnan, Continuous Univariate
Distributions, Vol. 1 (Wiley, 1994), §10.1 (the truncated normal and its normalisation).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .triangular import cholesky_inverse, solve_lower, solve_upper
from .truncated import box_mode, log_box_probability, log_ndtr_diff, truncated_draw

__all__ = ["marginal_loglike", "conditional_draw", "conditional_mode", "LinearPrior",
           "linear_prior", "UNIFORM_WIDTH_FACTOR"]

#: working-Gaussian width of a uniform prior, in units of its width
UNIFORM_WIDTH_FACTOR = 1.0e4


@dataclass(frozen=True)
class LinearPrior:
    """The priors of a block of linear nuisances in the form the marginalisation uses.

    Attributes
    ----------
    mu, tau : ndarray, shape (p,)
        Mean and standard deviation of the (working) Gaussian of each nuisance.
    lo, hi : ndarray, shape (p,)
        The box the prior is restricted to (±inf: open).
    log_const : float
        Σ_j ln c_j: −ln P(a_j ∈ [lo_j, hi_j]) under the Gaussian of a truncated normal,
        ln(K√(2π)) for a uniform prior (its density over the working Gaussian's), 0 for a
        normal prior.
    """

    mu: np.ndarray
    tau: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    log_const: float

    @property
    def bounded(self) -> bool:
        """Any finite bound."""
        return bool(np.any(np.isfinite(self.lo)) or np.any(np.isfinite(self.hi)))


def linear_prior(priors) -> LinearPrior | None:
    """The :class:`LinearPrior` of a list of declared priors, or None if any of them is of a
    kind the marginalisation cannot integrate exactly (log-uniform, fixed).

    Parameters
    ----------
    priors : list of Prior
        Normal, TruncatedNormal or Uniform priors
        (:mod:`evidence1d.inference.priors`).

    Returns
    -------
    LinearPrior or None
    """
    rows = []
    for pr in priors:
        kind = getattr(pr, "kind", "")
        if kind == "normal":
            rows.append((pr.mean, pr.sd, -np.inf, np.inf, 0.0))
        elif kind == "truncated_normal":
            a, b = (pr.lower - pr.mean) / pr.sd, (pr.upper - pr.mean) / pr.sd
            rows.append((pr.mean, pr.sd, pr.lower, pr.upper, -float(log_ndtr_diff(a, b))))
        elif kind == "uniform" and pr.upper > pr.lower:
            centre = min(max(0.0, pr.lower), pr.upper)     # 0 when inside: no cancellation
            rows.append((centre, UNIFORM_WIDTH_FACTOR * (pr.upper - pr.lower), pr.lower,
                         pr.upper, math.log(UNIFORM_WIDTH_FACTOR * math.sqrt(2 * math.pi))))
        else:
            return None
    mu, tau, lo, hi, c = (np.array(v, dtype=float) for v in zip(*rows))
    return LinearPrior(mu, tau, lo, hi, float(np.sum(c)))


def _system(resid_w, design_w, tau):
    """A (k,p,p) and b (k,p) from whitened residuals (k,n) and design (k,n,p)."""
    dt = np.swapaxes(design_w, 1, 2)
    A = dt @ design_w                                   # batched matmul: faster than einsum
    idx = np.arange(tau.size)
    A[:, idx, idx] += 1.0 / tau ** 2
    b = (dt @ resid_w[..., None])[..., 0]
    return A, b


def _cholesky(A):
    """Batched lower Cholesky factors; rows whose matrix is not numerically positive
    definite get NaN (and the caller −inf)."""
    try:
        return np.linalg.cholesky(A)
    except np.linalg.LinAlgError:
        L = np.full_like(A, np.nan)
        for i in range(A.shape[0]):
            try:
                L[i] = np.linalg.cholesky(A[i])
            except np.linalg.LinAlgError:
                pass
        return L


def _posterior(L, b):
    """Conditional mean shift A⁻¹b and covariance A⁻¹ from the Cholesky factor of A."""
    Linv = cholesky_inverse(L)
    cov = np.swapaxes(Linv, 1, 2) @ Linv
    return (cov @ b[..., None])[..., 0], cov


def marginal_loglike(resid_w, design_w, sigma, tau, prior: LinearPrior | None = None):
    """Log-likelihood with the linear nuisances integrated out under their prior.

    Parameters
    ----------
    resid_w : ndarray, shape (k, n)
        Whitened residuals (y − f(θ) − M(θ) μ) / σ for k parameter sets.
    design_w : ndarray, shape (k, n, p)
        Whitened design M(θ) / σ (one column per linear nuisance).
    sigma : ndarray, shape (n,)
        Data errors (one standard deviation).
    tau : ndarray, shape (p,)
        Prior standard deviations of the (working) Gaussians.
    prior : LinearPrior, optional
        Bounds and constants of bounded or uniform priors (module notes); None: the
        Gaussian N(μ, τ²) itself.

    Returns
    -------
    ndarray, shape (k,)
        ln p(y | θ) in nats, normalised (see the module notes); −inf where A is not
        numerically positive definite.
    """
    n = resid_w.shape[1]
    A, b = _system(resid_w, design_w, tau)
    L = _cholesky(A)
    bad = ~np.all(np.isfinite(L), axis=(1, 2))
    if bad.any():
        L[bad] = np.eye(tau.size)
    z = solve_lower(L, b)                   # L z = b  ->  bᵀA⁻¹b = |z|² (no pivoting)
    logdet_A = 2.0 * np.sum(np.log(np.diagonal(L, axis1=1, axis2=2)), axis=1)
    quad = np.sum(resid_w ** 2, axis=1) - np.sum(z ** 2, axis=1)
    const = -np.sum(np.log(sigma)) - np.sum(np.log(tau)) - 0.5 * n * math.log(2 * math.pi)
    out = -0.5 * quad - 0.5 * logdet_A + const
    if prior is not None:
        out = out + prior.log_const
        if prior.bounded:
            shift, cov = _posterior(L, b)
            out = out + log_box_probability(prior.mu + shift, cov, prior.lo, prior.hi)
    return np.where(bad, -np.inf, out)


def conditional_draw(resid_w, design_w, tau, mu, rng, prior: LinearPrior | None = None):
    """Draw the linear nuisances from their conditional posterior N(μ + A⁻¹b, A⁻¹),
    restricted to the prior's box when it has one (so draws stay in the prior support).

    Parameters
    ----------
    resid_w, design_w, tau
        As in :func:`marginal_loglike`.
    mu : ndarray, shape (p,)
        Prior (working) means.
    rng : numpy.random.Generator
    prior : LinearPrior, optional
        Its box restricts the draws
        (:func:`~evidence1d.inference.truncated.truncated_draw`).

    Returns
    -------
    ndarray, shape (k, p)
    """
    A, b = _system(resid_w, design_w, tau)
    L = np.linalg.cholesky(A)
    LT = np.swapaxes(L, 1, 2)
    mean = mu + solve_upper(LT, solve_lower(L, b))
    if prior is not None and prior.bounded:
        return truncated_draw(mean, A, L, prior.lo, prior.hi, rng)
    z = rng.standard_normal(b.shape)
    # A⁻¹ = L⁻ᵀ L⁻¹, so x = L⁻ᵀ z has covariance A⁻¹
    x = solve_upper(LT, z)
    return mean + x


def conditional_mode(resid_w, design_w, tau, mu, prior: LinearPrior | None = None):
    """The conditional-posterior mode of the nuisances within the prior's box (the
    conditional mean μ + A⁻¹b when it lies inside).

    Parameters
    ----------
    resid_w, design_w, tau, mu, prior
        As in :func:`conditional_draw`.

    Returns
    -------
    ndarray, shape (k, p)
        (:func:`~evidence1d.inference.truncated.box_mode`).
    """
    A, b = _system(resid_w, design_w, tau)
    L = np.linalg.cholesky(A)
    mean = mu + solve_upper(np.swapaxes(L, 1, 2), solve_lower(L, b))
    if prior is None or not prior.bounded:
        return mean
    return box_mode(mean, A, prior.lo, prior.hi)

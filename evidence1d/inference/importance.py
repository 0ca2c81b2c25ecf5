"""A final importance-sampling estimate of Z from a proposal fitted to the tempered population.

Why: the tempered sequence's estimate (:mod:`evidence1d.inference.tempering`) is unbiased for
Z only if the moves equilibrate the population at every temperature.  When they do not —
typically a parameter whose posterior is much narrower than its prior and piled against a
bound, such as an interchain exchange J_⊥ ≥ 0 on chain data — every island lags the same way
and ln Z comes out low by several nats while the islands agree with one another (measured on
the coupled-chains family on chain data: 4.2 nats low, islands within 0.1 nat).

Method: once the population has reached β = 1, draw M points from a defensive mixture
(Hesterberg 1995)

    q(z) = (1 − δ) [a t_ν(z; μ, s² Σ) + (1 − a) (1/N) Σ_i N(z; z_i, h² Σ)] + δ π(z),

in the working coordinates of the sequence (log θ for log-uniform parameters), with μ and Σ
the population's mean and covariance, ν = 5, s = 1.5 (heavier and wider than the posterior:
common practice); the kernel mixture over the N particles z_i (Silverman's bandwidth factor
h = (4/(m + 2))^{1/(m+4)} N^{−1/(m+4)}, Silverman 1986, eq. 4.14) follows shapes a single t
cannot, such as a posterior piled against a bound; a = 1/2; and δ = 0.1 of the prior itself,
so that the weights w = L π / q are bounded by L/δ wherever the posterior has mass.

Bounds: where the population lies within 3 proposal widths of a finite bound of the prior's
support (a posterior piled against it), the mixture's part beyond that bound is folded back
inside by reflection, x → 2b − x (one reflection per bound and coordinate), so its density
is Σ q(image) over the images of x; a draw still outside after one reflection gets w = 0.
The folded proposal is a proper density on the support (no draw is wasted beyond the bound,
and its density at the bound, where the posterior peaks, doubles): on the exponential
posterior at a bound of the tests the weights' effective sample size rose 1.45-fold (from
273 to 397 of 600 draws, mean of 4 populations) and the error fell from 0.045 to 0.029 nat.
Ẑ = (1/M) Σ w is unbiased whatever the moves did
(Robert & Casella 2004, §3.3); its relative error is estimated from the weights,
√(Var w / M)/Ẑ, and the effective sample size (Σw)²/Σw² (Kong 1992) says whether the proposal
covered the posterior.  Points outside the prior's support have w = 0 and are not evaluated.

References
----------
.. [1] T. Hesterberg, "Weighted average importance sampling and defensive mixture
   distributions", Technometrics 37, 185 (1995).
.. [2] C. P. Robert and G. Casella, *Monte Carlo Statistical Methods*, 2nd ed. (Springer,
   2004), §3.3.
.. [3] A. Kong, "A note on importance sampling using standardized weights", Technical Report
   348, Dept. of Statistics, University of Chicago (1992).
.. [4] B. W. Silverman, *Density Estimation for Statistics and Data Analysis* (Chapman & Hall,
   1986), §4.3.2.
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special, stats

__all__ = ["IMPORTANCE_DEFAULTS", "importance_evidence"]

#: ν, width factor s and defensive prior share δ of the proposal (module notes)
IMPORTANCE_DEFAULTS = {"nu": 5.0, "inflate": 1.5, "defensive": 0.1, "t_share": 0.5}


def _kernel_mixture(z_pop, chol, h):
    """Sampler and log density of (1/N) Σ_i N(z; z_i, h² L Lᵀ) (L = ``chol``)."""
    n, m = z_pop.shape
    white = np.linalg.solve(chol, z_pop.T).T / h
    log_norm = (-m * math.log(h) - np.log(np.abs(np.diag(chol))).sum()
                - 0.5 * m * math.log(2.0 * math.pi) - math.log(n))

    def draw(rng, k):
        i = rng.integers(0, n, k)
        return z_pop[i] + h * rng.standard_normal((k, m)) @ chol.T

    def logpdf(z):
        zw = np.linalg.solve(chol, np.atleast_2d(z).T).T / h
        out = np.empty(zw.shape[0])
        for a in range(0, zw.shape[0], 256):          # (256, N) blocks of distances
            d2 = ((zw[a:a + 256, None, :] - white[None, :, :]) ** 2).sum(-1)
            out[a:a + 256] = special.logsumexp(-0.5 * d2, axis=1)
        return out + log_norm

    return draw, logpdf


def _working_bounds(prior, space):
    """Lower and upper bounds of each free parameter in working coordinates, (m,) each."""
    bounds = np.array([[p.support[k] for p in prior.free_priors] for k in (0, 1)], float)
    with np.errstate(divide="ignore", invalid="ignore"):
        lo_w, hi_w = space.to_work(bounds)          # the working map of the bounds
    return np.where(np.isnan(lo_w), -np.inf, lo_w), np.where(np.isnan(hi_w), np.inf, hi_w)


def _reflections(z_pop, width, lo, hi):
    """The images of a point under the folds that apply: a list of (coordinate, bound) per
    image (the identity first, as an empty tuple), each fold at a finite bound within 3
    ``width`` of the population."""
    folds = []
    for j in range(z_pop.shape[1]):
        opts = [None]
        if np.isfinite(lo[j]) and z_pop[:, j].min() - lo[j] < 3.0 * width[j]:
            opts.append(lo[j])
        if np.isfinite(hi[j]) and hi[j] - z_pop[:, j].max() < 3.0 * width[j]:
            opts.append(hi[j])
        folds.append(opts)
    images = [()]
    for j, opts in enumerate(folds):
        images = [im + ((j, b),) if b is not None else im for im in images for b in opts]
    return images


def _image(z, image):
    out = z.copy()
    for j, b in image:
        out[:, j] = 2.0 * b - out[:, j]
    return out


def _fold(z, lo, hi, images):
    """One reflection of each coordinate that has a fold, into [lo, hi] where possible."""
    out = z.copy()
    for j in sorted({j for im in images for j, _ in im}):
        b_lo = any(j == k and b == lo[j] for im in images for k, b in im)
        b_hi = any(j == k and b == hi[j] for im in images for k, b in im)
        if b_lo:
            out[:, j] = np.where(out[:, j] < lo[j], 2.0 * lo[j] - out[:, j], out[:, j])
        if b_hi:
            out[:, j] = np.where(out[:, j] > hi[j], 2.0 * hi[j] - out[:, j], out[:, j])
    return out


def importance_evidence(call, prior, space, z_population, rng, n_draws, *, nu=None,
                        inflate=None, defensive=None, t_share=None, reflect=True):
    """ln Ẑ by importance sampling from a mixture fitted to a posterior population.

    Parameters
    ----------
    call : callable
        Vectorised log-likelihood ``f(theta (k, m)) -> (k,)`` in nats (counts evaluations).
    prior : JointPrior
        Prior of the m free parameters.
    space : object
        Working coordinates with ``to_work(theta)`` and ``from_work(z) -> (theta, ln|dθ/dz|)``
        (:class:`evidence1d.inference.tempering._WorkSpace`).
    z_population : ndarray, shape (N, m)
        The population at β = 1 in working coordinates.
    rng : numpy.random.Generator
    n_draws : int
        M, points drawn from the proposal.
    nu, inflate, defensive, t_share : float, optional
        Override :data:`IMPORTANCE_DEFAULTS`.
    reflect : bool, optional
        Fold the proposal at the bounds the population lies against (module notes);
        default True.

    Returns
    -------
    dict
        ``log_z`` (nats), ``log_z_err`` (nats, from the weights' variance), ``ess``
        (effective sample size of the weights), ``n_draws`` and ``n_evaluations``.

    References
    ----------
    Hesterberg (1995); Robert & Casella (2004), §3.3; Kong (1992).
    """
    o = dict(IMPORTANCE_DEFAULTS)
    o.update({k: v for k, v in (("nu", nu), ("inflate", inflate), ("defensive", defensive),
                                ("t_share", t_share)) if v is not None})
    z_pop = np.asarray(z_population, float)
    n, m = z_pop.shape
    mean = z_pop.mean(axis=0)
    cov = np.atleast_2d(np.cov(z_pop, rowvar=False))
    sd = np.sqrt(np.maximum(np.diag(cov), 0.0))
    sd = np.maximum(sd, 1e-12 * (np.abs(z_pop).max(axis=0) + 1.0))
    corr = 0.999 * cov / np.outer(sd, sd) + 0.001 * np.eye(m)    # positive definite
    shape = o["inflate"] ** 2 * np.outer(sd, sd) * corr
    h = (4.0 / (m + 2.0)) ** (1.0 / (m + 4.0)) * n ** (-1.0 / (m + 4.0))
    try:
        t = stats.multivariate_t(loc=mean, shape=shape, df=o["nu"])
        kde_draw, kde_logpdf = _kernel_mixture(z_pop, np.linalg.cholesky(np.outer(sd, sd) * corr),
                                               h)
    except (ValueError, np.linalg.LinAlgError):
        # a population collapsed in some direction (a few particles, all equal in one
        # coordinate): no proposal can be fitted, and the island keeps its tempered estimate
        return {"log_z": -math.inf, "log_z_err": math.inf, "ess": 0.0,
                "n_draws": int(n_draws), "n_evaluations": 0}
    n_draws = int(n_draws)
    k_prior = int(rng.binomial(n_draws, o["defensive"]))
    k_t = int(rng.binomial(n_draws - k_prior, o["t_share"]))
    z_t = np.atleast_2d(t.rvs(size=k_t, random_state=rng)).reshape(-1, m) if k_t else \
        np.empty((0, m))
    z_k = kde_draw(rng, n_draws - k_prior - k_t)
    z_p = space.to_work(prior.sample(rng, k_prior)) if k_prior else np.empty((0, m))
    images = [()]
    if reflect:
        lo_w, hi_w = _working_bounds(prior, space)
        images = _reflections(z_pop, o["inflate"] * sd, lo_w, hi_w)
        if len(images) > 1:
            z_t, z_k = _fold(z_t, lo_w, hi_w, images), _fold(z_k, lo_w, hi_w, images)
    z = np.vstack([z_t, z_k, z_p])
    theta, logjac = space.from_work(z)
    with np.errstate(invalid="ignore", divide="ignore"):
        lp = prior.log_prob(theta) + logjac                # prior density in working space
    ok = np.isfinite(lp)
    with np.errstate(divide="ignore"):
        log_a, log_b = np.log(o["t_share"]), np.log1p(-o["t_share"])
    log_post_part = special.logsumexp(
        [np.logaddexp(log_a + t.logpdf(zi).reshape(-1), log_b + kde_logpdf(zi))
         for zi in (_image(z, im) for im in images)], axis=0)
    log_q = np.logaddexp(math.log1p(-o["defensive"]) + log_post_part,
                         np.where(ok, math.log(o["defensive"]) + lp, -np.inf))
    ll = np.full(z.shape[0], -np.inf)
    before = getattr(call, "n_evaluations", 0)
    if ok.any():
        ll[ok] = call(theta[ok])
    logw = np.where(ok & np.isfinite(ll), ll + lp - log_q, -np.inf)
    top = np.max(logw)
    if not np.isfinite(top):
        return {"log_z": -math.inf, "log_z_err": math.inf, "ess": 0.0,
                "n_draws": int(z.shape[0]),
                "n_evaluations": getattr(call, "n_evaluations", 0) - before}
    w = np.exp(logw - top)
    mw = w.mean()
    rel = float(np.std(w, ddof=1) / math.sqrt(w.size) / mw)
    return {"log_z": float(top + math.log(mw)),
            "log_z_err": float(rel),
            "ess": float(w.sum() ** 2 / (w * w).sum()),
            "n_draws": int(z.shape[0]),
            "n_evaluations": int(getattr(call, "n_evaluations", 0) - before)}

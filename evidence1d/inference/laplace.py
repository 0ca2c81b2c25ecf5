"""Quick, approximate evidences: the Laplace approximation and the Bayesian information criterion.

Both are labelled *approximate* wherever they appear: they assume a single, nearly Gaussian
posterior mode and serve as a cross-check of :func:`evidence1d.inference.evidence.tempered_evidence`.

References
----------
.. [1] R. E. Kass and A. E. Raftery, "Bayes factors", J. Am. Stat. Assoc. 90, 773 (1995), §4.1
   (Laplace, eq. 4.1) and §4.1.3 (Schwarz criterion).
.. [2] G. Schwarz, "Estimating the dimension of a model", Ann. Stat. 6, 461 (1978).
.. [3] L. Tierney and J. B. Kadane, J. Am. Stat. Assoc. 81, 82 (1986).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize

from evidence1d.errors import InputError
from evidence1d.inference.target import LogTarget

__all__ = ["LaplaceResult", "BICResult", "laplace_evidence", "bic"]


@dataclass(frozen=True)
class LaplaceResult:
    """Approximate ln Z from a Gaussian fitted at the posterior mode.

    Attributes
    ----------
    log_z : float
        ln Z ≈ ln L(θ̂) + ln π(θ̂) + (m/2) ln 2π + ½ ln det Σ (nats), approximate.
    map_point : ndarray, shape (m,)
    covariance : ndarray, shape (m, m)
    method : str
        ``"hessian"`` (finite-difference curvature) or ``"samples"`` (sample covariance).
    approximate : bool
        Always True.
    """

    log_z: float
    map_point: np.ndarray
    covariance: np.ndarray
    method: str
    approximate: bool = True
    label: str = "approximate (Laplace)"


@dataclass(frozen=True)
class BICResult:
    """Schwarz criterion BIC = m ln n − 2 ln L̂ and ln Z ≈ −BIC/2 (approximate)."""

    bic: float
    log_z: float
    n_params: int
    n_data: int
    approximate: bool = True
    label: str = "approximate (BIC)"


def _hessian(f, x, h):
    """Central finite-difference Hessian of scalar f at x with steps h (one batch call)."""
    m = x.size
    pts, idx = [x], {}
    for i in range(m):
        for j in range(i, m):
            for si, sj in ((1, 1), (1, -1), (-1, 1), (-1, -1)):
                p = x.copy()
                p[i] += si * h[i]
                p[j] += sj * h[j]
                idx[(i, j, si, sj)] = len(pts)
                pts.append(p)
    vals = f(np.array(pts))
    hess = np.empty((m, m))
    for i in range(m):
        for j in range(i, m):
            v = [vals[idx[(i, j, a, b)]] for a, b in ((1, 1), (1, -1), (-1, 1), (-1, -1))]
            hess[i, j] = hess[j, i] = (v[0] - v[1] - v[2] + v[3]) / (4 * h[i] * h[j])
    return hess


def laplace_evidence(log_likelihood, prior, map_point=None, samples=None,
                     optimise: bool = True, log_prob=None) -> LaplaceResult:
    """Approximate ln Z by the Laplace method (Kass & Raftery 1995, eq. 4.1).

    Parameters
    ----------
    log_likelihood : callable
        Vectorised ``f(theta (k, m)) -> (k,)`` (nats).
    prior : JointPrior
    map_point : ndarray (m,), optional
        Start of the mode search; the curvature there gives Σ = (−∇² ln p)⁻¹.
    samples : ndarray (n, m), optional
        Posterior samples; without ``map_point`` the mode search starts at their best point
        and Σ is their covariance.
    optimise : bool
        Refine the mode with a Nelder–Mead search (one likelihood call per step); False
        takes the best sample as the mode (cheap; for the quick look after sampling).
    log_prob : ndarray (n,), optional
        The log posterior ln L + ln π at ``samples`` (nats), where the sampler has it
        already (emcee's values); the best sample is then found without evaluating the
        likelihood again.

    Returns
    -------
    LaplaceResult
        Labelled approximate.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), eq. 4.1; Tierney & Kadane, JASA 81, 82 (1986).
    """
    target = LogTarget(log_likelihood, prior)
    if map_point is None and samples is None:
        raise InputError("laplace_evidence needs a map_point or posterior samples")
    if map_point is not None:
        x0 = np.asarray(map_point, dtype=float).reshape(-1)
    else:
        samples = np.asarray(samples, dtype=float)
        lp = target(samples) if log_prob is None else np.asarray(log_prob, dtype=float)
        if lp.shape != (samples.shape[0],):
            raise InputError(f"laplace_evidence: log_prob has shape {lp.shape}, expected "
                             f"({samples.shape[0]},), one value per sample")
        x0 = samples[np.argmax(lp)]
    if not optimise:
        res = optimize.OptimizeResult(x=x0, fun=-target(x0[None, :])[0])
    else:
        res = optimize.minimize(lambda x: -target(x[None, :])[0]
                                if np.isfinite(target(x[None, :])[0]) else 1e300,
                                x0, method="Nelder-Mead",
                                options={"maxfev": 400 * x0.size, "xatol": 1e-10,
                                         "fatol": 1e-12})
    xhat = res.x if res.fun <= -target(x0[None, :])[0] else x0
    lp_hat = float(target(xhat[None, :])[0])
    m = xhat.size
    if samples is not None and map_point is None:
        cov, method = np.atleast_2d(np.cov(samples, rowvar=False)), "samples"
    else:
        scale = np.abs(xhat) * 1e-4 + 1e-6 if samples is None else \
            1e-2 * np.std(np.asarray(samples), axis=0)
        hess = _hessian(target, xhat, scale)
        try:
            cov = np.linalg.inv(-hess)
        except np.linalg.LinAlgError:
            raise InputError("the log posterior has a singular curvature at the mode; the "
                             "Laplace approximation does not apply") from None
        method = "hessian"
    sign, logdet = np.linalg.slogdet(cov)
    if sign <= 0:
        raise InputError("the curvature at the mode is not negative definite; the Laplace "
                         "approximation does not apply (mode on a boundary or not a maximum)")
    log_z = lp_hat + 0.5 * m * math.log(2 * math.pi) + 0.5 * logdet
    return LaplaceResult(log_z=float(log_z), map_point=xhat, covariance=cov, method=method)


def bic(max_log_likelihood: float, n_params: int, n_data: int) -> BICResult:
    """Schwarz's criterion BIC = m ln n − 2 ln L̂; ln Z ≈ −BIC/2 (approximate).

    Parameters
    ----------
    max_log_likelihood : float
        ln L at its maximum (nats).
    n_params : int
        Free parameters m.
    n_data : int
        Data points n.

    Returns
    -------
    BICResult

    References
    ----------
    .. [1] Schwarz, Ann. Stat. 6, 461 (1978); Kass & Raftery, JASA 90, 773 (1995), eq. 9.
    """
    if n_data < 1 or n_params < 0:
        raise InputError(f"bic needs n_data ≥ 1 and n_params ≥ 0; got {n_data}, {n_params}")
    value = n_params * math.log(n_data) - 2.0 * float(max_log_likelihood)
    return BICResult(bic=value, log_z=-0.5 * value, n_params=int(n_params), n_data=int(n_data))

"""Log-likelihoods of data with per-point errors, vectorised over parameter sets.

Model predictions arrive as ``(k, n)`` arrays (k parameter sets, n data points), data and
errors as ``(n,)``.  All functions keep the full normalisation constants, because evidences
compare likelihoods between models.  The pointwise versions return ``(k, n)`` for
leave-one-out cross-validation; the totals are their sums over points.

An optional ``inflation`` factor s (shape ``(k, 1)`` or scalar, s > 0) multiplies the quoted
errors: σ_i → s σ_i, a common remedy for underestimated errors (common practice).

References
----------
.. [1] D. S. Sivia and J. Skilling, *Data Analysis: A Bayesian Tutorial*, 2nd ed. (Oxford,
   2006), §3.5 and §8.3: Gaussian likelihood and error inflation.
.. [2] K. L. Lange, R. J. A. Little and J. M. G. Taylor, "Robust statistical modeling using
   the t distribution", J. Am. Stat. Assoc. 84, 881 (1989).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special

from evidence1d.errors import InputError

__all__ = ["gaussian_loglike", "gaussian_loglike_pointwise",
           "student_t_loglike", "student_t_loglike_pointwise"]

_LN_2PI = math.log(2.0 * math.pi)


def _prepare(model, data, err, inflation):
    model = np.asarray(model, dtype=float)
    data = np.asarray(data, dtype=float)
    err = np.asarray(err, dtype=float)
    if model.ndim == 1:
        model = model[None, :]
    if model.ndim != 2 or data.ndim != 1 or err.shape != data.shape \
            or model.shape[1] != data.shape[0]:
        raise InputError(f"model (k, n), data (n,) and err (n,) do not match: shapes "
                         f"{model.shape}, {data.shape}, {err.shape}")
    if not np.all(err > 0):
        bad = int(np.flatnonzero(~(err > 0))[0])
        raise InputError(f"every error bar must be positive; point {bad} has error "
                         f"{err[bad]!r}")
    sigma = err[None, :]
    if inflation is not None:
        s = np.asarray(inflation, dtype=float)
        if s.ndim == 1:
            s = s[:, None]
        sigma = sigma * s
    return model, data, sigma


def gaussian_loglike_pointwise(model, data, err, inflation=None):
    """Pointwise Gaussian log-likelihood ln N(d_i | m_i, (s σ_i)²).

    Parameters
    ----------
    model : ndarray, shape (k, n)
        Predictions, in the data's units.
    data : ndarray, shape (n,)
        Measured values.
    err : ndarray, shape (n,)
        One-standard-deviation errors (> 0), in the data's units.
    inflation : ndarray, shape (k, 1) or float, optional
        Error-inflation factor s > 0 per parameter set.

    Returns
    -------
    ndarray, shape (k, n)
        −½ (r_i/σ_i)² − ln σ_i − ½ ln 2π with r = d − m and σ_i = s σ_i (nats).

    References
    ----------
    .. [1] Sivia & Skilling, *Data Analysis: A Bayesian Tutorial* (2006), eq. 3.48.
    """
    model, data, sigma = _prepare(model, data, err, inflation)
    z = (data[None, :] - model) / sigma
    return -0.5 * z * z - np.log(sigma) - 0.5 * _LN_2PI


def gaussian_loglike(model, data, err, inflation=None):
    """Total Gaussian log-likelihood over points, shape (k,) (nats).

    See :func:`gaussian_loglike_pointwise` for the parameters.

    References
    ----------
    .. [1] Sivia & Skilling, *Data Analysis: A Bayesian Tutorial* (2006), eq. 3.48.
    """
    return gaussian_loglike_pointwise(model, data, err, inflation).sum(axis=1)


def student_t_loglike_pointwise(model, data, err, nu, inflation=None):
    """Pointwise Student-t log-likelihood with scale s σ_i and ν degrees of freedom.

    ln p = ln Γ((ν+1)/2) − ln Γ(ν/2) − ½ ln(νπ) − ln σ_i − (ν+1)/2 · ln(1 + r_i²/(ν σ_i²)).

    Parameters
    ----------
    model, data, err, inflation
        As for :func:`gaussian_loglike_pointwise`.
    nu : float or ndarray of shape (k, 1)
        Degrees of freedom ν > 0; ν → ∞ recovers the Gaussian.

    Returns
    -------
    ndarray, shape (k, n)
        Log density of each point (nats).

    References
    ----------
    .. [1] Lange, Little & Taylor, J. Am. Stat. Assoc. 84, 881 (1989), eq. 1.
    """
    model, data, sigma = _prepare(model, data, err, inflation)
    nu = np.asarray(nu, dtype=float)
    if nu.ndim == 1:
        nu = nu[:, None]
    if not np.all(nu > 0):
        raise InputError(f"Student-t degrees of freedom must be positive; got {nu.min()!r}")
    r = (data[None, :] - model) / sigma
    const = (special.gammaln(0.5 * (nu + 1.0)) - special.gammaln(0.5 * nu)
             - 0.5 * np.log(nu * math.pi))
    return const - np.log(sigma) - 0.5 * (nu + 1.0) * np.log1p(r * r / nu)


def student_t_loglike(model, data, err, nu, inflation=None):
    """Total Student-t log-likelihood over points, shape (k,) (nats).

    See :func:`student_t_loglike_pointwise` for the parameters.

    References
    ----------
    .. [1] Lange, Little & Taylor, J. Am. Stat. Assoc. 84, 881 (1989).
    """
    return student_t_loglike_pointwise(model, data, err, nu, inflation).sum(axis=1)

"""Multivariate normal probabilities of a box, truncated draws and the box-constrained mode.

Bounded linear nuisances (C_imp ≥ 0, γ_e ≥ 0, β ≥ 0, positive scales) are integrated out
under their declared, truncated priors (:mod:`evidence1d.inference.linear`); that needs the
probability P(a ∈ [lo, hi] | y, θ) of a box under the Gaussian conditional posterior
N(m, C) of the nuisances, vectorised over a batch of parameter sets, in logarithms (it can be
very small where a family needs a nuisance far outside its bounds).

Method, per parameter set:

* a bound more than :data:`Z_DROP` = 12 marginal standard deviations beyond the posterior
  mean is dropped: P changes by less than its marginal tail Φ(−12) = 1.8e-33 (the union
  bound), i.e. by a relative 1e-9 wherever P > 1e-24;
* no bound left: P = 1;
* one dimension left: P = Φ(b) − Φ(a), exact (``scipy.special.log_ndtr``, in logarithms);
* two dimensions left: the bivariate normal distribution function by Owen's T function
  (Owen 1956, eq. 2.1; ``scipy.special.owens_t``), exact to rounding, combined over the box
  corners; below P = 1e-10, where the sum loses relative precision, the separation of
  variables of Genz (1992) written as one integral over the first variable, evaluated in
  logarithms by 96-point Gauss–Legendre quadrature (measured against an independent
  adaptive quadrature: |Δ ln P| below 4e-6 down to P ~ 1e-130, below 2e-7 on the Owen
  branch; ``tests/inference/test_truncated.py``);
* three or more dimensions left: the same separation of variables with the most restrictive
  variable first (Genz & Bretz 2009, §4.1.3) over a fixed shifted rank-1 lattice of
  :data:`N_LATTICE` = 1024 points (deterministic, so the likelihood stays a function of θ);
  measured against scipy's Genz algorithm over 40 random orthants: relative error in P of
  median 7e-5 and worst 2e-3 in three dimensions, median 3e-4 and worst 2e-2 (0.02 nats
  in ln P) in four.  The default priors leave at most two bounds in reach.

References
----------
D. B. Owen, Ann. Math. Statist. 27, 1075 (1956): tables for computing bivariate normal
probabilities (Φ₂ through T(h, a)).
A. Genz, J. Comput. Graph. Statist. 1, 141 (1992): numerical computation of multivariate
normal probabilities (separation of variables).
A. Genz & F. Bretz, *Computation of Multivariate Normal and t Probabilities* (Springer, 2009),
§2.1 (bivariate), §4.1 (separation of variables, variable reordering, lattice rules).
J. Geweke, in *Computing Science and Statistics: 23rd Symposium on the Interface* (1991),
p. 571; C. P. Robert, Stat. Comput. 5, 121 (1995): Gibbs sampling of truncated normals.
"""
from __future__ import annotations

import functools
import itertools

import numpy as np
from scipy import special

from ..gauss_rules import gauss_legendre
from .triangular import cholesky_inverse, solve_upper
__all__ = ["log_ndtr_diff", "bvn_cdf", "log_box_probability", "truncated_normal_ppf",
           "box_mode", "truncated_draw", "Z_DROP", "N_LATTICE"]

#: a bound farther than this many marginal standard deviations is dropped
Z_DROP = 12.0
#: lattice points of the separation of variables in three or more dimensions
N_LATTICE = 1024
_GL_NODES = 96
_OWEN_FLOOR = 1e-10


def log_ndtr_diff(a, b):
    """ln(Φ(b) − Φ(a)) for a ≤ b, accurate in both tails.

    Parameters
    ----------
    a, b : array_like
        Standardised bounds (may be ±inf), broadcastable.

    Returns
    -------
    ndarray
        ln P(a ≤ Z ≤ b) for standard normal Z (−inf for an empty interval).

    References
    ----------
    Genz & Bretz (2009), §4.1: Φ differences; the upper tail mirrored into the lower one.
    """
    a, b = np.broadcast_arrays(np.asarray(a, float), np.asarray(b, float))
    flip = a > 0                                  # both in the upper tail: mirror
    lo = np.where(flip, -b, a)
    hi = np.where(flip, -a, b)
    lb, la = special.log_ndtr(hi), special.log_ndtr(lo)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = lb + np.log1p(-np.exp(la - lb))
    return np.where(hi > lo, out, -np.inf)


def bvn_cdf(h, k, rho):
    """Bivariate standard normal distribution function Φ₂(h, k; ρ), vectorised.

    Owen (1956), eq. 2.1: Φ₂(h, k; ρ) = ½Φ(h) + ½Φ(k) − T(h, a_h) − T(k, a_k) − β with
    a_h = (k − ρh)/(h√(1 − ρ²)), a_k = (h − ρk)/(k√(1 − ρ²)) and β = ½ when hk < 0 or
    (hk = 0 and h + k < 0), else 0.

    Parameters
    ----------
    h, k : array_like
        Upper limits (standardised; ±inf allowed).
    rho : array_like
        Correlation, |ρ| < 1.

    Returns
    -------
    ndarray
        P(X ≤ h, Y ≤ k), absolute accuracy of double rounding.

    References
    ----------
    D. B. Owen, Ann. Math. Statist. 27, 1075 (1956).
    """
    h, k, rho = np.broadcast_arrays(*(np.asarray(v, float) for v in (h, k, rho)))
    s = np.sqrt(np.maximum(1.0 - rho * rho, 1e-300))
    hh = np.where(np.isfinite(h), np.where(h == 0, 1e-300, h), 1.0)
    kk = np.where(np.isfinite(k), np.where(k == 0, 1e-300, k), 1.0)
    with np.errstate(all="ignore"):
        ah = (kk - rho * hh) / (hh * s)
        ak = (hh - rho * kk) / (kk * s)
        beta = np.where(hh * kk < 0, 0.5, 0.0)
        val = (0.5 * special.ndtr(hh) + 0.5 * special.ndtr(kk)
               - special.owens_t(hh, ah) - special.owens_t(kk, ak) - beta)
    val = np.where(np.isposinf(h), special.ndtr(k), val)
    val = np.where(np.isposinf(k), special.ndtr(h), val)
    val = np.where(np.isposinf(h) & np.isposinf(k), 1.0, val)
    val = np.where(np.isneginf(h) | np.isneginf(k), 0.0, val)
    return np.clip(val, 0.0, 1.0)


def truncated_normal_ppf(a, b, w):
    """Quantile w of the standard normal truncated to [a, b], stable in both tails.

    Parameters
    ----------
    a, b : array_like
        Standardised bounds, a < b (±inf allowed).
    w : array_like
        Probabilities in (0, 1).

    Returns
    -------
    ndarray
        z with P(a ≤ Z ≤ z | a ≤ Z ≤ b) = w, clipped to [a, b].

    References
    ----------
    Genz & Bretz (2009), §4.1.1; the inverse of Φ from a logarithm by
    ``scipy.special.ndtri_exp``.
    """
    a, b, w = np.broadcast_arrays(*(np.asarray(v, float) for v in (a, b, w)))
    flip = a > 0
    lo = np.where(flip, -b, a)
    hi = np.where(flip, -a, b)
    ww = np.where(flip, 1.0 - w, w)
    with np.errstate(divide="ignore", invalid="ignore"):
        logp = np.logaddexp(special.log_ndtr(lo), np.log(ww) + log_ndtr_diff(lo, hi))
        z = special.ndtri_exp(np.minimum(logp, 0.0))
    z = np.where(flip, -z, z)
    return np.clip(z, a, b)


# ---------------------------------------------------------------------- box probability
def _bound_groups(active):
    """Rows grouped by which coordinates have a bound in reach: (rows, those coordinates)."""
    keys = active @ (1 << np.arange(active.shape[1]))
    for key in np.unique(keys):
        rows = np.flatnonzero(keys == key)
        yield rows, np.flatnonzero(active[rows[0]])


def _standardised(mean, cov, lo, hi):
    sd = np.sqrt(np.diagonal(cov, axis1=-2, axis2=-1))
    with np.errstate(invalid="ignore", divide="ignore"):
        za = (lo - mean) / sd
        zb = (hi - mean) / sd
    za = np.where(za < -Z_DROP, -np.inf, za)
    zb = np.where(zb > Z_DROP, np.inf, zb)
    return sd, za, zb


def _owen_box(za, zb, rho):
    """P(za ≤ X ≤ zb) for a standardised bivariate normal, corners combined."""
    out = 0.0
    for s1, x in ((1, zb[:, 0]), (-1, za[:, 0])):
        for s2, y in ((1, zb[:, 1]), (-1, za[:, 1])):
            out = out + s1 * s2 * bvn_cdf(x, y, rho)
    return out


def _sov_log(mean, cov, lo, hi, points, logw):
    """ln P of the box by separation of variables (Genz 1992) over given points.

    ``points`` (N, q − 1) in (0, 1), ``logw`` (N,) log weights summing to one; variables
    reordered per row, most restrictive interval first (Genz & Bretz 2009, §4.1.3).
    """
    k, q = mean.shape
    sd, za, zb = _standardised(mean, cov, lo, hi)
    order = np.argsort(log_ndtr_diff(za, zb), axis=1)
    m = np.take_along_axis(mean, order, 1)
    a = np.take_along_axis(lo, order, 1)
    b = np.take_along_axis(hi, order, 1)
    C = np.take_along_axis(np.take_along_axis(cov, order[:, :, None], 1), order[:, None, :], 2)
    L = np.linalg.cholesky(C)
    n = points.shape[0]
    total = np.zeros((k, n))
    z = np.zeros((k, n, q))
    for i in range(q):
        shift = np.einsum("kj,knj->kn", L[:, i, :i], z[:, :, :i])
        d = L[:, i, i][:, None]
        ai = (a[:, i:i + 1] - m[:, i:i + 1] - shift) / d
        bi = (b[:, i:i + 1] - m[:, i:i + 1] - shift) / d
        ai = np.where(ai < -Z_DROP - 30, -np.inf, ai)
        bi = np.where(bi > Z_DROP + 30, np.inf, bi)
        total += log_ndtr_diff(ai, bi)
        if i < q - 1:
            z[:, :, i] = truncated_normal_ppf(ai, bi, points[None, :, i])
    return special.logsumexp(total + logw[None, :], axis=1)


def _frozen(*arrays):
    for a in arrays:
        a.flags.writeable = False
    return arrays


@functools.lru_cache(maxsize=None)
def _gauss_legendre():
    """Gauss–Legendre nodes on (0, 1) as a (N, 1) point set and their log weights."""
    x, w = gauss_legendre(_GL_NODES)
    return _frozen((0.5 * (x + 1.0))[:, None], np.log(0.5 * w))


@functools.lru_cache(maxsize=None)
def _lattice(q):
    """A fixed shifted rank-1 lattice in (0, 1)^(q−1) (Richtmyer: multiples of √prime)."""
    primes = [n for n in range(2, 600) if all(n % d for d in range(2, int(n ** 0.5) + 1))]
    gen = np.sqrt(np.array(primes[:q - 1], float))
    i = np.arange(1, N_LATTICE + 1)[:, None]
    shift = np.random.default_rng(20261203).random(q - 1)
    pts = np.mod(i * gen[None, :] + shift[None, :], 1.0)
    pts = np.abs(2.0 * pts - 1.0)                      # baker's transform (Genz & Bretz §4.1)
    return _frozen(np.clip(pts, 1e-12, 1 - 1e-12), np.full(N_LATTICE, -np.log(N_LATTICE)))


def log_box_probability(mean, cov, lo, hi) -> np.ndarray:
    """ln P(lo ≤ a ≤ hi) for a ~ N(mean, cov), one box, a batch of Gaussians.

    Parameters
    ----------
    mean : ndarray, shape (k, p)
        Means (the nuisances' units).
    cov : ndarray, shape (k, p, p)
        Covariances, positive definite.
    lo, hi : ndarray, shape (p,)
        Box bounds (±inf for an open side).

    Returns
    -------
    ndarray, shape (k,)
        ln P in nats (0 where no bound is within :data:`Z_DROP` standard deviations).

    References
    ----------
    See the module notes (Owen 1956; Genz 1992; Genz & Bretz 2009).
    """
    mean = np.asarray(mean, float)
    k, p = mean.shape
    lo = np.broadcast_to(np.asarray(lo, float), (k, p))
    hi = np.broadcast_to(np.asarray(hi, float), (k, p))
    out = np.zeros(k)
    sd, za, zb = _standardised(mean, cov, lo, hi)
    active = np.isfinite(za) | np.isfinite(zb)
    for rows, dims in _bound_groups(active):
        if dims.size == 0:
            continue
        if dims.size == 1:
            j = dims[0]
            out[rows] = log_ndtr_diff(za[rows, j], zb[rows, j])
            continue
        sub = np.ix_(rows, dims)
        m, a, b = mean[sub], lo[sub], hi[sub]
        C = cov[rows][:, dims][:, :, dims]
        if dims.size == 2:
            rho = C[:, 0, 1] / np.sqrt(C[:, 0, 0] * C[:, 1, 1])
            with np.errstate(divide="ignore"):
                val = np.log(np.maximum(_owen_box(za[sub], zb[sub], rho), 0.0))
            tail = ~(val > np.log(_OWEN_FLOOR))
            if tail.any():
                pts, logw = _gauss_legendre()
                val[tail] = _sov_log(m[tail], C[tail], a[tail], b[tail], pts, logw)
            out[rows] = val
        else:
            pts, logw = _lattice(dims.size)
            out[rows] = _sov_log(m, C, a, b, pts, logw)
    return out


# ---------------------------------------------------------------------- mode and draws
def box_mode(mean, prec, lo, hi) -> np.ndarray:
    """The mode of N(mean, prec⁻¹) restricted to the box [lo, hi]: the minimiser of
    (a − mean)ᵀ prec (a − mean) there, exact, by enumerating the active sets.

    At the minimiser each coordinate is free, at its lower or at its upper bound; for the
    free ones stationarity gives a_U = m_U − P_UU⁻¹ P_UF (a_F − m_F) (a convex quadratic
    programme: the best feasible candidate is the minimum; Nocedal & Wright, *Numerical
    Optimization*, 2nd ed. (Springer, 2006), §16.5).

    Parameters
    ----------
    mean : ndarray, shape (k, p)
    prec : ndarray, shape (k, p, p)
        Precision matrices (positive definite).
    lo, hi : ndarray, shape (p,)

    Returns
    -------
    ndarray, shape (k, p)
        The mean itself where it lies in the box.
    """
    mean = np.asarray(mean, float)
    k, p = mean.shape
    lo, hi = np.asarray(lo, float), np.asarray(hi, float)
    inside = np.all((mean >= lo) & (mean <= hi), axis=1)
    best = mean.copy()
    rows = np.flatnonzero(~inside)
    if rows.size == 0:
        return best
    m, P = mean[rows], prec[rows]
    best_obj = np.full(rows.size, np.inf)
    best_a = np.clip(m, lo, hi)
    choices = [[0] + ([1] if np.isfinite(lo[j]) else []) + ([2] if np.isfinite(hi[j]) else [])
               for j in range(p)]
    for combo in itertools.product(*choices):
        combo = np.array(combo)
        F = np.flatnonzero(combo > 0)
        U = np.flatnonzero(combo == 0)
        a = np.empty_like(m)
        a[:, F] = np.where(combo[F] == 1, lo[F], hi[F])
        if U.size:
            rhs = -np.einsum("kij,kj->ki", P[:, U][:, :, F], a[:, F] - m[:, F])
            a[:, U] = m[:, U] + np.linalg.solve(P[:, U][:, :, U], rhs[..., None])[..., 0]
        tol = 1e-12 * (1.0 + np.abs(a))
        ok = np.all((a >= lo - tol) & (a <= hi + tol), axis=1)
        d = a - m
        obj = np.einsum("ki,kij,kj->k", d, P, d)
        take = ok & (obj < best_obj)
        best_obj[take] = obj[take]
        best_a[take] = a[take]
    best[rows] = np.clip(best_a, lo, hi)
    return best


def _gibbs(m, P, lo, hi, rng, sweeps):
    """Gibbs sweeps over N(m, P⁻¹) restricted to the box, from the box-constrained mode."""
    x = box_mode(m, P, lo, hi)
    diag = np.diagonal(P, axis1=1, axis2=2)
    sd = 1.0 / np.sqrt(diag)
    for _ in range(sweeps):
        for j in range(m.shape[1]):
            d = x - m
            off = np.einsum("ki,ki->k", P[:, j, :], d) - diag[:, j] * d[:, j]
            cm = m[:, j] - off / diag[:, j]
            z = truncated_normal_ppf((lo[j] - cm) / sd[:, j], (hi[j] - cm) / sd[:, j],
                                     rng.random(m.shape[0]))
            x[:, j] = np.clip(cm + sd[:, j] * z, lo[j], hi[j])
    return x


def truncated_draw(mean, prec, chol, lo, hi, rng, tries: int = 4, sweeps: int = 100):
    """One draw per row from N(mean, prec⁻¹) restricted to the box [lo, hi].

    Rejection from the untruncated Gaussian first (exact).  For the rows still outside after
    ``tries`` attempts, the coordinates S with a bound within :data:`Z_DROP` marginal
    standard deviations are drawn from their marginal N(m_S, C_SS) restricted to the box —
    exactly by the inverse CDF when S has one coordinate, else by ``sweeps`` Gibbs sweeps of
    the one-dimensional truncated conditionals from the box-constrained mode (Geweke 1991;
    Robert 1995) — and the others from their Gaussian conditional given a_S (Rasmussen &
    Williams 2006, eq. A.6), clipped to their (far) bounds.

    Parameters
    ----------
    mean : ndarray, shape (k, p)
    prec : ndarray, shape (k, p, p)
        Precision matrices.
    chol : ndarray, shape (k, p, p)
        Lower Cholesky factors of ``prec``.
    lo, hi : ndarray, shape (p,)
    rng : numpy.random.Generator

    Returns
    -------
    ndarray, shape (k, p)
        Draws inside the box.
    """
    mean = np.asarray(mean, float)
    k, p = mean.shape
    lo, hi = np.asarray(lo, float), np.asarray(hi, float)
    out = np.empty_like(mean)
    todo = np.arange(k)
    LT = np.swapaxes(chol, 1, 2)
    for _ in range(tries):
        z = rng.standard_normal((todo.size, p))
        x = mean[todo] + solve_upper(LT[todo], z)
        ok = np.all((x >= lo) & (x <= hi), axis=1)
        out[todo[ok]] = x[ok]
        todo = todo[~ok]
        if todo.size == 0:
            return out
    m = mean[todo]
    Linv = cholesky_inverse(chol[todo])
    cov = np.swapaxes(Linv, 1, 2) @ Linv
    _, za, zb = _standardised(m, cov, lo, hi)
    active = np.isfinite(za) | np.isfinite(zb)
    for g, S in _bound_groups(active):
        R = np.flatnonzero(~active[g[0]])
        if S.size == 0:
            S, R = np.arange(p), np.array([], int)
        C_SS = cov[g][:, S][:, :, S]
        x = np.empty((g.size, p))
        x[:, S] = _gibbs(m[g][:, S], np.linalg.inv(C_SS), lo[S], hi[S], rng,
                         1 if S.size == 1 else sweeps)
        if R.size:
            C_RS = cov[g][:, R][:, :, S]
            gain = np.swapaxes(np.linalg.solve(C_SS, np.swapaxes(C_RS, 1, 2)), 1, 2)
            cm = m[g][:, R] + (gain @ (x[:, S] - m[g][:, S])[..., None])[..., 0]
            cc = cov[g][:, R][:, :, R] - gain @ np.swapaxes(C_RS, 1, 2)
            zz = rng.standard_normal((g.size, R.size))
            x[:, R] = np.clip(cm + (np.linalg.cholesky(cc) @ zz[..., None])[..., 0],
                              lo[R], hi[R])
        out[todo[g]] = x
    return out

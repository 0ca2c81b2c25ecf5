"""Brillouin-zone quadrature of the paramagnon's relaxation rates Γ_Q.

The heat capacity and entropy of :mod:`evidence1d.physics.paramagnon_thermo` are zone
averages of functions of Γ_Q (one mode per wavevector of the zone and spin component).

Zone quadrature
---------------
Γ_Q is even in each phase, so the average is over [0, π]³.  Each phase gets K panels
graded geometrically from the point where Γ_Q varies fastest (the centre: π, 0 or π q₀ with
both sides of π q₀; also Q = 0 for the conserved z = 3 rate) with Gauss–Legendre nodes in
each panel; the innermost panel is the Ornstein–Zernike half-width a_i/ξ_i (at most 1/64
of the side; at most 3 % of π for z = 3, where Γ_Q ∝ |Q| at Q → 0).  The product rule
(24 × 15 × 15 nodes, twice 24 along the chain for the incommensurate centre) agrees with a
much finer rule to 5e-4 in C and S over the prior ranges (ξ_∥ ≤ 50 Å, ξ_⊥ ≤ 20 Å) and
with the exact Bessel form of ⟨1/Γ_Q⟩ (z = 2) to 2e-5.

Compression
-----------
Per parameter set the rule is reduced to 2M weighted values of ln Γ: the nodes are binned
in M = 32 equal bins of ln Γ and each bin is replaced by the two-point rule that keeps its
weight, mean and variance (exact for cubics in ln Γ within a bin; C and S within 1e-4 of
the full rule).  The mode functions vary smoothly with ln Γ, so the thermodynamics then cost
n_sets × n_T × 64 evaluations.

References
----------
M. Abramowitz & I. A. Stegun (1964), 25.4.29 (Gauss–Legendre), 9.6.19 (I₀);
T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, 1985), Ch. 3
(zone sums of spin-fluctuation modes).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special

from ..gauss_rules import gauss_legendre
from ..units import K_B_MEV, R_GAS
from . import paramagnon as pm

__all__ = ["zone_rates", "compress_rates", "zone_average_inverse_rate",
           "spin_fluctuation_gamma", "N_BINS"]

#: bins of ln Γ in the compressed zone rule (2 nodes each)
N_BINS = 32
#: nodes binned at a time by :func:`compress_rates` (a cache-sized piece of the batch)
_CHUNK_NODES = 40000
#: (panels, Gauss–Legendre nodes per panel) along the chain and across it
_PANELS = ((6, 4), (5, 3))


def _graded(L, w_in, n_panels, n_gl):
    """Graded composite Gauss–Legendre rule on [0, L]: distances and weights (sum L).

    Panel edges 0, w, w r, …, w r^(K−1) = L (r = (L/w)^(1/(K−1))), with w clipped to
    [1e-12 L, L/64]; a side of length 0 gets zero weights.
    """
    L = np.asarray(L, float)
    Ls = np.maximum(L, 1e-300)
    w_in = np.clip(np.asarray(w_in, float), 1e-12 * Ls, Ls / 64.0)
    ratio = (Ls / w_in) ** (1.0 / (n_panels - 1))
    edges = [np.zeros_like(Ls)] + [w_in * ratio ** k for k in range(n_panels - 1)] + [Ls]
    x, wg = gauss_legendre(n_gl)
    r, w = [], []
    for lo, hi in zip(edges[:-1], edges[1:]):
        half = 0.5 * (hi - lo)
        r.append(lo + half * (1.0 + x))
        w.append(half * wg * (L > 0))
    return np.concatenate(r, axis=-1), np.concatenate(w, axis=-1)


def zone_rates(xi_par, xi_perp, gamma0, d, a_perp, b_perp, center="zone_boundary",
               q0=None, panels=_PANELS, inner=None):
    """Γ_Q on the graded product rule over the Brillouin zone, with the zone weights.

    Parameters
    ----------
    xi_par, xi_perp, gamma0 : array_like, shape (n_sets, 1)
        Correlation lengths (Å) and Γ_0 (meV).
    d, a_perp, b_perp : float
        Spacings in Å.
    center : {'zone_boundary', 'zone_centre', 'incommensurate'}
        Centre and with it the dynamics (z = 3 for the zone centre).
    q0 : array_like, shape (n_sets, 1), optional
        Incommensurate chain phase in units of π.
    panels : ((int, int), (int, int))
        (panels, Gauss–Legendre nodes) along the chain and across it.
    inner : float, optional
        Largest innermost panel in units of π (default 1 for z = 2, where the
        Ornstein–Zernike half-width a_i/ξ_i sets it, and 0.03 for z = 3); it is also never
        more than 1/64 of a side.

    Returns
    -------
    gamma : ndarray, shape (n_sets, n_nodes)
        Γ_Q in meV at the nodes.
    weight : ndarray, shape (n_sets, n_nodes)
        Zone weights (each row sums to 1).

    References
    ----------
    Abramowitz & Stegun (1964), 25.4.29 (Gauss–Legendre); the rates of
    :func:`evidence1d.physics.paramagnon.relaxation_rate`.
    """
    qc, qp = pm._check_center(center)
    xi_par = np.asarray(xi_par, float).reshape(-1, 1)
    xi_perp = np.asarray(xi_perp, float).reshape(-1, 1)
    gamma0 = np.asarray(gamma0, float).reshape(-1, 1)
    n = np.broadcast(xi_par, xi_perp, gamma0).shape[0]
    ones = np.ones((n, 1))
    conserved = pm.DYNAMICS[center] == 3
    floor = (3e-2 if conserved else 1.0) if inner is None else float(inner)
    with np.errstate(divide="ignore"):
        w_par = np.where(xi_par > 0, d / np.maximum(xi_par, 1e-300), np.inf) * ones
        w_perp = [np.where(xi_perp > 0, s / np.maximum(xi_perp, 1e-300), np.inf) * ones
                  for s in (a_perp, b_perp)]
    (kp, gp), (kt, gt) = panels
    if qc is None:
        ph = math.pi * np.clip(np.asarray(q0, float).reshape(-1, 1), 0.0, 1.0) * ones
        r1, w1 = _graded(ph, w_par, kp, gp)
        r2, w2 = _graded(math.pi - ph, w_par, kp, gp)
        q = np.concatenate([ph - r1, ph + r2], axis=1)
        wq = np.concatenate([w1, w2], axis=1)
    else:
        r, wq = _graded(math.pi * ones, np.minimum(w_par, floor * math.pi), kp, gp)
        q = qc + (r if qc == 0.0 else -r)
    trans = []
    for w_i in w_perp:
        r, wt = _graded(math.pi * ones, np.minimum(w_i, floor * math.pi), kt, gt)
        trans.append((qp + (r if qp == 0.0 else -r), wt))
    (qa, wa), (qb, wb) = trans
    Q = (q[:, :, None, None], qa[:, None, :, None], qb[:, None, None, :])
    r4 = (-1, 1, 1, 1)
    kappa = pm.oz_denominator(*Q, xi_par.reshape(r4), xi_perp.reshape(r4), d, a_perp,
                              b_perp, center, None if q0 is None
                              else np.asarray(q0, float).reshape(r4))
    ell = pm.lattice_momentum(*Q, d, a_perp, b_perp) if conserved else None
    gamma = pm.relaxation_rate(kappa, gamma0.reshape(r4), ell)
    weight = wq[:, :, None, None] * wa[:, None, :, None] * wb[:, None, None, :]
    gamma = np.broadcast_to(gamma, weight.shape).reshape(n, -1)
    weight = weight.reshape(n, -1)
    return gamma, weight / weight.sum(axis=1, keepdims=True)


def compress_rates(gamma, weight, n_bins=N_BINS):
    """Moment-preserving two-point-per-bin reduction of a weighted set of rates.

    Parameters
    ----------
    gamma, weight : ndarray, shape (n_sets, n_nodes)
        Rates Γ_Q (meV, > 0) and their zone weights.
    n_bins : int
        Equal bins of ln Γ between the smallest and largest rate of each set.

    Returns
    -------
    log_gamma, w : ndarray, shape (n_sets, 2 n_bins)
        ln Γ nodes (Γ in meV) and weights (rows sum to 1; empty bins have weight 0): in each
        bin, the mean ± standard deviation of ln Γ with half the bin's weight each.

    References
    ----------
    Two-point Gauss rule of a distribution from its first three moments (Abramowitz &
    Stegun 1964, 25.4.29 generalised to an empirical weight; common practice).
    """
    gamma = np.asarray(gamma, dtype=float)
    weight = np.asarray(weight, dtype=float)
    n_sets = gamma.shape[0]
    # a few sets at a time: the temporaries then stay in the processor's cache (measured:
    # 20 sets of 5400 nodes in 1.9 ms in chunks of 8 sets, 3.6 ms in one piece)
    step = max(1, _CHUNK_NODES // max(gamma.shape[1], 1))
    parts = [_bin_moments(gamma[i:i + step], weight[i:i + step], n_bins)
             for i in range(0, n_sets, step)]
    lo, width, W, S1, S2 = (np.concatenate(c) for c in zip(*parts))
    with np.errstate(invalid="ignore", divide="ignore"):
        m1 = np.where(W > 0, S1 / np.where(W > 0, W, 1.0), 0.0)
        sd = np.sqrt(np.maximum(np.where(W > 0, S2 / np.where(W > 0, W, 1.0), 0.0)
                                - m1 * m1, 0.0))
    centre = (lo + (np.arange(n_bins) + 0.5) * width).ravel()
    mean = centre + m1
    log_gamma = np.stack([mean - sd, mean + sd], axis=-1).reshape(n_sets, 2 * n_bins)
    w = np.repeat(0.5 * W, 2).reshape(n_sets, 2 * n_bins)
    return log_gamma, w


def _bin_moments(gamma, weight, n_bins):
    """Per set: the lowest ln Γ, the bin width and each bin's weight, first and second
    moments of the offset of ln Γ from the bin's centre (flattened, set-major)."""
    g = np.log(np.maximum(gamma, 1e-300))
    n_sets = g.shape[0]
    lo = g.min(axis=1, keepdims=True)
    width = np.maximum(g.max(axis=1, keepdims=True) - lo, 1e-12) / n_bins
    # bin index floor((g − lo)/width) in [0, n_bins − 1] (g − lo ≥ 0, so truncation is the
    # floor) and the offset x of each rate from its bin's centre
    t = g - lo
    t /= width
    b = t.astype(np.intp)
    np.minimum(b, n_bins - 1, out=b)
    t -= b
    t -= 0.5
    x = t * width
    b += n_bins * np.arange(n_sets)[:, None]
    idx = b.ravel()
    size = n_sets * n_bins
    wx = weight * x
    W = np.bincount(idx, weight.ravel(), size)
    S1 = np.bincount(idx, wx.ravel(), size)
    S2 = np.bincount(idx, (wx * x).ravel(), size)
    return lo, width, W, S1, S2


def zone_average_inverse_rate(gamma0, xi_par, xi_perp, d, a_perp, b_perp):
    """Brillouin-zone average ⟨1/Γ_Q⟩ of the z = 2 rate Γ_0 (1 + κ), in 1/meV.

    ⟨1/(1 + κ)⟩ = ∫₀^∞ e^{−t} Π_i e^{−t b_i/2} I₀(t b_i/2) dt with b_i = (2ξ_i/a_i)²
    (I₀(z) = (1/π) ∫₀^π e^{z cos θ} dθ), by the trapezoid rule in ln t on 120 nodes
    (within 1e-10 of the 240-node rule for ξ up to 300 Å); independent of the centre, and
    an independent check of the zone rule of :func:`zone_rates` at low temperature.

    Parameters
    ----------
    gamma0 : array_like, shape (n_sets, 1)
        Γ_0 in meV (> 0).
    xi_par, xi_perp : array_like, shape (n_sets, 1)
        Correlation lengths in Å (≥ 0).
    d, a_perp, b_perp : float
        Spacings in Å (> 0).

    Returns
    -------
    ndarray, shape (n_sets, 1)
        ⟨1/Γ_Q⟩ in 1/meV (1/Γ_0 when ξ = 0).

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 9.6.19; T. Moriya (1985), Ch. 3.
    """
    lo, hi, n = -28.0, 4.5, 120
    t = np.exp(np.linspace(lo, hi, n))
    wt = np.full(n, (hi - lo) / (n - 1)) * t * np.exp(-t)
    wt[0] *= 0.5
    wt[-1] *= 0.5
    f = np.ones(np.broadcast(np.asarray(xi_par), np.asarray(xi_perp)).shape + t.shape)
    for xi, a in ((xi_par, d), (xi_perp, a_perp), (xi_perp, b_perp)):
        b = (2.0 * np.asarray(xi, float) / a) ** 2
        f = f * special.i0e(0.5 * b[..., None] * t)
    return (f @ wt) / np.asarray(gamma0, float)


def spin_fluctuation_gamma(gamma0, xi_par, xi_perp, d, a_perp, b_perp):
    """Low-temperature coefficient γ_sf = π R k_B ⟨1/Γ_Q⟩_BZ of the z = 2 modes.

    Parameters
    ----------
    gamma0, xi_par, xi_perp : array_like, shape (n_sets, 1)
        Γ_0 in meV, correlation lengths in Å.
    d, a_perp, b_perp : float
        Spacings in Å.

    Returns
    -------
    ndarray, shape (n_sets, 1)
        γ_sf in J/(mol K²) per mol of magnetic ion: C → γ_sf T for k_BT ≪ Γ_Q
        (three components, (π/3) k_B²/Γ_Q each).

    References
    ----------
    T. Moriya (1985), Ch. 3; the per-mode limit of
    :func:`evidence1d.physics.paramagnon_thermo.mode_functions`.
    """
    inv = zone_average_inverse_rate(gamma0, xi_par, xi_perp, d, a_perp, b_perp)
    return math.pi * R_GAS * K_B_MEV * inv

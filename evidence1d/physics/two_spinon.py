"""The exact two-spinon dynamical structure factor of the S = 1/2 Heisenberg chain.

For H = J Σ_i S_i·S_{i+1} (the XXZ convention of the project at Δ = 1, J > 0
antiferromagnetic) the two-spinon part of S^zz(q, ω) is known in closed form (Bougourzi,
Couture & Kacir, PRB 54, R12669 (1996); Karbach, Müller, Bougourzi, Fledderjohann & Mütter,
PRB 55, 12510 (1997)).  Between the des Cloizeaux–Pearson lower edge ω_L = (πJ/2)|sin q| and
the upper edge ω_U = πJ|sin(q/2)|, per site and with no factor 2π (∫dq/2π ∫dω S^zz = 1/4
for all states together),

    S₂(q, ω) = e^{−I(t)} / (4π √(ω_U² − ω²)),
    cosh(π t) = √((ω_U² − ω_L²) / (ω² − ω_L²)),
    I(t) = ∫₀^∞ dx/x · e^x [cosh(2x) cos(4xt) − 1] / [cosh(x) sinh(2x)].

The prefactor 1/(4π) is the published 1/2 of Karbach et al. (who write ∫dω/2π) in this
project's convention; its correctness is tested through the published two-spinon shares of
the total intensity (72.89 %) and of the first moment (71.30 %) (Karbach et al. 1997).

Reduced variables.  With r = ω_L/ω_U = |cos(q/2)| and x = ω/ω_U ∈ [r, 1] the shape depends on
q only through r, and the cumulative weight W(q, ω) = ∫_{ω_L}^{ω} S₂ dω′ written in t is

    W = (√(1 − r²) / 4) ∫_t^∞ e^{−I(t′)} sech²(πt′) / x(t′) dt′,
    x(t)² = r² + (1 − r²) sech²(πt),

free of the inverse-square-root edge; it does not depend on J.  :func:`cumulative_table`
tabulates it once (about 0.5 s, cached) for the exact Gaussian convolution of
:func:`evidence1d.physics.neutron.convolve_cumulative`.

Edges.  Near the upper edge S₂ vanishes as √(ω_U − ω) up to logarithms; near the lower
edge S₂ ∝ √(ln(1/(ω − ω_L))) / √(ω − ω_L); at q = π, S₂ ∝ √(ln(ω_U/ω)) / ω, so S(π) diverges
(Karbach et al. 1997).

References
----------
A. H. Bougourzi, M. Couture & M. Kacir, Phys. Rev. B 54, R12669 (1996).
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997), Eqs. (4)–(6) (from memory for the equation numbers).
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962).
"""
from __future__ import annotations

import functools

import numpy as np
from scipy import integrate, interpolate, special

from ..gauss_rules import gauss_legendre

__all__ = ["I_function", "two_spinon_structure_factor", "two_spinon_cumulative",
           "cumulative_table", "TWO_SPINON_INTENSITY_SHARE", "TWO_SPINON_MOMENT_SHARE"]

#: published share of the two-spinon states in ∫∫ S^zz (Karbach et al., PRB 55, 12510 (1997))
TWO_SPINON_INTENSITY_SHARE = 0.7289
#: published share of the two-spinon states in the first moment (Karbach et al. 1997)
TWO_SPINON_MOMENT_SHARE = 0.7130

_X_TAIL = 18.0                    # I(t): quadrature on [0, X], analytic tail beyond
_T_MIN, _T_MAX = 1e-4, 6.0        # spline range of I(t) in ln t


def _I_quad(t: float) -> float:
    """I(t) by adaptive quadrature on [0, X] plus the tail −2 Ci(4Xt) (the integrand is
    (2/x) cos(4xt) up to O(e^{−2x}) for x > X)."""
    def f(x):
        if x < 1e-6:
            return 1.0 - 4.0 * t * t                     # the limit x → 0
        num = np.cosh(2 * x) * np.cos(4 * x * t) - 1.0
        return np.exp(x) * num / (x * np.cosh(x) * np.sinh(2 * x))
    head, _ = integrate.quad(f, 0.0, _X_TAIL, limit=400, epsabs=1e-11, epsrel=1e-10)
    return head - 2.0 * special.sici(4.0 * _X_TAIL * t)[1]


@functools.lru_cache(maxsize=1)
def _I_spline():
    u = np.linspace(np.log(_T_MIN), np.log(_T_MAX), 140)
    return interpolate.CubicSpline(u, [_I_quad(float(np.exp(v))) for v in u])


def I_function(t) -> np.ndarray:
    """The exponent I(t) of the two-spinon line shape (vectorised).

    Spline in ln t of the quadrature for 1e-4 ≤ t ≤ 6 (error ≲ 3e-5), continued by the
    asymptotes I ≈ 2 ln(1/t) + c₀ for t → 0 and I ≈ −πt − ½ ln t + c_∞ for t → ∞, each
    matched to the spline at the end of its range.

    Parameters
    ----------
    t : array_like
        t ≥ 0 (dimensionless).

    Returns
    -------
    ndarray
        I(t).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997).
    """
    t = np.asarray(t, dtype=float)
    spl = _I_spline()
    out = spl(np.log(np.clip(t, _T_MIN, _T_MAX)))
    big, small = t > _T_MAX, t < _T_MIN
    if np.any(big):
        c = float(spl(np.log(_T_MAX))) + np.pi * _T_MAX + 0.5 * np.log(_T_MAX)
        out = np.where(big, -np.pi * t - 0.5 * np.log(np.maximum(t, 1e-300)) + c, out)
    if np.any(small):
        c0 = float(spl(np.log(_T_MIN))) + 2.0 * np.log(_T_MIN)
        out = np.where(small, c0 - 2.0 * np.log(np.maximum(t, 1e-300)), out)
    return out


def _edges(q, J):
    q = np.asarray(q, dtype=float)
    return 0.5 * np.pi * J * np.abs(np.sin(q)), np.pi * J * np.abs(np.sin(0.5 * q))


def two_spinon_structure_factor(q, omega, J) -> np.ndarray:
    """Exact two-spinon S^zz(q, ω) of the Heisenberg chain per site, in 1/meV, at T = 0.

    Normalised so that ∫ S^zz dω is the two-spinon part of the static structure factor
    (no factor 2π); S^xx = S^yy = S^zz at Δ = 1.

    Parameters
    ----------
    q : array_like
        Chain phase Q_∥ d in radians.
    omega : array_like
        Energy transfer in meV (broadcast against ``q``); zero outside the continuum.
    J : array_like
        Exchange in meV (H = J Σ S_i·S_{i+1}, J > 0), broadcastable.

    Returns
    -------
    ndarray
        S₂^zz(q, ω) in 1/meV.

    References
    ----------
    Bougourzi, Couture & Kacir, PRB 54, R12669 (1996); Karbach et al., PRB 55, 12510 (1997).
    """
    q, omega, J = np.broadcast_arrays(np.asarray(q, float), np.asarray(omega, float),
                                      np.asarray(J, float))
    wl, wu = _edges(q, J)
    inside = (omega > wl) & (omega < wu)
    w = np.where(inside, omega, 0.5 * (wl + wu))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.sqrt((wu - wl) * (wu + wl) / np.maximum((w - wl) * (w + wl), 1e-300))
        t = np.arccosh(np.maximum(ratio, 1.0)) / np.pi
        val = np.exp(-I_function(t)) / (4.0 * np.pi
                                        * np.sqrt(np.maximum((wu - w) * (wu + w), 1e-300)))
    return np.where(inside, val, 0.0)


# ----------------------------------------------------------------- cumulative weight table
_N_T = 160                                   # nodes in t per r (dense near the upper edge)
_GAP_MIN = 2e-7                              # rows reach q = π − 2e-7 (S(π) diverges)


@functools.lru_cache(maxsize=1)
def cumulative_table():
    """W(r, t) and the reduced energies x(r, t) on a fixed (r, t) grid (cached).

    Returns
    -------
    r : ndarray, shape (n_r,)
        r = ω_L/ω_U = cos(q/2) of the rows: q uniform on [0, π − 0.5], then π − q geometric
        down to 2e-7 (W grows like ln²(π − q) towards q = π).
    t : ndarray, shape (n_t,)
        t nodes, decreasing from t_max to 0 (ω increasing from near ω_L to ω_U).
    x : ndarray, shape (n_r, n_t)
        ω/ω_U at each node.
    W : ndarray, shape (n_r, n_t)
        Cumulative weight ∫_{ω_L}^{ω} S₂ dω′ (dimensionless, J-independent), W(x = r) = 0
        is represented by the first node t = t_max (the weight beyond it, ∝ e^{−π t_max},
        is added analytically there).
    m1 : ndarray, shape (n_r,)
        First moment ∫ (ω/ω_U) S₂ dω over the whole continuum (multiply by ω_U for meV).

    References
    ----------
    Karbach et al., PRB 55, 12510 (1997) (the line shape integrated here).
    """
    q_rows = np.concatenate([np.linspace(0.0, np.pi - 0.5, 48)[:-1],
                             np.pi - np.geomspace(0.5, _GAP_MIN, 120)])
    r = np.cos(0.5 * q_rows)
    t_max = 9.0
    u = np.linspace(0.0, 1.0, _N_T)
    t = t_max * (1.0 - u) ** 2                        # dense near t = 0 (upper edge)
    t = np.concatenate([t[:1], t[1:]])
    Ivals = I_function(t)
    sech2 = 1.0 / np.cosh(np.pi * t) ** 2
    x = np.sqrt(r[:, None] ** 2 + (1.0 - r[:, None] ** 2) * sech2[None, :])
    g = np.exp(-Ivals)[None, :] * sech2[None, :] / x        # integrand in t
    pref = 0.25 * np.sqrt(1.0 - r ** 2)[:, None]
    # ∫ from t to t_max (trapezoid on the non-uniform grid; t decreasing along the axis)
    seg = 0.5 * (g[:, 1:] + g[:, :-1]) * (t[:-1] - t[1:])[None, :]
    W = np.concatenate([np.zeros((r.size, 1)), np.cumsum(seg, axis=1)], axis=1)
    # beyond t_max: e^{−I} sech² / x ≈ e^{πt} √t e^{−c} 4 e^{−2πt} / x(t_max)
    c_inf = float(I_function(np.array([t_max]))[0]) + np.pi * t_max + 0.5 * np.log(t_max)
    tail = 4.0 * np.exp(-c_inf) * np.sqrt(t_max) * np.exp(-np.pi * t_max) / np.pi
    W = W + (tail / x[:, :1])
    W = pref * W
    W[:, 0] = pref[:, 0] * tail / x[:, 0]
    # first moment: ∫ x dW
    m1 = np.sum(0.5 * (x[:, 1:] + x[:, :-1]) * np.diff(W, axis=1), axis=1)
    for a in (r, t, x, W, m1):
        a.setflags(write=False)
    return r, t, x, W, m1


def two_spinon_cumulative(q, J):
    """Node energies and cumulative two-spinon weight for each q (for exact convolution).

    Parameters
    ----------
    q : ndarray, shape (n,)
        Chain phase in radians.
    J : ndarray, shape (n_sets, 1)
        Exchange in meV.

    Returns
    -------
    omega : ndarray, shape (n_sets, n, n_t)
        Node energies in meV (increasing along the last axis, from just above ω_L to ω_U).
    W : ndarray, shape (n, n_t)
        Cumulative weight of S₂^zz at the nodes (independent of J).

    Notes
    -----
    W is interpolated linearly in ln(π − q) between the table's rows (q folded into
    [0, π]), which follows the ln² growth of the weight towards q = π (the divergence of
    S(π)); q closer to π than 2e-7 rad takes the last row.

    References
    ----------
    Karbach et al., PRB 55, 12510 (1997).
    """
    rt, tt, _, Wt, _ = cumulative_table()
    q = np.asarray(q, dtype=float)
    # rows are interpolated linearly in z = ln(π − q_red), q_red = 2 arccos r ∈ [0, π]
    z = np.log(np.maximum(np.pi - 2.0 * np.arccos(np.clip(np.abs(np.cos(0.5 * q)), 0, 1)),
                          _GAP_MIN))
    zt = np.log(np.maximum(np.pi - 2.0 * np.arccos(np.clip(rt, 0, 1)), _GAP_MIN))
    j = np.clip(np.searchsorted(-zt, -z) - 1, 0, rt.size - 2)
    f = np.clip((z - zt[j]) / (zt[j + 1] - zt[j]), 0.0, 1.0)[:, None]
    r = np.abs(np.cos(0.5 * q))[:, None]
    sech2 = 1.0 / np.cosh(np.pi * tt[None, :]) ** 2
    x = np.sqrt(r ** 2 + (1.0 - r ** 2) * sech2)          # exact at this q
    W = (1.0 - f) * Wt[j] + f * Wt[j + 1]
    wu = np.pi * np.abs(np.sin(0.5 * q))
    omega = np.asarray(J, dtype=float)[..., None] * (wu[:, None] * x)[None, :, :]
    return omega, W


# ----------------------------------------------------------------- resolution convolution
_N_U = 4096                                   # uniform grid of ln t for the fast exponent
_U_LO, _U_HI = np.log(1e-7), np.log(40.0)


@functools.lru_cache(maxsize=1)
def _minus_I_grid():
    """−I(t) on a uniform grid of u = ln t (cached, read-only)."""
    vals = -I_function(np.exp(np.linspace(_U_LO, _U_HI, _N_U)))
    vals.setflags(write=False)
    return vals


def _exp_minus_I(t):
    """e^{−I(t)} by linear interpolation of −I in ln t (relative error ≲ 1e-5)."""
    vals = _minus_I_grid()
    h = (_U_HI - _U_LO) / (_N_U - 1)
    y = (np.log(np.clip(t, np.exp(_U_LO), np.exp(_U_HI))) - _U_LO) / h
    i = np.clip(y.astype(np.int64), 0, _N_U - 2)
    f = y - i
    return np.exp((1.0 - f) * vals[i] + f * vals[i + 1])


def windowed_weights(E, sigma, omega_l, omega_u, n_nodes=16, n_sigma=6.0, omega_min=0.0):
    """Nodes and weights of ∫ f(ω) S₂(ω) dω over the part of the continuum in E ± n_sigma σ.

    The line shape e^{−I(t)}/(4π√(ω_U² − ω²)) of the exact two-spinon result, placed between
    any lower and upper edges ω_L < ω_U (at Δ = 1 the des Cloizeaux–Pearson edges, where it
    is exact), is integrated with Gauss–Legendre nodes in v, ω² = ω_L² + v², which removes
    the inverse-square-root lower edge (S₂ dω = S₂ (v/ω) dv stays finite); near the upper
    edge S₂ vanishes.  The window is at most 2 n_sigma σ wide, so 16 nodes resolve a Gaussian
    of width σ.

    Parameters
    ----------
    E, sigma : ndarray, shape (n,)
        Window centres and resolution widths in meV.
    omega_l, omega_u : ndarray, shape (k, n)
        Lower and upper edges in meV (ω_U > ω_L ≥ 0).
    n_nodes : int
        Gauss–Legendre nodes per window.
    omega_min : float or ndarray
        Lower cut-off of ω in meV (at q = π the T = 0 line shape ∝ √ln(1/ω)/ω is not
        integrable at ω → 0; callers replace the region below the cut-off).

    Returns
    -------
    omega : ndarray, shape (k, n, n_nodes)
        Node energies in meV.
    weight : ndarray, shape (k, n, n_nodes)
        Weights: Σ weight f(omega) ≈ ∫_window f(ω) S₂(ω) dω, S₂ per site in 1/meV
        normalised as :func:`two_spinon_structure_factor`.

    References
    ----------
    Karbach et al., PRB 55, 12510 (1997); Abramowitz & Stegun (1964), 25.4.29.
    """
    wl, wu = np.broadcast_arrays(np.asarray(omega_l, float), np.asarray(omega_u, float))
    lo = np.maximum(np.maximum(E - n_sigma * sigma, wl), omega_min)
    hi = np.minimum(E + n_sigma * sigma, wu)
    full = (hi > lo)                           # windows that overlap the continuum
    om = np.zeros(wl.shape + (int(n_nodes),))
    weight = np.zeros_like(om)
    if not full.any():
        return om, weight
    wl, wu, lo, hi = wl[full], wu[full], lo[full], hi[full]
    v_lo = np.sqrt(np.maximum((lo - wl) * (lo + wl), 0.0))[:, None]
    v_hi = np.sqrt(np.maximum((hi - wl) * (hi + wl), 0.0))[:, None]
    xg, wg = gauss_legendre(int(n_nodes))
    v = 0.5 * (v_hi - v_lo) * xg + 0.5 * (v_hi + v_lo)
    dv = 0.5 * (v_hi - v_lo) * wg
    wl2, wu2 = wl[:, None], wu[:, None]
    o = np.sqrt(wl2 ** 2 + v ** 2)
    vmax2 = (wu2 - wl2) * (wu2 + wl2)
    # cosh(πt) = √((ω_U² − ω_L²)/v²); ω_U² − ω² = v_max² − v² without cancellation
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.arccosh(np.maximum(np.sqrt(vmax2 / np.maximum(v * v, 1e-300)), 1.0)) / np.pi
        dens = _exp_minus_I(t) / (4.0 * np.pi * np.sqrt(np.maximum(vmax2 - v * v, 1e-300)))
    om[full] = o
    weight[full] = dens * v / o * dv
    return om, weight

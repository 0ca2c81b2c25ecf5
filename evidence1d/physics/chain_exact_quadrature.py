"""Resolution convolution of the exact two-spinon line shape of :mod:`.chain_exact`.

Hamiltonian convention: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0; energies, σ and k_BT in meV.  Every function works on flat arrays of (parameter set,
point) pairs and returns ∫ G_σ(E − ω) S(ω) dω per unit Müller amplitude A.

The density S = R_T D (D the T = 0 or thermal Müller density) has a square-root zero (or, for
continua narrower than k_BT, a step plus a square root) at the upper edge ω_U and, at T = 0,
the singular lower edge ∝ √(ln(1/(ω − ω_L)))/√(ω − ω_L).  Three rules:

* the Karbach variable t, cosh πt = v_max/v (:func:`t_side`, windows reaching within 2σ of
  ω_L): the integrand R D_0 dω/dt = π v_max R sech(πt) tanh(πt)/ω is ∝ t² at the upper edge
  and decays as √t e^{−πt} at the lower one; Gauss–Legendre in t on panels uniform in ω,
  the panel at ω_L cut at 15 % and 1 % of its width (in ω), then at t₁ + 1.3 and t₁ + 4.5,
  t₁ = max(t(1 %), t_L), cosh πt_L = v_max/ω_L (ω ≈ v ≫ ω_L above t_L, where the weight per
  unit t is flat), the weight beyond (e^{−4.5π} of it) put at ω_L;
* ω with a u-rule at the upper edge (:func:`_omega_window`, windows clear of ω_L by 2σ, and
  :func:`signed_side` on the signed axis for σ ≤ 1.25 k_BT): Gauss–Legendre in ω on the
  panels, and on a panel ending at ω_U Gauss–Legendre in u, ω_U − ω ∝ u², exact for a step
  plus a square root times polynomials;
* Gauss–Hermite for windows clear of both edges (:func:`convolve_zero` at T = 0; the thermal
  paths of :mod:`~evidence1d.physics.chain_thermal`, which take R_T as their ``ratio``).

Measured against adaptive quadrature of the model (tests): < 1e-4 of the peak at T = 0, at
T > 0 < 2e-4 for σ/k_BT from 0.05 to 20.

References
----------
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997).
M. Abramowitz & I. A. Stegun, Handbook of Mathematical Functions (1964), 25.4.29, 25.4.46.
"""
from __future__ import annotations

import functools
import math

import numpy as np

from ..gauss_rules import gauss_legendre
from .chain_exact import (_pair_params, _ratio_xy, _ratio_y2, _rho_t, _t_of, _yc2,
                          exact_profile, ratio_fast)
from .chain_thermal import thermal_density
from .neutron import gauss_hermite

__all__ = ["t_side", "convolve_zero", "signed_side", "TOP_CLEAR"]

_N_SIGMA = 6.0
#: Gauss–Hermite paths need the upper edge this many σ beyond the window centre (measured:
#: < 5e-6 of the peak at 4σ for every Hermite tier of the thermal paths)
TOP_CLEAR = 4.5
#: windows this many σ clear of ω_L are integrated in ω (Gauss–Legendre, u-rule at ω_U)
_CLEAR = 2.0
#: extent in t of the last lower-edge sub-panels beyond t₁
_EDGE_SPAN = (1.3, 4.5)
#: fractions of the first panel's width at which a window reaching ω_L is cut
_EDGE_FRACTIONS = np.array([0.15, 0.01])
_CHUNK = 2048


def _t_panels(ta, tb, Es, s, wl, vmax2, kT, sign, thermal, n_nodes):
    """Σ over the t-intervals [ta_k, tb_k] (layout (k, pair)) of the Gauss–Legendre sum of
    G(Es − ω) R_T D dω/dt, D = D_0 [× e^{−ω/k_BT} on the gain side] or D_T(sign ω)."""
    x, w = gauss_legendre(n_nodes)
    half = 0.5 * (tb - ta)                                       # (k, m)
    t = (0.5 * (tb + ta))[:, None, :] + half[:, None, :] * x[None, :, None]   # (k, n, m)
    e = np.exp(t * (-2.0 * math.pi))
    d = 1.0 + e
    np.reciprocal(d, out=d)                                      # 1/(1 + e)
    sech = np.sqrt(e)
    sech *= 2.0
    sech *= d                                                    # sech(πt)
    th = 1.0 - e
    th *= d                                                      # tanh(πt)
    x2 = sech * sech
    vmax = np.sqrt(vmax2)
    om = x2 * vmax2
    om += wl * wl
    np.sqrt(om, out=om)
    if np.all(kT > 0):
        f = _ratio_y2(x2.copy(), _pair_params(wl, np.sqrt(wl * wl + vmax2), kT))
    else:
        f = _rho_t(t)
    jac = sech * th                                              # D_0 dω/dt
    jac *= math.pi * vmax
    jac /= om
    f *= jac
    if thermal:
        f *= thermal_density(sign * om, wl, kT)
        f *= vmax * sech
    elif sign < 0:
        f *= np.exp(-om / kT)
    _gauss_times(f, Es, om, s)
    f *= w[:, None]
    return np.einsum("knm,km->m", f, half)


def _gauss_times(f, E, om, s):
    """f *= exp(−(E − ω)²/2σ²) in place, with one temporary array (nodes ``om``)."""
    g = E - om
    g /= s
    g *= g
    g *= -0.5
    np.exp(g, out=g)
    f *= g


def t_side(Es, s, wl, top, kT, sign=1.0, thermal=False, n_nodes=6, n_panels=3):
    """∫ G_σ(Es − ω) R_T(ω) D(ω) dω over [ω_L, ω_U] ∩ [Es − 6σ, Es + 6σ], flat arrays.

    D is the T = 0 Müller density 1/√(ω² − ω_L²) (times e^{−ω/k_BT} for ``sign`` < 0, the
    energy-gain side at Es = −E), or with ``thermal`` the thermal density D_T(sign ω) of
    :mod:`evidence1d.physics.chain_thermal` (windows clear of the thermal edge).  R_T D is
    the exact profile (:func:`~evidence1d.physics.chain_exact.profile_ratio`).  Windows
    clear of ω_L by 2σ: :func:`_omega_window`; the others are extended down to ω_L and
    integrated in the Karbach variable t (cosh πt = v_max/v) on ``n_panels`` panels uniform
    in ω, the first one cut as the module docstring says (:func:`_window`).

    Parameters
    ----------
    Es, s, wl, top : ndarray, shape (m,)
        Energy (meV; −E on the gain side), resolution σ, lower edge ω_L (> 0) and upper
        edge ω_U in meV.
    kT : ndarray, shape (m,)
        k_BT in meV (all 0 for T = 0, else all > 0).
    sign : float
        +1 (loss side) or −1 (gain side).
    thermal : bool
        Use D_T instead of D_0.
    n_nodes, n_panels : int
        Gauss–Legendre nodes per interval and panels per window.

    Returns
    -------
    ndarray, shape (m,)
        In 1/meV per unit Müller amplitude.

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Abramowitz & Stegun 25.4.29.
    """
    out = np.zeros(Es.size)
    clear = Es - _N_SIGMA * s >= wl + _CLEAR * s
    lo = np.where(clear, Es - _N_SIGMA * s, wl)       # other windows reach down to ω_L
    hi = np.minimum(top, Es + _N_SIGMA * s)
    live = hi > lo
    frac = np.linspace(0.0, 1.0, n_panels + 1)[:, None]
    for group, is_clear in ((np.flatnonzero(live & ~clear), False),
                            (np.flatnonzero(live & clear), True)):
        for start in range(0, group.size, _CHUNK):
            j = group[start:start + _CHUNK]
            if is_clear:
                out[j] = _omega_window(Es[j], s[j], wl[j], top[j], kT[j], lo[j], hi[j], frac,
                                       sign, thermal, n_nodes)
            else:
                out[j] = _window(Es[j], s[j], wl[j], top[j], kT[j], hi[j], frac, sign,
                                 thermal, n_nodes)
    return out / (math.sqrt(2.0 * math.pi) * s)


@functools.lru_cache(maxsize=None)
def _top_rule(n):
    """Nodes ξ ∈ (−1, 1) and weights of ∫_{−1}^{1} f dξ for f = c + √(1 − ξ) h, c, h smooth:
    Gauss–Legendre in u ∈ (0, 1) with 1 − ξ = 2u² (dξ = −4u du), exact for polynomials of
    degree < 2n in u."""
    x, w = gauss_legendre(n)
    u = 0.5 * (x + 1.0)
    xi = 1.0 - 2.0 * u * u
    wt = 2.0 * u * w                       # 4u du with du = dx/2
    xi.setflags(write=False)
    wt.setflags(write=False)
    return xi, wt


def _omega_window(Es, s, wl, top, kT, lo, hi, frac, sign, thermal, n_nodes):
    """Windows clear of ω_L by 2σ: Gauss–Legendre in ω on the panels; a last panel that
    ends at ω_U in u, ω_U − ω ∝ u² (the profile has a square-root zero there, or at T > 0
    a step plus a square root); unnormalised."""
    vmax2 = (top - wl) * (top + wl)
    xg, wg = gauss_legendre(n_nodes)
    xj, wj = _top_rule(n_nodes + 2)
    n_p = frac.shape[0] - 1
    a = lo + (hi - lo) * frac[:-1]                                   # (P, m)
    half = (0.5 / n_p) * (hi - lo)                                   # (m,)
    at_top = hi >= top
    om_in = a[:-1, None, :] + half * (1.0 + xg[None, :, None])        # (P − 1, n, m)
    om_top = a[-1] + half * (1.0 + np.where(at_top, xj[:, None], 0.0))
    w_top = np.where(at_top, wj[:, None], 0.0)
    if not at_top.all():                   # last panel below ω_U: Gauss–Legendre, 2 idle
        k = ~at_top
        om_top[:n_nodes, k] = a[-1, k] + half[k] * (1.0 + xg[:, None])
        w_top[:n_nodes, k] = wg[:, None]
        w_top[n_nodes:, k] = 0.0
        om_top[n_nodes:, k] = om_top[0, k]
    om = np.concatenate([om_in.reshape(-1, Es.size), om_top], axis=0)   # (nodes, m)
    wn = np.concatenate([np.broadcast_to(np.tile(wg, n_p - 1)[:, None],
                                         ((n_p - 1) * n_nodes, Es.size)), w_top], axis=0)
    x = (om - wl) * (om + wl)
    omx = (top - om) * (top + om)
    if thermal:
        f = thermal_density(sign * om, wl, kT)
    else:
        f = 1.0 / np.sqrt(x)
        if sign < 0:
            f *= np.exp(-om / kT)
    if np.all(kT > 0):
        f *= ratio_fast(om, wl, top, kT)
    else:
        x /= vmax2
        omx /= vmax2
        f *= _ratio_xy(x, omx)
    _gauss_times(f, Es, om, s)
    f *= wn
    return half * f.sum(axis=0)


def _window(Es, s, wl, top, kT, hi, frac, sign, thermal, n_nodes):
    """Windows [ω_L, hi] in t (see :func:`t_side`), unnormalised."""
    vmax2 = (top - wl) * (top + wl)
    om_b = wl + (hi - wl) * frac                                  # (P + 1, m), increasing
    x = (om_b - wl) * (om_b + wl) / vmax2
    omx = (top - om_b) * (top + om_b) / vmax2
    tb = np.where(omx > 0, _t_of(np.maximum(x, 1e-300), np.maximum(omx, 1e-300)), 0.0)
    # the first panel: cut at ω_L + p φ for the fractions φ of its width p, then from the
    # last of those to t₁ + 1.3 (covering the flat part up to t_L, where ω ≈ v ≫ ω_L and
    # the weight per unit t is ∝ √t) and on to t₁ + 4.5
    p = om_b[1] - wl
    om_f = wl + p * _EDGE_FRACTIONS[:, None]
    xf = (om_f - wl) * (om_f + wl) / vmax2
    tf = _t_of(xf, (top - om_f) * (top + om_f) / vmax2)
    tL = np.arccosh(np.maximum(np.sqrt(vmax2) / wl, 1.0)) / math.pi
    t1 = np.maximum(tf[-1], tL)
    cuts = np.concatenate([tb[1:2], tf, (t1 + _EDGE_SPAN[0])[None],
                           (t1 + _EDGE_SPAN[1])[None]], axis=0)
    ta = np.concatenate([tb[2:], cuts[:-1]], axis=0)              # t decreases with ω
    tbb = np.concatenate([tb[1:-1], cuts[1:]], axis=0)
    val = 0.0
    if not thermal:
        # weight beyond the last cut, put at ω_L: R ≈ R(t_end), D_0 dω/dt ≈
        # 2π v_max e^{−πt}/ω_L (with D_T, finite at ω_L, it falls as e^{−3πt}: left out)
        t_end = cuts[-1]
        e2 = np.exp(-2.0 * math.pi * t_end)
        if np.all(kT > 0):
            r_end = _ratio_xy(4.0 * e2 / (1.0 + e2) ** 2, ((1.0 - e2) / (1.0 + e2)) ** 2,
                              _yc2(wl, vmax2, kT))
        else:
            r_end = _rho_t(t_end)
        tail = r_end * 2.0 * np.sqrt(vmax2 * e2) / wl
        if sign < 0:
            tail *= np.exp(-wl / kT)
        val = tail * np.exp(-0.5 * ((Es - wl) / s) ** 2)
    return val + _t_panels(ta, tbb, Es, s, wl, vmax2, kT, sign, thermal, n_nodes)


def convolve_zero(E, s, wl, top, A, n_nodes=6, n_panels=3, smooth=True):
    """T = 0 exact-profile sheet A R(ω)/√(ω² − ω_L²) on [ω_L, ω_U], convolved; flat arrays.

    Windows clear of ω_L by 6σ and of ω_U by 4.5σ: Gauss–Hermite (4 nodes; measured < 3e-6
    of the peak against the t-rule with 16 × 8 nodes) on the analytic density; the others
    (all with ``smooth`` False): :func:`t_side`.

    Parameters
    ----------
    E, s, wl, top, A : ndarray, shape (m,)
        Energy transfer, σ, ω_L (floored), ω_U (meV) and the Müller amplitude A.
    n_nodes, n_panels : int
        Settings of :func:`t_side`.
    smooth : bool
        Allow the Gauss–Hermite path.

    Returns
    -------
    ndarray, shape (m,)
        S in 1/meV.

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Abramowitz & Stegun 25.4.46.
    """
    out = np.zeros(E.size)
    valid = A > 0
    lo = E - _N_SIGMA * s
    active = valid & (top > lo) & (E + _N_SIGMA * s > wl)
    if smooth:
        easy = active & (lo >= wl) & (E + TOP_CLEAR * s <= top)
        ix = np.flatnonzero(easy)
        if ix.size:
            z, w = gauss_hermite(4)
            for start in range(0, ix.size, _CHUNK):
                j = ix[start:start + _CHUNK]
                om = E[j] + s[j] * z[:, None]
                out[j] = A[j] * (w @ exact_profile(om, wl[j], top[j]))
        active &= ~easy
    ix = np.flatnonzero(active)
    if ix.size:
        out[ix] = A[ix] * t_side(E[ix], s[ix], wl[ix], top[ix], np.zeros(ix.size), 1.0,
                                 False, n_nodes, n_panels)
    return out


def signed_side(E, s, wl, top, kT, n_nodes=7, n_panels=2, n_sigma=4.5):
    """∫ G_σ(E − ω) R_T(ω) D_T(ω) dω over [−ω_U, ω_U], for σ ≲ k_BT; flat arrays, T > 0.

    R_T D_T is analytic on the signed axis within about k_BT of it (the thermal edge and the
    floor of R_T; S(−ω) = e^{−ω/k_BT} S(ω)) except at ±ω_U, where R_T has a square-root zero
    (plus a step of height b D_T for continua narrower than k_BT): Gauss–Legendre in ω on
    ``n_panels`` panels of the window E ± ``n_sigma`` σ, and a panel ending at ω_U (starting
    at −ω_U) in u, ω_U ∓ ω ∝ u² (:func:`_top_rule`, ``n_nodes`` + 2 nodes).  With the
    defaults (Gaussian weight outside the window 7e-6) the error measured against adaptive
    quadrature is < 3e-5 of the peak for σ ≤ 1.25 k_BT; wider windows (up to 3.2 k_BT)
    take 3 to 5 panels (:mod:`evidence1d.physics.chain_spectrum`).

    Parameters
    ----------
    E, s, wl, top, kT : ndarray, shape (m,)
        Energy transfer, σ, ω_L, ω_U and k_BT (> 0), all in meV.
    n_nodes, n_panels : int
        Quadrature settings (``n_panels`` ≥ 2).
    n_sigma : float
        Half-width of the window in σ.

    Returns
    -------
    ndarray, shape (m,)
        In 1/meV per unit Müller amplitude.

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Schulz, Phys. Rev. B 34, 6372 (1986)
    (from memory); Abramowitz & Stegun 25.4.29.
    """
    out = np.zeros(E.size)
    lo = np.maximum(E - n_sigma * s, -top)
    hi = np.minimum(E + n_sigma * s, top)
    live = hi > lo
    edge = live & ((hi >= top) | (lo <= -top))
    xg, wg = gauss_legendre(n_nodes)
    xt, wt = _top_rule(n_nodes + 2)
    n_p = max(int(n_panels), 2)
    frac = np.linspace(0.0, 1.0, n_p + 1)[:, None]
    # windows clear of ±ω_U: Gauss–Legendre on every panel; windows that meet them: the first
    # and last panels take the top rule where they meet ∓ω_U (ξ → −ξ for the first), else
    # Gauss–Legendre with two idle nodes
    for ix, at_edge in ((np.flatnonzero(live & ~edge), False), (np.flatnonzero(edge), True)):
        for start in range(0, ix.size, _CHUNK):
            j = ix[start:start + _CHUNK]
            Ej, sj, wlj, topj, kTj, loj, hij = E[j], s[j], wl[j], top[j], kT[j], lo[j], hi[j]
            a = loj + (hij - loj) * frac[:-1]                              # (P, m)
            half = (0.5 / n_p) * (hij - loj)
            if at_edge:
                up, down = hij >= topj, loj <= -topj
                xg2 = np.concatenate([xg, np.zeros(2)])[:, None]
                wg2 = np.concatenate([wg, np.zeros(2)])[:, None]
                x_last = np.where(up, xt[:, None], xg2)
                w_last = np.where(up, wt[:, None], wg2)
                x_first = np.where(down, -xt[:, None], xg2)
                w_first = np.where(down, wt[:, None], wg2)
                om = np.concatenate([a[0] + half * (1.0 + x_first),
                                     (a[1:-1, None, :] + half * (1.0 + xg[None, :, None])
                                      ).reshape(-1, j.size),
                                     a[-1] + half * (1.0 + x_last)], axis=0)
                w = np.concatenate([w_first,
                                    np.broadcast_to(np.tile(wg, n_p - 2)[:, None],
                                                    ((n_p - 2) * n_nodes, j.size)),
                                    w_last], axis=0)
            else:
                om = (a[:, None, :] + half * (1.0 + xg[None, :, None])).reshape(-1, j.size)
                w = np.tile(wg, n_p)[:, None]
            f = thermal_density(om, wlj, kTj)
            f *= ratio_fast(om, wlj, topj, kTj)
            _gauss_times(f, Ej, om, sj)
            f *= w
            out[j] = half * f.sum(axis=0) / (math.sqrt(2.0 * math.pi) * sj)
    return out

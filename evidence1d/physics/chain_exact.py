"""The exact two-spinon line shape placed between the XXZ continuum edges, at any temperature.

Hamiltonian convention: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0 antiferromagnetic; energies and k_BT in meV.

Profile.  At Δ = 1 the two-spinon part of S^zz(q, ω) is e^{−I(t)}/(4π√(ω_U² − ω²)) with
cosh(πt) = √((ω_U² − ω_L²)/(ω² − ω_L²)) (Bougourzi, Couture & Kacir 1996; Karbach et al.
1997; :mod:`evidence1d.physics.two_spinon`).  Written with v² = ω² − ω_L²,
v_max² = ω_U² − ω_L² and y = v/v_max = sech(πt), it is the Müller shape 1/√(ω² − ω_L²) times

    R(t) = e^{−I(t)} / (K₁ sinh(πt)),      K₁ = π ∫₀^∞ e^{−I(t)} sech²(πt) dt = 1.68521,

a function of y alone; since ω dω = v dv, ∫ ω R/√(ω² − ω_L²) dω = v_max ∫₀¹ R dy = v_max for
any edges, the first moment of the Müller shape A/√(ω² − ω_L²).  The spinon family's exact
line shape is therefore S = A(q) R/√(ω² − ω_L²) = (A/K₁) e^{−I(t)}/√(ω_U² − ω²) with the
Müller amplitude A(q) of the exact first moment (:mod:`evidence1d.physics.chain`).  At
Δ = 1, where A v_max = −2J e₀ (1 − cos q) and v_max = (πJ/2)(1 − cos q), this is 3 S₂^zz/s₂
with s₂ = 3K₁/(16(ln 2 − 1/4)) = 0.71303 the two-spinon share of the first moment (71.30 %,
Karbach et al. 1997), the same at every q: the weight of four and more spinons is assumed
to follow the two-spinon shape at each q.  For Δ ≠ 1 the Δ = 1 profile is placed between
the exact edges of the XXZ chain: an approximation, exact only at Δ = 1.  R vanishes as
√(ω_U − ω) at the upper edge (no step) and grows as √t ∝ √(ln(1/(ω − ω_L))) at the lower.

Finite temperature (S = χ''(n + 1)/π as in every family).  The thermal Müller density D_T
of :mod:`evidence1d.physics.chain_thermal` (the T = 0 edge dressed by the conformal form on
the scale k_BT) is multiplied by R_T: R with x = y² replaced by a smooth floor,

    y_eff² = F(x)/F(1),   F(x) = y_c² + ½[(x − y_c²) + √((x − y_c²)² + 4κ²)],  κ = 3y_c²/2,
    y_c² = c k_BT (2ω_L + c k_BT)/v_max²,   c = 1,

i.e. ω clamped smoothly at about ω_L + c k_BT (F → y_c² below, F → x + 9y_c⁴/4x above): the
logarithmic enhancement of the exact shape is cut off at the thermal scale, and y_eff = 1,
R_T = 0 at the upper edge as at T = 0.  Where the continuum is narrower than k_BT (y_c ≳ 1,
q near 0) the profile is blended towards the Müller shape, R_T = (1 − b) R(y_eff) + b,
b = y_c⁶/(1 + y_c⁶), so that R_T stays of order one there.  R_T depends on ω through ω²
only, so S(q, −ω) = e^{−ω/k_BT} S(q, ω) holds exactly; the branch points of F lie a distance
~3c k_BT from the real axis, comparable with the poles of D_T (πk_BT), so the Gauss–Hermite
rules of the thermal convolution stay valid.  As T → 0, R_T → R for ω − ω_L ≫ k_BT; the
weight moved within ~k_BT of the edge makes the spectrum approach its T = 0 form as √T.
The construction is exact in no limit but T → 0 (a stated approximation of the model card).

The resolution convolution of this line shape is in
:mod:`evidence1d.physics.chain_exact_quadrature`.

References
----------
A. H. Bougourzi, M. Couture & M. Kacir, Phys. Rev. B 54, R12669 (1996).
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997).
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981).
H. J. Schulz, Phys. Rev. B 34, 6372 (1986) (finite-temperature form; from memory).
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy import integrate

from .two_spinon import I_function

__all__ = ["profile_constant", "profile_ratio", "exact_profile", "ratio_fast"]

#: the lower-edge enhancement is cut off at ω − ω_L ≈ c k_BT
_C_EDGE = 1.0
#: half-width of the smooth floor's corner, in units of y_c² (κ = 3/2 y_c²)
_KAPPA = 1.5
_T_STEP, _T_TOP = 1e-3, 16.0                 # table of R on a uniform grid of t


@functools.lru_cache(maxsize=1)
def profile_constant() -> float:
    """K₁ = π ∫₀^∞ e^{−I(t)} sech²(πt) dt (first moment of the profile over √(ω_U² − ω_L²)).

    Returns
    -------
    float
        K₁ (dimensionless), 1.68521; 3K₁/(16(ln 2 − 1/4)) is the two-spinon share of the
        first moment of the Heisenberg chain (71.30 %, Karbach et al. 1997).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997).
    """
    def f(t):
        return math.exp(-float(I_function(np.array([t]))[0])) / math.cosh(math.pi * t) ** 2
    head = integrate.quad(f, 0.0, 2.0, limit=200, epsabs=1e-13, epsrel=1e-11)[0]
    tail = integrate.quad(f, 2.0, 40.0, limit=200, epsabs=1e-15, epsrel=1e-11)[0]
    return math.pi * (head + tail)


@functools.lru_cache(maxsize=1)
def _rho_table():
    """R(t) on t = 0, 1e-3, …, 16 and its forward differences (read only).

    Linear interpolation errs by < 2.1e-6 of R (measured against the spline of I(t), whose
    own error is ≲ 3e-5 in I); beyond t = 16 (weight e^{−16π}) R is held."""
    t = _T_STEP * np.arange(int(round(_T_TOP / _T_STEP)) + 1)
    tt = np.maximum(t, 1e-12)
    r = np.exp(-I_function(tt)) / (profile_constant() * np.sinh(np.pi * tt))
    r[0] = 0.0
    dr = np.diff(r, append=r[-1])
    for a in (r, dr):
        a.setflags(write=False)
    return r, dr


def _rho_t(t):
    """R(t) = e^{−I(t)}/(K₁ sinh πt) from the table of :func:`_rho_table`."""
    r, dr = _rho_table()
    u = np.minimum(np.asarray(t, dtype=float), _T_TOP) * (1.0 / _T_STEP)
    i = u.astype(np.intp)
    u -= i
    out = dr[i]
    out *= u
    out += r[i]
    return out


def _t_of(x, omx):
    """t with y² = sech²(πt) = x and 1 − x = tanh²(πt) = omx (x, omx in (0, 1]):
    2πt = ln((1 + s)/(1 − s)) = ln(1 + 2s(1 + s)/x), s = √omx (1 − s = x/(1 + s))."""
    s = np.sqrt(omx)
    t = s + 1.0
    t *= s
    t *= 2.0
    t /= np.maximum(x, 1e-300)
    np.log1p(t, out=t)
    t *= 0.5 / math.pi
    return t


def _floor_y2(x, omx, yc2):
    """(y_eff², 1 − y_eff²) of the smooth floor F(x)/F(1),
    F(x) = y_c² + ½[(x − y_c²) + √((x − y_c²)² + 4κ²)], κ = 3y_c²/2, with
    F(1) − F(x) = ½(1 − x)[1 + (1 + x − 2y_c²)/(√B(1) + √B(x))] free of cancellation."""
    k2 = (2.0 * _KAPPA) ** 2 * yc2 * yc2
    a = x - yc2
    rb = np.sqrt(a * a + k2)
    r1 = np.sqrt((1.0 - yc2) ** 2 + k2)
    f1 = yc2 + 0.5 * (1.0 - yc2 + r1)
    y2 = a + rb
    y2 *= 0.5
    y2 += yc2
    y2 /= f1
    d = 1.0 + x - 2.0 * yc2
    d /= rb + r1
    d += 1.0
    d *= omx
    d *= 0.5 / f1
    return y2, d


def _yc2(wl, vmax2, kT):
    """Floor y_c² = c k_BT (2ω_L + c k_BT)/v_max²."""
    ck = _C_EDGE * kT
    return ck * (2.0 * wl + ck) / vmax2


def _ratio_xy(x, omx, yc2=None):
    """R_T from y² = x and 1 − y² = omx; 0 at and beyond the upper edge (omx ≤ 0) and, at
    T = 0 (``yc2`` None), below the lower edge."""
    if yc2 is None:
        ok = (omx > 0) & (x > 0)
        t = _t_of(np.where(ok, x, 0.5), np.where(ok, omx, 0.5))
        return np.where(ok, _rho_t(t), 0.0)
    ok = omx > 0
    x, omx = _floor_y2(x, np.where(ok, omx, 0.0), yc2)
    b = yc2 ** 3
    b /= 1.0 + b                             # → the Müller shape when k_BT ≫ the width
    out = _rho_t(_t_of(x, omx))
    out *= 1.0 - b
    out += b
    return np.where(ok, out, 0.0)


def _pair_params(wl, top, kT):
    """Per-pair constants of R_T at k_BT > 0: ω_L², 1/v_max², y_c², 4κ², √B(1), 1/2F(1), b."""
    vmax2 = (top - wl) * (top + wl)
    yc2 = _yc2(wl, vmax2, kT)
    k2 = (2.0 * _KAPPA) ** 2 * yc2 * yc2
    r1 = np.sqrt((1.0 - yc2) ** 2 + k2)
    half_f1 = 0.5 / (yc2 + 0.5 * (1.0 - yc2 + r1))
    b = yc2 ** 3
    b /= 1.0 + b
    return wl * wl, 1.0 / vmax2, yc2, k2, r1, half_f1, b


def _ratio_nodes(om, pp):
    """R_T at quadrature nodes ``om`` (|ω| ≤ ω_U; shape (…, m)) from :func:`_pair_params`:
    the floor of :func:`_floor_y2`, :func:`_t_of` and the blend, computed in place."""
    x = om * om
    x -= pp[0]
    x *= pp[1]                                    # y²
    return _ratio_y2(x, pp)


def _ratio_y2(x, pp):
    """R_T from y² = ``x`` (an array it overwrites) and :func:`_pair_params`."""
    _, _, yc2, k2, r1, half_f1, b = pp
    omx = 1.0 - x
    np.maximum(omx, 0.0, out=omx)
    a = x - yc2
    rb = a * a
    rb += k2
    np.sqrt(rb, out=rb)
    y2 = a + rb
    y2 += 2.0 * yc2
    y2 *= half_f1                                 # y_eff²
    d = x - 2.0 * yc2
    d += 1.0
    rb += r1
    d /= rb
    d += 1.0
    d *= omx
    d *= half_f1                                  # 1 − y_eff²
    out = _rho_t(_t_of(y2, d))
    out *= 1.0 - b
    out += b
    return out


def ratio_fast(omega, wl, top, kT):
    """R_T(ω) of :func:`profile_ratio` for |ω| ≤ ω_U and k_BT > 0, without its checks.

    The ``ratio`` the thermal convolution paths multiply into the density at their nodes.

    Parameters
    ----------
    omega, wl, top, kT : ndarray
        Energy transfer, floored lower edge ω_L, upper edge ω_U and k_BT, all in meV
        (broadcastable; k_BT > 0).

    Returns
    -------
    ndarray
        R_T (dimensionless).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997) (the exact two-spinon profile).
    """
    return _ratio_nodes(omega, _pair_params(wl, top, kT))


def profile_ratio(omega, wl, top, kT):
    """R_T(ω): the exact two-spinon profile over the Müller shape, on the signed axis.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0.  S_exact = A R_T(ω) D_T(ω), D_T the
    thermal Müller density per unit amplitude (:func:`~evidence1d.physics.chain_thermal.
    thermal_density`; 1/√(ω² − ω_L²) at T = 0).  Even in ω; 0 for |ω| ≥ ω_U.

    Parameters
    ----------
    omega : array_like
        Energy transfer in meV (any sign).
    wl, top : array_like
        Lower edge ω_L (floored, > 0) and upper edge ω_U of the sheet in meV.
    kT : array_like
        k_BT in meV (≥ 0); 0 gives the T = 0 ratio e^{−I(t)}/(K₁ sinh πt) (0 below ω_L).

    Returns
    -------
    ndarray
        R_T (dimensionless).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Müller et al., Phys. Rev. B 24, 1429
    (1981).
    """
    w, wl, top, kT = np.broadcast_arrays(*(np.asarray(a, dtype=float)
                                           for a in (omega, wl, top, kT)))
    if w.ndim == 0:
        return profile_ratio(w[None], wl[None], top[None], kT[None])[0]
    a = np.abs(w)
    vmax2 = (top - wl) * (top + wl)
    safe = np.where(vmax2 > 0, vmax2, 1.0)
    x = (a - wl) * (a + wl) / safe
    omx = (top - a) * (top + a) / safe
    hot = kT > 0
    out = np.zeros(w.shape)
    if hot.any():
        out = np.where(hot, _ratio_xy(x, omx, np.where(hot, _yc2(wl, safe, kT), 1.0)), out)
    if (~hot).any():
        out = np.where(hot, out, _ratio_xy(x, omx))
    return np.where(vmax2 > 0, out, 0.0)


def exact_profile(omega, wl, top):
    """T = 0 exact-profile density per unit Müller amplitude, R(ω)/√(ω² − ω_L²) on (ω_L, ω_U).

    Equal to e^{−I(t)}/(K₁ √(ω_U² − ω²)); ∫ ω (…) dω = √(ω_U² − ω_L²) (the Müller first
    moment per unit amplitude).

    Parameters
    ----------
    omega : array_like
        Energy transfer in meV.
    wl, top : array_like
        Lower edge ω_L (> 0) and upper edge ω_U in meV.

    Returns
    -------
    ndarray
        In 1/meV; 0 outside (ω_L, ω_U).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997).
    """
    w, wl, top = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (omega, wl, top)))
    inside = (w > wl) & (w < top)
    v2 = np.where(inside, (w - wl) * (w + wl), 1.0)
    return np.where(inside, profile_ratio(w, wl, top, 0.0) / np.sqrt(v2), 0.0)

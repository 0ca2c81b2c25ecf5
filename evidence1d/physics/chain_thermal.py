"""Finite-temperature two-spinon spectrum: the thermal Müller shape and its resolution convolution.

Convention (the same in every family): S(q, ω) = χ''(q, ω) [n(ω) + 1] / π with
n(ω) = 1/(e^{ω/k_BT} − 1), so that S(q, −ω) = e^{−ω/k_BT} S(q, ω) (detailed balance).
At T = 0 the chain's response is the Müller shape, χ''_0(q, ω) = π A(q) sign(ω)
Θ(|ω| − ω_L) / √(ω² − ω_L²) for |ω| ≤ ω_T (:mod:`evidence1d.physics.chain`).

At T > 0 the inverse-square-root edge is dressed by the finite-temperature form of a
conformal (Luttinger-liquid) correlator with the same edge exponent, conformal weight
h = h̄ = 1/4 (the staggered spin correlator of the Heisenberg chain, whose T = 0 form
near q = π is exactly 1/√(ω² − v²k²)):

    χ''_T(q, ω) = π A(q) Im[ρ(x₋) ρ(x₊)] / τ,   ρ(x) = Γ(1/4 − ix) / Γ(3/4 − ix),
    x± = (ω ± ω_L) / τ,   τ = 4π k_BT,

(Schulz 1986; Bocquet, Essler, Tsvelik & Gogolin 2001; from memory) for |ω| ≤ ω_T.  Since
ρ(x) → (−ix)^{−1/2} for |x| → ∞, χ''_T → χ''_0 for T → 0 at fixed ω (corrections
(π k_BT / 2(ω − ω_L))² above the edge, e^{−(ω_L − |ω|)/2k_BT} below it), so the shape
is the T = 0 continuum a few tens of k_BT away from ω_L, and near q = π (ω_L ≲ k_BT) it
is the finite-temperature form: χ''_T ∝ ω/T at ω → 0 and S(q, 0) finite, instead of the
k_BT/ω divergence of the T = 0 shape times n + 1.  S_T = A Im[ρρ] / (τ (1 − e^{−ω/k_BT}))
is analytic in the strip |Im ω| < π k_BT (poles of ρ at x = −i(n + 1/4), of n at 2πi k_BT m).

The form is applied for every Δ and every q: near q = π (and q = 0 for Δ < 1) it is the
low-energy field theory of the gapless chain (Δ = 1 up to logarithms; for Δ ≠ 1 the true
exponents differ, as the T = 0 Müller shape's do); elsewhere and for the gapped chain it
is a thermal rounding of the edge on the scale k_BT, exact in no limit but continuous and
negligible for k_BT ≪ σ.  For k_BT ≳ J it is not a model of the paramagnetic chain (the
spectrum falls as J/k_BT while the true S(q) tends to 1/4 per component).

Evaluation.  By the reflection formula, ρ(x) = |Γ(1/4 + ix)|² (cosh πx + i sinh πx)/(π√2),
so S_T/A = Φ_T (n + 1) = g(|x₋|) g(|x₊|) e^{2π[min(0, x₋) + min(0, x₊)]}/(4π²τ) with
g(y) = |Γ(1/4 + iy)|² e^{πy}: positive, exactly detailed-balanced, no cancellation.  g is
tabulated on 0 ≤ y ≤ 3 (linear interpolation, error < 3e-7) and taken from its Stirling
series 2π y^{−1/2} e^{R(y)} beyond (error < 3e-8).

Resolution convolution (Gaussian of width σ), on flat arrays of (parameter set, point)
pairs:
* σ ≤ 1.25 k_BT: Gauss–Hermite on the signed energy axis (S_T is analytic over the
  window), 5 to 16 nodes by σ/k_BT, cut at ±ω_T through the Hermite expansion;
* σ > 1.25 k_BT, per side: windows clear of the thermal zone (x₋ ≥ 2 by 6σ) take
  Gauss–Hermite on S_T (the energy-gain side through the shifted Gaussian); the others
  take the T = 0 edge path of :mod:`~evidence1d.physics.chain_spectrum` (Boltzmann factor
  on the gain side) plus the thermal correction S_T − S_old integrated on panels from
  ω_L − 20 k_BT to ω_L + 1260 k_BT (:func:`_correction`), so that the result tends to the
  T = 0 one as k_BT/σ → 0.
Measured against adaptive quadrature of the model (scipy.integrate.quad, tests): about
5e-5 of the peak on the Hermite path, up to 1e-3 on the edge path (where the T = 0 path
itself errs by up to 5e-4).

References
----------
H. J. Schulz, Phys. Rev. B 34, 6372 (1986) (finite-temperature correlations of the spin
chain by conformal mapping; from memory).
M. Bocquet, F. H. L. Essler, A. M. Tsvelik & A. O. Gogolin, Phys. Rev. B 64, 094425 (2001)
(χ(ω, k) ∝ ρ(x₋)ρ(x₊) with ρ = Γ(h − ix)/Γ(1 − h − ix); from memory).
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981).
M. Abramowitz & I. A. Stegun, Handbook of Mathematical Functions (1964), 6.1.47
(asymptotic ratio of Gamma functions), 22.8.8, 25.4.29, 25.4.46.
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy import special

from ..gauss_rules import gauss_legendre
from .neutron import convolve_cumulative, hermite_expansion_rule

__all__ = ["thermal_shape", "thermal_density", "convolve_thermal", "HERMITE_TIERS"]

_X_ASYM = 3.0           # |x| from which g comes from its asymptotic series
_G_STEP = 2.5e-4        # table step of g(y) = |Γ(1/4 + iy)|² e^{πy} on 0 ≤ y ≤ _X_ASYM
#: ln[|Γ(1/4 + ix)|² e^{π|x|} |x|^{1/2} / 2π] = Σ_k c_k / x^{2k} (up to e^{−4π|x|}),
#: c_k = (−1)^{k+1} 2 B_{2k+1}(1/4) / (2k (2k + 1))
#: with B_n the Bernoulli polynomials (A&S 6.1.47); error 3e-8 at |x| = 3 with five terms
_R_COEF = (1.0 / 64.0, 5.0 / 2048.0, 61.0 / 49152.0, 1385.0 / 1048576.0, 50521.0 / 20971520.0)
_CHUNK = 4096
_N_SIGMA = 6.0
#: Gauss–Hermite nodes on the signed axis by σ/k_BT: error < 6e-5 of the peak (measured
#: against adaptive quadrature over the default priors, tests)
HERMITE_TIERS = ((5, 0.4), (6, 0.5), (8, 0.7), (12, 1.0), (16, 1.25))
#: with a ratio vanishing at ±ω_T, Gauss–Hermite needs the window centre this many σ inside
_TOP_CLEAR = 4.5


# ----------------------------------------------------------------------------- shape
@functools.lru_cache(maxsize=1)
def _g_table():
    """g(y) = |Γ(1/4 + iy)|² e^{πy} for 0 ≤ y ≤ 3 + 0.01 (step 2.5e-4), linear interpolation.

    g is smooth on y ≥ 0 with |g''|/g < 25, so linear interpolation errs by < 3e-7 g
    (measured in the tests).  Returns the step, g and its forward differences (read only)."""
    y = _G_STEP * np.arange(int(round((_X_ASYM + 0.01) / _G_STEP)) + 2)
    g = np.exp(2.0 * special.loggamma(0.25 + 1j * y).real + np.pi * y)
    dg = np.diff(g, append=g[-1])
    for a in (g, dg):
        a.setflags(write=False)
    return _G_STEP, g, dg


def _series(x):
    """R(x) = Σ_k c_k / x^{2k} (asymptotic, |x| ≥ 3)."""
    u = 1.0 / (x * x)
    r = _R_COEF[-1]
    for ck in _R_COEF[-2::-1]:
        r = ck + u * r
    return u * r


def _g(y):
    """g(y) = |Γ(1/4 + iy)|² e^{πy} for y ≥ 0: the table below 3, 2π y^{−1/2} e^{R(y)} above."""
    step, g, dg = _g_table()
    y = np.ascontiguousarray(y, dtype=float)      # the writes through ravel() need views
    u = np.minimum(y, _X_ASYM)
    u *= 1.0 / step
    i = u.astype(np.intp)
    u -= i
    out = np.ascontiguousarray(dg[i])
    out *= u
    out += g[i]
    far = np.flatnonzero(y >= _X_ASYM)
    if far.size:
        a = y.ravel()[far]
        out.ravel()[far] = 2.0 * math.pi * np.exp(_series(a)) / np.sqrt(a)
    return out


def _density(w, wl, kT):
    """S_T(ω)/A = g(|x₋|) g(|x₊|) e^{2π[min(0, x₋) + min(0, x₊)]} / (4π² τ), signed ω."""
    inv = 1.0 / (4.0 * math.pi * kT)
    xm = (w - wl) * inv
    xp = (w + wl) * inv
    out = _g(np.abs(xm))
    out *= _g(np.abs(xp))
    out *= inv / (4.0 * math.pi ** 2)
    neg = np.minimum(xm, 0.0)
    neg += np.minimum(xp, 0.0)
    if neg.any():
        out *= np.exp(2.0 * math.pi * neg)
    return out


def _ratio_t(t, wl, kT):
    """(S_T/A) √(ω² − ω_L²) at ω = ω_L cosh t ≥ ω_L (the loss-side density in t)."""
    tau = 4.0 * math.pi * kT
    xm = 2.0 * wl * np.sinh(0.5 * t) ** 2 / tau
    xp = xm + 2.0 * wl / tau
    return _g(xm) * _g(xp) * np.sqrt(xm * xp) / (4.0 * math.pi ** 2)


def thermal_shape(omega, wl, kT):
    """Thermal Müller shape Φ_T(ω) = Im[ρ(x₋)ρ(x₊)]/τ (odd in ω), → Φ_0 at T = 0.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0: χ''_T(q, ω) = π A(q) Φ_T(ω) for
    |ω| ≤ ω_T, with x± = (ω ± ω_L)/τ, τ = 4π k_BT, ρ(x) = Γ(1/4 − ix)/Γ(3/4 − ix).
    Evaluated as Φ_T = (1 − e^{−ω/k_BT}) S_T/A from :func:`thermal_density`.

    Parameters
    ----------
    omega : array_like
        Energy transfer in meV (any sign).
    wl : array_like
        Lower edge ω_L in meV (> 0), broadcast against ``omega``.
    kT : array_like
        k_BT in meV (≥ 0; 0 gives Φ_0 = sign(ω) Θ(|ω| − ω_L)/√(ω² − ω_L²)).

    Returns
    -------
    ndarray
        Φ_T in 1/meV (no cut at ω_T).

    References
    ----------
    Schulz, Phys. Rev. B 34, 6372 (1986); Bocquet et al., Phys. Rev. B 64, 094425 (2001)
    (both from memory); Müller et al., Phys. Rev. B 24, 1429 (1981).
    """
    w, wl, kT = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (omega, wl, kT)))
    out = np.zeros(w.shape)
    hot = kT > 0
    a = np.abs(w)
    cold = ~hot & (a > wl)
    out[cold] = np.sign(w[cold]) / np.sqrt((a[cold] - wl[cold]) * (a[cold] + wl[cold]))
    if hot.any():
        wh, kh = w[hot], kT[hot]
        out[hot] = _density(wh, wl[hot], kh) * -np.expm1(-wh / kh)
    return out


def thermal_density(omega, wl, kT):
    """S_T(ω)/A = Φ_T(ω) [n(ω) + 1] on the signed energy axis (finite at ω = 0).

    With ρ(x) = |Γ(1/4 + ix)|² (cosh πx + i sinh πx)/(π√2) (reflection formula,
    A&S 6.1.17), Im[ρ(x₋)ρ(x₊)] = |Γ(1/4 + ix₋)|² |Γ(1/4 + ix₊)|² sinh(ω/2k_BT)/(2π²) and
    S_T/A = e^{ω/2k_BT} |Γ(1/4 + ix₋)|² |Γ(1/4 + ix₊)|² / (4π² τ)
          = g(|x₋|) g(|x₊|) e^{2π[min(0, x₋) + min(0, x₊)]} / (4π² τ),
    g(y) = |Γ(1/4 + iy)|² e^{πy} (since π(x₋ + x₊) = ω/2k_BT): positive, smooth, and
    S(−ω) = e^{−ω/k_BT} S(ω) to rounding (g is evaluated at the same |x| on both sides).

    Parameters
    ----------
    omega, wl, kT : array_like
        Energy transfer (meV, any sign), lower edge ω_L (meV) and k_BT (meV, > 0).

    Returns
    -------
    ndarray
        In 1/meV.

    References
    ----------
    Detailed balance and S = χ''(n + 1)/π: S. W. Lovesey, Theory of Neutron Scattering from
    Condensed Matter (Clarendon, 1984); Schulz (1986) (from memory); Abramowitz & Stegun
    6.1.17.
    """
    w, wl, kT = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (omega, wl, kT)))
    return _density(w, wl, kT)


# --------------------------------------------------------------------- convolution
def _hermite_primitive(b, n):
    """∫_{−∞}^{b} φ(z) He_k(z) dz, k = 0..n−1 (A&S 22.8.8); b clipped to ±40. (n, m)."""
    b = np.clip(b, -40.0, 40.0)
    phi = np.exp(-0.5 * b * b) / math.sqrt(2.0 * math.pi)
    out = np.empty((n, b.size))
    out[0] = special.ndtr(b)
    he_prev, he = np.zeros_like(b), np.ones_like(b)
    for k in range(1, n):
        out[k] = -phi * he                       # −φ(b) He_{k−1}(b)
        he_prev, he = he, b * he - (k - 1) * he_prev
    return out


def _signed_hermite(E, s, wl, top, kT, n, ratio=None):
    """∫ G_σ(E − ω) S_T(ω)/A dω over [−ω_T, ω_T] by an n-node Hermite rule (flat arrays);
    with ``ratio`` the density is multiplied by ratio(ω, ω_L, ω_T, k_BT) at the nodes."""
    z, w, B = hermite_expansion_rule(n)
    om = E[None, :] + s[None, :] * z[:, None]
    f = _density(om, wl[None, :], kT[None, :])
    if ratio is not None:
        f *= ratio(om, wl[None, :], top[None, :], kT[None, :])
    hi = (top - E) / s
    lo = (-top - E) / s
    val = w @ f
    cut = np.flatnonzero((lo > -_N_SIGMA) | (hi < _N_SIGMA))
    if cut.size:
        a = B.T @ f[:, cut]
        prim = np.zeros((n, cut.size))
        prim[0] = 1.0
        for b, sgn, need in ((hi[cut], 1.0, hi[cut] < _N_SIGMA),
                             (lo[cut], -1.0, lo[cut] > -_N_SIGMA)):
            k = np.flatnonzero(need)
            if k.size:
                if sgn > 0:
                    prim[:, k] = _hermite_primitive(b[k], n)
                else:
                    prim[:, k] -= _hermite_primitive(b[k], n)
        val[cut] = np.sum(a * prim, axis=0)
    return val


def _side_hermite(c, s, wl, top, kT, ratio=None):
    """∫_{−∞}^{b} φ(z) Φ_T(c + σz)(1 + n(c + σz)) dz, b = (ω_T − c)/σ; window clear of ω_L
    (times ``ratio`` at the nodes if given)."""
    out = np.empty(c.size)
    b = (top - c) / s
    full = b >= _N_SIGMA
    for n, sel in ((4, full), (8, ~full)):
        ix = np.flatnonzero(sel)
        if ix.size == 0:
            continue
        z, w, B = hermite_expansion_rule(n)
        om = c[ix][None, :] + s[ix][None, :] * z[:, None]
        f = thermal_density(om, wl[ix][None, :], kT[ix][None, :])
        if ratio is not None:
            f *= ratio(om, wl[ix][None, :], top[ix][None, :], kT[ix][None, :])
        if n == 4:
            out[ix] = w @ f
        else:
            out[ix] = np.sum((B.T @ f) * _hermite_primitive(b[ix], n), axis=0)
    return out


def _legendre(n):
    x, w = gauss_legendre(n)
    return x[:, None], w


def _correction(Es, s, wl, top, kT, sign, n_nodes, n_panels, split, ratio=None):
    """∫_0^{ω_T} G_σ(Es − ω) [S_T(sign ω) − S_old(sign ω)]/A dω for one side (the
    difference times ``ratio``(ω, ω_L, ω_T, k_BT) at the nodes if given).

    S_old is the T = 0 shape on the loss side and e^{−ω/k_BT} times it on the gain side
    (what :mod:`~evidence1d.physics.chain_spectrum` integrates on the edge path).  The
    difference lives within −20 … +1260 k_BT of ω_L: below the edge S_T itself (in ω, panels
    at −20, −8, −3, 0 k_BT); above it (ratio − 1)/√(ω² − ω_L²) [× e^{−ω/k_BT}] in
    t = arccosh(ω/ω_L), ratio = S_T √(ω² − ω_L²)/A, panels at 0, 8, 38, 190, 1260 k_BT
    (x₋ = 0, 0.6, 3, 15, 100; beyond, |ratio − 1| < 2e-6 and the neglected part of the
    weight redistributed by the thermal edge is 1e-5 of it).  Sub-panels (2, 1, 1, 2, 3,
    1, 1) of (6, 6, 6, 8, 6, 6, 6) nodes, or ``n_panels`` of ``max(n_nodes, …)`` each when
    ``split``.
    """
    lo = np.maximum(Es - _N_SIGMA * s, 0.0)
    hi = np.minimum(Es + _N_SIGMA * s, top)
    norm = 1.0 / (math.sqrt(2.0 * math.pi) * s)
    val = np.zeros(Es.size)
    regions = [(-20.0, -8.0, 2, 6, False), (-8.0, -3.0, 1, 6, False), (-3.0, 0.0, 1, 6, False),
               (0.0, 8.0, 2, 8, True), (8.0, 38.0, 3, 6, True), (38.0, 190.0, 1, 6, True),
               (190.0, 1260.0, 1, 6, True)]
    for k0, k1, n_sub, n_x, in_t in regions:
        ra = np.clip(wl + k0 * kT, lo, hi)
        rb = np.clip(wl + k1 * kT, lo, hi)
        if not (rb > ra).any():
            continue
        x, w = _legendre(max(n_x, n_nodes) if split else n_x)
        frac = np.linspace(0.0, 1.0, (n_panels if split else n_sub) + 1)
        for f0, f1 in zip(frac[:-1], frac[1:]):
            a = ra + (rb - ra) * f0
            b = ra + (rb - ra) * f1
            # only the pairs whose window meets this panel (at low T most panels lie
            # outside most windows)
            ix = np.flatnonzero(b > a)
            if not ix.size:
                continue
            a, b, wl_, top_, s_, E_ = a[ix], b[ix], wl[ix], top[ix], s[ix], Es[ix]
            kT_ = kT[ix] if np.ndim(kT) else kT
            if in_t:
                ta = np.arccosh(np.maximum(a / wl_, 1.0))
                tb = np.arccosh(np.maximum(b / wl_, 1.0))
                half = 0.5 * (tb - ta)
                t = 0.5 * (ta + tb) + half * x
                om = wl_ * np.cosh(t)
                f = _ratio_t(t, wl_, kT_) - 1.0
                if sign < 0:
                    f *= np.exp(-om / kT_)
            else:
                half = 0.5 * (b - a)
                om = 0.5 * (a + b) + half * x
                f = _density(sign * om, wl_, kT_)
            if ratio is not None:
                f = f * ratio(om, wl_, top_, kT_)
            g = np.exp(-0.5 * ((E_ - om) / s_) ** 2) * norm[ix]
            val[ix] += half * (w @ (f * g))
    return val


def _side_cumulative(Es, s, wl, top, kT, sign, n_nodes, ratio=None):
    """One side of S_T by its cumulative weight: trapezoid rule on a grid in ω below the
    edge (down to ω_L − 20 k_BT) and a uniform grid in t above it, then the exact Gaussian
    convolution of the piecewise-linear cumulative (about 1 %; the check path); the
    density times ``ratio`` at the nodes if given."""
    lo = np.maximum(Es - _N_SIGMA * s, 0.0)
    hi = np.minimum(Es + _N_SIGMA * s, top)
    a = np.clip(wl - 20.0 * kT, lo, hi)
    b = np.clip(wl, lo, hi)
    u = np.linspace(0.0, 1.0, n_nodes)
    om_tail = b[:, None] - (b - a)[:, None] * (1.0 - u) ** 2      # nodes dense at the edge
    ta = np.arccosh(np.maximum(np.maximum(lo, wl) / wl, 1.0))
    tb = np.arccosh(np.maximum(hi / wl, 1.0))
    t = ta[:, None] + (tb - ta)[:, None] * u
    om_t = wl[:, None] * np.cosh(t)
    f_tail = _density(sign * om_tail, wl[:, None], kT[:, None])
    f_t = _ratio_t(t, wl[:, None], kT[:, None])
    if sign < 0:
        f_t = f_t * np.exp(-om_t / kT[:, None])
    if ratio is not None:
        f_tail = f_tail * ratio(om_tail, wl[:, None], top[:, None], kT[:, None])
        f_t = f_t * ratio(om_t, wl[:, None], top[:, None], kT[:, None])
    d_tail = 0.5 * (f_tail[:, 1:] + f_tail[:, :-1]) * np.diff(om_tail, axis=-1)
    d_t = 0.5 * (f_t[:, 1:] + f_t[:, :-1]) * np.diff(t, axis=-1)
    om = np.concatenate([om_tail, om_t[:, 1:]], axis=-1)
    dW = np.concatenate([d_tail, d_t], axis=-1)
    W = np.concatenate([np.zeros((Es.size, 1)), np.cumsum(dW, axis=-1)], axis=-1)
    return convolve_cumulative(Es, s, om, W)


def convolve_thermal(E, s, wl, top, A, kT, old_side, method="quadrature", n_nodes=6,
                     n_panels=3, smooth=True, ratio=None, top_side=None):
    """Resolution-convolved S_T(q, E) on flat arrays of (parameter set, point) pairs, T > 0.

    Pairs with σ ≤ 1.25 k_BT: Gauss–Hermite on the signed axis (``HERMITE_TIERS``).  Other
    pairs, per side: windows clear of ω_L + 8πk_BT (x₋ ≥ 2) by 6σ: Gauss–Hermite on
    S_T (shifted Gaussian on the gain side); the rest: ``old_side`` (the T = 0 edge path of
    :mod:`~evidence1d.physics.chain_spectrum`, Boltzmann factor on the gain side) plus
    :func:`_correction`, so that the result tends to the T = 0 one as k_BT/σ → 0.

    With ``ratio`` (a line shape S_T R(ω) with R even in ω and zero at ±ω_T, such as the
    exact two-spinon profile of :mod:`~evidence1d.physics.chain_exact`) every density is
    multiplied by R at the nodes; the Gauss–Hermite paths then take only windows whose
    centre is 7σ inside ±ω_T (R vanishes there as a square root); clear of the thermal
    zone but not of ω_T, a window takes ``top_side``; ``old_side`` must integrate R Φ_0.

    Parameters
    ----------
    E, s, wl, top, A : ndarray, shape (m,)
        Energy transfer, resolution σ, lower edge ω_L (floored), upper edge ω_T (meV) and
        the Müller amplitude A (pairs with A = 0 give 0).
    kT : float
        k_BT in meV (> 0).
    old_side : callable
        ``old_side(Es, s, wl, top, A, kT_array, boltz)``: A ∫ G_σ(Es − ω) Φ_0(ω)
        [e^{−ω/k_BT}] dω over the window ∩ [ω_L, ω_T].
    method, n_nodes, n_panels
        As :func:`evidence1d.physics.chain_spectrum.spinon_spectrum`; 'cumulative' tabulates
        the cumulative weight of S_T per side (:func:`_side_cumulative`) for every pair.
    smooth : bool
        False: no Gauss–Hermite path; every pair on the edge path with ``n_panels`` panels
        per region (the reference path of the tests).
    ratio : callable, optional
        ``ratio(omega, wl, top, kT)``, broadcasting.
    top_side : callable, optional
        ``top_side(c, s, wl, top, kT_array)``: ∫ G_σ(c − ω) R(ω) S_T(ω)/A dω over ω > 0
        (needed with ``ratio``).

    Returns
    -------
    ndarray, shape (m,)
        S in 1/meV.

    References
    ----------
    See the module docstring.
    """
    out = np.zeros(E.size)
    kTa = np.full(E.size, float(kT))
    live = (A > 0) & (E - _N_SIGMA * s < top) & (E + _N_SIGMA * s > -top)
    # windows well inside the gap: S_T < e^{−20} of its edge value (e^{−(ω_L − |ω|)/2k_BT})
    gap = wl - 40.0 * kT
    live &= (E + _N_SIGMA * s > gap) | (E - _N_SIGMA * s < -gap)
    hermite = method == "quadrature" and smooth
    if hermite:
        r = s / kTa
        ok = live if ratio is None else live & (np.abs(E) + _TOP_CLEAR * s <= top)
        prev = 0.0
        for n, r_max in HERMITE_TIERS:
            ix = np.flatnonzero(ok & (r > prev) & (r <= r_max))
            prev = r_max
            for start in range(0, ix.size, _CHUNK):
                j = ix[start:start + _CHUNK]
                out[j] = A[j] * _signed_hermite(E[j], s[j], wl[j], top[j], kTa[j], n, ratio)
        live &= ~(ok & (r <= prev))
    for sign in (1.0, -1.0):
        Es = sign * E
        if sign < 0:   # skip pairs whose Boltzmann factor underflows
            live = live & (np.maximum(wl - 20.0 * kT, Es - _N_SIGMA * s) < kT * 745.0)
        rest = live & (Es + _N_SIGMA * s > wl - 20.0 * kT) & (Es - _N_SIGMA * s < top)
        if hermite:
            c = Es if sign > 0 else Es - s * s / kT
            easy = rest & (c - _N_SIGMA * s >= wl + 8.0 * math.pi * kT)
            near_top = easy & (c + _TOP_CLEAR * s > top) if ratio is not None else None
            ix = np.flatnonzero(easy)
            for start in range(0, ix.size, _CHUNK):
                j = ix[start:start + _CHUNK]
                if ratio is None:
                    v = _side_hermite(c[j], s[j], wl[j], top[j], kTa[j])
                else:
                    v = np.empty(j.size)
                    k = near_top[j]
                    v[k] = top_side(c[j][k], s[j][k], wl[j][k], top[j][k], kTa[j][k])
                    v[~k] = _side_hermite(c[j][~k], s[j][~k], wl[j][~k], top[j][~k],
                                          kTa[j][~k], ratio)
                if sign < 0:
                    with np.errstate(over="ignore", under="ignore"):
                        v *= np.exp(-Es[j] / kT + 0.5 * (s[j] / kT) ** 2)
                out[j] += A[j] * v
            rest &= ~easy
        if method == "cumulative":
            ix = np.flatnonzero(rest)
            for start in range(0, ix.size, _CHUNK):
                j = ix[start:start + _CHUNK]
                out[j] += A[j] * _side_cumulative(Es[j], s[j], wl[j], top[j], kTa[j], sign,
                                                  n_nodes, ratio)
            continue
        ix = np.flatnonzero(rest & (Es + _N_SIGMA * s > wl))
        if ix.size:
            out[ix] += old_side(Es[ix], s[ix], wl[ix], top[ix], A[ix], kTa[ix], sign < 0)
        ix = np.flatnonzero(rest)
        for start in range(0, ix.size, _CHUNK):
            j = ix[start:start + _CHUNK]
            out[j] += A[j] * _correction(Es[j], s[j], wl[j], top[j], kTa[j], sign, n_nodes,
                                         n_panels, split=not smooth, ratio=ratio)
    return out

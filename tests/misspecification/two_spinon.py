"""The exact two-spinon dynamical structure factor of the S = 1/2 Heisenberg chain.

Written for the misspecification suite, independently of evidence1d's kernels.

For H = J Σ S_i·S_{i+1} (J > 0), Karbach, Müller, Bougourzi, Fledderjohann & Mütter,
PRB 55, 12510 (1997), Eqs. (4)-(6) (from memory for the equation numbers), give between the
des Cloizeaux–Pearson lower edge ω_L = (π J / 2)|sin q| and the upper edge
ω_U = π J |sin(q/2)|

    S₂(q, ω) = C e^{−I(t)} / sqrt(ω_U² − ω²),
    cosh(π t) = sqrt((ω_U² − ω_L²) / (ω² − ω_L²)),
    I(t) = ∫₀^∞ dx/x · e^x [cosh(2x) cos(4xt) − 1] / [cosh(x) sinh(2x)].

The overall constant C is fixed here by the published share of the two-spinon states in the
total intensity: ∫ dq/2π ∫ dω S₂^zz = 0.7289 × 1/4 (Karbach et al. 1997; the total is
⟨(S^z)²⟩ = 1/4 per site).  The published share of the first moment, 71.30 %, is then an
independent check of the formula (tests/misspecification/test_generators.py).
"""
from __future__ import annotations

import functools

import numpy as np
from scipy import integrate, interpolate, special

TWO_SPINON_INTENSITY_SHARE = 0.7289     # Karbach et al., PRB 55, 12510 (1997)
TWO_SPINON_MOMENT_SHARE = 0.7130        # Karbach et al., PRB 55, 12510 (1997)
_X_TAIL = 18.0


def _I_of_t(t: float) -> float:
    """I(t) by quadrature: finite part on [0, X] plus the analytic tail −2 Ci(4 X t)."""
    def f(x):
        if x < 1e-6:
            return 1.0 - 4.0 * t * t                     # the limit x → 0
        num = np.cosh(2 * x) * np.cos(4 * x * t) - 1.0
        return np.exp(x) * num / (x * np.cosh(x) * np.sinh(2 * x))
    head, _ = integrate.quad(f, 0.0, _X_TAIL, limit=400, epsabs=1e-11, epsrel=1e-10)
    # for x > X the integrand is (2/x) cos(4xt) (1 + O(e^{-2x})) − O(e^{-2x}/x)
    tail = -2.0 * special.sici(4.0 * _X_TAIL * t)[1] if t > 0 else np.inf
    return head + tail


@functools.lru_cache(maxsize=1)
def _I_spline():
    """I(t) on a grid in u = ln t, for 1e-4 ≤ t ≤ 6 (cached)."""
    u = np.linspace(np.log(1e-4), np.log(6.0), 90)
    vals = np.array([_I_of_t(float(np.exp(ui))) for ui in u])
    return interpolate.CubicSpline(u, vals)


def I_function(t):
    """I(t) of Karbach et al. (1997) (vectorised; large t from its asymptote)."""
    t = np.asarray(t, float)
    spl = _I_spline()
    tc = np.clip(t, 1e-4, 6.0)
    out = spl(np.log(tc))
    # beyond t = 6: I(t) ≈ −π t − ½ ln t + const, continued from the spline's end
    big = t > 6.0
    if np.any(big):
        c = float(spl(np.log(6.0))) + np.pi * 6.0 + 0.5 * np.log(6.0)
        out = np.where(big, -np.pi * t - 0.5 * np.log(np.maximum(t, 1e-300)) + c, out)
    small = t < 1e-4
    if np.any(small):
        # I → 2 ln(1/t) + const as t → 0 (from the 2/x tail); continue logarithmically
        c0 = float(spl(np.log(1e-4))) - 2.0 * np.log(1e4)
        out = np.where(small, c0 - 2.0 * np.log(np.maximum(t, 1e-300)), out)
    return out


def edges(q, J):
    """Lower and upper two-spinon edges in meV (des Cloizeaux & Pearson 1962)."""
    q = np.asarray(q, float)
    return 0.5 * np.pi * J * np.abs(np.sin(q)), np.pi * J * np.abs(np.sin(0.5 * q))


def _shape(q, omega, J):
    """Unnormalised e^{−I(t)} / sqrt(ω_U² − ω²), zero outside the continuum."""
    q, omega = np.broadcast_arrays(np.asarray(q, float), np.asarray(omega, float))
    wl, wu = edges(q, J)
    inside = (omega > wl) & (omega < wu)
    w = np.where(inside, omega, 0.5 * (wl + wu) + 1e-300)
    ratio = np.sqrt(np.maximum(wu ** 2 - wl ** 2, 0.0) / np.maximum(w ** 2 - wl ** 2, 1e-300))
    t = np.arccosh(np.maximum(ratio, 1.0)) / np.pi
    val = np.exp(-I_function(t)) / np.sqrt(np.maximum(wu ** 2 - w ** 2, 1e-300))
    return np.where(inside, val, 0.0)


@functools.lru_cache(maxsize=8)
def _leggauss(n):
    return np.polynomial.legendre.leggauss(n)


def _weights_on_v_grid(q, J, n=400):
    """Nodes ω_k and weights such that Σ_k w_k f(ω_k) ≈ ∫ f(ω) S₂(q, ω) dω for smooth f.

    The substitution ω² = ω_L² + v² removes the inverse-square-root edge: S₂ dω =
    (e^{−I}/sqrt(ω_U² − ω²)) (1/ω) ... dv; v runs on Gauss–Legendre panels that crowd
    towards both edges.
    """
    wl, wu = edges(q, J)
    vmax = np.sqrt(max(wu ** 2 - wl ** 2, 0.0))
    if vmax <= 0:
        return np.zeros(1), np.zeros(1)
    # panels in s ∈ [0, 1], v = vmax sin²(π s / 2) crowds nodes at both ends
    x, w = _leggauss(n)
    s = 0.5 * (x + 1.0)
    ws = 0.5 * w
    v = vmax * np.sin(0.5 * np.pi * s) ** 2
    dv = vmax * np.pi * np.sin(0.5 * np.pi * s) * np.cos(0.5 * np.pi * s) * ws
    omega = np.sqrt(wl ** 2 + v ** 2)
    # S dω with dω = v dv / ω and the 1/sqrt(ω² − ω_L²) = 1/v of the edge cancelled
    ratio = np.sqrt((wu ** 2 - wl ** 2) / np.maximum(v ** 2, 1e-300))
    t = np.arccosh(np.maximum(ratio, 1.0)) / np.pi
    # ω_U² − ω² = v_max² − v² = (v_max − v)(v_max + v), free of cancellation near q = 0
    gap = np.maximum((vmax - v) * (vmax + v), 1e-300)
    dens = np.exp(-I_function(t)) / np.sqrt(gap)
    return omega, dens * v * dv / np.maximum(omega, 1e-300)


@functools.lru_cache(maxsize=4)
def normalisation(n_q: int = 200) -> float:
    """Constant C (for J = 1) such that ∫dq/2π ∫dω S₂ = 0.7289/4."""
    x, w = np.polynomial.legendre.leggauss(n_q)
    q = 0.5 * np.pi * (x + 1.0)           # q in (0, π); S is even and 2π periodic
    total = 0.0
    for qi, wi in zip(q, w):
        _, wk = _weights_on_v_grid(qi, 1.0)
        total += 0.5 * np.pi * wi * wk.sum()
    total /= np.pi                        # ∫₀^π dq / π = ∫ dq / 2π over the zone
    return TWO_SPINON_INTENSITY_SHARE * 0.25 / total


def nodes(q, J, n=400):
    """Energy nodes (meV) and weights of S₂^zz(q, ·) per site (areas, no 2π).

    Parameters
    ----------
    q : float
        Chain phase in rad.
    J : float
        Exchange in meV.

    Returns
    -------
    omega, weight : ndarray
        Σ weight f(omega) ≈ ∫ f(ω) S₂^zz(q, ω) dω for J in meV (S in 1/meV).
    """
    om, wt = _weights_on_v_grid(q, 1.0, n)
    # S(q, ω; J) = S(q, ω/J; 1)/J; the weights are areas so they do not change with J
    return om * J, wt * normalisation()

"""Quasi-elastic paramagnon response of a nearly antiferromagnetic (or ferromagnetic) metal.

Spectral model
--------------
Relaxational (overdamped) spin fluctuations with one spectral function per spin component:

    χ''(Q, ω) = χ_Q ω Γ_Q / (ω² + Γ_Q²),
    χ_Q = χ_peak / (1 + κ(Q)),      Γ_Q = Γ_0 (1 + κ(Q))      (so Γ_Q χ_Q = Γ_0 χ_peak),

the Ornstein–Zernike form with the relaxation rate of self-consistent renormalisation
(SCR) / Hertz–Millis theory for dynamical exponent z = 2.  The Ornstein–Zernike
denominator is written in its lattice-periodic form,

    κ(Q) = (2ξ_∥/d)² sin²((q − q₀)/2) + (2ξ_⊥/a_⊥)² sin²((q_a − q₀)/2)
           + (2ξ_⊥/b_⊥)² sin²((q_b − q₀)/2),

which equals ξ_∥² δQ_∥² + ξ_⊥² δQ_⊥² near the centre Q₀ and is periodic in the reciprocal
lattice (q = Q_∥ d, q_a = Q_a a_⊥, q_b = Q_b b_⊥).  The centre is q₀ = π in all three phases
(``center='zone_boundary'``, antiferromagnetic correlations; along the chain Q₀_∥ = π/d) or
q₀ = 0 (``center='zone_centre'``, ferromagnetic correlations).

Tie to the bulk susceptibility
------------------------------
Kramers–Kronig gives χ'(Q, 0) = (2/π) ∫₀^∞ χ''(Q, ω)/ω dω = χ_Q, so the uniform static
susceptibility is χ_{Q=0} = χ_peak / (1 + κ(0)).  The family's parameter is that uniform
value; its temperature dependence is the Curie–Weiss-like SCR form saturating at low
temperature, χ_u(T) = χ_u(0) θ_sf / (T + θ_sf) (emu/mol), and the spectra at temperature T
use χ_Q(T) = χ_u(T) (1 + κ(0)) / (1 + κ(Q)).  ξ and Γ_0 are taken temperature-independent.
Spectral and molar susceptibilities are related by χ[emu/mol] = N_A g² μ_B² χ̃ with χ̃ in
1/energy per ion, and S(Q, E) = χ̃''(Q, E)/E · E[n(E)+1] / π per spin component.

Heat capacity
-------------
Each overdamped mode has the spectral density ρ(ω) = (1/π) Γ_Q / (ω² + Γ_Q²) (the
derivative of its phase shift arctan(ω/Γ_Q)/π); for k_B T ≪ Γ_Q its heat capacity is
(π/3) k_B (k_B T / Γ_Q).  With three spin components per wavevector,

    C_sf = γ_sf T,     γ_sf = π R k_B ⟨1/Γ_Q⟩_BZ,

the zone average done exactly through ⟨1/(1 + κ)⟩ = ∫₀^∞ e^{−t} Π_i e^{−t b_i/2}
I₀(t b_i/2) dt, b_i = (2ξ_i / a_i)² (modified Bessel I₀).  S_sf = γ_sf T.

References
----------
T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, Berlin, 1985),
Chs. 3–4 (SCR theory: Curie–Weiss-like χ, Γ_Q ∝ 1/χ_Q, spin-fluctuation specific heat).
J. A. Hertz, Phys. Rev. B 14, 1165 (1976); A. J. Millis, Phys. Rev. B 48, 7183 (1993)
(z = 2 relaxational dynamics near an antiferromagnetic instability).
L. S. Ornstein & F. Zernike, Proc. Akad. Sci. Amsterdam 17, 793 (1914).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter*, Vol. 1 (1984), Ch. 4
(fluctuation–dissipation theorem, Kramers–Kronig relations).
M. Abramowitz & I. A. Stegun (1964), Eqs. 7.4.13 (Voigt) and 9.6.19 (I₀ as the average of
e^{z cos θ}).
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy import special

from ..errors import InputError
from ..units import CURIE_PREFACTOR, K_B_MEV, R_GAS
from . import neutron

__all__ = [
    "CENTERS", "oz_denominator", "uniform_susceptibility", "reduced_susceptibility",
    "static_susceptibility", "relaxation_rate", "chi_double_prime", "structure_factor",
    "convolved_structure_factor", "zone_average_inverse_rate", "spin_fluctuation_gamma",
]

#: wavevector the correlations are centred on -> phase q₀ in each direction (rad)
CENTERS = {"zone_boundary": math.pi, "zone_centre": 0.0}
_T_FLOOR = 1e-9
_SQRT_2PI = math.sqrt(2.0 * math.pi)


def _q0(center):
    if center not in CENTERS:
        raise InputError(f"the 'center' option must be one of {', '.join(CENTERS)}; got "
                         f"{center!r} instead")
    return CENTERS[center]


def oz_denominator(q_par, q_a, q_b, xi_par, xi_perp, d, a_perp, b_perp,
                   center="zone_boundary"):
    """Lattice-periodic Ornstein–Zernike term κ(Q) (module notes); 1 + κ divides χ_peak.

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases Q_∥ d, Q_a a_⊥, Q_b b_⊥ in radians, shape (n,).
    xi_par, xi_perp : array_like
        Correlation lengths along and across the chain in Å, shape (n_sets, 1), ≥ 0.
    d, a_perp, b_perp : float
        Spin spacing along the chain and interchain spacings in Å (> 0).
    center : {'zone_boundary', 'zone_centre'}
        Centre of the correlations: q₀ = π in every phase, or q₀ = 0.

    Returns
    -------
    ndarray, shape (n_sets, n)
        κ(Q) ≥ 0 (dimensionless); ≈ ξ_∥² δQ_∥² + ξ_⊥² δQ_⊥² near the centre.

    References
    ----------
    L. S. Ornstein & F. Zernike (1914); lattice form: common practice (nearest-neighbour
    lattice Green function, 2(1 − cos δq) in place of δq²).
    """
    q0 = _q0(center)
    s_par = np.sin(0.5 * (np.asarray(q_par, float) - q0))
    s_a = np.sin(0.5 * (np.asarray(q_a, float) - q0))
    s_b = np.sin(0.5 * (np.asarray(q_b, float) - q0))
    xp = 2.0 * np.asarray(xi_par, float) / d
    xa = 2.0 * np.asarray(xi_perp, float) / a_perp
    xb = 2.0 * np.asarray(xi_perp, float) / b_perp
    return (xp * s_par) ** 2 + (xa * s_a) ** 2 + (xb * s_b) ** 2


def uniform_susceptibility(T, chi_uniform, theta_sf):
    """Curie–Weiss-like SCR uniform susceptibility χ_u(T) = χ_u(0) θ_sf / (T + θ_sf).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    chi_uniform : array_like, shape (n_sets, 1)
        χ_u(T → 0) in emu/mol of magnetic ion (> 0).
    theta_sf : array_like, shape (n_sets, 1)
        Spin-fluctuation temperature θ_sf in K (> 0).

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ_u in emu/mol; Curie–Weiss with effective Curie constant χ_u(0) θ_sf above θ_sf.

    References
    ----------
    T. Moriya, Spin Fluctuations in Itinerant Electron Magnetism (1985), Ch. 4
    (Curie–Weiss law of weakly itinerant magnets from SCR theory).
    """
    T = np.maximum(np.asarray(T, float), 0.0)
    th = np.asarray(theta_sf, float)
    return np.asarray(chi_uniform, float) * th / (T + th)


def reduced_susceptibility(chi_emu, g):
    """Spin susceptibility per ion χ̃ = χ / (N_A g² μ_B²) in 1/meV.

    Parameters
    ----------
    chi_emu : array_like
        Molar susceptibility in emu/mol of magnetic ion.
    g : array_like
        Landé g factor (> 0).

    Returns
    -------
    ndarray
        χ̃ in 1/meV (a free spin has χ̃ = S(S+1) / (3 k_B T)).

    References
    ----------
    CODATA constants via evidence1d.units (N_A μ_B² / k_B in emu K/mol).
    """
    g = np.asarray(g, float)
    return np.asarray(chi_emu, float) / (CURIE_PREFACTOR * K_B_MEV * g * g)


def static_susceptibility(kappa, kappa0, chi_u_reduced):
    """χ_Q = χ_u (1 + κ(0)) / (1 + κ(Q)): the Ornstein–Zernike χ tied to the uniform χ_u.

    Parameters
    ----------
    kappa : ndarray, shape (n_sets, n)
        κ(Q) from :func:`oz_denominator`.
    kappa0 : ndarray, shape (n_sets, 1)
        κ(Q = 0).
    chi_u_reduced : ndarray, shape (n_sets, 1)
        Uniform susceptibility χ̃_u in 1/meV.

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ̃_Q in 1/meV (the static χ'(Q, 0) by Kramers–Kronig).

    References
    ----------
    L. S. Ornstein & F. Zernike (1914); Lovesey (1984), Ch. 4 (Kramers–Kronig).
    """
    return chi_u_reduced * (1.0 + kappa0) / (1.0 + kappa)


def relaxation_rate(kappa, gamma0):
    """SCR relaxation rate Γ_Q = Γ_0 (1 + κ(Q)) in meV.

    Parameters
    ----------
    kappa : ndarray, shape (n_sets, n)
        κ(Q) from :func:`oz_denominator`.
    gamma0 : ndarray, shape (n_sets, 1)
        Relaxation rate at the centre Q₀ in meV (> 0).

    Returns
    -------
    ndarray, shape (n_sets, n)
        Γ_Q in meV.

    References
    ----------
    T. Moriya (1985), Ch. 3; A. J. Millis, Phys. Rev. B 48, 7183 (1993) (Γ_Q ∝ 1/χ_Q).
    """
    return np.asarray(gamma0, float) * (1.0 + kappa)


def chi_double_prime(E, chi_q, gamma_q):
    """Relaxational response χ''(Q, E) = χ_Q E Γ_Q / (E² + Γ_Q²).

    Parameters
    ----------
    E : array_like
        Energy transfer in meV.
    chi_q : array_like
        Static susceptibility χ̃_Q in 1/meV.
    gamma_q : array_like
        Relaxation rate Γ_Q in meV (> 0).

    Returns
    -------
    ndarray
        χ̃''(Q, E) (dimensionless when χ̃ is in 1/meV); odd in E.

    References
    ----------
    T. Moriya (1985), Ch. 3; Lovesey (1984), Ch. 4.
    """
    E = np.asarray(E, float)
    return chi_q * E * gamma_q / (E * E + gamma_q * gamma_q)


def structure_factor(E, T, chi_q, gamma_q):
    """S(Q, E) = χ̃''(Q, E)/E · E[n(E)+1] / π of one spin component, no resolution.

    Parameters
    ----------
    E : array_like
        Energy transfer in meV.
    T : float or array_like
        Temperature in K (≥ 0).
    chi_q, gamma_q : array_like
        χ̃_Q in 1/meV and Γ_Q in meV.

    Returns
    -------
    ndarray
        S in 1/meV per spin; S(−E) = e^{−E/k_BT} S(E).

    References
    ----------
    S. W. Lovesey (1984), Ch. 4 (fluctuation–dissipation theorem).
    """
    E = np.asarray(E, float)
    return (chi_q * gamma_q / (E * E + gamma_q * gamma_q)
            * neutron.bose_energy_factor(E, T) / math.pi)


def _even_remainder(E, kT):
    """(E/2) coth(E / 2k_BT) − k_BT ≥ 0 in meV, stable for every E and k_BT ≥ 0."""
    a = np.abs(E)
    y = a / (2.0 * np.maximum(kT, 1e-300))
    small = y < 1e-2
    y2 = np.where(small, y, 0.0) ** 2
    series = kT * y2 * (1.0 / 3.0 - y2 / 45.0 + 2.0 * y2 * y2 / 945.0)
    with np.errstate(over="ignore", invalid="ignore"):
        em = np.exp(-2.0 * np.where(small, 1.0, y))
        big = 0.5 * a + a * em / (-np.expm1(-2.0 * np.where(small, 1.0, y))) - kT
    return np.where(small, series, big)


@functools.lru_cache(maxsize=16)
def _remainder_nodes(e_bytes, s_bytes, shape, kT, n_nodes):
    """Gauss–Hermite nodes E_k² and weights w_k R(E_k), each (n_nodes, n), read-only.

    They depend only on a dataset's energies, resolution and temperature, so they are
    computed once per dataset (cached on the bytes of the arrays).
    """
    E = np.frombuffer(e_bytes, float).reshape(shape)
    sigma = np.frombuffer(s_bytes, float).reshape(shape)
    x, w = neutron.gauss_hermite(n_nodes)
    Ep = E[:, None] + sigma[:, None] * x                          # (n, n_nodes)
    Ep2 = np.ascontiguousarray((Ep * Ep).T)
    wR = np.ascontiguousarray((_even_remainder(Ep, kT) * w).T)
    Ep2.setflags(write=False)
    wR.setflags(write=False)
    return Ep2, wR


def convolved_structure_factor(E, sigma, T, chi_q, gamma_q, n_nodes=12):
    """Gaussian-resolution convolution of :func:`structure_factor` (one spin component).

    E[n(E)+1] = k_BT + E/2 + R(E) with R(E) = (E/2) coth(E/2k_BT) − k_BT even and ∝ E² at
    small E.  The first two terms times the Lorentzian are convolved exactly (Voigt profile
    for k_BT Γ/(E² + Γ²), imaginary part of the Faddeeva function w(z) for the dispersive
    E/(E² + Γ²)); the remainder, whose quasi-elastic structure is suppressed by E², by
    Gauss–Hermite quadrature with ``n_nodes`` nodes.  Exact when Γ_Q ≪ k_BT or when Γ_Q and
    k_BT are both ≳ σ; otherwise the error is that of the Gauss–Hermite rule on R.

    Parameters
    ----------
    E, sigma : ndarray, shape (n,)
        Energy transfer and resolution standard deviation in meV.
    T : float
        Temperature in K (≥ 0).
    chi_q, gamma_q : ndarray, shape (n_sets, n)
        χ̃_Q in 1/meV and Γ_Q in meV (> 0).
    n_nodes : int, optional
        Gauss–Hermite nodes for the remainder.

    Returns
    -------
    ndarray, shape (n_sets, n)
        Resolution-convolved S(Q, E) in 1/meV per spin component.

    References
    ----------
    Abramowitz & Stegun (1964), Eqs. 7.1.3–7.1.4 and 7.4.13 (Faddeeva function, Voigt
    profile); Eq. 25.4.46 (Gauss–Hermite); Lovesey (1984), Ch. 4.
    """
    E = np.asarray(E, float)
    sigma = np.broadcast_to(np.asarray(sigma, float), E.shape)
    kT = K_B_MEV * max(float(T), 0.0)
    # One Faddeeva evaluation gives both exact parts: the Voigt profile is Re w(z)/(√(2π)σ)
    # and the convolved dispersive Lorentzian (E/(E² + Γ²)) * G_σ is π Im w(z)/(√(2π)σ),
    # z = (E + iΓ)/(√2 σ) (Abramowitz & Stegun 7.4.13).
    gamma_q = np.asarray(gamma_q, float)
    inv = 1.0 / (math.sqrt(2.0) * sigma)
    z = np.empty(np.broadcast(gamma_q, E).shape, complex)
    z.real, z.imag = E * inv, gamma_q * inv
    w_z = special.wofz(z)
    exact = chi_q * (kT * w_z.real + 0.5 * gamma_q * w_z.imag) / (_SQRT_2PI * sigma)
    Ep2, wR = _remainder_nodes(E.tobytes(), sigma.tobytes(), E.shape, kT, int(n_nodes))
    # Σ_k wR_k / (E_k² + Γ²), one node at a time: (n_sets, n) temporaries stay small
    g2 = gamma_q * gamma_q
    acc = np.zeros(np.broadcast(g2, E).shape)
    tmp = np.empty_like(acc)
    for k in range(Ep2.shape[0]):
        np.add(g2, Ep2[k], out=tmp)
        np.divide(wR[k], tmp, out=tmp)
        acc += tmp
    return exact + chi_q * gamma_q * acc / math.pi


@functools.lru_cache(maxsize=4)
def _log_nodes(n: int = 120, lo: float = -28.0, hi: float = 4.5):
    u = np.linspace(lo, hi, n)
    t = np.exp(u)
    w = np.full(n, (hi - lo) / (n - 1)) * t * np.exp(-t)            # trapezoid in u = ln t
    w[0] *= 0.5
    w[-1] *= 0.5
    t.setflags(write=False)
    w.setflags(write=False)
    return t, w


def zone_average_inverse_rate(gamma0, xi_par, xi_perp, d, a_perp, b_perp):
    """Brillouin-zone average ⟨1/Γ_Q⟩ of the SCR relaxation rate, in 1/meV.

    ⟨1/(1 + κ)⟩ = ∫₀^∞ e^{−t} Π_i e^{−t b_i/2} I₀(t b_i/2) dt with b_i = (2ξ_i/a_i)², done by
    the trapezoid rule in ln t on 120 nodes (exponentially convergent for this smooth
    integrand; within 1e-10 relative of the 240-node rule for ξ up to 300 Å); the
    average does not depend on the centre Q₀.

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
        ⟨1/Γ_Q⟩ in 1/meV (1/Γ_0 when ξ = 0; smaller as ξ grows).

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 9.6.19 (I₀(z) = (1/π) ∫₀^π e^{z cos θ} dθ);
    T. Moriya (1985), Ch. 3.
    """
    t, w = _log_nodes()
    f = np.ones(np.broadcast(np.asarray(xi_par), np.asarray(xi_perp)).shape + t.shape)
    for xi, a in ((xi_par, d), (xi_perp, a_perp), (xi_perp, b_perp)):
        b = (2.0 * np.asarray(xi, float) / a) ** 2
        f = f * special.i0e(0.5 * b[..., None] * t)
    return (f @ w) / np.asarray(gamma0, float)


def spin_fluctuation_gamma(gamma0, xi_par, xi_perp, d, a_perp, b_perp):
    """Spin-fluctuation heat-capacity coefficient γ_sf = π R k_B ⟨1/Γ_Q⟩_BZ.

    Parameters
    ----------
    gamma0, xi_par, xi_perp : array_like, shape (n_sets, 1)
        Γ_0 in meV, correlation lengths in Å.
    d, a_perp, b_perp : float
        Spacings in Å.

    Returns
    -------
    ndarray, shape (n_sets, 1)
        γ_sf in J/(mol K²) per mol of magnetic ion; C_sf = γ_sf T for k_B T ≪ Γ_0.

    References
    ----------
    T. Moriya (1985), Chs. 3–4 (specific heat of spin fluctuations); the low-temperature
    heat capacity (π/3) k_B² T / Γ of an overdamped mode follows from its phase-shift
    density of states (common practice).
    """
    inv = zone_average_inverse_rate(gamma0, xi_par, xi_perp, d, a_perp, b_perp)
    return math.pi * R_GAS * K_B_MEV * inv

"""Quasi-elastic paramagnon response of a nearly antiferromagnetic (or ferromagnetic) metal.

Spectral model
--------------
Relaxational (overdamped) spin fluctuations, one spectral function per spin component:

    χ''(Q, ω) = χ_Q ω Γ_Q / (ω² + Γ_Q²),      χ_Q = χ_peak / (1 + κ(Q)),

Ornstein–Zernike χ_Q with the lattice-periodic term (q = Q_∥ d, q_a = Q_a a_⊥,
q_b = Q_b b_⊥; b_∥ = (2ξ_∥/d)², b_a = (2ξ_⊥/a_⊥)², b_b = (2ξ_⊥/b_⊥)²)

    κ(Q) = b_∥ sin²((q − q_c)/2) + b_a sin²((q_a − q_⊥)/2) + b_b sin²((q_b − q_⊥)/2),

≈ ξ_∥² δQ_∥² + ξ_⊥² δQ_⊥² near the centre and periodic in the reciprocal lattice.  Centres
(``center``):

* ``zone_boundary`` (default): q_c = q_⊥ = π, antiferromagnetic correlations;
* ``zone_centre``: q_c = q_⊥ = 0, ferromagnetic correlations;
* ``incommensurate``: peaks at q = ±π q₀ along the chain (q₀ ∈ [0, 1], the chain phase
  2k_F d in units of π) and q_⊥ = π across it (the nesting vector (2k_F, π/b) of warped
  quasi-one-dimensional Fermi sheets; Grüner, *Density Waves in Solids*, 1994, Ch. 4, from
  memory).  χ_Q is the normalised harmonic sum of the two Ornstein–Zernike peaks,

      1/(1 + κ) = [1/(1 + κ₊) + 1/(1 + κ₋)] / N,   κ± = κ with q_c = ±π q₀,
      N = 1 + 1/(1 + b_∥ sin²(π q₀)),

  symmetric in q, equal to 1 at Q₀ = (±π q₀, π, π) (κ = 0 there), and equal to the
  zone-boundary form at q₀ = 1 (both peaks coincide).  Near a peak well separated from the
  other (ξ_∥ sin(π q₀) ≫ d) it is the Ornstein–Zernike form with lengths ξ_∥, ξ_⊥.

Relaxation rate (dynamical exponent z)
--------------------------------------
* Antiferromagnetic and incommensurate centres, z = 2: the staggered magnetisation is not
  conserved, Γ_Q = Γ_0 (1 + κ(Q)), so Γ_Q χ_Q is constant (Landau damping of a
  non-conserved order parameter; Hertz 1976; Millis 1993; Moriya 1985, Ch. 3).  Γ_0 is
  the rate at the centre.
* Zone centre, z = 3: the uniform magnetisation is conserved, so Γ_Q must vanish as
  Q → 0: Γ_Q = Γ_0 ℓ(Q) (1 + κ(Q)), Γ_Q χ_Q ∝ ℓ(Q) (Landau damping ∝ ω/|Q|), with the
  lattice-periodic ℓ(Q)² = sin²(q/2) + (d/a_⊥)² sin²(q_a/2) + (d/b_⊥)² sin²(q_b/2)
  (≈ d|Q|/2 near Q = 0, 1 at q = π along the chain: Γ_0 is the rate there at ξ = 0).
  At ξ → ∞, Γ_Q ∝ |Q|³.  The |Q| factor with the lattice spacings as the only lengths is
  the lattice form of Γ_q = γ_L q χ_q⁻¹ (Moriya 1985, Ch. 3; Hertz 1976).

Tie to the bulk susceptibility
------------------------------
Kramers–Kronig gives χ'(Q, 0) = (2/π) ∫₀^∞ χ''(Q, ω)/ω dω = χ_Q, so the uniform static
susceptibility is χ_{Q=0} = χ_peak / (1 + κ(0)).  The family's parameter is that uniform
value; its temperature dependence is the Curie–Weiss-like SCR form saturating at low
temperature, χ_u(T) = χ_u(0) θ_sf / (T + θ_sf) (emu/mol), and the spectra at temperature T
use χ_Q(T) = χ_u(T) (1 + κ(0)) / (1 + κ(Q)).  ξ and Γ_0 are taken temperature-independent.
Spectral and molar susceptibilities are related by χ[emu/mol] = N_A g² μ_B² χ̃ with χ̃ in
1/energy per ion.

Finite temperature
------------------
S(Q, E) = χ̃''(Q, E) [n(E) + 1] / π per spin component (fluctuation–dissipation theorem), so
S(Q, −E) = e^{−E/k_BT} S(Q, E) (detailed balance).  The heat capacity and entropy of the
same modes are in :mod:`evidence1d.physics.paramagnon_thermo`.

References
----------
T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, Berlin, 1985),
Chs. 3–4 (SCR theory: Curie–Weiss-like χ, Γ_Q ∝ 1/χ_Q, Γ_q ∝ q/χ_q for a ferromagnet).
J. A. Hertz, Phys. Rev. B 14, 1165 (1976); A. J. Millis, Phys. Rev. B 48, 7183 (1993)
(z = 2 near an antiferromagnetic instability, z = 3 near a ferromagnetic one).
L. S. Ornstein & F. Zernike, Proc. Akad. Sci. Amsterdam 17, 793 (1914).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter*, Vol. 1 (1984), Ch. 4
(fluctuation–dissipation theorem, Kramers–Kronig relations).
M. Abramowitz & I. A. Stegun (1964), Eqs. 7.4.13 (Voigt) and 25.4.46 (Gauss–Hermite).
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy import special

from ..errors import InputError
from ..units import CURIE_PREFACTOR, K_B_MEV
from . import neutron

__all__ = [
    "CENTERS", "DYNAMICS", "oz_denominator", "lattice_momentum", "uniform_susceptibility",
    "reduced_susceptibility", "static_susceptibility", "relaxation_rate", "chi_double_prime",
    "structure_factor", "convolved_structure_factor",
]

#: centre of the correlations -> (phase along the chain, phase across it) in rad;
#: ``None`` along the chain: the incommensurate phase π q₀ is a parameter
CENTERS = {"zone_boundary": (math.pi, math.pi), "zone_centre": (0.0, 0.0),
           "incommensurate": (None, math.pi)}
#: dynamical exponent z of each centre (3: conserved uniform magnetisation)
DYNAMICS = {"zone_boundary": 2, "zone_centre": 3, "incommensurate": 2}
#: smallest relaxation rate used in the spectrum (meV): Γ_Q → 0 at Q = 0 for z = 3
GAMMA_FLOOR = 1e-12
_SQRT_2PI = math.sqrt(2.0 * math.pi)


def _check_center(center):
    if center not in CENTERS:
        raise InputError(f"the 'center' option must be one of {', '.join(CENTERS)}; got "
                         f"{center!r} instead")
    return CENTERS[center]


def _sin2(x):
    s = np.sin(0.5 * x)
    return s * s


def oz_denominator(q_par, q_a, q_b, xi_par, xi_perp, d, a_perp, b_perp,
                   center="zone_boundary", q0=None):
    """Lattice-periodic Ornstein–Zernike term κ(Q) (module notes); 1 + κ divides χ_peak.

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases Q_∥ d, Q_a a_⊥, Q_b b_⊥ in radians, shape (n,) (or broadcastable).
    xi_par, xi_perp : array_like
        Correlation lengths along and across the chain in Å, shape (n_sets, 1), ≥ 0.
    d, a_perp, b_perp : float
        Spin spacing along the chain and interchain spacings in Å (> 0).
    center : {'zone_boundary', 'zone_centre', 'incommensurate'}
        Centre of the correlations (module notes).
    q0 : array_like, optional
        Incommensurate chain phase in units of π, shape (n_sets, 1), in [0, 1]; required
        for (and only used by) ``center='incommensurate'``.

    Returns
    -------
    ndarray, shape (n_sets, n)
        κ(Q) ≥ 0 (dimensionless), 0 at the centre; ≈ ξ_∥² δQ_∥² + ξ_⊥² δQ_⊥² near it.

    References
    ----------
    L. S. Ornstein & F. Zernike (1914); lattice form: common practice (nearest-neighbour
    lattice Green function, 2(1 − cos δq) in place of δq²); the two-peak harmonic sum for
    the incommensurate centre is this project's normalisation (module notes).
    """
    qc, qp = _check_center(center)
    b_par = (2.0 * np.asarray(xi_par, float) / d) ** 2
    k_perp = ((2.0 * np.asarray(xi_perp, float) / a_perp) ** 2
              * _sin2(np.asarray(q_a, float) - qp)
              + (2.0 * np.asarray(xi_perp, float) / b_perp) ** 2
              * _sin2(np.asarray(q_b, float) - qp))
    q = np.asarray(q_par, float)
    if qc is not None:
        return b_par * _sin2(q - qc) + k_perp
    if q0 is None:
        raise InputError("the incommensurate paramagnon needs the parameter q0")
    ph = math.pi * np.asarray(q0, float)
    y = (1.0 / (1.0 + b_par * _sin2(q - ph) + k_perp)
         + 1.0 / (1.0 + b_par * _sin2(q + ph) + k_perp))
    norm = 1.0 + 1.0 / (1.0 + b_par * _sin2(2.0 * ph))
    return np.maximum(norm / y - 1.0, 0.0)


def lattice_momentum(q_par, q_a, q_b, d, a_perp, b_perp):
    """Dimensionless lattice |Q|, ℓ² = sin²(q/2) + (d/a_⊥)² sin²(q_a/2) + (d/b_⊥)² sin²(q_b/2).

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases Q_∥ d, Q_a a_⊥, Q_b b_⊥ in radians.
    d, a_perp, b_perp : float
        Spacings in Å (> 0).

    Returns
    -------
    ndarray
        ℓ ≥ 0: ≈ d|Q|/2 near Q = 0, periodic in the reciprocal lattice, 1 at q = π
        (q_a = q_b = 0).

    References
    ----------
    Lattice form of |Q| (nearest-neighbour lattice Green function): common practice.
    """
    return np.sqrt(_sin2(np.asarray(q_par, float))
                   + (d / a_perp) ** 2 * _sin2(np.asarray(q_a, float))
                   + (d / b_perp) ** 2 * _sin2(np.asarray(q_b, float)))


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


def relaxation_rate(kappa, gamma0, ell=None):
    """Relaxation rate Γ_Q in meV: Γ_0 (1 + κ) (z = 2) or Γ_0 ℓ (1 + κ) (z = 3, conserved).

    Parameters
    ----------
    kappa : ndarray, shape (n_sets, n)
        κ(Q) from :func:`oz_denominator`.
    gamma0 : ndarray, shape (n_sets, 1)
        Rate scale Γ_0 in meV (> 0): the rate at the centre for z = 2; for z = 3 the rate at
        q = π along the chain when ξ = 0.
    ell : ndarray, optional
        ℓ(Q) from :func:`lattice_momentum` for the conserved (zone-centre) dynamics; ``None``
        for the non-conserved z = 2 dynamics.

    Returns
    -------
    ndarray, shape (n_sets, n)
        Γ_Q in meV (≥ 0; 0 at Q = 0 for z = 3).

    References
    ----------
    T. Moriya (1985), Ch. 3; J. A. Hertz, Phys. Rev. B 14, 1165 (1976); A. J. Millis,
    Phys. Rev. B 48, 7183 (1993) (Γ_Q ∝ 1/χ_Q for z = 2, Γ_q ∝ q/χ_q for z = 3).
    """
    rate = np.asarray(gamma0, float) * (1.0 + kappa)
    return rate if ell is None else rate * ell


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


def _nodes_at(E, sigma, kT, n_nodes):
    """:func:`_remainder_nodes` for the points (E, σ), computed once per run of equal points.

    A powder average asks for many directions at each measured point, so (E, σ) comes in
    runs of equal values; the nodes are then built for one point per run.  Returns
    ``(Ep2, wR, run)``: with ``run`` an index array the nodes of point i are column
    ``run[i]`` (gathered row by row by the caller, several times faster than a gather of
    the whole table); ``run`` None means one column per point.  A dataset's own points
    (runs of one) use the cache of :func:`_remainder_nodes`.
    """
    sigma = np.ascontiguousarray(np.broadcast_to(sigma, E.shape))
    if E.ndim == 1 and E.size > 1:
        head = np.empty(E.size, bool)
        head[0] = True
        np.not_equal(E[1:], E[:-1], out=head[1:])
        head[1:] |= sigma[1:] != sigma[:-1]
        heads = np.flatnonzero(head)
        if 2 * heads.size <= E.size:
            Eh, sh = E[heads], sigma[heads]
            Ep2, wR = _remainder_nodes(Eh.tobytes(), sh.tobytes(), Eh.shape, kT, n_nodes)
            return Ep2, wR, np.cumsum(head) - 1
    return (*_remainder_nodes(E.tobytes(), sigma.tobytes(), E.shape, kT, n_nodes), None)


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
        χ̃_Q in 1/meV and Γ_Q in meV (≥ 0; rates below GAMMA_FLOOR are raised to it, so
        the conserved Γ_Q = 0 at Q = 0 gives the resolution-limited elastic line
        k_BT χ_Q G_σ(E) in the limit).
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
    gamma_q = np.maximum(np.asarray(gamma_q, float), GAMMA_FLOOR)
    inv = 1.0 / (math.sqrt(2.0) * sigma)
    z = np.empty(np.broadcast(gamma_q, E).shape, complex)
    z.real, z.imag = E * inv, gamma_q * inv
    w_z = special.wofz(z)
    exact = chi_q * (kT * w_z.real + 0.5 * gamma_q * w_z.imag) / (_SQRT_2PI * sigma)
    Ep2, wR, run = _nodes_at(E, sigma, kT, int(n_nodes))
    # Σ_k wR_k / (E_k² + Γ²), one node at a time: (n_sets, n) temporaries stay small
    g2 = gamma_q * gamma_q
    acc = np.zeros(np.broadcast(g2, E).shape)
    tmp = np.empty_like(acc)
    if run is not None:
        e_k, w_k = np.empty(run.size), np.empty(run.size)
    for k in range(Ep2.shape[0]):
        if run is None:
            e_k, w_k = Ep2[k], wR[k]
        else:
            np.take(Ep2[k], run, out=e_k)
            np.take(wR[k], run, out=w_k)
        np.add(g2, e_k, out=tmp)
        np.divide(w_k, tmp, out=tmp)
        acc += tmp
    return exact + chi_q * gamma_q * acc / math.pi

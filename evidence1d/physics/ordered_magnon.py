"""Renormalised spin waves of weakly coupled S = 1/2 chains with collinear Néel order.

Hamiltonian (the project's convention on every bond):

    H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j],   S = 1/2,

J along the chain, J_⊥ to each of z_⊥ neighbouring chains (:data:`magnon.INTERCHAIN`),
J, J_⊥ > 0 antiferromagnetic, Δ ≥ 1 (easy axis z, the ordered moments).

Energies
--------
Linear spin-wave theory (:mod:`evidence1d.physics.magnon`) about the classical Néel state
misses the quantum renormalisation that dominates weakly coupled S = 1/2 chains: along the
chain the lower edge of the spectrum is the des Cloizeaux–Pearson dispersion
(π/2) J |sin q|, not J |sin q|, and across the chains the ordered moment m_0 is a small
fraction of S.  We keep the spin-wave form and renormalise its exchanges:

    J̃ = Z_∥ J,     J̃_⊥ = Z_∥ f J_⊥,     ħω(Q) = S √((Δ J̃_0)² − J̃(Q)²),

with J̃_0, J̃(Q) built from J̃, J̃_⊥ as in :mod:`magnon`.  The two factors follow from the
hydrodynamic relation c² = ρ_s / χ_⊥ for the spin-wave velocities (Halperin & Hohenberg
1969): the transverse susceptibility is the chain's, χ_⊥ = 1/(π² J) per spin at T = 0
(Eggert, Affleck & Takahashi 1994), a factor 4/π² below the classical 1/(4J), which
multiplies both velocities by π/2; the interchain stiffness is that of reduced moments,
ρ_⊥ = J_⊥ m_0² per bond (interchain mean field, Schulz 1996), a factor (m_0/S)² below the
classical one.  Hence, for J_⊥ ≪ J,

    Z_∥ = π/2,     f = (m_0/S)² = 4 · 1.0174² (z_⊥/4)(J_⊥/J),

from Schulz's ordered moment m_0 = 1.0174 √(J_⊥/J) for z_⊥ = 4 (from memory; the mean
field depends on z_⊥ J_⊥ only, which carries it to z_⊥ = 2).  The interchain gap scale this
gives, W² = 4 π² (z_⊥/4)² 1.035 J_⊥² ≈ (6.4 J_⊥)² at z_⊥ = 4, agrees within ~10 % with
the soliton mass of the chain in the staggered mean field that the random-phase treatment
of Essler, Tsvelik & Delfino (1997) puts there (M ≈ 1.85 J (h/J)^{2/3} ln^{1/6}(J/h),
h = z_⊥ J_⊥ m_0; Affleck & Oshikawa 1999, from memory): the interchain dispersion scales
with J_⊥, not with √(J J_⊥) as plain spin-wave theory has it.  At J_⊥ = 0, Δ = 1 the mode
is exactly (π/2) J |sin q| (des Cloizeaux & Pearson 1962).

Beyond J_⊥ ≪ J the chain picture fails; with x = (m_S/S)² = 1.0351 z_⊥ J_⊥/J (Schulz's
moment, unbounded) we interpolate (our choice, stated in the card)

    s = 1 / (1 + x²),   Z_∥ = 1 + (π/2 − 1) s,   μ = x / (1 + x),   f = 1 − s + s μ,

which keeps the leading small-x forms above, saturates the moment at m_0² = μ S² ≤ S², and
goes over to plain spin-wave theory (Z_∥ → 1, f → 1) for J_⊥ ≳ J, where the remaining
(Oguchi) correction of a three-dimensional antiferromagnet is ~10 % (Oguchi 1960, from
memory) and is not included.

The anisotropy gap S J̃_0 √(Δ² − 1) is the renormalised spin-wave gap.  In the ordered
state it matches the hydrodynamic estimate gap² = 2 K_A / χ_⊥ (anisotropy stiffness from
the chain's nearest-neighbour correlations) to ~10 % for Δ − 1 ≪ 1; it does not go over to
the exponentially small two-spinon gap of an isolated Ising-like chain (J_⊥ → 0, Δ > 1),
where the ordered-state picture fails (stated in the card).

Intensities (single-mode approximation)
---------------------------------------
Each transverse component carries one mode whose T = 0 weight saturates the exact
first-moment sum rule (Hohenberg & Brinkman 1974), the rule that also fixes the spinon
family's amplitude:

    w(Q) = M_1(Q) / ħω(Q),
    M_1(Q) = J [−c_x − Δ c_z + cos q (c_z + Δ c_x)] + J_⊥ m_0² Σ_{d ∈ a(,b)} (Δ − cos q_d),

the double commutator ⟨[[S^x_Q, H], S^x_{−Q}]⟩/2N per spin, with the chain's
nearest-neighbour correlations c_z = ⟨S^z_i S^z_{i+1}⟩ = ∂e_0/∂Δ (Hellmann–Feynman) and
c_x = (e_0 − Δ c_z)/2 from the exact XXZ ground-state energy e_0(Δ) = E_0/(N J)
(:func:`evidence1d.physics.chain.xxz_ground_state_energy`), and the interchain bonds in
mean field (⟨S^z S^z⟩ = −m_0², ⟨S^x S^x⟩ = 0).  With classical correlations (c_z = −S²,
c_x = 0, m_0 = S) it is the spin-wave weight (S/2)(A − B)/ω of :mod:`magnon` exactly.

References
----------
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
F. H. L. Essler, A. M. Tsvelik & G. Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
I. Affleck & M. Oshikawa, Phys. Rev. B 60, 1038 (1999) (from memory).
B. I. Halperin & P. C. Hohenberg, Phys. Rev. 188, 898 (1969) (hydrodynamic spin waves).
S. Eggert, I. Affleck & M. Takahashi, Phys. Rev. Lett. 73, 332 (1994).
P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974) (first-moment sum rule).
T. Oguchi, Phys. Rev. 117, 117 (1960) (from memory).
"""
from __future__ import annotations

import functools

import numpy as np
from scipy import interpolate

from . import magnon, magnon_lineshape
from .chain import xxz_ground_state_energy

__all__ = ["SPIN", "Z_CHAIN", "SCHULZ_MOMENT", "renormalisation", "effective_exchanges",
           "chain_bond_correlations", "transverse_first_moment", "magnon_modes",
           "transverse_spectrum"]

#: the spin the renormalisation holds for
SPIN = 0.5
#: des Cloizeaux–Pearson velocity factor of the S = 1/2 Heisenberg chain
Z_CHAIN = np.pi / 2.0
#: Schulz (1996): m_0 = 1.0174 √(J_⊥/J) for four neighbouring chains (from memory)
SCHULZ_MOMENT = 1.0174
_DELTA_GRID = (0.98, 3.2, 1111)      # spline of e_0(Δ) for the bond correlations


def renormalisation(J, J_perp, z_perp=4):
    """Renormalisation factors of the coupled S = 1/2 chains (module notes).

    Parameters
    ----------
    J, J_perp : array_like
        Exchanges in meV (J > 0, J_⊥ ≥ 0; XXZ convention, antiferromagnetic).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    Z_par, f, m0_sq : ndarray
        Z_∥ (π/2 at J_⊥ = 0, → 1 for J_⊥ ≫ J), f = J̃_⊥/(Z_∥ J_⊥) (→ (m_0/S)² for small
        J_⊥, → 1 for J_⊥ ≫ J) and the ordered moment squared m_0² (≤ S² = 1/4).

    References
    ----------
    H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996) (m_0, from memory);
    B. I. Halperin & P. C. Hohenberg, Phys. Rev. 188, 898 (1969); des Cloizeaux & Pearson,
    Phys. Rev. 128, 2131 (1962).
    """
    J = np.asarray(J, float)
    Jp = np.asarray(J_perp, float)
    safe = np.where(J > 0, J, 1.0)
    x = np.where(J > 0, (SCHULZ_MOMENT ** 2) * z_perp * Jp / safe, np.inf)
    x = np.maximum(x, 0.0)
    with np.errstate(over="ignore", invalid="ignore"):
        s = 1.0 / (1.0 + x * x)
        mu = np.where(np.isfinite(x), x / (1.0 + x), 1.0)
    Z = 1.0 + (Z_CHAIN - 1.0) * s
    f = 1.0 - s + s * mu
    return Z, f, SPIN * SPIN * mu


def effective_exchanges(J, J_perp, z_perp=4):
    """Renormalised exchanges J̃ = Z_∥ J and J̃_⊥ = Z_∥ f J_⊥ in meV (module notes).

    Parameters
    ----------
    J, J_perp : array_like
        Exchanges in meV (XXZ convention, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    J_eff, J_perp_eff : ndarray
        Exchanges for the spin-wave formulas of :mod:`magnon` with S = 1/2.

    References
    ----------
    des Cloizeaux & Pearson (1962); Schulz (1996); Halperin & Hohenberg (1969).
    """
    Z, f, _ = renormalisation(J, J_perp, z_perp)
    return Z * np.asarray(J, float), Z * f * np.asarray(J_perp, float)


@functools.lru_cache(maxsize=1)
def _e0_spline():
    lo, hi, n = _DELTA_GRID
    d = np.linspace(lo, hi, n)
    spl = interpolate.CubicSpline(d, xxz_ground_state_energy(d))
    return spl, spl.derivative()


def chain_bond_correlations(delta):
    """Nearest-neighbour correlations of the S = 1/2 XXZ chain ground state.

    c_z = ⟨S^z_i S^z_{i+1}⟩ = ∂e_0/∂Δ (Hellmann–Feynman) and c_x = ⟨S^x_i S^x_{i+1}⟩ =
    (e_0 − Δ c_z)/2, with e_0 = E_0/(N J) from the exact ground-state energy, through a cubic
    spline on 0.98 ≤ Δ ≤ 3.2 (step 0.002).

    Parameters
    ----------
    delta : array_like
        Anisotropy 1 ≤ Δ ≤ 3 (H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0).

    Returns
    -------
    c_z, c_x : ndarray
        Dimensionless; both (1/4 − ln 2)/3 = −0.1477 at Δ = 1, c_z → −1/4 for Δ → ∞.

    References
    ----------
    L. Hulthén (1938); C. N. Yang & C. P. Yang, Phys. Rev. 150, 327 (1966) (e_0(Δ));
    H. Hellmann (1937) and R. P. Feynman, Phys. Rev. 56, 340 (1939) (∂E/∂λ = ⟨∂H/∂λ⟩).
    """
    delta = np.asarray(delta, float)
    e0, de0 = _e0_spline()
    cz = de0(delta)
    return cz, 0.5 * (e0(delta) - delta * cz)


def transverse_first_moment(q_par, q_a, q_b, J, J_perp, delta, z_perp=4):
    """First moment M_1(Q) = ∫ ω S^{xx}(Q, ω) dω of one transverse component (T = 0).

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases in radians, shape (n,).
    J, J_perp, delta : array_like
        Bare exchanges in meV and anisotropy Δ ≥ 1, shape (n_sets, 1) (XXZ convention).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    ndarray, shape (n_sets, n)
        M_1 in meV per spin (module notes); 0.2954 J (1 − cos q) for the Heisenberg chain.

    References
    ----------
    P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974).
    """
    J, Jp, d = (np.asarray(a, float) for a in (J, J_perp, delta))
    cz, cx = chain_bond_correlations(d)
    _, _, m0_sq = renormalisation(J, Jp, z_perp)
    chain = J * (-cx - d * cz + np.cos(q_par) * (cz + d * cx))
    perp = d - np.cos(q_a)
    if z_perp == 4:
        perp = perp + d - np.cos(q_b)
    return chain + Jp * m0_sq * perp


def magnon_modes(q_par, q_a, q_b, J, J_perp, delta, z_perp=4):
    """Renormalised mode energy, its phase gradient and its T = 0 weight.

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases in radians, shape (n,).
    J, J_perp, delta : array_like
        Bare exchanges in meV and anisotropy Δ ≥ 1, shape (n_sets, 1).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    omega, d_q, d_qa, weight : ndarray, shape (n_sets, n)
        ħω (meV), ∂ħω/∂q and ∂ħω/∂q_a (meV/rad) and w = M_1/ħω (per transverse
        component per spin).

    References
    ----------
    des Cloizeaux & Pearson (1962); Schulz (1996); Hohenberg & Brinkman (1974).
    """
    Je, Jpe = effective_exchanges(J, J_perp, z_perp)
    omega, d_q, d_qa, _ = magnon.dispersion_gradient(q_par, q_a, q_b, Je, Jpe, delta, SPIN,
                                                     z_perp)
    w = transverse_first_moment(q_par, q_a, q_b, J, J_perp, delta, z_perp) / omega
    return omega, d_q, d_qa, np.maximum(w, 0.0)


def transverse_spectrum(q_par, q_a, q_b, energy, sigma, temperature, J, J_perp, delta,
                        z_perp=4, damping=None, sigma_q_par=0.0, sigma_q_a=0.0):
    """Resolution-broadened one-magnon S^{xx}(Q, E) of one transverse component, per spin.

    The renormalised mode (:func:`magnon_modes`) as a pair at ±ħω_Q with the single-mode
    weight, in the project's finite-temperature convention S = χ''(n + 1)/π, damped with
    Γ_Q = η ħω_Q and broadened by the Gaussian resolution, whose width includes the
    momentum resolution through the analytic gradient,
    σ_eff² = σ² + (∂ω/∂q σ_q∥)² + (∂ω/∂q_a σ_qa)² (line shape and its accuracy:
    :func:`evidence1d.physics.magnon_lineshape.mode_pair`).

    Parameters
    ----------
    q_par, q_a, q_b : ndarray, shape (n,)
        Phases in radians.
    energy, sigma : ndarray, shape (n,)
        Energy transfer and Gaussian energy-resolution standard deviation in meV.
    temperature : float
        Sample temperature in K.
    J, J_perp, delta : ndarray, shape (n_sets, 1)
        Bare exchanges in meV and anisotropy Δ ≥ 1 (XXZ convention, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    damping : ndarray, shape (n_sets, 1), optional
        Damping ratio η = Γ_Q/ħω_Q ≥ 0 (``None``, or below 1e-12: sharp modes).
    sigma_q_par, sigma_q_a : float or ndarray, shape (n,)
        Momentum-resolution standard deviations as phases, σ_Q∥ d and σ_Q⊥ a_⊥ (rad).

    Returns
    -------
    ndarray, shape (n_sets, n)
        S^{xx}(Q, E) in 1/meV per spin.

    References
    ----------
    Hohenberg & Brinkman (1974); M. J. Cooper & R. Nathans, Acta Cryst. 23, 357 (1967)
    (Gaussian resolution, linearised dispersion); Lovesey (1984), Ch. 4.
    """
    omega, d_q, d_qa, w = magnon_modes(q_par, q_a, q_b, J, J_perp, delta, z_perp)
    sig2 = np.asarray(sigma, float) ** 2
    if np.any(np.asarray(sigma_q_par) > 0) or np.any(np.asarray(sigma_q_a) > 0):
        sig2 = sig2 + (d_q * sigma_q_par) ** 2 + (d_qa * sigma_q_a) ** 2
    return magnon_lineshape.mode_pair(energy, np.sqrt(sig2), omega, w, temperature, damping)

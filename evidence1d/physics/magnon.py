"""Linear spin waves of coupled chains with collinear Néel order.

Model
-----
Spins S on an orthorhombic lattice of chains: the chain runs along c with spin spacing d,
neighbouring chains sit at a_⊥ along a and b_⊥ along b.  Each spin has 2 neighbours along
the chain (exchange J) and z_⊥ on the neighbouring chains (exchange J_⊥), in one of the
interchain geometries of :data:`INTERCHAIN`: z_⊥ = 4 (rectangular: ±a and ±b) or z_⊥ = 2
(chains in planes: ±a only).  A triangular arrangement (z_⊥ = 6) is frustrated for
antiferromagnetic J_⊥ and has no collinear Néel ground state, so it is rejected.  Every
bond carries the same easy-axis exchange anisotropy Δ ≥ 1 (XXZ form, the convention of the
whole project):

    H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j],   J, J_⊥ > 0 antiferromagnetic.

Exchange anisotropy (not single-ion anisotropy D (S^z)²) is chosen because it opens a gap
for every spin including S = 1/2, where (S^z)² is a constant.  The classical ground state is
the Néel state with ordering vector (π/d, π/a_⊥, π/b_⊥), moments along z.

Linear spin-wave theory (Holstein–Primakoff bosons to order S, Bogoliubov transformation)
gives, in the chemical Brillouin zone (one spin per cell),

    J(Q)  = 2 J cos q + J_⊥(Q_⊥),   J_⊥(Q_⊥) = 2 J_⊥ (cos q_a + cos q_b)  [z_⊥ = 4]
                                      or 2 J_⊥ cos q_a                   [z_⊥ = 2],
    J_0 = J(0) = 2 J + z_⊥ J_⊥,
    A     = S Δ J_0,     B(Q) = S J(Q),
    ħω(Q) = √(A² − B(Q)²) = S √((Δ J_0)² − J(Q)²),

with q = Q_∥ d, q_a = Q_a a_⊥, q_b = Q_b b_⊥ (the ordering vector is (π, π, π) for z_⊥ = 4
and (π, π, any) for z_⊥ = 2).  The gap, at Q = 0 and at the ordering vector,
is ħω_gap = S J_0 √(Δ² − 1).  Each transverse spin component (x or y) has the one-magnon
structure factor per spin

    S^{xx}(Q, ω) = (S/2) (A − B(Q)) / ω(Q) · {[n(ω) + 1] δ(ω − ω_Q) + n(ω) δ(ω + ω_Q)},

strong at the ordering vector (B = −S J_0) and weak at Q = 0.  The gradient of ω(Q)
(:func:`dispersion_gradient`) is analytic: ∂ω/∂q = 2 S² J J(Q) sin q / ω and likewise for
the interchain phases.  For the S = 1/2 coupled chains the ordered family uses these
formulas with renormalised exchanges (:mod:`evidence1d.physics.ordered_magnon`).

References
----------
R. M. White, *Quantum Theory of Magnetism*, 3rd ed. (Springer, Berlin, 2007), Ch. 6
(Holstein–Primakoff treatment of the two-sublattice antiferromagnet, dispersion and
transverse correlation function).
T. Holstein & H. Primakoff, Phys. Rev. 58, 1098 (1940).
J. H. P. Colpa, Physica A 93, 327 (1978) (diagonalisation of quadratic boson Hamiltonians).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996) (Néel temperature of weakly coupled S = 1/2
chains).
G. H. Wannier, Phys. Rev. 79, 357 (1950) (the triangular Ising antiferromagnet: frustration,
no Néel order).
"""
from __future__ import annotations

import numpy as np
from scipy import special

from ..errors import InputError
from ..units import K_B_MEV

__all__ = [
    "INTERCHAIN", "check_interchain", "exchange_sum", "reduced_energy",
    "energy_from_exchange_sum", "dispersion", "dispersion_gradient", "spin_wave_gap",
    "one_magnon_weight", "spin_wave_velocities", "schulz_interchain_coupling",
    "neel_temperature", "OMEGA_FLOOR",
]

#: Smallest spin-wave energy as a fraction of S J_0 (keeps 1/ω finite at a Goldstone point).
OMEGA_FLOOR = 1e-6
_SCHULZ_A = 1.28      # Schulz (1996): J_⊥ = T_N / (1.28 √ln(5.8 J / T_N)), z_⊥ = 4
_SCHULZ_B = 5.8

#: interchain geometries: number of neighbouring chains z_⊥ -> what they are
INTERCHAIN = {4: "rectangular: neighbouring chains at ±a and ±b",
              2: "planar: neighbouring chains at ±a only (chains form ac planes)"}


def check_interchain(z_perp):
    """Validate an interchain geometry (number of neighbouring chains z_⊥).

    Parameters
    ----------
    z_perp : int
        2 (planar) or 4 (rectangular); 6 (triangular) is rejected because antiferromagnetic
        J_⊥ on a triangular arrangement of chains is frustrated and has no collinear Néel
        state for linear spin-wave theory to expand about.

    Returns
    -------
    int
        ``z_perp`` as an int.

    Raises
    ------
    InputError
        Any other value.

    References
    ----------
    G. H. Wannier, Phys. Rev. 79, 357 (1950) (frustration of the triangular antiferromagnet).
    """
    if isinstance(z_perp, (int, np.integer)) and not isinstance(z_perp, bool) \
            and int(z_perp) in INTERCHAIN:
        return int(z_perp)
    if z_perp == 6:
        raise InputError("interchain: 6 (triangular chains) is frustrated for "
                         "antiferromagnetic J_perp and has no collinear Néel state; use 4 "
                         "(rectangular) or 2 (planar)")
    raise InputError(f"the 'interchain' option must be 4 (rectangular) or 2 (planar) "
                     f"neighbouring chains; got {z_perp!r} instead")


def _perp_sum(q_a, q_b, z_perp):
    """cos q_a + cos q_b (z_⊥ = 4) or cos q_a (z_⊥ = 2)."""
    return np.cos(q_a) + np.cos(q_b) if z_perp == 4 else np.cos(q_a) + 0.0 * np.asarray(q_b)


def exchange_sum(q_par, q_a, q_b, J, J_perp, z_perp=4):
    """Fourier sum of the exchange J(Q) = 2 J cos q + J_⊥(Q_⊥) (module notes).

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases Q_∥ d, Q_a a_⊥, Q_b b_⊥ in radians, shape (n,).
    J, J_perp : array_like
        Exchanges in meV, shape (n_sets, 1); H = Σ J_ij S_i·S_j (XXZ form), J > 0 AFM.
    z_perp : {4, 2}, optional
        Interchain geometry (:data:`INTERCHAIN`); q_b is ignored for 2.

    Returns
    -------
    ndarray, shape (n_sets, n)
        J(Q) in meV.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (lattice Fourier transform of
    the exchange).
    """
    return 2.0 * J * np.cos(q_par) + 2.0 * J_perp * _perp_sum(q_a, q_b, z_perp)


def _a_and_b(q_par, q_a, q_b, J, J_perp, delta, spin, z_perp=4):
    J0 = 2.0 * J + z_perp * J_perp
    A = spin * delta * J0
    B = spin * exchange_sum(q_par, q_a, q_b, J, J_perp, z_perp)
    return A, B, spin * J0


def reduced_energy(d_minus, d_plus, delta):
    """Spin-wave energy in units of S J_0 from the exchange deficits d_∓ = 1 ∓ J(Q)/J_0.

    ħω / (S J_0) = √((Δ − J(Q)/J_0)(Δ + J(Q)/J_0)) = √((Δ − 1 + d_−)(Δ − 1 + d_+)); written
    in d_− (small near Q = 0) and d_+ (small near the ordering vector) so that the rounding
    stays relative at both energy minima.  d_− + d_+ = 2.

    Parameters
    ----------
    d_minus, d_plus : array_like
        1 − J(Q)/J_0 and 1 + J(Q)/J_0, each in [0, 2] (dimensionless), broadcastable.
    delta : array_like
        Easy-axis anisotropy Δ ≥ 1 (XXZ convention), broadcastable.

    Returns
    -------
    ndarray
        ħω / (S J_0) (dimensionless), floored at ``OMEGA_FLOOR``; the gap is √(Δ² − 1).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6.
    """
    dm1 = np.asarray(delta, float) - 1.0
    w2 = (dm1 + np.asarray(d_minus, float)) * (dm1 + np.asarray(d_plus, float))
    return np.maximum(np.sqrt(np.maximum(w2, 0.0)), OMEGA_FLOOR)


def energy_from_exchange_sum(J_Q, J, J_perp, delta, spin, z_perp=4):
    """Spin-wave energy S √((Δ J_0)² − J(Q)²) from a given exchange sum J(Q).

    Parameters
    ----------
    J_Q : array_like
        Exchange sum J(Q) in meV (see :func:`exchange_sum`), broadcastable.
    J, J_perp, delta : array_like
        Exchanges in meV and anisotropy Δ ≥ 1 (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.
    z_perp : {4, 2}, optional
        Interchain geometry (J_0 = 2 J + z_⊥ J_⊥).

    Returns
    -------
    ndarray
        ħω in meV, floored at ``OMEGA_FLOOR`` · S J_0 (S J_0 times :func:`reduced_energy`).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6.
    """
    J0 = 2.0 * np.asarray(J, float) + z_perp * np.asarray(J_perp, float)
    J_Q = np.asarray(J_Q, float)
    safe = np.where(J0 > 0, J0, 1.0)
    # J_0 ∓ J(Q) are exact differences near the minima (Sterbenz), so ω keeps its digits
    d_m = np.where(J0 > 0, (J0 - J_Q) / safe, 1.0)
    d_p = np.where(J0 > 0, (J0 + J_Q) / safe, 1.0)
    return spin * J0 * reduced_energy(d_m, d_p, delta)


def dispersion(q_par, q_a, q_b, J, J_perp, delta, spin, z_perp=4):
    """Linear spin-wave energy ħω(Q) = S √((Δ J_0)² − J(Q)²) of the coupled-chain Néel state.

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases Q_∥ d, Q_a a_⊥, Q_b b_⊥ in radians, shape (n,).
    J, J_perp : array_like
        Exchange along and between chains in meV, shape (n_sets, 1), J > 0 AFM,
        J_⊥ ≥ 0; H = Σ J_ij [S^x S^x + S^y S^y + Δ S^z S^z].
    delta : array_like
        Easy-axis exchange anisotropy Δ ≥ 1 (dimensionless), shape (n_sets, 1).
    spin : float
        Spin quantum number S.
    z_perp : {4, 2}, optional
        Interchain geometry (:data:`INTERCHAIN`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        ħω in meV, ≥ ``OMEGA_FLOOR`` · S J_0 (finite at a Goldstone point when Δ = 1).
        With J_⊥ = 0 and Δ = 1 it is the 1D result 2 J S |sin q|.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6;
    T. Holstein & H. Primakoff, Phys. Rev. 58, 1098 (1940).
    """
    return energy_from_exchange_sum(exchange_sum(q_par, q_a, q_b, J, J_perp, z_perp), J,
                                    J_perp, delta, spin, z_perp)


def dispersion_gradient(q_par, q_a, q_b, J, J_perp, delta, spin, z_perp=4):
    """Spin-wave energy and its analytic derivatives with respect to the three phases.

    From ω² = S² ((Δ J_0)² − J(Q)²): ∂ω/∂q = 2 S² J J(Q) sin q / ω,
    ∂ω/∂q_a = 2 S² J_⊥ J(Q) sin q_a / ω, and for z_⊥ = 4 ∂ω/∂q_b = 2 S² J_⊥ J(Q) sin q_b / ω
    (0 for z_⊥ = 2).  Near a Goldstone point the ratio stays finite (the velocity); where
    ω sits on its floor the derivatives are set by the floored ω.

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases in radians, shape (n,).
    J, J_perp, delta : array_like
        Exchanges in meV and anisotropy Δ ≥ 1, shape (n_sets, 1) (XXZ convention, J > 0
        AFM).
    spin : float
        Spin S.
    z_perp : {4, 2}, optional
        Interchain geometry.

    Returns
    -------
    omega, d_q, d_qa, d_qb : ndarray, shape (n_sets, n)
        ħω in meV and ∂ħω/∂(phase) in meV per radian; multiply by d, a_⊥ or b_⊥ (Å) for
        ∂ħω/∂Q in meV Å.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6 (the
    dispersion differentiated in closed form).
    """
    J = np.asarray(J, float)
    Jp = np.asarray(J_perp, float)
    J_Q = exchange_sum(q_par, q_a, q_b, J, Jp, z_perp)
    omega = energy_from_exchange_sum(J_Q, J, Jp, delta, spin, z_perp)
    f = 2.0 * spin * spin * J_Q / omega
    d_q = f * J * np.sin(q_par)
    d_qa = f * Jp * np.sin(q_a)
    d_qb = f * Jp * np.sin(q_b) if z_perp == 4 else np.zeros_like(d_q)
    return omega, d_q, d_qa, d_qb


def spin_wave_gap(J, J_perp, delta, spin, z_perp=4):
    """Spin-wave gap S J_0 √(Δ² − 1), J_0 = 2 J + z_⊥ J_⊥, at Q = 0 and the ordering vector.

    Parameters
    ----------
    J, J_perp : array_like
        Exchanges in meV (XXZ convention, J > 0 AFM).
    delta : array_like
        Easy-axis anisotropy Δ ≥ 1.
    spin : float
        Spin S.
    z_perp : {4, 2}, optional
        Interchain geometry.

    Returns
    -------
    ndarray
        Gap in meV.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (anisotropy gap of the
    two-sublattice antiferromagnet).
    """
    J0 = 2.0 * np.asarray(J, float) + z_perp * np.asarray(J_perp, float)
    d = np.asarray(delta, float)
    return spin * J0 * np.sqrt(np.maximum(d * d - 1.0, 0.0))


def one_magnon_weight(q_par, q_a, q_b, J, J_perp, delta, spin, z_perp=4):
    """Zero-temperature one-magnon weight of one transverse spin component per spin.

    w(Q) = (S/2) (A − B(Q)) / ω(Q), A = S Δ J_0, B = S J(Q): the integral over energy of
    S^{xx}(Q, ω) at T = 0 (equal for S^{yy}).

    Parameters
    ----------
    q_par, q_a, q_b : array_like
        Phases in radians, shape (n,).
    J, J_perp, delta : array_like
        Exchanges (meV) and anisotropy, shape (n_sets, 1); XXZ convention, J > 0 AFM.
    spin : float
        Spin S.
    z_perp : {4, 2}, optional
        Interchain geometry.

    Returns
    -------
    ndarray, shape (n_sets, n)
        Dimensionless weight (spin² per spin).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (transverse correlation function
    of the antiferromagnet in spin-wave theory); J. H. P. Colpa, Physica A 93, 327 (1978).
    """
    A, B, _ = _a_and_b(q_par, q_a, q_b, J, J_perp, delta, spin, z_perp)
    omega = energy_from_exchange_sum(B / spin, J, J_perp, delta, spin, z_perp)
    return 0.5 * spin * (A - B) / omega


def spin_wave_velocities(J, J_perp, spin, d=1.0, a_perp=1.0, b_perp=1.0, z_perp=4):
    """Spin-wave velocities at a Goldstone point of the isotropic (Δ = 1) model.

    Expanding ω near the ordering vector: ħω ≈ √(c_∥² k_∥² + c_⊥² (k_a² + k_b²)) with
    c_∥ = S √(2 J J_0) d and c_⊥ = S √(2 J_⊥ J_0) a_⊥ (b_⊥ for b; 0 for z_⊥ = 2),
    J_0 = 2 J + z_⊥ J_⊥.

    Parameters
    ----------
    J, J_perp : array_like
        Exchanges in meV (XXZ convention at Δ = 1).
    spin : float
        Spin S.
    d, a_perp, b_perp : float, optional
        Spacings in Å; with the default 1 the velocities are per radian of phase (meV).
    z_perp : {4, 2}, optional
        Interchain geometry.

    Returns
    -------
    v_par, v_a, v_b : ndarray
        Velocities in meV Å (or meV per radian).  v_par = 2 J S d when J_⊥ = 0.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (linear dispersion of the
    antiferromagnet at long wavelength).
    """
    J = np.asarray(J, float)
    J_perp = np.asarray(J_perp, float)
    J0 = 2.0 * J + z_perp * J_perp
    v_par = spin * np.sqrt(2.0 * J * J0) * d
    v_perp = spin * np.sqrt(2.0 * J_perp * J0)
    return v_par, v_perp * a_perp, v_perp * b_perp * (z_perp == 4)


# ------------------------------------------------------------------------ Néel temperature
def schulz_interchain_coupling(T_N, J, z_perp=4):
    """Interchain exchange that gives the Néel temperature T_N of coupled S = 1/2 chains.

    J_⊥ = (4/z_⊥) k_B T_N / (1.28 √ln(5.8 J / k_B T_N)), for k_B T_N < 5.8 J.  Schulz's
    relation is derived for z_⊥ = 4 from the interchain mean-field (random-phase)
    criterion z_⊥ J_⊥ χ_s(T_N) = 1 with the chain's staggered susceptibility χ_s, so it
    depends on z_⊥ J_⊥ only; the factor 4/z_⊥ carries it to other geometries (our
    generalisation, exact within that criterion).

    Parameters
    ----------
    T_N : array_like
        Néel temperature in K (≥ 0).
    J : array_like
        Chain exchange in meV (H = J Σ S_i·S_{i+1}, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    ndarray
        J_⊥ in meV (0 at T_N = 0).

    References
    ----------
    H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996), Eq. (9) (from memory for the equation
    number).
    """
    t = K_B_MEV * np.asarray(T_N, dtype=float)
    J = np.asarray(J, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        L = np.log(_SCHULZ_B * J / np.where(t > 0, t, 1.0))
        out = t / (_SCHULZ_A * np.sqrt(np.where(L > 0, L, np.nan)))
    return np.where(t > 0, out, 0.0) * (4.0 / z_perp)


def neel_temperature(J, J_perp, z_perp=4):
    """Néel temperature of weakly coupled chains from Schulz's relation, inverted.

    Solves (z_⊥/4) J_⊥ = k_B T_N / (1.28 √ln(5.8 J / k_B T_N)) for T_N (the z_⊥ scaling as
    in :func:`schulz_interchain_coupling`).  With x = k_B T_N / J and
    L = ln(5.8 / x) the relation reads 2L + ln L = 2 ln(5.8 J / (1.28 J_⊥)), whose solution
    is L = W(2 (5.8 J / 1.28 J_⊥)²) / 2 with W the principal Lambert function; the
    right-hand side is monotonic, so the root is unique for every J_⊥ > 0.  For very small
    J_⊥ the argument is handled in log form (asymptotic W plus Newton steps), and J_⊥ = 0
    gives T_N = 0 continuously.

    Parameters
    ----------
    J, J_perp : array_like
        Chain and interchain exchange in meV (J > 0 AFM, J_⊥ ≥ 0).

    Returns
    -------
    ndarray
        T_N in K (finite, ≥ 0; < 5.8 J / k_B).

    References
    ----------
    H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996); Lambert W: R. M. Corless et al.,
    Adv. Comput. Math. 5, 329 (1996).
    """
    J = np.asarray(J, dtype=float)
    Jp = np.asarray(J_perp, dtype=float) * (z_perp / 4.0)
    J, Jp = np.broadcast_arrays(J, Jp)
    pos = (Jp > 0) & (J > 0)
    c = np.where(pos, np.log(_SCHULZ_B / _SCHULZ_A) + np.log(np.where(pos, J, 1.0))
                 - np.log(np.where(pos, Jp, 1.0)), 0.0)        # 2L + ln L = 2c
    lnz = np.log(2.0) + 2.0 * c                         # z = 2 e^{2c}
    small = lnz < 600.0
    with np.errstate(over="ignore"):
        z = np.exp(np.where(small, lnz, 0.0))
    W = np.where(small, special.lambertw(z).real, 0.0)
    lnl = np.log(np.maximum(lnz, 1.0))
    W_asym = lnz - lnl + lnl / np.maximum(lnz, 1.0)
    L = 0.5 * np.where(small, W, W_asym)
    L = np.maximum(L, 1e-300)
    for _ in range(3):                                  # Newton polish of 2L + ln L − 2c
        f = 2.0 * L + np.log(L) - 2.0 * c
        L = np.maximum(L - f / (2.0 + 1.0 / L), 0.5 * L)
    x = _SCHULZ_B * np.exp(-L)
    return np.where(pos, x * J / K_B_MEV, 0.0)

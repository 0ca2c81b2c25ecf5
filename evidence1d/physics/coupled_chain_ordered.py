"""Weakly coupled S = 1/2 XXZ chains below T_N: mean field plus random-phase modes.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j], J along the chain,
J_⊥ to each of z_⊥ neighbouring chains (:data:`evidence1d.physics.magnon.INTERCHAIN`),
J, J_⊥ > 0 antiferromagnetic; energies meV, temperatures K, phases q = Q_∥ d, q_a, q_b rad.

The treatment (Schulz 1996; Essler, Tsvelik & Delfino 1997)
-----------------------------------------------------------
Mean field: each chain sits in the staggered field h = z_⊥ κ_o J_⊥ m of its neighbours'
ordered moments m, along the component o that orders (z with κ_o = Δ for Δ ≥ 1, a direction
in the plane with κ_o = 1 for Δ < 1: the criterion of
:mod:`evidence1d.physics.coupled_chain_thermo`).  The chain in a staggered field is the
sine-Gordon model at β² = 2π, with solitons of mass M = 1.85 J (h/J)^{2/3} L^{1/6},
L = ln(1 + J/h) (Affleck & Oshikawa 1999 with ln(J/h) → ln(1 + J/h) so that it stays
positive; from memory), and breathers B₁ (mass M) and B₂ (mass √3 M).  Transverse to the
moments the staggered spin creates solitons; along them it is even under the sine-Gordon
charge conjugation and creates B₂ but not B₁: at this level the longitudinal gap is √3
times the transverse one (Essler, Tsvelik & Delfino 1997, from memory).  The moment is
Schulz's self-consistent m₀ = 1.0174 √(z_⊥ κ_o J_⊥/4J) for z_⊥ = 4 (through
:func:`evidence1d.physics.ordered_magnon.renormalisation`, which saturates it at S), reduced
below T_N as m(T) = m₀ √(1 − (T/T_N)²) (our interpolation: the mean-field exponent 1/2 at
T_N, flat as T → 0; T_N of :func:`evidence1d.physics.coupled_chain_thermo.neel_temperature`).

Random phase: the chain's transverse staggered response near q = π is the soliton pole
χ_t^1D = Z_T/(M² + (v sin q)² − ω²), v = u J the spinon velocity
(:func:`evidence1d.physics.chain_thermo.luttinger_velocity`; π/2 at Δ = 1, des Cloizeaux &
Pearson 1962), whose static value is fixed by rotating the field, χ_t^1D(π, 0) = m/h, so
Z_T = M² m/h.  Dressed with κ_t J_⊥(Q_⊥) as above T_N, the pole moves to

    ω_t(Q)² = (v sin q)² + M² [1 + κ_t J_⊥(Q_⊥)/(z_⊥ κ_o J_⊥)],

a Goldstone mode at the ordering vector when κ_t = κ_o (Δ = 1; the in-plane mode for Δ < 1),
a gap M √(1 − κ_t/κ_o) otherwise, M where J_⊥(Q_⊥) = 0.  The longitudinal mode is kept at
its mean-field energy, ω_L(Q)² = (v sin q)² + 3M², with residue Z_L = 3M² ∂m/∂h = Z_T
(B₂ carrying the longitudinal static response m/3h of m ∝ h^{1/3}: a single-mode upper
bound; the two-soliton continuum's share is neglected).  Each mode carries
S = w [(n + 1) δ(ω − ω_m) + n δ(ω + ω_m)] per spin component with w = Z (1 − cos q)/(4 ω_m)
(the residue's staggered weight interpolated to zero at q = 0 by (1 − cos q)/2, the factor of
the chain's first moment; our choice).

Continuum: the chain's spectrum (:func:`evidence1d.physics.chain_spectrum.spinon_density`,
the spinon family's) above the two-soliton threshold, |ω| > ω_c = √((v sin q)² + 4M²), and
nothing below it (so detailed balance holds point by point).

References
----------
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
F. H. L. Essler, A. M. Tsvelik & G. Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
I. Affleck & M. Oshikawa, Phys. Rev. B 60, 1038 (1999) (from memory).
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from . import magnon, ordered_magnon
from .chain_spectrum import spinon_density
from .chain_thermo import luttinger_velocity
from .coupled_chain import _check, interchain_exchange
from .coupled_chain_thermo import neel_temperature

__all__ = ["SOLITON_PREFACTOR", "ordered_state", "ordered_modes", "ordered_continuum",
           "two_soliton_threshold"]

#: M = 1.85 J (h/J)^{2/3} ln^{1/6}: Affleck & Oshikawa (1999), from memory
SOLITON_PREFACTOR = 1.85


def ordered_state(T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                  thermal_edge="near_pi"):
    """Mean-field state of the coupled chains at temperature T (module notes), per set.

    Parameters
    ----------
    T : float
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV (J > 0, J_⊥ ≥ 0) and anisotropy Δ.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family (they set T_N).

    Returns
    -------
    dict of ndarray, shape (n_sets, 1)
        ``T_N`` (K), ``moment`` m (per spin, 0 above T_N), ``field`` h (meV),
        ``soliton_mass`` M (meV), ``velocity`` v (meV per radian), ``kappa_order`` κ_o and
        the transverse ``kappa_1``, ``kappa_2``.

    References
    ----------
    Schulz (1996); Affleck & Oshikawa (1999) and Essler, Tsvelik & Delfino (1997) (from
    memory).
    """
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge)
    z_perp = magnon.check_interchain(z_perp)
    Jp = np.broadcast_to(np.asarray(J_perp, float).reshape(-1, 1), J.shape)
    TN = neel_temperature(J, Jp, delta, z_perp=z_perp, line_shape=line_shape,
                          thermal_edge=thermal_edge)
    k_o = np.maximum(delta, 1.0)
    m0 = np.sqrt(ordered_magnon.renormalisation(J, k_o * Jp, z_perp)[2])
    frac = np.where(TN > 0, 1.0 - (T / np.where(TN > 0, TN, 1.0)) ** 2, 0.0)
    m = m0 * np.sqrt(np.clip(frac, 0.0, 1.0))
    h = z_perp * k_o * Jp * m
    x = h / J
    with np.errstate(divide="ignore"):
        M = np.where(x > 0, SOLITON_PREFACTOR * J * np.cbrt(x * x)
                     * np.log1p(1.0 / np.where(x > 0, x, 1.0)) ** (1.0 / 6.0), 0.0)
    return {"T_N": TN, "moment": m, "field": h, "soliton_mass": M,
            "velocity": luttinger_velocity(delta) * J, "kappa_order": k_o,
            "kappa_1": np.ones_like(delta), "kappa_2": np.where(delta >= 1.0, 1.0, delta)}


def ordered_modes(q, q_a, q_b, T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                  thermal_edge="near_pi"):
    """Energies and weights of the two transverse modes and the longitudinal one below T_N.

    Parameters
    ----------
    q, q_a, q_b : array_like, shape (n,)
        Chain and interchain phases in radians.
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ (module notes for H).
    z_perp : {4, 2}, optional
        Interchain geometry.
    line_shape, thermal_edge : str, optional
        As the spinon family (they set T_N).

    Returns
    -------
    dict
        For 'transverse_1', 'transverse_2' and 'longitudinal': ``omega`` ω_m (meV, NaN
        where there is no order) and ``weight`` w (dimensionless, 0 where there is no
        order), each (n_sets, n): one spin component carries
        S = w [(n + 1) δ(ω − ω_m) + n δ(ω + ω_m)] per spin.

    Raises
    ------
    InputError
        Bad temperature, exchange or option.

    References
    ----------
    Schulz, Phys. Rev. Lett. 77, 2790 (1996); Essler, Tsvelik & Delfino, Phys. Rev. B 56,
    11001 (1997) (from memory); Lovesey (1984) (detailed balance).
    """
    st = ordered_state(T, J, J_perp, delta, z_perp=z_perp, line_shape=line_shape,
                       thermal_edge=thermal_edge)
    q, q_a, q_b = np.broadcast_arrays(*(np.asarray(x, float) for x in (q, q_a, q_b)))
    Jp = np.asarray(J_perp, float).reshape(-1, 1)
    Jq = interchain_exchange(q_a, q_b, Jp, z_perp)                 # (n_sets, n)
    M2 = st["soliton_mass"] ** 2
    along = (st["velocity"] * np.sin(q)) ** 2
    ordered = (st["moment"] > 0) & np.ones(Jq.shape, bool)
    safe = np.where(Jp > 0, z_perp * st["kappa_order"] * Jp, 1.0)
    stag = 0.5 * (1.0 - np.cos(q))
    out = {}
    for key, shift in (("transverse_1", st["kappa_1"] * Jq / safe),
                       ("transverse_2", st["kappa_2"] * Jq / safe),
                       ("longitudinal", 2.0 + 0.0 * Jq)):
        w2 = along + M2 * (1.0 + shift)
        # a Goldstone mode's weight ∝ 1/ω: ω floored at 10⁻⁶ M, as the ordered family does
        om = np.maximum(np.sqrt(np.maximum(w2, 0.0)), magnon.OMEGA_FLOOR * st["soliton_mass"])
        live = ordered & (om > 0)
        weight = np.where(live, M2 * st["moment"] / np.where(st["field"] > 0, st["field"],
                                                             1.0) * stag
                          / (2.0 * np.where(live, om, 1.0)), 0.0)
        out[key] = {"omega": np.where(ordered, om, np.nan), "weight": weight}
    return out


def ordered_continuum(q, omega, T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                      thermal_edge="near_pi"):
    """The continuum below T_N: the chain's S_1D for |ω| above the two-soliton threshold.

    Parameters
    ----------
    q, omega : array_like, shape (n,)
        Chain phase (rad) and energy transfer (meV, any sign).
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ.
    z_perp : {4, 2}, optional
        Interchain geometry.
    line_shape, thermal_edge : str, optional
        As the spinon family.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in 1/meV per spin, three components summed; S_1D itself above T_N.

    References
    ----------
    Essler, Tsvelik & Delfino (1997) (from memory); Karbach et al., Phys. Rev. B 55, 12510
    (1997) (the chain's line shape).
    """
    st = ordered_state(T, J, J_perp, delta, z_perp=z_perp, line_shape=line_shape,
                       thermal_edge=thermal_edge)
    q, omega = np.broadcast_arrays(np.asarray(q, float), np.asarray(omega, float))
    J, delta = np.asarray(J, float).reshape(-1, 1), np.asarray(delta, float).reshape(-1, 1)
    S = spinon_density(q, np.ascontiguousarray(omega), T, J, delta, line_shape=line_shape,
                       thermal_edge=thermal_edge)
    return np.where(np.abs(omega) > two_soliton_threshold(q, st), S, 0.0)


def two_soliton_threshold(q, state):
    """Lower end of the continuum below T_N, ω_c = √((v sin q)² + 4M²) (0 without order).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    state : dict
        :func:`ordered_state` of the parameter sets.

    Returns
    -------
    ndarray, shape (n_sets, n)
        ω_c in meV.

    Raises
    ------
    InputError
        A threshold that is not finite.

    References
    ----------
    Essler, Tsvelik & Delfino, Phys. Rev. B 56, 11001 (1997) (from memory): two solitons of
    mass M moving with the spinon velocity v.
    """
    q = np.asarray(q, float)
    wc = np.sqrt((state["velocity"] * np.sin(q)) ** 2 + 4.0 * state["soliton_mass"] ** 2)
    if np.any(~np.isfinite(wc)):
        raise InputError("the ordered-state threshold is not finite; check J and J_perp")
    return np.where(state["moment"] > 0, wc, 0.0)


"""Thermodynamics of weakly coupled S = 1/2 XXZ chains with three-dimensional Néel order.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j], J along the chain,
J_⊥ to each of z_⊥ neighbouring chains, J, J_⊥ > 0 antiferromagnetic, Δ ≥ 1; t = k_B T / J.

Above T_N: the exact chain dressed by interchain mean field
---------------------------------------------------------------
The chain's χ*, C and S (χ* = χ J / (N g² μ_B²)) come from the exact tables of
:func:`evidence1d.physics.chain_thermo.xxz_thermodynamics`, the same the spinon family uses.
Treating the interchain bonds in mean field (random-phase approximation) the uniform
field on a spin is reduced by the z_⊥ J_⊥-weighted magnetisation of its neighbours, so

    χ*_zz = χ*_1D,zz / (1 + z_⊥ (J_⊥/J) Δ χ*_1D,zz),
    χ*_xy = χ*_1D,xy / (1 + z_⊥ (J_⊥/J) χ*_1D,xy)

(Scalapino, Imry & Pincus 1975; Schulz 1996); its high-temperature expansion is the
Curie–Weiss law with the full mean-field θ.  Mean field adds no energy above T_N, so C and
S are the chain's.  J_⊥ = 0 gives the spinon family's χ, C and S exactly.

The Néel temperature
--------------------
T_N is Schulz's coupled-chain relation (:func:`evidence1d.physics.magnon.neel_temperature`)
everywhere: the join below, and nothing else.

Below T_N: the ordered state
----------------------------
* χ_⊥ (field ⊥ the moments, direction ``xy``) stays at its value at T_N (molecular-field
  result for a collinear antiferromagnet); χ_∥ (``z``) falls as the magnon-gas longitudinal
  susceptibility, χ_∥ ∝ ⟨n(n+1)⟩_BZ / T (Kubo 1952), scaled to χ_zz(T_N) at T_N.
* C(T) is the magnon gas of the renormalised dispersion
  (:mod:`evidence1d.physics.ordered_magnon`) scaled to meet the chain C at T_N:
  C(T) = C_1D(T_N) C_gas(T) / C_gas(T_N).  S(T) = ∫₀ᵀ C/T' dT' exactly: below T_N
  S = C_1D(T_N) S_gas(T) / C_gas(T_N); above, S = S_1D(T) − S_1D(T_N) + S(T_N).
  The entropy below T_N is small, of order (k_B T_N / J) R ln 2; the chain entropy
  S_1D(T_N) − S(T_N) that the scaled gas does not recover (a fraction ~0.6 k_B T_N / J of
  R ln 2 for Δ = 1) is the weight a real crystal puts into the critical anomaly at T_N,
  which is not modelled: S(∞) falls short of R ln 2 by that amount.

All quantities are continuous at T_N, vectorised over parameter sets, and finite for every
T ≥ 0 (a temperature below 10⁻⁹ K is treated as 10⁻⁹ K).

References
----------
D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
R. Kubo, Phys. Rev. 87, 568 (1952).
R. M. White, *Quantum Theory of Magnetism*, 3rd ed. (Springer, 2007), Chs. 4 and 6
(molecular field, χ_⊥ constant below T_N; magnon thermodynamics).
A. Klümper, Z. Phys. B 91, 507 (1993) (exact chain thermodynamics behind the tables).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..units import K_B_MEV, R_GAS, chi_star_to_emu_per_mol
from . import bose_thermo, magnon, ordered_magnon
from .chain_thermo import xxz_thermodynamics

__all__ = ["rpa_susceptibility", "neel_temperature", "ordered_susceptibility",
           "ordered_heat_capacity", "ordered_entropy", "DIRECTIONS"]

DIRECTIONS = ("powder", "z", "xy")
_T_FLOOR = 1e-9           # K
_T_N_FLOOR = 1e-300       # K; T_N below it is treated as 0 (no ordered state)


def rpa_susceptibility(chi_star, J, J_perp, coupling=1.0, z_perp=4):
    """Interchain random-phase (mean-field) dressing of the chain's uniform susceptibility.

    χ*_3D = χ*_1D / (1 + z_⊥ (J_⊥/J) κ χ*_1D), κ = Δ for the field along z and 1 in the
    xy plane (XXZ anisotropy on the interchain bonds too).

    Parameters
    ----------
    chi_star : array_like
        Chain χ* = χ J / (N g² μ_B²) (dimensionless).
    J, J_perp : array_like
        Exchanges in meV (H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ] on every bond, J > 0 AFM).
    coupling : array_like, optional
        κ: Δ for χ_zz, 1 for χ_xy.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    ndarray
        χ* of the coupled chains, in the chain's units (multiply by N g² μ_B² / J).

    References
    ----------
    D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975); H. J. Schulz,
    Phys. Rev. Lett. 77, 2790 (1996).
    """
    J = np.asarray(J, float)
    r = np.asarray(J_perp, float) / np.where(J > 0, J, 1.0)
    chi_star = np.asarray(chi_star, float)
    return chi_star / (1.0 + z_perp * r * np.asarray(coupling, float) * chi_star)


def neel_temperature(J, J_perp, z_perp=4):
    """T_N in K from Schulz's relation (:func:`magnon.neel_temperature`), shape as J.

    Parameters
    ----------
    J, J_perp : array_like
        Exchanges in meV (XXZ convention, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.

    Returns
    -------
    ndarray
        T_N in K (0 at J_⊥ = 0).

    References
    ----------
    H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
    """
    return magnon.neel_temperature(J, J_perp, z_perp)


def _prepare(T, J, J_perp, delta, z_perp):
    T = np.asarray(T, float)
    if T.ndim != 1 or np.any(~np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be a 1-D array of finite values >= 0 K")
    J, Jp, d = np.broadcast_arrays(*(np.asarray(a, float).reshape(-1, 1)
                                     for a in (J, J_perp, delta)))
    magnon.check_interchain(z_perp)
    TN = magnon.neel_temperature(J, Jp, z_perp)
    ordered = TN > _T_N_FLOOR
    TN = np.where(ordered, TN, 0.0)
    return np.maximum(T, _T_FLOOR), J, Jp, d, TN, ordered


def _chain(T, J, delta, quantities):
    """Chain table at the shared temperatures T (n,) for every set: (n_sets, n) each."""
    return xxz_thermodynamics(K_B_MEV * T[None, :] / J, delta, quantities)


def _chain_at(TN, J, delta, quantities):
    """Chain table at one temperature per set (T_N), (n_sets, 1) each; T_N = 0 -> floor."""
    t = K_B_MEV * np.maximum(TN, _T_FLOOR) / J
    return xxz_thermodynamics(t, delta, quantities)


def _gas(T, TN, J, Jp, d, z_perp, funcs, method):
    """ln of the renormalised magnon-gas averages at T (n,) and at T_N: (.., n) and (.., 1).

    Only the ordered sets (T_N > 0) are computed; the others, whose results the callers
    never use (no temperature is below their T_N = 0 and their weight c_N is 0), get 0.
    """
    keys = ("log_c", "log_s", "log_nn1")
    n_sets = J.shape[0]
    rows = np.flatnonzero(TN[:, 0] > 0)
    out = {keys[k]: (np.zeros((n_sets, T.size)), np.zeros((n_sets, 1))) for k in funcs}
    if not rows.size:
        return out
    J_, Jp_, d_, TN_ = J[rows], Jp[rows], d[rows], TN[rows]
    Je, Jpe = ordered_magnon.effective_exchanges(J_, Jp_, z_perp)
    T_all = np.concatenate([np.broadcast_to(T, (rows.size, T.size)),
                            np.maximum(TN_, _T_FLOOR)], axis=1)
    g = bose_thermo.magnon_gas(T_all, Je, Jpe, d_, ordered_magnon.SPIN, method=method,
                               z_perp=z_perp, funcs=funcs)
    for k in funcs:
        lt, ln = out[keys[k]]
        lt[rows] = g[keys[k]][:, :-1]
        ln[rows] = g[keys[k]][:, -1:]
    return out


def ordered_susceptibility(T, J, J_perp, delta, g, direction="powder", z_perp=4,
                           method="table"):
    """Molar susceptibility of the coupled chains above and below T_N (module notes).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy 1 ≤ Δ ≤ 3 (XXZ convention, J > 0 AFM).
    g : array_like, shape (n_sets, 1)
        Landé g factor.
    direction : {'powder', 'z', 'xy'}
        Field along the easy axis (the moments), perpendicular to it, or the powder average
        (χ_z + 2 χ_xy)/3.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    method : {'table', 'direct'}, optional
        Magnon gas behind χ_∥ below T_N (:func:`bose_thermo.magnon_gas`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ in emu/mol of magnetic ion.

    Raises
    ------
    InputError
        Unknown direction, bad temperatures or geometry.

    References
    ----------
    Scalapino, Imry & Pincus (1975); Schulz (1996); Kubo (1952); White (2007), Ch. 4.
    """
    if direction not in DIRECTIONS:
        raise InputError(f"unknown field direction {direction!r}; expected one of "
                         "powder, z, xy")
    T, J, Jp, d, TN, _ = _prepare(T, J, J_perp, delta, z_perp)
    below = T[None, :] < TN
    any_below = bool(np.any(below))
    parts = {"z": ("chi_star", d), "xy": ("chi_star_perp", 1.0)}
    weights = {"z": 1.0 / 3.0, "xy": 2.0 / 3.0} if direction == "powder" else {direction: 1.0}
    keys = tuple(parts[c][0] for c in weights)
    chain = _chain(T, J, d, keys)
    chain_N = _chain_at(TN, J, d, keys) if any_below else None
    out = 0.0
    for comp, wgt in weights.items():
        key, kappa = parts[comp]
        chi = rpa_susceptibility(chain[key], J, Jp, kappa, z_perp)
        if any_below:
            chi_N = rpa_susceptibility(chain_N[key], J, Jp, kappa, z_perp)
            if comp == "xy":
                low = np.broadcast_to(chi_N, chi.shape)
            else:
                l_T, l_N = _gas(T, TN, J, Jp, d, z_perp, (2,), method)["log_nn1"]
                TNs = np.maximum(TN, _T_FLOOR)
                low = chi_N * np.exp(np.minimum(l_T - l_N + np.log(TNs / T[None, :]), 0.0))
            chi = np.where(below, low, chi)
        out = out + wgt * chi
    return chi_star_to_emu_per_mol(out, J, np.asarray(g, float))


def _heat_entropy(T, J, J_perp, delta, z_perp, method, want):
    T, J, Jp, d, TN, ordered = _prepare(T, J, J_perp, delta, z_perp)
    below = T[None, :] < TN
    key = {"c": "c_over_r", "s": "s_over_r"}[want]
    value = _chain(T, J, d, (key,))[key]
    if not np.any(ordered):
        return R_GAS * value
    at_N = _chain_at(TN, J, d, ("c_over_r", "s_over_r"))
    c_N = np.where(ordered, at_N["c_over_r"], 0.0)
    gas = _gas(T, TN, J, Jp, d, z_perp, (0, 1) if want == "s" else (0,), method)
    lc_T, lc_N = gas["log_c"]
    if want == "c":
        low = c_N * np.exp(np.minimum(lc_T - lc_N, 0.0))
        return R_GAS * np.where(below, low, value)
    ls_T, ls_N = gas["log_s"]
    s_low_N = c_N * np.exp(ls_N - lc_N)                 # S(T_N) of the scaled gas
    low = c_N * np.exp(np.minimum(ls_T - lc_N, ls_N - lc_N))
    s_N = np.where(ordered, at_N["s_over_r"], 0.0)
    high = value - s_N + s_low_N
    return R_GAS * np.where(below, low, high)


def ordered_heat_capacity(T, J, J_perp, delta, z_perp=4, method="table"):
    """Magnetic heat capacity: exact chain above T_N, scaled magnon gas below (notes).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy 1 ≤ Δ ≤ 3 (XXZ convention, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    method : {'table', 'direct'}, optional
        Magnon-gas evaluation (:func:`bose_thermo.magnon_gas`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        C in J/(mol K) per mol of magnetic ion, continuous at T_N.

    References
    ----------
    Klümper (1993) (chain); White (2007), Ch. 6 (magnon gas); Schulz (1996) (T_N).
    """
    return _heat_entropy(T, J, J_perp, delta, z_perp, method, "c")


def ordered_entropy(T, J, J_perp, delta, z_perp=4, method="table"):
    """Magnetic entropy S(T) = ∫₀ᵀ C/T' dT' of :func:`ordered_heat_capacity`.

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy 1 ≤ Δ ≤ 3 (XXZ convention, J > 0 AFM).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    method : {'table', 'direct'}, optional
        Magnon-gas evaluation.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in J/(mol K) per mol of magnetic ion; S_1D(T) exactly when J_⊥ = 0, and short of
        R ln 2 at high T by the unmodelled critical entropy otherwise (module notes).

    References
    ----------
    Klümper (1993); White (2007), Ch. 6.
    """
    return _heat_entropy(T, J, J_perp, delta, z_perp, method, "s")

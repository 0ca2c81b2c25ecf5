"""Weakly coupled S = 1/2 XXZ chains in the random-phase approximation: T_N and thermodynamics.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j], J along the chain,
J_⊥ to each of z_⊥ neighbouring chains (:data:`evidence1d.physics.magnon.INTERCHAIN`),
J, J_⊥ > 0 antiferromagnetic; energies meV, temperatures K.

The Néel temperature
--------------------
The random-phase dressing of :mod:`evidence1d.physics.coupled_chain`,
χ^aa = χ^aa_1D/(1 + κ_a J_⊥(Q_⊥) χ^aa_1D), has its static pole first at the ordering vector
Q_0 (J_⊥(Q_0) = −z_⊥ J_⊥, q = π) and in the component with the largest κ_a f_a
(κ_z = Δ, κ_x = 1; f_a the components' shares of the line shape): T_N solves

    z_⊥ J_⊥ max_a(κ_a f_a(π)) χ'_1D(π, 0; T_N) = 1,

with χ'_1D(π, 0; T) = (2/π) ∫ χ''_1D(π, ω)/ω dω of the spinon family's line shape, computed
by the same transform as the dynamics (so the pole of the dynamics appears exactly at T_N).
It is solved per parameter set by bracketing on a grid of ln T and the Illinois
false-position method in the bracketing cell (14 steps; relative accuracy 10⁻⁹ in T_N;
Dowell & Jarratt, BIT 11, 168 (1971)).  Below k_BT = 10⁻⁵ of the continuum top at π the line shape's edge
floor (:data:`evidence1d.physics.chain.OMEGA_FLOOR`) caps χ'_1D(π, 0), so couplings too weak
to order above that give T_N = 0 (no order).

Schulz's relation (Schulz 1996), k_B T_N = 1.28 J_⊥ √ln(5.8 J/k_B T_N) for z_⊥ = 4
(:func:`evidence1d.physics.magnon.neel_temperature`), is the same criterion with the
asymptotic staggered susceptibility of the Heisenberg chain per spin component,
χ_s(T) = (0.32/k_BT) √ln(5.8 J/k_BT) (1.28 = z_⊥ × 0.32; Starykh, Sandvik & Singh, Phys.
Rev. B 55, 14953 (1997), from memory); the tests compare the two.  Both are random-phase
(mean-field) values and overestimate the true T_N: quantum Monte Carlo of coupled
Heisenberg chains gives the same form with a renormalised coordination,
ζ z_⊥ J_⊥ χ_s(T_N) = 1, ζ ≈ 0.70 (Yasuda et al., Phys. Rev. Lett. 94, 217201 (2005), from
memory), i.e. a T_N lower by about 30 % (tests).

Thermodynamics
--------------
Above T_N the chain tables (:func:`evidence1d.physics.chain_thermo.xxz_thermodynamics`, the
spinon family's) are dressed in the same approximation, uniform field (Q = 0,
J_⊥(0) = z_⊥ J_⊥): χ*_zz → χ*_zz/(1 + z_⊥ (J_⊥/J) Δ χ*_zz), χ*_xy → χ*_xy/(1 + z_⊥
(J_⊥/J) χ*_xy) (:func:`evidence1d.physics.ordered_thermo.rpa_susceptibility`); the
random-phase approximation adds no energy above T_N, so C and S are the chain's.  J_⊥ = 0
gives the spinon family's χ, C and S exactly.  Below T_N the ordered family's treatment
(:mod:`evidence1d.physics.ordered_thermo`: χ_⊥ frozen at T_N, χ_∥ and C from the
renormalised magnon gas scaled to meet the chain at T_N, S = ∫ C/T dT) is used at this
family's T_N: the ordered family's functions take T_N from Schulz's relation, so they are
called with the interchain coupling J_⊥' that gives this T_N in that relation
(:func:`evidence1d.physics.magnon.schulz_interchain_coupling`), and χ below T_N is scaled
by the ratio of the two dressings at T_N so that it is continuous there.  The magnon gas
then uses J_⊥' instead of J_⊥ (5 to 20 % apart with the exact line shape): a stated
approximation until the ordered family's thermodynamics accept T_N directly.  For Δ < 1
(order in the xy plane, outside the ordered family's domain Δ ≥ 1) the chain's
thermodynamics are kept below T_N as well.

References
----------
D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
O. A. Starykh, A. W. Sandvik & R. R. P. Singh, Phys. Rev. B 55, 14953 (1997) (from memory).
C. Yasuda, S. Todo, K. Hukushima, F. Alet, M. Keller, M. Troyer & H. Takayama, Phys. Rev.
Lett. 94, 217201 (2005) (from memory).
"""
from __future__ import annotations

import math
from collections import OrderedDict

import numpy as np

from ..errors import InputError
from ..units import K_B_MEV, R_GAS, chi_star_to_emu_per_mol
from . import coupled_chain_kk_table as kk_table
from . import magnon, ordered_thermo
from .chain import all_sheets
from .chain_thermo import xxz_thermodynamics
from .coupled_chain import _check, component_shares

__all__ = ["staggered_susceptibility", "ordering_coupling", "neel_temperature",
           "coupled_susceptibility", "coupled_heat_capacity", "coupled_entropy"]

_N_SCAN = 48              # ln T grid of the bracketing scan
_N_ILLINOIS = 14          # Illinois false-position steps on ln T (to ~1e-12)
_THETA_LO, _THETA_HI = 1e-5, 30.0      # scan range of k_BT / ω_top(π)


def _pi_sheets(J, delta):
    """Sheets at q = π: (r, ω_top, A) of each sheet present, (n_sets, 1) each."""
    (wl, top, A, _), (wl_s, b, A_s, _), _ = all_sheets(np.array([np.pi]), J, delta)
    return [(lo / np.where(amp > 0, hi, 1.0), np.where(amp > 0, hi, 1.0), amp)
            for lo, hi, amp in ((wl, top, A), (wl_s, b, A_s))]


def _staggered(kT, sheets, line_shape, thermal_edge):
    """χ'_1D(π, 0) at k_BT (n_sets, m) from the sheets of :func:`_pi_sheets`."""
    out = 0.0
    for r, top, amp in sheets:
        if not np.any(amp > 0):
            continue
        theta = kT / top
        V = kk_table.table_real(np.zeros(theta.shape), np.broadcast_to(r, theta.shape), theta,
                          line_shape, thermal_edge)
        out = out + np.where(amp > 0, math.pi * amp * V / top, 0.0)
    return out


def staggered_susceptibility(T, J, delta, *, line_shape="exact", thermal_edge="near_pi"):
    """Static staggered susceptibility χ'_1D(π, 0; T) of the chain, per spin, 1/meV.

    Three spin components summed ((2/π) ∫ χ''_1D(π, ω)/ω dω of the spinon family's line
    shape, by the transform of :mod:`evidence1d.physics.coupled_chain_kk`); one component
    carries the share f_a of :func:`evidence1d.physics.coupled_chain.component_shares`.

    Parameters
    ----------
    T : array_like, shape (n,) or (n_sets, n)
        Temperature in K (≥ 0).
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ (H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0).
    line_shape, thermal_edge : str, optional
        As the spinon family.

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ'_1D(π, 0) in 1/meV.

    References
    ----------
    Kramers–Kronig at ω = 0 (Nussenzveig 1972); Schulz, Phys. Rev. B 34, 6372 (1986)
    (the thermal edge; from memory).
    """
    _, J, delta = _check(0.0, J, delta, line_shape, thermal_edge)
    T = np.asarray(T, float)
    if np.any(~np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be finite values >= 0 K")
    kT = K_B_MEV * np.broadcast_to(np.atleast_2d(T), (J.shape[0], np.atleast_2d(T).shape[-1]))
    return _staggered(kT, _pi_sheets(J, delta), line_shape, thermal_edge)


def ordering_coupling(J, delta):
    """max_a κ_a f_a: the share times interchain anisotropy of the component that orders.

    Parameters
    ----------
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.

    Returns
    -------
    c, ndarray (n_sets, 1), and is_z, ndarray of bool (n_sets, 1)
        c = max(Δ, 1)/3 and whether the z component orders (Δ ≥ 1).

    References
    ----------
    Scalapino, Imry & Pincus (1975); the module notes.
    """
    f_zz, f_xx = component_shares(np.array([np.pi]), J, delta)
    cz, cx = np.asarray(delta, float) * f_zz, f_xx
    return np.maximum(cz, cx), cz >= cx


_TN_CACHE: "OrderedDict" = OrderedDict()
_TN_CACHE_SIZE = 4096          # parameter sets


def neel_temperature(J, J_perp, delta, *, z_perp=4, line_shape="exact",
                     thermal_edge="near_pi"):
    """T_N from z_⊥ J_⊥ max_a(κ_a f_a) χ'_1D(π, 0; T_N) = 1 (module notes), per set.

    Parameters
    ----------
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV (J > 0, J_⊥ ≥ 0; antiferromagnetic) and anisotropy Δ.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family.

    Returns
    -------
    ndarray, shape (n_sets, 1)
        T_N in K (0: no order).

    Raises
    ------
    InputError
        J ≤ 0, J_⊥ < 0, bad geometry or option.

    References
    ----------
    Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); Schulz, Phys. Rev. Lett. 77,
    2790 (1996).
    """
    _, J, delta = _check(0.0, J, delta, line_shape, thermal_edge)
    z_perp = magnon.check_interchain(z_perp)
    Jp = np.broadcast_to(np.asarray(J_perp, float).reshape(-1, 1), J.shape)
    if np.any(~np.isfinite(Jp)) or np.any(Jp < 0):
        raise InputError("the interchain exchange J_perp must be finite and >= 0 (meV)")
    # one likelihood asks for the same sets' T_N several times (spectra, the ordered subset,
    # thermodynamics): a cache of the last answers per set, keyed by its exact inputs (each
    # set's T_N depends on its own parameters only), so a subset of a batch is not solved
    # again
    opts = (z_perp, line_shape, thermal_edge)
    keys = [(a, b, c) + opts for a, b, c in zip(J.ravel().tolist(), Jp.ravel().tolist(),
                                                delta.ravel().tolist())]
    TN = np.empty((len(keys), 1))
    miss = []
    for i, k in enumerate(keys):
        v = _TN_CACHE.get(k)
        if v is None:
            miss.append(i)
        else:
            TN[i, 0] = v
    if miss:
        ix = np.asarray(miss)
        TN[ix] = _solve_neel(J[ix], Jp[ix], delta[ix], z_perp, line_shape, thermal_edge)
        for i in miss:
            _TN_CACHE[keys[i]] = float(TN[i, 0])
        while len(_TN_CACHE) > _TN_CACHE_SIZE:
            _TN_CACHE.popitem(last=False)
    return TN


def _solve_neel(J, Jp, delta, z_perp, line_shape, thermal_edge):
    """:func:`neel_temperature` on checked (n_sets, 1) arrays, without the cache."""
    sheets = _pi_sheets(J, delta)
    g = z_perp * Jp * ordering_coupling(J, delta)[0]               # (n_sets, 1)
    top = sheets[0][1]
    grid = np.exp(np.linspace(math.log(_THETA_LO), math.log(_THETA_HI), _N_SCAN))
    kT = top * grid                                                # (n_sets, N_SCAN)
    F = g * _staggered(kT, sheets, line_shape, thermal_edge) - 1.0
    above = F > 0                                                  # ordered at that T
    k = np.where(above.any(axis=1), _N_SCAN - 1 - np.argmax(above[:, ::-1], axis=1), -1)
    ordered = k >= 0
    hi_open = ordered & (k == _N_SCAN - 1)                         # still ordered at the top
    kk_ = np.clip(k, 0, _N_SCAN - 2)
    rows = np.arange(J.shape[0])
    lo_t = np.log(kT[rows, kk_])[:, None]
    hi_t = np.log(kT[rows, kk_ + 1])[:, None]
    # Illinois false position on ln T inside the bracketing cell (F > 0 at lo, < 0 at hi)
    f_lo = F[rows, kk_][:, None]
    f_hi = F[rows, kk_ + 1][:, None]
    side = np.zeros_like(lo_t)
    for _ in range(_N_ILLINOIS):
        den = f_lo - f_hi
        mid = np.where(den != 0, lo_t + f_lo * (hi_t - lo_t) / np.where(den != 0, den, 1.0),
                       0.5 * (lo_t + hi_t))
        mid = np.clip(mid, np.minimum(lo_t, hi_t), np.maximum(lo_t, hi_t))
        f = g * _staggered(np.exp(mid), sheets, line_shape, thermal_edge) - 1.0
        up = f > 0                                     # mid is still ordered: new low end
        f_hi = np.where(up & (side > 0), 0.5 * f_hi, f_hi)   # Illinois: halve the end kept
        f_lo = np.where(~up & (side < 0), 0.5 * f_lo, f_lo)  # twice in a row
        lo_t, f_lo = np.where(up, mid, lo_t), np.where(up, f, f_lo)
        hi_t, f_hi = np.where(up, hi_t, mid), np.where(up, f_hi, f)
        side = np.where(up, 1.0, -1.0)
    TN = np.exp(np.where(np.abs(f_lo) < np.abs(f_hi), lo_t, hi_t)) / K_B_MEV
    TN = np.where(hi_open[:, None], kT[:, -1:] / K_B_MEV, TN)
    return np.where(ordered[:, None] & (g > 0), TN, 0.0)


# ------------------------------------------------------------------ thermodynamics
def _prepare(T, J, J_perp, delta, z_perp, line_shape, thermal_edge):
    T = np.asarray(T, float)
    if T.ndim != 1 or np.any(~np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be a 1-D array of finite values >= 0 K")
    _, J, delta = _check(0.0, J, delta, line_shape, thermal_edge)
    Jp = np.broadcast_to(np.asarray(J_perp, float).reshape(-1, 1), J.shape)
    TN = neel_temperature(J, Jp, delta, z_perp=z_perp, line_shape=line_shape,
                          thermal_edge=thermal_edge)
    # the interchain coupling with this T_N in Schulz's relation (the ordered family's);
    # the ordered family's thermodynamics need Δ ≥ 1: below T_N the chain's otherwise
    TN = np.where(delta >= 1.0, TN, 0.0)
    with np.errstate(invalid="ignore"):
        Jp_eff = magnon.schulz_interchain_coupling(TN, J, z_perp)
    Jp_eff = np.where((TN > 0) & np.isfinite(Jp_eff), Jp_eff, np.where(TN > 0, Jp, 0.0))
    return T, J, Jp, delta, TN, Jp_eff


def coupled_susceptibility(T, J, J_perp, delta, g, *, direction="powder", z_perp=4,
                           line_shape="exact", thermal_edge="near_pi"):
    """Molar susceptibility of the coupled chains, emu/mol of magnetic ion (module notes).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta, g : array_like, shape (n_sets, 1)
        Exchanges in meV, anisotropy Δ (H = Σ J_ij [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0) and the
        Landé factor.
    direction : {'powder', 'z', 'xy'}, optional
        Field along z, in the xy plane, or (χ_z + 2χ_xy)/3.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family (they set T_N).

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ in emu/mol; the spinon family's exactly at J_⊥ = 0.

    References
    ----------
    Scalapino, Imry & Pincus (1975); Schulz (1996); Eggert, Affleck & Takahashi, Phys. Rev.
    Lett. 73, 332 (1994) (the reduced χ*).
    """
    if direction not in ordered_thermo.DIRECTIONS:
        raise InputError(f"unknown field direction {direction!r}; expected powder, z or xy")
    T, J, Jp, delta, TN, Jp_eff = _prepare(T, J, J_perp, delta, z_perp, line_shape,
                                           thermal_edge)
    g = np.asarray(g, float).reshape(-1, 1)
    below = T[None, :] < TN
    parts = {"z": ("chi_star", delta), "xy": ("chi_star_perp", 1.0)}
    weights = {"z": 1.0 / 3.0, "xy": 2.0 / 3.0} if direction == "powder" else {direction: 1.0}
    t = K_B_MEV * np.maximum(T, 1e-9)[None, :] / J
    chain = xxz_thermodynamics(t, delta, tuple(parts[c][0] for c in weights))
    out = 0.0
    for comp, wgt in weights.items():
        key, kappa = parts[comp]
        chi = chi_star_to_emu_per_mol(
            ordered_thermo.rpa_susceptibility(chain[key], J, Jp, kappa, z_perp), J, g)
        if np.any(below):
            tN = K_B_MEV * np.maximum(TN, 1e-9) / J
            at_N = xxz_thermodynamics(tN, delta, (key,))[key]
            mine = ordered_thermo.rpa_susceptibility(at_N, J, Jp, kappa, z_perp)
            theirs = ordered_thermo.rpa_susceptibility(at_N, J, Jp_eff, kappa, z_perp)
            low = ordered_thermo.ordered_susceptibility(T, J, Jp_eff, delta, g, comp, z_perp)
            chi = np.where(below, low * mine / np.where(below, theirs, 1.0), chi)
        out = out + wgt * chi
    return out


def _heat_entropy(T, J, J_perp, delta, z_perp, line_shape, thermal_edge, want):
    T, J, Jp, delta, TN, Jp_eff = _prepare(T, J, J_perp, delta, z_perp, line_shape,
                                           thermal_edge)
    if not np.any(TN > 0):
        key = {"c": "c_over_r", "s": "s_over_r"}[want]
        t = K_B_MEV * np.maximum(T, 1e-9)[None, :] / J
        return R_GAS * xxz_thermodynamics(t, delta, (key,))[key]
    f = ordered_thermo.ordered_heat_capacity if want == "c" else ordered_thermo.ordered_entropy
    return f(T, J, Jp_eff, delta, z_perp)


def coupled_heat_capacity(T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                          thermal_edge="near_pi"):
    """Magnetic heat capacity in J/(mol K) of magnetic ion (module notes).

    The chain's above T_N (the random-phase dressing adds no energy there), the ordered
    family's scaled magnon gas below this family's T_N.

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ (1 ≤ Δ ≤ 3 where the sets order).
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family (they set T_N).

    Returns
    -------
    ndarray, shape (n_sets, n)
        C in J/(mol K); the spinon family's exactly at J_⊥ = 0.

    References
    ----------
    Klümper, Z. Phys. B 91, 507 (1993) (chain); Schulz (1996).
    """
    return _heat_entropy(T, J, J_perp, delta, z_perp, line_shape, thermal_edge, "c")


def coupled_entropy(T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                    thermal_edge="near_pi"):
    """Magnetic entropy S(T) = ∫₀ᵀ C/T' dT' of :func:`coupled_heat_capacity`, J/(mol K).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in J/(mol K).

    References
    ----------
    Klümper (1993); the ordered family's notes (:mod:`evidence1d.physics.ordered_thermo`).
    """
    return _heat_entropy(T, J, J_perp, delta, z_perp, line_shape, thermal_edge, "s")

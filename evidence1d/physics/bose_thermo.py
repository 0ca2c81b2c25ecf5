"""Thermodynamics of the coupled-chain Néel antiferromagnet: magnon gas and paramagnet.

Heat capacity and entropy
-------------------------
Below a crossover temperature the spins are a gas of non-interacting magnons with the
linear spin-wave dispersion of :mod:`evidence1d.physics.magnon` (one mode per wavevector of
the chemical Brillouin zone, i.e. one mode per spin):

    C_sw / R = ⟨ x² eˣ / (eˣ − 1)² ⟩_BZ,     S_sw / R = ⟨ x / (eˣ − 1) − ln(1 − e⁻ˣ) ⟩_BZ,

x = ħω(Q) / k_B T, ⟨⋯⟩_BZ the average over the zone.  At high temperature the leading term
of the high-temperature series of the XXZ Hamiltonian holds,

    C_HT / R = (S(S+1)/3)² (2 + Δ²) (J² + 2 J_⊥²) / (k_B T)²

(one chain bond and two interchain bonds per spin).  C_sw rises monotonically to R and C_HT
falls monotonically, so they cross once, at T_x; the model heat capacity is
C = min(C_sw, C_HT): magnon gas below T_x, series above, continuous everywhere and finite at
every temperature, including the one-dimensional limit J_⊥ = 0 (where T_N = 0).  The entropy
is the exact integral ∫ C/T dT of that C: S_sw(T) below T_x and
S_sw(T_x) + (R b / 2)(1/(k_B T_x)² − 1/(k_B T)²) above, with b the coefficient of C_HT.
The critical anomaly at T_N is not modelled (T_N enters χ only).

Zone quadrature
---------------
A fixed product rule in the three phases with nodes clustered cubically towards q = 0 and
q = π (q(s) = π (s − sin(2πs)/2π), midpoint rule in s), so that the Goldstone regions that
dominate at low temperature are resolved; the symmetries q_b ↔ q_a and Q → Q + (π, π, π)
(ω(Q) unchanged) halve the work twice.

Fast path (``method="table"``, the default)
-------------------------------------------
C/R, S/R and ⟨n(n+1)⟩ are read from the shipped spline table of
:mod:`evidence1d.physics.spin_wave_table` (functions of τ = k_B T / (S J_0), r = J_⊥/J and
Δ for every S; format, interpolation and its accuracy are described there).  The crossover
T_x is solved on the same spline (bracketed Newton), T_N comes from the closed form of
:func:`magnon.neel_temperature`; nothing loops over parameter sets.  At
k_B T ≲ 10⁻² S J_0 the table is more accurate than the direct rule at n_grid = 24, whose
product grid no longer resolves the energy minima there.  Sets outside the table (Δ > 3,
J_⊥/J > 100, J ≤ 0) use the direct path.  Above τ = 50 the table continues linearly in
ln τ; C, S and χ never need it there (they use the gas only below T_x and T_N).  Cost:
C + χ at 50–100 temperatures ~0.06 ms per parameter set against 3–5 ms for the direct rule
(benchmarks/bench_spin_wave_thermo.py).

Susceptibility
--------------
Above T_N: Curie–Weiss, χ = C_Curie / (T + θ) with the mean-field Weiss temperatures
θ_z = S(S+1) Δ J_0 / (3 k_B) (field along the easy axis) and θ_xy = S(S+1) J_0 / (3 k_B),
J_0 = 2 J + 4 J_⊥.  Below T_N (Schulz's relation, :func:`magnon.neel_temperature`): the
perpendicular susceptibility stays at its value at T_N (molecular-field result for a
collinear antiferromagnet) and the parallel one falls to zero as the magnon-gas
longitudinal susceptibility χ_∥ ∝ (1/T) ⟨n(n + 1)⟩_BZ, scaled to equal χ_CW,z(T_N) at T_N.
Powder: (χ_z + 2 χ_xy)/3.  All continuous at T_N and finite as T_N → 0.

References
----------
R. M. White, *Quantum Theory of Magnetism*, 3rd ed. (Springer, 2007), Ch. 6 (magnon
thermodynamics) and Ch. 4 (molecular-field theory of the antiferromagnet: Curie–Weiss θ,
χ_⊥ constant below T_N).
G. S. Rushbrooke & P. J. Wood, Mol. Phys. 1, 257 (1958) (high-temperature series of the
Heisenberg model).
R. Kubo, Phys. Rev. 87, 568 (1952) (spin-wave theory of the antiferromagnet, longitudinal
susceptibility from magnon-number fluctuations).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
W. H. Press et al., *Numerical Recipes*, 3rd ed. (CUP, 2007), Sect. 9.4 (bracketed Newton
root of the crossover on the spline).
"""
from __future__ import annotations

import functools

import numpy as np
from scipy import special

from ..errors import InputError
from ..units import K_B_MEV, R_GAS, curie_constant
from . import magnon
from .spin_wave_table import (  # noqa: F401  (_spline_matrix, _basis: re-exported)
    _X_FLOOR, TABLE_PATH, _basis, _spline_matrix, log_zone_averages, spin_wave_table)

__all__ = [
    "zone_nodes", "magnon_gas", "high_temperature_heat_capacity", "crossover_temperature",
    "spin_wave_heat_capacity", "spin_wave_entropy", "curie_weiss_theta",
    "spin_wave_susceptibility", "log_zone_averages", "spin_wave_table", "METHODS",
    "TABLE_PATH", "N_GRID", "N_BINS",
]

#: default number of quadrature nodes per phase
N_GRID = 24
#: default number of log-spaced energies the zone nodes are compressed onto (None: exact)
N_BINS = 512
_T_FLOOR = 1e-9        # K; below it a temperature is treated as this value
_CHUNK = 32            # temperatures per vectorised block (bounds memory)
#: ways to evaluate the magnon gas: shipped spline table (fast) or zone quadrature (reference)
METHODS = ("table", "direct")


@functools.lru_cache(maxsize=8)
def _zone_nodes_cached(n_grid: int):
    s = (np.arange(n_grid) + 0.5) / n_grid
    q = np.pi * (s - np.sin(2.0 * np.pi * s) / (2.0 * np.pi))
    wq = (1.0 - np.cos(2.0 * np.pi * s)) / n_grid          # (1/π) dq/ds Δs, sums to 1
    c, idx = np.cos(q), np.arange(n_grid)
    i, j, k = np.meshgrid(idx, idx, idx, indexing="ij")
    keep = j <= k                                           # q_a ↔ q_b symmetry
    i, j, k = i[keep], j[keep], k[keep]
    w = wq[i] * wq[j] * wq[k] * np.where(j == k, 1.0, 2.0)
    # Q -> Q + (π, π, π) maps node (i, j, k) to (n-1-i, n-1-k, n-1-j) with ω unchanged
    mi, mj, mk = n_grid - 1 - i, n_grid - 1 - k, n_grid - 1 - j
    key = (i * n_grid + j) * n_grid + k
    mkey = (mi * n_grid + mj) * n_grid + mk
    first = key < mkey
    self_ = key == mkey
    w = np.where(first, 2.0 * w, w)
    sel = first | self_
    u, v, w = c[i[sel]], c[j[sel]] + c[k[sel]], w[sel]
    for a in (u, v, w):
        a.setflags(write=False)
    return u, v, w


def zone_nodes(n_grid: int = N_GRID):
    """Quadrature nodes and weights for averages over the chemical Brillouin zone.

    Parameters
    ----------
    n_grid : int
        Nodes per phase (≥ 2).

    Returns
    -------
    u, v, w : ndarray, shape (n_nodes,)
        u = cos q, v = cos q_a + cos q_b at the nodes and weights w summing to 1, for
        functions of J(Q) = 2 J u + 2 J_⊥ v that are invariant under J(Q) → −J(Q).

    References
    ----------
    Midpoint rule with a smooth clustering substitution: P. J. Davis & P. Rabinowitz,
    Methods of Numerical Integration, 2nd ed. (Academic Press, 1984), Sect. 2.9.
    """
    if isinstance(n_grid, bool) or not isinstance(n_grid, (int, np.integer)) or n_grid < 2:
        raise InputError(f"the 'n_grid' parameter of zone_nodes must be an integer >= 2; "
                         f"got {n_grid!r} instead")
    u, v, w = _zone_nodes_cached(int(n_grid))
    return u.copy(), v.copy(), w.copy()


def _node_energies(J, J_perp, delta, spin, n_grid, n_bins=None):
    """Spin-wave energies in meV and weights for zone averages, each (n_sets, m).

    With ``n_bins`` the node energies are compressed onto ``n_bins`` log-spaced energies per
    set (from the smallest to the largest node energy) by linear cloud-in-cell assignment in
    ln ω, which conserves the weight and the mean of ln ω and stays continuous in the
    parameters; the Bose sums then cost n_bins instead of n_nodes per temperature.
    """
    u, v, w = _zone_nodes_cached(int(n_grid))
    J = np.asarray(J, float).reshape(-1, 1)
    Jp = np.asarray(J_perp, float).reshape(-1, 1)
    d = np.asarray(delta, float).reshape(-1, 1)
    J, Jp, d = np.broadcast_arrays(J, Jp, d)
    Jq = 2.0 * J * u + 2.0 * Jp * v                    # exchange sum J(Q) at the nodes
    omega = magnon.energy_from_exchange_sum(Jq, J, Jp, d, spin)
    if n_bins is None:
        return omega, np.broadcast_to(w, omega.shape)
    n_sets = omega.shape[0]
    lw = np.log(omega)
    lo = lw.min(axis=1, keepdims=True)
    span = np.maximum(lw.max(axis=1, keepdims=True) - lo, 1e-12)
    pos = (lw - lo) / span * (n_bins - 1)
    i0 = np.minimum(np.floor(pos).astype(int), n_bins - 2)
    f = pos - i0
    base = (np.arange(n_sets) * n_bins)[:, None]
    wb = np.bincount((base + i0).ravel(), weights=(w * (1.0 - f)).ravel(),
                     minlength=n_sets * n_bins)
    wb += np.bincount((base + i0 + 1).ravel(), weights=(w * f).ravel(),
                      minlength=n_sets * n_bins)
    grid = lo + span * np.linspace(0.0, 1.0, n_bins)
    return np.exp(grid), wb.reshape(n_sets, n_bins)


def _bose_sums(omega, w, kT, entropy=True):
    """Zone averages for energies (n_sets, m) at kT (n_sets, k): C/R, S/R, ln⟨n(n+1)⟩."""
    out_c, out_s, out_l = [], [], []
    wk = w[:, None, :]
    for start in range(0, kT.shape[1], _CHUNK):
        t = kT[:, start:start + _CHUNK, None]
        x = np.maximum(omega[:, None, :] / t, _X_FLOOR)
        em = np.exp(-x)
        om1 = -np.expm1(-x)                      # 1 − e^{−x}
        nn1 = em / (om1 * om1)                   # n (n + 1)
        out_c.append(np.sum(wk * x * x * nn1, axis=-1))
        if entropy:
            lom1 = np.log(om1)
            out_s.append(np.sum(wk * (x * em / om1 - lom1), axis=-1))
            with np.errstate(divide="ignore"):
                out_l.append(special.logsumexp(-x - 2.0 * lom1, b=wk, axis=-1))
    if not entropy:
        return np.concatenate(out_c, axis=1), None, None
    return (np.concatenate(out_c, axis=1), np.concatenate(out_s, axis=1),
            np.concatenate(out_l, axis=1))


def _kT(T, n_sets):
    T = np.asarray(T, dtype=float)
    if np.any(~np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be finite and >= 0 K")
    return K_B_MEV * np.broadcast_to(np.maximum(T, _T_FLOOR), (n_sets,) + T.shape[-1:])


def _check_method(method):
    if method not in METHODS:
        raise InputError(f"the 'method' parameter must be one of {', '.join(METHODS)}; "
                         f"got {method!r} instead")


def _gas_from_table(T, J, J_perp, delta, spin, tab=None, cols=None):
    """Table magnon gas: ln of the averages in the columns' order, and the in-table mask."""
    tab = tab or spin_wave_table()
    cols, unit, g, inside = cols if cols is not None else tab.columns(J, J_perp, delta, spin)
    kT = _kT(T, unit.shape[0])
    tau = kT / np.where(unit > 0, unit, 1.0)
    return tab.evaluate(cols, np.log(tau))[0] - (g / tau)[..., None], inside


def _merge(inside, table_out, direct_fn):
    """Replace the rows outside the table by the direct path (computed for them only)."""
    if np.all(inside):
        return table_out
    rows = np.flatnonzero(~inside)
    fixed = direct_fn(rows)
    out = [np.array(a, copy=True) for a in table_out]
    for a, f in zip(out, fixed):
        a[rows] = f
    return tuple(out)


def _rows(a, rows):
    a = np.asarray(a, float)
    return a[rows] if a.ndim == 2 and a.shape[0] > 1 else a


def magnon_gas(T, J, J_perp, delta, spin, n_grid=N_GRID, n_bins=N_BINS, method="table"):
    """Heat capacity and entropy of the non-interacting magnon gas.

    Parameters
    ----------
    T : array_like, shape (n,) or (n_sets, n)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and easy-axis anisotropy Δ ≥ 1 (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.
    n_grid : int, optional
        Zone-quadrature nodes per phase (direct path).
    n_bins : int or None, optional
        Log-spaced energies the node energies are compressed onto (cloud-in-cell in ln ω;
        relative effect on C below 1e-3 at 512); ``None`` sums over the nodes directly
        (direct path).
    method : {'table', 'direct'}, optional
        Spline table (fast; module notes) or the zone quadrature (reference).

    Returns
    -------
    dict of ndarray, shape (n_sets, n)
        ``c_over_r``, ``s_over_r`` (C/R and S/R per spin) and ``log_nn1`` (ln of the zone
        average of n(n+1), used for χ_∥).

    Raises
    ------
    InputError
        Negative or non-finite temperature; unknown ``method``.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (thermodynamics of magnons).
    """
    _check_method(method)

    def direct(rows=slice(None)):
        omega, w = _node_energies(_rows(J, rows), _rows(J_perp, rows), _rows(delta, rows),
                                  spin, n_grid, n_bins)
        return _bose_sums(omega, w, _kT(_rows(T, rows), omega.shape[0]))

    if method == "direct":
        c, s, l = direct()
    else:
        Y, inside = _gas_from_table(T, J, J_perp, delta, spin)
        c, s, l = _merge(inside, (np.exp(Y[..., 0]), np.exp(Y[..., 1]), Y[..., 2]), direct)
    return {"c_over_r": c, "s_over_r": s, "log_nn1": l}


def _ht_coefficient(J, J_perp, delta, spin):
    ss = spin * (spin + 1.0) / 3.0
    return ss * ss * (2.0 + delta * delta) * (J * J + 2.0 * J_perp * J_perp)


def high_temperature_heat_capacity(T, J, J_perp, delta, spin):
    """Leading term of the high-temperature series of C for the coupled XXZ chains.

    C/R = (S(S+1)/3)² (2 + Δ²) (J² + 2 J_⊥²) / (k_B T)²: the infinite-temperature
    variance of H per spin; each bond contributes J² Σ_α Δ_α² ⟨(S^α)²⟩² and there are one
    chain bond and two interchain bonds per spin.

    Parameters
    ----------
    T : array_like
        Temperature in K (> 0).
    J, J_perp, delta : array_like
        Exchanges in meV and anisotropy Δ (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.

    Returns
    -------
    ndarray
        C/R (dimensionless).

    References
    ----------
    G. S. Rushbrooke & P. J. Wood, Mol. Phys. 1, 257 (1958) (leading coefficient of the
    high-temperature expansion).
    """
    kT = K_B_MEV * np.maximum(np.asarray(T, float), _T_FLOOR)
    return _ht_coefficient(J, J_perp, delta, spin) / (kT * kT)


def _crossover_direct(J, J_perp, delta, spin, n_grid, n_iter, n_bins):
    omega, w = _node_energies(J, J_perp, delta, spin, n_grid, n_bins)
    b = _ht_coefficient(np.asarray(J, float), np.asarray(J_perp, float),
                        np.asarray(delta, float), spin).reshape(-1, 1)
    b = np.broadcast_to(b, (omega.shape[0], 1))
    lo = np.log(np.sqrt(b))
    hi = np.log(10.0 * np.maximum(np.sqrt(b), omega.max(axis=1, keepdims=True)))
    for _ in range(n_iter):
        mid = 0.5 * (lo + hi)
        kT = np.exp(mid)
        c = _bose_sums(omega, w, kT, entropy=False)[0]
        above = c > b / (kT * kT)
        hi = np.where(above, mid, hi)
        lo = np.where(above, lo, mid)
    return np.exp(0.5 * (lo + hi)) / K_B_MEV


def _crossover_table(tab, cols, J, J_perp, delta, spin, n_newton=4):
    """ln τ_x on the spline: φ(s) = Y_C(s) − g e^{−s} + 2 s − ln(b/(S J_0)²) = 0."""
    cols_, unit, g, inside = cols
    b = np.broadcast_to(_ht_coefficient(*(np.asarray(a, float) for a in (J, J_perp, delta)),
                                        spin).reshape(-1, 1), unit.shape)
    target = np.log(b) - 2.0 * np.log(np.where(unit > 0, unit, 1.0))
    knots = np.broadcast_to(tab.s, (unit.shape[0], tab.s.size))
    phi = tab.evaluate(cols_, knots)[0][..., 0] - g * np.exp(-knots) + 2.0 * knots - target
    up = phi > 0.0                                    # φ increases: first knot above zero
    k = np.clip(np.argmax(up, axis=1), 1, tab.s.size - 1)
    inside = inside & up.any(axis=1) & ~up[:, 0]
    n = np.arange(k.size)
    s0, s1, f0, f1 = knots[n, k - 1], knots[n, k], phi[n, k - 1], phi[n, k]
    x = s0 + (s1 - s0) * f0 / np.where(f0 != f1, f0 - f1, 1.0)
    for _ in range(n_newton):                         # bracketed Newton (Press et al. 9.4)
        y, dy = tab.evaluate(cols_, x[:, None])
        f = y[:, 0, 0] - g[:, 0] * np.exp(-x) + 2.0 * x - target[:, 0]
        fp = dy[:, 0, 0] + g[:, 0] * np.exp(-x) + 2.0
        x = np.clip(x - f / np.where(fp > 0, fp, 1.0), s0, s1)
    return (np.exp(x)[:, None] * unit) / K_B_MEV, inside


def crossover_temperature(J, J_perp, delta, spin, n_grid=N_GRID, n_iter=26, n_bins=N_BINS,
                          method="table"):
    """Temperature T_x at which the magnon-gas C equals the high-temperature series.

    Direct path: bisection in ln T on C_sw(T) − C_HT(T), which increases monotonically,
    between k_B T = √b (where C_HT = R ≥ C_sw) and k_B T = 10 max(√b, ħω_max) (where
    C_sw > 0.99 R > C_HT), b = (S(S+1)/3)² (2 + Δ²)(J² + 2 J_⊥²).  Table path: the same
    root of the spline, bracketed between table knots and polished by Newton steps, for all
    sets at once.

    Parameters
    ----------
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ ≥ 1 (XXZ convention).
    spin : float
        Spin S.
    n_grid, n_iter : int, optional
        Zone-quadrature nodes per phase; bisection steps (direct path).
    n_bins : int or None, optional
        Energy compression as in :func:`magnon_gas` (direct path).
    method : {'table', 'direct'}, optional
        As in :func:`magnon_gas`.

    Returns
    -------
    ndarray, shape (n_sets, 1)
        T_x in K.

    References
    ----------
    Bisection and safeguarded Newton: W. H. Press et al., Numerical Recipes, 3rd ed.
    (CUP, 2007), Sects. 9.1 and 9.4.
    """
    _check_method(method)
    direct = lambda rows=slice(None): (_crossover_direct(  # noqa: E731
        _rows(J, rows), _rows(J_perp, rows), _rows(delta, rows), spin, n_grid, n_iter,
        n_bins),)
    if method == "direct":
        return direct()[0]
    tab = spin_wave_table()
    Tx, inside = _crossover_table(tab, tab.columns(J, J_perp, delta, spin, funcs=(0,)), J,
                                  J_perp, delta, spin)
    return _merge(inside, (Tx,), direct)[0]


_LAST = [None, None]   # one-entry memo: C and S are usually asked for the same inputs in turn


def _heat_and_entropy(T, J, J_perp, delta, spin, n_grid, method="table"):
    _check_method(method)
    J, J_perp, delta = (np.asarray(a, float) for a in (J, J_perp, delta))
    T = np.asarray(T, float)
    key = (method, n_grid, float(spin)) + tuple((a.shape, a.tobytes())
                                                 for a in (T, J, J_perp, delta))
    if _LAST[0] == key:
        return _LAST[1]
    out = _heat_and_entropy_uncached(T, J, J_perp, delta, spin, n_grid, method)
    _LAST[:] = key, out
    return out


def _heat_and_entropy_uncached(T, J, J_perp, delta, spin, n_grid, method):
    if method == "direct":
        Tx = crossover_temperature(J, J_perp, delta, spin, n_grid, method="direct")
        gas = magnon_gas(T, J, J_perp, delta, spin, n_grid, method="direct")
        s_x = magnon_gas(Tx, J, J_perp, delta, spin, n_grid, method="direct")["s_over_r"]
        c_t, s_t, inside = gas["c_over_r"], gas["s_over_r"], None
    else:
        tab = spin_wave_table()
        cols = tab.columns(J, J_perp, delta, spin, funcs=(0, 1))
        Tx, inside = _crossover_table(tab, cols, J, J_perp, delta, spin)
        n = cols[1].shape[0]
        T_all = np.concatenate([np.broadcast_to(np.asarray(T, float), (n, np.shape(T)[-1])),
                                Tx], axis=1)
        Y = np.exp(_gas_from_table(T_all, J, J_perp, delta, spin, tab, cols)[0])
        c_t, s_x, s_t = Y[:, :-1, 0], Y[:, -1:, 1], Y[:, :-1, 1]
    b = _ht_coefficient(J, J_perp, delta, spin)
    kT = K_B_MEV * np.maximum(np.asarray(T, float), _T_FLOOR)
    kx = K_B_MEV * Tx
    low = kT <= kx
    c = np.where(low, c_t, b / (kT * kT))
    s = np.where(low, s_t, s_x + 0.5 * b * (1.0 / (kx * kx) - 1.0 / (kT * kT)))
    c, s = R_GAS * c, R_GAS * s
    if inside is None:
        return c, s
    return _merge(inside, (c, s), lambda rows: _heat_and_entropy_uncached(
        _rows(T, rows), _rows(J, rows), _rows(J_perp, rows), _rows(delta, rows), spin,
        n_grid, "direct"))


def spin_wave_heat_capacity(T, J, J_perp, delta, spin, n_grid=N_GRID, method="table"):
    """Magnetic heat capacity of the coupled-chain antiferromagnet, C = min(C_sw, C_HT).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and easy-axis anisotropy Δ ≥ 1; H = Σ J_ij [S^x S^x + S^y S^y +
        Δ S^z S^z], J > 0 AFM.
    spin : float
        Spin S.
    n_grid : int, optional
        Zone-quadrature nodes per phase (direct path).
    method : {'table', 'direct'}, optional
        Spline table (fast, default) or zone quadrature (reference); module notes.

    Returns
    -------
    ndarray, shape (n_sets, n)
        C in J/(mol K) per mol of spins: magnon gas below the crossover T_x, leading
        high-temperature term above (see the module notes).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6; G. S. Rushbrooke & P. J. Wood,
    Mol. Phys. 1, 257 (1958).
    """
    return _heat_and_entropy(T, J, J_perp, delta, spin, n_grid, method)[0]


def spin_wave_entropy(T, J, J_perp, delta, spin, n_grid=N_GRID, method="table"):
    """Magnetic entropy S(T) = ∫₀ᵀ C/T' dT' of :func:`spin_wave_heat_capacity`.

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ ≥ 1 (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.
    n_grid : int, optional
        Zone-quadrature nodes per phase (direct path).
    method : {'table', 'direct'}, optional
        Spline table (fast, default) or zone quadrature (reference); module notes.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in J/(mol K) per mol of spins (magnon-gas entropy below T_x, plus the analytic
        integral of the 1/T² tail above).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (entropy of a Bose gas of
    magnons).
    """
    return _heat_and_entropy(T, J, J_perp, delta, spin, n_grid, method)[1]


def curie_weiss_theta(J, J_perp, delta, spin):
    """Mean-field Weiss temperatures of the coupled XXZ chains.

    θ_z = S(S+1) Δ J_0 / (3 k_B) for a field along the easy axis, θ_xy = S(S+1) J_0 /(3 k_B)
    perpendicular to it, J_0 = 2 J + 4 J_⊥ (sum of the exchanges to all neighbours).

    Parameters
    ----------
    J, J_perp, delta : array_like
        Exchanges in meV and anisotropy Δ (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.

    Returns
    -------
    theta_z, theta_xy : ndarray
        Weiss temperatures in K (positive for antiferromagnetic exchange; χ = C/(T + θ)).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 4 (molecular-field theory,
    θ = S(S+1) Σ_j J_j / 3k_B).
    """
    J0 = 2.0 * np.asarray(J, float) + 4.0 * np.asarray(J_perp, float)
    th = spin * (spin + 1.0) * J0 / (3.0 * K_B_MEV)
    return th * np.asarray(delta, float), th


def spin_wave_susceptibility(T, J, J_perp, delta, spin, g, direction="powder",
                             n_grid=N_GRID, method="table"):
    """Molar susceptibility of the coupled-chain antiferromagnet above and below T_N.

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ ≥ 1 (XXZ convention, J > 0 AFM).
    spin : float
        Spin S.
    g : array_like, shape (n_sets, 1)
        Landé g factor.
    direction : {'powder', 'z', 'xy'}
        Field along the easy axis, perpendicular to it, or the powder average
        (χ_z + 2 χ_xy)/3.
    n_grid : int, optional
        Zone-quadrature nodes per phase (for χ_∥ below T_N; direct path).
    method : {'table', 'direct'}, optional
        How the magnon gas behind χ_∥ is evaluated (:func:`magnon_gas`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        χ in emu/mol of magnetic ion: Curie–Weiss above T_N; below T_N χ_xy = χ_CW,xy(T_N)
        and χ_z = χ_CW,z(T_N) ⟨n(n+1)⟩(T) T_N / (⟨n(n+1)⟩(T_N) T) (module notes).  At high
        T, T χ → the Curie constant N_A g² μ_B² S(S+1)/3k_B.

    Raises
    ------
    InputError
        Unknown ``direction`` or ``method``.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 4; R. Kubo, Phys. Rev. 87, 568
    (1952); H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
    """
    if direction not in ("powder", "z", "xy"):
        raise InputError(f"unknown field direction {direction!r}; expected one of "
                         "powder, z, xy")
    _check_method(method)
    J, J_perp, delta, g = (np.asarray(a, float) for a in (J, J_perp, delta, g))
    T = np.maximum(np.asarray(T, float), _T_FLOOR)
    C = curie_constant(g, spin)
    th_z, th_xy = curie_weiss_theta(J, J_perp, delta, spin)
    TN = magnon.neel_temperature(J, J_perp)
    TNs = np.maximum(TN, _T_FLOOR)
    ordered = T < TN
    out = 0.0
    if direction in ("powder", "xy"):
        chi_xy = C / (np.maximum(T, TN) + th_xy)
        out = out + (2.0 / 3.0 if direction == "powder" else 1.0) * chi_xy
    if direction in ("powder", "z"):
        chi_z = C / (T + th_z)
        if np.any(ordered):
            n = np.broadcast_shapes(np.shape(TNs), np.shape(J), np.shape(delta))[0]
            T_all = np.concatenate([np.broadcast_to(T, (n, T.shape[-1])),
                                    np.broadcast_to(TNs, (n, 1))], axis=1)
            if method == "table":                      # only the ⟨n(n+1)⟩ column is needed
                tab = spin_wave_table()
                cols = tab.columns(J, J_perp, delta, spin, funcs=(2,))
                Y, inside = _gas_from_table(T_all, J, J_perp, delta, spin, tab, cols)
                l_all = _merge(inside, (Y[..., 0],), lambda rows: (magnon_gas(
                    T_all[rows], _rows(J, rows), _rows(J_perp, rows), _rows(delta, rows),
                    spin, n_grid, method="direct")["log_nn1"],))[0]
            else:
                l_all = magnon_gas(T_all, J, J_perp, delta, spin, n_grid,
                                   method=method)["log_nn1"]
            l_T, l_N = l_all[:, :-1], l_all[:, -1:]
            ratio = np.exp(np.minimum(l_T - l_N + np.log(TNs / T), 0.0))
            chi_z = np.where(ordered, C / (TN + th_z) * ratio, chi_z)
        out = out + (1.0 / 3.0 if direction == "powder" else 1.0) * chi_z
    return out

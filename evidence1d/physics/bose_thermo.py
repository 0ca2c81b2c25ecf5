"""Non-interacting magnon gas of the coupled-chain Néel antiferromagnet (zone averages).

The spins below T_N are treated as a gas of non-interacting magnons with a linear
spin-wave dispersion of :mod:`evidence1d.physics.magnon` (one mode per wavevector of the
chemical Brillouin zone, i.e. one mode per spin):

    C / R = ⟨ x² eˣ / (eˣ − 1)² ⟩_BZ,     S / R = ⟨ x / (eˣ − 1) − ln(1 − e⁻ˣ) ⟩_BZ,

x = ħω(Q) / k_B T, ⟨⋯⟩_BZ the average over the zone, and ⟨n(n+1)⟩_BZ (magnon-number
fluctuations, behind the longitudinal susceptibility).  The ordered family evaluates the
gas with its renormalised exchanges (:mod:`evidence1d.physics.ordered_magnon`) and joins
it to the chain thermodynamics at T_N (:mod:`evidence1d.physics.ordered_thermo`).

Zone quadrature (``method="direct"``)
-------------------------------------
A fixed product rule in the phases with nodes clustered towards q = 0 and q = π
(q(s) = π (s − sin(2πs)/2π), midpoint rule in s), so that the Goldstone regions that
dominate at low temperature are resolved.  Rectangular geometry (z_⊥ = 4: phases q, q_a,
q_b) uses the symmetries q_b ↔ q_a and Q → Q + (π, π, π) (ω(Q) unchanged) to halve the
work twice; the planar geometry (z_⊥ = 2: q, q_a) uses the plain product rule.

Fast path (``method="table"``, the default)
-------------------------------------------
C/R, S/R and ⟨n(n+1)⟩ are read from the shipped spline table of
:mod:`evidence1d.physics.spin_wave_table` (functions of τ = k_B T / (S J_0), r = J_⊥/J and
Δ for every S, one table per geometry; format, interpolation and accuracy are described
there).  At k_B T ≲ 10⁻² S J_0 the table is more accurate than the direct rule at
n_grid = 24, whose product grid no longer resolves the energy minima there.  Sets outside
the table (Δ > 3, J_⊥/J > 100, J ≤ 0) use the direct path.  Cost: ~0.05 ms per parameter
set and 50–100 temperatures against 3–5 ms for the direct rule.

References
----------
R. M. White, *Quantum Theory of Magnetism*, 3rd ed. (Springer, 2007), Ch. 6 (magnon
thermodynamics).
R. Kubo, Phys. Rev. 87, 568 (1952) (spin-wave theory of the antiferromagnet, longitudinal
susceptibility from magnon-number fluctuations).
P. J. Davis & P. Rabinowitz, Methods of Numerical Integration, 2nd ed. (Academic Press,
1984), Sect. 2.9 (midpoint rule with a clustering substitution).
"""
from __future__ import annotations

import functools

import numpy as np

from ..errors import InputError
from ..units import K_B_MEV
from . import magnon
from .spin_wave_table import log_zone_averages, spin_wave_table

__all__ = ["zone_nodes", "magnon_gas", "METHODS", "N_GRID", "N_BINS"]

#: default number of quadrature nodes per phase
N_GRID = 24
#: default number of log-spaced energies the zone nodes are compressed onto (None: exact)
N_BINS = 512
_T_FLOOR = 1e-9        # K; below it a temperature is treated as this value
_CHUNK = 32            # temperatures per vectorised block (bounds memory)
#: ways to evaluate the magnon gas: shipped spline table (fast) or zone quadrature (reference)
METHODS = ("table", "direct")


@functools.lru_cache(maxsize=8)
def _zone_nodes_cached(n_grid: int, z_perp: int = 4):
    s = (np.arange(n_grid) + 0.5) / n_grid
    q = np.pi * (s - np.sin(2.0 * np.pi * s) / (2.0 * np.pi))
    wq = (1.0 - np.cos(2.0 * np.pi * s)) / n_grid          # (1/π) dq/ds Δs, sums to 1
    c, idx = np.cos(q), np.arange(n_grid)
    if z_perp == 2:                                         # phases (q, q_a): product rule
        u, v = np.repeat(c, n_grid), np.tile(c, n_grid)
        w = np.outer(wq, wq).ravel()
        for a in (u, v, w):
            a.setflags(write=False)
        return u, v, w
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


def zone_nodes(n_grid: int = N_GRID, z_perp: int = 4):
    """Quadrature nodes and weights for averages over the chemical Brillouin zone.

    Parameters
    ----------
    n_grid : int
        Nodes per phase (≥ 2).
    z_perp : {4, 2}
        Interchain geometry: 4 neighbouring chains (phases q, q_a, q_b) or 2 (q, q_a).

    Returns
    -------
    u, v, w : ndarray, shape (n_nodes,)
        u = cos q, v = cos q_a + cos q_b (z_⊥ = 4) or cos q_a (z_⊥ = 2) at the nodes and
        weights w summing to 1, for functions of J(Q) = 2 J u + 2 J_⊥ v; the z_⊥ = 4 rule
        holds for functions invariant under J(Q) → −J(Q).

    References
    ----------
    Midpoint rule with a smooth clustering substitution: P. J. Davis & P. Rabinowitz,
    Methods of Numerical Integration, 2nd ed. (Academic Press, 1984), Sect. 2.9.
    """
    if isinstance(n_grid, bool) or not isinstance(n_grid, (int, np.integer)) or n_grid < 2:
        raise InputError(f"the 'n_grid' parameter of zone_nodes must be an integer >= 2; "
                         f"got {n_grid!r} instead")
    magnon.check_interchain(z_perp)
    u, v, w = _zone_nodes_cached(int(n_grid), int(z_perp))
    return u.copy(), v.copy(), w.copy()


def _node_energies(J, J_perp, delta, spin, n_grid, n_bins=None, z_perp=4):
    """Spin-wave energies in meV and weights for zone averages, each (n_sets, m).

    With ``n_bins`` the node energies are compressed onto ``n_bins`` log-spaced energies per
    set (from the smallest to the largest node energy) by linear cloud-in-cell assignment in
    ln ω, which conserves the weight and the mean of ln ω and stays continuous in the
    parameters; the Bose sums then cost n_bins instead of n_nodes per temperature.
    """
    u, v, w = _zone_nodes_cached(int(n_grid), int(z_perp))
    J = np.asarray(J, float).reshape(-1, 1)
    Jp = np.asarray(J_perp, float).reshape(-1, 1)
    d = np.asarray(delta, float).reshape(-1, 1)
    J, Jp, d = np.broadcast_arrays(J, Jp, d)
    Jq = 2.0 * J * u + 2.0 * Jp * v                    # exchange sum J(Q) at the nodes
    omega = magnon.energy_from_exchange_sum(Jq, J, Jp, d, spin, z_perp)
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


def _log_sums(omega, w, kT):
    """ln C/R, ln S/R, ln⟨n(n+1)⟩ for energies (n_sets, m) at kT (n_sets, k), in log space."""
    gap = omega.min(axis=1, keepdims=True)
    out = []
    for start in range(0, kT.shape[1], _CHUNK):
        t = kT[:, start:start + _CHUNK]
        out.append(np.stack([y - gap / t for y in log_zone_averages(omega, w, t, gap)], -1))
    return np.concatenate(out, axis=1)


def _kT(T, n_sets):
    T = np.asarray(T, dtype=float)
    if np.any(~np.isfinite(T)) or np.any(T < 0):
        raise InputError("temperatures must be finite and >= 0 K")
    return K_B_MEV * np.broadcast_to(np.maximum(T, _T_FLOOR), (n_sets,) + T.shape[-1:])


def _check_method(method):
    if method not in METHODS:
        raise InputError(f"the 'method' parameter must be one of {', '.join(METHODS)}; "
                         f"got {method!r} instead")


def _gas_from_table(T, J, J_perp, delta, spin, tab=None, cols=None, z_perp=4):
    """Table magnon gas: ln of the averages in the columns' order, and the in-table mask."""
    tab = tab or spin_wave_table()
    cols, unit, g, inside = (cols if cols is not None
                             else tab.columns(J, J_perp, delta, spin, z_perp=z_perp))
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


def magnon_gas(T, J, J_perp, delta, spin, n_grid=N_GRID, n_bins=N_BINS, method="table",
               z_perp=4, funcs=(0, 1, 2)):
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
    z_perp : {4, 2}, optional
        Interchain geometry (number of neighbouring chains, :mod:`magnon`).
    funcs : tuple of int, optional
        Which averages the table path computes (0 C, 1 S, 2 ⟨n(n+1)⟩); the others are
        returned as ``None`` (the direct path always computes all three).

    Returns
    -------
    dict of ndarray, shape (n_sets, n)
        ``log_c``, ``log_s`` (ln C/R and ln S/R per spin) and ``log_nn1`` (ln of the zone
        average of n(n+1), used for χ_∥); ``c_over_r`` and ``s_over_r`` their exponentials.
        Logarithms stay finite where the activated values underflow.

    Raises
    ------
    InputError
        Negative or non-finite temperature; unknown ``method``.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (thermodynamics of magnons).
    """
    _check_method(method)
    magnon.check_interchain(z_perp)

    def direct(rows=slice(None)):
        omega, w = _node_energies(_rows(J, rows), _rows(J_perp, rows), _rows(delta, rows),
                                  spin, n_grid, n_bins, z_perp)
        Y = _log_sums(omega, w, _kT(_rows(T, rows), omega.shape[0]))
        return tuple(Y[..., k] for k in funcs)

    if method == "direct":
        funcs = (0, 1, 2)
        logs = direct()
    else:
        funcs = tuple(sorted(funcs))
        tab = spin_wave_table()
        cols = tab.columns(J, J_perp, delta, spin, funcs=funcs, z_perp=z_perp)
        Y, inside = _gas_from_table(T, J, J_perp, delta, spin, tab, cols)
        logs = _merge(inside, tuple(Y[..., k] for k in range(len(funcs))), direct)
    out = dict.fromkeys(("log_c", "log_s", "log_nn1", "c_over_r", "s_over_r"))
    for k, a in zip(funcs, logs):
        out[("log_c", "log_s", "log_nn1")[k]] = a
        if k < 2:
            out[("c_over_r", "s_over_r")[k]] = np.exp(a)
    return out



"""The shipped spin-wave thermodynamics table of the coupled-chain antiferromagnet.

In units of S J_0 (J_0 = 2 J + z_⊥ J_⊥) the linear spin-wave dispersion of
:mod:`evidence1d.physics.magnon` depends only on r = J_⊥/J, Δ and the interchain geometry
(z_⊥ = 2 or 4 neighbouring chains), so the magnon-gas zone averages C/R, S/R and ⟨n(n+1)⟩
(:func:`log_zone_averages`) are functions of τ = k_B T / (S J_0), r and Δ for every spin S,
one table per geometry.  ``tables/spin_wave_thermo.npz`` (built by
``scripts/build_spin_wave_table.py`` with a finer zone rule than the direct path of
:mod:`evidence1d.physics.bose_thermo`) holds, per geometry, Y = ln F + g/τ, g = √(Δ² − 1), on a uniform
grid in (ln τ, asinh(r/r_0), asinh(g/g_0)): the shift g/τ takes out the activated factor,
the asinh coordinates are logarithmic away from and analytic through r = 0 and Δ = 1.

Interpolation: a tensor-product cubic B-spline (not-a-knot, C² in all three coordinates,
so smooth for the sampler); below and above the τ range the spline continues linearly in
ln τ (power laws).  Accuracy: the table agrees with the direct zone rule at n_grid = 48 to
~1.5e-4 (C, S) where that rule is converged; above τ = 50 the linear continuation is good
to ~1e-3.  The domain is J > 0, 0 ≤ J_⊥/J ≤ ``r_max`` (100) and 1 ≤ Δ ≤ ``delta_max`` (3).

References
----------
R. M. White, *Quantum Theory of Magnetism*, 3rd ed. (Springer, 2007), Ch. 6 (Bose gas of
magnons).
C. de Boor, A Practical Guide to Splines, rev. ed. (Springer, 2001), Chs. IX, XVII (cubic
B-splines, not-a-knot end condition, tensor products).
"""
from __future__ import annotations

import functools
from pathlib import Path

import numpy as np
from scipy import special

from ..errors import InputError

__all__ = ["log_zone_averages", "spin_wave_table", "TABLE_PATH"]

_X_FLOOR = 1e-8        # smallest reduced energy ħω / k_B T used in the Bose sums
TABLE_PATH = Path(__file__).with_name("tables") / "spin_wave_thermo.npz"


def log_zone_averages(eps, w, tau, gap):
    """Logarithms of the Bose zone averages, shifted by the activation exponent gap/τ.

    Parameters
    ----------
    eps : ndarray, shape (..., m)
        Magnon energies in any unit (the same as ``tau`` and ``gap``), > 0.
    w : ndarray, shape (..., m)
        Weights of the energies (≥ 0, summing to 1).
    tau : ndarray, shape (..., k)
        k_B T in the same unit, > 0.
    gap : float or ndarray broadcastable to (..., 1)
        Shift energy, ≤ min(eps) (the spin-wave gap).

    Returns
    -------
    y_c, y_s, y_l : ndarray, shape (..., k)
        ln⟨x² eˣ/(eˣ − 1)²⟩ + gap/τ (C/R), ln⟨x/(eˣ − 1) − ln(1 − e⁻ˣ)⟩ + gap/τ (S/R) and
        ln⟨n(n + 1)⟩ + gap/τ, x = eps/τ.  Each term carries the factor e^{−(x − gap/τ)},
        so with gap = min(eps) the sums are taken directly (the term at the gap is of order
        its weight: no overflow, no underflow); entries whose sum underflows all the same
        (gap far below min(eps)) are taken in log space (logsumexp).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (Bose gas of magnons).
    """
    x = np.maximum(eps[..., None, :] / tau[..., :, None], _X_FLOOR)
    shift = (np.asarray(gap, float) / tau)[..., None]
    # linear space: every term carries e^{−(x − gap/τ)} ≤ 1, and the node at the gap has
    # that factor 1, so the sums neither overflow nor underflow when gap = min(eps); other
    # entries (a sum that underflows) take the log-space path below
    r = np.exp(-x)
    q = -np.expm1(-x)                                         # 1 − e^{−x}
    we = np.exp(shift - x) * np.asarray(w, float)[..., None, :]
    inv_q = 1.0 / q
    a = we * inv_q                                            # w e^{−(x − gap/τ)}/(1 − e^{−x})
    with np.errstate(divide="ignore"):
        # h = −ln(1 − e^{−x}) eˣ, → 1 + e^{−x}/2 for small e^{−x}
        h = np.where(r > 1e-8, -np.log1p(-r) / np.where(r > 1e-8, r, 1.0), 1.0 + 0.5 * r)
        b = a * inv_q
        y_l = np.log(np.sum(b, axis=-1))
        y_c = np.log(np.sum(b * x * x, axis=-1))
        y_s = np.log(np.sum(a * x + we * h, axis=-1))
    ok = np.isfinite(y_c) & np.isfinite(y_s) & np.isfinite(y_l)
    if ok.all():
        return y_c, y_s, y_l
    slow = _log_space(x, w, shift)
    return tuple(np.where(ok, f, s_) for f, s_ in zip((y_c, y_s, y_l), slow))


def _log_space(x, w, shift):
    """:func:`log_zone_averages` with every sum taken by logsumexp (any gap)."""
    lom1 = np.log(-np.expm1(-x))                              # ln(1 − e^{−x})
    lw = np.log(np.where(w > 0, w, 1.0))[..., None, :] + np.where(w > 0, 0.0, -np.inf)[
        ..., None, :]
    base = lw - (x - shift)                                   # ln w − x + gap/τ ≤ ln w
    xs = np.minimum(x, 35.0)
    # x n − ln(1 − e^{−x}) = e^{−x} [x/(1 − e^{−x}) + eˣ (−ln(1 − e^{−x}))]
    h = np.where(x < 35.0, np.exp(xs) * -np.log1p(-np.exp(-xs)), 1.0 + 0.5 * np.exp(-x))
    y_c = special.logsumexp(base + 2.0 * np.log(x) - 2.0 * lom1, axis=-1)
    y_s = special.logsumexp(base + np.log(x / -np.expm1(-x) + h), axis=-1)
    y_l = special.logsumexp(base - 2.0 * lom1, axis=-1)
    return y_c, y_s, y_l


@functools.lru_cache(maxsize=8)
def _spline_matrix(n):
    """(n + 2, n) map from values on n uniform knots to not-a-knot cubic B-spline coefficients."""
    A = np.zeros((n + 2, n + 2))
    for i in range(n):
        A[i, i:i + 3] = (1.0 / 6.0, 4.0 / 6.0, 1.0 / 6.0)
    A[n, :5] = A[n + 1, -5:] = (-1.0, 4.0, -6.0, 4.0, -1.0)   # third derivative continuous
    out = np.linalg.inv(A)[:, :n]
    out.setflags(write=False)
    return out


def _basis(u, n):
    """Interval index and cubic B-spline weights (value, d/du) at grid position u ∈ [0, n−1]."""
    i = np.clip(np.floor(u).astype(int), 0, n - 2)
    t = u - i
    t2, t3, m = t * t, t * t * t, 1.0 - t
    b = np.stack([m * m * m, 3 * t3 - 6 * t2 + 4, -3 * t3 + 3 * t2 + 3 * t + 1, t3], -1) / 6
    db = np.stack([-m * m, 3 * t2 - 4 * t, -3 * t2 + 2 * t + 1, t2], -1) / 2
    return i, b, db


class _Table:
    """Spline coefficients of the shipped magnon-gas table (see the module notes)."""

    def __init__(self, path):
        self.path = str(path)
        with np.load(path) as raw:
            self.s, self.x, self.y = (raw[k].astype(float) for k in ("ln_tau", "x_r", "y_gap"))
            self.r_0, self.g_0 = float(raw["r_0"]), float(raw["g_0"])
            self.z_perp = tuple(int(z) for z in raw["z_perp"])
        self.r_max = self.r_0 * np.sinh(self.x[-1])
        self.delta_max = np.sqrt(1.0 + (self.g_0 * np.sinh(self.y[-1])) ** 2)

    def coefficients(self, z_perp):
        """Spline coefficients [C, S, ⟨n(n+1)⟩] of one geometry (computed on first use)."""
        if z_perp not in self.z_perp:
            raise InputError(f"the magnon-gas table holds interchain geometries "
                             f"{self.z_perp}; got z_perp = {z_perp!r}")
        return _geometry_coefficients(self.path, self.z_perp.index(z_perp))

    def columns(self, J, J_perp, delta, spin, funcs=(0, 1, 2), z_perp=4):
        """Spline columns along ln τ per set (of ``funcs``: 0 C, 1 S, 2 ⟨n(n+1)⟩), energy
        unit S J_0 (J_0 = 2 J + z_⊥ J_⊥), gap g and the in-table mask."""
        coef = self.coefficients(z_perp)
        J, Jp, d = np.broadcast_arrays(*(np.asarray(a, float).reshape(-1, 1)
                                         for a in (J, J_perp, delta)))
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.where(J > 0, Jp / np.where(J > 0, J, 1.0), np.inf)
        inside = ((J > 0) & (Jp >= 0) & (r <= self.r_max * (1 + 1e-12)) & (d >= 1.0)
                  & (d <= self.delta_max * (1 + 1e-12)))[:, 0]
        g = np.sqrt(np.maximum(d * d - 1.0, 0.0))
        pos = []
        for v, grid in ((np.arcsinh(r / self.r_0), self.x), (np.arcsinh(g / self.g_0), self.y)):
            u = np.where(inside[:, None], v, 0.0)[:, 0] / (grid[1] - grid[0])
            pos.append(_basis(np.clip(u, 0.0, grid.size - 1.0), grid.size)[:2])
        (ir, br), (ig, bg) = pos
        a4 = np.arange(4)
        idx = ((ir[:, None] + a4)[:, :, None], (ig[:, None] + a4)[:, None, :])
        w = (br[:, :, None] * bg[:, None, :]).reshape(-1, 1, 16)
        cols = np.stack([(w @ coef[k][idx].reshape(w.shape[0], 16, -1))[:, 0]
                         for k in funcs], -1)
        return cols, spin * (2.0 * J + z_perp * Jp), g, inside

    def evaluate(self, cols, ln_tau):
        """Y (n_sets, n, 3) and dY/d ln τ at ln τ (n_sets, n); linear beyond the grid."""
        h = self.s[1] - self.s[0]
        sc = np.clip(ln_tau, self.s[0], self.s[-1])
        i, b, db = _basis((sc - self.s[0]) / h, self.s.size)
        c = cols[np.arange(cols.shape[0])[:, None, None], i[..., None] + np.arange(4)]
        val = (b[..., None, :] @ c)[..., 0, :]
        der = (db[..., None, :] @ c)[..., 0, :] / h
        return val + der * (ln_tau - sc)[..., None], der


@functools.lru_cache(maxsize=4)
def _geometry_coefficients(path, iz):
    """Tensor-product spline coefficients of geometry ``iz`` of the table at ``path``."""
    with np.load(path) as raw:
        d = np.stack([raw[k][iz].astype(float) for k in ("y_c", "y_s", "y_l")], -1)
        grids = [raw[k] for k in ("x_r", "y_gap", "ln_tau")]
    for ax, grid in enumerate(grids):                          # d: (n_r, n_g, n_s, 3)
        d = np.moveaxis(np.tensordot(_spline_matrix(grid.size), d, (1, ax)), 0, ax)
    out = [np.ascontiguousarray(d[..., k]) for k in range(3)]   # C, S, n(n+1)
    for a in out:
        a.setflags(write=False)
    return out


@functools.lru_cache(maxsize=2)
def spin_wave_table(path=None):
    """The shipped magnon-gas spline table, loaded once.

    Parameters
    ----------
    path : str or Path, optional
        Table file; default ``TABLE_PATH`` (``tables/spin_wave_thermo.npz``).

    Returns
    -------
    object
        Holds the grids, the spline coefficients and the domain (``r_max``, ``delta_max``).

    Raises
    ------
    InputError
        The table file is missing (regenerate it with scripts/build_spin_wave_table.py).

    References
    ----------
    C. de Boor, A Practical Guide to Splines (2001), Ch. XVII (tensor-product splines).
    """
    path = Path(path) if path is not None else TABLE_PATH
    if not path.exists():
        raise InputError(f"magnon-gas table {path} not found; run "
                         "scripts/build_spin_wave_table.py or use method='direct'")
    return _Table(path)

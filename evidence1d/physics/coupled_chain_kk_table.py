"""The universal table of the sheet transform V(u; r, θ) and its interpolation.

The table of :mod:`evidence1d.physics.coupled_chain_kk` (its notes give the grid, the
accuracy and the references): V minus the step's logarithm at the output nodes of the
product integration, on a lattice of ln(r/(1 − r)) and ln θ (θ = 0 added), interpolated
with cubic Lagrange polynomials in the three indices.  :class:`TableStencil` does the
(r, θ) part once per sheet; with :meth:`TableStencil.contract` it also precomputes the
whole node axis of each sheet, so that each energy then costs one 4-point interpolation
(worth it when a sheet is asked for many energies, as on an energy grid).

References
----------
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 25.2.13
(Lagrange interpolation).
"""
from __future__ import annotations

import functools
import math

import numpy as np

from .coupled_chain_kk import (GRID_NODES, GRID_SPAN, R_RANGE, THETA_RANGE, _grid_values,
                               _top_log, reference_nodes)

__all__ = ["TableStencil", "table_real"]

_R_STEP, _THETA_PER_DECADE = 0.2, 12
#: (r, θ) pairs computed at once when the table is built
_BLOCK = 512


def _axes():
    x0, x1 = (math.log(v / (1.0 - v)) for v in R_RANGE)
    xr = np.linspace(x0, x1, int(round((x1 - x0) / _R_STEP)) + 1)
    l0, l1 = (math.log(v) for v in THETA_RANGE)
    lt = np.linspace(l0, l1, int(round((l1 - l0) / math.log(10.0) * _THETA_PER_DECADE)) + 1)
    return xr, lt


@functools.lru_cache(maxsize=None)
def _table(line_shape, thermal_edge):
    """V minus the step's logarithm at the output nodes on the (r, θ) lattice,
    (n_r, 1 + n_θ, 2, K − 1), and the step U_top, (n_r, 1 + n_θ); read-only."""
    xr, lt = _axes()
    r = 1.0 / (1.0 + np.exp(-xr))
    theta = np.concatenate([[0.0], np.exp(lt)])
    R, TH = np.meshgrid(r, theta, indexing="ij")
    # in blocks of pairs: each pair's values are independent of the others, and the whole
    # lattice at once held about 400 MiB of temporaries (the 500 MiB budget of a run)
    parts = [_grid_values(R.ravel()[k:k + _BLOCK], TH.ravel()[k:k + _BLOCK], line_shape,
                          thermal_edge) for k in range(0, R.size, _BLOCK)]
    V = np.concatenate([v for v, _ in parts], axis=-1)
    u_top = np.concatenate([u for _, u in parts])
    # stored in single precision (relative 6e-8, far below the interpolation error): half
    # the memory traffic of the random reads of the interpolation
    V = np.ascontiguousarray(np.moveaxis(V, -1, 0).reshape(r.size, theta.size, 2, -1),
                             dtype=np.float32)
    u_top = u_top.reshape(r.size, theta.size)
    for a in (V, u_top):
        a.setflags(write=False)
    return V, u_top


def _lagrange4(t):
    """Cubic Lagrange weights at nodes −1, 0, 1, 2 for offsets t (…) → (…, 4)."""
    return np.stack([-t * (t - 1.0) * (t - 2.0) / 6.0, (t + 1.0) * (t - 1.0) * (t - 2.0) / 2.0,
                     -(t + 1.0) * t * (t - 2.0) / 2.0, (t + 1.0) * t * (t - 1.0) / 6.0], -1)


def _axis_weights(x, x0, step, n):
    """Start index (4-point stencil inside [0, n)) and cubic weights for positions x."""
    pos = (x - x0) / step
    k = np.clip(np.floor(pos).astype(np.intp), 1, n - 3)
    return k - 1, _lagrange4(np.clip(pos, 0.0, n - 1.0) - k)


class TableStencil:
    """The (r, θ) part of the table interpolation, computed once for given sheets.

    Parameters
    ----------
    r, theta : array_like, same shape (…)
        ω_L/ω_top and k_BT/ω_top (≥ 0) of each sheet.
    line_shape, thermal_edge : str
        As :func:`evidence1d.physics.chain_spectrum.spinon_density`.

    References
    ----------
    The module notes; Abramowitz & Stegun 25.2.13 (Lagrange interpolation).
    """

    def __init__(self, r, theta, line_shape="exact", thermal_edge="near_pi"):
        r, theta = np.broadcast_arrays(np.asarray(r, float), np.asarray(theta, float))
        self.shape_args = (line_shape, thermal_edge)
        tab_top = _table(line_shape, thermal_edge)[1]
        xr, lt = _axes()
        r = np.clip(r, *R_RANGE)
        i0, wr = _axis_weights(np.log(r / (1.0 - r)), xr[0], xr[1] - xr[0], xr.size)
        th = np.minimum(theta, THETA_RANGE[1])      # θ: index 0 is θ = 0, then ln θ
        j0, wt = _axis_weights(np.log(np.maximum(th, THETA_RANGE[0])), lt[0],
                               lt[1] - lt[0], lt.size)
        j0 = j0 + 1
        low = th < THETA_RANGE[0]                   # linear in θ below the first node
        if low.any():
            f = th / THETA_RANGE[0]
            lin = np.zeros(wt.shape)
            lin[..., 0], lin[..., 1] = 1.0 - f, f
            wt = np.where(low[..., None], lin, wt)
            j0 = np.where(low, 0, j0)
        self.rows = (i0[..., None] + np.arange(4))[..., :, None]
        self.cols = (j0[..., None] + np.arange(4))[..., None, :]
        self.weights = wr[..., :, None] * wt[..., None, :]
        # flat offset of the node axis of each of the 4 × 4 (r, θ) table rows (side 0)
        n_t, n_k = tab_top.shape[1], _table(line_shape, thermal_edge)[0].shape[-1]
        self.offsets = (self.rows * n_t + self.cols) * (2 * n_k)
        self.u_top = np.einsum("...ab,...ab->...", self.weights, tab_top[self.rows, self.cols])
        self.r2 = r * r
        self.lam2 = (1.0 - self.r2) / reference_nodes()[GRID_NODES - 1] ** 2
        self.line = None

    def contract(self):
        """Contract the (r, θ) stencil with the whole node axis once per sheet.

        Afterwards :meth:`real` reads four values per energy instead of 64; the same numbers
        (to rounding).  Memory: 2(K − 1) × 4 values per sheet.

        Returns
        -------
        TableStencil
            self.
        """
        tab = _table(*self.shape_args)[0]                   # (n_r, n_θ, 2, K − 1)
        n = tab.shape[2] * tab.shape[3]
        vals = tab.reshape(tab.shape[:2] + (n,))[self.rows, self.cols]     # (…, 4, 4, n)
        lead = vals.shape[:-3]
        w = self.weights.astype(np.float32).reshape(lead + (1, 16))
        full = (w @ vals.reshape(lead + (16, n))).reshape(lead + tab.shape[2:])
        self.line = np.lib.stride_tricks.sliding_window_view(full, 4, axis=-1)
        return self

    def real(self, u, index=None):
        """V at energies u (ω/ω_top ≥ 0); ``index`` selects the stencil of each u (a tuple
        of index arrays into the stencil's shape), else u has the stencil's shape."""
        pick = (lambda a: a) if index is None else (lambda a: a[index])
        u = np.asarray(u, float)
        rho = reference_nodes()
        n_out = rho.size - 1
        y = (u * u - pick(self.r2)) / pick(self.lam2)
        side = (y < 0.0).astype(np.intp)
        ay = np.sqrt(np.abs(y))
        eta = np.arcsinh(np.minimum(ay, rho[-1])) * ((GRID_NODES - 1) / GRID_SPAN) - 1.0
        k0, wk = _axis_weights(eta, 0.0, 1.0, n_out)
        near = eta < 0.0                            # between the edge and ρ_1
        if near.any():                              # the value at ρ_1
            wk = np.where(near[..., None], np.array([1.0, 0.0, 0.0, 0.0]), wk)
            k0 = np.where(near, 0, k0)
        if self.line is not None:                   # contracted: 4 values per energy
            at = index if index is not None else np.indices(side.shape, sparse=True)
            out = np.einsum("...k,...k->...", self.line[tuple(at) + (side, k0)], wk)
        else:                                       # 64 table values per energy
            tab = _table(*self.shape_args)[0]
            at = pick(self.offsets) + (side * tab.shape[-1] + k0)[..., None, None]
            vals = tab.reshape(-1)[at[..., None] + np.arange(4)].astype(float)
            out = np.einsum("...abk,...ab,...k->...", vals, pick(self.weights), wk)
        out += _top_log(pick(self.u_top), u * u)
        far = ay > rho[-1]                          # beyond the nodes: −2M₁/ω² tail
        if far.any():
            out = np.where(far, out * (rho[-1] / np.where(far, ay, 1.0)) ** 2, out)
        return out


def table_real(u, r, theta, line_shape="exact", thermal_edge="near_pi"):
    """V(u; r, θ) interpolated from the table (module notes); arguments and result as
    :func:`shape_real`, for which this is the fast path (:class:`TableStencil`)."""
    u, r, theta = np.broadcast_arrays(*(np.asarray(a, float) for a in (u, r, theta)))
    return TableStencil(r, theta, line_shape, thermal_edge).real(u)

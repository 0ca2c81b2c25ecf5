"""Gaussian energy-resolution convolution on a shared, locally adapted energy grid.

A spectrum that is smooth in energy but costly to evaluate (a dressed response, a cut
continuum) is convolved with the Gaussian resolution of each point by the trapezoidal rule
on energy nodes shared by all points of the same wavevector ("row").  Each point asks for
nodes every σ_i/k (k = :data:`NODES_PER_SIGMA`) within ±:data:`N_SIGMA` σ_i of its energy;
the spacings are powers of two times a base step h₀ = min σ/k, so that the requests of the
points of a row nest and merge into one sorted node set per row (fine where the resolution
is fine, coarse elsewhere).  The matrix of weights τ_j G_σi(E_i − ω_j), τ_j the trapezoid
weights of the merged nodes, is built once per set of points (sparse, a few tens of entries
per point) and normalised so that every row sums to one (a constant is convolved exactly).

For a function smooth on the scale of σ the error falls faster than any power of h/σ (the
trapezoidal rule on a Gaussian, Trefethen & Weideman 2014); a kink costs O((h/σ)²), a step
O(h/σ) of the local value times G (tests measure both).  Singular parts (an inverse
square-root edge) must be taken out before and convolved exactly elsewhere.

References
----------
L. N. Trefethen & J. A. C. Weideman, SIAM Rev. 56, 385 (2014) (the exponentially
convergent trapezoidal rule).
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 25.4.2
(trapezoidal rule).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import sparse

__all__ = ["RowGrid", "NODES_PER_SIGMA", "N_SIGMA"]

#: nodes per resolution standard deviation asked for by each point
NODES_PER_SIGMA = 3.0
#: half width of each point's window, in σ (the Gaussian falls to 1.5e-8 of its peak)
N_SIGMA = 6.0


class RowGrid:
    """Energy nodes per row and the sparse convolution matrix of a set of points.

    Parameters
    ----------
    row : ndarray of int, shape (n,)
        Row (distinct wavevector) of each point, 0 … n_rows − 1.
    energy : ndarray, shape (n,)
        Energy transfer of each point in meV.
    sigma : ndarray, shape (n,)
        Gaussian resolution standard deviation of each point in meV (> 0).
    nodes_per_sigma : float, optional
        Nodes per σ (default :data:`NODES_PER_SIGMA`).

    Attributes
    ----------
    node_row : ndarray of int, shape (m,)
        Row of each node.
    node_energy : ndarray, shape (m,)
        Signed energy of each node in meV, sorted within each row.
    matrix : scipy.sparse.csr_matrix, shape (n, m)
        Convolution weights: ``values @ matrix.T`` convolves values given at the nodes.
    base_step : float
        h₀ = min σ / nodes_per_sigma in meV.
    point_row, point_energy, point_sigma : ndarray, shape (n,)
        The points' rows, energies and σ (meV), as given.

    References
    ----------
    Trefethen & Weideman, SIAM Rev. 56, 385 (2014).
    """

    def __init__(self, row, energy, sigma, nodes_per_sigma=NODES_PER_SIGMA):
        row = np.asarray(row, dtype=np.int64).ravel()
        E = np.asarray(energy, dtype=float).ravel()
        s = np.asarray(sigma, dtype=float).ravel()
        if not (row.size == E.size == s.size) or np.any(~(s > 0)):
            raise ValueError("row, energy and sigma must have one positive sigma per point")
        self.point_row, self.point_energy, self.point_sigma = row, E, s
        h0 = float(s.min()) / float(nodes_per_sigma)
        self.base_step = h0
        level = np.floor(np.log2(s / (nodes_per_sigma * h0)) + 1e-9).astype(np.int64)
        step = np.left_shift(np.int64(1), np.maximum(level, 0))       # in units of h₀
        lo = np.ceil((E - N_SIGMA * s) / (h0 * step)).astype(np.int64)
        hi = np.floor((E + N_SIGMA * s) / (h0 * step)).astype(np.int64)
        count = hi - lo + 1
        owner = np.repeat(np.arange(E.size), count)
        k = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
        pos = (lo[owner] + k) * step[owner]                           # integer, units of h₀
        off = int(-pos.min())
        span = int(pos.max()) + off + 1
        key = row[owner] * span + (pos + off)
        order = np.argsort(key, kind="stable")
        key_s, step_s = key[order], step[owner][order]
        uniq, first = np.unique(key_s, return_index=True)
        # the coarsest spacing asked for at each node caps its trapezoid weight (gaps between
        # the windows of a row get no weight)
        cap = np.maximum.reduceat(step_s, first).astype(float) * h0
        self.node_row = (uniq // span).astype(np.int64)
        self.node_energy = ((uniq % span) - off).astype(float) * h0
        x, r = self.node_energy, self.node_row
        gap_l = np.diff(x, prepend=-np.inf)
        gap_r = np.diff(x, append=np.inf)
        same_l = np.concatenate([[False], r[1:] == r[:-1]])
        same_r = np.concatenate([r[1:] == r[:-1], [False]])
        left = np.where(same_l, np.minimum(gap_l, cap), cap)
        right = np.where(same_r, np.minimum(gap_r, cap), cap)
        tau = 0.5 * (left + right)
        # each point: the nodes of its row within its window
        klo = row * span + (np.ceil((E - N_SIGMA * s) / h0).astype(np.int64) + off)
        khi = row * span + (np.floor((E + N_SIGMA * s) / h0).astype(np.int64) + off)
        a = np.searchsorted(uniq, klo, side="left")
        b = np.searchsorted(uniq, khi, side="right")
        n_per = b - a
        idx = np.repeat(a, n_per) + (np.arange(n_per.sum())
                                     - np.repeat(np.cumsum(n_per) - n_per, n_per))
        pt = np.repeat(np.arange(E.size), n_per)
        z = (E[pt] - x[idx]) / s[pt]
        w = tau[idx] * np.exp(-0.5 * z * z) / (math.sqrt(2.0 * math.pi) * s[pt])
        norm = np.bincount(pt, weights=w, minlength=E.size)
        w = w / norm[pt]
        indptr = np.concatenate([[0], np.cumsum(n_per)])
        self.matrix = sparse.csr_matrix((w, idx, indptr), shape=(E.size, x.size))

    @property
    def size(self) -> int:
        """Number of nodes m."""
        return int(self.node_energy.size)

    def convolve(self, values: np.ndarray) -> np.ndarray:
        """Convolve values at the nodes with each point's resolution.

        Parameters
        ----------
        values : ndarray, shape (n_sets, m)
            The spectrum at the nodes, in any unit.

        Returns
        -------
        ndarray, shape (n_sets, n)
            Its Gaussian convolution at the points, in the same unit.
        """
        values = np.asarray(values, dtype=float)
        return np.asarray((self.matrix @ values.T).T)

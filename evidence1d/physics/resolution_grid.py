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
square-root edge) must be taken out before and convolved exactly elsewhere.  A second,
coarse rule on every ``coarse``-th node of the same windows (the spacings nest) serves the
points whose window holds no kink, step or narrow peak of the function: the caller says
per point which rule applies, and :meth:`RowGrid.needed` which nodes are then read, so
that the function is evaluated only there.

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


def _matrix(row, E, s, h0, step, span, off, keys=None):
    """Merged nodes (integer keys row·span + position/h₀ + off) of the points' windows at
    the given steps (units of h₀) and the normalised trapezoid–Gaussian matrix on them;
    with ``keys`` (a superset, sorted) the matrix's columns index those keys instead."""
    lo = np.ceil((E - N_SIGMA * s) / (h0 * step)).astype(np.int64)
    hi = np.floor((E + N_SIGMA * s) / (h0 * step)).astype(np.int64)
    count = hi - lo + 1
    owner = np.repeat(np.arange(E.size), count)
    k = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
    key = row[owner] * span + ((lo[owner] + k) * step[owner] + off)
    order = np.argsort(key, kind="stable")
    key_s, step_s = key[order], step[owner][order]
    uniq, first = np.unique(key_s, return_index=True)
    # the coarsest spacing asked for at each node caps its trapezoid weight (gaps between
    # the windows of a row get no weight)
    cap = np.maximum.reduceat(step_s, first).astype(float) * h0
    r, x = uniq // span, ((uniq % span) - off).astype(float) * h0
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
    cols, m = idx, uniq.size
    if keys is not None:
        cols, m = np.searchsorted(keys, uniq)[idx], keys.size
    return uniq, sparse.csr_matrix((w, cols, indptr), shape=(E.size, m))


class RowGrid:
    """Energy nodes per row and the sparse convolution matrices of a set of points.

    Two nested rules share the nodes: the fine one (``nodes_per_sigma``) and a coarse one
    with every ``coarse``-th node (``nodes_per_sigma``/``coarse`` per σ), for the points
    whose window holds no feature of the function (where the trapezoidal rule converges
    exponentially, Trefethen & Weideman 2014).

    Parameters
    ----------
    row : ndarray of int, shape (n,)
        Row (distinct wavevector) of each point, 0 … n_rows − 1.
    energy : ndarray, shape (n,)
        Energy transfer of each point in meV.
    sigma : ndarray, shape (n,)
        Gaussian resolution standard deviation of each point in meV (> 0).
    nodes_per_sigma : float, optional
        Nodes per σ of the fine rule (default :data:`NODES_PER_SIGMA`).
    coarse : int, optional
        Node spacing of the coarse rule in fine steps, a power of 2 (default 4).

    Attributes
    ----------
    node_row : ndarray of int, shape (m,)
        Row of each node.
    node_energy : ndarray, shape (m,)
        Signed energy of each node in meV, sorted within each row.
    matrix, coarse_matrix : scipy.sparse.csr_matrix, shape (n, m)
        Convolution weights of the fine and the coarse rule (the latter uses a subset of
        the nodes): ``values @ matrix.T`` convolves values given at the nodes.
    base_step : float
        h₀ = min σ / nodes_per_sigma in meV.
    point_row, point_energy, point_sigma : ndarray, shape (n,)
        The points' rows, energies and σ (meV), as given.

    References
    ----------
    Trefethen & Weideman, SIAM Rev. 56, 385 (2014).
    """

    def __init__(self, row, energy, sigma, nodes_per_sigma=NODES_PER_SIGMA, coarse=4):
        row = np.asarray(row, dtype=np.int64).ravel()
        E = np.asarray(energy, dtype=float).ravel()
        s = np.asarray(sigma, dtype=float).ravel()
        if not (row.size == E.size == s.size) or np.any(~(s > 0)):
            raise ValueError("row, energy and sigma must have one positive sigma per point")
        if coarse < 1 or coarse & (coarse - 1):
            raise ValueError("coarse must be a power of 2")
        self.point_row, self.point_energy, self.point_sigma = row, E, s
        h0 = float(s.min()) / float(nodes_per_sigma)
        self.base_step = h0
        level = np.floor(np.log2(s / (nodes_per_sigma * h0)) + 1e-9).astype(np.int64)
        step = np.left_shift(np.int64(1), np.maximum(level, 0))       # in units of h₀
        c = np.int64(coarse)
        off = 1 - int(np.floor((E - N_SIGMA * s).min() / h0))      # positions + off ≥ 1
        span = int(np.ceil((E + N_SIGMA * s).max() / h0)) + off + 1
        uniq, self.matrix = _matrix(row, E, s, h0, step, span, off)
        self.coarse_matrix = _matrix(row, E, s, h0, c * step, span, off, keys=uniq)[1]
        self.node_row = (uniq // span).astype(np.int64)
        self.node_energy = ((uniq % span) - off).astype(float) * h0
        self._patterns = [sparse.csr_matrix((np.ones(M.nnz), M.indices, M.indptr),
                                            shape=M.shape).T.tocsr()
                          for M in (self.matrix, self.coarse_matrix)]

    @property
    def size(self) -> int:
        """Number of nodes m."""
        return int(self.node_energy.size)

    def needed(self, fine: np.ndarray) -> np.ndarray:
        """The nodes each parameter set reads when ``fine`` selects the rule per point.

        Parameters
        ----------
        fine : ndarray of bool, shape (n_sets, n)
            True where a point takes the fine rule.

        Returns
        -------
        ndarray of bool, shape (n_sets, m)
        """
        f = np.asarray(fine, dtype=float)
        return ((self._patterns[0] @ f.T) + (self._patterns[1] @ (1.0 - f).T)).T > 0

    def convolve(self, values: np.ndarray, fine=None) -> np.ndarray:
        """Convolve values at the nodes with each point's resolution.

        Parameters
        ----------
        values : ndarray, shape (n_sets, m)
            The spectrum at the nodes, in any unit.
        fine : ndarray of bool, shape (n_sets, n), optional
            Where a point takes the fine rule (the coarse one elsewhere); default: the fine
            rule everywhere.

        Returns
        -------
        ndarray, shape (n_sets, n)
            Its Gaussian convolution at the points, in the same unit.
        """
        values = np.asarray(values, dtype=float)
        out = np.asarray((self.matrix @ values.T).T)
        if fine is None:
            return out
        return np.where(fine, out, np.asarray((self.coarse_matrix @ values.T).T))

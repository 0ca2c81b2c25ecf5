"""Gauss–Legendre rules, computed once per node count and shared read-only.

``numpy.polynomial.legendre.leggauss`` solves an eigenvalue problem on every call (about
0.2 ms for 20 nodes); the kernels ask for the same few rules on every likelihood call, so
they take them from here.  Gauss–Legendre quadrature: Abramowitz & Stegun, *Handbook of
Mathematical Functions* (1964), 25.4.29.
"""
from __future__ import annotations

import functools

import numpy as np

__all__ = ["gauss_legendre"]


@functools.lru_cache(maxsize=None)
def gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1].

    Parameters
    ----------
    n : int
        Number of nodes (≥ 1).

    Returns
    -------
    x, w : ndarray, shape (n,)
        Nodes (dimensionless, ascending) and weights (summing to 2); read-only arrays shared
        by every caller, exact for polynomials of degree < 2n.
    """
    x, w = np.polynomial.legendre.leggauss(int(n))
    x.setflags(write=False)
    w.setflags(write=False)
    return x, w

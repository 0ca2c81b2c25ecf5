"""Batched triangular solves by substitution (no pivoting).

A Cholesky factor L of a badly conditioned matrix (a linear nuisance whose column is almost
zero, next to prior variances of 10²⁶) is still an exact factor, and forward or back
substitution with it is backward stable (Higham 2002, ch. 8; theorem number from memory).  A general solver
(``numpy.linalg.solve``, LU with partial pivoting) applied to the same triangle may pivot
and lose that stability: on a scale column of 10⁻³¹ it returned |L⁻¹b|² larger than the
data's Σr², an impossible marginal likelihood.  Hence these.

Shapes: ``L`` or ``U`` (k, p, p); the right-hand side (k, p) or (k, p, m).

References
----------
N. J. Higham, *Accuracy and Stability of Numerical Algorithms*, 2nd ed. (SIAM, 2002), ch. 8.
"""
from __future__ import annotations

import numpy as np

__all__ = ["solve_lower", "solve_upper", "cholesky_inverse"]


def _as_matrix(B):
    X = np.array(B, dtype=float, copy=True)
    return (X[..., None], True) if X.ndim == 2 else (X, False)


def solve_lower(L, B) -> np.ndarray:
    """X with L X = B for lower-triangular L, by forward substitution.

    Parameters
    ----------
    L : ndarray, shape (k, p, p)
        Lower-triangular matrices (the upper triangle is not read).
    B : ndarray, shape (k, p) or (k, p, m)

    Returns
    -------
    ndarray
        The shape of ``B``.
    """
    L = np.asarray(L, dtype=float)
    X, vec = _as_matrix(B)
    for i in range(L.shape[-1]):
        if i:
            X[:, i] -= np.einsum("kj,kjm->km", L[:, i, :i], X[:, :i])
        X[:, i] /= L[:, i, i][:, None]
    return X[..., 0] if vec else X


def solve_upper(U, B) -> np.ndarray:
    """X with U X = B for upper-triangular U, by back substitution (shapes as
    :func:`solve_lower`; the lower triangle is not read)."""
    U = np.asarray(U, dtype=float)
    X, vec = _as_matrix(B)
    p = U.shape[-1]
    for i in range(p - 1, -1, -1):
        if i < p - 1:
            X[:, i] -= np.einsum("kj,kjm->km", U[:, i, i + 1:], X[:, i + 1:])
        X[:, i] /= U[:, i, i][:, None]
    return X[..., 0] if vec else X


def cholesky_inverse(L) -> np.ndarray:
    """L⁻¹ of lower-triangular factors L (k, p, p), by forward substitution."""
    L = np.asarray(L, dtype=float)
    return solve_lower(L, np.broadcast_to(np.eye(L.shape[-1]), L.shape))

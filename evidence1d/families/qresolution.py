"""Momentum resolution applied by the generic layer to families that do not apply it.

A single-crystal dataset may declare Gaussian momentum-resolution widths along the chain
(σ_Q∥) and across it (σ_Q⊥, along a).  A family that handles them itself (a sharp mode,
through σ_eff² = σ_E² + (∇_Q ω · σ_Q)²) says so with ``Family.handles_q_resolution``; for
every other family the measured intensity is the family's S(Q, E) averaged over the
resolution ellipsoid,

    S̄(Q, E) = ∫∫ S(Q + u, E) G(u_∥; σ_Q∥) G(u_⊥; σ_Q⊥) du_∥ du_⊥,

evaluated with a tensor Gauss–Hermite rule (exact for polynomials of degree 2n − 1 in each
direction).  Energy resolution has already been applied by the family at each node, so the
result is the spectrum convolved with the product of the energy and momentum Gaussians (the
resolution ellipsoid's principal axes taken along E, Q_∥ and Q_⊥, without E–Q correlation).

References
----------
M. J. Cooper & R. Nathans, Acta Cryst. 23, 357 (1967) (Gaussian resolution ellipsoid of a
triple-axis spectrometer); G. H. Golub & J. H. Welsch, Math. Comp. 23, 221 (1969)
(Gauss–Hermite nodes and weights).
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..physics.neutron import gauss_hermite
from .base import Family, SpectralPoints

__all__ = ["q_averaged_spectrum", "N_NODES"]

#: Gauss–Hermite nodes along the chain and across it (5 × 3 = 15 evaluations of the family)
N_NODES = (5, 3)


def q_averaged_spectrum(family: Family, p: dict, pts: SpectralPoints,
                        n_nodes: tuple[int, int] = N_NODES) -> np.ndarray:
    """The family's S(Q, E) averaged over a Gaussian momentum resolution.

    Parameters
    ----------
    family : Family
        Any family; its :meth:`Family.spectrum` is called at shifted wavevectors.
    p : dict of str to ndarray (n_sets, 1)
        Physical parameters.
    pts : SpectralPoints
        Points with ``sigma_Q_par`` and ``sigma_Q_perp`` (Å⁻¹, standard deviations).
    n_nodes : (int, int)
        Gauss–Hermite nodes along the chain and across it; a direction whose width is 0
        everywhere uses one node.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S̄(Q, E) in 1/meV per magnetic ion.

    References
    ----------
    Cooper & Nathans, Acta Cryst. 23, 357 (1967).
    """
    s_par = np.broadcast_to(np.asarray(pts.sigma_Q_par, float), np.shape(pts.energy))
    s_perp = np.broadcast_to(np.asarray(pts.sigma_Q_perp, float), np.shape(pts.energy))
    rules = []
    for s, n in ((s_par, n_nodes[0]), (s_perp, n_nodes[1])):
        rules.append(gauss_hermite(int(n)) if np.any(s > 0) else (np.zeros(1), np.ones(1)))
    (x_par, w_par), (x_perp, w_perp) = rules
    flat = replace(pts, sigma_Q_par=0.0, sigma_Q_perp=0.0)
    out = None
    for xi, wi in zip(x_par, w_par):
        for xj, wj in zip(x_perp, w_perp):
            shifted = replace(flat, Q_par=pts.Q_par + xi * s_par, Q_a=pts.Q_a + xj * s_perp)
            term = (wi * wj) * family.spectrum(p, shifted)
            out = term if out is None else out + term
    return out

"""Spinon-continuum family: the S = 1/2 XXZ chain (one-dimensional).

Spin Hamiltonian: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0 antiferromagnetic, J in meV.  The spectrum is the two-spinon continuum with the
Müller line shape (:mod:`evidence1d.physics.chain`); thermodynamics are added elsewhere.

References
----------
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981);
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962);
J. D. Johnson, S. Krinsky & B. M. McCoy, Phys. Rev. A 8, 2526 (1973).
"""
from __future__ import annotations

import numpy as np

from ..physics.chain import spinon_spectrum
from .base import Family, SpectralPoints

__all__ = ["SpinonFamily"]


class SpinonFamily(Family):
    """Two-spinon continuum of the S = 1/2 XXZ chain.

    Parameters
    ----------
    spin : float, optional
        Spin of the magnetic ion; the kernels describe S = 1/2 only.

    Notes
    -----
    Parameters (model card ``models/spinon_continuum.yaml``): ``J`` (meV, > 0), ``delta``
    (Δ > −1, dimensionless), ``g`` (Landé factor, used by the generic layer's form factor
    and by the thermodynamics, not by the spectrum).

    References
    ----------
    Müller et al., Phys. Rev. B 24, 1429 (1981).
    """

    parameters = ("J", "delta", "g")

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """Resolution-convolved S(q, E) per spin in 1/meV, detailed balance applied.

        Parameters
        ----------
        p : dict
            ``J`` (meV) and ``delta``, each of shape (n_sets, 1).
        pts : SpectralPoints
            Chain phase ``q_par`` (rad), ``energy`` and ``sigma`` (meV), ``temperature`` (K).

        Returns
        -------
        ndarray, shape (n_sets, n)
            Three spin components summed, no form factor, no intensity scale.

        References
        ----------
        Müller et al., Phys. Rev. B 24, 1429 (1981); Lovesey (1984) for detailed balance.
        """
        J = np.asarray(p["J"], dtype=float).reshape(-1, 1)
        delta = np.asarray(p["delta"], dtype=float).reshape(-1, 1)
        return spinon_spectrum(pts.q_par, pts.energy, pts.sigma, pts.temperature, J, delta)

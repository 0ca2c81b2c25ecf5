"""The polarisation factor of the chain families (uniaxial XXZ spins).

A neutron sees Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ(Q, ω) (Squires 1978, Ch. 7).  For the XXZ chain
S^xx = S^yy about the anisotropy axis z, and the chain kernels give the three components
summed; with the longitudinal share f_zz(q) of
:func:`evidence1d.physics.chain.longitudinal_share` the cross-section is that sum times
:func:`evidence1d.physics.neutron.uniaxial_polarisation` (f_zz, c²), c² = (Q̂·ẑ)².  The
anisotropy axis is a family option, ``anisotropy_axis``: ``par`` (along the chain, the
default), ``a`` or ``b`` (along the first or second interchain direction).

For the powder average of a chain-phase-only family the factor is averaged over the
azimuth of Q about the chain first: with u = Q_∥/|Q|, c² = u² for the chain axis and
⟨c²⟩_φ = (1 − u²)/2 for an axis across the chain, so the azimuthal mean is
S₀(q) + u² S₂(q) (:meth:`ChainPolarisation.chain_terms`), which
:func:`evidence1d.physics.powder.chain_average` integrates in closed form.

References
----------
G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering* (CUP, 1978),
Ch. 7.
P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974) (the component moments that
fix f_zz).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..physics.chain import longitudinal_share
from ..physics.neutron import uniaxial_polarisation

__all__ = ["ANISOTROPY_AXES", "ChainPolarisation", "check_anisotropy_axis"]

#: directions the spin-anisotropy axis of a chain family may take
ANISOTROPY_AXES = ("par", "a", "b")


def check_anisotropy_axis(axis, family: str) -> str:
    """The anisotropy axis option, checked: one line naming the family if it is unknown."""
    if axis not in ANISOTROPY_AXES:
        raise InputError(f"the 'anisotropy_axis' option of {family} must be par (along the "
                         f"chain), a or b (across it); got {axis!r} instead",
                         key="options.anisotropy_axis")
    return axis


class ChainPolarisation:
    """Mix-in of a chain family: its spectrum is the polarisation-weighted cross-section.

    The family implements ``_unpolarised(p, pts)`` (the three spin components summed) and
    sets ``anisotropy_axis``; this class gives :meth:`spectrum`,
    :meth:`unpolarised_spectrum` and, for the one-dimensional powder average,
    :meth:`chain_terms`.
    """

    #: Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ is what :meth:`spectrum` returns
    cross_section_factor = 1.0
    anisotropy_axis = "par"

    def _unpolarised(self, p: dict, pts) -> np.ndarray:          # pragma: no cover
        raise NotImplementedError

    def _share(self, p: dict, pts) -> np.ndarray:
        J = np.asarray(p["J"], dtype=float).reshape(-1, 1)
        delta = np.asarray(p["delta"], dtype=float).reshape(-1, 1)
        return longitudinal_share(np.broadcast_to(pts.q_par, np.shape(pts.energy)), J, delta)

    def spectrum(self, p: dict, pts) -> np.ndarray:
        """Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ(Q, E) per spin in 1/meV, shape (n_sets, n).

        The summed spectrum of the family times the uniaxial polarisation factor
        (module notes); resolution and detailed balance as the summed spectrum.

        References
        ----------
        Squires (1978), Ch. 7; Hohenberg & Brinkman, Phys. Rev. B 10, 128 (1974).
        """
        factor = uniaxial_polarisation(self._share(p, pts), pts.axis_cos2(self.anisotropy_axis))
        return factor * self._unpolarised(p, pts)

    def unpolarised_spectrum(self, p: dict, pts) -> np.ndarray:
        """The three spin components summed, Σ_a S^aa(Q, E), per spin in 1/meV."""
        return self._unpolarised(p, pts)

    def chain_terms(self, p: dict, pts):
        """(S₀, S₂) with the azimuthal mean of :meth:`spectrum` = S₀ + u² S₂, u = Q_∥/|Q|.

        ``pts`` carries the chain phases (its interchain components are not used).  With
        the factor a₀ + c² a₂, a₀ = (1 + f_zz)/2, a₂ = (1 − 3f_zz)/2: S₀ = a₀ S, S₂ = a₂ S
        for the chain axis (c² = u²); S₀ = (a₀ + a₂/2) S, S₂ = −a₂ S/2 across the chain
        (⟨c²⟩_φ = (1 − u²)/2).

        Returns
        -------
        tuple of ndarray, shape (n_sets, n)
            In 1/meV.
        """
        f = self._share(p, pts)
        S = self._unpolarised(p, pts)
        a0, a2 = 0.5 * (1.0 + f) * S, 0.5 * (1.0 - 3.0 * f) * S
        if self.anisotropy_axis == "par":
            return a0, a2
        return a0 + 0.5 * a2, -0.5 * a2

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

import dataclasses

import numpy as np

from ..errors import InputError
from ..physics.chain import longitudinal_share
from ..physics.neutron import uniaxial_polarisation

__all__ = ["ANISOTROPY_AXES", "ChainPolarisation", "check_anisotropy_axis",
           "distinct_chain_points"]

#: directions the spin-anisotropy axis of a chain family may take
ANISOTROPY_AXES = ("par", "a", "b")


def check_anisotropy_axis(axis, family: str) -> str:
    """The anisotropy axis option, checked: one line naming the family if it is unknown."""
    if axis not in ANISOTROPY_AXES:
        raise InputError(f"the 'anisotropy_axis' option of {family} must be par (along the "
                         f"chain), a or b (across it); got {axis!r} instead",
                         key="options.anisotropy_axis")
    return axis


#: a chain-phase-only family's summed spectrum is computed once per distinct (Q_∥, E, σ)
#: when the distinct points are at most this fraction of all (a cut across the chains
#: repeats each of its energies at every Q_⊥); above it the points are used as they are
DISTINCT_FRACTION = 0.9


def distinct_chain_points(pts):
    """The distinct (Q_∥, E, σ) of ``pts`` and the map back, or None if not worth it.

    For a family whose spectrum depends on Q only through the chain phase q = Q_∥ d
    (:attr:`~evidence1d.families.base.Family.chain_only`), points that differ only across
    the chains have the same summed spectrum.

    Parameters
    ----------
    pts : SpectralPoints
        With one-dimensional ``Q_par``, ``energy`` and ``sigma`` of the same length n.

    Returns
    -------
    (SpectralPoints, ndarray of int) or None
        Points holding each distinct (Q_∥ in Å⁻¹, E and σ in meV) once (interchain
        components and momentum widths 0), and for each of the n points the index of its
        distinct point; None when ``pts`` is not of that form or the distinct points are
        more than :data:`DISTINCT_FRACTION` of n.
    """
    if not dataclasses.is_dataclass(pts):
        return None
    E = np.asarray(pts.energy, dtype=float)
    if E.ndim != 1 or E.size < 2:
        return None
    Qp = np.asarray(pts.Q_par, dtype=float)
    s = np.asarray(pts.sigma, dtype=float)
    if Qp.shape != E.shape or s.shape != E.shape:
        return None
    uniq, inverse = np.unique(np.stack([Qp, E, s], axis=1), axis=0, return_inverse=True)
    if uniq.shape[0] > DISTINCT_FRACTION * E.size:
        return None
    m = uniq.shape[0]
    reduced = dataclasses.replace(pts, Q_par=uniq[:, 0], Q_a=np.zeros(m), Q_b=np.zeros(m),
                                  energy=uniq[:, 1], sigma=uniq[:, 2], sigma_Q_par=0.0,
                                  sigma_Q_perp=0.0)
    return reduced, inverse.reshape(-1)


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

    def _summed(self, p: dict, pts) -> np.ndarray:
        """:meth:`_unpolarised`, computed once per distinct (Q_∥, E, σ) for a family whose
        spectrum depends on Q through the chain phase only (:func:`distinct_chain_points`)."""
        if getattr(self, "chain_only", False):
            found = distinct_chain_points(pts)
            if found is not None:
                reduced, back = found
                return self._unpolarised(p, reduced)[..., back]
        return self._unpolarised(p, pts)

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
        return factor * self._summed(p, pts)

    def unpolarised_spectrum(self, p: dict, pts) -> np.ndarray:
        """The three spin components summed, Σ_a S^aa(Q, E), per spin in 1/meV."""
        return self._summed(p, pts)

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
        S = self._summed(p, pts)
        a0, a2 = 0.5 * (1.0 + f) * S, 0.5 * (1.0 - 3.0 * f) * S
        if self.anisotropy_axis == "par":
            return a0, a2
        return a0 + 0.5 * a2, -0.5 * a2

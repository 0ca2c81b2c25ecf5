"""The contract every model family implements.

A family turns physical parameters into predictions for each dataset kind.  The generic layer
(:mod:`evidence1d.families`) adds what is common to all families: the magnetic form factor,
the per-dataset intensity scale, backgrounds and elastic line, χ_0 + C_imp/T, γ_e T + β T³,
and conversion to the user's units.  A family therefore returns only the *model part*.

Parameter batches
-----------------
Every method receives ``p``, a mapping from parameter name to an array of shape
``(n_sets, 1)`` (one row per parameter set) and point arrays of shape ``(n_points,)``; it
returns an array of shape ``(n_sets, n_points)``.  Methods are pure: no files, no state
changed, no randomness.

Spin Hamiltonian convention: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0 antiferromagnetic, energies in meV.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SpectralPoints", "Family", "DIRECTIONS"]

#: Field directions a susceptibility dataset may declare: ``powder`` (1/3 χ_zz + 2/3 χ_xx),
#: ``z`` (along the spin-anisotropy axis) and ``xy`` (perpendicular to it).
DIRECTIONS = ("powder", "z", "xy")


@dataclass(frozen=True)
class SpectralPoints:
    """The points at which a neutron spectrum is predicted.

    For a single crystal these are the data points; for a powder, the generic layer expands
    each |Q| over a set of directions and averages the family's answer.

    Attributes
    ----------
    Q_par, Q_a, Q_b : ndarray, shape (n,)
        Wavevector components in Å⁻¹ along the chain and along the two interchain directions
        (crystal axes a and b; the chain runs along c).
    d, a_perp, b_perp : float
        Spin spacing along the chain and interchain spacings along a and b, in Å.
    energy : ndarray, shape (n,)
        Energy transfer in meV (positive: neutron energy loss).
    sigma : ndarray, shape (n,)
        Gaussian energy-resolution standard deviation in meV (FWHM / 2.3548).
    temperature : float
        Sample temperature in K.
    sigma_Q_par, sigma_Q_perp : float or ndarray, shape (n,)
        Gaussian momentum-resolution standard deviations in Å⁻¹ along the chain and across
        it (along a); 0 (default) means no momentum resolution.  A family whose
        :attr:`Family.handles_q_resolution` is true applies them itself (for example through
        σ_eff² = σ² + (∂ω/∂Q_∥ σ_Q∥)² + (∂ω/∂Q_⊥ σ_Q⊥)² for a sharp mode); for any other
        family the generic layer averages the family's answer over Gauss–Hermite nodes in Q.
    """

    Q_par: np.ndarray
    Q_a: np.ndarray
    Q_b: np.ndarray
    d: float
    a_perp: float
    b_perp: float
    energy: np.ndarray
    sigma: np.ndarray
    temperature: float
    sigma_Q_par: np.ndarray | float = 0.0
    sigma_Q_perp: np.ndarray | float = 0.0

    @property
    def has_q_resolution(self) -> bool:
        """Whether any momentum-resolution width is non-zero."""
        return bool(np.any(np.asarray(self.sigma_Q_par) > 0)
                    or np.any(np.asarray(self.sigma_Q_perp) > 0))

    @property
    def q_par(self) -> np.ndarray:
        """Chain phase q = Q_∥ d in radians."""
        return self.Q_par * self.d

    @property
    def q_a(self) -> np.ndarray:
        """Interchain phase Q_a a_⊥ in radians."""
        return self.Q_a * self.a_perp

    @property
    def q_b(self) -> np.ndarray:
        """Interchain phase Q_b b_⊥ in radians."""
        return self.Q_b * self.b_perp

    @property
    def Q(self) -> np.ndarray:
        """|Q| in Å⁻¹."""
        return np.sqrt(self.Q_par ** 2 + self.Q_a ** 2 + self.Q_b ** 2)


class Family:
    """Base class of a model family.

    Subclasses set :attr:`parameters` (the physical parameter names, in order, which must
    match the model card) and implement the prediction methods for the dataset kinds they
    support.  A method that is not overridden raises ``NotImplementedError`` and the case
    loader reports that the family cannot explain that dataset kind.

    Parameters
    ----------
    spin : float
        Spin quantum number S of the magnetic ion (from the case file's sample block).
    """

    #: physical parameter names, in the order of the model card
    parameters: tuple[str, ...] = ()

    #: sample spins the family's physics holds for (``None``: any spin S > 0); the case
    #: loader rejects any other spin with a one-line error
    spins: tuple[float, ...] | None = None

    #: whether :meth:`spectrum` applies the momentum resolution of ``pts`` itself
    handles_q_resolution: bool = False

    #: whether :meth:`spectrum` depends on the wavevector only through the chain phase
    #: q = Q_∥ d (not on |Q| nor on Q_a, Q_b); the powder average is then the exact
    #: one-dimensional one (:func:`evidence1d.physics.powder.adaptive_chain_average`)
    chain_only: bool = False

    def __init__(self, spin: float = 0.5):
        self.spin = float(spin)

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """Resolution-convolved dynamical structure factor per magnetic ion.

        Parameters
        ----------
        p : dict of str to ndarray, each of shape (n_sets, 1)
            Physical parameters of this family (energies in meV).
        pts : SpectralPoints
            Where to predict, with the resolution width and temperature.

        Returns
        -------
        ndarray, shape (n_sets, n)
            S(Q, E) in 1/meV per magnetic ion, detailed balance applied at
            ``pts.temperature`` and convolved with the Gaussian resolution; without the
            magnetic form factor and without the dataset's intensity scale.
        """
        raise NotImplementedError

    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """Model part of the molar susceptibility in emu/mol of magnetic ion.

        Parameters
        ----------
        p : dict of str to ndarray (n_sets, 1)
        T : ndarray, shape (n,)
            Temperature in K.
        direction : {'powder', 'z', 'xy'}
            Field direction relative to the spin-anisotropy axis.
        """
        raise NotImplementedError

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Magnetic heat capacity in J/(mol K) per mol of magnetic ion, shape (n_sets, n)."""
        raise NotImplementedError

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Magnetic entropy S(T) in J/(mol K) per mol of magnetic ion, shape (n_sets, n)."""
        raise NotImplementedError

    def overlays(self, p: dict, pts: SpectralPoints) -> list:
        """Characteristic energies E(Q) drawn over a map of the family's spectrum.

        Parameters
        ----------
        p : dict of str to ndarray (n_sets, 1)
            Physical parameters, energies in meV.
        pts : SpectralPoints
            Points along a wavevector line (their energies are not used).

        Returns
        -------
        list of (str, ndarray (n_sets, n))
            A label and the energy in meV of every curve; the base family has none.
        """
        return []

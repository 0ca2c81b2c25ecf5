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

    def axis_cos2(self, axis) -> np.ndarray:
        """Squared cosine between Q and a spin axis, shape (n,).

        Parameters
        ----------
        axis : {'par', 'a', 'b'} or None
            Along the chain, along the first or second interchain direction; ``None``
            gives the mean over directions, 1/3 (also used where Q = 0).

        Returns
        -------
        ndarray
            Q̂_axis² (dimensionless), for the polarisation factor δ_αβ − Q̂_α Q̂_β
            (Squires 1978, Ch. 7).
        """
        shape = np.shape(self.energy)
        if axis is None:
            return np.full(shape, 1.0 / 3.0)
        comp = np.broadcast_to({"par": self.Q_par, "a": self.Q_a, "b": self.Q_b}[axis], shape)
        Q = np.broadcast_to(self.Q, shape)
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(Q > 0, (comp / np.where(Q > 0, Q, 1.0)) ** 2, 1.0 / 3.0)


class Family:
    """Base class of a model family.

    Subclasses set :attr:`parameters` (the physical parameter names, in order, which must
    match the model card), declare the dataset kinds they predict in :attr:`kinds` and
    implement the method each of those kinds names
    (:attr:`DatasetKind.family_method <evidence1d.data.kind_base.DatasetKind.family_method>`).
    A card whose family declares an unknown kind, or a kind without its method, is rejected
    when it loads (:meth:`declaration_problem`); a case pairing a family with data of a kind
    it does not declare is rejected when it loads (:meth:`unsupported_message`).  A family
    is built from the case's sample by :meth:`sample_options`.

    Parameters
    ----------
    spin : float
        Spin quantum number S of the magnetic ion (from the case file's sample block).
    """

    #: the name a model card's ``family:`` gives (the registry finds the class by it)
    family_name: str | None = None

    #: physical parameter names, in the order of the model card
    parameters: tuple[str, ...] = ()

    #: sample spins the family's physics holds for (``None``: any spin S > 0); the case
    #: loader rejects any other spin with a one-line error
    spins: tuple[float, ...] | None = None

    #: physical parameters that act only on spectra (a thermal damping, which vanishes at
    #: T = 0; every spectrum of a case has T > 0): in a case without spectra they are held at
    #: 0, not sampled, unless the case gives them a prior of its own
    thermal_parameters: tuple[str, ...] = ()

    #: whether :meth:`spectrum` applies the momentum resolution of ``pts`` itself
    handles_q_resolution: bool = False

    #: the most (parameter set, point) pairs one :meth:`spectrum` call is given (None: no
    #: limit); a family whose working memory per pair is large (an energy grid per set)
    #: sets it, and the predictions are computed in batches of sets under it
    max_pairs_per_call: int | None = None

    #: whether :meth:`spectrum` depends on the wavevector only through the chain phase
    #: q = Q_∥ d and, through :meth:`chain_terms`, quadratically on Q̂ (a polarisation
    #: factor); the powder average is then the exact one-dimensional one
    #: (:func:`evidence1d.physics.powder.adaptive_chain_average`)
    chain_only: bool = False

    #: names of the dataset kinds the family predicts (:data:`evidence1d.data.KINDS`)
    kinds: tuple[str, ...] = ()

    #: c in Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ(Q, ω) = c × :meth:`spectrum` at the directional
    #: average of the polarisation factor: 2/3 for a family that returns the three spin
    #: components summed with no polarisation factor, 1 for one that returns the
    #: polarisation-weighted sum (Squires 1978, Ch. 7); ``None``: not stated (a spectrum on
    #: an absolute scale is then not checked against it; :mod:`evidence1d.analysis.absolute`)
    cross_section_factor: float | None = None

    def __init__(self, spin: float = 0.5):
        self.spin = float(spin)

    @classmethod
    def sample_options(cls, sample) -> dict:
        """Constructor options the family takes from the case's sample besides its spin.

        The card's (and the case file's) options override them.  The base family takes
        none.

        Parameters
        ----------
        sample : Sample
            Spin, spin spacing d (Å) and lattice (a, b, c in Å).

        Returns
        -------
        dict
        """
        return {}

    @classmethod
    def supports(cls, kind) -> bool:
        """Whether the family predicts datasets of ``kind`` (a kind object or its name)."""
        return getattr(kind, "name", kind) in cls.kinds

    @classmethod
    def unsupported_message(cls, kind, dataset: str) -> str:
        """One line saying that the family does not predict dataset ``dataset`` of ``kind``."""
        name = getattr(kind, "name", kind)
        return (f"family {cls.__name__} does not predict {name} data (dataset '{dataset}'); "
                f"it predicts {', '.join(cls.kinds) or 'no kind'}: remove the model or the "
                "dataset")

    @classmethod
    def declaration_problem(cls) -> str | None:
        """What is wrong with the family's declared :attr:`kinds`, in one line (None: fine).

        Every declared kind must be a known dataset kind, and the family must implement the
        method that kind needs (:attr:`DatasetKind.family_method`).
        """
        from ..data import KINDS
        if not cls.kinds:
            return f"family {cls.__name__} declares no dataset kinds (its 'kinds' attribute)"
        for name in cls.kinds:
            if name not in KINDS:
                return (f"family {cls.__name__} declares dataset kind {name!r}, which is not "
                        f"a kind; known kinds: {', '.join(KINDS)}")
            method = KINDS[name].family_method
            if getattr(cls, method, None) is getattr(Family, method):
                return (f"family {cls.__name__} declares dataset kind {name!r} but does not "
                        f"implement {method}(), which predicts it")
        return None

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

    def unpolarised_spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """The three spin components summed, Σ_a S^aa(Q, E), per magnetic ion in 1/meV.

        The base family takes it as (3/2) c × :meth:`spectrum` with c its
        :attr:`cross_section_factor` (exact for isotropic fluctuations, the mean over
        directions otherwise); families that know their components override it.

        Raises
        ------
        NotImplementedError
            The family states no :attr:`cross_section_factor`.
        """
        if self.cross_section_factor is None:
            raise NotImplementedError(f"{type(self).__name__} states no cross_section_factor")
        return 1.5 * self.cross_section_factor * self.spectrum(p, pts)

    def chain_terms(self, p: dict, pts: SpectralPoints):
        """(S₀, S₂): the mean of :meth:`spectrum` over the azimuth of Q about the chain is
        S₀ + u² S₂, u = Q_∥/|Q|, for a :attr:`chain_only` family (the one-dimensional powder
        average, :func:`evidence1d.physics.powder.chain_average`).  The base family has no
        dependence on Q̂: (spectrum, None)."""
        return self.spectrum(p, pts), None

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

    def dimensionality(self, p: dict) -> list:
        """Dimensionless measures of how far each parameter set is from one dimension.

        Reported with the family's nested one-dimensional limit (the posterior probability
        that each measure lies below 1 % and 5 %), so that a reader can see what
        "one-dimensional" means when a family with such a limit wins.

        Parameters
        ----------
        p : dict of str to ndarray (n_sets, 1)
            Physical parameters.

        Returns
        -------
        list of (str, str, ndarray (n_sets,))
            Name, description and value of each measure; the base family has none.
        """
        return []

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

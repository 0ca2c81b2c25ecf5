"""The quasi-elastic paramagnon families: relaxational spin fluctuations of a metal.

Physics in :mod:`evidence1d.physics.paramagnon` (spectra) and
:mod:`evidence1d.physics.paramagnon_thermo` (heat capacity, entropy).  The 1D limit is
ξ_⊥ = 0 (no correlations between chains), declared in the cards as ``nested_1d_limit`` on
``xi_perp``.  Two registered families share the code: ``paramagnon`` (centres
``zone_boundary`` and ``zone_centre``) and ``paramagnon_incommensurate`` (centre
``incommensurate``, with the sampled chain phase ``q0``), because a card's parameters are
those of its family.
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from ..physics import paramagnon as pm
from ..physics import paramagnon_thermo as pt
from ..physics import paramagnon_zone as pz
from ..units import K_B_MEV, R_GAS
from .base import DIRECTIONS, Family, SpectralPoints

__all__ = ["ParamagnonFamily", "IncommensurateParamagnonFamily"]


class ParamagnonFamily(Family):
    """Ornstein–Zernike paramagnon, relaxation rate of SCR theory, tied to χ(T) by Kramers–Kronig.

    Parameters
    ----------
    spin : float
        Spin S of the magnetic ion: the heat capacity releases at most R ln(2S + 1)
        (:mod:`evidence1d.physics.paramagnon_thermo`); the spectra do not use it.
    center : {'zone_boundary', 'zone_centre'}, optional
        Where the correlations are centred: Q₀ = (π/d, π/a_⊥, π/b_⊥) (antiferromagnetic,
        default; non-conserved order parameter, Γ_Q = Γ_0 (1 + κ), z = 2) or Q₀ = 0
        (ferromagnetic; conserved magnetisation, Γ_Q = Γ_0 ℓ(Q) (1 + κ) → 0 as Q → 0, z = 3).
    lattice : sequence of 3 floats, optional
        Spin spacing d along the chain and interchain spacings a_⊥, b_⊥ in Å.  Needed by
        the heat capacity and entropy (a zone sum); if given, spectra must use the same
        spacings.
    n_nodes : int, optional
        Gauss–Hermite nodes for the energy-resolution convolution of the remainder term.

    Notes
    -----
    Parameters (model card ``paramagnon``): ``chi_uniform`` (uniform static χ as T → 0,
    emu/mol), ``theta_sf`` (K), ``xi_par``, ``xi_perp`` (Å), ``gamma0`` (meV), ``g`` (1).
    The spin fluctuations are isotropic, so ``spectrum`` returns the unpolarised
    Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^{αβ} = 2 S^{zz}(Q, E) per ion, and χ is the same for every
    field direction.  Momentum resolution is left to the generic layer
    (:mod:`evidence1d.families.qresolution`; ``handles_q_resolution`` is false).

    References
    ----------
    T. Moriya, Spin Fluctuations in Itinerant Electron Magnetism (Springer, 1985);
    J. A. Hertz, Phys. Rev. B 14, 1165 (1976); A. J. Millis, Phys. Rev. B 48, 7183 (1993);
    G. L. Squires (1978), Ch. 7.
    """

    family_name = "paramagnon"
    #: 2 S per component is the polarisation-weighted sum of isotropic fluctuations
    cross_section_factor = 1.0
    parameters = ("chi_uniform", "theta_sf", "xi_par", "xi_perp", "gamma0", "g")
    _centers = ("zone_boundary", "zone_centre")

    #: predicts both spectra and all three thermodynamic kinds
    kinds = ("crystal_spectrum", "powder_spectrum", "susceptibility", "heat_capacity", "entropy")

    def __init__(self, spin: float = 0.5, center: str = "zone_boundary", lattice=None,
                 n_nodes: int = 12):
        super().__init__(spin)
        pm._check_center(center)                                    # validates the name
        if center not in self._centers:
            other = ("the card 'paramagnon_incommensurate' (family "
                     "paramagnon_incommensurate, which samples q0)"
                     if center == "incommensurate" else "the card 'paramagnon'")
            raise InputError(f"the 'center' option {center!r} is not available in family "
                             f"'{self._name()}'; use {other}")
        self.center = center
        if lattice is not None:
            try:
                lattice = tuple(float(x) for x in lattice)
            except (TypeError, ValueError):
                lattice = ()
            if len(lattice) != 3 or not all(np.isfinite(x) and x > 0 for x in lattice):
                raise InputError("the 'lattice' option of paramagnon must be three positive "
                                 "spacings [d, a_perp, b_perp] in Å")
        self.lattice = lattice
        if isinstance(n_nodes, bool) or not isinstance(n_nodes, (int, np.integer)) \
                or n_nodes < 1:
            raise InputError(f"the 'n_nodes' option of paramagnon must be a positive "
                             f"integer; got {n_nodes!r} instead")
        self.n_nodes = int(n_nodes)

    @classmethod
    def sample_options(cls, sample) -> dict:
        """The spacings [d, a_perp, b_perp] (Å) of the sample: spin spacing along the chain
        and the lattice constants a and b (the ``lattice`` option, unless a card gives it)."""
        return {"lattice": (sample.spin_spacing, sample.lattice["a"], sample.lattice["b"])}

    @classmethod
    def _name(cls):
        return "paramagnon"

    def _q0(self, p):
        return None

    def _spacings(self, pts: SpectralPoints | None = None):
        if pts is not None:
            own = (float(pts.d), float(pts.a_perp), float(pts.b_perp))
            if self.lattice is not None and not np.allclose(own, self.lattice, rtol=1e-9):
                raise InputError(f"the spectrum's spacings {own} differ from the family's "
                                 f"lattice option {self.lattice}; give one set of spacings")
            return own
        if self.lattice is None:
            raise InputError("the paramagnon heat capacity and entropy need the spacings: "
                             "give the family option lattice: [d, a_perp, b_perp] in Å")
        return self.lattice

    # ------------------------------------------------------------------ spectra
    def static_susceptibility(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """χ̃_Q(T) in 1/meV per spin component at the points (Kramers–Kronig static limit).

        Returns
        -------
        chi_q : ndarray, shape (n_sets, n)
            χ̃_Q at the dataset temperature in 1/meV.
        kappa : ndarray, shape (n_sets, n)
            The Ornstein–Zernike term κ(Q).

        References
        ----------
        Ornstein & Zernike (1914); Moriya (1985), Ch. 4; Lovesey (1984), Ch. 4.
        """
        d, a, b = self._spacings(pts)
        q0 = self._q0(p)
        kappa = pm.oz_denominator(pts.q_par, pts.q_a, pts.q_b, p["xi_par"], p["xi_perp"],
                                  d, a, b, self.center, q0)
        kappa0 = pm.oz_denominator(0.0, 0.0, 0.0, p["xi_par"], p["xi_perp"], d, a, b,
                                   self.center, q0)
        chi_u = pm.uniform_susceptibility(pts.temperature, p["chi_uniform"], p["theta_sf"])
        chi_u = pm.reduced_susceptibility(chi_u, p.get("g", 2.0))
        return pm.static_susceptibility(kappa, kappa0, chi_u), kappa

    def overlays(self, p: dict, pts: SpectralPoints) -> list:
        """The relaxation rate Γ_Q (meV) of :meth:`relaxation_rate`."""
        return [("relaxation rate Γ$_Q$", self.relaxation_rate(p, pts))]

    def relaxation_rate(self, p: dict, pts: SpectralPoints, kappa=None) -> np.ndarray:
        """Γ_Q in meV at the points: z = 2 (non-conserved) or z = 3 (zone centre).

        References
        ----------
        Moriya (1985), Ch. 3; Hertz (1976); Millis (1993).
        """
        if kappa is None:
            kappa = self.static_susceptibility(p, pts)[1]
        ell = None
        if pm.DYNAMICS[self.center] == 3:
            ell = pm.lattice_momentum(pts.q_par, pts.q_a, pts.q_b, *self._spacings(pts))
        return pm.relaxation_rate(kappa, p["gamma0"], ell)

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """2 S^{zz}(Q, E) in 1/meV per ion, detailed balance and energy resolution applied.

        S = χ̃''(Q, E)[n(E) + 1]/π per component (fluctuation–dissipation theorem).

        References
        ----------
        Moriya (1985), Ch. 3; Lovesey (1984), Ch. 4; Squires (1978), Ch. 7.
        """
        chi_q, kappa = self.static_susceptibility(p, pts)
        gamma_q = self.relaxation_rate(p, pts, kappa)
        s = pm.convolved_structure_factor(pts.energy, pts.sigma, pts.temperature, chi_q,
                                          gamma_q, self.n_nodes)
        return 2.0 * s

    # ------------------------------------------------------------------ thermodynamics
    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """Uniform χ_u(T) = χ_u(0) θ_sf/(T + θ_sf) in emu/mol, the Q → 0 limit of χ_Q.

        References
        ----------
        Moriya (1985), Ch. 4.
        """
        if direction not in DIRECTIONS:
            raise InputError(f"unknown field direction {direction!r}; expected one of "
                             f"{', '.join(DIRECTIONS)}")
        T = np.asarray(T, float)
        return pm.uniform_susceptibility(T, p["chi_uniform"], p["theta_sf"]) \
            * np.ones_like(np.asarray(p["g"], float) if "g" in p else 1.0)

    def zone_rates(self, p: dict, compress: bool = True):
        """The zone rule of Γ_Q: (ln Γ nodes, weights), compressed unless told otherwise.

        Returns
        -------
        log_gamma or gamma, weight : ndarray, shape (n_sets, m)
            ln Γ (meV) and weights from :func:`paramagnon_zone.compress_rates`, or the
            uncompressed rates Γ_Q (meV) and zone weights with ``compress=False``.

        References
        ----------
        :mod:`evidence1d.physics.paramagnon_zone` (zone quadrature).
        """
        d, a, b = self._spacings()
        gamma, w = pz.zone_rates(p["xi_par"], p["xi_perp"], p["gamma0"], d, a, b,
                                 self.center, self._q0(p))
        return pz.compress_rates(gamma, w) if compress else (gamma, w)

    @property
    def entropy_ceiling(self) -> float:
        """R ln(2S + 1) in J/(mol K): the entropy the modes may release in total."""
        return R_GAS * math.log(2.0 * self.spin + 1.0)

    def low_temperature_gamma(self, p: dict) -> np.ndarray:
        """γ_sf = π R k_B ⟨1/Γ_Q⟩_BZ in J/(mol K²): C → γ_sf T as T → 0, shape (n_sets, 1).

        References
        ----------
        Moriya (1985), Ch. 3; (π/3) k_B²/Γ per mode (paramagnon_thermo module notes).
        """
        gamma, w = self.zone_rates(p, compress=False)
        return math.pi * R_GAS * K_B_MEV * np.sum(w / gamma, axis=1, keepdims=True)

    def saturation_temperature(self, p: dict) -> np.ndarray:
        """T_x in K above which the C(T) tail releases the rest of R ln(2S + 1), (n_sets, 1).

        References
        ----------
        :func:`evidence1d.physics.paramagnon_thermo.saturation_temperature`.
        """
        lg, w = self.zone_rates(p)
        return pt.saturation_temperature(lg, w, self.entropy_ceiling)

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Heat capacity of the overdamped modes, exact for any Γ/k_BT, in J/(mol K).

        Free energy of each relaxational mode in closed form (digamma functions), summed over
        the zone and three spin components; entropy ceiling R ln(2S + 1).

        References
        ----------
        Ford, Lewis & O'Connell (1988); Moriya (1985), Ch. 3; Rushbrooke & Wood (1958).
        """
        lg, w = self.zone_rates(p)
        return pt.spin_fluctuation_thermo(T, lg, w, self.entropy_ceiling, ("c",))["c"]

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Entropy S = −∂F/∂T of the same modes (= ∫ C/T dT) in J/(mol K).

        References
        ----------
        Ford, Lewis & O'Connell (1988); Moriya (1985), Ch. 3.
        """
        lg, w = self.zone_rates(p)
        return pt.spin_fluctuation_thermo(T, lg, w, self.entropy_ceiling, ("s",))["s"]


class IncommensurateParamagnonFamily(ParamagnonFamily):
    """Paramagnon centred at the incommensurate Q₀ = (±π q₀/d, π/a_⊥, π/b_⊥): 2k_F on the chain.

    The same physics as :class:`ParamagnonFamily` with ``center='incommensurate'``: the
    normalised two-peak Ornstein–Zernike χ_Q (symmetric in Q_∥), z = 2 relaxation
    Γ_Q = Γ_0 (1 + κ(Q)) (the order parameter of a spin-density wave is not conserved).

    Notes
    -----
    Parameters (model card ``paramagnon_incommensurate``): those of ``paramagnon`` plus
    ``q0``, the chain phase of the peaks in units of π (2k_F d/π), in [0, 1]; q₀ = 1 is the
    zone-boundary family exactly.

    References
    ----------
    Moriya (1985), Ch. 3; Millis (1993); G. Grüner, Density Waves in Solids (1994), Ch. 4
    (from memory).
    """

    family_name = "paramagnon_incommensurate"
    parameters = ("chi_uniform", "theta_sf", "q0", "xi_par", "xi_perp", "gamma0", "g")
    _centers = ("incommensurate",)

    def __init__(self, spin: float = 0.5, center: str = "incommensurate", lattice=None,
                 n_nodes: int = 12):
        super().__init__(spin, center, lattice, n_nodes)

    @classmethod
    def _name(cls):
        return "paramagnon_incommensurate"

    def _q0(self, p):
        return p["q0"]

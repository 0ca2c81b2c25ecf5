"""The quasi-elastic paramagnon family: relaxational spin fluctuations of a metal.

Physics in :mod:`evidence1d.physics.paramagnon`; neutron factors from
:mod:`evidence1d.physics.neutron`.  The 1D limit is ξ_⊥ = 0 (no correlations between chains),
declared in the card as ``nested_1d_limit`` on ``xi_perp``.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..physics import paramagnon as pm
from .base import DIRECTIONS, Family, SpectralPoints

__all__ = ["ParamagnonFamily"]


class ParamagnonFamily(Family):
    """Ornstein–Zernike paramagnon with SCR relaxation rate, tied to χ(T) by Kramers–Kronig.

    Parameters
    ----------
    spin : float
        Spin of the magnetic ion (not used by the itinerant model; kept for the contract).
    center : {'zone_boundary', 'zone_centre'}, optional
        Where the correlations are centred: Q₀ = (π/d, π/a_⊥, π/b_⊥) (antiferromagnetic,
        default) or Q₀ = 0 (ferromagnetic).
    lattice : sequence of 3 floats, optional
        Spin spacing d along the chain and interchain spacings a_⊥, b_⊥ in Å.  Needed by
        the heat capacity and entropy (the zone average of 1/Γ_Q depends on ξ/spacing); if
        given, spectra must use the same spacings.
    n_nodes : int, optional
        Gauss–Hermite nodes for the resolution convolution of the remainder term.

    Notes
    -----
    Parameters (model card ``paramagnon``): ``chi_uniform`` (uniform static χ as T → 0,
    emu/mol), ``theta_sf`` (K), ``xi_par``, ``xi_perp`` (Å), ``gamma0`` (Γ at Q₀, meV),
    ``g`` (1).  The spin fluctuations are isotropic, so ``spectrum`` returns the
    unpolarised Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^{αβ} = 2 S^{zz}(Q, E) per ion, and χ is the same for
    every field direction.

    References
    ----------
    T. Moriya, Spin Fluctuations in Itinerant Electron Magnetism (Springer, 1985);
    A. J. Millis, Phys. Rev. B 48, 7183 (1993); G. L. Squires (1978), Ch. 7.
    """

    parameters = ("chi_uniform", "theta_sf", "xi_par", "xi_perp", "gamma0", "g")

    def __init__(self, spin: float = 0.5, center: str = "zone_boundary", lattice=None,
                 n_nodes: int = 12):
        super().__init__(spin)
        pm._q0(center)                                   # validates
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
        kappa = pm.oz_denominator(pts.q_par, pts.q_a, pts.q_b, p["xi_par"], p["xi_perp"],
                                  d, a, b, self.center)
        kappa0 = pm.oz_denominator(0.0, 0.0, 0.0, p["xi_par"], p["xi_perp"], d, a, b,
                                   self.center)
        chi_u = pm.uniform_susceptibility(pts.temperature, p["chi_uniform"], p["theta_sf"])
        chi_u = pm.reduced_susceptibility(chi_u, p.get("g", 2.0))
        return pm.static_susceptibility(kappa, kappa0, chi_u), kappa

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """2 S^{zz}(Q, E) in 1/meV per ion, detailed balance and resolution applied.

        References
        ----------
        Moriya (1985), Ch. 3; Lovesey (1984), Ch. 4; Squires (1978), Ch. 7.
        """
        chi_q, kappa = self.static_susceptibility(p, pts)
        gamma_q = pm.relaxation_rate(kappa, p["gamma0"])
        s = pm.convolved_structure_factor(pts.energy, pts.sigma, pts.temperature, chi_q,
                                          gamma_q, self.n_nodes)
        return 2.0 * s

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

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Spin-fluctuation heat capacity γ_sf T in J/(mol K).

        References
        ----------
        Moriya (1985), Chs. 3–4.
        """
        d, a, b = self._spacings()
        gam = pm.spin_fluctuation_gamma(p["gamma0"], p["xi_par"], p["xi_perp"], d, a, b)
        return gam * np.maximum(np.asarray(T, float), 0.0)

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Spin-fluctuation entropy ∫ C/T dT = γ_sf T in J/(mol K).

        References
        ----------
        Moriya (1985), Chs. 3–4.
        """
        return self.heat_capacity(p, T)

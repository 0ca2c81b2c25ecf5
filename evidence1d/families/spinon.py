"""Spinon-continuum family: the S = 1/2 XXZ chain (one-dimensional).

Spin Hamiltonian: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0 antiferromagnetic, J in meV.  The spectrum is the two-spinon continuum between the
exact edges (:mod:`evidence1d.physics.chain`) with, by default, the exact two-spinon line
shape of the Heisenberg chain (:mod:`evidence1d.physics.chain_exact`; exact at Δ = 1, an
approximation otherwise) or, with the option ``line_shape: muller``, the Müller ansatz;
amplitude from the exact first moments, S = χ''(n + 1)/π at T > 0 with the thermal edge
of :mod:`evidence1d.physics.chain_thermal`; χ(T), C(T) and S(T) come from the same J and
Δ through the chain's thermodynamic tables (:mod:`evidence1d.physics.chain_thermo`).

References
----------
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997);
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981);
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962);
J. D. Johnson, S. Krinsky & B. M. McCoy, Phys. Rev. A 8, 2526 (1973).
"""
from __future__ import annotations

import numpy as np

from .. import units as U
from ..errors import InputError
from ..physics.chain_spectrum import LINE_SHAPES, spinon_spectrum
from .base import Family, SpectralPoints
from .chain_polarisation import ChainPolarisation, check_anisotropy_axis

__all__ = ["SpinonFamily"]


class SpinonFamily(ChainPolarisation, Family):
    """Two-spinon continuum of the S = 1/2 XXZ chain.

    Parameters
    ----------
    spin : float, optional
        Spin of the magnetic ion; the kernels describe S = 1/2 only.
    line_shape : {'exact', 'muller'}, optional
        Line shape of the two-spinon sheets: the exact two-spinon profile of the
        Heisenberg chain placed between the XXZ edges (default) or the Müller ansatz; both
        carry the exact first moment (model-card or case-file option ``line_shape``).
    anisotropy_axis : {'par', 'a', 'b'}, optional
        Direction of the spin-anisotropy axis z: along the chain (default) or along the
        first or second interchain direction; it sets the polarisation factor of the
        longitudinal and transverse components (:mod:`.chain_polarisation`).

    Raises
    ------
    InputError
        Unknown ``line_shape`` or ``anisotropy_axis``.

    Notes
    -----
    Parameters (model card ``models/spinon_continuum.yaml``): ``J`` (meV, > 0), ``delta``
    (Δ > −1, dimensionless), ``thermal_damping`` (b ≥ 0: χ'' convolved with a Gaussian of
    standard deviation b k_BT, :mod:`evidence1d.physics.thermal_damping`; no effect at
    T = 0), ``g`` (Landé factor, used by the generic layer's form factor and by the
    thermodynamics, not by the spectrum).

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Müller et al., Phys. Rev. B 24, 1429
    (1981).
    """

    family_name = "spinon_continuum"
    parameters = ("J", "delta", "thermal_damping", "g")

    #: the thermal damping acts on spectra only (held at 0 in a case without spectra)
    thermal_parameters = ("thermal_damping",)

    #: the two-spinon continuum and the chain thermodynamics hold for S = 1/2 only
    spins = (0.5,)

    #: the spectrum depends on Q only through the chain phase q = Q_∥ d
    chain_only = True

    #: predicts both spectra and all three thermodynamic kinds
    kinds = ("crystal_spectrum", "powder_spectrum", "susceptibility", "heat_capacity", "entropy")

    def __init__(self, spin: float = 0.5, line_shape: str = "exact",
                 anisotropy_axis: str = "par"):
        super().__init__(spin)
        if line_shape not in LINE_SHAPES:
            raise InputError(f"the 'line_shape' option of spinon_continuum must be 'exact' or "
                             f"'muller'; got {line_shape!r} instead", key="options.line_shape")
        self.line_shape = line_shape
        self.anisotropy_axis = check_anisotropy_axis(anisotropy_axis, self.family_name)

    def _unpolarised(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """Resolution-convolved S(q, E) = χ''(n + 1)/π per spin in 1/meV, components summed.

        :meth:`spectrum` (the polarisation-weighted cross-section) multiplies it by the
        uniaxial polarisation factor (:mod:`.chain_polarisation`).

        Parameters
        ----------
        p : dict
            ``J`` (meV), ``delta`` and ``thermal_damping`` (b, dimensionless; 0 if absent),
            each of shape (n_sets, 1).
        pts : SpectralPoints
            Chain phase ``q_par`` (rad), ``energy`` and ``sigma`` (meV), ``temperature`` (K).

        Returns
        -------
        ndarray, shape (n_sets, n)
            Three spin components summed, no form factor, no intensity scale.

        References
        ----------
        Karbach et al., Phys. Rev. B 55, 12510 (1997); Müller et al., Phys. Rev. B 24, 1429
        (1981); Lovesey (1984) for detailed balance; Schulz, Phys. Rev. B 34, 6372 (1986)
        for the thermal edge (from memory).
        """
        J = np.asarray(p["J"], dtype=float).reshape(-1, 1)
        delta = np.asarray(p["delta"], dtype=float).reshape(-1, 1)
        return spinon_spectrum(pts.q_par, pts.energy, pts.sigma, pts.temperature, J, delta,
                               line_shape=self.line_shape,
                               thermal_damping=p.get("thermal_damping", 0.0))

    # ------------------------------------------------------------- thermodynamics
    @staticmethod
    def _thermo(p, T, quantities):
        from ..physics.chain_thermo import xxz_thermodynamics
        J = np.asarray(p["J"], dtype=float).reshape(-1, 1)
        delta = np.asarray(p["delta"], dtype=float).reshape(-1, 1)
        t = U.K_B_MEV * np.asarray(T, dtype=float)[None, :] / J
        return xxz_thermodynamics(t, delta, quantities), J

    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """Chain susceptibility in emu/mol of magnetic ion.

        χ = χ*(t, Δ) N_A g² μ_B² / J with t = k_B T / J; ``z`` is the field along the
        anisotropy axis (χ*_zz), ``xy`` perpendicular (χ*_xx), ``powder`` the average
        (1/3) χ_zz + (2/3) χ_xx.

        Parameters
        ----------
        p : dict
            ``J`` (meV), ``delta``, ``g``, each (n_sets, 1).
        T : ndarray, shape (n,)
            Temperature in K.
        direction : {'powder', 'z', 'xy'}

        Returns
        -------
        ndarray, shape (n_sets, n)

        References
        ----------
        Eggert, Affleck & Takahashi, PRL 73, 332 (1994) (the reduced χ* convention).
        """
        needed = {"z": ("chi_star",), "xy": ("chi_star_perp",),
                  "powder": ("chi_star", "chi_star_perp")}
        if direction not in needed:
            raise InputError(f"unknown field direction {direction!r}; expected powder, z or xy")
        th, J = self._thermo(p, T, needed[direction])
        if direction == "z":
            cs = th["chi_star"]
        elif direction == "xy":
            cs = th["chi_star_perp"]
        else:
            cs = th["chi_star"] / 3.0 + 2.0 * th["chi_star_perp"] / 3.0
        g = np.asarray(p.get("g", 2.0), dtype=float)
        return U.chi_star_to_emu_per_mol(cs, J, g)

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Chain heat capacity C = R · (C/R)(t, Δ) in J/(mol K), shape (n_sets, n)."""
        th, _ = self._thermo(p, T, ("c_over_r",))
        return U.R_GAS * th["c_over_r"]

    def overlays(self, p: dict, pts: SpectralPoints) -> list:
        """The lower and upper bounds of the two-spinon continuum (meV), after des
        Cloizeaux & Pearson, Phys. Rev. 128, 2131 (1962) and Müller et al., PRB 24, 1429
        (1981); see :func:`evidence1d.physics.chain.spinon_bounds`."""
        from ..physics.chain import spinon_bounds
        lo, hi = spinon_bounds(pts.q_par, p["J"], p["delta"])
        return [("two-spinon lower bound", lo), ("two-spinon upper bound", hi)]

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Chain entropy S = R · (S/R)(t, Δ) in J/(mol K); → R ln 2 at high T."""
        th, _ = self._thermo(p, T, ("s_over_r",))
        return U.R_GAS * th["s_over_r"]

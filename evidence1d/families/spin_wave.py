"""The gapped spin-wave family: coupled chains with collinear Néel order (3D).

Physics in :mod:`evidence1d.physics.magnon` (dispersion, one-magnon intensity, Néel
temperature) and :mod:`evidence1d.physics.bose_thermo` (magnon gas, Curie–Weiss); neutron
factors from :mod:`evidence1d.physics.neutron`.  The 1D limit J_⊥ = 0 is contained (T_N = 0,
dispersion 2 J S |sin q| at Δ = 1), so the card declares ``nested_1d_limit`` on ``J_perp``.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j], J along the chain,
J_⊥ to the 4 neighbouring chains, J, J_⊥ > 0 antiferromagnetic, Δ ≥ 1 easy axis.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..physics import bose_thermo, magnon
from .base import Family, SpectralPoints

__all__ = ["SpinWaveFamily", "MOMENT_AXES"]

#: moment (easy-axis) directions the polarisation factor can use; None averages over them
MOMENT_AXES = (None, "par", "a", "b")


class SpinWaveFamily(Family):
    """Linear spin waves of coupled Heisenberg–XXZ chains with a Néel-ordered ground state.

    Parameters
    ----------
    spin : float
        Spin quantum number S of the magnetic ion.
    moment_axis : {None, 'par', 'a', 'b'}, optional
        Direction of the ordered moments (the easy axis z): along the chain, along a or
        along b.  The unpolarised cross-section of the two transverse modes carries the
        factor (1 + Q̂_z²) S^{xx}; with ``None`` (default) Q̂_z² is replaced by its average
        1/3 over moment directions, i.e. the factor 4/3.
    n_grid : int, optional
        Zone-quadrature nodes per phase for the thermodynamics (direct path only).
    thermo_method : {'table', 'direct'}, optional
        Magnon-gas thermodynamics from the shipped spline table (default; ~300 times
        faster, see :mod:`evidence1d.physics.bose_thermo`) or from the zone quadrature.

    Notes
    -----
    Parameters (names of the model card ``gapped_spin_wave``): ``J`` (meV), ``J_perp``
    (meV), ``delta`` (Δ, 1), ``damping`` (Lorentzian HWHM, meV), ``g`` (1).
    ``spectrum`` returns (1 + Q̂_z²) S^{xx}(Q, E) per spin, with S^{xx} from
    :func:`evidence1d.physics.magnon.transverse_spectrum` (longitudinal two-magnon
    scattering neglected).

    References
    ----------
    R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6;
    G. L. Squires, Introduction to the Theory of Thermal Neutron Scattering (CUP, 1978),
    Ch. 7 (polarisation factor δ_αβ − Q̂_α Q̂_β);
    H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
    """

    parameters = ("J", "J_perp", "delta", "damping", "g")

    def __init__(self, spin: float = 0.5, moment_axis=None, n_grid: int = bose_thermo.N_GRID,
                 thermo_method: str = "table"):
        super().__init__(spin)
        if thermo_method not in bose_thermo.METHODS:
            raise InputError(f"the 'thermo_method' option of gapped_spin_wave must be one of "
                             f"{', '.join(bose_thermo.METHODS)}; got {thermo_method!r} instead")
        self.thermo_method = thermo_method
        if moment_axis not in MOMENT_AXES:
            raise InputError(f"the 'moment_axis' option of gapped_spin_wave must be one of "
                             f"par, a, b or null; got {moment_axis!r} instead")
        if self.spin <= 0:
            raise InputError(f"the spin of the magnetic ion must be > 0; got {spin!r}")
        self.moment_axis = moment_axis
        self.n_grid = int(n_grid)

    def _polarisation(self, pts: SpectralPoints) -> np.ndarray:
        if self.moment_axis is None:
            return np.full(np.shape(pts.energy), 4.0 / 3.0)
        comp = {"par": pts.Q_par, "a": pts.Q_a, "b": pts.Q_b}[self.moment_axis]
        Q = pts.Q
        with np.errstate(invalid="ignore", divide="ignore"):
            c2 = np.where(Q > 0, (comp / np.where(Q > 0, Q, 1.0)) ** 2, 1.0 / 3.0)
        return 1.0 + c2

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """(1 + Q̂_z²) S^{xx}(Q, E) in 1/meV per spin, resolution and detailed balance applied.

        Parameters
        ----------
        p : dict of str to ndarray (n_sets, 1)
            ``J``, ``J_perp``, ``delta``, ``damping`` (meV except Δ).
        pts : SpectralPoints
            Wavevectors, spacings, energies, resolution σ and temperature.

        Returns
        -------
        ndarray, shape (n_sets, n)

        References
        ----------
        R. M. White (2007), Ch. 6; Squires (1978), Ch. 7.
        """
        s = magnon.transverse_spectrum(pts.q_par, pts.q_a, pts.q_b, pts.energy, pts.sigma,
                                       pts.temperature, p["J"], p["J_perp"], p["delta"],
                                       self.spin, damping=p.get("damping"))
        return self._polarisation(pts) * s

    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """Curie–Weiss above T_N, ordered-state form below (emu/mol of magnetic ion).

        See :func:`evidence1d.physics.bose_thermo.spin_wave_susceptibility`.

        References
        ----------
        R. M. White (2007), Ch. 4; H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
        """
        return bose_thermo.spin_wave_susceptibility(T, p["J"], p["J_perp"], p["delta"],
                                                    self.spin, p.get("g", 2.0), direction,
                                                    self.n_grid, self.thermo_method)

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Magnon-gas heat capacity joined to the high-temperature series, J/(mol K).

        See :func:`evidence1d.physics.bose_thermo.spin_wave_heat_capacity`.

        References
        ----------
        R. M. White (2007), Ch. 6; Rushbrooke & Wood, Mol. Phys. 1, 257 (1958).
        """
        return bose_thermo.spin_wave_heat_capacity(T, p["J"], p["J_perp"], p["delta"],
                                                   self.spin, self.n_grid, self.thermo_method)

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Magnetic entropy ∫ C/T dT of :meth:`heat_capacity`, J/(mol K).

        References
        ----------
        R. M. White (2007), Ch. 6.
        """
        return bose_thermo.spin_wave_entropy(T, p["J"], p["J_perp"], p["delta"], self.spin,
                                             self.n_grid, self.thermo_method)

    def neel_temperature(self, p: dict) -> np.ndarray:
        """Néel temperature in K from Schulz's coupled-chain relation, shape (n_sets, 1).

        References
        ----------
        H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
        """
        return magnon.neel_temperature(p["J"], p["J_perp"])

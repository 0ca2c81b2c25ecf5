"""The ordered family: renormalised spin waves of S = 1/2 chains with 3D Néel order.

Physics in :mod:`evidence1d.physics.ordered_magnon` (renormalised dispersion, gradient and
single-mode intensities), :mod:`evidence1d.physics.ordered_thermo` (exact chain
thermodynamics dressed by interchain mean field above T_N, ordered state below) and
:mod:`evidence1d.physics.magnon` (spin-wave formulas, interchain geometry, Schulz's T_N).
J_⊥ = 0 gives the spinon family's χ(T), C(T) and S(T) exactly and a mode on the
des Cloizeaux–Pearson dispersion (Δ = 1), so the card declares ``nested_1d_limit`` on
``J_perp``.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j], J along the chain,
J_⊥ to each of z_⊥ neighbouring chains, J, J_⊥ > 0 antiferromagnetic, Δ ≥ 1 easy axis.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..physics import bose_thermo, magnon, ordered_magnon, ordered_thermo
from .base import Family, SpectralPoints

__all__ = ["SpinWaveFamily", "MOMENT_AXES"]

#: moment (easy-axis) directions the polarisation factor can use; None averages over them
MOMENT_AXES = (None, "par", "a", "b")


class SpinWaveFamily(Family):
    """Renormalised spin waves of weakly coupled S = 1/2 XXZ chains with Néel order.

    Parameters
    ----------
    spin : float
        Spin of the magnetic ion; only 1/2 (the renormalisation and the chain tables are
        those of S = 1/2 chains).
    moment_axis : {None, 'par', 'a', 'b'}, optional
        Direction of the ordered moments (the easy axis z): along the chain, along a or
        along b.  The unpolarised cross-section of the two transverse modes carries the
        factor (1 + Q̂_z²) S^{xx}; with ``None`` (default) Q̂_z² is replaced by its average
        1/3 over moment directions, i.e. the factor 4/3.
    interchain : {4, 2}, optional
        Neighbouring chains of each chain: 4 (rectangular, ±a and ±b; default) or 2
        (planar, ±a).  6 (triangular) is rejected: frustrated, no collinear Néel state.
    thermo_method : {'table', 'direct'}, optional
        Magnon gas below T_N from the shipped spline table (default) or from the zone
        quadrature (reference).

    Notes
    -----
    Parameters (names of the model card ``gapped_spin_wave``): ``J`` (meV), ``J_perp``
    (meV), ``delta`` (Δ, 1), ``damping`` (η = Γ_Q/ħω_Q, 1), ``g`` (1).  ``spectrum``
    returns (1 + Q̂_z²) S^{xx}(Q, E) per spin (longitudinal scattering neglected) with the
    momentum resolution applied through the dispersion gradient.

    References
    ----------
    des Cloizeaux & Pearson, Phys. Rev. 128, 2131 (1962); H. J. Schulz, Phys. Rev. Lett.
    77, 2790 (1996); Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); G. L. Squires,
    Introduction to the Theory of Thermal Neutron Scattering (CUP, 1978), Ch. 7
    (polarisation factor δ_αβ − Q̂_α Q̂_β).
    """

    family_name = "gapped_spin_wave"
    #: (1 + Q̂_z²) S^xx is the polarisation-weighted sum of the transverse modes
    cross_section_factor = 1.0
    parameters = ("J", "J_perp", "delta", "damping", "g")
    spins = (0.5,)
    handles_q_resolution = True

    #: predicts both spectra and all three thermodynamic kinds
    kinds = ("crystal_spectrum", "powder_spectrum", "susceptibility", "heat_capacity", "entropy")

    def __init__(self, spin: float = 0.5, moment_axis=None, interchain=4,
                 thermo_method: str = "table"):
        super().__init__(spin)
        if abs(self.spin - ordered_magnon.SPIN) > 1e-9:
            raise InputError(f"the gapped_spin_wave family describes S = 1/2 chains only; "
                             f"got spin {spin!r}")
        if thermo_method not in bose_thermo.METHODS:
            raise InputError(f"the 'thermo_method' option of gapped_spin_wave must be one of "
                             f"{', '.join(bose_thermo.METHODS)}; got {thermo_method!r} instead")
        if moment_axis not in MOMENT_AXES:
            raise InputError(f"the 'moment_axis' option of gapped_spin_wave must be one of "
                             f"par, a, b or null; got {moment_axis!r} instead")
        self.z_perp = magnon.check_interchain(interchain)
        self.interchain = self.z_perp
        self.thermo_method = thermo_method
        self.moment_axis = moment_axis

    def _polarisation(self, pts: SpectralPoints) -> np.ndarray:
        return 1.0 + pts.axis_cos2(self.moment_axis)

    def spectrum(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """(1 + Q̂_z²) S^{xx}(Q, E) in 1/meV per spin, resolution and detailed balance applied.

        Parameters
        ----------
        p : dict of str to ndarray (n_sets, 1)
            ``J``, ``J_perp`` (meV), ``delta``, ``damping`` (η, dimensionless).
        pts : SpectralPoints
            Wavevectors, spacings, energies, energy resolution σ, momentum resolution
            σ_Q∥, σ_Q⊥ (Å⁻¹, along the chain and along a) and temperature.

        Returns
        -------
        ndarray, shape (n_sets, n)

        References
        ----------
        Hohenberg & Brinkman, Phys. Rev. B 10, 128 (1974); Squires (1978), Ch. 7;
        Cooper & Nathans, Acta Cryst. 23, 357 (1967).
        """
        s = ordered_magnon.transverse_spectrum(
            pts.q_par, pts.q_a, pts.q_b, pts.energy, pts.sigma, pts.temperature,
            _col(p["J"]), _col(p["J_perp"]), _col(p["delta"]), self.z_perp,
            damping=None if p.get("damping") is None else _col(p["damping"]),
            sigma_q_par=np.asarray(pts.sigma_Q_par, float) * pts.d,
            sigma_q_a=np.asarray(pts.sigma_Q_perp, float) * pts.a_perp)
        return self._polarisation(pts) * s

    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """Chain χ dressed by interchain mean field above T_N, ordered state below (emu/mol).

        See :func:`evidence1d.physics.ordered_thermo.ordered_susceptibility`.

        References
        ----------
        Scalapino, Imry & Pincus (1975); Schulz (1996).
        """
        return ordered_thermo.ordered_susceptibility(
            T, _col(p["J"]), _col(p["J_perp"]), _col(p["delta"]), _col(p.get("g", 2.0)),
            direction, self.z_perp, self.thermo_method)

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Exact chain C above T_N, scaled magnon gas below, J/(mol K).

        See :func:`evidence1d.physics.ordered_thermo.ordered_heat_capacity`.

        References
        ----------
        Klümper (1993); White (2007), Ch. 6.
        """
        return ordered_thermo.ordered_heat_capacity(T, _col(p["J"]), _col(p["J_perp"]),
                                                    _col(p["delta"]), self.z_perp,
                                                    self.thermo_method)

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """Magnetic entropy ∫ C/T dT of :meth:`heat_capacity`, J/(mol K).

        References
        ----------
        White (2007), Ch. 6.
        """
        return ordered_thermo.ordered_entropy(T, _col(p["J"]), _col(p["J_perp"]),
                                              _col(p["delta"]), self.z_perp,
                                              self.thermo_method)

    def overlays(self, p: dict, pts: SpectralPoints) -> list:
        """The renormalised magnon dispersion ħω_Q (meV) of
        :func:`evidence1d.physics.ordered_magnon.magnon_modes`."""
        omega = ordered_magnon.magnon_modes(pts.q_par, pts.q_a, pts.q_b, p["J"], p["J_perp"],
                                            p["delta"], self.z_perp)[0]
        return [("magnon dispersion ħω$_Q$", omega)]

    def dimensionality(self, p: dict) -> list:
        """J_⊥/J and k_BT_N/J (Schulz's T_N) per set.

        References
        ----------
        Schulz, Phys. Rev. Lett. 77, 2790 (1996).
        """
        from ..units import K_B_MEV
        J = _col(p["J"])
        return [("J_perp/J", "interchain over chain exchange", (_col(p["J_perp"]) / J)[:, 0]),
                ("kT_N/J", "k_B T_N / J, Schulz's Néel temperature over J",
                 (K_B_MEV * self.neel_temperature(p) / J)[:, 0])]

    def neel_temperature(self, p: dict) -> np.ndarray:
        """Néel temperature in K from Schulz's coupled-chain relation, shape (n_sets, 1).

        References
        ----------
        H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
        """
        return magnon.neel_temperature(_col(p["J"]), _col(p["J_perp"]), self.z_perp)


def _col(a):
    return np.asarray(a, dtype=float).reshape(-1, 1)

"""Coupled-chains family: S = 1/2 XXZ chains dressed by weak interchain exchange.

The bridge between the spinon continuum and the ordered magnet.  The chain's complex
susceptibility (the spinon family's line shape at the same J, Δ and T; χ' by Kramers–Kronig)
is dressed by the interchain exchange in the random-phase approximation,
χ^aa = χ^aa_1D/(1 + κ_a J_⊥(Q_⊥) χ^aa_1D), above this family's T_N (the temperature where that
denominator first vanishes at the ordering vector); below T_N the ordered phase of
Schulz (1996) and Essler, Tsvelik & Delfino (1997): transverse and longitudinal modes and the
chain continuum above the two-soliton threshold.  χ(T), C(T) and S(T) come from the chain
tables dressed in the same approximation (:mod:`evidence1d.physics.coupled_chain_thermo`).
J_⊥ = 0 gives the spinon family's spectrum and thermodynamics exactly, so the card declares
``nested_1d_limit`` on ``J_perp``.

Hamiltonian: H = Σ_⟨ij⟩ J_ij [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J along the chain, J_⊥ to each of z_⊥
neighbouring chains (option ``interchain``: 4 rectangular, 2 planar), J > 0, J_⊥ ≥ 0
antiferromagnetic, energies meV.

References
----------
D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
F. H. L. Essler, A. M. Tsvelik & G. Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
"""
from __future__ import annotations

import hashlib
from collections import OrderedDict

import numpy as np

from ..errors import InputError
from ..physics import coupled_chain_thermo as cct
from ..physics.chain_spectrum import LINE_SHAPES
from ..physics.coupled_chain_spectrum import coupled_spectrum, spectrum_grid
from ..physics.magnon import check_interchain
from .base import Family, SpectralPoints
from .chain_polarisation import ChainPolarisation, check_anisotropy_axis

__all__ = ["CoupledChainsFamily"]

_GRID_CACHE = 8          # energy grids kept per family object (one per dataset and Q node)


class CoupledChainsFamily(ChainPolarisation, Family):
    """Weakly coupled S = 1/2 XXZ chains in the random-phase approximation.

    Parameters
    ----------
    spin : float, optional
        Spin of the magnetic ion; only 1/2 (the chain kernels are S = 1/2).
    interchain : {4, 2}, optional
        Neighbouring chains of each chain: 4 (rectangular, ±a and ±b; default) or 2
        (planar, ±a), as the ordered family.
    line_shape : {'exact', 'muller'}, optional
        The chain's line shape, as the spinon family (default 'exact').
    anisotropy_axis : {'par', 'a', 'b'}, optional
        Direction of the spin-anisotropy axis, as the spinon family (default along the
        chain).

    Raises
    ------
    InputError
        A spin other than 1/2, an unknown option value.

    Notes
    -----
    Parameters (model card ``models/coupled_chains.yaml``): ``J`` (meV), ``J_perp`` (meV),
    ``delta`` (Δ, 1), ``thermal_damping`` (b, 1: the spinon family's thermal damping of the
    chain's continuum, applied to the chain's part of the dressed spectrum), ``g`` (1).
    ``spectrum`` is the polarisation-weighted cross-section: the dressed spectrum with the three spin components summed times the chain's uniaxial
    polarisation factor (:mod:`.chain_polarisation`, with the chain's longitudinal share
    f_zz(q)), as the spinon family.  That is exact at J_⊥ = 0 (the spinon family) and at
    Δ = 1 (isotropic); for Δ ≠ 1 and J_⊥ > 0 the dressing changes the components' mix
    (the longitudinal one is dressed by ΔJ_⊥) and the chain's share is an approximation.
    The momentum resolution, if a dataset declares one, is applied by the generic
    Gauss–Hermite average over Q.

    References
    ----------
    Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); Schulz, Phys. Rev. Lett. 77,
    2790 (1996); Essler, Tsvelik & Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
    """

    #: about 2 kB of working memory per (set, point) pair on its energy grid (measured on
    #: the flagship map: 370 MiB for 200 sets of 720 points); batches of at most 20 000
    #: pairs keep a call near 50 MiB
    max_pairs_per_call = 20_000

    family_name = "coupled_chains"
    parameters = ("J", "J_perp", "delta", "thermal_damping", "g")
    #: the thermal damping acts on spectra only (held at 0 in a case without spectra)
    thermal_parameters = ("thermal_damping",)
    spins = (0.5,)
    kinds = ("crystal_spectrum", "powder_spectrum", "susceptibility", "heat_capacity", "entropy")

    def __init__(self, spin: float = 0.5, interchain=4, line_shape: str = "exact",
                 anisotropy_axis: str = "par"):
        super().__init__(spin)
        if abs(self.spin - 0.5) > 1e-9:
            raise InputError(f"the coupled_chains family describes S = 1/2 chains only; got "
                             f"spin {spin!r}")
        if line_shape not in LINE_SHAPES:
            raise InputError(f"the 'line_shape' option of coupled_chains must be 'exact' or "
                             f"'muller'; got {line_shape!r} instead", key="options.line_shape")
        self.z_perp = check_interchain(interchain)
        self.interchain = self.z_perp
        self.line_shape = line_shape
        self.anisotropy_axis = check_anisotropy_axis(anisotropy_axis, self.family_name)
        self._grids = OrderedDict()

    def __getstate__(self):
        state = dict(self.__dict__)
        state["_grids"] = OrderedDict()            # a cache: rebuilt where it is needed
        return state

    def _grid(self, pts: SpectralPoints):
        arrays = [np.ascontiguousarray(np.broadcast_to(np.asarray(x, float),
                                                       np.shape(pts.energy)))
                  for x in (pts.q_par, pts.q_a, pts.q_b, pts.energy, pts.sigma)]
        key = hashlib.blake2b(b"".join(a.tobytes() for a in arrays), digest_size=16).digest()
        if key not in self._grids:
            self._grids[key] = spectrum_grid(*arrays)
            while len(self._grids) > _GRID_CACHE:
                self._grids.popitem(last=False)
        return self._grids[key]

    def _unpolarised(self, p: dict, pts: SpectralPoints) -> np.ndarray:
        """Resolution-convolved S(Q, E) per spin in 1/meV (three components summed).

        See :func:`evidence1d.physics.coupled_chain_spectrum.coupled_spectrum`.

        Parameters
        ----------
        p : dict
            ``J``, ``J_perp`` (meV), ``delta`` and ``thermal_damping`` (b; 0 if absent),
            each of shape (n_sets, 1).
        pts : SpectralPoints
            Chain and interchain phases, energies, resolution σ (meV) and temperature (K).

        Returns
        -------
        ndarray, shape (n_sets, n)

        References
        ----------
        Scalapino, Imry & Pincus (1975); Schulz (1996); Lovesey (1984) (detailed balance).
        """
        return coupled_spectrum(pts.q_par, pts.q_a, pts.q_b, pts.energy, pts.sigma,
                                pts.temperature, _col(p["J"]), _col(p["J_perp"]),
                                _col(p["delta"]), z_perp=self.z_perp,
                                line_shape=self.line_shape, grid=self._grid(pts),
                                thermal_damping=_col(p.get("thermal_damping", 0.0)))

    def susceptibility(self, p: dict, T: np.ndarray, direction: str = "powder") -> np.ndarray:
        """χ(T) in emu/mol: chain tables dressed by interchain mean field above T_N.

        See :func:`evidence1d.physics.coupled_chain_thermo.coupled_susceptibility`.

        References
        ----------
        Scalapino, Imry & Pincus (1975); Schulz (1996).
        """
        return cct.coupled_susceptibility(T, _col(p["J"]), _col(p["J_perp"]),
                                          _col(p["delta"]), _col(p.get("g", 2.0)),
                                          direction=direction, z_perp=self.z_perp,
                                          line_shape=self.line_shape)

    def heat_capacity(self, p: dict, T: np.ndarray) -> np.ndarray:
        """C(T) in J/(mol K): the chain's above T_N, the ordered state below.

        See :func:`evidence1d.physics.coupled_chain_thermo.coupled_heat_capacity`.

        References
        ----------
        Klümper, Z. Phys. B 91, 507 (1993); Schulz (1996).
        """
        return cct.coupled_heat_capacity(T, _col(p["J"]), _col(p["J_perp"]), _col(p["delta"]),
                                         z_perp=self.z_perp, line_shape=self.line_shape)

    def entropy(self, p: dict, T: np.ndarray) -> np.ndarray:
        """S(T) = ∫ C/T dT in J/(mol K).

        See :func:`evidence1d.physics.coupled_chain_thermo.coupled_entropy`.

        References
        ----------
        Klümper (1993); Schulz (1996).
        """
        return cct.coupled_entropy(T, _col(p["J"]), _col(p["J_perp"]), _col(p["delta"]),
                                   z_perp=self.z_perp, line_shape=self.line_shape)

    def neel_temperature(self, p: dict) -> np.ndarray:
        """This family's Néel temperature in K, shape (n_sets, 1) (0: no order).

        References
        ----------
        Scalapino, Imry & Pincus (1975); Schulz (1996).
        """
        return cct.neel_temperature(_col(p["J"]), _col(p["J_perp"]), _col(p["delta"]),
                                    z_perp=self.z_perp, line_shape=self.line_shape)

    def dimensionality(self, p: dict) -> list:
        """J_⊥/J and k_BT_N/J (this family's random-phase T_N) per set.

        References
        ----------
        Schulz, Phys. Rev. Lett. 77, 2790 (1996) (k_BT_N ∝ J_⊥ up to a logarithm).
        """
        from ..units import K_B_MEV
        J = _col(p["J"])
        return [("J_perp/J", "interchain over chain exchange", (_col(p["J_perp"]) / J)[:, 0]),
                ("kT_N/J", "k_B T_N / J, the random-phase Néel temperature over J",
                 (K_B_MEV * self.neel_temperature(p) / J)[:, 0])]

    def overlays(self, p: dict, pts: SpectralPoints) -> list:
        """The lower and upper bounds of the chain's two-spinon continuum (meV), as the
        spinon family draws them (des Cloizeaux & Pearson, Phys. Rev. 128, 2131 (1962))."""
        from ..physics.chain import spinon_bounds
        lo, hi = spinon_bounds(pts.q_par, p["J"], p["delta"])
        return [("two-spinon lower bound", lo), ("two-spinon upper bound", hi)]


def _col(a):
    return np.asarray(a, dtype=float).reshape(-1, 1)

"""Unit conversion for evidence1d, built on CODATA constants from :mod:`scipy.constants`.

Internal units (see DEVELOPERS.md): energy meV, temperature K, wavevector Å⁻¹,
susceptibility emu/mol of magnetic ion (cgs molar), heat capacity and entropy J/(mol K) of
magnetic ion.  Every conversion of user data into those units happens here, nowhere else.

References
----------
CODATA recommended values, as shipped by scipy.constants (Tiesinga et al., Rev. Mod. Phys.
93, 025010 (2021)).  The cgs/SI molar susceptibility relation χ[m³/mol] = 4π × 10⁻⁶ χ[emu/mol]
is the standard handbook conversion.
"""
from __future__ import annotations

import math

import numpy as np
from scipy import constants as _c

from .errors import InputError

__all__ = [
    "K_B_MEV", "N_A", "R_GAS", "MEV_PER_THZ", "MEV_PER_CM1",
    "CURIE_PREFACTOR", "ENERGY_UNITS", "CHI_UNITS", "HEAT_UNITS", "ENTROPY_UNITS",
    "TEMPERATURE_UNITS", "WAVEVECTOR_UNITS",
    "energy_to_mev", "chi_to_emu_per_mol", "heat_to_j_per_mol_k", "temperature_to_k",
    "curie_constant", "chi_star_to_emu_per_mol", "convert",
]

#: Boltzmann constant in meV/K.
K_B_MEV = _c.k / _c.e * 1e3
#: Avogadro constant in 1/mol.
N_A = _c.N_A
#: Molar gas constant in J/(mol K).
R_GAS = _c.R
#: meV per THz (E = h ν).
MEV_PER_THZ = _c.h * 1e12 / _c.e * 1e3
#: meV per cm⁻¹ (E = h c ν̃).
MEV_PER_CM1 = _c.h * _c.c * 100.0 / _c.e * 1e3

# Gaussian-cgs Bohr magneton (erg/G) and Boltzmann constant (erg/K) for emu/mol.
_MU_B_CGS = _c.physical_constants["Bohr magneton"][0] * 1e3   # J/T -> erg/G
_K_B_CGS = _c.k * 1e7                                           # J/K -> erg/K
#: N_A μ_B² / k_B in emu K / mol: χ = CURIE_PREFACTOR * g² * chi_star / t_in_K_units ...
CURIE_PREFACTOR = N_A * _MU_B_CGS ** 2 / _K_B_CGS

ENERGY_UNITS = {"meV": 1.0, "K": K_B_MEV, "THz": MEV_PER_THZ, "cm-1": MEV_PER_CM1,
                "ueV": 1e-3}
TEMPERATURE_UNITS = {"K": 1.0, "mK": 1e-3}
CHI_UNITS = {"emu/mol": 1.0, "m3/mol": 1.0 / (4.0 * math.pi * 1e-6)}
HEAT_UNITS = {"J/mol/K": 1.0, "mJ/mol/K": 1e-3}
ENTROPY_UNITS = HEAT_UNITS
WAVEVECTOR_UNITS = ("1/A", "rlu")
#: absolute intensity units of a spectrum (per magnetic ion) and their value in mb/sr/meV
ABSOLUTE_INTENSITY_UNITS = {"mb/sr/mev": 1.0, "mbarn/sr/mev": 1.0, "b/sr/mev": 1e3,
                            "barn/sr/mev": 1e3}
#: default fractional uncertainty of an absolute intensity calibration (vanadium or phonon
#: normalisation is rarely better than 10–20 %; common practice)
ABSOLUTE_UNCERTAINTY = 0.2

_ALIASES = {
    "mev": "meV", "k": "K", "thz": "THz", "cm-1": "cm-1", "cm^-1": "cm-1", "1/cm": "cm-1",
    "uev": "ueV", "µev": "ueV", "μev": "ueV", "mk": "mK",
    "emu/mol": "emu/mol", "emu mol-1": "emu/mol", "cm3/mol": "emu/mol",
    "m3/mol": "m3/mol", "m^3/mol": "m3/mol",
    "j/mol/k": "J/mol/K", "j/(mol k)": "J/mol/K", "j/mol-k": "J/mol/K",
    "mj/mol/k": "mJ/mol/K", "mj/(mol k)": "mJ/mol/K",
    "1/a": "1/A", "a-1": "1/A", "1/å": "1/A", "å-1": "1/A", "a^-1": "1/A",
    "rlu": "rlu", "r.l.u.": "rlu",
}


def absolute_intensity_factor(label) -> float | None:
    """Value of one intensity unit ``label`` in mb/sr/meV per magnetic ion, or None.

    Spaces, case and a trailing ``/ion`` or ``/magnetic_ion`` are ignored, so ``mb/sr/meV``,
    ``mbarn / sr / meV / ion`` and ``b/sr/meV`` are recognised; any other label (``arb``,
    ``counts``) is not an absolute unit.

    Parameters
    ----------
    label : str or None
        The dataset's intensity unit.

    Returns
    -------
    float or None
        1 for millibarn, 1000 for barn; None if not absolute.
    """
    if not isinstance(label, str):
        return None
    key = label.replace(" ", "").lower()
    for tail in ("/magnetic_ion", "/ion"):
        if key.endswith(tail):
            key = key[: -len(tail)]
    return ABSOLUTE_INTENSITY_UNITS.get(key)


def canonical_unit(unit: str, table, what: str) -> str:
    """Return the canonical spelling of ``unit`` if it belongs to ``table``.

    Parameters
    ----------
    unit : str
        The unit as the user wrote it (case-insensitive; common spellings accepted).
    table : dict or tuple
        Accepted canonical units.
    what : str
        Quantity name for the error message, e.g. ``"energy"``.

    Raises
    ------
    InputError
        If the unit is not known for this quantity.
    """
    if not isinstance(unit, str):
        raise InputError(f"{what} unit must be a string; got {unit!r}; "
                         f"expected one of {', '.join(table)}")
    name = _ALIASES.get(unit.strip().lower(), unit.strip())
    if name not in table:
        raise InputError(f"unknown {what} unit {unit!r}; expected one of {', '.join(table)}")
    return name


def convert(values, unit: str, table, what: str) -> np.ndarray:
    """Multiply ``values`` by the factor of ``unit`` in ``table`` (to internal units)."""
    return np.asarray(values, dtype=float) * table[canonical_unit(unit, table, what)]


def energy_to_mev(values, unit: str) -> np.ndarray:
    """Convert energies (meV, K, THz, cm⁻¹ or µeV) to meV."""
    return convert(values, unit, ENERGY_UNITS, "energy")


def temperature_to_k(values, unit: str) -> np.ndarray:
    """Convert temperatures (K or mK) to K."""
    return convert(values, unit, TEMPERATURE_UNITS, "temperature")


def chi_to_emu_per_mol(values, unit: str) -> np.ndarray:
    """Convert molar susceptibility (emu/mol or SI m³/mol) to emu/mol.

    χ[m³/mol] = 4π × 10⁻⁶ χ[emu/mol] (handbook conversion)."""
    return convert(values, unit, CHI_UNITS, "susceptibility")


def heat_to_j_per_mol_k(values, unit: str) -> np.ndarray:
    """Convert heat capacity or entropy (J/mol/K or mJ/mol/K) to J/(mol K)."""
    return convert(values, unit, HEAT_UNITS, "heat capacity")


def curie_constant(g=2.0, spin=0.5):
    """Curie constant C = N_A g² μ_B² S(S+1) / (3 k_B) in emu K/mol.

    Parameters
    ----------
    g : float or array_like
        Landé g factor (dimensionless).
    spin : float
        Spin quantum number S.

    Returns
    -------
    float or ndarray
        Curie constant in emu K / mol (0.375148 for S = 1/2, g = 2; CODATA constants).
    """
    g = np.asarray(g, dtype=float)
    return CURIE_PREFACTOR * g ** 2 * spin * (spin + 1.0) / 3.0


def chi_star_to_emu_per_mol(chi_star, J_mev, g):
    """Convert the reduced susceptibility χ* = χ J / (N g² μ_B²) to emu/mol.

    Parameters
    ----------
    chi_star : array_like
        Reduced susceptibility (dimensionless), with H = J Σ S_i·S_{i+1}, J > 0 AFM.
    J_mev : array_like
        Exchange J in meV.
    g : array_like
        Landé g factor.

    Returns
    -------
    ndarray
        χ in emu/mol of magnetic ion: χ = χ* N_A g² μ_B² / J, with J converted to erg.
    """
    J_kelvin = np.asarray(J_mev, dtype=float) / K_B_MEV
    return np.asarray(chi_star) * CURIE_PREFACTOR * np.asarray(g, dtype=float) ** 2 / J_kelvin

"""Unit conversions against handbook values."""
import math

import numpy as np
import pytest

from evidence1d import units as U
from evidence1d.errors import InputError


def test_curie_constant_spin_half_g2():
    # N_A g² μ_B² S(S+1)/(3 k_B) = 0.375148 emu K/mol for S = 1/2, g = 2 (CODATA constants
    # via scipy.constants; value as tabulated in the project's design reference)
    assert U.curie_constant(2.0, 0.5) == pytest.approx(0.375148, abs=2e-6)


def test_energy_conversions():
    # 1 meV = 11.6045 K, 1 THz = 4.13567 meV, 1 meV = 8.06554 cm⁻¹ (CODATA 2018; from memory)
    assert U.energy_to_mev(11.6045, "K") == pytest.approx(1.0, rel=1e-5)
    assert U.energy_to_mev(1.0, "THz") == pytest.approx(4.135667, rel=1e-6)
    assert U.energy_to_mev(8.065544, "cm-1") == pytest.approx(1.0, rel=1e-6)
    assert U.energy_to_mev(500.0, "ueV") == pytest.approx(0.5)


def test_si_cgs_susceptibility():
    # χ[m³/mol] = 4π × 10⁻⁶ χ[emu/mol] (handbook conversion)
    assert U.chi_to_emu_per_mol(4 * math.pi * 1e-6, "m3/mol") == pytest.approx(1.0)
    assert U.chi_to_emu_per_mol(0.01, "emu/mol") == pytest.approx(0.01)


def test_heat_units():
    assert U.heat_to_j_per_mol_k(1500.0, "mJ/mol/K") == pytest.approx(1.5)


def test_chi_star_conversion_matches_curie_law():
    # high-T limit of the S = 1/2 chain: χ* -> 1/(4t) gives Curie's law χ = C/T
    J = 1.0  # meV
    T = 300.0
    t = U.K_B_MEV * T / J
    chi = U.chi_star_to_emu_per_mol(1.0 / (4.0 * t), J, 2.0)
    assert chi == pytest.approx(U.curie_constant(2.0, 0.5) / T, rel=1e-12)


def test_unknown_unit_is_input_error():
    with pytest.raises(InputError, match="unknown energy unit 'eV'"):
        U.energy_to_mev(1.0, "eV")


def test_aliases():
    assert U.canonical_unit("mev", U.ENERGY_UNITS, "energy") == "meV"
    assert U.canonical_unit("1/cm", U.ENERGY_UNITS, "energy") == "cm-1"
    assert np.all(U.energy_to_mev([1.0, 2.0], "meV") == [1.0, 2.0])

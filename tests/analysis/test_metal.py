"""Wilson ratio: the free-electron value 1 from the Pauli susceptibility and the Sommerfeld
coefficient written in SI units (an independent route from the CGS formula)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants

from evidence1d.analysis.metal import metal_context, wilson_ratio

UNITS = {"chi0": "emu/mol", "gamma_e": "J/(mol K^2)"}


def _free_electrons(dos_per_joule_per_mol):
    """Pauli χ = μ0 μ_B² N(E_F) (m³/mol, SI) and γ = π² k_B² N(E_F)/3 (J/(mol K²))
    (Ashcroft & Mermin, Solid State Physics, 1976, eqs. 2.80 and 31.69; from memory);
    χ in emu/mol = χ[m³/mol] / (4π × 10⁻⁶) (handbook conversion)."""
    mu_b = constants.physical_constants["Bohr magneton"][0]
    chi_si = constants.mu_0 * mu_b ** 2 * dos_per_joule_per_mol
    gamma = math.pi ** 2 * constants.k ** 2 * dos_per_joule_per_mol / 3
    return chi_si / (4 * math.pi * 1e-6), gamma


@pytest.mark.parametrize("dos", [1e42, 3.7e43])
def test_free_electrons_have_wilson_ratio_one(dos):
    chi, gamma = _free_electrons(dos)
    assert wilson_ratio(chi, gamma) == pytest.approx(1.0, rel=1e-9)
    assert wilson_ratio(2 * chi, gamma) == pytest.approx(2.0, rel=1e-9)


def test_metal_context_quantiles_and_non_positive_gamma(rng):
    chi, gamma = _free_electrons(1e42)
    g = gamma * rng.normal(1.0, 0.05, 4000)
    g[:400] = -abs(g[:400])                             # 10 % unphysical γ_e ≤ 0
    x = np.column_stack([np.full(4000, 2 * chi), g, rng.normal(size=4000)])
    out = metal_context(["chi0", "gamma_e", "J"], x, UNITS)
    assert out["fraction_gamma_nonpositive"] == pytest.approx(0.1)
    w = out["wilson_ratio"]
    assert w["q16"] < w["median"] < w["q84"]
    assert w["median"] == pytest.approx(2.0, rel=0.01)
    assert "left out" in out["note"]
    assert metal_context(["chi0", "J"], x[:, [0, 2]], UNITS) is None
    assert metal_context(["chi0", "gamma_e"], x[:, :2], {"chi0": "m^3/mol"}) is None

"""The coupled-chains family through the family contract.

References: its one-dimensional limit J_⊥ = 0 is the spinon family (Karbach et al., Phys.
Rev. B 55, 12510 (1997) line shape; the exact chain thermodynamics of Klümper, Z. Phys. B 91,
507 (1993)); the random-phase Néel criterion (Scalapino, Imry & Pincus, Phys. Rev. B 11,
2042 (1975)) orders sooner with more neighbouring chains.
"""
from __future__ import annotations

import pickle

import numpy as np
import pytest

from evidence1d.errors import InputError
from evidence1d.families import DIRECTIONS, SpectralPoints
from evidence1d.families.coupled_chains import CoupledChainsFamily
from evidence1d.families.spinon import SpinonFamily


def _points(T, n=60, seed=2):
    rng = np.random.default_rng(seed)
    return SpectralPoints(Q_par=rng.uniform(-2.0, 2.0, n), Q_a=rng.uniform(-0.5, 0.5, n),
                          Q_b=rng.uniform(-0.5, 0.5, n), d=3.1, a_perp=7.4, b_perp=7.9,
                          energy=rng.uniform(-3.0, 14.0, n),
                          sigma=rng.uniform(0.1, 0.4, n), temperature=T)


def _params(delta, J_perp):
    return {"J": np.array([[4.0], [6.5]]), "J_perp": np.full((2, 1), J_perp),
            "delta": np.full((2, 1), delta), "g": np.array([[2.05], [2.2]])}


@pytest.mark.parametrize("delta", [0.5, 1.0, 2.0])
@pytest.mark.parametrize("T", [0.0, 5.0])
def test_no_interchain_coupling_is_the_spinon_family(delta, T):
    p = _params(delta, 0.0)
    fam, chain = CoupledChainsFamily(), SpinonFamily()
    pts = _points(T)
    ref = chain.spectrum(p, pts)
    np.testing.assert_allclose(fam.spectrum(p, pts), ref, rtol=1e-12, atol=1e-14 * ref.max())
    # with the thermal damping too (both families, the same b per set)
    pd = {**p, "thermal_damping": np.array([[0.7], [2.4]])}
    ref_d = chain.spectrum(pd, pts)
    if T > 0:
        assert np.abs(ref_d - ref).max() > 1e-3 * ref.max()      # the damping acts
    np.testing.assert_allclose(fam.spectrum(pd, pts), ref_d, rtol=1e-12,
                               atol=1e-14 * ref_d.max())
    temps = np.geomspace(0.5, 300.0, 30)
    for d in DIRECTIONS:
        np.testing.assert_allclose(fam.susceptibility(p, temps, d),
                                   chain.susceptibility(p, temps, d), rtol=1e-12)
    np.testing.assert_allclose(fam.heat_capacity(p, temps), chain.heat_capacity(p, temps),
                               rtol=1e-12)
    np.testing.assert_allclose(fam.entropy(p, temps), chain.entropy(p, temps), rtol=1e-12)


def test_coupling_changes_the_spectrum_and_orders_sooner_with_more_neighbours():
    p = _params(1.0, 0.3)
    pts = _points(3.0)
    four, two = CoupledChainsFamily(interchain=4), CoupledChainsFamily(interchain=2)
    chain = SpinonFamily().spectrum(p, pts)
    assert np.abs(four.spectrum(p, pts) - chain).max() > 0.05 * chain.max()
    assert np.all(four.neel_temperature(p) > two.neel_temperature(p))
    assert np.all(two.neel_temperature(p) > 0)


def test_grid_cache_is_invisible():
    p = _params(1.0, 0.2)
    fam = CoupledChainsFamily()
    a, b = _points(4.0, seed=3), _points(4.0, seed=4)
    first = fam.spectrum(p, a)
    fam.spectrum(p, b)
    np.testing.assert_array_equal(fam.spectrum(p, a), first)
    clone = pickle.loads(pickle.dumps(fam))
    assert not clone._grids
    np.testing.assert_array_equal(clone.spectrum(p, a), first)


@pytest.mark.parametrize("options, word", [({"interchain": 6}, "interchain"),
                                           ({"line_shape": "lorentz"}, "line_shape"),
                                           ({"spin": 1.0}, "S = 1/2")])
def test_bad_options_are_one_line_errors(options, word):
    with pytest.raises(InputError, match=word):
        CoupledChainsFamily(**options)


def test_dimensionality_measures_vanish_in_the_one_dimensional_limit():
    """J_⊥/J and k_BT_N/J: zero at J_⊥ = 0, T_N the family's own (random-phase) value."""
    from evidence1d.units import K_B_MEV
    fam = CoupledChainsFamily()
    p = {"J": np.array([[2.0], [2.0]]), "J_perp": np.array([[0.0], [0.2]]),
         "delta": np.ones((2, 1)), "g": np.full((2, 1), 2.1)}
    meas = {name: val for name, _, val in fam.dimensionality(p)}
    np.testing.assert_allclose(meas["J_perp/J"], [0.0, 0.1])
    TN = fam.neel_temperature(p)[:, 0]
    np.testing.assert_allclose(meas["kT_N/J"], K_B_MEV * TN / 2.0)
    assert meas["kT_N/J"][0] == 0.0 < meas["kT_N/J"][1]

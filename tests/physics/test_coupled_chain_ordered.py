"""Coupled chains below T_N: mean field plus random-phase modes (coupled_chain_ordered).

Checks against the published structure of the treatment: the gap ratio √3 between the
longitudinal mode (breather B₂ of the sine-Gordon model at β² = 2π) and the transverse one
(soliton) where the interchain sum vanishes (Essler, Tsvelik & Delfino, PRB 56, 11001
(1997), from memory); the Goldstone mode at the ordering vector of the isotropic case
(Schulz, PRL 77, 2790 (1996)); the relativistic soliton dispersion with the des
Cloizeaux–Pearson velocity πJ/2 (PR 128, 2131 (1962)); the soliton mass
M = 1.85 J (h/J)^{2/3} ln^{1/6}(J/h) (Affleck & Oshikawa, PRB 60, 1038 (1999), from memory)
at h = z_⊥ J_⊥ m₀ with Schulz's moment m₀ = 1.0174 √(J_⊥/J); detailed balance (Lovesey 1984).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from evidence1d.physics import coupled_chain_ordered as co
from evidence1d.physics.chain_spectrum import spinon_density
from evidence1d.units import K_B_MEV

J, JP = np.array([[10.0], [10.0]]), np.array([[0.2], [0.05]])
D = np.array([[1.0], [1.0]])
PI = math.pi


def test_longitudinal_to_transverse_gap_is_root_three_at_the_zone_boundary():
    q = np.array([PI, PI])
    qa, qb = np.array([0.5 * PI, PI]), np.array([0.5 * PI, 0.0])   # J_⊥(Q_⊥) = 0
    modes = co.ordered_modes(q, qa, qb, 0.0, J, JP, D)
    ratio = modes["longitudinal"]["omega"] / modes["transverse_1"]["omega"]
    np.testing.assert_allclose(ratio, math.sqrt(3.0), rtol=1e-12)


def test_goldstone_mode_and_anisotropy_gap():
    pi = np.array([PI])
    iso = co.ordered_modes(pi, pi, pi, 0.0, J[:1], JP[:1], D[:1])
    st = co.ordered_state(0.0, J[:1], JP[:1], D[:1])
    assert iso["transverse_1"]["omega"][0, 0] < 1e-5 * st["soliton_mass"][0, 0]
    easy = co.ordered_modes(pi, pi, pi, 0.0, J[:1], JP[:1], np.array([[1.2]]))
    st = co.ordered_state(0.0, J[:1], JP[:1], np.array([[1.2]]))
    gap = st["soliton_mass"][0, 0] * math.sqrt(1.0 - 1.0 / 1.2)
    assert easy["transverse_1"]["omega"][0, 0] == pytest.approx(gap, rel=1e-12)


def test_soliton_mass_and_dispersion_along_the_chain():
    st = co.ordered_state(0.0, J, JP, D)
    m0 = 1.0174 * np.sqrt(JP / J)                                  # Schulz (1996), z = 4
    np.testing.assert_allclose(st["moment"], m0, rtol=0.1)          # saturating form of m₀
    h = 4 * JP * st["moment"]
    M = 1.85 * J * (h / J) ** (2 / 3) * np.log(J / h) ** (1 / 6)
    np.testing.assert_allclose(st["soliton_mass"], M, rtol=0.02)    # ln(1 + J/h) ≈ ln(J/h)
    q = np.array([PI, 3.0, 2.6])
    half = np.full(3, 0.5 * PI)
    om = co.ordered_modes(q, half, half, 0.0, J, JP, D)["transverse_1"]["omega"]
    v = 0.5 * PI * J                                                # des Cloizeaux–Pearson
    np.testing.assert_allclose(om ** 2 - (v * np.sin(q)) ** 2, st["soliton_mass"] ** 2 *
                               np.ones(3), rtol=1e-10)


def test_order_vanishes_at_the_neel_temperature():
    st = co.ordered_state(0.0, J, JP, D)
    TN = st["T_N"][0, 0]
    below = co.ordered_state(0.99 * TN, J[:1], JP[:1], D[:1])
    above = co.ordered_state(1.01 * TN, J[:1], JP[:1], D[:1])
    assert 0 < below["soliton_mass"][0, 0] < 0.5 * st["soliton_mass"][0, 0]
    assert above["moment"][0, 0] == 0.0
    pi = np.array([PI])
    modes = co.ordered_modes(pi, pi, pi, 1.01 * TN, J[:1], JP[:1], D[:1])
    assert np.isnan(modes["longitudinal"]["omega"][0, 0])
    assert modes["transverse_2"]["weight"][0, 0] == 0.0


def test_continuum_is_the_chains_above_the_two_soliton_threshold(rng):
    T = 3.0
    q = rng.uniform(2.0, 4.3, 300)
    w = rng.uniform(-20.0, 40.0, 300)
    S = co.ordered_continuum(q, w, T, J, JP, D)
    chain = spinon_density(q, w, T, J, D)
    st = co.ordered_state(T, J, JP, D)
    assert st["moment"][0, 0] > 0 and st["moment"][1, 0] == 0      # set 2 is above T_N
    wc = np.sqrt((st["velocity"] * np.sin(q)) ** 2 + 4 * st["soliton_mass"] ** 2)
    wc = np.where(st["moment"] > 0, wc, 0.0)
    np.testing.assert_array_equal(S, np.where(np.abs(w) > wc, chain, 0.0))
    down = co.ordered_continuum(q, -np.abs(w), T, J, JP, D)
    up = co.ordered_continuum(q, np.abs(w), T, J, JP, D)
    np.testing.assert_allclose(down, np.exp(-np.abs(w) / (K_B_MEV * T)) * up, rtol=1e-12)

"""The finite-temperature edge of the spinon continuum is confined to the Luttinger regime.

The conformal finite-temperature form (Schulz, PRB 34, 6372 (1986), from memory) is the
low-energy theory of the chain: it applies where the lower edge lies within the thermal
window (ω_L ≲ 2πk_BT, near q = π).  Away from it the edge keeps its T = 0 shape, with
detailed balance (Lovesey 1984).  Checks: the T = 0 limit away from π, the conformal form at
q = π, the convolved spectrum against adaptive quadrature (scipy.integrate.quad) of the
unconvolved model, and detailed balance point by point.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate

from evidence1d.physics import chain_spectrum as cs
from evidence1d.units import K_B_MEV

J, D = np.array([[1.0]]), np.array([[1.0]])


def test_edge_far_from_pi_keeps_its_zero_temperature_shape():
    # q = π/2: ω_L = π/2 J = 1.57 meV ≫ 2πk_BT = 0.81 meV at 1.5 K
    E = np.linspace(1.3, 2.6, 14)
    q = np.full(E.size, 0.5 * np.pi)
    s = np.full(E.size, 0.05)
    hot = cs.spinon_spectrum(q, E, s, 1.5, J, D)[0]
    cold = cs.spinon_spectrum(q, E, s, 0.0, J, D)[0]
    everywhere = cs.spinon_spectrum(q, E, s, 1.5, J, D, thermal_edge="everywhere")[0]
    w = 1.0 / (1.0 + (0.5 * np.pi / (2 * np.pi * K_B_MEV * 1.5)) ** 2)
    assert np.max(np.abs(hot - cold)) <= 1.05 * w * np.max(np.abs(everywhere - cold)) + 1e-9
    assert np.max(np.abs(hot - cold)) < 0.3 * np.max(np.abs(everywhere - cold))


def test_zone_boundary_uses_the_conformal_form():
    E = np.array([0.05, 0.2, 0.5])
    q = np.full(3, np.pi)
    s = np.full(3, 0.05)
    a = cs.spinon_spectrum(q, E, s, 3.0, J, D)[0]
    b = cs.spinon_spectrum(q, E, s, 3.0, J, D, thermal_edge="everywhere")[0]
    np.testing.assert_allclose(a, b, rtol=1e-4)      # the floored edge leaves w = 1 − 4e-6


@pytest.mark.parametrize("line_shape", ["exact", "muller"])
def test_convolution_matches_quadrature_of_the_density(line_shape):
    T, sig = 3.0, 0.12                        # ω_L = 0.81 meV vs 2πk_BT = 1.63 meV: w ≈ 0.8
    q = 2.6
    kT = K_B_MEV * T
    E = np.array([-1.0, -0.5, 0.3, 0.7, 0.9, 1.3, 2.0])
    got = cs.spinon_spectrum(np.full(E.size, q), E, np.full(E.size, sig), T, J, D,
                             line_shape=line_shape)[0]

    def dens(w):
        return cs.spinon_density(np.array([q]), np.array([w]), T, J, D,
                                 line_shape=line_shape)[0, 0]

    wl = 0.5 * math.pi * math.sin(q)
    want = []
    for e in E:
        g = lambda w: dens(w) * math.exp(-0.5 * ((e - w) / sig) ** 2) / (  # noqa: E731
            math.sqrt(2 * math.pi) * sig)
        pts = [p for p in (-wl, 0.0, wl) if e - 8 * sig < p < e + 8 * sig]
        want.append(integrate.quad(g, e - 8 * sig, e + 8 * sig, points=pts or None,
                                   limit=400)[0])
    want = np.array(want)
    assert np.max(np.abs(got - want)) < 3e-3 * want.max(), (got, want)
    assert kT > 0


def test_detailed_balance_point_by_point_with_the_blend():
    T = 4.0
    E = np.array([0.4, 0.8, 1.2])
    q = np.full(3, 2.3)
    s = np.full(3, 1e-3)
    loss = cs.spinon_spectrum(q, E, s, T, J, D)[0]
    gain = cs.spinon_spectrum(q, -E, s, T, J, D)[0]
    np.testing.assert_allclose(gain / loss, np.exp(-E / (K_B_MEV * T)), rtol=1e-3)

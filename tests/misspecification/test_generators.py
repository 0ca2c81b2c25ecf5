"""The misspecification generators against published values (they must be right on their own
before they can judge the families).

Sources: Eggert, Affleck & Takahashi, PRL 73, 332 (1994) (χ* maximum 0.146926 at
t = 0.640851); Klümper & Johnston, PRL 84, 4701 (2000) (C maximum ≈ 0.3497 R at t ≈ 0.4803);
Karbach et al., PRB 55, 12510 (1997) (two-spinon shares 72.89 % and 71.30 %, prefactor 1/2 of
∫dω/2π, i.e. 1/(4π) here); Hulthén (1938) and Hohenberg & Brinkman, PRB 10, 128 (1974) (first
moment −(2/3) e₀ (1 − cos q) per component, e₀ = J(1/4 − ln 2)).
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

import generators as G
import ring_ed
import two_spinon


def test_ring_susceptibility_maximum():
    r = minimize_scalar(lambda t: -ring_ed.ring_thermodynamics(t)[0][0], bounds=(0.55, 0.75),
                        method="bounded", options={"xatol": 1e-6})
    assert -r.fun == pytest.approx(0.146926, rel=1e-4)
    assert r.x == pytest.approx(0.640851, abs=2e-3)


def test_ring_heat_capacity_maximum_within_finite_size():
    r = minimize_scalar(lambda t: -ring_ed.ring_thermodynamics(t)[1][0], bounds=(0.35, 0.6),
                        method="bounded")
    assert -r.fun == pytest.approx(0.3497, rel=6e-3)        # 12-site ring: 0.4 % high
    assert r.x == pytest.approx(0.4803, abs=0.01)


def test_ring_entropy_reaches_ln2():
    assert ring_ed.ring_thermodynamics(200.0)[2][0] == pytest.approx(np.log(2.0), abs=1e-4)


def test_two_spinon_generator_prefactor_and_moment_share():
    # normalised to the 72.89 % intensity share, the constant must be the published 1/(4π)
    assert two_spinon.normalisation() == pytest.approx(1.0 / (4.0 * np.pi), rel=2e-4)
    x, w = np.polynomial.legendre.leggauss(200)
    q = 0.5 * np.pi * (x + 1.0)
    m2 = sum(wi * np.sum(om * wt) for qi, wi in zip(q, w)
             for om, wt in [two_spinon.nodes(qi, 1.0)])
    exact = np.sum(w * (-(2.0 / 3.0) * (0.25 - np.log(2.0)) * (1.0 - np.cos(q))))
    assert m2 / exact == pytest.approx(0.7130, abs=5e-4)


def test_mode_spectrum_obeys_detailed_balance():
    # without resolution width the two peaks' areas are n + 1 and n (Lovesey 1984)
    E = np.linspace(-3, 3, 60001)
    T = 10.0
    s = G.mode_spectrum(E, 1.0, 1.0, T, damping=0.0)
    loss = np.trapezoid(np.where(E > 0, s, 0), E)
    gain = np.trapezoid(np.where(E < 0, s, 0), E)
    assert gain / loss == pytest.approx(np.exp(-1.0 / (G.K_B * T)), rel=1e-3)


def test_magnon_gas_against_the_einstein_mode_and_a_one_dimensional_zone_sum():
    import scenarios
    T = np.array([2.0, 5.0, 20.0])
    # a flat mode of energy w: the Einstein heat capacity x^2 e^x/(e^x - 1)^2 and
    # n(n + 1) = e^x/(e^x - 1)^2 (analytic)
    w = 0.7
    c, kubo = scenarios.magnon_gas(lambda q, qa, qb: np.full(q.shape, w), T)
    x = w / (G.K_B * T)
    np.testing.assert_allclose(c, x ** 2 * np.exp(x) / np.expm1(x) ** 2, rtol=1e-12)
    np.testing.assert_allclose(kubo, np.exp(x) / np.expm1(x) ** 2 / T, rtol=1e-12)
    # a gapped mode dispersing along q only: the zone average against adaptive quadrature
    from scipy import integrate
    om = lambda q: np.sqrt(0.3 ** 2 + (1.2 * np.sin(q)) ** 2)
    c, _ = scenarios.magnon_gas(lambda q, qa, qb: om(q), T, n=64)
    for Ti, ci in zip(T, c):
        f = lambda q: (lambda y: y * y * np.exp(-y) / (-np.expm1(-y)) ** 2)(om(q) / (G.K_B * Ti))
        ref = integrate.quad(f, -np.pi, np.pi, limit=200)[0] / (2 * np.pi)
        assert ci == pytest.approx(ref, rel=1e-6)

"""The finite-temperature spinon spectrum S = chi''(n + 1)/pi (physics/chain_thermal.py).

References used below: detailed balance (Lovesey, Theory of Neutron Scattering from
Condensed Matter, 1984); the finite-temperature conformal form Im[rho(x-) rho(x+)],
rho(x) = Gamma(1/4 - ix)/Gamma(3/4 - ix) (Schulz, PRB 34, 6372 (1986); Bocquet, Essler,
Tsvelik & Gogolin, PRB 64, 094425 (2001); both from memory), evaluated here directly with
scipy.special.loggamma; Gamma(1/4)Gamma(3/4) = pi sqrt 2 and psi(1/4) - psi(3/4) = -pi
(reflection formulas, Abramowitz & Stegun 6.1.17, 6.3.7).
"""
import math

import numpy as np
import pytest
from scipy import integrate, special

from evidence1d.physics import chain, chain_spectrum as cs, chain_thermal
from evidence1d.units import K_B_MEV


def _phi_direct(w, wl, kT):
    """Im[rho(x-) rho(x+)] / tau from scipy.special.loggamma (independent of the kernel)."""
    tau = 4 * np.pi * kT
    rho = lambda x: np.exp(special.loggamma(0.25 - 1j * x) - special.loggamma(0.75 - 1j * x))
    return (rho((w - wl) / tau) * rho((w + wl) / tau)).imag / tau


def test_shape_against_direct_gamma_functions():
    # the kernel's table (|x| < 3) and Stirling series (|x| >= 3) against loggamma
    rng = np.random.default_rng(0)
    kT = 10 ** rng.uniform(-3, 0.5, 4000)
    wl = kT * 10 ** rng.uniform(-3, 3, 4000)
    w = wl + kT * rng.uniform(-150, 600, 4000) * rng.choice([-1, 1], 4000)
    got = chain_thermal.thermal_shape(w, wl, kT)
    ref = _phi_direct(w, wl, kT)
    scale = np.maximum(np.abs(ref), 1e-6 / np.sqrt(np.abs(w * w - wl * wl) + kT ** 2))
    assert np.max(np.abs(got - ref) / scale) < 2e-6


def test_zero_temperature_limit_of_the_shape():
    # rho(x) -> (-ix)^(-1/2): Phi_T -> sign(w) / sqrt(w^2 - wL^2) above the edge, with the
    # leading corrections (pi kT / 2(w -+ wL))^2 from the Stirling series (A&S 6.1.47), and
    # exponentially small below it
    wl, kT = 1.0, 1e-4
    d = kT * np.array([200.0, 1e3, 1e4])
    w = wl + d
    phi0 = 1 / np.sqrt(w * w - wl * wl)
    rel = chain_thermal.thermal_shape(w, wl, kT) / phi0 - 1
    lead = (np.pi * kT / 2) ** 2 * (1 / d ** 2 + 1 / (2 * wl + d) ** 2)
    np.testing.assert_allclose(rel, lead, rtol=0.01, atol=1e-12)
    assert abs(chain_thermal.thermal_shape(wl - 100 * kT, wl, kT)) < 1e-15
    cold = chain_thermal.thermal_shape(np.array([-2.0, 0.5, 2.0]), 1.0, 0.0)
    np.testing.assert_array_equal(cold, [-1 / np.sqrt(3), 0.0, 1 / np.sqrt(3)])


def test_detailed_balance_before_resolution():
    # S(q, -w) = exp(-w/kT) S(q, w) for the unconvolved density, to rounding
    rng = np.random.default_rng(1)
    kT = 10 ** rng.uniform(-2, 1, 500)
    wl = 10 ** rng.uniform(-3, 1, 500)
    w = 10 ** rng.uniform(-3, 1.3, 500)
    loss = chain_thermal.thermal_density(w, wl, kT)
    gain = chain_thermal.thermal_density(-w, wl, kT)
    np.testing.assert_allclose(gain, np.exp(-w / kT) * loss, rtol=1e-12, atol=0)
    # and S = chi''(n + 1)/pi with chi'' = pi A Phi_T: S (1 - exp(-w/kT)) = A Phi_T
    np.testing.assert_allclose(loss * -np.expm1(-w / kT), chain_thermal.thermal_shape(w, wl, kT),
                               rtol=1e-12)
    # through the kernel with a resolution far below k_BT (the Gaussian changes nothing)
    J, d, T = np.array([[2.0]]), np.array([[1.0]]), 20.0
    E = np.array([0.3, 1.0, 3.2, 3.6])
    q = np.full(4, 1.3)
    s = np.full(4, 1e-3)
    for shape in ("muller", "exact"):
        loss = cs.spinon_spectrum(q, E, s, T, J, d, line_shape=shape)[0]
        gain = cs.spinon_spectrum(q, -E, s, T, J, d, line_shape=shape)[0]
        np.testing.assert_allclose(gain / loss, np.exp(-E / (K_B_MEV * T)), rtol=1e-6)


def test_zero_temperature_limit_equals_the_loss_side_of_the_t0_shape():
    # as T -> 0 the spectrum is the T = 0 Müller shape convolved with the resolution on the
    # energy-loss side and nothing on the gain side; J = 5 meV, q away from 0 and pi
    J, d = np.array([[5.0]]), np.array([[1.0]])
    q = np.full(60, 1.2)
    E = np.linspace(-12.0, 16.0, 60)
    s = np.full(60, 0.2)
    t0 = cs.spinon_spectrum(q, E, s, 0.0, J, d, line_shape="muller", thermal_edge="everywhere")[0]
    diffs = []
    for T in (0.1, 0.01, 1e-3, 1e-6):
        got = cs.spinon_spectrum(q, E, s, T, J, d, line_shape="muller", thermal_edge="everywhere")[0]
        diffs.append(np.max(np.abs(got - t0)) / t0.max())
    # the thermal rounding of the edge vanishes as T -> 0 (measured: 3e-3, 1e-4, 3e-6, 1e-9)
    assert all(b < 0.1 * a for a, b in zip(diffs[:-1], diffs[1:])), diffs
    assert diffs[1] < 2e-4 and diffs[-1] < 1e-7, diffs


def test_low_energy_response_near_pi_depends_on_temperature():
    # J = 5 meV: at 1.5 K and 10 K (k_BT = 0.13 and 0.86 meV) the response near q = pi below
    # a few k_BT differs (the T = 0 1/w divergence is cut off at ~k_BT); at q = pi and w -> 0
    # S = A Gamma(1/4)^4 / (16 pi^3 k_BT) (conformal form at w = wL = 0; the A&S identities
    # above; with the floored lower edge wL = lam tau, |Gamma(1/4 + i lam)|^4 / (4 pi^2 tau)),
    # so it falls as 1/T
    J, d = np.array([[5.0]]), np.array([[1.0]])
    A = chain.muller_amplitude(np.array([np.pi]), J, d)[0, 0]
    wl = chain.muller_edges(np.array([np.pi]), J, d)[0][0, 0]
    E = np.array([0.0, 0.2, 0.5, 1.0])
    for q in (np.pi, np.pi - 0.02):
        s = np.full(4, 0.05)
        cold = cs.spinon_spectrum(np.full(4, q), E, s, 1.5, J, d, line_shape="muller", thermal_edge="everywhere")[0]
        hot = cs.spinon_spectrum(np.full(4, q), E, s, 10.0, J, d, line_shape="muller", thermal_edge="everywhere")[0]
        assert np.all(np.abs(cold / hot - 1) > 0.3)
    for T in (1.5, 10.0):
        kT = K_B_MEV * T
        s0 = cs.spinon_spectrum(np.array([np.pi]), np.array([0.0]), np.array([2e-3 * kT]), T,
                                   J, d, line_shape="muller", thermal_edge="everywhere")[0, 0]
        assert s0 == pytest.approx(A * special.gamma(0.25) ** 4 / (16 * np.pi ** 3 * kT),
                                   rel=5e-3)
        lam = wl / (4 * np.pi * kT)
        exact = np.exp(4 * special.loggamma(0.25 + 1j * lam).real) / (16 * np.pi ** 3 * kT)
        assert s0 == pytest.approx(A * exact, rel=2e-5)


@pytest.mark.parametrize("ratio", [0.2, 0.45, 0.6, 0.9, 1.2, 3.0, 30.0])
def test_convolution_against_adaptive_quadrature(ratio):
    # every path (Hermite tiers by sigma/k_BT, the edge path with its thermal correction)
    # against QUADPACK on the directly evaluated model, hot (near pi) and cold edges
    T = 1.5
    kT = K_B_MEV * T
    s = ratio * kT
    for J, D, q in [(1.0, 1.0, 2.0), (1.0, 0.6, np.pi - 0.01), (2.0, 2.0, 2.4)]:
        Ja, Da, qa = np.array([[J]]), np.array([[D]]), np.array([q])
        wl, top = (a[0, 0] for a in chain.muller_edges(qa, Ja, Da))
        A = chain.muller_amplitude(qa, Ja, Da)[0, 0]
        E = np.r_[np.linspace(-top - 2 * s, top + 2 * s, 9), wl + s * np.array([-2, 0, 2])]

        def ref(e):
            g = lambda w: (np.exp(-0.5 * ((e - w) / s) ** 2) / (math.sqrt(2 * math.pi) * s)
                           * _phi_direct(w if abs(w) > 1e-12 else 1e-12, wl, kT)
                           / -math.expm1(-(w if abs(w) > 1e-12 else 1e-12) / kT))
            lo, hi = max(e - 8 * s, -top), min(e + 8 * s, top)
            if lo >= hi:
                return 0.0
            pts = [p for p in (-wl, 0.0, wl) if lo < p < hi]
            return A * integrate.quad(g, lo, hi, points=pts or None, limit=400)[0]

        want = np.array([ref(e) for e in E])
        got = cs.spinon_spectrum(np.full(E.size, q), E, np.full(E.size, s), T, Ja, Da,
                                    line_shape="muller", thermal_edge="everywhere")[0]
        assert np.max(np.abs(got - want)) < 1e-3 * want.max()

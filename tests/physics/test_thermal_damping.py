"""Thermal damping of a continuum's χ'' (physics/thermal_damping.py).

Reference: a damped mode pair whose every integral is known in closed form or by adaptive
quadrature (scipy.integrate.quad), independent of the chain kernels.  For
χ''_0 = π w [δ(ω − ω₀) − δ(ω + ω₀)] (S_0 = χ''_0 (n + 1)/π, detailed-balanced), the damped
χ''_b = π w [G_th(ω − ω₀) − G_th(ω + ω₀)] (Gaussian of σ_th = b k_BT), S_b = χ''_b (n + 1)/π
(Lovesey 1984, detailed balance), and the measured G_r ∗ S_b is integrated numerically.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from evidence1d.physics.thermal_damping import damped_spectrum
from evidence1d.units import K_B_MEV

W0, WEIGHT = 1.0, 1.0           # mode energy (meV) and weight


def _gauss(x, s):
    return np.exp(-0.5 * (x / s) ** 2) / (np.sqrt(2.0 * np.pi) * s)


def _mode_pair(T):
    """``convolve(E, sigma, rows)`` of the mode pair: G_σ ∗ S_0 in closed form."""
    kT = K_B_MEV * T
    n0 = 1.0 / np.expm1(W0 / kT) if kT > 0 else 0.0

    def convolve(E, sigma, rows):
        E, sigma = np.broadcast_arrays(np.atleast_2d(E), np.atleast_2d(sigma))
        return WEIGHT * ((n0 + 1.0) * _gauss(E - W0, sigma) + n0 * _gauss(E + W0, sigma))
    return convolve


def _reference(E, s_r, T, b):
    """G_r ∗ S_b by adaptive quadrature."""
    kT = K_B_MEV * T
    s_th = b * kT

    def S_b(w):
        chi = WEIGHT * (_gauss(w - W0, s_th) - _gauss(w + W0, s_th))
        return chi / -np.expm1(-w / kT) if w != 0.0 else WEIGHT * kT * (
            -2.0 * (-W0) / s_th ** 2 * _gauss(W0, s_th))      # the limit ω → 0
    lo, hi = E - 9 * s_r, E + 9 * s_r
    return integrate.quad(lambda w: _gauss(E - w, s_r) * S_b(w), lo, hi,
                          points=[0.0] if lo < 0 < hi else None, limit=400,
                          epsabs=1e-12, epsrel=1e-10)[0]


@pytest.mark.parametrize("b", [0.4, 1.0, 2.0])
def test_matches_quadrature_for_a_resolution_narrow_against_k_bt(b):
    T = 5.0                                   # k_BT = 0.43 meV
    kT = K_B_MEV * T
    s_r = 0.1 * kT
    E = np.array([-0.6, -0.2, 0.01, 0.3, 0.8, 1.0, 1.3, 2.2])
    got = damped_spectrum(_mode_pair(T), E, np.full(E.size, s_r), T, np.array([[b]]))[0]
    ref = np.array([_reference(e, s_r, T, b) for e in E])
    # the change's Bose factor is taken outside the resolution: O((σ_r/k_BT)²) of it
    assert np.max(np.abs(got - ref)) < 0.01 * ref.max(), (got, ref)


def test_exact_as_the_resolution_vanishes_and_detailed_balance_holds():
    T, b = 5.0, 1.2
    kT = K_B_MEV * T
    E = np.array([0.2, 0.5, 0.9, 1.4])
    s = np.full(E.size, 1e-4)
    conv = _mode_pair(T)
    loss = damped_spectrum(conv, E, s, T, np.array([[b]]))[0]
    gain = damped_spectrum(conv, -E, s, T, np.array([[b]]))[0]
    s_th = b * kT
    exact = WEIGHT * (_gauss(E - W0, s_th) - _gauss(E + W0, s_th)) / -np.expm1(-E / kT)
    np.testing.assert_allclose(loss, exact, rtol=1e-5)
    np.testing.assert_allclose(gain / loss, np.exp(-E / kT), rtol=1e-5)


def test_no_damping_and_zero_temperature_return_the_undamped_convolution():
    E = np.linspace(-0.5, 2.0, 11)
    s = np.full(E.size, 0.05)
    for T, b in ((5.0, 0.0), (0.0, 2.0)):
        conv = _mode_pair(T)
        np.testing.assert_array_equal(damped_spectrum(conv, E, s, T, np.array([[b]])),
                                      conv(E, s, np.arange(E.size)))


def test_batch_of_widths_equals_one_set_at_a_time():
    T = 3.0
    E = np.linspace(-0.4, 2.5, 30)
    s = np.full(E.size, 0.04)
    b = np.array([[0.0], [0.7], [2.5]])
    conv = _mode_pair(T)
    batch = damped_spectrum(conv, E, s, T, b)
    loop = np.vstack([damped_spectrum(conv, E, s, T, b[i:i + 1]) for i in range(3)])
    np.testing.assert_allclose(batch, loop, rtol=1e-12, atol=0)


def test_the_line_broadens_by_the_thermal_width_in_quadrature():
    """At a loss-side line far above k_BT the damped, resolved line has the width
    √(σ_r² + σ_th²) (Gaussians convolve in quadrature)."""
    T, b = 1.0, 2.0                           # k_BT = 0.086 meV, σ_th = 0.17 meV
    kT = K_B_MEV * T
    E = np.linspace(-1.0, 3.0, 4001)
    s = np.full(E.size, 0.05)
    damped = damped_spectrum(_mode_pair(T), E, s, T, np.array([[b]]))[0]
    loss = E > 0.4
    mean = np.sum(E[loss] * damped[loss]) / np.sum(damped[loss])
    var = np.sum((E[loss] - mean) ** 2 * damped[loss]) / np.sum(damped[loss])
    assert abs(np.sqrt(var) - np.hypot(0.05, b * kT)) < 0.01 * np.hypot(0.05, b * kT)


@pytest.mark.parametrize("q", [0.7 * np.pi, 0.97 * np.pi])
def test_damped_chain_spectrum_against_quadrature_of_the_model_density(q):
    """The spinon family's damped spectrum at a vanishing resolution against adaptive
    quadrature of its own unconvolved model: S_b(ω) = (n + 1) ∫ G_th(ω − ω')
    [S_0(ω') − S_0(−ω')] dω' with S_0 = :func:`spinon_density` (Heisenberg chain,
    k_BT = 0.3 J, b = 1), the integral split at the sheet's edges (QUADPACK)."""
    from evidence1d.families import SpectralPoints
    from evidence1d.families.spinon import SpinonFamily
    from evidence1d.physics.chain import all_sheets
    from evidence1d.physics.chain_spectrum import spinon_density
    J, b = 1.0, 1.0
    T = 0.3 * J / K_B_MEV
    kT = K_B_MEV * T
    s_th = b * kT
    (wl, top, _, _), _, _ = all_sheets(np.array([q]), np.array([[J]]), np.array([[1.0]]))
    wl, top = float(wl[0, 0]), float(top[0, 0])
    E = np.array([0.15, 0.4, 0.9, 1.5, 2.4])
    fam = SpinonFamily()
    pts = SpectralPoints(Q_par=np.full(E.size, q / 3.0), Q_a=np.zeros(E.size),
                         Q_b=np.zeros(E.size), d=3.0, a_perp=5.0, b_perp=5.0, energy=E,
                         sigma=np.full(E.size, 1e-4), temperature=T)
    p = {"J": np.array([[J]]), "delta": np.array([[1.0]]), "thermal_damping": np.array([[b]])}
    got = fam.unpolarised_spectrum(p, pts)[0]

    def s0(w):
        return spinon_density(np.array([q]), np.array([w]), T, np.array([[J]]),
                              np.array([[1.0]]))[0, 0]

    def chi_over_pi(w):                     # ∫ G_th(w − u) [S_0(u) − S_0(−u)] du
        cuts = sorted({-top, -wl, 0.0, wl, top, w - 8 * s_th, w + 8 * s_th})
        cuts = [c for c in cuts if w - 8 * s_th <= c <= w + 8 * s_th]
        f = lambda u: _gauss(w - u, s_th) * (s0(u) - s0(-u))      # noqa: E731
        return sum(integrate.quad(f, a, c, limit=200, epsabs=1e-10)[0]
                   for a, c in zip(cuts[:-1], cuts[1:]))
    want = np.array([chi_over_pi(w) / -np.expm1(-w / kT) for w in E])
    # measured: 6e-6 (q = 0.7π) and 4e-6 (0.97π) of the peak.  (Before the kernel's blend
    # convolved the gain-side image of its T = 0 edge exactly, 0.6 % and 1.6 %.)
    assert np.max(np.abs(got - want)) < 1e-4 * want.max(), (got, want)


def test_undamped_spectrum_returned_on_the_way_is_the_undamped_call():
    """``with_undamped``: the undamped chain spectrum that the damped construction computes
    on the way (near points) and completes (far points) equals a separate undamped call, to
    rounding, at points on both sides of the near/far split."""
    from evidence1d.physics.chain_spectrum import spinon_spectrum
    q = np.repeat([0.6 * np.pi, 0.97 * np.pi], 12)
    E = np.tile(np.linspace(-0.5, 6.0, 12), 2)
    s = 0.08 + 0.02 * np.abs(E)
    J, d = np.array([[2.0], [2.3]]), np.array([[1.0], [0.8]])
    b = np.array([[1.5], [0.0]])
    damped, undamped = spinon_spectrum(q, E, s, 2.0, J, d, thermal_damping=b,
                                       with_undamped=True)
    np.testing.assert_allclose(damped, spinon_spectrum(q, E, s, 2.0, J, d, thermal_damping=b),
                               rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(undamped, spinon_spectrum(q, E, s, 2.0, J, d),
                               rtol=1e-10, atol=1e-14 * undamped.max())

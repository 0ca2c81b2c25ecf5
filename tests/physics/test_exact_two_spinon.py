"""The exact two-spinon line shape of the Heisenberg chain against published numbers.

Sources: Karbach, Müller, Bougourzi, Fledderjohann & Mütter, PRB 55, 12510 (1997) (two-spinon
share of the total intensity 72.89 %, of the first moment 71.30 %, the edge behaviour at
q = π); Hulthén (1938) (e₀ = J(1/4 − ln 2)); Hohenberg & Brinkman, PRB 10, 128 (1974) (first
moment ∫ω S^zz dω = −(2/3) e₀ (1 − cos q) per site at Δ = 1); des Cloizeaux & Pearson (1962)
(edges); independent quadrature with scipy.integrate.quad.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from evidence1d.physics import two_spinon as ts
from evidence1d.physics.chain import spinon_bounds


def _zone_rule(n=600):
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * np.pi * (x + 1.0), 0.5 * np.pi * w       # q in (0, π), weights sum to π


def test_intensity_share_is_published_value():
    q, w = _zone_rule()
    _, W = ts.two_spinon_cumulative(q, np.array([[1.0]]))
    share = np.sum(w * W[:, -1]) / np.pi / 0.25           # ∫dq/2π ∫dω S₂ over ∫∫ S = 1/4
    assert share == pytest.approx(0.7289, abs=3e-4)


def test_first_moment_share_is_published_value():
    q, w = _zone_rule()
    J = 1.7
    om, W = ts.two_spinon_cumulative(q, np.array([[J]]))
    m1 = np.sum(0.5 * (om[0, :, 1:] + om[0, :, :-1]) * np.diff(W, axis=1), axis=1)
    exact = -(2.0 / 3.0) * J * (0.25 - np.log(2.0)) * (1.0 - np.cos(q))
    assert np.sum(w * m1) / np.sum(w * exact) == pytest.approx(0.7130, abs=6e-4)


@pytest.mark.parametrize("q", [0.05, 0.4, 1.3, 2.5, 3.0, 3.1415, 4.2])
def test_cumulative_weight_matches_direct_quadrature(q):
    J = 0.8
    wl, wu = spinon_bounds(np.array([q]), np.array([[J]]), np.array([[1.0]]))
    wl, wu = float(np.squeeze(wl)), float(np.squeeze(wu))
    vmax = np.sqrt(wu ** 2 - wl ** 2)

    def f(v):       # ω² = ω_L² + v² removes the edge singularity
        om = np.sqrt(wl ** 2 + v ** 2)
        return ts.two_spinon_structure_factor(q, om, J) * v / om

    ref, _ = integrate.quad(f, 0.0, vmax, limit=400)
    om, W = ts.two_spinon_cumulative(np.array([q]), np.array([[J]]))
    assert W[0, -1] == pytest.approx(ref, rel=2e-3)
    assert om[0, 0, 0] >= wl - 1e-12 and om[0, 0, -1] == pytest.approx(wu, rel=1e-12)
    # half-way along the continuum too
    k = W.shape[1] // 2
    part, _ = integrate.quad(f, 0.0, np.sqrt(max(om[0, 0, k] ** 2 - wl ** 2, 0.0)), limit=400)
    assert W[0, k] == pytest.approx(part, rel=5e-3, abs=1e-6)


def test_support_is_the_des_cloizeaux_pearson_continuum():
    q = np.linspace(0.1, 6.0, 23)
    wl, wu = spinon_bounds(q, np.array([[1.0]]), np.array([[1.0]]))
    wl, wu = wl[0], wu[0]
    assert np.all(ts.two_spinon_structure_factor(q, wl * 0.999, 1.0) == 0.0)
    assert np.all(ts.two_spinon_structure_factor(q, wu * 1.001, 1.0) == 0.0)
    assert np.all(ts.two_spinon_structure_factor(q, 0.5 * (wl + wu), 1.0) > 0.0)


def test_vanishes_at_the_upper_edge():
    q = 2.0
    wu = np.pi * np.sin(1.0)
    vals = ts.two_spinon_structure_factor(q, wu * (1 - np.array([1e-2, 1e-3, 1e-4])), 1.0)
    assert vals[2] < vals[1] < vals[0]


def test_edge_at_zone_boundary_goes_as_sqrt_log_over_omega():
    # Karbach et al. (1997): S₂(π, ω) ∝ √(ln(ω_U/ω)) / ω for ω → 0
    om = np.array([1e-3, 1e-4, 1e-5, 1e-6])
    s = ts.two_spinon_structure_factor(np.pi, om, 1.0)
    ratio = s * om / np.sqrt(np.log(np.pi / om))
    assert np.ptp(ratio) / ratio.mean() < 0.05


@pytest.mark.parametrize("t", [3e-4, 0.02, 0.37, 1.9, 5.5])
def test_exponent_spline_matches_quadrature(t):
    assert ts.I_function(t) == pytest.approx(ts._I_quad(t), abs=2e-5)


def test_large_and_small_t_asymptotes_are_continuous():
    for t0 in (ts._T_MIN, ts._T_MAX):
        a, b = ts.I_function(np.array([t0 * (1 - 1e-9), t0 * (1 + 1e-9)]))
        assert a == pytest.approx(b, abs=1e-6)
    # I(t) + π t + ½ ln t tends to a constant (the edge exponent of the lower boundary)
    t = np.array([8.0, 10.0])
    assert np.ptp(ts._I_quad(8.0) + np.pi * 8.0 + 0.5 * np.log(8.0)
                  - (ts._I_quad(10.0) + np.pi * 10.0 + 0.5 * np.log(10.0))) < 1e-2
    assert np.all(np.isfinite(ts.I_function(t)))


def test_windowed_weights_reproduce_exact_convolution():
    """Gaussian convolution by the windowed rule against the exact convolution of the
    piecewise-linear cumulative weight (neutron.convolve_cumulative)."""
    from evidence1d.physics.neutron import convolve_cumulative
    q = np.linspace(0.1, 3.1, 200)
    E = np.linspace(0.2, 3.4, 200)
    sig = 0.05 + 0.01 * E
    J = np.array([[1.0], [1.3]])
    wl, wu = spinon_bounds(q, J, np.ones_like(J))
    om, w = ts.windowed_weights(E, sig, wl, wu)
    G = np.exp(-0.5 * ((E[None, :, None] - om) / sig[None, :, None]) ** 2) \
        / (np.sqrt(2 * np.pi) * sig[None, :, None])
    val = (w * G).sum(-1)
    omc, Wc = ts.two_spinon_cumulative(q, J)
    ref = convolve_cumulative(E, sig, omc, np.broadcast_to(Wc, omc.shape))
    assert np.max(np.abs(val - ref)) < 2e-3 * ref.max()
    # windows that miss the continuum carry no weight
    far = E + 6 * sig < wl
    assert np.all(w[far] == 0.0)

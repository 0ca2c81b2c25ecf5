"""Tests of the shared neutron factors (evidence1d.physics.neutron)."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import integrate, special

from evidence1d.errors import InputError
from evidence1d.physics import neutron as nf
from evidence1d.units import K_B_MEV


def test_bose_energy_factor_limits():
    # analytic limits of x/(1 - e^-x) (Lovesey 1984, Ch. 4: fluctuation-dissipation)
    T = 10.0
    kT = K_B_MEV * T
    assert nf.bose_energy_factor(0.0, T) == pytest.approx(kT, rel=1e-12)
    assert nf.bose_energy_factor(1e-9, T) == pytest.approx(kT, rel=1e-9)
    assert nf.bose_energy_factor(100 * kT, T) == pytest.approx(100 * kT, rel=1e-12)
    E = -30 * kT
    assert nf.bose_energy_factor(E, T) == pytest.approx(abs(E) * np.exp(E / kT), rel=1e-10)
    # generic value against the plain formula where it is well conditioned
    E = np.linspace(-3, 3, 13) * kT
    E = E[E != 0]
    np.testing.assert_allclose(nf.bose_energy_factor(E, T), E / (1 - np.exp(-E / kT)),
                               rtol=1e-12)
    # T -> 0: max(E, 0); no overflow for extreme arguments
    np.testing.assert_allclose(nf.bose_energy_factor([-5.0, 0.0, 5.0], 0.0), [0, 0, 5])
    with np.errstate(over="raise", invalid="raise", divide="raise"):
        out = nf.bose_energy_factor(np.array([-1e4, -1.0, 1.0, 1e4]), 1e-6)
    assert np.all(np.isfinite(out))


def test_detailed_balance_ratio():
    # S(Q,-E) = exp(-E/k_BT) S(Q,E) (Lovesey 1984): the Bose factor obeys the same ratio
    T = 7.5
    E = np.linspace(0.1, 3.0, 7)
    ratio = nf.bose_energy_factor(-E, T) / nf.bose_energy_factor(E, T)
    np.testing.assert_allclose(ratio, np.exp(-E / (K_B_MEV * T)), rtol=1e-12)
    np.testing.assert_allclose(nf.boltzmann_ratio(E, T), np.exp(-E / (K_B_MEV * T)))
    assert np.isfinite(nf.boltzmann_ratio(-1e6, 1e-3))
    assert nf.boltzmann_ratio(0.0, 0.0) == 1.0
    with pytest.raises(InputError):
        nf.boltzmann_ratio(1.0, -1.0)


def test_resolution_sigma_and_gaussian():
    # FWHM = 2 sqrt(2 ln 2) sigma (Abramowitz & Stegun 1964, 26.2)
    assert nf.fwhm_to_sigma(2 * np.sqrt(2 * np.log(2))) == pytest.approx(1.0)
    E = np.array([0.0, 1.0, 2.0])
    np.testing.assert_allclose(nf.resolution_sigma(E, [0.1, 0.02, 0.001]),
                               (0.1 + 0.02 * E + 0.001 * E ** 2) / 2.3548200450309493)
    assert np.all(nf.resolution_sigma(E, [-1.0]) > 0)
    with pytest.raises(InputError):
        nf.resolution_sigma(E, [])
    # normalisation and width against scipy.stats-equivalent quadrature
    area, _ = integrate.quad(lambda x: nf.gaussian(x, 0.3), -10, 10)
    assert area == pytest.approx(1.0, rel=1e-10)
    assert nf.gaussian(0.3, 0.3) / nf.gaussian(0.0, 0.3) == pytest.approx(np.exp(-0.5))
    assert nf.elastic_line(0.0, 0.2) == pytest.approx(1 / (np.sqrt(2 * np.pi) * 0.2))


def test_convolve_modes_area_and_voigt():
    E = np.linspace(-20, 20, 40001)
    sigma = np.full(E.size, 0.2)
    centers = np.array([[[1.0, -2.0]]])
    weights = np.array([[[0.7, 0.3]]])
    out = nf.convolve_modes(E, sigma, centers, weights)
    assert out.shape == (1, E.size)
    assert integrate.trapezoid(out[0], E) == pytest.approx(1.0, rel=1e-8)
    # damped: Voigt = Gaussian * Lorentzian, checked against brute-force convolution
    gam = 0.15
    outv = nf.convolve_modes(E[::100], sigma[::100], 1.0, 1.0, damping=gam)
    x = np.linspace(-40, 40, 160001)
    lor = gam / np.pi / (x ** 2 + gam ** 2)
    ref = [integrate.trapezoid(lor * nf.gaussian(e - 1.0 - x, 0.2), x) for e in E[::100]]
    np.testing.assert_allclose(outv, ref, atol=2e-5)
    # batch broadcasting
    c = np.array([[1.0], [2.0]])
    assert nf.convolve_modes(E[:5], sigma[:5], c, 1.0).shape == (2, 5)


def test_gauss_hermite_exact_for_polynomials():
    # Abramowitz & Stegun 25.4.46: exact up to degree 2n-1; moments of N(0,1): 1, 0, 1, 0, 3
    x, w = nf.gauss_hermite(4)
    assert w.sum() == pytest.approx(1.0)
    for p, moment in [(0, 1), (1, 0), (2, 1), (3, 0), (4, 3), (6, 15)]:
        assert (w * x ** p).sum() == pytest.approx(moment, abs=1e-12)
    with pytest.raises(InputError):
        nf.gauss_hermite(0)


def _brute_conv(E, sigma, density, grid):
    return np.array([integrate.trapezoid(density * nf.gaussian(e - grid, s), grid)
                     for e, s in zip(E, sigma)])


@pytest.mark.parametrize("sig", [0.003, 0.05, 0.5])
def test_convolve_cumulative_matches_fine_grid(sig):
    # a 1/sqrt edge: W = arccosh(w/a) on [a, b] (Abramowitz & Stegun 3.3.44)
    a, b = 1.0, 2.0
    nodes = a * np.cosh(np.linspace(0, np.arccosh(b / a), 4001))
    W = np.arccosh(nodes / a)
    E = np.linspace(0.5, 2.5, 41)            # data spacing 0.05, can be >> sigma
    sigma = np.full(E.size, sig)
    got = nf.convolve_cumulative(E, sigma, nodes, W)
    # brute force: piecewise-constant density on a very fine grid
    dens = np.diff(W) / np.diff(nodes)
    fine = np.linspace(0, 1, 201)
    grid = (nodes[:-1, None] + np.diff(nodes)[:, None] * fine).ravel()
    rho = np.repeat(dens, fine.size)
    if sig >= 0.05:
        ref = _brute_conv(E, sigma, rho, grid)
        np.testing.assert_allclose(got, ref, rtol=2e-3, atol=1e-3 * ref.max())
    # weight conservation on a dense E grid, whatever sigma
    coarse = nodes[::40]
    Ed = np.linspace(a - 10 * sig - 0.1, b + 10 * sig + 0.1, int(4 / sig) + 2001)
    conv = nf.convolve_cumulative(Ed, np.full(Ed.size, sig), coarse, np.arccosh(coarse / a))
    area = integrate.trapezoid(conv, Ed)
    assert area == pytest.approx(W[-1], rel=1e-5)


def test_convolve_cumulative_point_weight():
    # zero-width interval = a delta function of weight dW
    out = nf.convolve_cumulative(np.array([0.0, 0.1]), np.array([0.1, 0.1]),
                                 np.array([0.0, 0.0]), np.array([0.0, 2.0]))
    np.testing.assert_allclose(out, 2 * nf.gaussian(np.array([0.0, 0.1]), 0.1))


def test_form_factor_tables():
    # International Tables Vol. C (Brown 2004) via periodictable: Cu2+ <j0>
    np.testing.assert_allclose(nf.magnetic_form_factor([1.0, 2.0, 4.0], "Cu", 2),
                               [0.95284, 0.82966, 0.51012], atol=5e-6)
    import periodictable
    ff = periodictable.Cu.magnetic_ff[2]
    Q = np.array([0.5, 2.0, 5.0])
    g = np.array([[2.0], [2.2], [1.9]])
    np.testing.assert_allclose(nf.magnetic_form_factor(Q, "cu", 2, g=g),
                               ff.j0_Q(Q) + (1 - 2 / g) * ff.j2_Q(Q))
    assert nf.magnetic_form_factor(0.0, "Cu", 2) == pytest.approx(1.0, abs=1e-3)
    for bad in [("Qq", 2), ("Cu", 9), (3, 2)]:
        with pytest.raises(InputError):
            nf.magnetic_form_factor(1.0, *bad)


def test_powder_directions():
    u, w = nf.powder_directions(8, 12)
    assert u.shape == (96, 3) and w.sum() == pytest.approx(1.0)
    np.testing.assert_allclose(np.linalg.norm(u, axis=1), 1.0)
    # sphere averages: <1> = 1, <cos^2 theta> = 1/3, <x^4> = 1/5, <x y> = 0 (analytic)
    assert (w * u[:, 0] ** 2).sum() == pytest.approx(1 / 3)
    assert (w * u[:, 1] ** 2).sum() == pytest.approx(1 / 3)
    assert (w * u[:, 2] ** 4).sum() == pytest.approx(1 / 5)
    assert abs((w * u[:, 0] * u[:, 1]).sum()) < 1e-14
    # average of a direction-independent function of |Q| is that function
    Q = 1.7
    f = lambda v: np.exp(-np.sum((Q * v) ** 2, axis=-1))
    assert (w * f(u)).sum() == pytest.approx(np.exp(-Q ** 2))
    with pytest.raises(InputError):
        nf.powder_directions(0, 4)


@settings(max_examples=60, deadline=None)
@given(E=st.floats(-20, 50), T=st.floats(0.01, 300), s=st.floats(1e-4, 5.0))
def test_kernels_finite(E, T, s):
    # common practice: kernels stay finite over the whole prior support
    assert np.isfinite(nf.bose_energy_factor(E, T))
    assert np.isfinite(nf.boltzmann_ratio(E, T))
    assert np.isfinite(nf.gaussian(E, s)) and np.isfinite(nf.elastic_line(E, s))
    v = nf.convolve_modes(np.array([E]), np.array([s]), 1.0, 1.0, damping=0.1)
    assert np.all(np.isfinite(v))

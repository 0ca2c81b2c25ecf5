"""Random-phase dressing of the chain's susceptibility (evidence1d.physics.coupled_chain).

Checks: the J_⊥ = 0 limit against the spinon family's own line shape; detailed balance
(Lovesey, Theory of Neutron Scattering from Condensed Matter, 1984); the pole below the
continuum against the closed-form real part of the T = 0 Müller shape (Müller, Thomas,
Beck & Bonner, PRB 24, 1429 (1981)), solved by scipy.optimize.brentq, and its small-J_⊥
asymptote; the sum rules of a causal response under the dressing (first frequency moment,
static Kramers–Kronig limit; Scalapino, Imry & Pincus, PRB 11, 2042 (1975)) by trapezoid
quadrature; the interchain Fourier sum against the ordered family's.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize

from evidence1d.errors import InputError
from evidence1d.physics import coupled_chain as cc
from evidence1d.physics import magnon
from evidence1d.physics.chain import two_spinon_sheets
from evidence1d.physics.chain_spectrum import spinon_density
from evidence1d.units import K_B_MEV

J = np.array([[10.0], [8.0]])
D = np.array([[1.0], [1.15]])
PI = np.pi


@pytest.mark.parametrize("T", [0.0, 4.0, 30.0])
def test_no_interchain_coupling_gives_the_chain_exactly(rng, T):
    n = 200
    q = rng.uniform(0.0, 2 * PI, n)
    w = rng.uniform(-20.0, 40.0, n)
    qa, qb = rng.uniform(0, 2 * PI, n), rng.uniform(0, 2 * PI, n)
    zero = np.zeros((2, 1))
    S = cc.rpa_spectrum(q, qa, qb, w, T, J, zero, D)
    np.testing.assert_allclose(S, spinon_density(q, w, T, J, D), rtol=1e-12, atol=0.0)
    chi = cc.rpa_susceptibility(q, qa, qb, w, T, J, zero, D)
    np.testing.assert_allclose(chi, cc.chain_susceptibility(q, w, T, J, D), rtol=1e-12)


def test_detailed_balance_point_by_point(rng):
    T = 12.0
    w = rng.uniform(0.05, 30.0, 100)
    q = rng.uniform(2.0, 4.3, 100)
    qa = np.full(100, PI)
    Jp = np.array([[0.4], [0.2]])
    up = cc.rpa_spectrum(q, qa, qa, w, T, J, Jp, D)
    down = cc.rpa_spectrum(q, qa, qa, -w, T, J, Jp, D)
    np.testing.assert_allclose(down, np.exp(-w / (K_B_MEV * T)) * up, rtol=1e-12)


def test_interchain_sum_and_shares():
    qa = np.array([PI, 0.0, 0.5 * PI, 1.0])
    qb = np.array([PI, 0.0, 0.0, 2.0])
    Jp = np.array([[0.3]])
    for z in (4, 2):
        got = cc.interchain_exchange(qa, qb, Jp, z)
        # the ordered family's J(Q) minus its chain part 2J cos q
        want = magnon.exchange_sum(0.7, qa, qb, np.array([[1.0]]), Jp, z) - 2 * math.cos(0.7)
        np.testing.assert_allclose(got, want, rtol=1e-12, atol=1e-15)
        assert got[0, 0] == pytest.approx(-z * 0.3)
    f_zz, f_xx = cc.component_shares(np.array([0.5, PI]), J, D)
    np.testing.assert_allclose(f_zz + 2 * f_xx, 1.0, rtol=1e-12)
    # Δ = 1: the components of the isotropic chain are equal (its first moments too)
    from evidence1d.physics.chain import first_moment_components
    m_xx, m_zz = first_moment_components(np.array([0.5, PI]), J[:1], D[:1])
    np.testing.assert_allclose((m_zz / (m_zz + 2 * m_xx))[0], f_zz[0], rtol=1e-6)


def _muller_chi1(q):
    """χ'_1D(ω) below the edge of the T = 0 Müller shape (A&S 3.3.21), J = 1, Δ = 1."""
    s = two_spinon_sheets(np.array([q]), np.array([[1.0]]), np.array([[1.0]]))
    wl, top, A = s["lower"][0, 0], s["top"][0, 0], s["A"][0, 0]
    v = math.sqrt(top * top - wl * wl)
    return (lambda w: 2 * A / math.sqrt(wl * wl - w * w) * math.atan(v / math.sqrt(
        wl * wl - w * w))), wl, A


@pytest.mark.parametrize("q, Jp", [(2.0, 0.01), (2.6, 0.05), (3.0, 0.05)])
def test_pole_below_the_continuum_against_the_closed_form(q, Jp):
    chi1, wl, A = _muller_chi1(q)
    g, f = -4 * Jp, 1.0 / 3.0                                       # Q_⊥ = (π, π), Δ = 1
    want = optimize.brentq(lambda w: 1 + g * f * chi1(w), 0.0, wl * (1 - 1e-15), xtol=1e-14)
    h = 1e-7 * want
    Z = 1.0 / (g * g * f * (chi1(want + h) - chi1(want - h)) / (2 * h))
    for method, tol in (("exact", 1e-5), ("table", 1e-3)):
        poles = cc.rpa_poles(np.array([q]), np.array([PI]), np.array([PI]), 0.0,
                             np.array([[1.0]]), np.array([[Jp]]), np.array([[1.0]]),
                             line_shape="muller", method=method)
        for comp in ("zz", "xx"):
            # the distance from the edge to relative accuracy tol
            assert wl - poles[comp]["omega"][0, 0] == pytest.approx(wl - want, rel=tol)
            assert poles[comp]["weight"][0, 0] == pytest.approx(Z, rel=10 * tol)
            assert poles[comp]["width"][0, 0] == 0.0


def test_weak_coupling_pole_splits_off_quadratically():
    """Near the inverse-square-root edge χ' ≈ πA/√(2ω_L(ω_L − ω)), so the bound state sits
    at ω_L − ω_p = (πA|g|f)²/(2ω_L) to leading order in J_⊥ (Müller et al. 1981)."""
    q = 2.4
    _, wl, A = _muller_chi1(q)
    for Jp in (1e-3, 3e-3):
        poles = cc.rpa_poles(np.array([q]), np.array([PI]), np.array([PI]), 0.0,
                             np.array([[1.0]]), np.array([[Jp]]), np.array([[1.0]]),
                             line_shape="muller")
        gap = wl - poles["zz"]["omega"][0, 0]
        want = (PI * A * 4 * Jp / 3.0) ** 2 / (2 * wl)
        assert gap == pytest.approx(want, rel=1e-2)        # next order: O(J_⊥ A/ω_T)


def test_no_pole_where_the_coupling_is_ferromagnetic_or_absent():
    poles = cc.rpa_poles(np.array([2.5, 2.5]), np.array([0.0, 0.5 * PI]),
                         np.array([0.0, 0.5 * PI]), 5.0, J, np.array([[0.5], [0.5]]), D)
    assert np.all(np.isnan(poles["zz"]["omega"])) and np.all(poles["xx"]["weight"] == 0)


def _moments(q, qa, T, Jp, line_shape="muller"):
    """Trapezoid integrals over ω > 0 of ω χ'' and χ''/ω, dressed (zz component) and bare.

    A pole with a thermal width Γ > 0 is part of the pointwise χ'' (a Lorentzian): the grid
    is refined around it; a pole with Γ = 0 is a δ-function, added with its weight πZ."""
    Jd, Dd, Jpd = np.array([[10.0]]), np.array([[1.0]]), np.array([[Jp]])
    poles = cc.rpa_poles(np.array([q]), np.array([qa]), np.array([qa]), T, Jd, Jpd, Dd,
                         line_shape=line_shape)["zz"]
    wp, Z, width = (poles[k][0, 0] for k in ("omega", "weight", "width"))
    w = np.concatenate([np.geomspace(1e-4, 0.05, 300)[:-1], np.linspace(0.05, 40.0, 40000)])
    s = two_spinon_sheets(np.array([q]), Jd, Dd)            # graded at the singular edges
    for edge in (s["lower"][0, 0], s["top"][0, 0]):
        w = np.union1d(w, edge * (1.0 + np.array([[-1.0], [1.0]])
                                  * np.geomspace(1e-12, 0.3, 600)).ravel())
    if Z > 0 and width > 0:
        w = np.union1d(w, wp + width * np.sinh(np.linspace(-14.0, 14.0, 4001)))
        w = w[w > 0]
    one = np.ones(w.size)
    dressed = cc.rpa_susceptibility(q * one, qa * one, qa * one, w, T, Jd, Jpd, Dd,
                                    line_shape=line_shape, components=True)["zz"][0].imag
    bare = cc.chain_susceptibility(q * one, w, T, Jd, Dd, line_shape=line_shape)[0].imag / 3
    delta = Z > 0 and width == 0
    pole1 = math.pi * Z * wp if delta else 0.0
    pole0 = math.pi * Z / wp if delta else 0.0
    static = cc.rpa_susceptibility(np.array([q]), np.array([qa]), np.array([qa]),
                                   np.array([0.0]), T, Jd, Jpd, Dd, line_shape=line_shape,
                                   components=True)["zz"][0, 0].real
    return (np.trapezoid(w * dressed, w) + pole1, np.trapezoid(w * bare, w),
            np.trapezoid(dressed / w, w) + pole0, static)


@pytest.mark.parametrize("q, qa, T", [(2.6, PI, 3.0), (3.0, PI, 20.0), (2.2, 0.0, 8.0)])
def test_dressing_keeps_the_first_moment_and_the_static_limit(q, qa, T):
    """χ_RPA → χ_1D − κJχ_1D² ~ −2M₁/ω² at large ω, so ∫ω χ''dω (pole included) is the
    chain's; (2/π)∫χ''/ω dω is the dressed static χ'(0) (Kramers–Kronig at ω = 0)."""
    m1, m1_bare, m0, static = _moments(q, qa, T, 0.3)
    assert m1 == pytest.approx(m1_bare, rel=1e-3)
    assert (2.0 / math.pi) * m0 == pytest.approx(static, rel=5e-3)


def test_integrated_intensity_moves_towards_the_ordering_vector():
    w = np.linspace(-5.0, 40.0, 9001)
    one = np.ones(w.size)
    tot = {}
    for qa in (PI, 0.5 * PI, 0.0):
        S = cc.rpa_spectrum(2.9 * one, qa * one, qa * one, w, 20.0, np.array([[10.0]]),
                            np.array([[0.3]]), np.array([[1.0]]))[0]
        tot[qa] = np.trapezoid(S, w)
    assert tot[PI] > tot[0.5 * PI] > tot[0.0]          # J_⊥(Q_⊥) = −4J_⊥, 0, +4J_⊥


def test_bad_options_raise():
    q = np.array([1.0])
    with pytest.raises(InputError):
        cc.chain_susceptibility(q, q, 1.0, J, D, method="fast")
    with pytest.raises(InputError):
        cc.rpa_spectrum(q, q, q, q, -1.0, J, J, D)
    with pytest.raises(InputError):
        cc.rpa_spectrum(q, q, q, q, 1.0, J, J, D, z_perp=6)

"""Tests of the quasi-elastic paramagnon kernels and family."""
from __future__ import annotations

import pickle

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import integrate, special

from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.families.paramagnon import IncommensurateParamagnonFamily, ParamagnonFamily
from evidence1d.physics import neutron, paramagnon as pm
from evidence1d.units import CURIE_PREFACTOR, K_B_MEV


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def test_low_frequency_limit_chi_over_omega():
    # χ''/ω → χ_Q/Γ_Q as ω → 0 (relaxational response; T. Moriya, Spin Fluctuations in
    # Itinerant Electron Magnetism, Springer 1985, Ch. 3).
    chi, gam = col(0.7, 2.0), col(0.3, 5.0)
    w = 1e-8
    np.testing.assert_allclose(pm.chi_double_prime(w, chi, gam) / w, chi / gam, rtol=1e-12)


@pytest.mark.parametrize("chi,gam", [(1.0, 0.1), (0.3, 2.0), (5.0, 17.0)])
def test_kramers_kronig_static_limit(chi, gam):
    # (2/π) ∫₀^∞ χ''(Q, ω)/ω dω = χ'(Q, 0) = χ_Q (Kramers–Kronig; S. W. Lovesey, Theory of
    # Neutron Scattering from Condensed Matter, Vol. 1, 1984, Ch. 4), with scipy quad.
    f = lambda w: pm.chi_double_prime(w, chi, gam) / w
    val, _ = integrate.quad(f, 0, np.inf, limit=200)
    np.testing.assert_allclose(2 / np.pi * val, chi, rtol=1e-8)


def test_detailed_balance_and_bose_factor():
    # S(Q, −E) = e^{−E/k_BT} S(Q, E) (Lovesey 1984, Eq. 4.20) for the bare kernel, and for
    # the resolution-convolved one when σ ≪ Γ, k_BT.
    E = np.linspace(0.05, 4.0, 30)
    T = 12.0
    chi, gam = np.full((1, 30), 0.8), np.full((1, 30), 1.5)
    ratio = pm.structure_factor(-E, T, chi, gam) / pm.structure_factor(E, T, chi, gam)
    np.testing.assert_allclose(ratio[0], np.exp(-E / (K_B_MEV * T)), rtol=1e-12)
    s = np.full(30, 1e-3)
    conv = pm.convolved_structure_factor(np.concatenate([-E, E]), np.concatenate([s, s]), T,
                                         np.hstack([chi, chi]), np.hstack([gam, gam]))
    np.testing.assert_allclose(conv[0, :30] / conv[0, 30:], np.exp(-E / (K_B_MEV * T)),
                               rtol=1e-5)


def test_lorentzian_half_width():
    # At k_BT ≫ Γ the symmetrised spectrum is k_BT χ_Q Γ/π/(E² + Γ²): half width at half
    # maximum Γ_Q (Lorentzian; Moriya 1985, Ch. 3).  Found with scipy brentq.
    from scipy.optimize import brentq
    chi, gam, T = 1.0, 0.2, 300.0
    sym = lambda e: (pm.structure_factor(e, T, chi, gam) + pm.structure_factor(-e, T, chi, gam))
    half = 0.5 * sym(0.0)
    hw = brentq(lambda e: sym(e) - half, 1e-6, 10 * gam)
    np.testing.assert_allclose(hw, gam, rtol=1e-4)


def test_ornstein_zernike_small_q_and_periodicity():
    # Near the centre κ ≈ ξ² δQ² (Ornstein & Zernike, Proc. Akad. Sci. Amsterdam 17, 793
    # (1914)); periodic in 2π of each phase (lattice form, common practice).
    xi_p, xi_t = col(12.0), col(3.0)
    dq = 1e-4
    k = pm.oz_denominator(np.array([np.pi + dq]), np.array([np.pi]), np.array([np.pi]),
                          xi_p, xi_t, 3.0, 7.0, 7.5)
    np.testing.assert_allclose(k, (12.0 * dq / 3.0) ** 2, rtol=1e-7)
    q = np.linspace(-3, 3, 11)
    k1 = pm.oz_denominator(q, q, q, xi_p, xi_t, 3.0, 7.0, 7.5, "zone_centre")
    k2 = pm.oz_denominator(q + 2 * np.pi, q - 2 * np.pi, q, xi_p, xi_t, 3.0, 7.0, 7.5,
                           "zone_centre")
    np.testing.assert_allclose(k1, k2, rtol=1e-12, atol=1e-12)
    with pytest.raises(InputError):
        pm.oz_denominator(q, q, q, xi_p, xi_t, 3.0, 7.0, 7.5, "somewhere")


def test_convolution_matches_brute_force():
    # Gaussian convolution of the bare S(E) on a fine grid (rectangle rule) as reference;
    # Voigt = Gaussian ⊗ Lorentzian (Abramowitz & Stegun 1964, 7.4.13).
    Ep = np.linspace(-40, 40, 160001)
    dE = Ep[1] - Ep[0]
    E = np.linspace(-2, 3, 11)
    for T, gam, sig, tol in [(10.0, 0.5, 0.1, 1e-6), (2.0, 0.05, 0.3, 1e-2),
                             (30.0, 0.02, 0.3, 1e-4), (5.0, 0.5, 0.5, 2e-3)]:
        bare = pm.structure_factor(Ep, T, 1.0, gam)
        ref = np.array([np.sum(bare * neutron.gaussian(e - Ep, sig)) * dE for e in E])
        got = pm.convolved_structure_factor(E, np.full(11, sig), T, np.ones((1, 11)),
                                            np.full((1, 11), gam))[0]
        assert np.max(np.abs(got - ref)) < tol * np.max(ref)


def _pts(n=50, T=4.0):
    q = np.linspace(0.0, 2.0, n)
    return SpectralPoints(Q_par=q, Q_a=np.full(n, 0.3), Q_b=np.zeros(n), d=3.0, a_perp=7.0,
                          b_perp=7.5, energy=np.linspace(-3, 8, n), sigma=np.full(n, 0.08),
                          temperature=T)


P = {"chi_uniform": col(2e-3, 1e-2, 5e-4), "theta_sf": col(30.0, 200.0, 2.0),
     "xi_par": col(10.0, 0.0, 40.0), "xi_perp": col(0.0, 3.0, 20.0),
     "gamma0": col(1.0, 10.0, 0.05), "g": col(2.0, 2.1, 2.3)}


def test_family_kramers_kronig_tie_to_bulk_chi():
    # The spectrum's static χ at Q = 0 equals the bulk χ(T) of the same family
    # (Kramers–Kronig, Lovesey 1984, Ch. 4), converted with N_A g² μ_B² (CODATA).
    fam = ParamagnonFamily(center="zone_boundary")
    pts = SpectralPoints(Q_par=np.zeros(1), Q_a=np.zeros(1), Q_b=np.zeros(1), d=3.0,
                         a_perp=7.0, b_perp=7.5, energy=np.zeros(1), sigma=np.full(1, 0.1),
                         temperature=7.0)
    chi_q, _ = fam.static_susceptibility(P, pts)
    bulk = fam.susceptibility(P, np.array([7.0]), "z")
    np.testing.assert_allclose(chi_q * CURIE_PREFACTOR * K_B_MEV * P["g"] ** 2, bulk,
                               rtol=1e-12)


def test_family_shapes_batch_loop_pickle_and_thermo():
    fam = ParamagnonFamily(lattice=(3.0, 7.0, 7.5))
    pts = _pts()
    T = np.array([0.0, 1.0, 10.0, 300.0])
    S = fam.spectrum(P, pts)
    C = fam.heat_capacity(P, T)
    assert S.shape == (3, 50) and C.shape == (3, 4) and fam.entropy(P, T).shape == (3, 4)
    assert fam.susceptibility(P, T).shape == (3, 4)
    for i in range(3):
        pi = {k: v[i:i + 1] for k, v in P.items()}
        np.testing.assert_allclose(fam.spectrum(pi, pts), S[i:i + 1], rtol=1e-12)
        np.testing.assert_allclose(fam.heat_capacity(pi, T), C[i:i + 1], rtol=1e-12)
    fam2 = pickle.loads(pickle.dumps(fam))
    np.testing.assert_allclose(fam2.spectrum(P, pts), S)
    # C/T at k_BT ≪ Γ_0 and ξ = 0 is π R k_B / Γ_0: three components of (π/3) k_B²/Γ
    # (low-temperature limit of the overdamped mode; T. Moriya, Spin Fluctuations in
    # Itinerant Electron Magnetism, 1985, Ch. 3)
    p0 = dict(P, xi_par=col(0.0, 0.0, 0.0), xi_perp=col(0.0, 0.0, 0.0))
    T0 = np.array([1e-4])
    np.testing.assert_allclose(fam.heat_capacity(p0, T0) / T0,
                               np.pi * 8.314462618 * K_B_MEV / P["gamma0"], rtol=1e-6)
    with pytest.raises(InputError):
        ParamagnonFamily().heat_capacity(P, T)            # spacings unknown
    with pytest.raises(InputError):
        ParamagnonFamily(lattice=(3.0, 7.0, 8.0)).spectrum(P, pts)   # inconsistent spacings
    with pytest.raises(InputError):
        ParamagnonFamily(center="corner")
    with pytest.raises(InputError):
        ParamagnonFamily(center="incommensurate")      # needs the card that samples q0
    with pytest.raises(InputError):
        IncommensurateParamagnonFamily(center="zone_boundary")


@settings(max_examples=40, deadline=None)
@given(chi=st.floats(1e-4, 0.1), th=st.floats(1.0, 1000.0), xp=st.floats(0, 50),
       xt=st.sampled_from([0.0, 1e-9]) | st.floats(0, 20), g0=st.floats(0.05, 50.0),
       T=st.sampled_from([0.0, 1e-6]) | st.floats(0.01, 300.0))
def test_finite_everywhere_in_prior_support(chi, th, xp, xt, g0, T):
    fam = ParamagnonFamily(center="zone_centre", lattice=(3.0, 7.0, 7.5))
    p = {"chi_uniform": col(chi), "theta_sf": col(th), "xi_par": col(xp),
         "xi_perp": col(xt), "gamma0": col(g0), "g": col(2.1)}
    pts = _pts(T=T)
    pts = SpectralPoints(**{**pts.__dict__, "energy": np.linspace(-80, 80, 50)})
    Ts = np.array([0.0, T, 1e4])
    for a in (fam.spectrum(p, pts), fam.susceptibility(p, Ts), fam.heat_capacity(p, Ts),
              fam.entropy(p, Ts)):
        assert np.all(np.isfinite(a))
    assert np.all(fam.spectrum(p, pts) >= -1e-12 * np.max(np.abs(fam.spectrum(p, pts))))


def test_remainder_nodes_shared_by_runs_of_equal_points():
    # a powder average asks for many directions at each measured (E, σ): the nodes built once
    # per run and gathered are the nodes of every point, bit for bit
    from evidence1d.physics import paramagnon as pmod
    E = np.repeat([-0.4, 0.3, 0.3, 1.2, 2.5], [7, 5, 3, 9, 6])
    sigma = np.repeat([0.05, 0.05, 0.07, 0.08, 0.1], [7, 5, 3, 9, 6])
    kT = 0.7
    Ep2, wR, run = pmod._nodes_at(E, sigma, kT, 12)
    assert run is not None and run.size == E.size
    want = pmod._remainder_nodes(E.tobytes(), sigma.tobytes(), E.shape, kT, 12)
    for a, b in zip((Ep2[:, run], wR[:, run]), want):
        np.testing.assert_array_equal(a, b)
    # and the convolved spectrum is the same bit for bit whichever way the nodes come
    chi = np.linspace(1.0, 2.0, E.size)[None, :]
    gam = np.linspace(0.01, 3.0, E.size)[None, :]
    whole = pmod.convolved_structure_factor(E, sigma, 8.0, chi, gam)
    parts = np.concatenate([pmod.convolved_structure_factor(E[i:i + 1], sigma[i:i + 1], 8.0,
                                                            chi[:, i:i + 1], gam[:, i:i + 1])
                            for i in range(E.size)], axis=1)
    np.testing.assert_array_equal(whole, parts)

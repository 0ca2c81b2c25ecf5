"""Tests of the Müller line shape and the convolved spinon spectrum (physics/chain.py).

The convolution tests here are of the Müller option (line_shape='muller'); the exact
two-spinon profile, the default, is tested in test_chain_exact_shape.py."""
import pickle

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import integrate, special

from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.families.spinon import SpinonFamily
from evidence1d.physics import chain, chain_muller_quadrature as cmq, chain_spectrum as cs
from evidence1d.units import K_B_MEV


def _rho(x):
    """rho(x) = Gamma(1/4 - ix) / Gamma(3/4 - ix) by scipy.special.loggamma."""
    return np.exp(special.loggamma(0.25 - 1j * x) - special.loggamma(0.75 - 1j * x))


def _brute(q, E, s, T, J, D):
    """Independent convolution of the model spectrum S = chi''(n + 1)/pi.

    Each Müller sheet of chain.two_spinon_sheets (principal up to wT, pi-shifted up to b):
    T = 0, the loss side by a fine Simpson rule in t = arccosh(w/wL); T > 0,
    A Im[rho(x-) rho(x+)] / (tau (1 - exp(-w/kT))), x+- = (w +- wL)/tau, tau = 4 pi kT
    (finite-temperature conformal form with weight 1/4; Schulz, PRB 34, 6372 (1986), from
    memory) on the signed axis |w| <= top by adaptive quadrature (QUADPACK).  The bottom
    line W delta(w - a) adds W [(n + 1) G(E - a) + n G(E + a)]."""
    sh = {k: v[0, 0] for k, v in chain.two_spinon_sheets(np.array([q]), np.array([[J]]),
                                                          np.array([[D]])).items()}
    g = lambda x: np.exp(-0.5 * (x / s) ** 2) / (np.sqrt(2 * np.pi) * s)
    kT = K_B_MEV * T
    total = 0.0
    for top, A in ((sh["top"], sh["A"]), (sh["b"], sh["A_shifted"])):
        wl = sh["lower"]
        if A == 0:
            continue
        if T == 0:
            t = np.linspace(0, np.arccosh(top / wl), 200001)
            total += A * integrate.simpson(g(E - wl * np.cosh(t)), x=t)
            continue
        tau = 4 * np.pi * kT

        def f(w):
            w = w if abs(w) > 1e-9 * kT else 1e-9 * kT
            phi = (_rho((w - wl) / tau) * _rho((w + wl) / tau)).imag / tau
            return g(E - w) * phi / -np.expm1(-w / kT)

        lo, hi = max(E - 8 * s, -top), min(E + 8 * s, top)
        if lo < hi:
            pts = [p for p in (-wl, 0.0, wl) if lo < p < hi]
            total += A * integrate.quad(f, lo, hi, points=pts or None, limit=400, epsabs=0,
                                        epsrel=1e-9)[0]
    if sh["line_weight"] > 0:
        a = sh["line_energy"]
        n = 1 / np.expm1(a / kT) if T > 0 else 0.0
        total += sh["line_weight"] * ((1 + n) * g(E - a) + n * g(E + a))
    return total


@pytest.mark.parametrize("delta", [0.0, 0.6, 1.0, 1.7])
@pytest.mark.parametrize("q", [0.4, 2.0, np.pi - 1e-3])
def test_muller_sum_rules(q, delta):
    # the line shape integrates to the first moment it is given (Hohenberg & Brinkman,
    # PRB 10, 128, 1974; components from chain_ground_state) and its weight to the
    # closed-form cumulative A arccosh(w/wL) (Abramowitz & Stegun 3.3.44); independent
    # quadrature (scipy.integrate.quad)
    J = np.array([[1.3]])
    d = np.array([[delta]])
    qa = np.array([q])
    wl, top = (a[0, 0] for a in chain.muller_edges(qa, J, d))
    if top == 0:
        # Delta > 1 and |q| < q_kappa: the principal continuum is empty (documented limitation)
        assert delta > 1 and chain.muller_amplitude(qa, J, d)[0, 0] == 0
        return
    dens = lambda w: chain.muller_density(qa, np.array([w]), J, d)[0, 0]
    m1, _ = integrate.quad(lambda w: w * dens(w), wl, top, limit=200)
    m1_c = chain.continuum_first_moment(qa, J, d)[0, 0]
    m0, _ = integrate.quad(dens, wl, top, limit=400)
    W = chain.muller_cumulative(qa, np.array([top * 2]), J, d)[0, 0]
    assert m0 == pytest.approx(W, rel=1e-5)
    # the principal sheet carries alpha (1 - cos q), plus the pi-shifted sheet's
    # beta (1 + cos q) where that lies inside it (|q| >= pi/2, Delta > 1); beta = M1^xx(0)
    # (the double-commutator moments, Hohenberg & Brinkman 1974)
    m_xx, m_zz = (a[0, 0] for a in chain.first_moment_components(qa, J, d))
    beta = chain.first_moment_components(np.array([0.0]), J, d)[0][0, 0]
    total = m_zz + 2 * m_xx
    m_shift = beta * (1 + np.cos(q)) if delta > 1 else 0.0
    m_principal = total - beta * (1 + np.cos(q))
    folded = m_shift if abs(q) >= np.pi / 2 else 0.0
    assert m1 == pytest.approx(m_principal + folded, rel=1e-6)
    assert m1_c == pytest.approx(m_principal + m_shift, rel=1e-10)
    assert chain.first_moment(qa, J, d)[0, 0] == pytest.approx(total, rel=1e-12)
    if delta == 1.0:   # isotropic point: the classic -2 (1 - cos q) E0/N, nothing left out
        assert m1 == pytest.approx(-2 * (1 - np.cos(q)) * 1.3 * chain.xxz_ground_state_energy(
            delta), rel=1e-6)


def test_spectrum_matches_brute_force_convolution():
    # brute-force fine-grid convolution; includes sigma << point spacing and the edge
    rng = np.random.default_rng(3)
    for _ in range(12):
        J, D, q = rng.uniform(0.5, 8), rng.uniform(0, 3), rng.uniform(-4, 4)
        s = 10 ** rng.uniform(-2.5, 0) * J
        T = rng.choice([0.0, 2.0, 50.0])
        sh = chain.two_spinon_sheets(np.array([q]), np.array([[J]]), np.array([[D]]))
        top = max(sh["top"][0, 0], sh["b"][0, 0], sh["line_energy"][0, 0])
        E = np.linspace(-top - 3 * s, top + 3 * s, 9)
        ref = np.array([_brute(q, e, s, T, J, D) for e in E])
        # cumulative: ~0.3 % at T = 0, ~2 % at T > 0 (trapezoid on the thermal edge)
        for method, tol in [("quadrature", 1e-3), ("cumulative", 1e-2 if T == 0 else 3e-2)]:
            got = cs.spinon_spectrum(np.full(9, q), E, np.full(9, s), T, np.array([[J]]),
                                        np.array([[D]]), method=method,
                                        line_shape="muller", thermal_edge="everywhere")[0]
            np.testing.assert_allclose(got, ref, atol=tol * max(ref.max(), 1e-12))


def test_spectrum_conserves_weight():
    # area of the convolved loss side = total Müller weight, whatever sigma (no lost weight)
    J, d = np.array([[2.0]]), np.array([[1.0]])
    q = 1.1
    W = chain.muller_cumulative(np.array([q]), np.array([100.0]), J, d)[0, 0]
    for s in [0.002, 0.05, 0.4]:
        E = np.linspace(-3, 9, int(12 / s * 8) + 1)
        S = cs.spinon_spectrum(np.full(E.size, q), E, np.full(E.size, s), 0.0, J, d,
                                  line_shape="muller")[0]
        assert integrate.trapezoid(S, E) == pytest.approx(W, rel=1e-4)


@pytest.mark.parametrize("shape", ["muller", "exact"])
def test_detailed_balance(shape):
    # S(q,-E) = exp(-E/k_BT) S(q,E) (Lovesey 1984), exact when the resolution is negligible
    J, d, T = np.array([[2.0]]), np.array([[1.0]]), 20.0
    E = np.array([3.2, 3.4, 3.6])      # inside [wL, wU] = [3.03, 3.81] meV
    q = np.full(3, 1.3)
    s = np.full(3, 1e-3)
    loss = cs.spinon_spectrum(q, E, s, T, J, d, line_shape=shape)[0]
    gain = cs.spinon_spectrum(q, -E, s, T, J, d, line_shape=shape)[0]
    np.testing.assert_allclose(gain / loss, np.exp(-E / (K_B_MEV * T)), rtol=1e-3)
    assert np.all(cs.spinon_spectrum(q, -E, s, 0.0, J, d, line_shape=shape) == 0.0)


@pytest.mark.parametrize("shape", ["muller", "exact"])
@pytest.mark.parametrize("T", [0.0, 10.0])
def test_batch_equals_loop_and_periodicity(shape, T):
    rng = np.random.default_rng(0)
    J = rng.uniform(0.5, 5, (5, 1))
    d = rng.uniform(0, 3, (5, 1))
    q = rng.uniform(-10, 10, 40)
    E = rng.uniform(-5, 15, 40)
    s = rng.uniform(0.05, 0.5, 40)
    kw = {"line_shape": shape}
    batch = cs.spinon_spectrum(q, E, s, T, J, d, **kw)
    loop = np.vstack([cs.spinon_spectrum(q, E, s, T, J[i:i + 1], d[i:i + 1], **kw)
                      for i in range(5)])
    np.testing.assert_allclose(batch, loop, rtol=1e-12, atol=0)
    # 2 pi periodicity and q -> -q symmetry of the chain (translation and inversion)
    np.testing.assert_allclose(cs.spinon_spectrum(-q + 4 * np.pi, E, s, T, J, d, **kw),
                               batch, rtol=1e-9, atol=1e-12)


def test_family_adapter():
    fam = SpinonFamily()
    assert fam.parameters == ("J", "delta", "thermal_damping", "g")
    # the family contract's declared spins (families/base.py): spinons exist for S = 1/2 only
    assert SpinonFamily.spins == (0.5,) and fam.spins == (0.5,)
    pts = SpectralPoints(Q_par=np.linspace(0.1, 1.5, 30), Q_a=np.zeros(30), Q_b=np.zeros(30),
                         d=3.0, a_perp=5.0, b_perp=5.0, energy=np.linspace(0.5, 8, 30),
                         sigma=np.full(30, 0.2), temperature=5.0)
    p = {"J": np.array([[1.5], [3.0]]), "delta": np.array([[1.0], [2.0]]),
         "g": np.array([[2.1], [2.1]])}
    out = fam.spectrum(p, pts)
    ref = cs.spinon_spectrum(pts.q_par, pts.energy, pts.sigma, 5.0, p["J"], p["delta"])
    np.testing.assert_array_equal(fam.unpolarised_spectrum(p, pts), ref)
    # Q along the chain and the anisotropy axis: only the transverse components are seen
    # (polarisation factor 1 − Q̂_a², Squires 1978, Ch. 7)
    f_zz = chain.longitudinal_share(pts.q_par, p["J"], p["delta"])
    np.testing.assert_allclose(out, (1.0 - f_zz) * ref, rtol=1e-14)
    assert out.shape == (2, 30) and np.all(out >= 0)
    fam2 = pickle.loads(pickle.dumps(fam))
    np.testing.assert_array_equal(fam2.spectrum(p, pts), out)


def test_input_errors():
    q = np.array([1.0])
    with pytest.raises(InputError, match=r"got minimum -1$"):
        chain.spinon_bounds(q, np.array([[-1.0]]), np.array([[1.0]]))
    # the message prints a plain number, not a numpy scalar's repr
    with pytest.raises(InputError, match=r"Δ must be finite and > -1; got minimum -1\.5$"):
        chain.spinon_bounds(q, np.array([[1.0]]), np.array([[-1.5]]))
    with pytest.raises(InputError):
        cs.spinon_spectrum(q, q, np.array([0.0]), 1.0, 1.0, 1.0)
    with pytest.raises(InputError):
        cs.spinon_spectrum(q, q, q, 1.0, 1.0, 1.0, method="other")
    with pytest.raises(InputError, match="line_shape"):
        cs.spinon_spectrum(q, q, q, 1.0, 1.0, 1.0, line_shape="lorentzian")
    with pytest.raises(InputError, match="muller"):
        cs.spinon_spectrum(q, q, q, 1.0, 1.0, 1.0, method="cumulative")


@settings(max_examples=40, deadline=None)
@given(J=st.floats(0.05, 20), D=st.floats(0, 3), T=st.floats(0.01, 300),
       q=st.floats(-1e3, 1e3), E=st.floats(-20, 50), s=st.floats(1e-3, 3))
def test_kernels_finite_over_prior(J, D, T, q, E, s):
    # common practice: no NaN/inf anywhere inside the prior support
    Ja, Da, qa = np.array([[J]]), np.array([[D]]), np.array([q, 0.0, np.pi])
    for arr in chain.spinon_bounds(qa, Ja, Da) + chain.muller_edges(qa, Ja, Da):
        assert np.all(np.isfinite(arr))
    assert np.all(np.isfinite(chain.muller_amplitude(qa, Ja, Da)))
    assert np.all(np.isfinite(chain.spinon_gap(Ja, Da)))
    Eq = np.array([E, E, E])
    for method, shape in (("quadrature", "exact"), ("quadrature", "muller"),
                          ("cumulative", "muller")):
        for temp in (T, 0.0):
            out = cs.spinon_spectrum(qa, Eq, np.full(3, s), temp, Ja, Da, method=method,
                                        line_shape=shape)
            assert np.all(np.isfinite(out)) and np.all(out >= 0)


def _peaks(qu, s0, T, J, D):
    """Largest fine-reference S(q, E) per (set, q) over a dense energy grid, (n_sets, n_q)."""
    sh = chain.two_spinon_sheets(qu, J, D)
    top = np.maximum(np.maximum(sh["top"], sh["b"]), sh["line_energy"])
    pk = np.zeros((J.shape[0], qu.size))
    for k in range(qu.size):
        Eg = np.linspace(-top[:, k].max() - 3 * s0, top[:, k].max() + 3 * s0, 1200)
        pk[:, k] = cs._spectrum(np.full(Eg.size, qu[k]), Eg, np.full(Eg.size, s0), T, J,
                                   D, "quadrature", 16, 8, False).max(axis=1)
    return np.maximum(pk, 1e-300)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_fast_path_matches_reference_and_fine_quadrature(seed):
    # The Gauss-Hermite paths against the all-Gauss-Legendre path of the same kernel (T = 0)
    # and a 16-node x 8-panel Gauss-Legendre reference (Abramowitz & Stegun 25.4.29): both
    # sides of detailed balance, T = 0 to 300 K, sigma from 0.3 % to 20 % of J.
    rng = np.random.default_rng(seed)
    for _ in range(4):
        Jc = np.exp(rng.uniform(np.log(0.05), np.log(20)))
        J = Jc * np.exp(rng.uniform(-0.2, 0.2, (5, 1)))
        D = rng.uniform(0, 3, (5, 1))
        qu, nE = rng.uniform(-4, 4, 4), 100
        T = rng.choice([0.0, 1.5, 30.0, 300.0])
        s0 = 10 ** rng.uniform(-2.5, -0.7) * Jc
        E = np.tile(np.linspace(-1.1, 1.1, nE) * 3.5 * Jc * max(1.0, D.max()), qu.size)
        q, s = np.repeat(qu, nE), np.full(E.size, s0)
        fast = cs.spinon_spectrum(q, E, s, T, J, D, line_shape="muller")
        fine = cs._spectrum(q, E, s, T, J, D, "quadrature", 16, 8, False)
        pk = np.repeat(_peaks(qu, s0, T, J, D), nE, axis=1)
        if T == 0:   # the Hermite path against the Legendre path at the same settings
            ref = cs._spectrum(q, E, s, T, J, D, "quadrature", 6, 3, False)
            assert np.max(np.abs(fast - ref) / pk) < 1e-4
        # the stated accuracy: 5e-4 at T = 0, 1e-3 at T > 0
        assert np.max(np.abs(fast - fine) / pk) < (5e-4 if T == 0 else 1e-3)
        assert np.all(fast >= 0)


@pytest.mark.parametrize("r", [6.0, 8.0, 20.0])
@pytest.mark.parametrize("wl_over_sigma", [0.5, 10.0, 300.0])
def test_hermite_cut_rule_against_adaptive_quadrature(r, wl_over_sigma):
    # int_{-inf}^{b} phi(z) / sqrt((c + s z)^2 - wL^2) dz with the singular edge r sigma below
    # c, against scipy.integrate.quad (QUADPACK); the stated bound is 2.5e-5 of the local value
    s, wl = 1.0, wl_over_sigma
    c = wl + r * s
    f = lambda z: np.exp(-0.5 * z * z) / np.sqrt(2 * np.pi) / np.sqrt((c + s * z) ** 2 - wl ** 2)
    local = 1.0 / np.sqrt(c * c - wl * wl)
    for b in np.linspace(-5.9, 7.0, 12):
        exact = integrate.quad(f, -6.0, b, limit=200)[0]      # the kernel's ±6σ window
        got = cmq.muller_smooth_side(np.array([c]), np.array([s]), np.array([wl]), np.array([b]),
                                 np.array([1.0]))[0]
        assert abs(got - exact) < 2.5e-5 * local


def test_gain_side_shifted_gaussian_path():
    # energy-gain points clear of the edge: the Gaussian times the Boltzmann factor is a
    # shifted Gaussian (completing the square); compared with the fine-grid brute force and
    # with detailed balance S(-E) = exp(-E/k_BT) S(E) where the resolution is negligible
    J, D, q = 10.0, 1.0, 1.3                      # continuum [15.1, 19.0] meV
    E = -np.linspace(15.5, 20.5, 7)
    for T, s in [(5.0, 0.3), (60.0, 0.15)]:
        ref = np.array([_brute(q, e, s, T, J, D) for e in E])
        got = cs.spinon_spectrum(np.full(7, q), E, np.full(7, s), T, np.array([[J]]),
                                    np.array([[D]]), line_shape="muller",
                                    thermal_edge="everywhere")[0]
        np.testing.assert_allclose(got, ref, rtol=2e-4, atol=1e-4 * ref.max())
    Ein = np.array([16.0, 17.0, 18.0])
    args = (np.full(3, q), np.full(3, 1e-3), 60.0, np.array([[J]]), np.array([[D]]))
    gain = cs.spinon_spectrum(args[0], -Ein, *args[1:], line_shape="muller",
                                 thermal_edge="everywhere")[0]
    loss = cs.spinon_spectrum(args[0], Ein, *args[1:], line_shape="muller",
                                 thermal_edge="everywhere")[0]
    np.testing.assert_allclose(gain / loss, np.exp(-Ein / (K_B_MEV * 60.0)), rtol=1e-6)

"""The exact two-spinon line shape of the spinon family (physics/chain_exact.py, the default).

References used below: the exact two-spinon S^zz(q, w) = e^{-I(t)} / (4 pi sqrt(wU^2 - w^2)),
cosh(pi t) = sqrt((wU^2 - wL^2)/(w^2 - wL^2)) (Bougourzi, Couture & Kacir, PRB 54, R12669
(1996); Karbach et al., PRB 55, 12510 (1997)); the finite-temperature conformal form
Im[rho(x-) rho(x+)], rho(x) = Gamma(1/4 - ix)/Gamma(3/4 - ix) (Schulz, PRB 34, 6372 (1986),
from memory), evaluated here with scipy.special.loggamma; detailed balance (Lovesey, Theory of
Neutron Scattering from Condensed Matter, 1984).  The unconvolved model is written out again
in this file from its stated definition (the profile ratio with the smooth floor and the
blend of the model card) and every convolution path is checked against adaptive quadrature
(scipy.integrate.quad) of it.
"""
from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import integrate, special

from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.families.spinon import SpinonFamily
from evidence1d.physics import chain, chain_exact as cx, chain_spectrum as cs
from evidence1d.physics import two_spinon as ts
from evidence1d.units import K_B_MEV


@pytest.fixture(scope="module")
def K1():
    """pi int_0^inf e^{-I(t)} sech^2(pi t) dt by QUADPACK on the direct quadrature of I(t)."""
    f = lambda t: math.exp(-ts._I_quad(t)) / math.cosh(math.pi * t) ** 2
    return math.pi * (integrate.quad(f, 0, 2, limit=100)[0]
                      + integrate.quad(f, 2, 12, limit=100)[0])


def _ratio(w, wl, wu, kT, K1):
    """The profile ratio R_T written out from its definition (model card): the smooth floor
    F(x) = y_c^2 + [(x - y_c^2) + sqrt((x - y_c^2)^2 + 9 y_c^4)]/2 of
    x = (w^2 - wL^2)/(wU^2 - wL^2), y_c^2 = kT (2 wL + kT)/(wU^2 - wL^2), y^2 = F(x)/F(1),
    cosh(pi t) = 1/y, R = e^{-I(t)}/(K1 sinh(pi t)), blended with 1 by b = y_c^6/(1 + y_c^6)."""
    a = abs(w)
    if a >= wu:
        return 0.0
    v2 = wu * wu - wl * wl
    x = (a * a - wl * wl) / v2
    b = 0.0
    if kT > 0:
        yc2 = kT * (2 * wl + kT) / v2
        F = lambda z: yc2 + 0.5 * ((z - yc2) + math.sqrt((z - yc2) ** 2 + 9 * yc2 ** 2))
        x = F(x) / F(1.0)
        b = yc2 ** 3 / (1 + yc2 ** 3)
    elif x <= 0:
        return 0.0
    t = math.acosh(1 / math.sqrt(x)) / math.pi
    rho = math.exp(-float(ts.I_function(np.array([t]))[0])) / (K1 * math.sinh(math.pi * t))
    return (1 - b) * rho + b


def _thermal(w, wl, kT):
    """Thermal Müller density Im[rho(x-) rho(x+)] / (tau (1 - e^{-w/kT})), tau = 4 pi kT."""
    tau = 4 * math.pi * kT
    w = w if abs(w) > 1e-12 * kT else 1e-12 * kT
    if w < -700 * kT:                                # n(w) + 1 = e^{-|w|/kT} n(|w|): nil
        return 0.0
    rho = lambda x: np.exp(special.loggamma(0.25 - 1j * x) - special.loggamma(0.75 - 1j * x))
    return (rho((w - wl) / tau) * rho((w + wl) / tau)).imag / tau / -math.expm1(-w / kT)


def _sheet_ref(E, s, wl, wu, kT, K1):
    """int G_s(E - w) R_T(w) D(w) dw per unit amplitude by adaptive quadrature; at T = 0 in
    v, w^2 = wL^2 + v^2 (the inverse-square-root edge removed)."""
    g = lambda w: math.exp(-0.5 * ((E - w) / s) ** 2) / (math.sqrt(2 * math.pi) * s)
    if kT == 0:
        lo, hi = max(E - 8 * s, wl), min(E + 8 * s, wu)
        if lo >= hi:
            return 0.0
        va, vb = math.sqrt(max(lo * lo - wl * wl, 0)), math.sqrt(hi * hi - wl * wl)
        f = lambda v: _ratio(math.sqrt(wl * wl + v * v), wl, wu, 0, K1) * g(
            math.sqrt(wl * wl + v * v)) / math.sqrt(wl * wl + v * v)
        cuts = np.unique(np.clip(va + (vb - va) * np.array([0, 1e-6, 1e-3, .05, .3, 1]), va, vb))
        return sum(integrate.quad(f, a, b, limit=200)[0] for a, b in zip(cuts[:-1], cuts[1:]))
    lo, hi = max(E - 8 * s, -wu), min(E + 8 * s, wu)
    if lo >= hi:
        return 0.0
    marks = [0.0] + [sg * (wl + k * kT) for sg in (-1, 1) for k in (-20, -3, 0, 3, 20)]
    pts = sorted({lo, hi} | {p for p in marks if lo < p < hi})
    f = lambda w: g(w) * _ratio(w, wl, wu, kT, K1) * _thermal(w, wl, kT)
    return sum(integrate.quad(f, a, b, limit=200, epsabs=1e-10, epsrel=1e-10)[0]
               for a, b in zip(pts[:-1], pts[1:]))


def _sheet(E, s, wl, wu, kT, smooth=True):
    E = np.atleast_1d(np.asarray(E, float))
    full = lambda v: np.full(E.size, float(v))
    return cs._convolve_sheet(E, full(s), full(wl), full(wu), full(1.0), kT, "quadrature", 6,
                              3, smooth, "exact")


# ------------------------------------------------------------------ the profile itself
def test_profile_constant_is_the_published_two_spinon_moment_share(K1):
    # 3 K1 / (16 (ln 2 - 1/4)) is the two-spinon share of the first moment: 71.30 %
    # (Karbach et al., PRB 55, 12510 (1997))
    assert cx.profile_constant() == pytest.approx(K1, rel=1e-6)
    assert 3 * K1 / (16 * (math.log(2) - 0.25)) == pytest.approx(0.7130, abs=2e-4)


def test_ratio_and_profile_against_their_definitions(K1):
    rng = np.random.default_rng(0)
    wl = rng.uniform(0.01, 2.0, 300)
    wu = wl + rng.uniform(1e-3, 2.0, 300)
    w = wl + (wu - wl) * rng.uniform(0, 1, 300) ** 3          # many near the lower edge
    kT = np.where(rng.uniform(size=300) < 0.5, 0.0, 10 ** rng.uniform(-3, 0.5, 300))
    got = cx.profile_ratio(w, wl, wu, kT)
    want = np.array([_ratio(*a, K1) for a in zip(w, wl, wu, kT)])
    np.testing.assert_allclose(got, want, rtol=5e-5)
    # the T = 0 profile is e^{-I(t)} / (K1 sqrt(wU^2 - w^2)) (Karbach et al. 1997)
    t = np.arccosh(np.sqrt((wu ** 2 - wl ** 2) / (w ** 2 - wl ** 2))) / np.pi
    direct = np.exp(-ts.I_function(t)) / (K1 * np.sqrt(wu ** 2 - w ** 2))
    np.testing.assert_allclose(cx.exact_profile(w, wl, wu), direct, rtol=5e-5)
    # even in w, zero at and beyond the upper edge, zero below the edge at T = 0
    np.testing.assert_array_equal(cx.profile_ratio(-w, wl, wu, kT), got)
    assert np.all(cx.profile_ratio(wu, wl, wu, kT) == 0)
    assert np.all(cx.profile_ratio(0.5 * wl, wl, wu, 0.0) == 0)


def test_profile_edges():
    # upper edge: R vanishes as sqrt(wU - w) (no step, unlike the Müller shape); lower edge:
    # R grows as sqrt(t) ~ sqrt(ln(1/(w - wL))) (Karbach et al. 1997); at T > 0 the growth is
    # cut off near wL + k_BT and R(wL) is finite
    wl, wu = 1.0, 1.5
    d = np.array([1e-4, 1e-6, 1e-8])
    r = cx.profile_ratio(wu - d, wl, wu, 0.0)
    np.testing.assert_allclose(r / np.sqrt(d), r[0] / np.sqrt(d[0]), rtol=2e-3)
    r = cx.profile_ratio(wl + d, wl, wu, 0.0)
    t = np.arccosh(np.sqrt((wu ** 2 - wl ** 2) / ((wl + d) ** 2 - wl ** 2))) / np.pi
    np.testing.assert_allclose(r / np.sqrt(t), r[-1] / np.sqrt(t[-1]), rtol=2e-2)
    kT = 0.01
    hot = cx.profile_ratio(wl + np.array([0.0, 1e-6, 1e-3]), wl, wu, kT)
    assert np.ptp(hot) < 0.02 * hot[0] and hot[0] < r[0]
    # a continuum far narrower than k_BT takes the Müller shape (R -> 1)
    assert cx.profile_ratio(1.0005, 1.0, 1.001, 5.0) == pytest.approx(1.0, abs=1e-6)


# --------------------------------------------------------- convolution against quadrature
@pytest.mark.parametrize("seed", [0, 1])
def test_zero_temperature_convolution_against_quadrature(seed, K1):
    # every T = 0 path (Gauss-Hermite clear of the edges, Gauss-Legendre in t at the lower
    # edge, in w with the u^2 rule at the upper edge), the lower edge floored near q = pi
    rng = np.random.default_rng(seed)
    for _ in range(6):
        J, D = rng.uniform(0.3, 3), rng.choice([1.0, rng.uniform(0.2, 2.5)])
        q = rng.choice([rng.uniform(0.05, np.pi), np.pi - 10 ** rng.uniform(-4, -1)])
        sh = chain.two_spinon_sheets(np.array([q]), np.array([[J]]), np.array([[D]]))
        wl, wu = sh["lower"][0, 0], sh["top"][0, 0]
        if wu <= wl:
            continue
        s = J * 10 ** rng.uniform(-2.3, -0.8)
        E = np.r_[wl + s * np.array([-2, 0, 1, 3, 7]), wu - s * np.array([5, 2, 0, -1]),
                  rng.uniform(wl, wu, 3)]
        got = _sheet(E, s, wl, wu, 0.0)
        want = np.array([_sheet_ref(e, s, wl, wu, 0.0, K1) for e in E])
        peak = _sheet(np.linspace(wl - s, wu + s, 300), s, wl, wu, 0.0).max()
        assert np.max(np.abs(got - want)) < 2e-4 * peak


@pytest.mark.parametrize("ratio", [0.1, 0.45, 1.0, 1.3, 1.6, 2.2, 3.0, 4.0, 20.0])
def test_thermal_convolution_against_quadrature(ratio, K1):
    # sigma / k_BT picks the path: the signed-axis rule near the upper edge (<= 1.25) and,
    # with 3 to 5 panels, for every window up to 3.2 (the widths of a thermally damped
    # spectrum), or per side with the thermal correction; windows near the upper edge on
    # their own rule; a continuum narrower than k_BT (q = 0.3 at Delta = 1)
    for J, D, q in [(1.0, 1.0, 2.0), (1.0, 1.0, 0.3), (1.3, 0.6, np.pi - 0.01),
                    (0.7, 2.0, 2.4)]:
        sh = chain.two_spinon_sheets(np.array([q]), np.array([[J]]), np.array([[D]]))
        wl, wu = sh["lower"][0, 0], sh["top"][0, 0]
        s = 0.03 * J
        kT = s / ratio
        E = np.r_[np.linspace(-wu - 2 * s, wu + 2 * s, 9), wl + s * np.array([-2, 0, 2]),
                  wu - s * np.array([4, 1])]
        got = _sheet(E, s, wl, wu, kT)
        want = np.array([_sheet_ref(e, s, wl, wu, kT, K1) for e in E])
        peak = _sheet(np.linspace(-wu, wu + s, 200), s, wl, wu, kT).max()
        assert np.max(np.abs(got - want)) < 2e-4 * peak, (J, D, q)


@pytest.mark.parametrize("kT_over_J", [0.0, 0.05, 0.12])
def test_shared_column_grids_against_quadrature(kT_over_J, K1):
    # a column of a measured map: energies at steps far finer than sigma (here 0.2 sigma)
    # and sigma growing with E, as a thermally damped spectrum has (sigma = 1.3-3.2 k_BT);
    # the windows share one node grid per sheet (t_side_grid at T = 0, signed_side_grid at
    # T > 0), each value checked against adaptive quadrature of the model, and against
    # the same window computed on its own
    from evidence1d.physics import chain_exact_quadrature as cxq
    J, D, q = 1.07, 0.98, 2.3
    sh = chain.two_spinon_sheets(np.array([q]), np.array([[J]]), np.array([[D]]))
    wl, wu = sh["lower"][0, 0], sh["top"][0, 0]
    kT = kT_over_J * J
    s0 = 0.03 * J if kT == 0 else 1.4 * kT
    E = np.linspace(-wu - 2 * s0 if kT else wl - 3 * s0, wu + 3 * s0, 60)
    s = s0 * (1.0 + 0.6 * np.abs(E) / wu)
    full = lambda v: np.full(E.size, float(v))
    if kT == 0:
        got = cxq.t_side_grid(E, s, full(wl), full(wu))
    else:
        got = cxq.signed_side_grid(E, s, full(wl), full(wu), full(kT))
    want = np.array([_sheet_ref(e, si, wl, wu, kT, K1) for e, si in zip(E, s)])
    peak = want.max()
    assert np.max(np.abs(got - want)) < 5e-5 * peak, np.max(np.abs(got - want)) / peak
    # each window alone (its own grid) agrees to the same accuracy
    one = lambda i: (cxq.t_side_grid(E[i:i + 1], s[i:i + 1], full(wl)[:1], full(wu)[:1])
                     if kT == 0 else cxq.signed_side_grid(E[i:i + 1], s[i:i + 1], full(wl)[:1],
                                                          full(wu)[:1], full(kT)[:1]))
    alone = np.concatenate([one(i) for i in range(0, E.size, 7)])
    assert np.max(np.abs(alone - got[::7])) < 5e-5 * peak


def test_shared_grids_keep_the_sets_of_a_batch_apart():
    # one grid per parameter set and wavevector: a set's spectrum is the same to rounding
    # whether it is computed alone or with other sets (a damped, finite-T map)
    rng = np.random.default_rng(5)
    J, D = rng.uniform(0.8, 1.3, (3, 1)), rng.uniform(0.7, 1.2, (3, 1))
    q = np.repeat(np.linspace(0.3, 3.0, 6), 30)
    E = np.tile(np.linspace(-0.5, 4.0, 30), 6)
    sig = 0.03 + 0.01 * np.abs(E)
    b = np.array([[1.5], [0.5], [2.5]])
    both = cs.spinon_spectrum(q, E, sig, 1.5, J, D, thermal_damping=b)
    for k in range(3):
        alone = cs.spinon_spectrum(q, E, sig, 1.5, J[k:k + 1], D[k:k + 1],
                                   thermal_damping=b[k:k + 1])
        np.testing.assert_allclose(alone[0], both[k], rtol=1e-12, atol=1e-15)


def test_reference_path_agrees_with_fast_paths():
    # the all-Gauss-Legendre path (smooth=False) of the same kernel against the fast paths
    rng = np.random.default_rng(3)
    J, D = rng.uniform(0.5, 2, (4, 1)), rng.uniform(0.3, 2.5, (4, 1))
    q = np.repeat(rng.uniform(0.1, 3.1, 5), 40)
    E = np.tile(np.linspace(-3, 5, 40), 5)
    s = np.full(E.size, 0.05)
    for T in (0.0, 0.3, 3.0):
        fast = cs._spectrum(q, E, s, T, J, D, "quadrature", 6, 3, True, "exact")
        ref = cs._spectrum(q, E, s, T, J, D, "quadrature", 12, 6, False, "exact")
        assert np.max(np.abs(fast - ref)) < 2e-4 * ref.max()


def test_spectrum_against_quadrature_of_the_kernel_density():
    # spinon_spectrum against QUADPACK of spinon_density times the Gaussian (both sheets;
    # the finite-temperature edge at every q; the default blend is the next test)
    J, D = np.array([[1.2]]), np.array([[1.0]])
    for q, T, s in [(2.9, 1.5, 0.05), (2.0, 0.0, 0.08), (0.6, 12.0, 0.1)]:
        E = np.linspace(-1.0 if T else 0.1, 3.5, 7)
        got = cs.spinon_spectrum(np.full(E.size, q), E, np.full(E.size, s), T, J, D,
                                 thermal_edge="everywhere")[0]
        sh = chain.two_spinon_sheets(np.array([q]), J, D)
        wl, wu = sh["lower"][0, 0], sh["top"][0, 0]

        def ref(e):
            g = lambda w: math.exp(-0.5 * ((e - w) / s) ** 2) / (math.sqrt(2 * math.pi) * s)
            f = lambda w: g(w) * cs.spinon_density(np.array([q]), np.array([w]), T, J, D,
                                                   thermal_edge="everywhere")[0, 0]
            lo, hi = max(e - 8 * s, -wu if T else wl), min(e + 8 * s, wu)
            if lo >= hi:
                return 0.0
            pts = sorted({lo, hi} | {p for p in (-wl, 0.0, wl) if lo < p < hi})
            if T == 0:     # the inverse-square-root edge: substitute w = wL cosh u
                h = lambda u: f(wl * math.cosh(u)) * wl * math.sinh(u)
                ua, ub = math.acosh(max(lo / wl, 1.0)), math.acosh(hi / wl)
                return integrate.quad(h, ua, ub, limit=200)[0]
            return sum(integrate.quad(f, a, b, limit=200)[0] for a, b in zip(pts[:-1], pts[1:]))

        want = np.array([ref(e) for e in E])
        assert np.max(np.abs(got - want)) < 1e-3 * max(want.max(), got.max()), (q, T)


@pytest.mark.parametrize("q", [0.7 * np.pi, 0.97 * np.pi])
@pytest.mark.parametrize("ratio", [0.5, 1.0, 1.2])
def test_default_blend_against_quadrature_at_a_resolution_as_wide_as_kT(q, ratio):
    # The default 'near_pi' blend (w S_T + (1 − w) S_cold, S_cold the T = 0 edge and its
    # Boltzmann image on the gain side) at k_BT = 0.3 J and σ = 0.5–1.2 k_BT against an
    # independent quadrature of spinon_density times the Gaussian.  The resolution reaches from one side of ω = 0 to
    # the other, so the gain-side image must be convolved exactly (completing the square);
    # taking it as e^{−|E|/k_BT} (G ∗ S_0)(|E|) erred by up to 3.5e-3 of the peak here
    # (against QUADPACK and the rule below alike).  Measured now: < 1e-5 of the peak.
    J, D = np.array([[1.0]]), np.array([[1.0]])
    kT = 0.3
    T, s = kT / K_B_MEV, ratio * kT
    sh = chain.two_spinon_sheets(np.array([q]), J, D)
    wl, wu = sh["lower"][0, 0], sh["top"][0, 0]
    E = np.array([-0.5, -0.15, 0.15, 0.4, 0.9, 1.5, 2.4])
    got = cs.spinon_spectrum(np.full(E.size, q), E, np.full(E.size, s), T, J, D)[0]

    def ref(e):
        # Gauss–Legendre, 400 nodes on each piece between the density's edges, with
        # u = a + (b − a)(3t² − 2t³) crowding the nodes at both ends of a piece (where the
        # density may have an inverse-square-root edge); agrees with QUADPACK to 1e-5 of
        # the peak on these cases, at a fraction of its cost
        pts = sorted({e - 8 * s, e + 8 * s} | {p for p in (-wu, -wl, 0.0, wl, wu)
                                               if e - 8 * s < p < e + 8 * s})
        x, wx = np.polynomial.legendre.leggauss(400)
        t = 0.5 * (x + 1.0)
        total = 0.0
        for a, b in zip(pts[:-1], pts[1:]):
            u = a + (b - a) * (3 * t ** 2 - 2 * t ** 3)
            du = 0.5 * (b - a) * (6 * t - 6 * t ** 2) * wx
            f = cs.spinon_density(np.full(u.size, q), u, T, J, D)[0]
            total += np.sum(du * f * np.exp(-0.5 * ((e - u) / s) ** 2))
        return total / (math.sqrt(2 * math.pi) * s)

    want = np.array([ref(e) for e in E])
    assert np.max(np.abs(got - want)) < 2e-4 * want.max(), (got - want) / want.max()


# ------------------------------------------------- limits, symmetry, continuity, options
@pytest.mark.parametrize("thermal_edge", ["near_pi", "everywhere"])
def test_detailed_balance_point_by_point(thermal_edge):
    # S(q, -w) = e^{-w/k_BT} S(q, w) (Lovesey 1984): the unconvolved density to rounding;
    # through the kernel (resolution σ far below k_BT) the Gaussian-convolved form of the same
    # law, P(−E) = e^{−E/k_BT + σ²/2(k_BT)²} P(E − σ²/k_BT) (completing the square), which
    # near a sharp T = 0 edge differs from e^{−E/k_BT} P(E) by σ²/k_BT times P'/P
    q = np.array([0.5, 1.3, 2.2, 3.1])
    J, D, T = np.array([[1.0], [1.4]]), np.array([[1.0], [1.6]]), 8.0
    kT = K_B_MEV * T
    w = np.linspace(0.02, 3.0, 40)
    for qq in q:
        loss = cs.spinon_density(np.full(w.size, qq), w, T, J, D)
        gain = cs.spinon_density(np.full(w.size, qq), -w, T, J, D)
        np.testing.assert_allclose(gain, loss * np.exp(-w / kT), rtol=1e-12, atol=1e-300)
    s = np.full(3, 1e-3)
    for qq in q:
        lo, hi = (a[0, 0] for a in chain.spinon_bounds(np.array([qq]), J[:1], D[:1]))
        E = lo + (hi - lo) * np.array([0.2, 0.5, 0.8])
        shift = s ** 2 / kT
        loss = cs.spinon_spectrum(np.full(3, qq), E - shift, s, T, J[:1], D[:1],
                                  thermal_edge=thermal_edge)[0]
        gain = cs.spinon_spectrum(np.full(3, qq), -E, s, T, J[:1], D[:1],
                                  thermal_edge=thermal_edge)[0]
        np.testing.assert_allclose(gain / loss, np.exp(-E / kT + 0.5 * (s / kT) ** 2),
                                   rtol=1e-5)


def test_zero_temperature_limit():
    # as T -> 0 the spectrum tends to the T = 0 exact profile on the loss side; the cut-off
    # of the lower-edge enhancement moves weight within ~k_BT of the edge, so the difference
    # falls as about sqrt(T) (measured 0.50, 0.062, 0.013, 0.0011 of the peak at 1, 0.1,
    # 0.01, 1e-4 K for sigma = 0.1 meV)
    J, D = np.array([[2.0]]), np.array([[1.0]])
    E = np.linspace(-4.0, 7.0, 45)
    for q in (1.2, 2.6):
        qa, s = np.full(E.size, q), np.full(E.size, 0.1)
        t0 = cs.spinon_spectrum(qa, E, s, 0.0, J, D)[0]
        diffs = [np.max(np.abs(cs.spinon_spectrum(qa, E, s, T, J, D, thermal_edge="everywhere")[0]
                               - t0)) / t0.max() for T in (1.0, 0.1, 0.01, 1e-4)]
        assert all(b < 0.5 * a for a, b in zip(diffs[:-1], diffs[1:])), diffs
        assert diffs[-1] < 2e-3 and diffs[-1] < 0.15 * diffs[-2], diffs
    w = np.linspace(3.0, 3.5, 8)            # inside [wL, wU] = [2.93, 3.55] meV
    dens0 = cs.spinon_density(np.full(8, 1.2), w, 0.0, J, D)
    for edge in ("near_pi", "everywhere"):
        dens = cs.spinon_density(np.full(8, 1.2), w, 1e-3, J, D, thermal_edge=edge)
        np.testing.assert_allclose(dens, dens0, rtol=1e-4)


@pytest.mark.parametrize("T", [0.0, 4.0])
def test_continuous_in_delta_through_one(T):
    # the edges, the amplitudes and the pi-shifted sheet (weight ~ (Delta - 1)^2) are
    # continuous at Delta = 1, and so is the exact-profile spectrum
    q = np.repeat(np.array([0.4, 1.5, 2.7]), 30)
    E = np.tile(np.linspace(-1.0, 4.0, 30), 3)
    s = np.full(E.size, 0.06)
    J = np.array([[1.0], [1.0], [1.0]])
    D = np.array([[1 - 1e-6], [1.0], [1 + 1e-6]])
    out = cs.spinon_spectrum(q, E, s, T, J, D)
    assert np.max(np.abs(out[0] - out[1])) < 1e-4 * out[1].max()
    assert np.max(np.abs(out[2] - out[1])) < 1e-4 * out[1].max()


def test_family_option_and_card(tmp_path):
    pts = SpectralPoints(Q_par=np.linspace(0.1, 1.5, 20), Q_a=np.zeros(20), Q_b=np.zeros(20),
                         d=3.0, a_perp=5.0, b_perp=5.0, energy=np.linspace(0.5, 6, 20),
                         sigma=np.full(20, 0.2), temperature=3.0)
    p = {"J": np.array([[1.5], [2.0]]), "delta": np.array([[1.0], [1.5]]),
         "g": np.array([[2.1], [2.1]])}
    exact = SpinonFamily().unpolarised_spectrum(p, pts)
    muller = SpinonFamily(line_shape="muller").unpolarised_spectrum(p, pts)
    np.testing.assert_array_equal(
        exact, cs.spinon_spectrum(pts.q_par, pts.energy, pts.sigma, 3.0, p["J"], p["delta"],
                                  line_shape="exact"))
    np.testing.assert_array_equal(
        muller, cs.spinon_spectrum(pts.q_par, pts.energy, pts.sigma, 3.0, p["J"], p["delta"],
                                   line_shape="muller"))
    assert np.max(np.abs(exact - muller)) > 0.05 * muller.max()
    assert SpinonFamily.chain_only
    with pytest.raises(InputError, match="line_shape"):
        SpinonFamily(line_shape="lorentzian")
    from evidence1d.cards import load_card
    from evidence1d.families import FAMILY_CLASSES
    from evidence1d.problem import _make_family
    from pathlib import Path
    card = load_card(Path(__file__).resolve().parents[2] / "models" / "spinon_continuum.yaml")
    assert card.options == {"line_shape": "exact", "anisotropy_axis": "par"}

    class _Sample:
        spin = 0.5

    fam = _make_family(FAMILY_CLASSES[card.family], card, _Sample())
    assert fam.line_shape == "exact" and fam.anisotropy_axis == "par"


def test_case_file_overrides_the_line_shape(valid_case, capsys):
    import evidence1d
    from casefactory import check_command, edit_file
    edit_file(valid_case, "models:\n  - spinon_continuum",
              "models:\n  - {name: spinon_continuum, options: {line_shape: muller}}")
    case = evidence1d.load_case(valid_case)
    assert case.problem("spinon_continuum").family.line_shape == "muller"
    edit_file(valid_case, "line_shape: muller", "line_shape: gaussian")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "line_shape" in err and len(err.splitlines()) == 1, err
    # the anisotropy axis is a case-file option too, checked with a one-line error
    edit_file(valid_case, "line_shape: gaussian", "anisotropy_axis: a")
    assert evidence1d.load_case(valid_case).problem("spinon_continuum").family \
        .anisotropy_axis == "a"
    from evidence1d.cli import main
    capsys.readouterr()
    assert main(["check", str(valid_case)]) == 0       # check shows the options in force
    assert "line_shape=exact, anisotropy_axis=a" in capsys.readouterr().out
    edit_file(valid_case, "anisotropy_axis: a", "anisotropy_axis: c")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "anisotropy_axis" in err and len(err.splitlines()) == 1, err

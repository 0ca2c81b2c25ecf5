"""Renormalised spin waves of coupled S = 1/2 chains: dispersion limits, sum-rule weights
(checked by exact diagonalisation), gradient, damping and momentum resolution."""
from __future__ import annotations

import functools

import numpy as np
import pytest

from evidence1d.physics import magnon, magnon_lineshape as ml, ordered_magnon as om
from evidence1d.units import K_B_MEV


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def test_des_cloizeaux_pearson_at_zero_interchain_coupling():
    # J_perp = 0, Δ = 1: the mode is (π/2) J |sin q| (des Cloizeaux & Pearson, Phys. Rev.
    # 128, 2131 (1962)), for both geometries and any interchain phase.
    q = np.linspace(0.05, 2 * np.pi - 0.05, 60)
    qa = np.linspace(0.0, 3.0, 60)
    for z in (4, 2):
        w = om.magnon_modes(q, qa, qa[::-1], col(2.0, 7.0), col(0.0, 0.0), col(1.0, 1.0), z)[0]
        np.testing.assert_allclose(w, np.pi / 2 * col(2.0, 7.0) * np.abs(np.sin(q)),
                                   rtol=1e-12)


def test_renormalisation_limits():
    # Small J_perp: Z = π/2 and f = (m_0/S)² with Schulz's m_0 = 1.0174 √(z J_perp / 4J)
    # (Schulz, PRL 77, 2790 (1996), from memory); large J_perp: plain spin waves (Z, f → 1).
    Z, f, m2 = om.renormalisation(col(1.0, 1.0, 1.0), col(0.0, 1e-6, 1e4), 4)
    assert Z[0, 0] == np.pi / 2 and f[0, 0] == 0.0 and m2[0, 0] == 0.0
    np.testing.assert_allclose(f[1, 0], 4 * 1.0174 ** 2 * 1e-6, rtol=1e-5)
    np.testing.assert_allclose(m2[1, 0], 1.0174 ** 2 * 1e-6, rtol=1e-5)
    np.testing.assert_allclose([Z[2, 0], f[2, 0]], [1.0, 1.0], rtol=1e-4)
    assert m2[2, 0] <= 0.25
    # z_perp enters only as z J_perp
    np.testing.assert_allclose(om.renormalisation(3.0, 0.2, 2), om.renormalisation(3.0, 0.1, 4))


def test_interchain_scale_matches_chain_in_staggered_mean_field():
    # The zone-boundary transverse energy at q = π, Q_perp = 0 is √2 M in the random-phase
    # treatment (Essler, Tsvelik & Delfino, PRB 56, 11001 (1997)), M the soliton mass of the
    # chain in the staggered field h = z J_perp m_0: M ≈ 1.85 J (h/J)^{2/3} ln^{1/6}(J/h)
    # (Affleck & Oshikawa, PRB 60, 1038 (1999)); all constants from memory, so 15 %.
    for r in (0.003, 0.01, 0.03, 0.1):
        w = om.magnon_modes(np.array([np.pi]), np.array([0.0]), np.array([0.0]), col(1.0),
                            col(r), col(1.0), 4)[0][0, 0]
        h = 4 * r * 1.0174 * np.sqrt(r)
        M = 1.85 * h ** (2 / 3) * np.log(1 / h) ** (1 / 6)
        assert abs(w / np.sqrt(2) / M - 1) < 0.15, r


# ------------------------------------------------------------ exact diagonalisation (ED)
@functools.lru_cache(maxsize=8)
def _ring(n, delta):
    """Ground state of the periodic S = 1/2 XXZ ring (J = 1) by sparse Lanczos, with H."""
    import scipy.sparse as sp
    from scipy.sparse.linalg import eigsh
    s = np.arange(2 ** n)
    bits = (s[:, None] >> np.arange(n)) & 1
    sz = 0.5 - bits
    rows, cols = [s], [s]
    vals = [delta * sum(sz[:, i] * sz[:, (i + 1) % n] for i in range(n))]
    for i in range(n):                       # S^x S^x + S^y S^y flips antiparallel pairs
        j = (i + 1) % n
        anti = bits[:, i] != bits[:, j]
        rows.append((s ^ ((1 << i) | (1 << j)))[anti])
        cols.append(s[anti])
        vals.append(np.full(anti.sum(), 0.5))
    H = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                      shape=(2 ** n, 2 ** n))
    E, V = eigsh(H, k=1, which="SA", tol=1e-13)
    g = V[:, 0]
    cz = float(np.sum(g * g * sz[:, 0] * sz[:, 1]))
    cx = float(0.25 * np.sum(g[s ^ 3] * g))
    return H, float(E[0]), g, cz, cx


@pytest.mark.parametrize("delta", [1.0, 2.0])
def test_first_moment_formula_against_exact_diagonalisation(delta):
    # On a 12-site ring, ⟨0|S^x_{-q} (H − E_0) S^x_q|0⟩ / N (the first moment of S^xx,
    # Σ_n (E_n − E_0)|⟨n|S^x_q|0⟩|²/N) equals the double-commutator formula
    # J[−c_x − Δ c_z + cos q (c_z + Δ c_x)] with the ring's own nearest-neighbour
    # correlations (Hohenberg & Brinkman, PRB 10, 128 (1974)) — an identity on any ring.
    n = 12
    H, E0, g, cz, cx = _ring(n, delta)
    s = np.arange(2 ** n)
    for k in (1, 4, 6):
        q = 2 * np.pi * k / n
        v = sum(np.exp(1j * q * i) * 0.5 * g[s ^ (1 << i)] for i in range(n))   # S^x_q|0⟩
        m1 = np.real(np.vdot(v, H @ v) - E0 * np.vdot(v, v)) / n
        formula = -cx - delta * cz + np.cos(q) * (cz + delta * cx)
        np.testing.assert_allclose(m1, formula, rtol=1e-8)


def test_chain_bond_correlations():
    # Δ = 1: c_z = c_x = (1/4 − ln 2)/3 by SU(2) symmetry and Hulthén's energy (1938).
    cz, cx = om.chain_bond_correlations(np.array([1.0]))
    np.testing.assert_allclose([cz[0], cx[0]], (0.25 - np.log(2)) / 3, rtol=1e-7)
    # Δ = 3 (gapped, short correlation length): the infinite-chain values against rings of
    # 10, 12, 14 sites by exact diagonalisation, Aitken-extrapolated in N (the finite-size
    # corrections fall geometrically, ratio ~0.6 per two sites).
    seq = np.array([_ring(n, 3.0)[3:] for n in (10, 12, 14)])
    d1, d2 = seq[1] - seq[0], seq[2] - seq[1]
    limit = seq[2] - d2 * d2 / (d2 - d1)
    cz, cx = om.chain_bond_correlations(np.array([3.0]))
    np.testing.assert_allclose([cz[0], cx[0]], limit, rtol=5e-3)
    # Ising limit: c_z → −1/4 (Néel state)
    assert -0.25 < cz[0] < -0.22


def test_heisenberg_chain_first_moment_is_hohenberg_brinkman():
    # J_perp = 0, Δ = 1: M_1 = −(2/3) e_0 J (1 − cos q), e_0 = 1/4 − ln 2 (Hohenberg &
    # Brinkman 1974; Hulthén 1938), and the mode weight is M_1 / ω.
    q = np.linspace(0.1, 3.0, 20)
    z = np.zeros_like(q)
    m1 = om.transverse_first_moment(q, z, z, col(3.0), col(0.0), col(1.0))
    np.testing.assert_allclose(m1[0], -(2 / 3) * (0.25 - np.log(2)) * 3.0 * (1 - np.cos(q)),
                               rtol=1e-7)
    w = om.magnon_modes(q, z, z, col(3.0), col(0.0), col(1.0))[3]
    np.testing.assert_allclose(w[0], m1[0] / (np.pi / 2 * 3.0 * np.sin(q)), rtol=1e-7)


def test_sum_rule_reduces_to_spin_wave_weight_for_classical_correlations():
    # With classical Néel correlations (c_z = −S², c_x = 0, m_0 = S) the first moment is
    # S²[J(Δ − cos q) + J_perp Σ_d (Δ − cos q_d)] = ω w_LSWT (White 2007, Ch. 6), checked
    # against magnon.one_magnon_weight for both geometries.
    rng = np.random.default_rng(2)
    q = [rng.uniform(0, 2 * np.pi, 25) for _ in range(3)]
    J, Jp, D, S = col(2.0), col(0.3), col(1.2), 0.5
    for z in (4, 2):
        perp = (D - np.cos(q[1])) + ((D - np.cos(q[2])) if z == 4 else 0.0)
        m1 = S * S * (J * (D - np.cos(q[0])) + Jp * perp)
        ref = magnon.one_magnon_weight(*q, J, Jp, D, S, z) * magnon.dispersion(*q, J, Jp, D,
                                                                                S, z)
        np.testing.assert_allclose(m1, ref, rtol=1e-12)


@pytest.mark.parametrize("z_perp", [4, 2])
def test_renormalised_gradient_against_finite_differences(z_perp):
    rng = np.random.default_rng(9)
    q = [rng.uniform(0, 2 * np.pi, 20) for _ in range(3)]
    J, Jp, D = col(5.0, 0.7), col(0.1, 0.5), col(1.05, 2.0)
    w, dq, dqa, _ = om.magnon_modes(*q, J, Jp, D, z_perp)
    h = 1e-6
    for i, grad in ((0, dq), (1, dqa)):
        up = [x.copy() for x in q]
        dn = [x.copy() for x in q]
        up[i] += h
        dn[i] -= h
        fd = (om.magnon_modes(*up, J, Jp, D, z_perp)[0]
              - om.magnon_modes(*dn, J, Jp, D, z_perp)[0]) / (2 * h)
        np.testing.assert_allclose(grad, fd, rtol=1e-6, atol=1e-8)


def _line(E, eta=None, sigma=0.02, T=5.0, qp=1.1, qa=0.4, sq=0.0, sqa=0.0):
    one = np.ones_like(E)
    return om.transverse_spectrum(qp * one, qa * one, 0.3 * one, E, sigma * one, T, col(2.0),
                                  col(0.2), col(1.1), 4, damping=eta, sigma_q_par=sq,
                                  sigma_q_a=sqa)


def test_detailed_balance_damping_and_area():
    # Sharp mode: areas w [n + 1] on the loss side, w n on the gain side (Lovesey 1984,
    # Ch. 4).
    E = np.linspace(-40, 40, 160001)
    dE = E[1] - E[0]
    w, _, _, wt = om.magnon_modes(np.array([1.1]), np.array([0.4]), np.array([0.3]),
                                  col(2.0), col(0.2), col(1.1), 4)
    w, wt = w[0, 0], wt[0, 0]
    kT = K_B_MEV * 5.0
    n = 1 / np.expm1(w / kT)
    s = _line(E)[0]
    np.testing.assert_allclose(s[E > 0].sum() * dE, wt * (n + 1), rtol=1e-6)
    np.testing.assert_allclose(s[E < 0].sum() * dE, wt * n, rtol=1e-6)
    # Damped mode, η = 0.2: S = G_σ ∗ W (n(E)+1)[L(E−ω) − L(E+ω)], W = w π/(2 arctan(1/η));
    # the resolution conserves area, so the area is the integral of that closed form
    # (scipy quad), and at T = 0 the loss side carries exactly w.
    from scipy import integrate
    eta = 0.2
    g = eta * w
    W = wt * np.pi / (2 * np.arctan(1 / eta))
    L = lambda x: g / np.pi / (x * x + g * g)                             # noqa: E731
    f = lambda e: W * (L(e - w) - L(e + w)) / -np.expm1(-e / kT)           # noqa: E731
    ref = sum(integrate.quad(f, a, b, limit=400, points=pts)[0] for a, b, pts in
              ((-200, -1e-9, [-w]), (1e-9, 200, [w])))
    E = np.linspace(-200, 200, 800001)
    sd = _line(E, eta=col(eta))[0]
    np.testing.assert_allclose(sd.sum() * (E[1] - E[0]), ref, rtol=2e-3)
    s0 = _line(E, eta=col(eta), T=0.0)[0]
    np.testing.assert_allclose(s0[E > 0].sum() * (E[1] - E[0]), wt, rtol=2e-3)
    # with a resolution much narrower than the line the shape is the closed form itself,
    # and detailed balance holds point by point
    e = np.array([-3.0, -w, -0.5, -0.01, 0.01, 0.5, w, 3.0])
    narrow = _line(e, eta=col(eta), sigma=1e-4)[0]
    np.testing.assert_allclose(narrow, f(e), rtol=1e-6)
    np.testing.assert_allclose(narrow[:4] / narrow[::-1][:4], np.exp(-np.abs(e[:4]) / kT),
                               rtol=1e-6)


def test_momentum_resolution_against_brute_force_average():
    # σ_eff² = σ² + (∂ω/∂q σ_q)² + (∂ω/∂q_a σ_qa)² (Cooper & Nathans, Acta Cryst. 23, 357
    # (1967), linearised dispersion) against a brute-force average of the sharp line over a
    # Gaussian distribution of phases (product Gauss–Hermite rule, 40 × 40 nodes).
    E = np.linspace(0.5, 6.0, 221)
    sq, sqa = 0.015, 0.03
    x, wx = np.polynomial.hermite_e.hermegauss(40)
    wx = wx / wx.sum()
    brute = 0.0
    for xi, wi in zip(x, wx):
        for xj, wj in zip(x, wx):
            brute = brute + wi * wj * _line(E, qp=1.1 + sq * xi, qa=0.4 + sqa * xj, T=0.0)
    fast = _line(E, sq=sq, sqa=sqa, T=0.0)
    sharp = _line(E, T=0.0)
    assert np.max(np.abs(fast - sharp)) > 0.2 * np.max(sharp)      # the effect is visible
    np.testing.assert_allclose(fast, brute, rtol=0, atol=0.01 * np.max(brute))


def test_voigt_pair_and_partial_fractions():
    # σ → 0: V and D are the absorptive and dispersive Lorentzians, and the identity the
    # kernel's exact part rests on, [L(E−ω) − L(E+ω)]/E = [ω(L₋ + L₊) − Γ(D₋ − D₊)]/(ω²+Γ²)
    # (partial fractions), holds.
    E = np.linspace(-3, 3, 12)
    w, g, s = 0.7, 0.3, 1e-5
    L = lambda x: g / np.pi / (x * x + g * g)                             # noqa: E731
    vm, dm = ml.voigt_pair(E - w, s, g)
    vp, dp = ml.voigt_pair(E + w, s, g)
    np.testing.assert_allclose(vm, L(E - w), rtol=1e-8)
    np.testing.assert_allclose(dm, (E - w) / np.pi / ((E - w) ** 2 + g * g), rtol=1e-8)
    np.testing.assert_allclose((w * (vm + vp) - g * (dm - dp)) / (w * w + g * g),
                               (L(E - w) - L(E + w)) / E, rtol=1e-8)


def test_voigt_tail_expansion_against_faddeeva():
    # Exact Voigt (scipy.special.voigt_profile, Faddeeva function; Abramowitz & Stegun
    # 7.4.13) against the kernel's profile, which switches to the Gaussian-moment expansion
    # beyond 10 σ: relative error < 2e-5 wherever the Lorentzian part matters, and no more
    # than the dropped Gaussian core (< 1e-21 / σ) anywhere.
    from scipy.special import voigt_profile
    sigma = 0.07
    x = np.concatenate([-np.geomspace(1e-4, 200, 400), np.geomspace(1e-4, 200, 400)])
    from scipy.special import wofz
    for g in (0.0, 1e-6, 0.01, 0.07, 0.7, 5.0):
        got, disp = ml.voigt_pair(x, sigma, g)
        ref = voigt_profile(x, sigma, g)
        np.testing.assert_allclose(got, ref, rtol=2e-5, atol=1e-21 / sigma)
        if g > 0:          # dispersive part: Im w(z)/(σ√(2π)), z = (x + iΓ)/(σ√2)
            ref_d = wofz((x + 1j * g) / (np.sqrt(2) * sigma)).imag / (np.sqrt(2 * np.pi) * sigma)
            np.testing.assert_allclose(disp, ref_d, rtol=2e-5, atol=1e-21 / sigma)


@pytest.mark.parametrize("q, delta, eta, T, sigma", [
    ((1.1, 0.4, 0.3), 1.1, 0.3, 5.0, 0.08), ((1.1, 0.4, 0.3), 1.1, 1.0, 20.0, 0.08),
    ((1.1, 0.4, 0.3), 1.1, 0.5, 0.0, 0.3), ((3.05, 0.4, 0.3), 1.1, 0.5, 2.0, 0.08),
    ((3.1, np.pi, np.pi), 1.0, 0.3, 2.0, 0.08), ((3.135, np.pi, np.pi), 1.0, 0.5, 5.0, 0.08),
    ((3.1, np.pi, np.pi), 1.0, 0.5, 0.0, 0.1), ((3.1, np.pi, np.pi), 1.0, 1.0, 0.1, 0.3),
    ((3.1, np.pi, np.pi), 1.0, 0.5, 0.3, 0.03)])
def test_damped_line_against_brute_force_resolution_convolution(q, delta, eta, T, sigma):
    # S = G_σ ∗ W (n(E')+1)[L(E'−ω) − L(E'+ω)] by a dense trapezoid convolution over E'
    # (±8σ, independent of the kernel's split into Faddeeva parts and a remainder), for
    # modes far above the resolution width and, near a Goldstone point, at and inside it,
    # from T = 0 to the classical regime: within 1 % of the peak.
    from scipy import integrate
    E = np.linspace(-3.0, 6.0, 181)
    args = tuple(np.array([v]) for v in q) + (col(2.0), col(0.2), col(delta))
    w, _, _, wt = om.magnon_modes(*args, 4)
    w, wt = w[0, 0], wt[0, 0]
    g, kT = eta * w, K_B_MEV * T
    W = wt * np.pi / (2 * np.arctan(1 / eta))
    u = np.linspace(-8 * sigma, 8 * sigma, 3201)                       # E' − E
    Ep = E[:, None] + u[None, :]
    L = lambda x: g / np.pi / (x * x + g * g)                             # noqa: E731
    with np.errstate(divide="ignore", invalid="ignore"):
        if kT > 0:
            f = W * (L(Ep - w) - L(Ep + w)) / -np.expm1(-Ep / kT)
            f = np.where(Ep == 0, W * kT * 4 * g * w / np.pi / (w * w + g * g) ** 2, f)
        else:                                                  # n + 1 = Θ(E') at T = 0
            f = W * (L(Ep - w) - L(Ep + w)) * (Ep > 0)
    brute = integrate.trapezoid(f * np.exp(-0.5 * (u / sigma) ** 2), u, axis=1)
    brute /= np.sqrt(2 * np.pi) * sigma
    one = np.ones_like(E)
    got = om.transverse_spectrum(*(v * one for v in q), E, sigma * one, T, col(2.0),
                                 col(0.2), col(delta), 4, damping=col(eta))[0]
    np.testing.assert_allclose(got, brute, rtol=0, atol=1e-2 * brute.max())

"""Two-spinon continuum bounds, gap and ground-state energy against published results."""
import numpy as np
import pytest
from scipy.special import ellipk

from evidence1d.physics import chain, chain_ground_state

ONE = np.array([[1.0]])


def _eps_brute(q, delta, n=40001):
    """Brute-force extremes of eps(p1) + eps(q - p1), eps(p) = I sqrt(1 - k^2 cos^2 p)."""
    phi = np.arccosh(delta)
    # modulus from K(k')/K(k) = phi/pi by bisection on scipy.special.ellipk (m = k^2)
    lo, hi = 1e-12, 1 - 1e-15
    for _ in range(200):
        m = 0.5 * (lo + hi)
        if ellipk(1 - m) / ellipk(m) > phi / np.pi:
            lo = m
        else:
            hi = m
    I = np.sinh(phi) * ellipk(m) / np.pi
    p = np.linspace(0, 2 * np.pi, n)[:, None]
    e = lambda x: I * np.sqrt(1 - m * np.cos(x) ** 2)
    s = e(p) + e(q[None, :] - p)
    return s.min(axis=0), s.max(axis=0)


@pytest.mark.parametrize("delta", [1.1, 1.3, 1.5, 2.0, 3.0, 8.0])
def test_bounds_gapped_brute_force(delta):
    # Johnson, Krinsky & McCoy, Phys. Rev. A 8, 2526 (1973): bounds = extremes over p1
    q = np.linspace(-5, 9, 141)
    lo, up = chain.spinon_bounds(q, ONE, np.array([[delta]]))
    blo, bup = _eps_brute(q, delta)
    np.testing.assert_allclose(lo[0], blo, atol=5e-5)  # brute-force grid and modulus limit
    np.testing.assert_allclose(up[0], bup, atol=5e-5)


def test_bounds_heisenberg_and_xx_limits():
    # Delta = 1: (pi J/2)|sin q| and pi J |sin(q/2)| (des Cloizeaux & Pearson, PR 128, 2131, 1962)
    q = np.linspace(-7, 7, 57)
    J = np.array([[2.5]])
    lo, up = chain.spinon_bounds(q, J, ONE)
    np.testing.assert_allclose(lo[0], np.pi * 2.5 / 2 * np.abs(np.sin(q)), atol=1e-12)
    np.testing.assert_allclose(up[0], np.pi * 2.5 * np.abs(np.sin(q / 2)), atol=1e-12)
    # Delta = 0: J|sin q| and 2J|sin(q/2)| (free fermions; des Cloizeaux & Gaudin 1966)
    lo, up = chain.spinon_bounds(q, J, np.array([[0.0]]))
    np.testing.assert_allclose(lo[0], 2.5 * np.abs(np.sin(q)), atol=1e-12)
    np.testing.assert_allclose(up[0], 2 * 2.5 * np.abs(np.sin(q / 2)), atol=1e-12)


def test_continuity_at_heisenberg_point():
    # lower edge and line-shape edges continuous through Delta = 1 (des Cloizeaux & Gaudin
    # 1966; Johnson et al. 1973: k -> 1, k' -> 0, I -> pi J / 2)
    q = np.linspace(0, 2 * np.pi, 73)
    d = np.array([[1 - 1e-6], [1.0], [1 + 1e-6]])
    lo, up = chain.spinon_bounds(q, np.ones((3, 1)), d)
    assert np.all(np.isfinite(lo)) and np.all(np.isfinite(up))
    np.testing.assert_allclose(lo[0], lo[1], atol=1e-5)
    np.testing.assert_allclose(lo[2], lo[1], atol=1e-5)
    wl, top = chain.muller_edges(q, np.ones((3, 1)), d)
    np.testing.assert_allclose(top[0], top[1], atol=1e-5)
    np.testing.assert_allclose(top[2], top[1], atol=1e-5)
    # the exact upper edge agrees where the pi-shifted part does not dominate (|q| >= pi/2)
    far = np.abs(np.cos(q / 2)) <= np.sin(np.abs(q / 2)) + 1e-12
    np.testing.assert_allclose(up[2][far], up[1][far], atol=1e-5)


@pytest.mark.parametrize("delta", [1.5, 2.0, 5.0])
def test_gap_series(delta):
    # des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966): J sinh(phi) sum (-1)^n / cosh(n phi)
    phi = np.arccosh(delta)
    n = np.arange(-200, 201)
    series = np.sinh(phi) * np.sum((-1.0) ** n / np.cosh(n * phi))
    assert chain.spinon_gap(1.0, delta) == pytest.approx(series, rel=1e-10)


def test_gap_values_and_limits():
    # values quoted from des Cloizeaux & Gaudin (1966) (from memory, via the project design)
    assert chain.spinon_gap(1.0, 1.5) == pytest.approx(0.0865894, abs=2e-7)
    assert chain.spinon_gap(1.0, 2.0) == pytest.approx(0.3898023, abs=2e-7)
    assert chain.spinon_gap(3.0, 2.0) == pytest.approx(3 * 0.3898023, abs=1e-6)
    np.testing.assert_array_equal(chain.spinon_gap(1.0, np.array([0.0, 0.5, 1.0])), 0.0)
    # Ising limit: gap -> J (Delta - 2) (two domain walls; from memory)
    assert chain.spinon_gap(1.0, 50.0) == pytest.approx(48.0, rel=1e-3)


def test_modulus_relation_with_scipy_ellipk():
    # K(k')/K(k) = phi/pi and I = (J/pi) sinh(phi) K(k) (Johnson et al. 1973), scipy.special.ellipk
    d = np.array([[1.2], [1.5], [2.0], [4.0], [20.0]])
    phi, k, kp, iJ = chain._ising_parameters(d)
    np.testing.assert_allclose(ellipk(kp ** 2) / ellipk(k ** 2), phi / np.pi, rtol=1e-9)
    np.testing.assert_allclose(iJ, np.sinh(phi) * ellipk(k ** 2) / np.pi, rtol=1e-9)
    np.testing.assert_allclose(k ** 2 + kp ** 2, 1.0, rtol=1e-12)


def test_ground_state_energy():
    e0 = chain.xxz_ground_state_energy
    assert e0(1.0) == pytest.approx(0.25 - np.log(2), abs=1e-14)       # Hulthen (1938)
    assert e0(0.0) == pytest.approx(-1 / np.pi, abs=1e-10)            # XX chain, free fermions
    # Delta = 1/2: -3/8 (Razumov & Stroganov, J. Phys. A 34, 3185 (2001); from memory)
    assert e0(0.5) == pytest.approx(-0.375, abs=1e-9)
    # Ising limit -Delta/4 - 1/(4 Delta) + ... (second-order perturbation theory; analytic)
    assert e0(40.0) == pytest.approx(-10 - 1 / 160, abs=1e-5)
    # continuity and slope <SzSz> = d e0/d Delta from both sides of Delta = 1
    h = 1e-6
    left = (e0(1.0) - e0(1 - h)) / h
    right = (e0(1 + h) - e0(1.0)) / h
    assert left == pytest.approx(right, rel=1e-3)
    assert left == pytest.approx((0.25 - np.log(2)) / 3, rel=1e-3)    # isotropy at Delta = 1


def test_first_moment_exact_diagonalisation():
    # the sum rule M1 = -2 (1 - cos q) E0/N holds on any ring at Delta = 1
    # (Hohenberg & Brinkman, PRB 10, 128, 1974); check the identity by exact diagonalisation
    L = 8
    dim = 2 ** L
    sz = np.array([[0.5, 0], [0, -0.5]])
    sp = np.array([[0, 1.0], [0, 0]])
    def site(op, i):
        out = np.array([[1.0]])
        for j in range(L):
            out = np.kron(out, op if j == i else np.eye(2))
        return out
    Z = [site(sz, i) for i in range(L)]
    P = [site(sp, i) for i in range(L)]
    H = sum(Z[i] @ Z[(i + 1) % L] + 0.5 * (P[i] @ P[(i + 1) % L].T + P[i].T @ P[(i + 1) % L])
            for i in range(L))
    w, v = np.linalg.eigh(H)
    g0 = v[:, 0]
    for m in [1, 3, 4]:
        q = 2 * np.pi * m / L
        Sq = sum(np.exp(-1j * q * i) * Z[i] for i in range(L))
        amp = np.abs(v.conj().T @ (Sq @ g0)) ** 2 / L
        m1_zz = np.sum((w - w[0]) * amp)
        expected = chain.first_moment(np.array([q]), ONE, ONE)[0, 0] / 3  # one component
        assert 3 * m1_zz == pytest.approx(-2 * (1 - np.cos(q)) * w[0] / L, rel=1e-10)
        # the kernel uses the infinite-chain E0 (Hulthen), close to the ring's for L = 8
        assert m1_zz == pytest.approx(expected, rel=0.07)


def test_tabulated_ground_state_energy():
    # the spline used by first_moment against the published values (Hulthen 1938; XX chain
    # -1/pi, free fermions; Razumov & Stroganov, J. Phys. A 34, 3185 (2001), from memory)
    # and against the direct evaluation everywhere, inside and outside the tabulated range
    fast = chain_ground_state._ground_state_energy_fast
    assert fast(1.0) == pytest.approx(0.25 - np.log(2), abs=1e-11)
    assert fast(0.0) == pytest.approx(-1 / np.pi, abs=1e-10)
    assert fast(0.5) == pytest.approx(-0.375, abs=1e-9)
    d = np.concatenate([np.random.default_rng(4).uniform(-0.99, 6.0, 400),
                        [-0.9, 0.999999, 1.0, 1.000001, 4.0]])
    np.testing.assert_allclose(fast(d), chain.xxz_ground_state_energy(d), rtol=0,
                               atol=chain_ground_state._E0_ERROR)
    assert fast(d[:7].reshape(7, 1)).shape == (7, 1)
    q = np.array([0.3, 2.0])
    D = d[:5, None]
    # the total first moment from the direct E0 and its finite-difference slope (Hellmann-
    # Feynman C_zz = dE0/dDelta; Hohenberg & Brinkman, PRB 10, 128, 1974)
    h = 1e-4
    e0 = chain.xxz_ground_state_energy(D)
    czz = (chain.xxz_ground_state_energy(D + h) - chain.xxz_ground_state_energy(D - h)) / (2 * h)
    cxx = (e0 - D * czz) / 2
    total = (-2 * (1 - np.cos(q)) * cxx
             + 2 * ((D - 1) * (cxx - czz) - (1 - np.cos(q)) * (D * cxx + czz)))
    np.testing.assert_allclose(chain.first_moment(q, np.ones((5, 1)), D), total, rtol=0,
                               atol=1e-7)

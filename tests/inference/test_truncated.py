"""Box probabilities, truncated draws and the box-constrained mode of multivariate normals,
against independent references (scipy.stats, scipy.integrate, scipy.optimize)."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, optimize, stats

from evidence1d.inference.truncated import (box_mode, bvn_cdf, log_box_probability,
                                            log_ndtr_diff, truncated_draw,
                                            truncated_normal_ppf)


def _cov2(s1, s2, r):
    return np.array([[s1 * s1, r * s1 * s2], [r * s1 * s2, s2 * s2]])


def test_log_ndtr_diff_in_both_tails():
    # ln P(a ≤ Z ≤ b) against scipy.stats.norm's log survival and log CDF (one-sided limits)
    a = np.array([-np.inf, -3.0, 5.0, 30.0, -40.0, -1.0])
    b = np.array([-35.0, 2.0, np.inf, np.inf, -38.0, -1.0])
    want = [stats.norm.logcdf(-35.0), np.log(stats.norm.cdf(2) - stats.norm.cdf(-3)),
            stats.norm.logsf(5.0), stats.norm.logsf(30.0),
            stats.norm.logcdf(-38.0) + np.log1p(-np.exp(stats.norm.logcdf(-40.0)
                                                        - stats.norm.logcdf(-38.0))),
            -np.inf]
    np.testing.assert_allclose(log_ndtr_diff(a, b), want, rtol=1e-12)


@pytest.mark.parametrize("rho", [-0.995, -0.6, 0.0, 0.35, 0.9, 0.999])
def test_bivariate_cdf_against_scipy(rho):
    # Owen (1956), Ann. Math. Statist. 27, 1075, eq. 2.1, against scipy's implementation
    # of Genz's algorithm (Genz, Stat. Comput. 14, 251 (2004))
    pts = [(0.5, -1.0), (-2.0, -3.0), (0.0, 0.0), (1.5, 2.5), (0.0, -1.2), (-0.7, 0.0),
           (3.0, -0.2)]
    h, k = np.array(pts).T
    ours = bvn_cdf(h, k, rho)
    ref = [stats.multivariate_normal([0, 0], _cov2(1, 1, rho)).cdf([x, y]) for x, y in pts]
    np.testing.assert_allclose(ours, ref, atol=1e-8)
    assert bvn_cdf(np.inf, 0.3, rho) == pytest.approx(stats.norm.cdf(0.3), abs=1e-15)
    assert bvn_cdf(-np.inf, 0.3, rho) == 0.0


def _ref_2d(m, C, lo, hi):
    """ln P(box) by scipy.integrate.quad over the second coordinate of the log-integrand
    φ(x₂) P(lo₁ ≤ X₁ ≤ hi₁ | x₂) (scipy.stats log survival functions), with the second
    coordinate's interval finite."""
    s1, s2 = np.sqrt(np.diag(C))
    r = C[0, 1] / (s1 * s2)
    cs = s1 * np.sqrt(1 - r * r)

    def logf(x):
        cm = m[0] + r * s1 * (x - m[1]) / s2
        lc = stats.norm.logsf(lo[0], cm, cs)
        if np.isfinite(hi[0]):
            lc = lc + np.log1p(-np.exp(stats.norm.logsf(hi[0], cm, cs) - lc))
        return stats.norm.logpdf(x, m[1], s2) + lc

    xs = np.linspace(lo[1], hi[1], 4001)
    lv = logf(xs)
    c = lv.max()
    val, _ = integrate.quad(lambda x: np.exp(logf(x) - c), lo[1], hi[1],
                            points=[xs[np.argmax(lv)]], limit=500, epsabs=0, epsrel=1e-11)
    return np.log(val) + c


def test_two_dimensional_box_probability_into_the_far_tails(rng):
    # positivity of the first coordinate, [0, 3] for the second; means up to 8 sd outside,
    # |ρ| up to 0.99: P from 1 down to ~1e-30 (the Owen and the Gauss–Legendre branches)
    lo, hi = np.array([0.0, 0.0]), np.array([np.inf, 3.0])
    worst = 0.0
    for _ in range(60):
        s = np.exp(rng.normal(0, 1, 2))
        C = _cov2(s[0], s[1], rng.uniform(-0.99, 0.99))
        m = rng.uniform(-8, 4, 2) * s
        m[1] = rng.uniform(-4, 7) * s[1]
        ref = _ref_2d(m, C, lo, hi)
        if ref < -300:
            continue
        ours = log_box_probability(m[None], C[None], lo, hi)[0]
        worst = max(worst, abs(ours - ref))
    # measured: below 1e-6 nats (the Gauss–Legendre branch converges algebraically)
    assert worst < 1e-5


@pytest.mark.parametrize("dim", [3, 4])
def test_higher_dimensional_orthant_against_scipy(dim, rng):
    # separation of variables on a fixed lattice against scipy.stats.multivariate_normal.cdf
    # (Genz's algorithm with its own error control; Genz & Bretz 2009, §4.1)
    for _ in range(5):
        A = rng.normal(size=(dim, dim))
        C = A @ A.T + 0.3 * np.eye(dim)
        m = rng.normal(0, 1, dim) * np.sqrt(np.diag(C))
        ours = log_box_probability(m[None], C[None], np.zeros(dim), np.full(dim, np.inf))[0]
        ref = stats.multivariate_normal.cdf(np.zeros(dim), mean=-m, cov=C, abseps=1e-7,
                                            releps=1e-5)
        # measured over 40 random cases with 1024 lattice points: relative error in P median
        # 7e-5, worst 2e-3 in three dimensions; median 3e-4, worst 2e-2 in four
        assert np.exp(ours) == pytest.approx(ref, rel=1e-2 if dim == 3 else 5e-2)


def test_far_bounds_are_dropped_exactly_enough():
    # a bound 1e6 sd away changes nothing; a one-sided bound gives the normal tail
    m = np.array([[1.0, -2.0]])
    C = _cov2(0.5, 1.0, 0.4)[None]
    assert log_box_probability(m, C, [-1e9, -1e9], [1e9, 1e9])[0] == 0.0
    assert log_box_probability(m, C, [0.0, -np.inf], [np.inf, np.inf])[0] == \
        pytest.approx(stats.norm.logsf(0.0, 1.0, 0.5), rel=1e-13)


def test_truncated_ppf_matches_scipy_truncnorm():
    a = np.array([-np.inf, -1.0, 2.0, 9.0, -12.0])
    b = np.array([0.5, 1.0, np.inf, 11.0, -10.0])
    w = np.array([0.3, 0.7, 0.5, 0.9, 0.1])
    np.testing.assert_allclose(truncated_normal_ppf(a, b, w), stats.truncnorm.ppf(w, a, b),
                               rtol=1e-9)


def test_box_mode_against_scipy_minimize(rng):
    lo, hi = np.array([0.0, -1.0, 0.0]), np.array([np.inf, 1.0, 2.0])
    for _ in range(10):
        B = rng.normal(size=(3, 3))
        P = B @ B.T + 0.1 * np.eye(3)
        m = rng.normal(0, 2, 3)
        ours = box_mode(m[None], P[None], lo, hi)[0]
        res = optimize.minimize(lambda a: (a - m) @ P @ (a - m), np.clip(m, lo, hi),
                                jac=lambda a: 2 * P @ (a - m), method="L-BFGS-B",
                                bounds=list(zip(lo, [None, 1.0, 2.0])),
                                options={"ftol": 1e-15, "gtol": 1e-12})
        f = lambda a: (a - m) @ P @ (a - m)      # noqa: E731
        assert f(ours) <= f(res.x) + 1e-9


def test_truncated_draws_inside_the_box_with_the_right_moments(rng):
    # a 2-D Gaussian whose mean lies 2.5 sd outside the positive quadrant (P ≈ 1e-3, so most
    # rows go to the Gibbs sampler): draws in the box, moments against a direct 2-D
    # numerical integral of the truncated density (scipy.integrate.dblquad)
    m = np.array([-1.0, 0.5])
    C = _cov2(0.4, 0.6, 0.7)
    P = np.linalg.inv(C)
    k = 4000
    x = truncated_draw(np.tile(m, (k, 1)), np.tile(P, (k, 1, 1)),
                       np.tile(np.linalg.cholesky(P), (k, 1, 1)), [0.0, 0.0],
                       [np.inf, np.inf], rng)
    assert np.all(x >= 0)
    dens = stats.multivariate_normal(m, C).pdf
    z = integrate.dblquad(lambda b, a: dens([a, b]), 0, 6, 0, 8)[0]
    mean0 = integrate.dblquad(lambda b, a: a * dens([a, b]), 0, 6, 0, 8)[0] / z
    mean1 = integrate.dblquad(lambda b, a: b * dens([a, b]), 0, 6, 0, 8)[0] / z
    sd = np.std(x, axis=0)
    assert np.mean(x[:, 0]) == pytest.approx(mean0, abs=5 * sd[0] / np.sqrt(k))
    assert np.mean(x[:, 1]) == pytest.approx(mean1, abs=5 * sd[1] / np.sqrt(k))


def test_truncated_draws_one_dimensional_against_truncnorm(rng):
    # rejection branch (mean inside) and Gibbs branch (mean 4 sd outside), KS against
    # scipy.stats.truncnorm
    for mean in (0.3, -4.0):
        k = 3000
        x = truncated_draw(np.full((k, 1), mean), np.ones((k, 1, 1)), np.ones((k, 1, 1)),
                           [0.0], [np.inf], rng)[:, 0]
        assert np.all(x >= 0)
        p = stats.kstest(x, stats.truncnorm(-mean, np.inf, loc=mean).cdf).pvalue
        assert p > 1e-4

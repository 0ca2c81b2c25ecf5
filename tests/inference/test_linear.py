"""Analytic marginalisation of linear nuisances, bounded priors included, against closed forms
and brute-force integration."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, stats

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.inference.linear import (conditional_draw, conditional_mode, linear_prior,
                                         marginal_loglike)
from evidence1d.inference.priors import LogUniform, Normal, TruncatedNormal, Uniform


def test_marginal_matches_2d_quadrature(rng):
    # ∫∫ N(y | f + a0 m0 + a1 m1, σ²) N(a | μ, τ²) da0 da1 by scipy.integrate.dblquad
    n = 6
    x = np.linspace(0, 1, n)
    sig = np.full(n, 0.3)
    m = np.stack([np.sin(3 * x) + 1.0, np.ones(n)], axis=-1)      # (n, 2)
    y = 0.2 + 1.3 * m[:, 0] - 0.4 + rng.normal(0, 0.3, n)
    f = np.full(n, 0.2)
    mu, tau = np.array([1.0, 0.0]), np.array([0.8, 0.5])
    r = ((y - f - m @ mu) / sig)[None]
    d = (m / sig[:, None])[None]
    ours = marginal_loglike(r, d, sig, tau)[0]

    def integrand(a1, a0):
        model = f + a0 * m[:, 0] + a1 * m[:, 1]
        return np.exp(np.sum(stats.norm.logpdf(y, model, sig))
                      + stats.norm.logpdf(a0, mu[0], tau[0]) + stats.norm.logpdf(a1, mu[1], tau[1]))

    val, _ = integrate.dblquad(integrand, mu[0] - 8 * tau[0], mu[0] + 8 * tau[0],
                               mu[1] - 8 * tau[1], mu[1] + 8 * tau[1], epsabs=0, epsrel=1e-9)
    assert ours == pytest.approx(np.log(val), abs=1e-6)


def test_conditional_draws_match_conjugate_posterior(rng):
    # one amplitude: posterior N((μ/τ² + Σ m y/σ²)/(1/τ² + Σ m²/σ²), 1/(1/τ² + Σ m²/σ²))
    # (conjugate normal model; Gelman et al., Bayesian Data Analysis, 3rd ed. (2013), §2.5)
    n = 20
    mcol = np.linspace(0.5, 2.0, n)
    sig = np.full(n, 0.5)
    y = 1.7 * mcol + rng.normal(0, 0.5, n)
    mu, tau = np.array([0.0]), np.array([3.0])
    prec = 1 / tau[0] ** 2 + np.sum(mcol ** 2 / sig ** 2)
    mean = (mu[0] / tau[0] ** 2 + np.sum(mcol * y / sig ** 2)) / prec
    r = np.repeat(((y - mcol * mu[0]) / sig)[None], 20000, axis=0)
    d = np.repeat((mcol / sig)[None, :, None], 20000, axis=0)
    a = conditional_draw(r, d, tau, mu, rng)[:, 0]
    assert np.mean(a) == pytest.approx(mean, abs=4 * np.sqrt(1 / prec / 20000))
    assert np.var(a) == pytest.approx(1 / prec, rel=0.05)


def _whiten(y, f, m, sig, mu):
    return ((y - f - m @ mu) / sig)[None], (m / sig[:, None])[None]


def test_one_dimensional_positive_amplitude_closed_form(rng):
    # y = a m + ε, a ≥ 0 under a half-normal prior N(0, τ²) on [0, ∞): the evidence is the
    # Gaussian marginal N(y | 0, Σ + τ² m mᵀ) times P(a ≥ 0 | y)/P(a ≥ 0) = Φ(μ_post/s_post)/½
    # (conjugate normal posterior, Gelman et al., Bayesian Data Analysis, 3rd ed. (2013),
    # §2.5; truncated normal normalisation, Johnson, Kotz & Balakrishnan (1994), §10.1).
    # The data want a < 0, so the bound matters.
    n = 12
    mcol = np.linspace(0.3, 1.5, n)
    sig = np.full(n, 0.4)
    y = -0.3 * mcol + rng.normal(0, 0.4, n)
    tau = 2.0
    prior = linear_prior([TruncatedNormal(0.0, tau, 0.0, np.inf)])
    r, d = _whiten(y, 0.0, mcol[:, None], sig, prior.mu)
    ours = marginal_loglike(r, d, sig, prior.tau, prior)[0]
    prec = 1 / tau ** 2 + np.sum(mcol ** 2 / sig ** 2)
    mpost = np.sum(mcol * y / sig ** 2) / prec
    gauss = stats.multivariate_normal(np.zeros(n), np.diag(sig ** 2)
                                      + tau ** 2 * np.outer(mcol, mcol)).logpdf(y)
    closed = gauss + stats.norm.logcdf(mpost * np.sqrt(prec)) - np.log(0.5)
    assert ours == pytest.approx(closed, abs=1e-9)
    assert abs(closed - gauss) > 0.5          # the bound changes the answer
    # the same by quadrature of likelihood × declared density over a ≥ 0
    lik = lambda a: np.exp(np.sum(stats.norm.logpdf(y, a * mcol, sig)) - closed)  # noqa: E731
    val, _ = integrate.quad(lambda a: lik(a) * 2 * stats.norm.pdf(a, 0, tau), 0, 10,
                            points=[0.0, 0.5], epsabs=0, epsrel=1e-10)
    assert np.log(val) == pytest.approx(0.0, abs=1e-7)


def test_one_dimensional_uniform_prior_by_quadrature(rng):
    # a uniform prior on [0, U]: Z = (1/U) ∫₀ᵁ L(a) da (scipy.integrate.quad); exact to the
    # working-Gaussian tolerance of 5e-9 nats (module notes of inference.linear)
    n = 10
    mcol = np.linspace(0.5, 2.0, n)
    sig = np.full(n, 0.3)
    y = 0.05 * mcol + rng.normal(0, 0.3, n)
    U = 4.0
    prior = linear_prior([Uniform(0.0, U)])
    r, d = _whiten(y, 0.0, mcol[:, None], sig, prior.mu)
    ours = marginal_loglike(r, d, sig, prior.tau, prior)[0]
    lik = lambda a: np.exp(np.sum(stats.norm.logpdf(y, a * mcol, sig)) - ours)  # noqa: E731
    val, _ = integrate.quad(lambda a: lik(a) / U, 0, U, points=[0.05, 0.5], epsabs=0,
                            epsrel=1e-11)
    assert np.log(val) == pytest.approx(0.0, abs=1e-7)


def _toy_2d(rng):
    # C(T) = γ T + β T³ + noise with a true γ < 0: the bounds γ ≥ 0, β ≥ 0 bite
    T = np.linspace(2.0, 12.0, 15)
    m = np.stack([T, T ** 3], axis=-1)
    sig = np.full(T.size, 0.05)
    y = -0.02 * T + 2e-3 * T ** 3 + rng.normal(0, 0.05, T.size)
    return m, sig, y


def test_two_dimensional_orthant_closed_form(rng):
    # half-normal priors on both amplitudes: the evidence is the Gaussian marginal times
    # Φ₂(m̂₁/s₁, m̂₂/s₂; ρ)/(½·½), the bivariate normal orthant probability of the conditional
    # posterior (Owen, Ann. Math. Statist. 27, 1075 (1956); here by scipy's own bivariate
    # CDF, Genz, Stat. Comput. 14, 251 (2004))
    m, sig, y = _toy_2d(rng)
    tau = np.array([0.1, 0.01])
    prior = linear_prior([TruncatedNormal(0.0, t, 0.0, np.inf) for t in tau])
    r, d = _whiten(y, 0.0, m, sig, prior.mu)
    ours = marginal_loglike(r, d, sig, prior.tau, prior)[0]
    gauss = stats.multivariate_normal(np.zeros(y.size), np.diag(sig ** 2)
                                      + m @ np.diag(tau ** 2) @ m.T).logpdf(y)
    A = np.diag(1 / tau ** 2) + (m / sig[:, None] ** 2).T @ m
    cov = np.linalg.inv(A)
    mean = cov @ (m.T @ (y / sig ** 2))
    orth = stats.multivariate_normal.cdf(np.zeros(2), mean=-mean, cov=cov, abseps=1e-12,
                                         releps=1e-10)
    closed = gauss + np.log(orth) - 2 * np.log(0.5)
    assert ours == pytest.approx(closed, abs=1e-6)
    assert abs(closed - gauss) > 0.5


def test_two_dimensional_uniform_priors_by_dblquad(rng):
    # uniform priors γ ∈ [0, 0.5], β ∈ [0, 0.01]: Z = ∫∫_box L(γ, β) dγ dβ / area
    # (scipy.integrate.dblquad over the box)
    m, sig, y = _toy_2d(rng)
    box = [(0.0, 0.5), (0.0, 0.01)]
    prior = linear_prior([Uniform(*b) for b in box])
    r, d = _whiten(y, 0.0, m, sig, prior.mu)
    ours = marginal_loglike(r, d, sig, prior.tau, prior)[0]
    gauss_only = marginal_loglike(r, d, sig, prior.tau)[0] + prior.log_const
    area = 0.5 * 0.01

    def integrand(b, g):
        return np.exp(np.sum(stats.norm.logpdf(y, g * m[:, 0] + b * m[:, 1], sig)) - ours)

    mode = conditional_mode(r, d, prior.tau, prior.mu, prior)[0]
    A = np.diag(1 / prior.tau ** 2) + (m / sig[:, None] ** 2).T @ m
    s = np.sqrt(np.diag(np.linalg.inv(A)))
    g_hi, b_hi = mode + 12 * s
    val, _ = integrate.dblquad(integrand, 0.0, min(g_hi, 0.5), 0.0, min(b_hi, 0.01),
                               epsabs=0, epsrel=1e-9)
    assert np.log(val / area) == pytest.approx(0.0, abs=1e-5)
    assert abs(ours - gauss_only) > 0.5


def test_draws_and_mode_stay_in_the_box(rng):
    # one bounded coefficient (γ ≥ 0, data wanting γ < 0) and one with a normal prior: the
    # bounded one is marginally the normal truncated to its box (its marginal N(m₀, C₀₀)
    # restricted, Johnson, Kotz & Balakrishnan (1994), §10.1), checked by a KS test against
    # scipy.stats.truncnorm
    m, sig, y = _toy_2d(rng)
    prior = linear_prior([Uniform(0.0, 0.5), Normal(0.0, 1.0)])
    r, d = _whiten(y, 0.0, m, sig, prior.mu)
    k = 3000
    a = conditional_draw(np.repeat(r, k, 0), np.repeat(d, k, 0), prior.tau, prior.mu, rng,
                         prior)
    assert np.all(a[:, 0] >= 0) and np.all(a[:, 0] <= 0.5)
    A = np.diag(1 / prior.tau ** 2) + (m / sig[:, None] ** 2).T @ m
    cov = np.linalg.inv(A)
    mean = prior.mu + cov @ (d[0].T @ r[0])
    s0 = np.sqrt(cov[0, 0])
    assert mean[0] < 0                        # the bound is active
    tn = stats.truncnorm(-mean[0] / s0, (0.5 - mean[0]) / s0, loc=mean[0], scale=s0)
    assert stats.kstest(a[:, 0], tn.cdf).pvalue > 1e-4
    assert conditional_mode(r, d, prior.tau, prior.mu, prior)[0, 0] == 0.0


def test_priors_the_marginalisation_cannot_integrate_are_left_to_the_sampler():
    assert linear_prior([LogUniform(1.0, 10.0)]) is None
    assert linear_prior([Uniform(0.0, 1.0), LogUniform(1.0, 10.0)]) is None


def test_problem_marginal_equals_integral_over_sampled_nuisance(tmp_path):
    # the case's chi block (χ₀, C_imp) integrated out analytically equals a brute-force 2-D
    # integral of the sampled-nuisance likelihood times the declared priors (uniform, C_imp
    # bounded below by 0) over their support
    text = CASE_YAML.replace("  - spinon_continuum", "  - paramagnon")
    case = evidence1d.load_case(write_valid_case(tmp_path / "c", text))
    prob = case.problem("paramagnon")
    block = next(b for b in prob.blocks if b.label == "chi")
    theta = prob.prior_transform(np.full(len(prob.names), 0.4))
    p = prob.prior.expand(theta[None])
    ours = block.log_likelihood(p)[0]
    ds = case.datasets[1]
    pr = prob.predictors[1]
    mag = pr.magnetic(p)[0]
    T = ds.x["T"]
    cm = block.conditional_mean(p)
    c0, c1 = cm["chi0"][0, 0], cm["c_imp"][0, 0]
    p0, p1 = prob.declared_priors["chi0"], prob.declared_priors["c_imp"]
    assert p1.support[0] == 0.0
    # posterior widths from the Fisher matrix to set the integration box
    Md = np.stack([np.ones_like(T), 1 / T], axis=-1) / ds.err[:, None]
    s0, s1 = np.sqrt(np.diag(np.linalg.inv(Md.T @ Md)))

    def integrand(a1, a0):
        model = mag + a0 + a1 / T
        return np.exp(np.sum(stats.norm.logpdf(ds.y, model, ds.err)) - ours
                      + p0.log_pdf(a0) + p1.log_pdf(a1))

    lo0, hi0 = max(c0 - 12 * s0, p0.support[0]), min(c0 + 12 * s0, p0.support[1])
    lo1, hi1 = max(c1 - 12 * s1, p1.support[0]), min(c1 + 12 * s1, p1.support[1])
    val, _ = integrate.dblquad(integrand, lo0, hi0, lo1, hi1, epsabs=0, epsrel=1e-8)
    assert np.log(val) == pytest.approx(0.0, abs=1e-5)


def test_a_vanishing_design_column_integrates_to_nothing():
    # A nuisance whose column is ~0 (a family predicting no intensity in the window: scale
    # column 1e-31) does not touch the likelihood, so integrating it over its normalised
    # prior must leave the marginal likelihood of the other nuisances alone (exactly, for a
    # Gaussian prior).  A pivoting solve with the ill-conditioned Cholesky factor
    # (condition ~1e31) used to return |L⁻¹b|² above Σr² here, an impossible value; the
    # substitution of inference/triangular.py is backward stable (Higham 2002, ch. 8).
    from evidence1d.inference import linear
    rng = np.random.default_rng(0)
    n = 720
    E = np.linspace(0.25, 3.6, n)
    sig = np.full(n, 0.12)
    y = 0.5 + 0.05 * E + sig * rng.standard_normal(n)
    cols = np.stack([1e-31 * np.exp(-E), np.ones(n), E], axis=1)
    r = (y / sig)[None, :]
    d = (cols / sig[:, None])[None]
    tau = np.array([3.6e13, 2e13, 5.6e12])
    full = linear.marginal_loglike(r, d, sig, tau)[0]
    without = linear.marginal_loglike(r, d[:, :, 1:], sig, tau[1:])[0]
    assert full == pytest.approx(without, abs=1e-6)
    A, b = linear._system(r, d, tau)
    L = np.linalg.cholesky(A)
    z = linear.solve_lower(L, b)
    assert np.sum(z ** 2) <= np.sum(r ** 2)


def test_triangular_solves_against_scipy():
    # batched substitution against scipy.linalg.solve_triangular, one matrix at a time
    from scipy.linalg import solve_triangular
    from evidence1d.inference.triangular import cholesky_inverse, solve_lower, solve_upper
    rng = np.random.default_rng(5)
    M = rng.normal(size=(6, 5, 5))
    A = M @ np.swapaxes(M, 1, 2) + 5 * np.eye(5)
    L = np.linalg.cholesky(A)
    B = rng.normal(size=(6, 5))
    for k in range(6):
        np.testing.assert_allclose(solve_lower(L, B)[k], solve_triangular(L[k], B[k], lower=True),
                                   rtol=1e-12)
        np.testing.assert_allclose(solve_upper(np.swapaxes(L, 1, 2), B)[k],
                                   solve_triangular(L[k].T, B[k], lower=False), rtol=1e-12)
    np.testing.assert_allclose(cholesky_inverse(L) @ L, np.broadcast_to(np.eye(5), L.shape),
                               atol=1e-12)

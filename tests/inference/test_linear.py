"""Analytic marginalisation of linear nuisances against brute-force integration."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, stats

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.inference.linear import conditional_draw, gaussian_moments, marginal_loglike
from evidence1d.inference.priors import LogUniform, Uniform


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


def test_gaussian_moments_of_priors():
    # uniform: mean (a+b)/2, sd (b-a)/√12; log-uniform: mean (b-a)/ln(b/a) (analytic)
    m, s = gaussian_moments(Uniform(1.0, 3.0))
    assert m == pytest.approx(2.0, abs=1e-6) and s == pytest.approx(2 / np.sqrt(12), rel=1e-5)
    m, s = gaussian_moments(LogUniform(1.0, 100.0))
    assert m == pytest.approx(99 / np.log(100), rel=1e-4)


def test_problem_marginal_equals_integral_over_sampled_nuisance(tmp_path):
    # the case's chi block (χ₀, C_imp) integrated out analytically equals a brute-force 2-D
    # integral of the sampled-nuisance likelihood over the same Gaussian priors
    text = CASE_YAML.replace("  - spinon_continuum", "  - paramagnon")
    text = text.replace("extras:", "extras:")  # (no extras block: data-driven priors)
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
    # posterior widths from the Fisher matrix to set the integration box
    Md = np.stack([np.ones_like(T), 1 / T], axis=-1) / ds.err[:, None]
    cov = np.linalg.inv(Md.T @ Md + np.diag(1 / block.tau ** 2))
    s0, s1 = np.sqrt(np.diag(cov))

    def integrand(a1, a0):
        model = mag + a0 + a1 / T
        return np.exp(np.sum(stats.norm.logpdf(ds.y, model, ds.err)) - ours
                      + stats.norm.logpdf(a0, block.mu[0], block.tau[0])
                      + stats.norm.logpdf(a1, block.mu[1], block.tau[1]))

    val, _ = integrate.dblquad(integrand, c0 - 10 * s0, c0 + 10 * s0, c1 - 10 * s1,
                               c1 + 10 * s1, epsabs=0, epsrel=1e-8)
    assert np.log(val) == pytest.approx(0.0, abs=1e-5)

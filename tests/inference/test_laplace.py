"""Laplace and BIC approximations against analytic evidences."""
import numpy as np
import pytest

from evidence1d.inference.laplace import bic, laplace_evidence

from gaussian_problems import linear_gaussian


def test_laplace_is_exact_for_a_linear_gaussian_model(rng):
    # The log posterior is quadratic, so the Laplace approximation is exact
    # (Kass & Raftery, JASA 90, 773 (1995), eq. 4.1; analytic ln Z from Bishop (2006) eq. 2.115).
    loglike, prior, truth, mean, cov = linear_gaussian(rng, 3, "normal", 3.0, 0.5)
    res = laplace_evidence(loglike, prior, map_point=mean + 0.1)
    assert res.approximate and "approximate" in res.label
    assert res.log_z == pytest.approx(truth, abs=1e-4)
    np.testing.assert_allclose(res.covariance, cov, rtol=1e-3)
    samples = rng.multivariate_normal(mean, cov, 20000)
    res2 = laplace_evidence(loglike, prior, samples=samples)
    assert res2.method == "samples" and abs(res2.log_z - truth) < 0.05


def test_bic_tracks_ln_z_up_to_order_one():
    # Schwarz (Ann. Stat. 6, 461 (1978)): ln Z = −BIC/2 + O(1) as n grows.  Mean of n points
    # with unit noise, prior μ ~ N(0, 1), data mean 0.5: ln Z − ln L̂ is analytic.
    gaps = []
    for n in (100, 10000):
        ybar, resid = 0.5, 0.0
        ln_lmax = -0.5 * n * np.log(2 * np.pi) - 0.5 * resid
        ln_z = ln_lmax + (-0.5 * np.log(1 + n) - 0.5 * ybar**2 * n / (1 + n))
        gaps.append(ln_z - bic(ln_lmax, 1, n).log_z)
    assert abs(gaps[0] - gaps[1]) < 0.2 and abs(gaps[1]) < 1.5
    assert bic(-10.0, 2, 100).bic == pytest.approx(2 * np.log(100) + 20.0)


def test_known_log_posterior_of_the_samples_spares_the_likelihood(rng):
    # the sampler's own log posterior at its samples gives the same mode and ln Z as
    # evaluating the target again, with a handful of likelihood calls instead of one per sample
    from evidence1d.inference.target import LogTarget
    loglike, prior, truth, mean, cov = linear_gaussian(rng, 3, "normal", 3.0, 0.5)
    samples = rng.multivariate_normal(mean, cov, 5000)
    calls = []

    def counted(theta):
        calls.append(len(theta))
        return loglike(theta)
    ref = laplace_evidence(counted, prior, samples=samples, optimise=False)
    n_ref = sum(calls)
    calls.clear()
    lp = LogTarget(loglike, prior)(samples)
    got = laplace_evidence(counted, prior, samples=samples, optimise=False, log_prob=lp)
    assert got.log_z == ref.log_z and np.array_equal(got.map_point, ref.map_point)
    assert n_ref >= 5000 and sum(calls) <= 4
    with pytest.raises(Exception, match="one value per sample"):
        laplace_evidence(loglike, prior, samples=samples, optimise=False, log_prob=lp[:-1])

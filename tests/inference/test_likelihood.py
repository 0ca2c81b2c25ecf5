"""Likelihoods against scipy.stats densities (normalisation included)."""
import numpy as np
import pytest
from scipy import stats

from evidence1d.errors import InputError
from evidence1d.inference.likelihood import (gaussian_loglike, gaussian_loglike_pointwise,
                                             student_t_loglike, student_t_loglike_pointwise)


def test_gaussian_matches_scipy_norm(rng):
    model, data, err = rng.normal(size=(4, 30)), rng.normal(size=30), rng.uniform(0.1, 2, 30)
    s = np.array([[1.0], [1.5], [0.7], [2.0]])
    ref = stats.norm(model, err * s).logpdf(data)       # scipy.stats reference density
    np.testing.assert_allclose(gaussian_loglike_pointwise(model, data, err, s), ref, rtol=1e-12)
    np.testing.assert_allclose(gaussian_loglike(model, data, err, s), ref.sum(1), rtol=1e-12)


def test_student_t_matches_scipy_t(rng):
    model, data, err = rng.normal(size=(3, 20)), rng.normal(size=20), rng.uniform(0.1, 2, 20)
    nu = np.array([[1.0], [4.0], [30.0]])
    ref = stats.t(nu, loc=model, scale=err).logpdf(data)  # scipy.stats reference density
    np.testing.assert_allclose(student_t_loglike_pointwise(model, data, err, nu), ref, rtol=1e-10)
    np.testing.assert_allclose(student_t_loglike(model, data, err, nu), ref.sum(1), rtol=1e-10)
    # ν → ∞ tends to the Gaussian (analytic limit).
    np.testing.assert_allclose(student_t_loglike(model, data, err, 1e9),
                               gaussian_loglike(model, data, err), rtol=1e-6)


def test_bad_errors_raise():
    with pytest.raises(InputError):
        gaussian_loglike(np.zeros((1, 3)), np.zeros(3), np.array([1.0, 0.0, 1.0]))
    with pytest.raises(InputError):
        gaussian_loglike(np.zeros((1, 4)), np.zeros(3), np.ones(3))

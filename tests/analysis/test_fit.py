"""Goodness of fit on a linear-Gaussian problem whose χ² and p-value are known exactly."""
from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from scipy import integrate, stats

from evidence1d.analysis.fit import FIT_THRESHOLDS, chi2_limit, goodness_of_fit


class _Line:
    """μ = a + b x on N points with constant error σ; y = X θ* + r with r orthogonal to
    the columns of X, so that the least-squares point is θ* and χ²_min = |r|²/σ² exactly
    (normal equations: Xᵀ r = 0)."""

    def __init__(self, rng, chi2_min, n=40, sigma=0.2, options=None, inflate=None):
        self.x = np.linspace(-1.0, 2.0, n)
        self.X = np.column_stack([np.ones(n), self.x])
        self.theta = np.array([0.7, -0.3])
        v = rng.standard_normal(n)
        r = v - self.X @ np.linalg.lstsq(self.X, v, rcond=None)[0]
        r *= sigma * math.sqrt(chi2_min) / np.linalg.norm(r)
        self.y = self.X @ self.theta + r
        self.sigma = sigma
        self.inflate = inflate
        ds = SimpleNamespace(name="line", y=self.y, err=np.full(n, sigma), n=n,
                             options=options or {})
        self.predictors = [SimpleNamespace(dataset=ds)]

    def predict(self, theta):
        theta = np.atleast_2d(theta)
        return {"line": theta[:, :1] + theta[:, 1:2] * self.x[None, :]}

    def params(self, theta):
        theta = np.atleast_2d(theta)
        p = {"a": theta[:, :1], "b": theta[:, 1:2]}
        if self.inflate is not None:
            p["line:inflate"] = np.full((theta.shape[0], 1), self.inflate)
        return p

    def posterior(self, rng, pairs=2000):
        """Exact posterior draws under a flat prior, N(θ*, σ² (XᵀX)⁻¹), as antithetic pairs
        around θ* plus θ* itself, so that the component-wise median is θ* exactly."""
        cov = self.sigma ** 2 * np.linalg.inv(self.X.T @ self.X)
        d = rng.multivariate_normal(np.zeros(2), cov, size=pairs)
        return np.vstack([self.theta[None, :], self.theta + d, self.theta - d])


def _p_exact(chi2_min, n, k=2):
    """Posterior-predictive p of the χ² discrepancy for a linear-Gaussian model under a
    flat prior: D(y, θ) = χ²_min + q with q ~ χ²_k over the posterior, and D(y_rep, θ) ~
    χ²_N, so p = ∫ f_k(q) Q_N(χ²_min + q) dq (Gelman, Meng & Stern, Statistica Sinica 6,
    733, 1996); evaluated by adaptive quadrature, with its second moment."""
    f = lambda q, m: stats.chi2.pdf(q, k) * stats.chi2.sf(chi2_min + q, n) ** m  # noqa: E731
    p = integrate.quad(f, 0, np.inf, args=(1,))[0]
    p2 = integrate.quad(f, 0, np.inf, args=(2,))[0]
    return p, math.sqrt(max(p2 - p * p, 0.0))


@pytest.mark.parametrize("chi2_min", [30.0, 45.0, 200.0])
def test_chi2_at_the_median_and_p_value_of_a_line(rng, chi2_min):
    pb = _Line(rng, chi2_min)
    samples = pb.posterior(rng)
    out = goodness_of_fit(pb, samples, n_draws=samples.shape[0], rng=np.random.default_rng(0))["line"]
    assert out["n_points"] == 40 and out["n_draws"] == samples.shape[0]
    assert out["chi2"] == pytest.approx(chi2_min, rel=1e-9)
    assert out["chi2_per_point"] == pytest.approx(chi2_min / 40, rel=1e-9)
    assert out["chi2_min_draws"] == pytest.approx(chi2_min, rel=1e-9)   # θ* is a draw
    p, sd = _p_exact(chi2_min, 40)
    # antithetic pairs: the Monte Carlo error is at most that of independent draws
    assert abs(out["p_value"] - p) < 5 * sd / math.sqrt(samples.shape[0]) + 1e-12
    # 1 + 5 √(2/N) (five standard deviations of χ²_N / N; common practice)
    assert out["chi2_per_point_limit"] == pytest.approx(1 + 5 * math.sqrt(2 / 40))
    bad = chi2_min / 40 > chi2_limit(40) or p < FIT_THRESHOLDS["p_min"]
    assert out["bad_fit"] is bad
    assert out["bad_fit"] is (chi2_min == 200.0)
    assert not out["median_unrepresentative"]
    assert "Gelman" in out["p_value_method"]


def test_inflated_errors_divide_chi2_by_the_square_of_the_factor(rng):
    pb = _Line(rng, 80.0, inflate=2.0)
    out = goodness_of_fit(pb, pb.posterior(rng, 50), rng=np.random.default_rng(0))["line"]
    assert out["chi2"] == pytest.approx(80.0 / 4.0, rel=1e-9)


def test_a_median_far_from_every_draw_is_not_called_a_bad_fit(rng):
    # two well-separated modes in b: the component-wise median lies between them, where
    # the line fits badly, while every draw fits well
    pb = _Line(rng, 30.0)
    lo = np.tile(pb.theta, (101, 1))
    hi = lo.copy()
    lo[:, 1] -= 0.5
    hi[:, 1] += 0.5
    pb.y = pb.y - 0.5 * pb.x                        # the data follow the lower mode
    pb.predictors[0].dataset.y = pb.y
    out = goodness_of_fit(pb, np.vstack([lo, hi]), rng=np.random.default_rng(0))["line"]
    assert out["chi2_min_draws"] == pytest.approx(30.0, rel=1e-9)
    assert out["chi2_per_point"] > chi2_limit(40)
    assert out["median_unrepresentative"]


def test_student_t_noise_uses_replicated_data(rng):
    pb = _Line(rng, 40.0, options={"noise": "student_t", "nu": 4.0})
    out = goodness_of_fit(pb, pb.posterior(rng, 50), rng=np.random.default_rng(3))["line"]
    assert "Student-t" in out["p_value_method"] and 0.0 <= out["p_value"] <= 1.0

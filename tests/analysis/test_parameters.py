"""The parameter table and the report's rounding, checked against analytic results and
reference libraries."""
from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from scipy import special, stats

from evidence1d.inference.priors import (JointPrior, LogUniform, Normal, TruncatedNormal,
                                         Uniform)
from evidence1d.analysis.parameters import (dataset_sensitivity, draw_indices,
                                            prior_interval, quantile_summary)
from evidence1d.report.summary import round_interval
from evidence1d.results import json_ready


def test_quantiles_of_a_normal_sample(rng):
    # quantiles of N(mu, sd): mu + sd Φ⁻¹(p) (scipy.special.ndtri); sampling error of a
    # quantile sqrt(p(1-p)/n)/φ(x_p) (Hyndman & Fan, Am. Stat. 50, 361, 1996; from memory)
    mu, sd, n = 1.5, 0.3, 200_000
    x = rng.normal(mu, sd, size=(n, 1))
    q = quantile_summary(x, ["a"], {"a": "meV"})["a"]
    for key, p in (("q16", 0.16), ("median", 0.5), ("q84", 0.84)):
        z = special.ndtri(p)
        se = sd * math.sqrt(p * (1 - p) / n) / stats.norm.pdf(z)
        assert abs(q[key] - (mu + sd * z)) < 5 * se
    assert q["unit"] == "meV"
    assert quantile_summary(x, ["a"], {})["a"]["unit"] == "1"


@pytest.mark.parametrize("prior, ref", [
    (Uniform(0.0, 3.0), stats.uniform(0.0, 3.0)),
    (LogUniform(0.05, 20.0), stats.loguniform(0.05, 20.0)),
    (Normal(2.1, 0.1), stats.norm(2.1, 0.1)),
    (TruncatedNormal(2.1, 0.1, 1.5, 2.7), stats.truncnorm(-6.0, 6.0, loc=2.1, scale=0.1)),
])
def test_prior_interval_matches_scipy(prior, ref):
    lo, hi = prior_interval(prior)
    assert lo == pytest.approx(ref.ppf(0.16), rel=1e-9)
    assert hi == pytest.approx(ref.ppf(0.84), rel=1e-9)


class _LinearProblem:
    """μ_A = a x (dataset A), μ_B = a + b (dataset B): Fisher information is analytic."""

    def __init__(self):
        self.names = ["a", "b"]
        self.prior = JointPrior(["a", "b"], [Uniform(0.0, 5.0), Uniform(-1.0, 1.0)])
        self.xA = np.linspace(0.5, 2.0, 7)
        self.eA = np.full(7, 0.2)
        self.eB = np.array([0.1, 0.3, 0.5])
        self.predictors = [SimpleNamespace(dataset=SimpleNamespace(name="A", err=self.eA)),
                           SimpleNamespace(dataset=SimpleNamespace(name="B", err=self.eB))]

    def predict(self, theta):
        a, b = theta[:, :1], theta[:, 1:2]
        return {"A": a * self.xA, "B": np.repeat(a + b, 3, axis=1)}


@pytest.mark.parametrize("theta", [[1.3, 0.2], [0.0, 0.2]])   # interior and on a prior bound
def test_sensitivity_of_a_linear_model_is_its_fisher_information(theta):
    # Gaussian data: F_j = Σ (∂μ/∂θ_j)² / σ² (Tegmark, Taylor & Heavens, ApJ 480, 22, 1997;
    # from memory); derivatives of a linear model are exact
    pb = _LinearProblem()
    sd = np.array([0.05, 0.1])
    out = dataset_sensitivity(pb, np.array(theta), sd)
    FA_a = np.sum(pb.xA ** 2 / pb.eA ** 2)
    FB = np.sum(1.0 / pb.eB ** 2)
    assert out["a"]["A"]["information_share"] == pytest.approx(FA_a / (FA_a + FB), rel=1e-6)
    assert out["a"]["B"]["information_share"] == pytest.approx(FB / (FA_a + FB), rel=1e-6)
    assert out["a"]["A"]["shift"] == pytest.approx(math.sqrt(FA_a) * 0.05, rel=1e-6)
    assert out["b"]["A"]["information_share"] == 0.0
    assert out["b"]["B"]["information_share"] == pytest.approx(1.0)
    assert out["b"]["B"]["shift"] == pytest.approx(math.sqrt(FB) * 0.1, rel=1e-6)


def test_round_interval_two_significant_digits_of_the_smaller_error():
    # errors to two significant digits (Particle Data Group practice; common practice)
    assert round_interval(1.23456, 1.1686, 1.33456) == ("1.235", "0.100", "0.066", 0)
    assert round_interval(2.76e-6, 2.65e-6, 2.816e-6) == ("2.760", "0.056", "0.110", -6)
    assert round_interval(152.3, 140.0, 160.0) == ("152.3", "7.7", "12.3", 0)
    assert round_interval(3.0, 3.0, 3.0) == ("3.000", "0.000", "0.000", 0)


def test_json_ready_writes_valid_json_values():
    import json
    doc = json_ready({"a": np.float64(np.inf), "b": [np.int64(3), np.nan, np.bool_(True)],
                      "c": np.arange(2.0), "d": (1.5, "x")})
    assert doc == {"a": None, "b": [3, None, True], "c": [0.0, 1.0], "d": [1.5, "x"]}
    json.dumps(doc, allow_nan=False)


def test_draw_indices_are_bounded_and_spread():
    idx = draw_indices(1000, 200)
    assert len(idx) <= 200 and idx[0] == 0 and idx[-1] == 999
    assert np.all(np.diff(idx) > 0)
    assert list(draw_indices(5, 200)) == [0, 1, 2, 3, 4]

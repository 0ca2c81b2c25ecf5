"""A calibration of a linear-Gaussian toy problem recovers the analytic false- and
missed-one-dimensional rates.

Two models of n points with known error σ: "flat" (y_i = ε_i, no parameter; the
not-one-dimensional class) and "offset" (y_i = a + ε_i, a ~ N(0, τ²); the one-dimensional
class).  Only the mean ȳ tells them apart, so ln K = ln N(ȳ; 0, v₁) − ln N(ȳ; 0, v₀) with
v₀ = σ²/n, v₁ = v₀ + τ², r = v₁/v₀:
  ln K = −½ ln r + ½ z² (1 − 1/r),  z = ȳ/√v₀ ~ N(0, 1) under "flat",
  ln K = −½ ln r + ½ w² (r − 1),    w = ȳ/√v₁ ~ N(0, 1) under "offset"
(Gaussian marginal likelihoods; e.g. Kass & Raftery, JASA 90, 773 (1995), §4.1.2), so
P(ln K > t | flat) = erfc(√(c/2)), c = (2t + ln r)/(1 − 1/r), and
P(ln K ≤ t | offset) = erf(√(c'/2)), c' = (2t + ln r)/(r − 1)  (χ² with one degree of
freedom).  The replicates go through the campaign machinery (task streams, the store, the
job runner, the scores), and ln Z of "offset" comes from the project's tempered SMC.
"""
from __future__ import annotations

import math

import numpy as np

from evidence1d.campaign.engine import run_tasks
from evidence1d.campaign.replicate import one_dimensional_log_k, task_streams
from evidence1d.campaign.scores import calibration_scores
from evidence1d.campaign.store import CampaignStore

N_POINTS, SIGMA, TAU, THRESHOLD = 10, 1.0, 0.5, 0.0
ONE_D = {"flat": False, "offset": True}


def _toy_replicate(task):
    """Simulate from the task's model, compute both evidences, return a replicate record."""
    from evidence1d.inference.evidence import tempered_evidence
    from evidence1d.inference.priors import JointPrior, Normal
    truth_rng, noise_rng, fit_seed = task_streams(task["seed"], task["key"])
    a = truth_rng.normal(0.0, TAU) if task["family"] == "offset" else 0.0
    y = a + SIGMA * noise_rng.standard_normal(N_POINTS)
    norm = -0.5 * N_POINTS * math.log(2 * math.pi * SIGMA ** 2)

    def loglike(theta):
        return norm - 0.5 * np.sum(((y - theta[:, :1]) / SIGMA) ** 2, axis=1)

    ev = tempered_evidence(loglike, JointPrior(["a"], [Normal(mean=0.0, sd=TAU)]),
                           rng=np.random.default_rng(fit_seed), n_particles=100,
                           n_islands=2, progress=False)
    log_z = {"flat": norm - 0.5 * float(np.sum((y / SIGMA) ** 2)), "offset": ev.log_z}
    weights = {"flat": 0.5, "offset": 0.5}
    ln_k = one_dimensional_log_k(log_z, weights, ONE_D)
    p1 = 1.0 / (1.0 + math.exp(-ln_k))
    samples = ev.posterior_samples[:, 0]
    ranks = {"a": float(np.mean(samples < a))} if task["family"] == "offset" else {}
    return {"id": task["id"], "family": task["family"], "failed": None, "log_z": log_z,
            "one_dimensional": dict(ONE_D), "winner": max(log_z, key=log_z.get),
            "p_1d": p1, "ln_k_1d": ln_k, "ln_k_truth": None, "ranks": ranks}


def _analytic():
    r = 1.0 + N_POINTS * TAU ** 2 / SIGMA ** 2
    c_flat = (2 * THRESHOLD + math.log(r)) / (1 - 1 / r)
    c_off = (2 * THRESHOLD + math.log(r)) / (r - 1)
    return math.erfc(math.sqrt(c_flat / 2)), math.erf(math.sqrt(c_off / 2))


def test_toy_calibration_recovers_the_analytic_rates(tmp_path, seed):
    n = 400
    tasks = [{"id": f"{fam}-{i:04d}", "family": fam, "seed": seed, "key": [7, k, i]}
             for k, fam in enumerate(ONE_D) for i in range(n)]
    store = CampaignStore(tmp_path / "toy", {"command": "toy", "seed": seed})
    records = run_tasks(_toy_replicate, (), tasks, store, workers=2, progress=False)
    doc = calibration_scores(records, list(ONE_D), THRESHOLD)
    false_rate, missed_rate = _analytic()
    assert abs(false_rate - 0.185) < 0.01 and abs(missed_rate - 0.521) < 0.01  # the setup
    for got, want in ((doc["false_1d_rate"], false_rate), (doc["missed_1d_rate"], missed_rate)):
        assert got["n"] == n
        sd = math.sqrt(want * (1 - want) / n)
        assert abs(got["rate"] - want) < 4.5 * sd, (got, want)
    # with truths drawn from the fit's own priors, P(1D) is calibrated and the posterior
    # intervals of a have their nominal coverage (Cook, Gelman & Rubin 2006)
    for b in doc["reliability"]["bins"]:
        if b["n"] >= 30:
            assert b["interval95"][0] - 0.05 <= b["mean_predicted"] <= b["interval95"][1] + 0.05
    for name, cov in doc["coverage"].items():
        r = cov["overall"]
        assert abs(r["rate"] - cov["nominal"]) < 4.5 * math.sqrt(
            cov["nominal"] * (1 - cov["nominal"]) / r["n"]) + 0.02, (name, r)
    # a second pass finds every replicate in the store and computes nothing
    again = run_tasks(_no_call, (), tasks, store, workers=2, progress=False)
    assert again == records


def _no_call(task):
    raise AssertionError("a finished replicate was computed again")

"""Evidence by tempered SMC against analytic evidences, dynesty, and its own error calibration."""
import numpy as np
import pytest
from scipy import special, stats

from evidence1d.inference.evidence import tempered_evidence
from evidence1d.inference.tempering import DEFAULT_PARTICLES
from evidence1d.inference.priors import JointPrior, Uniform

from gaussian_problems import linear_gaussian
from nested_reference import dynesty_log_z

PROBLEMS = [  # (dimension, prior kind, prior width, likelihood correlation)
    (1, "normal", 10.0, 0.0), (2, "normal", 1.0, 0.5), (4, "uniform", 20.0, 0.0),
    (6, "normal", 100.0, 0.8), (8, "uniform", 10.0, 0.0), (12, "normal", 10.0, 0.9),
]


@pytest.mark.parametrize("d,kind,width,corr", PROBLEMS)
def test_linear_gaussian_evidence(rng, d, kind, width, corr):
    # Analytic ln Z: Gaussian prior, Bishop (2006) eq. 2.115; wide box, ln Z = −d ln(volume).
    if kind == "uniform":
        corr = 0.0
    loglike, prior, truth, _, _ = linear_gaussian(rng, d, kind, width, corr)
    res = tempered_evidence(loglike, prior, rng=rng, n_particles=250, n_islands=16,
                            progress=False)
    assert abs(res.log_z - truth) < 3 * res.log_z_err
    assert abs(res.log_z - truth) < 0.15
    assert res.n_evaluations > 0 and res.islands[0].betas[-1] == 1.0
    assert res.islands[0].samples.shape[1:] == (250, d)


def test_bimodal_evidence_and_mode_weights(rng):
    # Mixture of two well separated Gaussians with weights 0.3/0.7 in a box [-10, 10]^2:
    # ln Z = ln(A) − ln(400) where A = total mass of the mixture likelihood (analytic).
    mus = np.array([[-4.0, -4.0], [4.0, 3.0]])
    w = np.array([0.3, 0.7])
    s = 0.4
    amp = 50.0

    def loglike(th):
        comps = [np.log(wk * amp) + stats.multivariate_normal(mu, s**2 * np.eye(2)).logpdf(th)
                 for wk, mu in zip(w, mus)]
        return special.logsumexp(np.stack(comps), axis=0)

    prior = JointPrior(["x", "y"], [Uniform(-10, 10)] * 2)
    truth = np.log(amp) - np.log(400.0)
    res = tempered_evidence(loglike, prior, rng=rng, n_particles=250, n_islands=16,
                            progress=False)
    assert abs(res.log_z - truth) < max(3 * res.log_z_err, 0.05) and abs(res.log_z - truth) < 0.15
    frac = np.mean(res.posterior_samples[:, 0] > 0)
    assert abs(frac - 0.7) < 0.08   # mode weight, binomial spread of correlated particles


def test_agrees_with_dynesty_on_a_nonlinear_problem(rng):
    # Banana-shaped likelihood (Haario et al., Bernoulli 7, 223 (2001)) in a uniform box.
    def loglike(th):
        x, y = th[:, 0], th[:, 1]
        return -0.5 * (x**2 / 4.0 + (y - 0.5 * x**2 + 1.0) ** 2 / 0.25) - np.log(2 * np.pi)

    prior = JointPrior(["x", "y"], [Uniform(-8, 8), Uniform(-4, 20)])
    ref, ref_err = dynesty_log_z(loglike, prior.transform, 2, np.random.default_rng(1))
    res = tempered_evidence(loglike, prior, rng=rng, n_particles=300, n_islands=8, progress=False)
    assert abs(res.log_z - ref) < 3 * np.hypot(res.log_z_err, ref_err)


@pytest.mark.slow
def test_error_bar_is_calibrated(seed):
    # 50 repeats of a cheap 3-d problem with analytic ln Z, at the default particles per
    # island: z-scores should be ~N(0, 1)
    # (a loose check: sd in [0.65, 1.45] and |z| < 3 in at least 96 % of runs).
    rng = np.random.default_rng(seed)
    z = []
    for _ in range(50):
        loglike, prior, truth, _, _ = linear_gaussian(rng, 3, "normal", 10.0, 0.5)
        res = tempered_evidence(loglike, prior, rng=rng, n_particles=DEFAULT_PARTICLES,
                                n_islands=8, progress=False)
        z.append((res.log_z - truth) / res.log_z_err)
    z = np.array(z)
    assert 0.65 < np.std(z) < 1.45
    assert np.mean(np.abs(z) < 3) >= 0.96
    assert abs(np.mean(z)) < 0.6

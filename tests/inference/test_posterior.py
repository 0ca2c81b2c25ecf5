"""emcee posterior against the analytic Gaussian posterior; checkpoint resume reproduces runs."""
import numpy as np
import pytest

from evidence1d.errors import InputError
from evidence1d.inference.posterior import sample_posterior

from gaussian_problems import linear_gaussian


def test_gaussian_posterior_mean_and_covariance(rng):
    # Analytic posterior of the linear-Gaussian model: Bishop (2006) eqs. 2.116–2.117.
    loglike, prior, _, mean, cov = linear_gaussian(rng, 3, "normal", 5.0, 0.7)
    res = sample_posterior(loglike, prior, rng=rng, n_steps=3000, progress=False)
    s = res.samples
    sd = np.sqrt(np.diag(cov))
    n_eff = s.shape[0] / 2.0        # thinned at τ/2: about two samples per τ
    assert np.all(np.abs(s.mean(0) - mean) < 5 * sd / np.sqrt(n_eff) + 0.02 * sd)
    np.testing.assert_allclose(np.cov(s, rowvar=False), cov, atol=0.1 * sd.max() ** 2)
    assert res.chain.shape == (3000, res.n_walkers, 3) and res.burn_in > 0
    assert 0.1 < np.mean(res.acceptance_fraction) < 0.9
    with pytest.raises(Exception):
        res.chain[0, 0, 0] = 1.0          # result arrays are read-only


class Interrupt(RuntimeError):
    pass


def test_resume_reproduces_an_uninterrupted_run(tmp_path, seed):
    loglike, prior, _, _, _ = linear_gaussian(np.random.default_rng(seed), 2, "normal", 5.0)
    total = {"n": 0}

    def counted(theta):
        total["n"] += 1
        return loglike(theta)

    full = sample_posterior(counted, prior, rng=np.random.default_rng(seed), n_steps=300,
                            progress=False, checkpoint=tmp_path / "a.h5", checkpoint_every=40)
    calls = {"n": 0}

    def flaky(theta):
        calls["n"] += 1
        if calls["n"] == total["n"] - 120:   # one call per step: dies near step 180
            raise Interrupt
        return loglike(theta)

    path = tmp_path / "b.h5"
    with pytest.raises(Interrupt):
        sample_posterior(flaky, prior, rng=np.random.default_rng(seed), n_steps=300,
                         progress=False, checkpoint=path, checkpoint_every=40)
    resumed = sample_posterior(loglike, prior, rng=np.random.default_rng(seed + 1), n_steps=300,
                               progress=False, checkpoint=path, checkpoint_every=40,
                               resume=True)
    assert resumed.resumed_from > 0 and resumed.resumed_from % 40 == 0
    np.testing.assert_array_equal(resumed.chain, full.chain)
    np.testing.assert_array_equal(resumed.log_prob, full.log_prob)
    np.testing.assert_allclose(resumed.acceptance_fraction, full.acceptance_fraction)


def test_same_seed_same_chain_and_bad_initial(seed):
    loglike, prior, _, _, _ = linear_gaussian(np.random.default_rng(seed), 2, "uniform", 10.0)
    a = sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=50,
                         progress=False)
    b = sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=50,
                         progress=False)
    np.testing.assert_array_equal(a.chain, b.chain)
    with pytest.raises(InputError):
        sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=50,
                         initial=np.full((32, 2), 50.0), progress=False)

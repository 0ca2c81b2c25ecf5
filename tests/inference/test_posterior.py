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
    with pytest.raises(InputError, match="outside"):
        sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=50,
                         initial=50.0 + 1e-3 * np.arange(64.0).reshape(32, 2), progress=False)


# ---------------------------------------------------------------- population proposals
def _twisted_gaussian(a=1.0, b=1.5, s=0.1):
    """The "twisted Gaussian" (banana) of Haario, Saksman & Tamminen, Comput. Stat. 14, 375
    (1999): x0 ~ N(0, a²), x1 | x0 ~ N(b (x0² − a²), s²).  Analytic moments: E x1 = 0,
    Var x1 = 2 b² a⁴ + s² (E x0⁴ = 3 a⁴ for a normal variable)."""
    from evidence1d.inference.priors import JointPrior, Uniform

    def loglike(theta):
        x0, x1 = theta[:, 0], theta[:, 1]
        return -0.5 * (x0 / a) ** 2 - 0.5 * ((x1 - b * (x0**2 - a**2)) / s) ** 2

    def draw(rng, n):
        x0 = a * rng.standard_normal(n)
        return np.column_stack([x0, b * (x0**2 - a**2) + s * rng.standard_normal(n)])

    # a box 12 sd wide in x0: its truncation is below 1e-30
    prior = JointPrior(["x0", "x1"], [Uniform(-12 * a, 12 * a), Uniform(-30.0, 60.0)])
    return loglike, prior, draw, 2 * b**2 * a**4 + s**2


def test_population_proposal_is_the_density_it_samples(rng):
    # The Metropolis–Hastings ratio is only right if log_density is the density that
    # __call__ draws from.  Checks: (i) log_density equals a brute-force mixture of
    # scipy.stats.multivariate_normal kernels, each with the covariance of its k nearest
    # neighbours (Breiman, Meisel & Purcell, Technometrics 19, 135 (1977)); (ii) it
    # integrates to 1 on a grid; (iii) draws have the mixture's analytic mean and covariance,
    # mean of the centres and cov(centres) + mean of the kernel covariances (law of total
    # covariance).
    from scipy import stats

    from evidence1d.inference.moves import PopulationProposal
    loglike, prior, draw, _ = _twisted_gaussian()
    pop = draw(rng, 200)
    prop = PopulationProposal(pop)
    n, m = pop.shape
    k = max(2 * m + 2, int(round(np.sqrt(n))))
    L = np.linalg.cholesky(np.cov(pop, rowvar=False))
    w = np.linalg.solve(L, pop.T).T
    dist = np.linalg.norm(w[:, None] - w[None], axis=2)
    covs = [L @ np.cov(w[np.argsort(dist[i])[:k]], rowvar=False) @ L.T for i in range(n)]
    x = draw(rng, 20) + 0.3 * rng.standard_normal((20, 2))
    brute = np.log(np.mean([stats.multivariate_normal(pop[i], covs[i]).pdf(x)
                            for i in range(n)], axis=0))
    np.testing.assert_allclose(prop.log_density(x), brute, rtol=1e-9)
    g0, g1 = np.linspace(-5, 5, 201), np.linspace(-6, 20, 521)
    grid = np.stack(np.meshgrid(g0, g1, indexing="ij"), -1).reshape(-1, 2)
    mass = np.exp(prop.log_density(grid)).sum() * (g0[1] - g0[0]) * (g1[1] - g1[0])
    assert abs(mass - 1.0) < 2e-3
    new, _ = prop(np.zeros((40_000, 2)), np.random.RandomState(1))
    cov = np.cov(pop, rowvar=False, bias=True) + np.mean(covs, axis=0)
    sd = np.sqrt(np.diag(cov))
    assert np.all(np.abs(new.mean(0) - pop.mean(0)) < 5 * sd / np.sqrt(40_000))
    np.testing.assert_allclose(np.cov(new, rowvar=False), cov, rtol=0.05, atol=0.02 * sd.max()**2)


def test_population_proposal_accepts_a_resampled_population(rng):
    # A resampled population repeats points; with a repeat among its own k nearest
    # neighbours a kernel's covariance was singular, the proposal refused the population and
    # the chain silently lost its population moves.  Now: every point keeps its kernel
    # (repeats carry weight), shaped by its k nearest distinct neighbours; the density is
    # that brute-force mixture (Breiman, Meisel & Purcell 1977) and integrates to 1.
    from scipy import stats

    from evidence1d.inference.moves import PopulationProposal
    _, _, draw, _ = _twisted_gaussian()
    distinct = draw(rng, 60)
    pop = distinct[np.concatenate([np.arange(60), rng.integers(0, 5, size=140)])]
    prop = PopulationProposal(pop)
    m = 2
    k = max(2 * m + 2, int(round(np.sqrt(60))))
    L = np.linalg.cholesky(np.cov(pop, rowvar=False))
    w = np.linalg.solve(L, distinct.T).T
    dist = np.linalg.norm(w[:, None] - w[None], axis=2)
    covs = [L @ np.cov(w[np.argsort(dist[i])[:k]], rowvar=False) @ L.T for i in range(60)]
    idx = [int(np.flatnonzero((distinct == p).all(1))[0]) for p in pop]
    x = draw(rng, 20) + 0.3 * rng.standard_normal((20, 2))
    brute = np.log(np.mean([stats.multivariate_normal(distinct[i], covs[i]).pdf(x)
                            for i in idx], axis=0))
    np.testing.assert_allclose(prop.log_density(x), brute, rtol=1e-9)
    g0, g1 = np.linspace(-5, 5, 201), np.linspace(-6, 20, 521)
    grid = np.stack(np.meshgrid(g0, g1, indexing="ij"), -1).reshape(-1, 2)
    mass = np.exp(prop.log_density(grid)).sum() * (g0[1] - g0[0]) * (g1[1] - g1[0])
    assert abs(mass - 1.0) < 2e-3


def test_population_moves_sample_a_twisted_gaussian_exactly_and_faster(rng):
    # The independence proposal must leave the posterior invariant (Tierney 1994): moments
    # of the twisted Gaussian agree with the analytic ones, and its autocorrelation time is
    # far below that of the local moves alone on the same banana.
    from evidence1d.inference.moves import population_moves
    loglike, prior, draw, var1 = _twisted_gaussian()
    pop = draw(rng, 1600)
    start = pop[:32]
    res = sample_posterior(loglike, prior, rng=rng, n_walkers=32, n_steps=1500, initial=start,
                           progress=False, population=pop)
    local = sample_posterior(loglike, prior, rng=rng, n_walkers=32, n_steps=1500,
                             initial=start, progress=False)
    s = res.samples
    n_eff = 32 * (res.n_steps - res.burn_in) / np.max(res.tau)
    assert abs(s[:, 0].mean()) < 5 / np.sqrt(n_eff)
    assert abs(s[:, 1].mean()) < 5 * np.sqrt(var1 / n_eff)
    assert abs(s[:, 0].var() - 1.0) < 0.1
    assert abs(s[:, 1].var() / var1 - 1.0) < 0.15
    assert np.max(res.tau) < np.max(local.tau) / 3
    assert res.population_moves and not local.population_moves
    assert set(res.move_acceptance) == {"population", "local"}
    assert 0.3 < res.move_acceptance["population"] <= 1.0
    # the per-move tallies recombine into emcee's own overall fraction (moves drawn with
    # weights 0.8 / 0.2; the drawn share of 1500 steps is within ±0.03 of 0.8)
    mix = 0.8 * res.move_acceptance["population"] + 0.2 * res.move_acceptance["local"]
    assert abs(np.mean(res.acceptance_fraction) - mix) < 0.03
    assert len(population_moves(pop)) == 4


def test_population_moves_fall_back_without_a_density():
    from evidence1d.inference.moves import default_moves, population_moves
    flat = np.column_stack([np.linspace(0, 1, 50), np.full(50, 2.0)])   # x1 does not vary
    assert len(population_moves(flat)) == len(default_moves())
    assert len(population_moves(np.zeros((2, 3)))) == len(default_moves())


def test_stops_once_converged_and_matches_the_analytic_posterior(rng):
    # Analytic posterior of the linear-Gaussian model (Bishop 2006, eqs. 2.116-2.117); the
    # stopping rule (every diagnostic passes, bulk and tail ESS >= target) must end the
    # chain well before the most steps, at a multiple of the check interval, and the
    # samples it keeps must still describe the posterior.
    from evidence1d.inference.posterior import STOP_CHECK_EVERY, STOP_MIN_STEPS
    loglike, prior, _, mean, cov = linear_gaussian(rng, 2, "normal", 5.0, 0.7)
    res = sample_posterior(loglike, prior, rng=rng, n_steps=5000, ess=800, progress=False)
    assert STOP_MIN_STEPS <= res.n_steps < 5000 and res.n_steps % STOP_CHECK_EVERY == 0
    assert res.max_steps == 5000 and "reached the target 800" in res.stop_rule
    from evidence1d.inference.diagnostics import diagnose
    d = diagnose(res.chain[res.burn_in:], res.names, tau=res.tau)
    assert d.ok and min(min(d.ess_bulk.values()), min(d.ess_tail.values())) >= 800
    sd = np.sqrt(np.diag(cov))
    s = res.samples
    assert np.all(np.abs(s.mean(0) - mean) < 5 * sd / np.sqrt(800))
    np.testing.assert_allclose(np.cov(s, rowvar=False), cov, atol=0.15 * sd.max() ** 2)
    # with no target every step is run
    rng2 = np.random.default_rng(1)
    a = sample_posterior(loglike, prior, rng=rng2, n_steps=res.n_steps + 100, progress=False)
    assert a.n_steps == res.n_steps + 100 and a.stop_rule == ""


def test_an_early_stop_resumes_to_the_same_chain(tmp_path, seed):
    # an interrupted run resumed with the rule stops where the uninterrupted one did
    loglike, prior, _, _, _ = linear_gaussian(np.random.default_rng(seed), 2, "normal", 5.0)
    kw = dict(progress=False, checkpoint_every=100)
    full = sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=3000,
                            ess=1500, checkpoint=tmp_path / "a.h5", **kw)
    assert 300 < full.n_steps < 3000, full.n_steps
    cut = tmp_path / "b.h5"
    sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=300,
                     checkpoint=cut, **kw)                       # "interrupted" at step 300
    resumed = sample_posterior(loglike, prior, rng=np.random.default_rng(seed + 1),
                               n_steps=3000, ess=1500, checkpoint=cut, resume=True, **kw)
    assert resumed.resumed_from == 300
    np.testing.assert_array_equal(resumed.chain, full.chain)
    assert resumed.stop_rule == full.stop_rule != ""
    # a finished early stop resumed again runs no further step
    again = sample_posterior(loglike, prior, rng=np.random.default_rng(seed + 2),
                             n_steps=3000, ess=1500, checkpoint=cut, resume=True, **kw)
    assert again.n_steps == full.n_steps and again.n_evaluations == 0


def test_walkers_start_distinct_from_a_resampled_population(rng):
    # A resampled population repeats points; walkers started on repeated points made the
    # snooker move propose NaN (direction 0/0; ter Braak & Vrugt, Stat. Comput. 18, 435
    # (2008)) and emcee stopped with "At least one parameter value was NaN".
    from evidence1d.inference.posterior import population_start
    loglike, prior, _, mean, cov = linear_gaussian(rng, 3, "normal", 5.0, 0.7)
    draws = rng.multivariate_normal(mean, cov, size=8)
    pool = draws[rng.integers(0, 8, size=128)]            # 128 rows, at most 8 distinct
    start = population_start(pool, 32, rng)
    assert start.shape == (32, 3)
    assert np.unique(start, axis=0).shape[0] == 32
    lo, hi = draws.min(0), draws.max(0)                   # inside the population's hull box
    assert np.all((start >= lo) & (start <= hi))
    import emcee
    res = sample_posterior(loglike, prior, rng=rng, n_walkers=32, n_steps=200,
                           initial=start, progress=False,
                           moves=[(emcee.moves.DESnookerMove(), 1.0)])
    assert np.all(np.isfinite(res.chain))
    with pytest.raises(InputError, match="repeat another"):
        sample_posterior(loglike, prior, rng=rng, n_walkers=32, n_steps=10,
                         initial=pool[:32], progress=False)
    # more distinct rows than walkers: a subset of them, no repeats
    wide = population_start(rng.normal(size=(100, 3)), 32, rng)
    assert np.unique(wide, axis=0).shape[0] == 32

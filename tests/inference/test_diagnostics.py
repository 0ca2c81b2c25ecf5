"""Diagnostics on chains whose answer is known; PSIS-LOO against exact leave-one-out."""
import numpy as np
from scipy import stats

from evidence1d.inference.diagnostics import diagnose, psis_loo


def test_independent_chains_pass_and_stuck_chains_fail(rng):
    good = rng.normal(size=(2000, 16, 2))
    d = diagnose(good, ["a", "b"], acceptance=np.full(16, 0.4))
    # White noise: R-hat → 1, ESS ≈ number of draws, τ ≈ 1 (Vehtari et al., BA 16, 667 (2021)).
    assert d.ok and all(abs(v - 1) < 0.01 for v in d.rhat.values())
    assert all(v > 0.8 * 32000 for v in d.ess_bulk.values())
    assert all(abs(v - 1) < 0.3 for v in d.tau.values())
    bad = good.copy()
    bad[:, :8, 0] += 3.0           # half the walkers sit elsewhere
    d2 = diagnose(bad, ["a", "b"], acceptance=np.full(16, 0.05))
    assert not d2.ok
    assert any("R-hat of a" in w for w in d2.warnings)
    assert any("acceptance" in w for w in d2.warnings)
    # The acceptance range judges local moves only: independence proposals are accepted
    # more often the closer they are to the posterior (Tierney, Ann. Statist. 22, 1701
    # (1994)); there the chains themselves decide, and stuck chains still fail on R-hat.
    assert not diagnose(good, ["a", "b"], acceptance=np.full(16, 0.9)).ok
    assert diagnose(good, ["a", "b"], acceptance=np.full(16, 0.9), independence=True).ok
    assert diagnose(good, ["a", "b"], acceptance=np.full(16, 0.05), independence=True).ok
    assert not diagnose(bad, ["a", "b"], acceptance=np.full(16, 0.05), independence=True).ok


def test_psis_loo_matches_exact_leave_one_out(rng):
    # Normal mean with known σ = 1 and flat prior: the exact LOO predictive of y_i is
    # N(ȳ_{-i}, 1 + 1/(n−1)) (conjugate algebra; Gelman et al., BDA3 (2013) §2.5).
    n = 30
    y = rng.normal(size=n)
    mu = rng.normal(y.mean(), 1 / np.sqrt(n), 8000)
    ll = stats.norm(mu[:, None], 1.0).logpdf(y[None, :])
    res = psis_loo(ll)
    loo_mean = (y.sum() - y) / (n - 1)
    exact = stats.norm(loo_mean, np.sqrt(1 + 1 / (n - 1))).logpdf(y).sum()
    assert abs(res.elpd_loo - exact) < 0.1 and res.pareto_k_max < 0.7 and res.se > 0


def test_rhat_between_target_and_limit_is_a_note_for_long_chains(rng):
    # walkers with small fixed offsets: R-hat ≈ sqrt(1 + var(offset)/var) ≈ 1.02 (Gelman &
    # Rubin 1992 between/within variance); a long white-noise chain has τ ≈ 1 and a large ESS
    n_steps, n_walkers = 4000, 16
    offsets = np.linspace(-0.35, 0.35, n_walkers)
    chain = rng.standard_normal((n_steps, n_walkers, 1)) + offsets[None, :, None]
    d = diagnose(chain, ["x"], acceptance=np.full(n_walkers, 0.3))
    assert 1.01 <= d.rhat["x"] < 1.05
    assert d.ok
    assert any(w.startswith("note: R-hat of x") for w in d.warnings)
    # larger offsets: R-hat above the hard limit fails
    chain = rng.standard_normal((n_steps, n_walkers, 1)) + 3 * offsets[None, :, None]
    d = diagnose(chain, ["x"], acceptance=np.full(n_walkers, 0.3))
    assert d.rhat["x"] >= 1.05 and not d.ok

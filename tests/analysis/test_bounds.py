"""Prior bounds flagged when the posterior piles up on them; window and mass checked against
the normal and uniform distributions (scipy.stats)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from evidence1d.analysis.bounds import BOUND_MASS_MAX, BOUND_WINDOW, bound_flags
from evidence1d.inference.priors import LogUniform, Normal, Uniform


def test_a_flat_posterior_is_not_flagged(rng):
    # uniform over the prior: BOUND_WINDOW of the mass in each window, below BOUND_MASS_MAX
    x = rng.uniform(0.0, 2.0, size=(50_000, 1))
    assert bound_flags(["a"], x, {"a": Uniform(0.0, 2.0)}) == []


def test_a_half_normal_at_the_lower_bound_is_flagged_with_its_mass(rng):
    # |z| σ with σ = 5 % of the width: mass within 1 % of the width of 0 is
    # P(|z| < 0.2) = 2Φ(0.2) − 1 (standard normal)
    x = np.abs(rng.normal(0.0, 0.05, size=(50_000, 1)))
    flags = bound_flags(["a"], x, {"a": Uniform(0.0, 1.0)})
    assert len(flags) == 1
    f = flags[0]
    exact = 2 * stats.norm.cdf(BOUND_WINDOW / 0.05) - 1
    assert f["parameter"] == "a" and f["bound"] == "lower" and f["bound_value"] == 0.0
    assert f["mass"] == pytest.approx(exact, abs=5 * math.sqrt(exact / 50_000))
    assert f["mass"] > BOUND_MASS_MAX and f["mass_outside"] == 0.0
    assert "widen" in f["advice"] and not f["nested_limit"]


def test_upper_bound_and_log_uniform_window(rng):
    # log-uniform prior on [1, 100]: the window is 1 % of ln 100 in ln θ, i.e. θ above
    # 100 · 100^(−0.01); a posterior uniform in ln θ over the top 10 % of ln θ puts 10 %
    # of its mass there
    lo = math.log(100.0) * 0.9
    x = np.exp(rng.uniform(lo, math.log(100.0), size=(40_000, 1)))
    f = bound_flags(["J"], x, {"J": LogUniform(1.0, 100.0)})
    assert [g["bound"] for g in f] == ["upper"]
    assert f[0]["mass"] == pytest.approx(0.1, abs=0.01)


def test_mass_beyond_a_bound_and_the_nested_limit(rng):
    x = np.column_stack([rng.normal(0.0, 0.02, 20_000), np.abs(rng.normal(0, 0.01, 20_000))])
    priors = {"c_imp": Uniform(0.0, 0.5), "J_perp": Uniform(0.0, 1.0)}
    flags = {f["parameter"]: f for f in bound_flags(["c_imp", "J_perp"], x, priors,
                                                    {"parameter": "J_perp", "value": 0.0})}
    assert flags["c_imp"]["mass_outside"] == pytest.approx(0.5, abs=0.02)   # half below 0
    assert "should not allow" in flags["c_imp"]["advice"]
    assert flags["J_perp"]["nested_limit"] and "Savage–Dickey" in flags["J_perp"]["advice"]


def test_unbounded_priors_are_skipped(rng):
    x = rng.normal(0.0, 1.0, size=(1000, 1))
    assert bound_flags(["g"], x, {"g": Normal(0.0, 1.0)}) == []


def test_a_narrow_posterior_far_from_the_bound_of_a_very_wide_prior_is_not_flagged(rng):
    # an intensity scale 2.9 ± 0.1 under a data-free prior on [0, 3.6e9]: the whole posterior
    # lies within 1 % of the prior width of 0, yet 29 of its own standard deviations away
    x = rng.normal(2.9, 0.1, size=(20_000, 1))
    assert bound_flags(["s"], x, {"s": Uniform(0.0, 3.6e9)}) == []
    # piled against that bound on its own scale (exponential, mean 0.1), it is flagged: the
    # mass within half a standard deviation of 0 is 1 − e^{−1/2} = 0.39
    x = rng.exponential(0.1, size=(20_000, 1))
    f = bound_flags(["s"], x, {"s": Uniform(0.0, 3.6e9)})
    assert [g["bound"] for g in f] == ["lower"]
    assert f[0]["mass"] == pytest.approx(1 - math.exp(-0.5), abs=0.02)

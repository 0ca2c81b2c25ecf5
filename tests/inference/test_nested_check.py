"""Direct ln K against the Savage–Dickey ratio (evidence1d.inference.nested_check).

The reference is analytic: one Gaussian measurement y = μ + ε, ε ~ N(0, s²); the full model
has μ ~ U[0, a] (the limit μ = 0 on the boundary, as J_⊥ = 0 is), the nested one μ = 0.
Then Z_nested = N(y; 0, s) and Z_full = [Φ((a − y)/s) − Φ(−y/s)]/a in closed form, and the
Savage–Dickey ratio p(0 | y)/π(0) equals Z_nested/Z_full exactly (Dickey, Ann. Math. Stat.
42, 204 (1971)).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from evidence1d.inference.compare import (compare_models, savage_dickey, verdict_reliability)
from evidence1d.inference.nested_check import nested_consistency, priors_agree
from evidence1d.inference.priors import Normal, Uniform

Y, S, A = 0.3, 0.2, 5.0


def _exact():
    ln_nested = stats.norm.logpdf(Y, 0.0, S)
    ln_full = math.log((stats.norm.cdf((A - Y) / S) - stats.norm.cdf(-Y / S)) / A)
    return ln_nested, ln_full


def _posterior_samples(n, rng):
    """μ | y: N(y, s²) truncated to [0, a], drawn exactly."""
    lo, hi = (0.0 - Y) / S, (A - Y) / S
    return stats.truncnorm.rvs(lo, hi, loc=Y, scale=S, size=n, random_state=rng)


def _sd(rng):
    return savage_dickey(_posterior_samples(4000, rng), Uniform(0.0, A), 0.0,
                         rng=rng).to_dict()


def test_exact_evidences_agree_with_the_savage_dickey_ratio():
    rng = np.random.default_rng(3)
    ln_n, ln_f = _exact()
    sd = _sd(rng)
    # the boundary-kernel estimate on the density's rising flank is close to the analytic
    # ratio (Jones 1993; plain reflection was 0.25 nat high here)
    assert sd["ln_bf_nested_vs_full"] == pytest.approx(ln_n - ln_f, abs=0.15)
    c = nested_consistency("full", "nested", {"full": ln_f, "nested": ln_n},
                           {"full": 0.05, "nested": 0.05}, sd)
    assert c["checked"] and c["consistent"], c
    assert c["ln_k_direct"] == pytest.approx(ln_n - ln_f)


def test_a_biased_evidence_is_caught():
    rng = np.random.default_rng(4)
    ln_n, ln_f = _exact()
    sd = _sd(rng)
    # the full family's ln Z underestimated by 4 nats with a small claimed error: the error
    # seen in a tempered run with few particles on a posterior piled at its limit
    c = nested_consistency("full", "nested", {"full": ln_f - 4.0, "nested": ln_n},
                           {"full": 0.07, "nested": 0.25}, sd)
    assert c["checked"] and not c["consistent"]
    assert c["difference"] == pytest.approx(4.0, abs=0.3)
    # within the 1-nat floor it is not flagged, however small the errors
    c = nested_consistency("full", "nested", {"full": ln_f - 0.6, "nested": ln_n},
                           {"full": 0.01, "nested": 0.01}, sd)
    assert c["consistent"]


def test_no_mass_at_the_limit_contradicts_a_direct_ln_k_for_the_nested_family():
    sd = {"ln_bf_nested_vs_full": -math.inf, "ln_bf_err": math.inf}
    c = nested_consistency("f", "n", {"f": 0.0, "n": 5.0}, {"f": 0.2, "n": 0.2}, sd)
    assert c["checked"] and not c["consistent"]
    c = nested_consistency("f", "n", {"f": 5.0, "n": 0.0}, {"f": 0.2, "n": 0.2}, sd)
    assert c["checked"] and c["consistent"]


def test_differing_priors_or_options_skip_the_check():
    full = {"J": Uniform(0.0, 5.0), "J_perp": Uniform(0.0, 2.0), "g": Normal(2.1, 0.1)}
    assert priors_agree(full, {"J": Uniform(0.0, 5.0), "g": Normal(2.1, 0.1)}, "J_perp") == []
    assert priors_agree(full, {"J": Uniform(0.0, 6.0), "g": Normal(2.1, 0.1)},
                        "J_perp") == ["J"]
    assert priors_agree(full, {"J": Uniform(0.0, 5.0)}, "J_perp") == ["g"]
    c = nested_consistency("f", "n", {"f": 0.0, "n": 9.0}, {"f": 0.1, "n": 0.1},
                           {"ln_bf_nested_vs_full": 1.0, "ln_bf_err": 0.1},
                           differing_priors=["J"])
    assert not c["checked"] and c["consistent"] and "J" in c["why_not"]


def _reliability(check):
    models = {"spinon": (0.0, 0.2, True), "coupled": (-12.8, 0.1, False),
              "ordered": (-300.0, 0.2, False)}
    cmp_ = compare_models(models)
    islands = {n: [v[0]] * 4 for n, v in models.items()}
    ok = {n: True for n in models}
    return verdict_reliability(cmp_, islands, ok, nested_checks={check["full"]: check})


def test_an_inconsistent_pair_among_the_leaders_makes_the_verdict_unreliable():
    sd = {"ln_bf_nested_vs_full": 8.1, "ln_bf_err": 0.04}
    lz = {"spinon": 0.0, "coupled": -12.8}
    err = {"spinon": 0.2, "coupled": 0.1}
    rel = _reliability(nested_consistency("coupled", "spinon", lz, err, sd))
    assert not rel["verdict_reliable"] and not rel["nested_consistent"]
    assert any("Savage–Dickey" in r for r in rel["reasons"])
    lz["coupled"] = -8.3
    rel = _reliability(nested_consistency("coupled", "spinon", lz, err, sd))
    assert rel["verdict_reliable"] and rel["nested_consistent"], rel["reasons"]

"""Bayes-factor wording, model probabilities and the Savage–Dickey ratio."""
import numpy as np
import pytest
from scipy import stats

from evidence1d.errors import InputError
from evidence1d.inference.compare import compare_models, kass_raftery_wording, savage_dickey
from evidence1d.inference.priors import Normal, Uniform


@pytest.mark.parametrize("two_ln_k,word", [
    # Kass & Raftery, JASA 90, 773 (1995), §3.2: 0–2, 2–6, 6–10, > 10.
    (0.0, "not worth more than a bare mention"), (1.999, "not worth more than a bare mention"),
    (2.0, "positive"), (5.999, "positive"), (6.0, "strong"), (9.999, "strong"),
    (10.0, "very strong"), (-12.0, "very strong"), (-3.0, "positive")])
def test_kass_raftery_boundaries(two_ln_k, word):
    assert kass_raftery_wording(two_ln_k) == word


def test_probabilities_and_bayes_factors():
    c = compare_models({"chain": (-100.0, 0.1, True), "order": (-104.0, 0.2, False),
                        "metal": (-110.0, 0.3, False)})
    # Equal prior odds: p_i = Z_i / Σ Z_j (Kass & Raftery 1995, eq. 2).
    z = np.exp([0.0, -4.0, -10.0])
    assert c.posterior_probability["chain"] == pytest.approx(z[0] / z.sum())
    assert c.p_one_dimensional == pytest.approx(z[0] / z.sum())
    pair = [p for p in c.pairs if (p.a, p.b) == ("chain", "order")][0]
    assert pair.ln_k == pytest.approx(4.0) and pair.ln_k_err == pytest.approx(np.hypot(0.1, 0.2))
    assert pair.wording == "strong" and len(c.pairs) == 3
    assert c.best == "chain" and "chain" in c.verdict and "equal prior" in c.verdict
    odds = compare_models({"a": (0.0, 0.1, True), "b": (0.0, 0.1, False)},
                          prior_odds={"a": 1, "b": 3})
    assert odds.p_one_dimensional == pytest.approx(0.25)
    flagged = compare_models({"a": (0.0, 0.1, True), "b": (-1.0, 0.1, False)}, unreliable=["b"])
    assert flagged.verdict.startswith("UNRELIABLE")
    with pytest.raises(InputError):
        compare_models({"a": (0.0, 0.1, True)})


def test_savage_dickey_equals_exact_nested_bayes_factor(rng):
    # y_i ~ N(μ, σ²), full model μ ~ N(0, τ²), nested μ = 0.  Exact Bayes factor:
    # BF_01 = N(ȳ; 0, σ²/n) / N(ȳ; 0, τ² + σ²/n)  (Dickey 1971; analytic marginal of ȳ).
    n, sigma, tau = 20, 1.0, 2.0
    y = rng.normal(0.3, sigma, n)
    ybar, v = y.mean(), sigma**2 / n
    exact = stats.norm(0, np.sqrt(v)).logpdf(ybar) - stats.norm(0, np.sqrt(tau**2 + v)).logpdf(ybar)
    pv = 1 / (1 / v + 1 / tau**2)
    post = rng.normal(pv * ybar / v, np.sqrt(pv), 20000)   # exact posterior draws
    res = savage_dickey(post, Normal(0, tau), 0.0, rng=rng)
    assert abs(res.ln_bf - exact) < max(3 * res.ln_bf_err, 0.03)
    assert not res.reflected and res.ln_bf_err > 0


def test_savage_dickey_at_a_prior_boundary(rng):
    # Parameter ≥ 0 with uniform prior on [0, 2] and a half-normal posterior (likelihood
    # peaked at 0, width s): exact posterior density at 0 is 2 / (s √(2π)) · 1/(2Φ(2/s) − 1).
    s = 0.3
    post = np.abs(rng.normal(0, s, 20000))
    exact = np.log(2 / (s * np.sqrt(2 * np.pi)) / (2 * stats.norm.cdf(2 / s) - 1)) - np.log(0.5)
    res = savage_dickey(post, Uniform(0.0, 2.0), 0.0, rng=rng)
    assert res.reflected
    assert abs(res.ln_bf - exact) < max(3 * res.ln_bf_err, 0.05)


def test_nested_limits_counted_in_p_one_dimensional():
    """one_dimensional_limits: include. Hypotheses (Jeffreys' split, each half of the
    family's prior): the 1D family a (prior 1/2, Z = 1), the limit of b (1/4, Z e · 3) and
    the rest of b (1/4, Z e): P(1D) = (1/2 + 3e/4) / (1/2 + e), by hand."""
    import math

    from evidence1d.inference.compare import compare_models
    from evidence1d.inference.nested_limits import with_nested_limits
    cmp_ = compare_models({"a": (0.0, 0.0, True), "b": (1.0, 0.0, False)})
    out = with_nested_limits(cmp_, {"b": (math.log(3.0), 0.0)})
    e = math.e
    assert out.p_one_dimensional == pytest.approx((0.5 + 0.75 * e) / (0.5 + e), rel=1e-12)
    assert out.p_one_dimensional != pytest.approx(cmp_.p_one_dimensional)
    assert out.one_dimensional_limits == "include"
    assert f"P(one-dimensional | data) = {out.p_one_dimensional:.3g}" in out.verdict
    assert "counting the nested one-dimensional limits of b" in out.verdict
    # a family without a limit leaves the number as it was
    same = with_nested_limits(cmp_, {})
    assert same.p_one_dimensional == cmp_.p_one_dimensional and same.verdict == cmp_.verdict


def test_verdict_prints_the_error_to_its_first_significant_digit():
    """2 ln K ± its error: a small error is shown, not rounded to "± 0.0"."""
    small = compare_models({"a": (-1163.32, 0.01, True), "b": (-2381.48, 0.01, False)})
    assert "2 ln K = 2436.32 ± 0.03," in small.verdict
    wide = compare_models({"a": (0.0, 0.5, True), "b": (-3.0, 0.5, False)})
    assert "2 ln K = 6.0 ± 1.4," in wide.verdict

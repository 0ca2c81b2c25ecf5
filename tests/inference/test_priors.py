"""Prior transforms and densities against scipy.stats; one-line errors for bad declarations."""
import numpy as np
import pytest
from scipy import stats

from evidence1d.errors import InputError
from evidence1d.inference.prior_specs import prior_from_spec
from evidence1d.inference.priors import (Fixed, JointPrior, LogUniform, Normal, TruncatedNormal,
                                         Uniform)

U = np.linspace(0.001, 0.999, 57)

CASES = [
    # (prior, scipy frozen distribution): the reference quantile functions and densities.
    (Uniform(-1.0, 3.0), stats.uniform(-1.0, 4.0)),
    (LogUniform(0.05, 20.0), stats.loguniform(0.05, 20.0)),
    (Normal(2.1, 0.1), stats.norm(2.1, 0.1)),
    (TruncatedNormal(0.0, 1.0, -0.5, 2.0), stats.truncnorm(-0.5, 2.0)),
    (TruncatedNormal(0.0, 1.0, 3.0, 6.0), stats.truncnorm(3.0, 6.0)),     # upper tail
    (TruncatedNormal(1.0, 2.0, -9.0, -5.0), stats.truncnorm(-5.0, -3.0, 1.0, 2.0)),
]


@pytest.mark.parametrize("prior,ref", CASES)
def test_transform_and_density_match_scipy(prior, ref):
    # scipy.stats ppf / logpdf are the reference implementations.
    np.testing.assert_allclose(prior.transform(U), ref.ppf(U), rtol=1e-9, atol=1e-12)
    x = ref.ppf(U)
    np.testing.assert_allclose(prior.log_pdf(x), ref.logpdf(x), rtol=1e-9, atol=1e-10)
    lo, hi = prior.support
    if np.isfinite(lo):
        assert prior.log_pdf(lo - 1e-6 * (1 + abs(lo))) == -np.inf
        assert prior.log_pdf(hi + 1e-6 * (1 + abs(hi))) == -np.inf
    assert prior.pdf_at(float(ref.median())) == pytest.approx(ref.pdf(ref.median()), rel=1e-9)


def test_transform_of_extreme_u_is_finite():
    for p in (Normal(0, 1), TruncatedNormal(0, 1, -1, 1), LogUniform(1e-3, 1e3)):
        assert np.all(np.isfinite(p.transform(np.array([0.0, 1.0]))))


def test_spec_round_trip():
    for prior, _ in CASES + [(Fixed(1.5), None)]:
        assert prior_from_spec(prior.to_spec(), "x") == prior
        assert isinstance(prior.describe(), str)


def test_joint_prior_fixed_parameters_and_shapes(rng):
    jp = JointPrior(["J", "delta", "g"], [LogUniform(0.1, 10), Fixed(1.0), Normal(2, 0.1)])
    assert jp.free_names == ("J", "g")
    th = jp.sample(rng, 50)
    assert th.shape == (50, 2)
    assert np.all(jp.in_support(th))
    full = jp.expand(th)
    assert full["delta"].shape == (50, 1) and np.all(full["delta"] == 1.0)
    np.testing.assert_array_equal(full["J"][:, 0], th[:, 0])
    lp = jp.log_prob(th)
    ref = stats.loguniform(0.1, 10).logpdf(th[:, 0]) + stats.norm(2, 0.1).logpdf(th[:, 1])
    np.testing.assert_allclose(lp, ref, rtol=1e-12)
    out = np.array([[20.0, 2.0]])
    assert jp.log_prob(out)[0] == -np.inf and not jp.in_support(out)[0]


BAD = [
    ({"kind": "unifrom", "lower": 0, "upper": 1}, "did you mean 'uniform'"),
    ({"lower": 0, "upper": 1}, "missing required key 'kind'"),
    ({"kind": "uniform", "lower": 0}, "missing required key 'upper'"),
    ({"kind": "uniform", "lower": 2, "upper": 1}, "must be smaller"),
    ({"kind": "uniform", "lower": 1, "upper": 1}, "must be smaller"),
    ({"kind": "log_uniform", "lower": 0, "upper": 1}, "0 < lower"),
    ({"kind": "log_uniform", "lower": -1, "upper": 1}, "0 < lower"),
    ({"kind": "normal", "mean": 0, "sd": 0}, "'parameters.J.prior.sd': expected a number > 0"),
    ({"kind": "truncated_normal", "mean": 0, "sd": -1, "lower": 0, "upper": 1},
     "'parameters.J.prior.sd': expected a number > 0"),
    ({"kind": "normal", "mean": "abc", "sd": 1}, "expected a finite number; got 'abc'"),
    ({"kind": "normal", "mean": True, "sd": 1}, "expected a finite number; got True"),
    ({"kind": "normal", "mean": float("nan"), "sd": 1}, "finite"),
    ({"kind": "normal", "mean": 0, "sd": 1, "lowr": 0}, "unknown key 'lowr'"),
    ({"kind": "fixed"}, "missing required key 'value'"),
    ("uniform", "expected a mapping"),
]


@pytest.mark.parametrize("spec,text", BAD)
def test_bad_declarations_give_one_line_input_errors(spec, text):
    with pytest.raises(InputError) as info:
        prior_from_spec(spec, "parameters.J.prior")
    msg = str(info.value)
    assert "\n" not in msg and text in msg and "parameters.J.prior" in msg


def test_numeric_strings_are_accepted():
    # PyYAML reads 1e-3 (no dot) as a string; common practice is to accept it.
    assert prior_from_spec({"kind": "log_uniform", "lower": "1e-3", "upper": 1}, "x").lower == 1e-3


def test_joint_prior_finds_a_prior_by_name():
    jp = JointPrior(["J", "g"], [Uniform(0.0, 1.0), Fixed(2.0)])
    assert jp.prior_of("g") == Fixed(2.0) and jp.prior_of("J") == Uniform(0.0, 1.0)
    with pytest.raises(InputError, match="unknown parameter 'j'"):
        jp.prior_of("j")


@pytest.mark.parametrize("names, priors, key", [
    (["J", "J"], [Uniform(0, 1), Uniform(0, 1)], "names"),
    (["J"], [Uniform(0, 1), Uniform(0, 1)], "priors"),
    (["J"], ["uniform"], "priors.J"),
])
def test_joint_prior_rejects_bad_declarations_naming_the_key(names, priors, key):
    with pytest.raises(InputError) as info:
        JointPrior(names, priors)
    assert info.value.key == key and "\n" not in str(info.value)

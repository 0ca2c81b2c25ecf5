"""Prior sensitivity by reweighting, against the exact evidence of a Gaussian likelihood
under uniform and log-uniform priors (closed form and independent quadrature)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, stats

from evidence1d.analysis.sensitivity import (prior_sensitivity, prior_variants,
                                             reweighted_log_z)
from evidence1d.inference.priors import LogUniform, Normal, Uniform

S = 0.1          # posterior sd of μ: n = 100 points of unit error (s = σ/√n)


def _log_z(prior, ybar, s=S):
    """ln ∫ N(μ; ȳ, s²) π(μ) dμ (the likelihood up to a constant that cancels in every
    difference): closed form for a uniform prior (Φ differences), adaptive quadrature
    otherwise."""
    lo, hi = prior.support
    if isinstance(prior, Uniform):
        mass = stats.norm.cdf((hi - ybar) / s) - stats.norm.cdf((lo - ybar) / s)
        return math.log(mass / (hi - lo))
    f = lambda m: stats.norm.pdf(m, ybar, s) * math.exp(prior.log_pdf(np.array([m]))[0])  # noqa: E731
    return math.log(integrate.quad(f, max(lo, ybar - 12 * s), min(hi, ybar + 12 * s),
                                   points=[ybar])[0])


def _posterior(rng, prior, ybar, n=40_000):
    """Exact posterior draws ∝ N(μ; ȳ, s²) π(μ) by rejection from the truncated normal."""
    lo, hi = prior.support
    a, b = (lo - ybar) / S, (hi - ybar) / S
    x = stats.truncnorm(a, b, loc=ybar, scale=S).rvs(size=4 * n, random_state=rng)
    if isinstance(prior, LogUniform):              # accept with probability ∝ 1/μ
        x = x[rng.random(x.size) < lo / x]
    return x[:n]


@pytest.mark.parametrize("prior, ybar", [(Uniform(0.0, 8.0), 2.0), (Uniform(1.0, 9.0), 4.0),
                                         (LogUniform(0.5, 50.0), 3.0)])
def test_reweighting_against_exact_evidences(rng, prior, ybar):
    x = _posterior(rng, prior, ybar)
    base = _log_z(prior, ybar)
    for label, new, widens, moved in prior_variants(prior):
        rw = reweighted_log_z(x, prior, new, widens, moved)
        assert rw["valid"], (label, rw["why"])
        exact = _log_z(new, ybar) - base
        assert abs(rw["delta_ln_z"] - exact) < 5 * rw["err"] + 1e-3, (label, rw, exact)


def test_widths_of_the_variants():
    v = {lab: new for lab, new, _, _ in prior_variants(Uniform(0.0, 3.0))}
    assert v["width × 0.5"] == Uniform(0.0, 1.5) and v["width × 2"] == Uniform(0.0, 6.0)
    v = {lab: new for lab, new, _, _ in prior_variants(Uniform(1.0, 3.0))}
    assert v["width × 2"] == Uniform(0.0, 4.0) and v["log-uniform"] == LogUniform(1.0, 3.0)
    v = {lab: new for lab, new, _, _ in prior_variants(LogUniform(0.1, 10.0))}
    assert v["width × 2"].lower == pytest.approx(0.01) and v["uniform"] == Uniform(0.1, 10.0)
    v = {lab: new for lab, new, _, _ in prior_variants(Normal(2.1, 0.1))}
    assert v["width × 2"] == Normal(2.1, 0.2)


def test_widening_at_a_bound_the_posterior_touches_needs_a_re_run(rng):
    prior = Uniform(0.0, 8.0)
    x = _posterior(rng, prior, 7.95)
    doubled = [v for v in prior_variants(prior) if v[0] == "width × 2"][0]
    rw = reweighted_log_z(x, prior, doubled[1], doubled[2], doubled[3])
    assert not rw["valid"] and rw["delta_ln_z"] is None and "moves out" in rw["why"]


def test_ln_k_follows_the_occam_factor(rng):
    # "a" and "b" share μ (same prior, same posterior): changing it moves both ln Z alike
    # and leaves ln K; "b" also has c, well constrained inside uniform [0, 4]: doubling its
    # width lowers ln Z_b by ln 2, raising ln K by ln 2 (Occam factor; Kass & Raftery 1995)
    mu = _posterior(rng, Uniform(0.0, 8.0), 2.0)
    c = _posterior(rng, Uniform(0.0, 4.0), 1.5)
    models = {
        "a": {"log_z": 0.0, "log_z_err": 0.1, "one_dimensional": True, "names": ["mu"],
              "samples": mu[:, None], "priors": {"mu": Uniform(0.0, 8.0)}},
        "b": {"log_z": -1.0, "log_z_err": 0.1, "one_dimensional": False,
              "names": ["mu", "c"], "samples": np.column_stack([mu, c]),
              "priors": {"mu": Uniform(0.0, 8.0), "c": Uniform(0.0, 4.0)}}}
    out = prior_sensitivity(models)
    assert out["families"] == ["a", "b"] and out["ln_k"] == pytest.approx(1.0)
    rows = {(r["parameter"], r["change"]): r for r in out["rows"]}
    for change in ("width × 0.5", "width × 2"):
        r = rows[("mu", change)]
        assert r["families"] == ["a", "b"] and r["method"] == "reweighting"
        assert r["ln_k"] == pytest.approx(1.0, abs=1e-12)
    r = rows[("c", "width × 2")]
    assert r["ln_k"] == pytest.approx(1.0 + math.log(2.0), abs=0.01)
    p1 = 1 / (1 + math.exp(-1.0 - math.log(2.0)))        # equal prior odds
    assert r["p_one_dimensional"] == pytest.approx(p1, abs=0.005)
    assert rows[("c", "width × 0.5")]["ln_k"] == pytest.approx(1.0 - math.log(2.0), abs=0.01)


def test_rows_that_reweighting_cannot_give_take_the_re_run_evidences(rng):
    # "a" has μ piled against the upper bound 8 of its uniform prior (ȳ = 7.95): doubling the
    # width reaches likelihood the samples never saw, so reweighting is refused and the row
    # must take the evidence of a new run under that prior (here the exact one); "b" shares μ
    # with the same posterior, so it is re-run too (Kass & Raftery 1995, §5)
    prior = Uniform(0.0, 8.0)
    mu = _posterior(rng, prior, 7.95)
    c = _posterior(rng, Uniform(0.0, 4.0), 1.5)
    base_a, base_b = _log_z(prior, 7.95), _log_z(prior, 7.95) - math.log(4.0) + math.log(
        stats.norm.cdf((4.0 - 1.5) / S) - stats.norm.cdf(-1.5 / S))
    models = {
        "a": {"log_z": base_a, "log_z_err": 0.01, "one_dimensional": True, "names": ["mu"],
              "samples": mu[:, None], "priors": {"mu": prior}},
        "b": {"log_z": base_b, "log_z_err": 0.01, "one_dimensional": False,
              "names": ["mu", "c"], "samples": np.column_stack([mu, c]),
              "priors": {"mu": prior, "c": Uniform(0.0, 4.0)}}}
    from evidence1d.analysis.sensitivity import rerun_requests
    req = rerun_requests(models)
    # halving keeps [0, 4], where no sample lies; doubling moves the bound 8 the samples touch
    assert [(p, ch, n) for p, ch, n, _ in req] == [("mu", "width × 0.5", "a"),
                                                  ("mu", "width × 0.5", "b"),
                                                  ("mu", "width × 2", "a"),
                                                  ("mu", "width × 2", "b")]
    wide = req[2][3]
    assert wide == Uniform(0.0, 16.0)
    without = {(r["parameter"], r["change"]): r for r in prior_sensitivity(models)["rows"]}
    assert without[("mu", "width × 2")]["method"] == "needs a re-run"
    assert without[("mu", "width × 2")]["ln_k"] is None
    # the exact evidences under the doubled prior: the Occam factor alone moves both by
    # ln(8/16) once the whole likelihood fits inside (ȳ = 7.95 ± 0.1 inside [0, 16])
    z_a = _log_z(wide, 7.95)
    z_b = z_a + (base_b - base_a)
    assert z_a - base_a == pytest.approx(math.log(0.5) + math.log(
        1.0 / (stats.norm.cdf(0.05 / S) - stats.norm.cdf(-7.95 / S))), abs=1e-9)
    out = prior_sensitivity(models, reruns={("mu", "width × 2", "a"): (z_a, 0.02),
                                            ("mu", "width × 2", "b"): (z_b, 0.02)})
    row = {(r["parameter"], r["change"]): r for r in out["rows"]}[("mu", "width × 2")]
    assert row["method"] == "re-run" and row["rerun_families"] == ["a", "b"]
    assert row["ln_k"] == pytest.approx(base_a - base_b, abs=1e-9)
    assert row["ln_k_err"] == pytest.approx(math.hypot(0.02, 0.02))
    assert "re-run" in row["note"]
    assert {(r["parameter"], r["change"]): r for r in out["rows"]}[
        ("mu", "width × 0.5")]["method"] == "needs a re-run"      # not given: no number
    # a re-run of one family only: the other is reweighted (c's rows are reweightings)
    half = prior_sensitivity(models, reruns={("mu", "width × 2", "a"): (z_a, 0.02)})
    assert {(r["parameter"], r["change"]): r for r in half["rows"]}[
        ("mu", "width × 2")]["method"] == "needs a re-run"
    # a family whose likelihood refuses the widened prior (outside its domain): no number,
    # and the row says why
    why = "the changed prior leaves the model's domain (delta must lie in [0, 3])"
    out = prior_sensitivity(models, reruns={("mu", "width × 2", "a"): why,
                                            ("mu", "width × 2", "b"): (z_b, 0.02)})
    row = {(r["parameter"], r["change"]): r for r in out["rows"]}[("mu", "width × 2")]
    assert row["method"] == "outside the model's domain" and row["ln_k"] is None
    assert why in row["note"]


def test_a_widened_prior_beyond_the_tables_is_refused_without_a_run(valid_case, monkeypatch):
    """Doubling the width of Δ's default prior [0, 3] reaches Δ < 0 and Δ > 3, where the
    chain tables end (evidence1d.physics.chain_thermo.DELTA_MAX): the re-run is refused
    with the kernel's reason, before any island is queued."""
    import evidence1d
    from evidence1d.analysis import stage
    from evidence1d.inference.priors import Uniform
    case = evidence1d.load_case(valid_case)
    wide = Uniform(-1.5, 4.5)
    monkeypatch.setattr("evidence1d.analysis.sensitivity.rerun_requests",
                        lambda models: [("delta", "width × 2", "spinon_continuum", wide)])
    monkeypatch.setattr(stage, "_sensitivity_models", lambda case, results: {})

    def no_island(*args, **kwargs):
        raise AssertionError("no island may run")
    monkeypatch.setattr(stage, "_pooled_islands", no_island)
    out = stage.sensitivity_reruns(case, {}, {"islands": 2}, {}, 1, False, 1)
    (key, why), = out.items()
    assert key == ("delta", "width × 2", "spinon_continuum")
    assert why.startswith("the changed prior leaves the model's domain") and "anisotropy" in why

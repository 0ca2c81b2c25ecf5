"""The verdict's reliability, checked apart from each family's posterior, and P(1D) with
the nested one-dimensional limits counted."""
from __future__ import annotations

import math

import numpy as np
import pytest

from evidence1d.inference.compare import compare_models, verdict_reliability, with_reliability
from evidence1d.inference.nested_limits import p_one_dimensional_with_limits
from evidence1d.inference.evidence import log_mean_exp


def _assess(models, islands, ok):
    cmp_ = compare_models(models)
    rel = verdict_reliability(cmp_, islands, ok, {n: ["R-hat of x is 1.6"] for n in models})
    return with_reliability(cmp_, rel), rel


def test_a_losing_family_with_a_failed_chain_is_a_note():
    # 600 nats behind: its posterior cannot change the verdict
    models = {"chain": (-700.0, 0.3, True), "metal": (-100.0, 0.2, False)}
    islands = {"chain": [-700.2, -699.8], "metal": [-100.1, -99.9]}
    cmp_, rel = _assess(models, islands, {"chain": False, "metal": True})
    assert rel["verdict_reliable"] and not rel["reasons"]
    assert "UNRELIABLE" not in cmp_.verdict and cmp_.unreliable == ()
    assert "600.00 ± 0.36 nats behind metal" in rel["posterior_notes"]["chain"]
    assert "R-hat of x is 1.6" in rel["posterior_notes"]["chain"]


def test_the_winners_failed_chain_makes_the_verdict_unreliable():
    models = {"chain": (-700.0, 0.3, True), "metal": (-100.0, 0.2, False)}
    islands = {"chain": [-700.2, -699.8], "metal": [-100.1, -99.9]}
    cmp_, rel = _assess(models, islands, {"chain": True, "metal": False})
    assert not rel["verdict_reliable"] and not rel["winner_diagnostics_ok"]
    assert cmp_.verdict.startswith("UNRELIABLE") and cmp_.unreliable == ("metal",)


@pytest.mark.parametrize("ln_k, err, secure", [
    (1.5, 1.0, False),     # claims "positive" but −0.5 … 3.5 within 2σ: noise decides
    (0.3, 0.2, True),      # 2 ln K < 2 over the whole 2σ window: claims nothing
    (3.0, 1.0, True),      # 2σ below ln K
])
def test_ranking_against_the_evidence_error(ln_k, err, secure):
    e = err / math.sqrt(2)
    models = {"a": (ln_k, e, True), "b": (0.0, e, False)}
    islands = {"a": [ln_k] * 4, "b": [0.0] * 4}
    _, rel = _assess(models, islands, {"a": True, "b": True})
    assert rel["ln_k_err"] == pytest.approx(err)
    assert rel["ranking_secure"] is secure and rel["verdict_reliable"] is secure


def test_islands_that_disagree_make_the_verdict_unreliable():
    # one island of "a" found a high-likelihood mode the three others missed: the
    # log-mean-exp ln Z_a = ln[(e³ + 3 e⁻³)/4] is carried by it alone
    ia, ib = [3.0, -3.0, -3.0, -3.0], [-1.0, -1.0, -1.0, -1.0]
    za = float(log_mean_exp(np.array(ia)))
    models = {"a": (za, 0.1, True), "b": (-1.0, 0.1, False)}
    _, rel = _assess(models, {"a": ia, "b": ib}, {"a": True, "b": True})
    assert rel["island_pairs_agreeing"] == pytest.approx(0.25)
    assert not rel["islands_agree"] and not rel["verdict_reliable"]
    assert "minority of islands" in rel["reasons"][0]


def test_a_non_finite_error_makes_the_verdict_unreliable():
    cmp_ = compare_models({"a": (0.0, 0.1, True), "b": (-5.0, 0.1, False)})
    cmp_.log_z_err["b"] = math.inf
    rel = verdict_reliability(cmp_, {"a": [0, 0], "b": [-5, -5]}, {"a": True, "b": True})
    assert not rel["evidence_errors_finite"] and not rel["verdict_reliable"]


def test_p_one_dimensional_with_nested_limits():
    # a 1D family (Z = 1) and a family with a nested 1D limit (Z = e², BF = e¹), equal
    # prior probabilities; the limit takes half of its family's prior (Jeffreys 1961):
    # P = (½ + ¼ e² e) / (½ + ¼ e² e + ¼ e²)
    cmp_ = compare_models({"chain": (0.0, 0.0, True), "ladder": (2.0, 0.0, False)})
    p, err = p_one_dimensional_with_limits(cmp_, {"ladder": (1.0, 0.0)})
    e2, e3 = math.exp(2.0), math.exp(3.0)
    assert p == pytest.approx((0.5 + 0.25 * e3) / (0.5 + 0.25 * e3 + 0.25 * e2), rel=1e-12)
    assert err == 0.0
    # a limit with no posterior mass counts nothing: P is the families-only P(1D)
    p0, _ = p_one_dimensional_with_limits(cmp_, {"ladder": (None, None)})
    full = 1 / (1 + e2)
    assert p0 == pytest.approx((0.5) / (0.5 + 0.25 * e2), rel=1e-12)
    assert cmp_.p_one_dimensional == pytest.approx(full)
    # error propagation: against a central difference of the closed form in ln BF
    _, err = p_one_dimensional_with_limits(cmp_, {"ladder": (1.0, 0.3)})
    f = lambda b: (0.5 + 0.25 * e2 * math.exp(b)) / (0.5 + 0.25 * e2 * (1 + math.exp(b)))  # noqa: E731
    assert err == pytest.approx(abs(f(1.001) - f(0.999)) / 0.002 * 0.3, rel=1e-4)


def test_a_capped_temperature_schedule_makes_the_verdict_unreliable():
    cmp_ = compare_models({"a": (0.0, 0.1, True), "b": (-50.0, 0.1, False),
                           "c": (-90.0, 0.1, False)})
    capped = "reached 500 temperatures; jumped to β = 1 (raise max_temperatures)"
    ok = {"a": True, "b": True, "c": True}
    isl = {"a": [0, 0], "b": [-50, -50], "c": [-90, -90]}
    rel = verdict_reliability(cmp_, isl, ok, evidence_warnings={"b": [capped]})
    assert not rel["verdict_reliable"] and "temperature cap" in rel["reasons"][0]
    # a third family far behind does not change the verdict's reliability
    rel = verdict_reliability(cmp_, isl, ok, evidence_warnings={"c": [capped]})
    assert rel["verdict_reliable"]

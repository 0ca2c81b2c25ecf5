"""Evidence budget on a linear-Gaussian problem: every term against the exact marginal
likelihoods, and the budget adding up to the total ln K.  The second family's offsets pull
the common mean apart between datasets (a misfit family), where adding one dataset to a
population fitted to the others fails; the subsets tempered from the prior must not."""
from __future__ import annotations

import os

import numpy as np
import pytest
from scipy import stats

from evidence1d.analysis.budget import (SubsetLikelihood, budget_subsets, combine_subset,
                                        evidence_budget, subset_island)
from evidence1d.inference.priors import JointPrior, Normal

SIGMA, TAU = 0.5, 2.0
SIZES = {"A": 6, "B": 4, "C": 8}
#: the suite's seed (EVIDENCE1D_TEST_SEED, as the seed fixture; read here for the module
#: fixtures)
_SEED = int(os.environ.get("EVIDENCE1D_TEST_SEED", "12345"))


class _Offsets:
    """y_d,i = μ + δ_d + ε, ε ~ N(0, σ²), prior μ ~ N(0, τ²): one family per set of δ_d."""

    def __init__(self, data, offsets):
        self.data, self.offsets = data, offsets
        self.prior = JointPrior(["mu"], [Normal(0.0, TAU)])

    def log_likelihood_terms(self, theta, labels=None):
        mu = np.atleast_2d(theta)[:, :1]
        return {d: np.sum(stats.norm.logpdf(y[None, :], mu + self.offsets[d], SIGMA), axis=1)
                for d, y in self.data.items() if labels is None or d in labels}

    def exact_log_z(self, labels):
        """ln Z of a subset: the data are jointly normal with mean δ and covariance
        σ² I + τ² 1 1ᵀ (a Gaussian prior on a common mean; Bishop, Pattern Recognition and
        Machine Learning, 2006, eq. 2.115)."""
        if not labels:
            return 0.0
        y = np.concatenate([self.data[d] for d in labels])
        m = np.concatenate([np.full(self.data[d].size, self.offsets[d]) for d in labels])
        cov = SIGMA ** 2 * np.eye(y.size) + TAU ** 2
        return float(stats.multivariate_normal(m, cov).logpdf(y))


@pytest.fixture(scope="module")
def families():
    rng = np.random.default_rng(_SEED)
    data = {d: 0.4 + SIGMA * rng.standard_normal(n) for d, n in SIZES.items()}
    return {"a": _Offsets(data, {"A": 0.0, "B": 0.0, "C": 0.0}),
            "b": _Offsets(data, {"A": 0.0, "B": 2.0, "C": -2.0})}


@pytest.fixture(scope="module")
def budget(families):
    labels = list(SIZES)
    subsets = budget_subsets(labels)
    root = np.random.SeedSequence(_SEED + 1)
    combined, full = {}, {}
    for (name, pb), fam_seq in zip(families.items(), root.spawn(2)):
        seqs = fam_seq.spawn(len(subsets) + 1)
        combined[name] = {sub: combine_subset([subset_island(pb, sub, s, n_particles=150)[0]
                                               for s in seq.spawn(5)])
                          for sub, seq in zip(subsets, seqs)}
        full[name] = combine_subset([subset_island(pb, labels, s, n_particles=150)[0]
                                     for s in seqs[-1].spawn(5)])
    return evidence_budget(labels, "a", "b", combined, full,
                           {"n_particles": 150, "n_islands": 5})


def test_subset_error_is_floored_by_the_importance_weights():
    # four islands that agree by chance to 1e-4 nat cannot claim less than their importance
    # weights allow: √(Σ e_r²)/R (the rule of evidence1d.inference.evidence.combine_islands)
    values = [-10.0, -10.0001, -9.9999, -10.0]
    mean, err = combine_subset(values)
    assert mean == pytest.approx(-10.0, abs=1e-4) and err < 1e-3
    _, floored = combine_subset(values, [0.05, 0.04, 0.06, 0.05])
    assert floored == pytest.approx(np.sqrt(0.05**2 + 0.04**2 + 0.06**2 + 0.05**2) / 4)
    assert combine_subset(values, [0.0] * 4)[1] == err


def test_subsets_of_the_budget():
    assert budget_subsets(["A", "B", "C"]) == [("A",), ("A", "B"), ("B", "C"), ("A", "C")]
    assert budget_subsets(["A", "B"]) == [("A",), ("B",)]


def test_sequential_terms_against_exact_marginals(families, budget):
    # ln p(d_k | d_<k) = ln Z(d_≤k) − ln Z(d_<k) (MacKay 2003, §28.1)
    a, b = families["a"], families["b"]
    labels = list(SIZES)
    for k, row in enumerate(budget["sequential"]):
        before, upto = labels[:k], labels[:k + 1]
        exact = ((a.exact_log_z(upto) - a.exact_log_z(before))
                 - (b.exact_log_z(upto) - b.exact_log_z(before)))
        assert row["dataset"] == labels[k]
        assert abs(row["ln_k"] - exact) < 4 * row["ln_k_err"] + 0.05, (row, exact)


def test_leave_one_out_against_exact_marginals(families, budget):
    a, b = families["a"], families["b"]
    labels = list(SIZES)
    total = a.exact_log_z(labels) - b.exact_log_z(labels)
    for row in budget["leave_one_out"]:
        rest = [x for x in labels if x != row["dataset"]]
        without = a.exact_log_z(rest) - b.exact_log_z(rest)
        assert abs(row["ln_k_without"] - without) < 4 * row["ln_k_without_err"] + 0.05
        assert abs(row["added_last"] - (total - without)) < 4 * row["added_last_err"] + 0.05


def test_budget_adds_up_to_the_total(families, budget):
    labels = list(SIZES)
    exact = families["a"].exact_log_z(labels) - families["b"].exact_log_z(labels)
    assert exact > 5.0                              # the misfit family loses clearly
    parts = sum(r["ln_k"] for r in budget["sequential"])
    assert parts == pytest.approx(budget["ln_k"], abs=1e-9)      # telescoping
    assert abs(budget["ln_k"] - exact) < 4 * budget["ln_k_err"] + 0.05
    assert budget["warnings"] == []


def test_a_subset_computes_only_its_own_terms(monkeypatch):
    # the budget's subset likelihoods ask the problem for their terms only: a subset without
    # the map must not pay for the map's kernel, and each term is the one of the full call
    from pathlib import Path
    import evidence1d
    case = evidence1d.load_case(Path(__file__).resolve().parents[2]
                                / "case_studies" / "flagship" / "case.yaml")
    problem = case.problem("spinon_continuum")
    theta = problem.prior_transform(np.random.default_rng(0).uniform(size=(4, len(problem.names))))
    full = problem.log_likelihood_terms(theta)
    spectra = [pr for pr in problem.predictors if pr.dataset.name in ("map", "cut")]
    assert len(spectra) == 2

    def refuse(*args, **kwargs):
        raise AssertionError("a spectrum was computed for a thermodynamic subset")

    for pr in spectra:
        monkeypatch.setattr(pr, "predict", refuse)
    sub = SubsetLikelihood(problem, ("chi", "heat"))
    np.testing.assert_allclose(sub(theta), full["chi"] + full["heat"], rtol=1e-12)
    with pytest.raises(evidence1d.InputError, match="unknown likelihood term"):
        problem.log_likelihood_terms(theta, ["nope"])


def test_budget_and_reruns_take_the_importance_draws_of_a_first_look():
    # their rows are read at the level of a nat: 6 draws per particle, never more than the
    # run's own, the other island options unchanged
    from evidence1d.analysis.stage import analysis_options
    from evidence1d.inference.tempering import QUICK_IMPORTANCE_DRAWS_PER_PARTICLE as QUICK
    opts = {"n_particles": 64, "target_cess": 0.5, "min_sweeps": 3}
    got = analysis_options(opts)
    assert got["importance_draws"] == QUICK * 64 and got["target_cess"] == 0.5
    assert "importance_draws" not in opts                       # the run's options untouched
    assert analysis_options({**opts, "importance_draws": 100})["importance_draws"] == 100
    assert analysis_options({**opts, "importance_draws": 0})["importance_draws"] == 0

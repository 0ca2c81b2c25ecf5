"""The evidence budget: how much each dataset contributes to ln K of two families.

Method
------
The evidence factorises along any order of the datasets,

    ln Z = Σ_k ln p(d_k | d_1 … d_{k−1}),   ln p(d_k | d_<k) = ln Z(d_≤k) − ln Z(d_<k),

and so does ln K = ln Z_A − ln Z_B (the predictive factorisation of the marginal
likelihood; MacKay 2003, §28.1; Kass & Raftery 1995, §6).  Every ln Z(subset) is computed
as the quoted ln Z is, by adaptive-tempering sequential Monte Carlo from the prior to the
posterior of that subset (:mod:`evidence1d.inference.evidence`), in independent islands.
Tempering the subset's data jointly from the prior matters: adding a dataset to a
population already fitted to the others ("data tempering", Chopin 2002) is cheaper but
fails when the datasets pull the parameters apart under a family (a misfit family is
exactly where that happens), because the population then holds no particle where the next
dataset's likelihood lives.

Two decompositions are given:

* **sequential**, in the case's dataset order (stated with the table): the contribution
  of d_k given the datasets before it; the contributions add up to the quoted ln K, whose
  last term uses the quoted ln Z of all data;
* **leave one dataset out**: ln K_(−k) from all datasets but d_k, and the contribution of
  d_k added last, ln K − ln K_(−k).  For the last dataset of the order, all but it is the
  sequential prefix.

Errors: the standard error of each ln Z(subset) across its islands (as for ln Z); the runs
are independent, so errors add in quadrature.  The "datasets" are the likelihood terms of
the problem: datasets that share nuisances integrated out together (e.g. two χ(T) sets
sharing χ₀) form one term.

References
----------
.. [1] D. J. C. MacKay, *Information Theory, Inference, and Learning Algorithms*
   (Cambridge, 2003), §28.1 (from memory).
.. [2] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995).
.. [3] N. Chopin, "A sequential particle filter method for static models", Biometrika 89,
   539 (2002).
.. [4] P. Del Moral, A. Doucet and A. Jasra, J. R. Stat. Soc. B 68, 411 (2006).
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["SubsetLikelihood", "budget_subsets", "subset_island", "island_outcome",
           "combine_subset",
           "evidence_budget"]


class SubsetLikelihood:
    """The log-likelihood of some of a problem's terms (picklable, vectorised).

    Parameters
    ----------
    problem : JointProblem
        Anything with ``log_likelihood_terms(theta, labels) -> {label: (k,)}``.
    labels : sequence of str
        The terms summed.
    """

    def __init__(self, problem, labels):
        self.problem, self.labels = problem, tuple(labels)

    def __call__(self, theta):
        # only the subset's terms are computed (a subset without the map skips its kernel)
        terms = self.problem.log_likelihood_terms(np.atleast_2d(theta), self.labels)
        return np.sum([terms[lab] for lab in self.labels], axis=0)


def budget_subsets(labels) -> list:
    """The proper, non-empty subsets of the terms whose ln Z the budget needs.

    Parameters
    ----------
    labels : list of str
        The likelihood terms in the stated order (at least two).

    Returns
    -------
    list of tuple of str
        The prefixes d_1 … d_k (k < K) and every "all but d_k", each once, terms in the
        stated order.
    """
    labels = list(labels)
    out = [tuple(labels[:k]) for k in range(1, len(labels))]
    for lab in labels:
        rest = tuple(x for x in labels if x != lab)
        if rest not in out:
            out.append(rest)
    return out


def subset_island(problem, labels, seed, **options) -> tuple:
    """One island of the tempered evidence of a subset of the terms.

    Parameters
    ----------
    problem : JointProblem
    labels : sequence of str
        The terms.
    seed : numpy.random.SeedSequence
    **options
        Keyword arguments of :func:`~evidence1d.inference.evidence.run_island`.

    Returns
    -------
    (float, str or None, float)
        ln Ẑ of the island (nats), the sampler's warning, if any, and the relative error of
        its final importance estimate (0 when the island quotes its tempered estimate).

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006).
    """
    return island_outcome(SubsetLikelihood(problem, labels), problem.prior, seed, options)


def island_outcome(log_likelihood, prior, seed, options) -> tuple:
    """One evidence island reduced to what a pool job sends back: ln Ẑ (nats), the sampler's
    warning (or None) and the error of its final importance estimate (nats, 0 if unused)."""
    from ..inference.evidence import importance_error, run_island
    run, warn = run_island(log_likelihood, prior, seed, **options)
    return float(run.log_z), warn, importance_error(run)


def combine_subset(values, floors=None) -> tuple:
    """ln Z of a subset from its islands: log-mean-exp and the standard error s/√R, times
    √((R − 1)/(R − 3)) for R ≥ 4, floored by the importance weights' own error
    √(Σ e_r²)/R (as :func:`~evidence1d.inference.evidence.combine_islands`).

    Parameters
    ----------
    values : sequence of float
        ln Ẑ of each island.
    floors : sequence of float, optional
        Relative error of each island's final importance estimate (0: none).

    Returns
    -------
    (float, float)
    """
    from ..inference.evidence import island_error
    v = np.asarray(values, dtype=float)
    top = float(np.max(v))
    mean = top + math.log(float(np.mean(np.exp(v - top))))
    err = island_error(v, () if floors is None else floors)
    return mean, err


def evidence_budget(labels, a: str, b: str, subsets: dict, full: dict,
                    settings: dict, warnings=()) -> dict:
    """The budget of ln K = ln Z_a − ln Z_b.

    Parameters
    ----------
    labels : list of str
        Term labels in the stated order.
    a, b : str
        The leading family and the runner-up.
    subsets : dict
        family -> {tuple of labels: (ln Z, error)} for every subset of
        :func:`budget_subsets`.
    full : dict
        family -> (ln Z, error) of all data (the quoted evidences).
    settings : dict
        Particles and islands of the subset runs (recorded).
    warnings : sequence of str
        Warnings of the subset runs.

    Returns
    -------
    dict
        JSON-ready: ``families``, ``order``, ``ln_k``, ``ln_k_err``, ``sequential`` (per
        label: ``dataset``, ``ln_k``, ``ln_k_err``), ``leave_one_out`` (per label:
        ``dataset``, ``ln_k_without``, ``ln_k_without_err``, ``added_last``,
        ``added_last_err``), ``method``, ``n_particles``, ``n_islands``, ``importance_draws``
        (per island), ``warnings``.

    References
    ----------
    .. [1] MacKay (2003), §28.1; Kass & Raftery (1995).
    """
    labels = list(labels)

    def lz(fam, subset):
        if not subset:
            return 0.0, 0.0
        if len(subset) == len(labels):
            return full[fam]
        return subsets[fam][tuple(subset)]

    def ln_k_of(subset):
        (za, ea), (zb, eb) = lz(a, subset), lz(b, subset)
        return za - zb, (ea, eb)

    seq = []
    for k, lab in enumerate(labels):
        hi, (ha, hb) = ln_k_of(labels[:k + 1])
        lo, (la, lb) = ln_k_of(labels[:k])
        seq.append({"dataset": lab, "ln_k": hi - lo,
                    "ln_k_err": math.sqrt(ha ** 2 + hb ** 2 + la ** 2 + lb ** 2)})
    total, (ta, tb) = ln_k_of(labels)
    loo = []
    for lab in labels:
        w, (wa, wb) = ln_k_of([x for x in labels if x != lab])
        loo.append({"dataset": lab, "ln_k_without": w, "ln_k_without_err": math.hypot(wa, wb),
                    "added_last": total - w,
                    "added_last_err": math.sqrt(ta ** 2 + tb ** 2 + wa ** 2 + wb ** 2)})
    method = ("ln Z of every needed subset of the datasets by the same tempered sequence "
              "as the quoted ln Z, from the prior, in independent islands; sequential order: "
              + ", ".join(labels) + " (each dataset given those before it; the last step "
              "uses the quoted ln Z, so the contributions add up to the quoted ln K); "
              "leave-one-out: ln K from all other datasets, and the dataset added last")
    return {"families": [a, b], "order": labels, "ln_k": float(total),
            "ln_k_err": float(math.hypot(ta, tb)), "sequential": seq, "leave_one_out": loo,
            "method": method, "n_particles": int(settings.get("n_particles", 0)),
            "n_islands": int(settings.get("n_islands", 0)),
            "importance_draws": int(settings.get("importance_draws", 0)),
            "warnings": list(dict.fromkeys(warnings))}

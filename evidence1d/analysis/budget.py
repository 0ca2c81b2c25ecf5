"""The evidence budget: how much each dataset contributes to ln K of two families.

Method
------
The evidence factorises along any order of the datasets,

    ln Z = Σ_k ln p(d_k | d_1 … d_{k−1}),

and so does ln K = ln Z_A − ln Z_B (MacKay 2003, §28.1; Kass & Raftery 1995, §6: the
predictive factorisation of the marginal likelihood).  Each factor is computed by
*data tempering*: a sequential Monte Carlo population that already targets
π(θ) p(d_<k | θ) is tempered from β = 0 to 1 in the next dataset's likelihood,
π(θ) p(d_<k | θ) p(d_k | θ)^β, with the adaptive schedule, resampling and moves of
:mod:`evidence1d.inference.evidence`; the log of the mean incremental weight summed over
that stage estimates ln p(d_k | d_<k) (Chopin 2002 adds data one batch at a time in the
same way; Del Moral, Doucet & Jasra 2006, eq. 14).  One path through all stages is a
complete SMC sampler whose product of factors is an unbiased estimate of Z, independent of
the joint-tempering run that gave the quoted ln Z: the sum of the budget therefore checks
the quoted ln K.

Two decompositions are given:

* **sequential**, in the case's dataset order (stated with the table): the contribution
  of d_k given the datasets before it;
* **leave one dataset out**: ln K_(−k) from all datasets but d_k (one joint stage), and
  the contribution of d_k added last, ln K − ln K_(−k).  For the last dataset of the order
  this path is the sequential one.

Errors: R independent paths (islands) per family; each factor is combined across islands
by log-mean-exp, with the standard error s/√R of the island values (as for ln Z).  The
"datasets" are the likelihood terms of the problem: datasets that share nuisances
integrated out together (e.g. two χ(T) sets sharing χ₀) form one term.

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

__all__ = ["path_island", "budget_paths", "combine_paths", "evidence_budget"]


class _Terms:
    """Per-term log-likelihoods of a problem, evaluated once per parameter set.

    The stages of a path ask for the terms of the datasets already absorbed (the base) and
    of the dataset being added (the increment) on the same points; the rows of the last
    call are kept so that the second request costs nothing.
    """

    def __init__(self, problem):
        self.problem = problem
        self._rows = {}

    def __call__(self, theta, labels) -> np.ndarray:
        theta = np.atleast_2d(np.asarray(theta, dtype=float))
        out = np.zeros(theta.shape[0])
        if theta.shape[0] == 0:
            return out
        keys = [row.tobytes() for row in theta]
        todo = [i for i, k in enumerate(keys) if k not in self._rows]
        if todo:
            terms = self.problem.log_likelihood_terms(theta[todo])
            fresh = {keys[i]: {lab: float(v[j]) for lab, v in terms.items()}
                     for j, i in enumerate(todo)}
            if len(self._rows) > 20000:
                self._rows = {}
            self._rows.update(fresh)
        for i, k in enumerate(keys):
            row = self._rows[k]
            out[i] = sum(row[lab] for lab in labels)
        return out


class _Stage:
    """Log-likelihood of the labels being added at one stage."""

    def __init__(self, terms, labels):
        self.terms, self.labels = terms, list(labels)

    def __call__(self, theta):
        return self.terms(theta, self.labels)


class _Absorbed:
    """The prior times the likelihood of the datasets already absorbed: the base measure
    of a later stage, started from the previous stage's final population."""

    def __init__(self, prior, terms, labels, population):
        self.prior, self.terms, self.labels = prior, terms, list(labels)
        self.population = np.asarray(population, dtype=float)
        self.n_free = prior.n_free
        self.free_priors = prior.free_priors
        self.free_names = prior.free_names

    def sample(self, rng, k):
        idx = rng.permutation(self.population.shape[0])
        if k > idx.size:
            idx = np.concatenate([idx, rng.integers(0, idx.size, k - idx.size)])
        return self.population[idx[:k]].copy()

    def log_prob(self, theta):
        lp = np.asarray(self.prior.log_prob(theta), dtype=float)
        ok = np.isfinite(lp)
        if ok.any():
            ll = self.terms(np.asarray(theta)[ok], self.labels)
            lp = lp.copy()
            lp[ok] = lp[ok] + np.where(np.isfinite(ll), ll, -np.inf)
        return lp


def path_island(problem, stages, seed, **options) -> list:
    """One island along a path of stages: ln of each stage's factor.

    Parameters
    ----------
    problem : JointProblem
    stages : list of list of str
        Term labels (:meth:`~evidence1d.problem.JointProblem.term_sizes`) added at each
        stage, in order; every label at most once.
    seed : numpy.random.SeedSequence
        The island's stream (one child per stage).
    **options
        Keyword arguments of :func:`~evidence1d.inference.evidence.run_island`
        (``n_particles``, ``target_cess``, ``min_sweeps``, …).

    Returns
    -------
    list of float
        ln p(stage k | stages before it), nats.

    References
    ----------
    .. [1] Chopin, Biometrika 89, 539 (2002); Del Moral et al., JRSS B 68, 411 (2006).
    """
    from ..inference.evidence import run_island
    terms = _Terms(problem)
    base = problem.prior
    absorbed, out = [], []
    seeds = seed.spawn(len(stages))
    for labels, s in zip(stages, seeds):
        run, _ = run_island(_Stage(terms, labels), base, s, **options)
        out.append(float(run.log_z))
        absorbed += list(labels)
        base = _Absorbed(problem.prior, terms, absorbed, run.samples[-1])
    return out


def budget_paths(labels) -> dict:
    """The paths of the budget: ``"sequential"`` and one ``"without:<label>"`` per label
    but the last (whose leave-one-out path is the sequential one).

    Parameters
    ----------
    labels : list of str
        The likelihood terms in the stated order.

    Returns
    -------
    dict
        path name -> list of stages (lists of labels).
    """
    labels = list(labels)
    paths = {"sequential": [[lab] for lab in labels]}
    for lab in labels[:-1]:
        paths[f"without:{lab}"] = [[x for x in labels if x != lab], [lab]]
    return paths


def _combine(values) -> tuple:
    """log-mean-exp of island values and its standard error (as for ln Z)."""
    v = np.asarray(values, dtype=float)
    r = v.size
    top = np.max(v)
    mean = float(top + math.log(np.mean(np.exp(v - top))))
    err = float(np.std(v, ddof=1) / math.sqrt(r)) if r > 1 else math.inf
    if r >= 4:
        err *= math.sqrt((r - 1.0) / (r - 3.0))
    return mean, err


def combine_paths(islands: dict) -> dict:
    """Factors of each path, combined over islands.

    Parameters
    ----------
    islands : dict
        path name -> list over islands of the stage values from :func:`path_island`.

    Returns
    -------
    dict
        path name -> list over stages of (ln factor, error), plus the path total
        (the sum over stages, per island, combined) under ``"<name>:total"``.
    """
    out = {}
    for name, runs in islands.items():
        arr = np.asarray(runs, dtype=float)              # (R, stages)
        out[name] = [_combine(arr[:, k]) for k in range(arr.shape[1])]
        out[f"{name}:total"] = _combine(arr.sum(axis=1))
    return out


def evidence_budget(labels, a: str, b: str, combined: dict, ln_k: float, ln_k_err: float,
                    settings: dict) -> dict:
    """The budget of ln K = ln Z_a − ln Z_b from the combined paths of both families.

    Parameters
    ----------
    labels : list of str
        Term labels in the stated order.
    a, b : str
        The leading family and the runner-up.
    combined : dict
        family -> :func:`combine_paths` of that family.
    ln_k, ln_k_err : float
        The quoted ln K (joint tempering) and its error.
    settings : dict
        Particles and islands of the paths (recorded).

    Returns
    -------
    dict
        JSON-ready: ``families``, ``order``, ``ln_k``, ``ln_k_err``, ``sequential`` (per
        label: ``dataset``, ``ln_k``, ``ln_k_err``), ``sequential_total`` and its error,
        ``leave_one_out`` (per label: ``dataset``, ``ln_k_without``, ``ln_k_without_err``,
        ``added_last``, ``added_last_err``), ``method``, ``n_particles``, ``n_islands``.

    References
    ----------
    .. [1] MacKay (2003), §28.1; Kass & Raftery (1995).
    """
    ca, cb = combined[a], combined[b]
    seq = []
    for k, lab in enumerate(labels):
        (va, ea), (vb, eb) = ca["sequential"][k], cb["sequential"][k]
        seq.append({"dataset": lab, "ln_k": va - vb, "ln_k_err": math.hypot(ea, eb)})
    (ta, tea), (tb, teb) = ca["sequential:total"], cb["sequential:total"]
    loo = []
    for lab in labels:
        if lab == labels[-1]:
            without = [(sum(v for v, _ in c["sequential"][:-1]),
                        math.sqrt(sum(e * e for _, e in c["sequential"][:-1])))
                       for c in (ca, cb)]
            last = [c["sequential"][-1] for c in (ca, cb)]
        else:
            key = f"without:{lab}"
            without = [c[key][0] for c in (ca, cb)]
            last = [c[key][1] for c in (ca, cb)]
        loo.append({"dataset": lab, "ln_k_without": without[0][0] - without[1][0],
                    "ln_k_without_err": math.hypot(without[0][1], without[1][1]),
                    "added_last": last[0][0] - last[1][0],
                    "added_last_err": math.hypot(last[0][1], last[1][1])})
    method = ("data tempering (sequential Monte Carlo adding one dataset at a time, "
              "independent of the joint-tempering ln Z); sequential order: "
              + ", ".join(labels) + "; leave-one-out: all other datasets first, then the "
              "one named")
    return {"families": [a, b], "order": list(labels), "ln_k": float(ln_k),
            "ln_k_err": float(ln_k_err), "sequential": seq,
            "sequential_total": ta - tb, "sequential_total_err": math.hypot(tea, teb),
            "leave_one_out": loo, "method": method,
            "n_particles": int(settings.get("n_particles", 0)),
            "n_islands": int(settings.get("n_islands", 0))}

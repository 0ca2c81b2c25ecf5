"""The analysis stage of a run that needs the case: the evidence budget (tempered evidences
of data subsets, spread over a process pool like the evidence islands) and the prior
sensitivity (reweighting of the stored tempered populations, and new tempered runs under
the changed priors that reweighting cannot give).

References
----------
.. [1] P. Del Moral, A. Doucet and A. Jasra, J. R. Stat. Soc. B 68, 411 (2006).
.. [2] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995), §4.3 and §5.
"""
from __future__ import annotations

import numpy as np

__all__ = ["BUDGET_KEY", "BUDGET_ISLANDS", "analysis_options", "SENSITIVITY_KEY",
           "budget_labels", "run_budget", "run_sensitivity", "sensitivity_reruns"]

#: spawn key of the evidence budget's random stream: a child of the run seed that no
#: family uses (``evidence1d.runner._model_seeds`` spawns children 0 … n − 1)
BUDGET_KEY = 2 ** 20
#: spawn key of the prior-sensitivity re-runs' random stream (another unused child)
SENSITIVITY_KEY = 2 ** 20 + 1

#: most islands of each subset's evidence in the budget.  Each island ends with the final
#: importance estimate, whose spread on the flagship case study is about 0.04 nat per island
#: (measured 2026-12-03), so four islands give each subset's ln Z to a few hundredths of a nat
#: with a t-corrected error bar (a budget row is read at the level of a nat); the quoted
#: evidences keep the case's islands.  Halves the budget's cost at the default 8 islands.
BUDGET_ISLANDS = 4


def analysis_options(options) -> dict:
    """The island options of the budget and of the prior-sensitivity re-runs: the run's, with
    the importance draws of a first look (at most
    :data:`~evidence1d.inference.tempering.QUICK_IMPORTANCE_DRAWS_PER_PARTICLE` per particle).

    Their rows are read at the level of a nat (a dataset's share of ln K, the shift of ln K
    under a changed prior), not of the hundredths the quoted evidences are given to; the
    draws of the final importance stage cost about a fifth of an island at 24 per particle
    and buy only precision (measured on the flagship: spread of ln Z over seeds 0.011
    instead of 0.031 at 6), so these islands take 6.  The budget's record says so.

    Parameters
    ----------
    options : dict
        Keyword arguments of :func:`~evidence1d.inference.evidence.run_island`.

    Returns
    -------
    dict
        A copy with ``importance_draws`` set.
    """
    from ..inference.tempering import (DEFAULT_PARTICLES, QUICK_IMPORTANCE_DRAWS_PER_PARTICLE,
                                       importance_draws_of)
    n = int(options.get("n_particles", DEFAULT_PARTICLES))
    out = dict(options)
    out["importance_draws"] = min(importance_draws_of(n, options.get("importance_draws")),
                                  QUICK_IMPORTANCE_DRAWS_PER_PARTICLE * n)
    return out


def budget_labels(case, problem) -> list:
    """The likelihood terms of a problem in the case's dataset order (the stated order of
    the sequential budget)."""
    pos = {ds.name: i for i, ds in enumerate(case.datasets)}
    return sorted(problem.term_sizes(), key=lambda lab: min(pos.get(d, 0)
                                                           for d in lab.split("+")))


def _sensitivity_models(case, results) -> dict:
    """The input of :func:`~evidence1d.analysis.sensitivity.prior_sensitivity`."""
    models = {}
    for n, r in results.items():
        pb = case.problem(n)
        priors = {p: pb.prior.prior_of(p) for p in pb.names
                  if p in pb.card.parameters}
        models[n] = {"log_z": r.evidence.log_z, "log_z_err": r.evidence.log_z_err,
                     "one_dimensional": r.one_dimensional, "names": list(r.evidence.names),
                     "samples": r.evidence.posterior_samples, "priors": priors}
    return models


def run_sensitivity(case, results, reruns=None) -> dict:
    """Prior sensitivity of a run from the final tempered populations, with the evidences of
    :func:`sensitivity_reruns` where reweighting is not valid.

    Parameters
    ----------
    case : Case
    results : dict of str to ModelResult
    reruns : dict, optional
        ``(parameter, change, family) -> (ln Z, error)``, or a one-line reason (str) where
        the changed prior leaves the family's domain (:func:`sensitivity_reruns`).

    Returns
    -------
    dict
        :func:`~evidence1d.analysis.sensitivity.prior_sensitivity` of the run.
    """
    from .sensitivity import prior_sensitivity
    return prior_sensitivity(_sensitivity_models(case, results), prior_odds=case.prior_odds,
                             reruns=reruns)


def _rerun_job(problem, seed, options):
    """One island of a family's evidence under a changed prior: a pool job."""
    from .budget import island_outcome
    return island_outcome(problem.log_likelihood, problem.prior, seed, options)


def sensitivity_reruns(case, results, settings, options, seed, progress, workers,
                       executor=None) -> dict:
    """New tempered evidences for the prior changes that reweighting cannot give.

    A widened prior whose bound the posterior touches (or a normal prior that the data do
    not dominate) reaches likelihood the final populations never saw; the family's ln Z
    under that prior is then computed afresh, as the quoted ln Z is, in
    ``min(islands, BUDGET_ISLANDS)`` islands.

    Parameters
    ----------
    case : Case
    results : dict of str to ModelResult
    settings : dict
        The run's sampler settings (``islands``).
    options : dict
        Keyword arguments of :func:`~evidence1d.inference.evidence.run_island`.
    seed : int
        The run's seed; the stream is the child ``SENSITIVITY_KEY`` of it.
    progress : bool
    workers : int or None
    executor : object, optional
        Where the islands run instead of local processes (the executor contract of
        :mod:`evidence1d.parallel`); the numbers do not depend on it.

    Returns
    -------
    dict
        ``(parameter, change, family) -> (ln Z, error)`` in nats, or a one-line reason (str)
        where the changed prior reaches outside the family's domain (its likelihood refuses
        the prior's extreme values, e.g. a widened Δ beyond the chain tables): no run is
        possible there.

    References
    ----------
    .. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995), §5.
    """
    from ..errors import InputError
    from .sensitivity import rerun_requests
    requests = rerun_requests(_sensitivity_models(case, results))
    if not requests:
        return {}
    options = analysis_options(options)
    n_islands = min(int(settings["islands"]), BUDGET_ISLANDS)
    root = np.random.SeedSequence(seed, spawn_key=(SENSITIVITY_KEY,))
    jobs, keys, refused = [], [], {}
    for (p, label, fam, prior), seq in zip(requests, root.spawn(len(requests))):
        problem = case.replace(priors={fam: {p: prior}}).problem(fam)
        # the prior's extremes in p, the other parameters at their prior medians
        u = np.full((2, len(problem.names)), 0.5)
        u[:, problem.names.index(p)] = (1e-6, 1.0 - 1e-6)
        try:
            problem.log_likelihood(problem.prior_transform(u))
        except InputError as exc:
            refused[(p, label, fam)] = f"the changed prior leaves the model's domain ({exc})"
            continue
        for isl in seq.spawn(n_islands):
            jobs.append((problem, isl, options))
            keys.append((p, label, fam))
    if not jobs:
        return refused
    done = _pooled_islands(_rerun_job, jobs, keys, "prior sensitivity", progress, workers,
                           executor)[0]
    return {**done, **refused}


def _pooled_islands(fn, jobs, keys, label, progress, workers, executor=None):
    """Run evidence-island jobs over a process pool (or an ``executor``) with a progress bar,
    and combine the islands of each key (:func:`~evidence1d.analysis.budget.combine_subset`).
    Returns ``({key: (ln Z, error)}, warnings)``."""
    from ..inference.progress import stage_bar
    from ..parallel import run_in_pool, worker_count
    from .budget import combine_subset
    bar = stage_bar(len(jobs), progress, label, unit="island")
    try:
        done = run_in_pool(fn, jobs, worker_count(workers, len(jobs)),
                           on_result=lambda _: bar.update(1), executor=executor)
    finally:
        bar.close()
    runs = {}
    for key, (lz, _, floor) in zip(keys, done):
        runs.setdefault(key, []).append((lz, floor))
    return ({k: combine_subset([x for x, _ in v], [f for _, f in v]) for k, v in runs.items()},
            [w for _, w, _ in done if w])


def _subset_job(problem, labels, seed, options):
    """One island of the tempered evidence of a subset of one family's terms: a pool job
    (it receives the family's joint problem, not the case)."""
    from .budget import subset_island
    return subset_island(problem, labels, seed, **options)


def run_budget(case, results, settings, options, seed, progress, workers, executor=None):
    """The evidence budget of the two leading families of a run (its third parallel stage).

    Parameters
    ----------
    case : Case
    results : dict of str to ModelResult
        The families, with their quoted evidences.
    settings : dict
        The run's sampler settings (``islands``).
    options : dict
        Keyword arguments of :func:`~evidence1d.inference.evidence.run_island`.
    seed : int
        The run's seed; the budget's stream is the child ``BUDGET_KEY`` of it.
    progress : bool
        A progress bar.
    workers : int or None
        Processes (:func:`evidence1d.parallel.worker_count`).
    executor : object, optional
        Where the islands run instead (the executor contract of :mod:`evidence1d.parallel`);
        the numbers do not depend on it.

    Returns
    -------
    dict or None
        :func:`~evidence1d.analysis.budget.evidence_budget`, ``{"skipped": why}`` or None
        (one likelihood term).

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006).
    """
    from ..inference.evidence import evidence_settings
    from .budget import budget_subsets, evidence_budget
    order = sorted(results, key=lambda n: -results[n].evidence.log_z)
    a, b = order[0], order[1]
    labels = budget_labels(case, case.problem(a))
    if labels != budget_labels(case, case.problem(b)):
        return {"skipped": "the two leading families group the datasets into different "
                           "likelihood terms"}
    if len(labels) < 2:
        return None
    subsets = budget_subsets(labels)
    options = analysis_options(options)
    root = np.random.SeedSequence(seed, spawn_key=(BUDGET_KEY,))
    jobs, keys = [], []
    n_islands = min(int(settings["islands"]), BUDGET_ISLANDS)
    for fam, fam_seq in zip((a, b), root.spawn(2)):
        problem = case.problem(fam)
        for sub, sub_seq in zip(subsets, fam_seq.spawn(len(subsets))):
            for isl in sub_seq.spawn(n_islands):
                jobs.append((problem, sub, isl, options))
                keys.append((fam, sub))
    pooled, warns = _pooled_islands(_subset_job, jobs, keys, "budget", progress, workers,
                                    executor)
    combined = {a: {}, b: {}}
    for (fam, sub), value in pooled.items():
        combined[fam][sub] = value
    full = {fam: (results[fam].evidence.log_z, results[fam].evidence.log_z_err)
            for fam in (a, b)}
    record = evidence_settings(n_islands=n_islands, **options)
    return evidence_budget(labels, a, b, combined, full, record, warns)

"""One replicate of a campaign: simulate the case's datasets from a stated truth, fit every
family, keep what calibration and planning need.

A replicate is one job (:func:`run_replicate`): it receives the case, its task (the true
family, the true parameters, its random stream, the error scale of each dataset) and the
sampler settings, and returns a plain record (:func:`~evidence1d.results.save_record`
writes it).  Data are simulated with the case's own design (points, temperatures,
resolutions), its own errors and its own noise model: y = μ(θ) + s σ ε, with σ the
case's errors, ε ~ N(0, 1) (or Student-t with the dataset's ν when the case says
``noise: student_t``), and s the error scale of the dataset (1 for calibration;
sqrt(t₀/t) for a spectrum counted t/t₀ times as long in a plan, Poisson counting).

References
----------
.. [1] S. R. Cook, A. Gelman and D. B. Rubin, J. Comput. Graph. Stat. 15, 675 (2006):
   simulate from a known truth, fit, and compare the posterior with the truth.
.. [2] R. E. Kass and A. E. Raftery, JASA 90, 773 (1995): Bayes factors of composite
   hypotheses as ratios of prior-weighted evidences.
"""
from __future__ import annotations

import time
import warnings

import numpy as np

from ..errors import InputError
from ..inference.tempering import QUICK_IMPORTANCE_DRAWS_PER_PARTICLE

__all__ = ["FAST", "SMOKE", "replicate_settings", "task_streams", "simulate_data",
           "add_noise", "run_replicate", "one_dimensional_log_k"]

#: sampler settings of a replicate, laid under the case's (each the smaller of the two):
#: those of ``evidence1d run --quick`` (whose decisions README "Calibration and planning"
#: compares with the full settings') except its lower ESS target: a replicate's chain keeps
#: the case's
FAST = {"steps": 300, "particles": 150, "islands": 2,
        "importance_draws": QUICK_IMPORTANCE_DRAWS_PER_PARTICLE}
#: ``--quick`` campaigns: a smoke run of the command (numbers not for conclusions)
SMOKE = {"steps": 60, "particles": 40, "islands": 2,
         "importance_draws": QUICK_IMPORTANCE_DRAWS_PER_PARTICLE}


def replicate_settings(case, quick: bool = False) -> dict:
    """The sampler settings of every replicate: the case's, each reduced to at most
    :data:`FAST` (:data:`SMOKE` with ``quick``); the evidence budget and figures are off."""
    cap = SMOKE if quick else FAST
    return {k: (min(v, cap[k]) if k in cap else v) for k, v in case.sampler.items()}


def task_streams(seed: int, key) -> tuple:
    """The random streams of one task: (truth, noise, fit seed).

    The streams depend only on the campaign seed and the task's ``key`` (never on the
    number of replicates or the order they run in), so a larger campaign repeats the
    replicates of a smaller one and a resumed campaign draws what it would have drawn.

    References
    ----------
    .. [1] numpy ``SeedSequence`` (spawn keys: independent streams from one entropy).
    """
    ss = np.random.SeedSequence(int(seed), spawn_key=tuple(int(k) for k in key))
    truth, noise, fit = ss.spawn(3)
    return (np.random.default_rng(truth), np.random.default_rng(noise),
            int(fit.generate_state(1, dtype=np.uint32)[0]))


def simulate_data(case, family: str, truth: dict, rng, scale=None) -> dict:
    """Simulated values and errors of every dataset of ``case`` from ``family`` at ``truth``.

    Parameters
    ----------
    case : Case
    family : str
        A model of the case.
    truth : dict of str to float
        Every parameter of the family's :attr:`~evidence1d.problem.JointProblem.full_names`.
    rng : numpy.random.Generator
        The noise stream (the same draws whatever ``scale``: a plan's counting times share
        their noise, so ln K changes smoothly with counting time).
    scale : dict of str to float, optional
        Error scale s per dataset name (default 1).

    Returns
    -------
    dict of str to (ndarray, ndarray)
        Values and errors in internal units, for :meth:`~evidence1d.case.Case.replace`.

    Raises
    ------
    InputError
        The family predicts non-finite values at this truth.
    """
    problem = case.problem(family)
    theta = np.array([[truth[n] for n in problem.full_names]])
    pred = problem.predict(theta)
    mu = {}
    for ds in case.datasets:
        mu[ds.name] = pred[ds.name][0]
        if not np.all(np.isfinite(mu[ds.name])):
            raise InputError(f"model '{family}' gives non-finite values for dataset "
                             f"'{ds.name}' at the drawn truth")
    inflate = {ds.name: truth.get(f"{ds.name}:inflate", 1.0) for ds in case.datasets}
    return add_noise(case, mu, rng, scale, inflate)


def add_noise(case, mu: dict, rng, scale=None, inflate=None) -> dict:
    """The case's noise laid on noiseless values: y = μ + f s σ ε per dataset.

    Parameters
    ----------
    case : Case
    mu : dict of str to ndarray
        Noiseless values per dataset name (internal units).
    rng : numpy.random.Generator
        The noise stream, drawn dataset by dataset in the case's order.
    scale : dict of str to float, optional
        Error scale s per dataset (default 1).
    inflate : dict of str to float, optional
        Error inflation f of the truth per dataset (default 1).

    Returns
    -------
    dict of str to (ndarray, ndarray)
        Values and errors s σ, for :meth:`~evidence1d.case.Case.replace`.
    """
    out = {}
    for ds in case.datasets:
        if ds.options.get("noise") == "student_t":
            eps = rng.standard_t(ds.options.get("nu", 4.0), size=ds.n)
        else:
            eps = rng.standard_normal(ds.n)
        s = float((scale or {}).get(ds.name, 1.0))
        err = s * ds.err
        f = float((inflate or {}).get(ds.name, 1.0))
        out[ds.name] = (mu[ds.name] + f * err * eps, err)
    return out


def without_datasets(case, names=None):
    """``case`` (a variant of its own, made by :meth:`~evidence1d.case.Case.replace`)
    without the datasets ``names``: what a leave-one-out fit sees.

    Raises
    ------
    InputError
        An unknown dataset, or no dataset left.
    """
    if not names:
        return case
    known = [ds.name for ds in case.datasets]
    bad = [n for n in names if n not in known]
    if bad:
        raise InputError(f"unknown dataset '{bad[0]}'; datasets of the case: "
                         + ", ".join(known))
    variant = case.replace()                 # a new Case: no joint problem cached yet
    variant.datasets = [ds for ds in case.datasets if ds.name not in names]
    if not variant.datasets:
        raise InputError("leaving out every dataset leaves nothing to fit")
    return variant


def one_dimensional_log_k(log_z: dict, weights: dict, one_d: dict):
    """ln K of "one-dimensional" against "not one-dimensional" (composite hypotheses).

    K = [Σ_1D w_i Z_i / Σ_1D w_i] / [Σ_other w_j Z_j / Σ_other w_j]: the posterior odds of
    the two classes divided by their prior odds.

    Returns
    -------
    float or None
        None when the case has no family of one class.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §3.2 (prior-weighted evidences).
    """
    from scipy.special import logsumexp
    ones = [n for n in log_z if one_d[n]]
    others = [n for n in log_z if not one_d[n]]
    if not ones or not others:
        return None

    def lse(names, with_z):
        return float(logsumexp([np.log(weights[n]) + (log_z[n] if with_z else 0.0)
                                for n in names]))
    return lse(ones, True) - lse(ones, False) - lse(others, True) + lse(others, False)


def run_replicate(case, settings: dict, task: dict) -> dict:
    """Simulate and fit one replicate (a pool or cluster job).

    Parameters
    ----------
    case : Case
    settings : dict
        Sampler settings (:func:`replicate_settings`).
    task : dict
        ``id``, ``family`` (the true family), ``truth`` (its parameters), ``seed`` and
        ``key`` (see :func:`task_streams`), ``scale`` (error scale per dataset, optional),
        ``generator`` (optional: ``{"file": GeneratorFile, "name": str}``, an out-of-family
        truth drawn by :func:`~evidence1d.campaign.generators.generator_data` from the
        task's truth stream; ``family`` is then the generator's name), ``drop`` (optional:
        datasets simulated but left out of the fit).

    Returns
    -------
    dict
        ``id``, ``family``, ``truth``, ``log_z`` and ``log_z_err`` per family,
        ``one_dimensional`` per family, ``prior_probability``, ``winner``, ``p_1d``,
        ``ln_k_1d`` (:func:`one_dimensional_log_k`), ``ln_k_truth`` (ln Z of the true
        family minus the largest other; None for a generator), ``reliable``, ``ranks``
        (per physical parameter of the true family: the fraction of its posterior samples
        below the truth; empty for a generator), ``generator`` (bool), ``dropped``,
        ``run_time`` (s) and ``failed`` (None, or why the fit could not be made).
    """
    from ..runner import run
    t0 = time.perf_counter()
    truth_rng, noise_rng, fit_seed = task_streams(task["seed"], task["key"])
    gen = task.get("generator")
    rec = {"id": task["id"], "family": task["family"], "truth": dict(task.get("truth") or {}),
           "scale": dict(task.get("scale") or {}), "generator": bool(gen),
           "dropped": list(task.get("drop") or []), "failed": None}
    try:
        if gen:
            from .generators import generator_data
            mu, rec["truth"] = generator_data(case, gen["file"], gen["name"], truth_rng)
            data = add_noise(case, mu, noise_rng, task.get("scale"))
        else:
            data = simulate_data(case, task["family"], task["truth"], noise_rng,
                                 task.get("scale"))
        variant = without_datasets(case.replace(data=data, sampler=settings),
                                   task.get("drop"))
        with warnings.catch_warnings():
            # numerical warnings of short chains (emcee's autocorrelation of a stuck
            # walker) would flood a campaign's terminal; the diagnostics keep what matters
            warnings.simplefilter("ignore", RuntimeWarning)
            res = run(variant, seed=fit_seed, progress=False, figures=False, workers=1,
                      budget=False)
    except (InputError, ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
        rec.update(failed=f"{exc.__class__.__name__}: {exc}", run_time=time.perf_counter() - t0)
        return rec
    cmp_ = res.comparison
    log_z = {n: float(cmp_.log_z[n]) for n in cmp_.names}
    one_d = {n: bool(cmp_.one_dimensional[n]) for n in cmp_.names}
    weights = {n: float(cmp_.prior_probability[n]) for n in cmp_.names}
    ranks, others = {}, []
    if not gen:                         # an out-of-family truth has no parameters to cover
        truth_fit = res.models[task["family"]]
        samples = np.asarray(truth_fit.posterior.samples)
        ranks = {p: float(np.mean(samples[:, i] < task["truth"][p]))
                 for i, p in enumerate(truth_fit.names)
                 if p in case.models[task["family"]].card.parameters}
        others = [log_z[n] for n in log_z if n != task["family"]]
    rec.update(log_z=log_z, log_z_err={n: float(cmp_.log_z_err[n]) for n in cmp_.names},
               one_dimensional=one_d, prior_probability=weights, winner=str(cmp_.best),
               p_1d=float(cmp_.p_one_dimensional),
               ln_k_1d=one_dimensional_log_k(log_z, weights, one_d),
               ln_k_truth=log_z[task["family"]] - max(others) if others else None,
               reliable=bool(res.reliable), ranks=ranks,
               run_time=time.perf_counter() - t0)
    return rec

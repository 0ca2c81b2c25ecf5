"""``run()``: the model comparison of one case, as a pure function of (case, seed, settings).

For every model family of the case: the evidence ln Z from a tempered sequence (with its
error), the posterior from emcee started from the final tempered population (which also
shapes its independence proposals, see :mod:`evidence1d.inference.posterior`), diagnostics,
a Laplace quick look, the Savage–Dickey ratio where the family contains its 1D limit, and
PSIS-LOO; then the comparison across families.  No global state: the work is spread over
a process pool in two stages, the evidence islands of every family first (independent jobs,
so the cores are shared evenly), then one job per family for the rest (with the family's
parameter table and figure data).  Every family and island has its own random stream, so
the numbers do not depend on the number of processes.  Nothing is written here: the
output folder, resume and the report belong to :mod:`evidence1d.outputs`.

After the families: the analyses of :mod:`evidence1d.analysis` (goodness of fit, prior
bounds, and the evidence budget of the two leading families, which runs its own
tempered evidences of data subsets as a third parallel stage), the verdict's reliability
(:func:`~evidence1d.inference.compare.verdict_reliability`), and a record of what the
samplers did (moves and their shares, marginalisation) for the methods text.
"""
from __future__ import annotations

import json
import time

import numpy as np

from .errors import InputError
from .inference.diagnostics import THRESHOLDS
from .inference.tempering import QUICK_IMPORTANCE_DRAWS_PER_PARTICLE
from .parallel import run_in_pool, worker_count
from .results import ModelResult, RunResults

__all__ = ["ModelResult", "RunResults", "run", "model_names", "effective_settings", "QUICK",
           "QUICK_POINTS", "quick_subset"]

#: reductions applied by ``--quick`` (a first look, not for publication).  A chain runs at
#: most 300 steps and stops earlier, like any chain, at the first check where every
#: convergence diagnostic passes (:func:`evidence1d.inference.posterior.converged_enough`)
#: with the diagnostics' own ESS floor as its target.  (Measured on the flagship,
#: 2026-12-05: at most 600 steps would take the spinon chain from 25 to 51 s and still end
#: with R-hat notes of 1.011-1.017 from the 2 x 64-particle start, so 300 is kept.)
QUICK = {"steps": 300, "posterior_ess": int(THRESHOLDS["ess_min"]), "particles": 150,
         "islands": 2, "importance_draws": QUICK_IMPORTANCE_DRAWS_PER_PARTICLE}
#: ``--quick`` fits at most this many points of each spectrum: a dense map (10⁴–10⁵ points)
#: is reduced to every k-th point in file order, so that a first look costs about what the
#: flagship's does whatever the size of the data (the report says what was kept).  The
#: flagship fits 912 spectral points; measured on a 20 000-point map of the same scenario
#: (``benchmarks/bench_large_map.py``, 2026-12-05): 140 s at 2000 points (the spinon
#: family's 2 islands and 300-step chain are the critical path), against 56 s for the
#: flagship's quick look
QUICK_POINTS = 1000


#: most posterior samples for which the marginalised nuisances are drawn (each draw needs
#: the model at its sample).  Evenly spaced along the thinned chain, so with the chain's
#: τ of a few steps 4000 rows carry an effective sample size of the order of a thousand:
#: nuisance quantiles to a few per cent of their width (common practice for quoted
#: intervals).  The sampled parameters keep every sample.
MARGINAL_DRAWS = 4000


def quick_subset(case, limit: int | None = None):
    """The case with every spectrum of more than ``limit`` points reduced to every k-th
    point in file order (k = ⌈n/limit⌉), and what was kept.

    Parameters
    ----------
    case : Case
    limit : int, optional
        Largest number of points of a spectrum fitted by a quick look (default
        :data:`QUICK_POINTS`).

    Returns
    -------
    (Case, dict of str to dict)
        The case (itself if nothing is reduced, else a variant made in memory) and, per
        reduced dataset, ``{"kept": m, "of": n, "every": k}``.

    Notes
    -----
    Fewer points carry less information: ln K of the subset is roughly 1/k of the full
    data's for a verdict spread over the map, so a quick look shows the direction of the
    verdict, not its size.  Every kept point is fitted exactly as in the full run.
    """
    import dataclasses
    import math
    limit = QUICK_POINTS if limit is None else int(limit)
    reduced, info = [], {}
    for ds in case.datasets:
        if not ds.spec.is_spectrum or ds.n <= limit:
            reduced.append(ds)
            continue
        k = math.ceil(ds.n / limit)
        idx = np.arange(0, ds.n, k)

        def take(d, n=ds.n):
            return {c: (np.asarray(v)[idx] if np.shape(v)[:1] == (n,) else v)
                    for c, v in d.items()}
        reduced.append(dataclasses.replace(ds, x=take(ds.x), y=ds.y[idx], err=ds.err[idx],
                                           lines=np.asarray(ds.lines)[idx],
                                           raw=take(ds.raw)))
        info[ds.name] = {"kept": int(idx.size), "of": int(ds.n), "every": int(k)}
    if not info:
        return case, info
    variant = case.replace()                 # a new Case: no joint problem cached yet
    variant.datasets = reduced
    return variant, info


def effective_settings(case, quick: bool = False) -> dict:
    """The sampler settings a run uses: the case's, reduced by :data:`QUICK` if asked."""
    s = dict(case.sampler)
    if quick:
        for k, v in QUICK.items():
            s[k] = min(s[k], v)
    return s


def _model_seeds(seed: int, names):
    """The random streams of each family: (evidence, posterior, Savage–Dickey and LOO,
    nuisance draws).  Drawn once per run: ``SeedSequence.spawn`` gives new children at
    every call."""
    children = np.random.SeedSequence(seed).spawn(len(names))
    return {n: tuple(c.spawn(4)) for n, c in zip(names, children)}


def _evidence_options(settings) -> dict:
    """Keyword arguments of :func:`~evidence1d.inference.evidence.run_island` from the
    sampler settings of a case."""
    opts = {"n_particles": settings["particles"], "target_cess": settings["ess_fraction"]}
    if "importance_draws" in settings:
        opts["importance_draws"] = int(settings["importance_draws"]) * int(settings["particles"])
    if settings["mcmc_steps"]:
        opts["min_sweeps"] = settings["mcmc_steps"]
    return opts


def _island_job(problem, settings, seed):
    """One evidence island of one family: a pool job (it receives the family's joint
    problem, not the whole case)."""
    from .inference.evidence import run_island
    return run_island(problem.log_likelihood, problem.prior, seed,
                      **_evidence_options(settings))


def _evidences(case, names, settings, seeds, store, progress, workers: int,
               executor=None) -> dict:
    """The evidence of every family, its islands spread over ``workers`` processes.

    Islands of all families are independent jobs (R per family), so the work is shared out
    evenly whatever the number of families; each island keeps the random stream it has in
    :func:`~evidence1d.inference.evidence.tempered_evidence`, so the numbers do not depend
    on ``workers``.  Finished evidences are kept by the ``store`` (if any) for a resumed
    run.
    """
    from .inference.evidence import (check_evidence_settings, combine_islands,
                                     evidence_settings, island_seeds)
    from .inference.progress import stage_bar
    evidences, jobs, owner = {}, [], []
    for n in names:
        problem = case.problem(n)
        check_evidence_settings(problem.prior, settings["particles"], settings["islands"],
                                settings["ess_fraction"])
        ev = store.load_evidence(n, settings) if store is not None else None
        if ev is not None:
            evidences[n] = ev
            continue
        ev_seed = seeds[n][0]
        for seed in island_seeds(np.random.default_rng(ev_seed), settings["islands"]):
            jobs.append((problem, settings, seed))
            owner.append(n)
    if jobs:
        bar = stage_bar(len(jobs), progress, "evidence", unit="island")
        try:
            done = run_in_pool(_island_job, jobs, workers, on_result=lambda _: bar.update(1),
                               executor=executor)
        finally:
            bar.close()
        record = evidence_settings(n_islands=settings["islands"], **_evidence_options(settings))
        for n in dict.fromkeys(owner):
            runs = [r for r, o in zip(done, owner) if o == n]
            ev = combine_islands([r for r, _ in runs], case.problem(n).names, record,
                                 [w for _, w in runs if w])
            if store is not None:
                store.save_evidence(n, ev, settings)
            evidences[n] = ev
    return {n: evidences[n] for n in names}


#: fractions below which a family's dimensionality measures count as "near one dimension"
NEAR_LIMIT_FRACTIONS = (0.01, 0.05)


def _near_limit(problem, samples, max_draws=1000):
    """Posterior of the family's dimensionality measures (median, 95th percentile and the
    probability of lying below each of :data:`NEAR_LIMIT_FRACTIONS`), or None."""
    draws = samples[np.linspace(0, len(samples) - 1, min(max_draws, len(samples))).astype(int)]
    p = problem.prior.expand(draws)
    phys = {k: v for k, v in p.items() if k in problem.family.parameters}
    out = {}
    for key, text, val in problem.family.dimensionality(phys):
        val = np.asarray(val, float)
        out[key] = {"description": text, "median": float(np.median(val)),
                    "p95": float(np.percentile(val, 95)),
                    "p_below": {f"{f:g}": float(np.mean(val < f))
                                for f in NEAR_LIMIT_FRACTIONS}}
    return out or None


def _run_model(problem, sample, settings, streams, ev, store, progress, position=None,
               figures=None):
    """Everything after the evidence for one family: a pool job (it receives the family's
    joint problem and the sample, not the whole case)."""
    from .inference.compare import savage_dickey
    from .inference.diagnostics import diagnose, psis_loo
    from .analysis import bound_flags, goodness_of_fit
    from .analysis.figure_data import model_figure_data
    from .analysis.absolute import absolute_scale_check
    from .analysis.metal import metal_context
    from .analysis.parameters import draw_indices, parameter_table
    from .inference.laplace import laplace_evidence
    from .inference.posterior import population_moves, population_start, sample_posterior

    t0 = time.perf_counter()
    name = problem.model
    if progress:
        progress = {"label": name, "position": position}
    _, post_seed, sd_seed, nu_seed = streams
    ndim = len(problem.names)
    walkers = settings["walkers"] or max(16, 4 * ndim)
    walkers += walkers % 2
    rng_post = np.random.default_rng(post_seed)
    pool = ev.posterior_samples
    start = population_start(pool, walkers, rng_post)
    ckpt = None if store is None else store.checkpoint(name)
    resume = bool(store is not None and store.resume)
    moves = population_moves(pool)
    post = sample_posterior(problem.log_likelihood, problem.prior, rng=rng_post,
                            n_walkers=walkers, n_steps=settings["steps"], initial=start,
                            checkpoint=ckpt, resume=resume, progress=progress,
                            checkpoint_every=settings["checkpoint_every"], moves=moves,
                            population=pool, ess=settings.get("posterior_ess", 0))
    diag = diagnose(post.chain[post.burn_in:], problem.names,
                    acceptance=post.acceptance_fraction, tau=post.tau,
                    independence=post.population_moves)
    samples = post.samples
    lap = laplace_evidence(problem.log_likelihood, problem.prior, samples=samples,
                           optimise=False, log_prob=post.samples_log_prob)
    sd = None
    nested = problem.card.nested_1d_limit
    if nested is not None and nested["parameter"] in problem.names:
        i = problem.names.index(nested["parameter"])
        pr = problem.prior.prior_of(nested["parameter"])
        sd = savage_dickey(samples[:, i], pr, nested["value"],
                           rng=np.random.default_rng(sd_seed))
        sd = dict(sd.to_dict() if hasattr(sd, "to_dict") else sd)
        sd.update(parameter=nested["parameter"], value=nested["value"],
                  near_limit=_near_limit(problem, samples))
    loo = None
    try:
        draws = samples[np.linspace(0, len(samples) - 1, min(400, len(samples))).astype(int)]
        pw = problem.log_likelihood_pointwise(draws, rng=np.random.default_rng(sd_seed))
        loo_res = psis_loo(np.concatenate([pw[k] for k in pw], axis=1))
        loo = loo_res.to_dict() if hasattr(loo_res, "to_dict") else dict(loo_res)
    except Exception as exc:  # a predictive cross-check must not sink the run
        loo = {"error": f"{exc.__class__.__name__}: {exc}"}
    # the nuisances' conditional draws need the model at each sample: at most
    # MARGINAL_DRAWS samples, evenly spaced along the chain, get them
    rows = draw_indices(len(samples), MARGINAL_DRAWS)
    nuis = problem.draw_marginalised(samples[rows], np.random.default_rng(nu_seed))
    full = np.hstack([np.asarray(samples)[rows], np.asarray(nuis)])
    analysis = {
        "goodness_of_fit": goodness_of_fit(problem, full,
                                           rng=np.random.default_rng(nu_seed.spawn(1)[0])),
        "prior_bounds": bound_flags(problem.full_names, full, problem.declared_priors,
                                    nested),
        "metal": metal_context(problem.full_names, full, problem.units),
        "absolute_scale": absolute_scale_check(problem, problem.full_names, full),
        "sampler": {"moves": _describe_moves(moves), "n_walkers": int(walkers),
                    "n_steps": int(post.n_steps), "max_steps": int(settings["steps"]),
                    "stop_rule": post.stop_rule,
                    "posterior_ess": int(settings.get("posterior_ess", 0)),
                    "population_size": int(len(pool)),
                    "move_acceptance": dict(post.move_acceptance),
                    "marginalised": list(problem.marginalised)},
    }
    analysis["parameter_table"] = parameter_table(problem, samples, nuis)
    if figures is not None:
        analysis["figures"] = model_figure_data(name, problem, sample, samples, full,
                                                analysis["parameter_table"], figures)
    return ModelResult(name=name, title=problem.card.title,
                       one_dimensional=problem.one_dimensional, names=list(problem.names),
                       units=dict(problem.units), evidence=ev, posterior=post,
                       diagnostics=diag, laplace=lap, savage_dickey=sd, loo=loo,
                       run_time=ev.wall_time + time.perf_counter() - t0,
                       nuisance_names=list(problem.marginalised), nuisance_samples=nuis,
                       nuisance_rows=None if len(rows) == len(samples) else rows,
                       analysis=analysis)


def _describe_moves(moves) -> list:
    """The emcee move mixture as plain records: [{"move": name, "share": fraction}]."""
    import emcee

    from .inference.posterior import PopulationProposal
    total = float(sum(w for _, w in moves))
    out = []
    for mv, w in moves:
        if (isinstance(mv, emcee.moves.MHMove)
                and isinstance(getattr(mv, "get_proposal", None), PopulationProposal)):
            name = "population"
        elif isinstance(mv, emcee.moves.DESnookerMove):
            name = "snooker"
        elif isinstance(mv, emcee.moves.DEMove):
            name = "differential_evolution"
        elif isinstance(mv, emcee.moves.StretchMove):
            name = "stretch"
        else:
            name = type(mv).__name__
        out.append({"move": name, "share": float(w) / total})
    return out


def _nested_limits(results: dict) -> dict:
    """family -> (ln BF limit/full, error) of the families that are not one-dimensional but
    contain a one-dimensional limit (their Savage–Dickey ratios)."""
    return {n: (r.savage_dickey["ln_bf_nested_vs_full"], r.savage_dickey["ln_bf_err"])
            for n, r in results.items()
            if r.savage_dickey is not None and not r.one_dimensional}


def quick_subset_text(name: str, kept: dict) -> str:
    """One line on a spectrum reduced by :func:`quick_subset`."""
    return (f"'{name}' fitted on one point in {kept['every']} in file order "
            f"({kept['kept']} of {kept['of']} points)")


def run_context(case, names, quick: bool, figures, subset=None) -> dict:
    """What the report states besides the numbers, taken from the case (see
    :attr:`evidence1d.results.RunResults.context`); ``subset`` is what
    :func:`quick_subset` kept of each reduced spectrum."""
    cards = {}
    for n in names:
        card = case.models[n].card
        cards[n] = {"assumptions": list(card.assumptions),
                    "limitations": list(card.limitations),
                    "references": list(card.references),
                    "options": {k: v for k, v in card.options.items()},
                    "latex": {p: v.get("latex") for p, v in card.parameters.items()}}
    return {"title": case.title, "quick": bool(quick), "cards": cards,
            "datasets": [{"name": ds.name, "kind": ds.kind, "n": int(ds.n),
                          "units": dict(ds.units),
                          **({"quick_subset": dict(subset[ds.name])}
                             if subset and ds.name in subset else {})}
                         for ds in case.datasets],
            "figure_settings": figures}


def _nested_checks(case, results) -> dict:
    """Direct ln K against Savage–Dickey for every family whose card says it equals another
    family of the run at its nested limit (:mod:`evidence1d.inference.nested_check`)."""
    from .inference.nested_check import nested_consistency, priors_agree
    out = {}
    for n, r in results.items():
        lim = case.problem(n).card.nested_1d_limit or {}
        other = lim.get("equals")
        if not other or other not in results or not r.savage_dickey:
            continue
        full, nested = case.problem(n), case.problem(other)
        differ = priors_agree(full.declared_priors, nested.declared_priors, lim["parameter"])
        # options both families have (line_shape, ...) must agree for the limit to be exact
        differ += [f"option {k}" for k in sorted(set(full.card.options) & set(nested.card.options))
                   if full.card.options[k] != nested.card.options[k]]
        out[n] = nested_consistency(
            n, other, {k: v.evidence.log_z for k, v in results.items()},
            {k: v.evidence.log_z_err for k, v in results.items()}, r.savage_dickey,
            differing_priors=differ)
    return out


def model_names(case, models=None) -> list:
    """The models a run compares: ``models`` or all of the case's, checked before any work.

    Parameters
    ----------
    case : Case
    models : sequence of str, optional
        A subset of the case's models (default: all).

    Returns
    -------
    list of str

    Raises
    ------
    InputError
        Fewer than two distinct models, or a model the case does not have.
    """
    names = list(case.models) if not models else list(models)
    if len(set(names)) < 2:
        raise InputError(f"a run compares models and needs at least two; got {names}: "
                         "add a model to the case or to --models")
    for n in names:
        case.problem(n)
    return names


def run(case, *, seed: int | None = None, quick: bool = False, models=None,
        progress: bool = True, workers: int | None = None, budget: bool | None = None,
        prior_reruns: bool | None = None, figures: bool = True, store=None,
        executor=None) -> RunResults:
    """Compare the model families of a case: computation only.

    No file is written unless a ``store`` is given (the command line passes a
    :class:`evidence1d.outputs.RunFolder`: checkpoints, saved evidences for a resumed run,
    a log); :func:`evidence1d.outputs.run_to_folder` writes the output folder and the
    report.

    Parameters
    ----------
    case : Case
    seed : int, optional
        Overrides the case's seed. The same seed and inputs give the same numbers.
    quick : bool
        Reduced sampler settings (:data:`QUICK`) for a first look.
    models : list of str, optional
        A subset of the case's models.
    progress : bool
        Progress bars on standard error.
    workers : int, optional
        Processes over which the evidence islands, then the model families are spread
        (default: the environment variable ``EVIDENCE1D_WORKERS`` or the number of CPU
        cores, at most one per job; 1 runs everything in this process). Each family has
        its own seed, so the numbers do not depend on this.
    budget : bool, optional
        Compute the evidence budget of the two leading families (tempered evidences of
        subsets of the data: about 2 K − 2 extra evidence runs per family for K likelihood
        terms, most of them on fewer data; see :mod:`evidence1d.analysis.budget`).
        Default: yes, except with ``quick``.
    prior_reruns : bool, optional
        In the prior-sensitivity table, compute afresh (tempered runs in at most
        :data:`~evidence1d.analysis.stage.BUDGET_ISLANDS` islands) the evidences that
        reweighting cannot give (a widened prior whose bound the posterior touches); without
        them such rows say "needs a re-run".  Default: as ``budget`` (both are extra
        evidence runs of the analysis: yes, except with ``quick``).
    figures : bool
        Compute the figure data (predictive bands, cuts, maps, corner samples) so that the
        report can draw the figures.
    store : object, optional
        Where checkpoints and finished evidences are kept: ``checkpoint(name) -> Path``,
        ``load_evidence(name, settings)``, ``save_evidence(name, ev, settings)``,
        ``resume`` (bool) and ``log(message)``.
    executor : object, optional
        Where the evidence islands and the families run instead of a process pool of our
        own: anything with ``submit`` (``concurrent.futures``, a
        ``dask.distributed.Client``), a ``multiprocessing`` pool, or anything with ``map``
        (see :mod:`evidence1d.parallel`); ``workers`` is then not used.  Jobs receive the
        family's joint problem, so only that travels to the workers.  A ``store`` is
        written by the workers: with a remote cluster it needs a folder they share.  The
        numbers are the same whatever the executor; the evidence budget and the
        prior-sensitivity re-runs use it too.

    Returns
    -------
    RunResults
        ``out`` and ``case_path`` are filled by the folder layer when it writes them.

    Raises
    ------
    InputError
        An unknown model, or bad sampler settings.
    """
    from .analysis.stage import run_budget, run_sensitivity, sensitivity_reruns
    from .inference.compare import compare_models, verdict_reliability, with_reliability
    from .inference.nested_limits import with_nested_limits
    from .provenance import provenance
    from .figure_settings import figure_settings

    seed = case.seed if seed is None else int(seed)
    subset = {}
    if quick:
        case, subset = quick_subset(case)
    names = model_names(case, models)
    settings = effective_settings(case, quick)
    fig_settings = figure_settings(case.figures, [ds.name for ds in case.datasets],
                                   names) if figures else None
    log = store.log if store is not None else (lambda message: None)
    log(f"settings: {json.dumps(settings)}; models: {', '.join(names)}")
    for name, kept in subset.items():
        log(f"quick look: {quick_subset_text(name, kept)}")
    t0 = time.time()
    seeds = _model_seeds(seed, names)
    log(f"evidence: {settings['islands']} islands per family "
        + (f"on {type(executor).__name__}" if executor is not None else
           f"over {worker_count(workers, len(names) * settings['islands'])} process(es)"))
    evidences = _evidences(case, names, settings, seeds, store, progress,
                           worker_count(workers, len(names) * settings["islands"]),
                           executor=executor)
    n_workers = worker_count(workers, len(names))
    jobs = [(case.problem(n), case.sample, settings, seeds[n], evidences[n], store,
             progress and executor is None, i if n_workers > 1 else None, fig_settings)
            for i, n in enumerate(names)]
    results = dict(zip(names, run_in_pool(_run_model, jobs, n_workers, executor=executor)))
    for n, r in results.items():
        log(f"{n}: ln Z = {r.evidence.log_z:.3f} ± {r.evidence.log_z_err:.3f} "
            f"({r.evidence.n_evaluations} + {r.posterior.n_evaluations} evaluations, "
            f"{r.run_time:.1f} s); diagnostics {'passed' if r.diagnostics.ok else 'FAILED'}")
        for w in r.diagnostics.warnings:
            log(f"{n}: warning: {w}")
    comparison = compare_models({n: (r.evidence.log_z, r.evidence.log_z_err,
                                     r.one_dimensional) for n, r in results.items()},
                                prior_odds=case.prior_odds)
    if getattr(case, "one_dimensional_limits", "exclude") == "include":
        comparison = with_nested_limits(comparison, _nested_limits(results))
    rel = verdict_reliability(comparison,
                              {n: r.evidence.island_log_z for n, r in results.items()},
                              {n: r.diagnostics.ok for n, r in results.items()},
                              {n: list(r.diagnostics.warnings) for n, r in results.items()},
                              {n: list(r.evidence.warnings) for n, r in results.items()},
                              _nested_checks(case, results))
    comparison = with_reliability(comparison, rel)
    reliable = bool(rel["verdict_reliable"])
    for n, note in rel["posterior_notes"].items():
        log(f"{n}: note: {note}")
    for ds, fit in results[comparison.best].analysis["goodness_of_fit"].items():
        if fit["bad_fit"]:
            log(f"WARNING: the winner {comparison.best} fits {ds} badly: chi2/N = "
                f"{fit['chi2_per_point']:.2f} (limit {fit['chi2_per_point_limit']:.2f}), "
                f"posterior-predictive p = {fit['p_value']:.2g}")
    budget_doc = None
    if budget is None:
        budget = not quick
    if not budget:
        budget_doc = {"skipped": "a --quick run" if quick else "not asked for"}
    else:
        t_b = time.time()
        try:
            budget_doc = run_budget(case, results, settings, _evidence_options(settings),
                                    seed, progress, workers, executor)
        except (InputError, ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
            # an analysis must not sink a finished comparison; the report says why
            budget_doc = {"skipped": f"failed ({exc.__class__.__name__}: {exc})"}
            log(f"evidence budget not computed: {exc}")
        if budget_doc is not None and "skipped" not in budget_doc:
            log(f"evidence budget of {' vs '.join(budget_doc['families'])}: ln K without "
                + ", ".join(f"{r['dataset']} {r['ln_k_without']:.2f}"
                            for r in budget_doc["leave_one_out"])
                + f" against {budget_doc['ln_k']:.2f} ({time.time() - t_b:.1f} s)")
    reruns = None
    if prior_reruns is None:
        prior_reruns = budget
    if prior_reruns:
        t_s = time.time()
        try:
            reruns = sensitivity_reruns(case, results, settings, _evidence_options(settings),
                                        seed, progress, workers,
                                        executor)
        except (InputError, ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
            log(f"prior-sensitivity re-runs not computed: {exc}")
        for key, why in (reruns or {}).items():
            if isinstance(why, str):
                log(f"prior sensitivity: {key[2]}, {key[0]} {key[1]}: {why}")
        done = [k for k, v in (reruns or {}).items() if not isinstance(v, str)]
        if done:
            log(f"prior sensitivity: {len(done)} evidences re-run under changed priors "
                f"({time.time() - t_s:.1f} s)")
    sensitivity = run_sensitivity(case, results, reruns)
    prov = provenance(case, seed=seed, start=t0, run_time=time.time() - t0, settings=settings)
    res = RunResults(models=results, comparison=comparison, reliable=reliable, seed=seed,
                     settings=settings, provenance=prov, budget=budget_doc,
                     sensitivity=sensitivity,
                     context=run_context(case, names, quick, fig_settings, subset),
                     case_path=case.path)
    log(f"verdict: {comparison.verdict}")
    return res

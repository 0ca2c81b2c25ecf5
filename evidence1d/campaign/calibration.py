"""``evidence1d calibrate``: how often the comparison of a case's families is wrong.

For every family of the case, replicates are drawn: true parameters from the family's
declared priors (or from the posterior of a finished run, ``--from``), datasets simulated
with the case's own design, errors and noise model, every family fitted with the fast
settings (:data:`~evidence1d.campaign.replicate.FAST`), and the evidences, the winner,
P(1D), ln K and the posterior quantile of each true parameter kept.  With a generator
file (:mod:`evidence1d.campaign.generators`), replicates are also drawn from
out-of-family generators, with the same design and noise.  The scores
(:mod:`evidence1d.campaign.scores`) go to ``calibration.json``, the figures and a page.

References
----------
.. [1] S. R. Cook, A. Gelman and D. B. Rubin, J. Comput. Graph. Stat. 15, 675 (2006).
.. [2] R. E. Kass and A. E. Raftery, JASA 90, 773 (1995): the scale of 2 ln K.
"""
from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..results import atomic_write, json_ready

__all__ = ["calibrate", "calibration_tasks", "generator_tasks", "case_fingerprint",
           "DEFAULT_THRESHOLD", "NOISE_TEXT", "GENERATOR_TEXT"]

#: ln K above which a replicate is called one-dimensional: 2 ln K > 6, "strong" on the
#: scale of Kass & Raftery (1995), §3.2
DEFAULT_THRESHOLD = 3.0
#: how replicates are simulated (stated in every output)
NOISE_TEXT = ("values = prediction at the truth + the case's own errors × N(0, 1) noise "
              "(Student-t for datasets with noise: student_t)")
#: first element of the task keys of calibration replicates (plans use another)
_KEY = 1
#: first element of the task keys of out-of-family generator replicates
_GENERATOR_KEY = 3
#: what calibration.json says of out-of-family replicates and coverage
GENERATOR_TEXT = ("out-of-family generators are no family of the fit: their replicates are "
                  "rows of the confusion matrix and count in false_1d_rate and "
                  "missed_1d_rate, but have no parameter coverage (no fitted family holds "
                  "their parameters) and stay out of accuracy and reliability")


def case_fingerprint(case) -> str:
    """SHA-256 of what makes replicates of ``case``: its datasets' points and errors, its
    models and their priors (a campaign folder refuses replicates of another case)."""
    h = hashlib.sha256()
    for ds in case.datasets:
        h.update(ds.name.encode())
        for k in sorted(ds.x):
            h.update(np.ascontiguousarray(ds.x[k], dtype=float).tobytes())
        h.update(np.ascontiguousarray(ds.err, dtype=float).tobytes())
    for name in case.models:
        problem = case.problem(name)
        h.update(name.encode())
        for p in problem.full_names:
            h.update(f"{p}={problem.declared_priors[p]!r}".encode())
    return h.hexdigest()


def calibration_tasks(case, replicates: int, seed: int, posteriors=None,
                      families=None) -> list:
    """The replicate tasks of a calibration: ``replicates`` per true family.

    Parameters
    ----------
    case : Case
    replicates : int
    seed : int
    posteriors : dict, optional
        :func:`~evidence1d.campaign.truths.load_posteriors`; default: the priors.
    families : list of str, optional
        True families (default: every model of the case).

    Returns
    -------
    list of dict
        Tasks for :func:`~evidence1d.campaign.replicate.run_replicate`.
    """
    from .replicate import task_streams
    from .truths import posterior_truth, prior_truth
    order = list(case.models)
    tasks = []
    for fam in (families or order):
        problem = case.problem(fam)
        for i in range(int(replicates)):
            key = (_KEY, order.index(fam), i)
            truth_rng, _, _ = task_streams(seed, key)
            truth = (posterior_truth(*posteriors[fam], truth_rng) if posteriors
                     else prior_truth(problem, truth_rng))
            tasks.append({"id": f"{fam}-{i:04d}", "family": fam, "truth": truth,
                          "seed": int(seed), "key": list(key)})
    return tasks


def generator_tasks(gfile, generators: list, replicates: int, seed: int) -> list:
    """The replicate tasks of out-of-family generators: ``replicates`` per generator.

    Parameters
    ----------
    gfile : GeneratorFile
    generators : list of Generator
    replicates, seed : int

    Returns
    -------
    list of dict
        Tasks for :func:`~evidence1d.campaign.replicate.run_replicate` (the generator draws
        its own parameters from the task's truth stream on the worker).
    """
    return [{"id": f"{g.name}-{i:04d}", "family": g.name, "truth": {},
             "generator": {"file": gfile, "name": g.name}, "seed": int(seed),
             "key": [_GENERATOR_KEY, gi, i]}
            for gi, g in enumerate(generators) for i in range(int(replicates))]


def calibrate(case, *, out, replicates: int = 20, quick: bool = False, seed=None,
              threshold: float = DEFAULT_THRESHOLD, source=None, executor=None,
              workers=None, progress: bool = True, figures: bool = True,
              generators=None) -> dict:
    """Run (or resume) a calibration campaign of ``case`` into the folder ``out``.

    Parameters
    ----------
    case : Case
        At least two families.
    out : str or pathlib.Path
        The campaign folder (created; a folder of the same campaign is resumed).
    replicates : int
        Replicates per true family.
    quick : bool
        Smoke settings (:data:`~evidence1d.campaign.replicate.SMOKE`) to try the command.
    seed : int, optional
        Default: the case's seed.
    threshold : float
        ln K above which a replicate is called one-dimensional.
    source : str or pathlib.Path, optional
        A finished run folder of this case: truths from its posteriors.
    executor : object, optional
        See :mod:`evidence1d.parallel`; None: a local process pool.
    workers : int, optional
        Processes of the local pool.
    progress : bool
    figures : bool
        Draw the figures (PNG at 300 dpi and PDF).
    generators : str or pathlib.Path, optional
        A generator file (:mod:`evidence1d.campaign.generators`): ``replicates`` more per
        out-of-family generator, simulated with the case's design and noise.

    Returns
    -------
    dict
        The content of ``calibration.json``.

    Raises
    ------
    InputError
        Fewer than two families, bad numbers, a bad generator file, or a folder holding
        another campaign.
    """
    from .engine import run_tasks
    from .page import calibration_page
    from .replicate import replicate_settings, run_replicate
    from .store import CampaignStore
    from .truths import load_posteriors
    if len(case.models) < 2:
        raise InputError("a calibration compares families: the case needs at least two "
                         "models")
    if int(replicates) < 1:
        raise InputError(f"--replicates must be at least 1; got {replicates}")
    if not np.isfinite(threshold) or threshold < 0:
        raise InputError(f"the ln K threshold must be a number >= 0; got {threshold}")
    seed = case.seed if seed is None else int(seed)
    settings = replicate_settings(case, quick)
    posteriors = load_posteriors(source, case) if source else None
    truths = f"posterior of {Path(source).resolve()}" if source else "prior"
    families = list(case.models)
    gfile, gens = None, []
    if generators is not None:
        from .generators import load_generator_file
        gfile, gens = load_generator_file(generators, case)
    gen_doc = [{"name": g.name, "one_dimensional": g.one_dimensional,
                "description": g.description} for g in gens]
    manifest = {"command": "calibrate", "seed": seed, "settings": settings,
                "truths": truths, "families": families,
                "case": case_fingerprint(case), "replicates": replicates}
    if gfile is not None:
        manifest["generators"] = {"sha256": gfile.sha256, "generators": gen_doc}
    store = CampaignStore(out, manifest)
    tasks = calibration_tasks(case, replicates, seed, posteriors)
    if gfile is not None:
        tasks += generator_tasks(gfile, gens, replicates, seed)
    records = run_tasks(run_replicate, (case, settings), tasks, store, executor=executor,
                        workers=workers, progress=progress, label="calibration")
    from .scores import calibration_scores
    doc = {"what": "calibration of the model comparison on simulated replicates",
           "case": case.title, "families": families, "seed": seed, "truths": truths,
           "replicates_per_family": int(replicates), "settings": settings,
           "quick": bool(quick), "noise": NOISE_TEXT,
           "generators": gen_doc, "generator_file": gfile.path if gfile else None,
           "generator_note": GENERATOR_TEXT if gfile else None,
           **calibration_scores(records, families, threshold,
                                generators={g.name: g.one_dimensional for g in gens})}
    doc = json_ready(doc)
    import json
    atomic_write(Path(out) / "calibration.json", json.dumps(doc, indent=2) + "\n")
    made = []
    if figures:
        from .figures import calibration_figures
        made = calibration_figures(doc, records, Path(out) / "figures", quick=quick)
    atomic_write(Path(out) / "calibration.md", calibration_page(doc, records, made, out))
    store.log(f"calibration written: {doc['replicates']['finished']} replicates scored, "
              f"{doc['replicates']['failed']} failed")
    return doc

"""``evidence1d plan``: how long to count to separate the families.

Replicates are simulated from one true family (``--truth``; default the winner of the
``--from`` run, else the case's first model) at several counting times, and every family
is fitted.  Counting a spectrum f times as long divides its errors by √f (Poisson
counting); the thermodynamic data keep theirs.  Each replicate keeps its truth and its
noise draws at every counting time (common random numbers), so its ln K changes smoothly
with counting time.  ``plan.json`` holds, per counting time, the quantiles of 2 ln K of the
true family against its strongest rival and the fraction of replicates above the target,
and says which counting time separates the families in the asked fraction of replicates.
With ``per_dataset``, the same is done for each spectrum counted longer on its own.

References
----------
.. [1] R. E. Kass and A. E. Raftery, JASA 90, 773 (1995), §3.2: 2 ln K > 10 is "very
   strong" evidence.
.. [2] G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering*
   (Cambridge, 1978): counts are Poisson, so relative errors fall as 1/√(counting time).
"""
from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..results import atomic_write, json_ready

__all__ = ["plan", "plan_tasks", "plan_summary", "DEFAULT_TIMES"]

#: counting times, as multiples of the case's, scanned by default
DEFAULT_TIMES = (0.25, 0.5, 1.0, 2.0, 4.0)
#: first element of the task keys of plan replicates (calibrations use another)
_KEY = 2


def _scopes(case, per_dataset: bool) -> dict:
    """Scope name -> the spectrum datasets counted longer in it."""
    spectra = [ds.name for ds in case.datasets if ds.spec.is_spectrum]
    if not spectra:
        raise InputError("a plan scales the counting time of spectra; the case has none")
    scopes = {"all": spectra}
    if per_dataset and len(spectra) > 1:
        scopes.update({n: [n] for n in spectra})
    return scopes


def plan_tasks(case, family: str, times, replicates: int, seed: int, scopes: dict,
               posteriors=None) -> list:
    """The tasks of a plan: every scope × counting time × replicate.

    Returns
    -------
    list of dict
        Tasks for :func:`~evidence1d.campaign.replicate.run_replicate` with ``scope`` and
        ``factor`` (counting time / the case's) added.
    """
    from .replicate import task_streams
    from .truths import posterior_truth, prior_truth
    problem = case.problem(family)
    fi = list(case.models).index(family)
    tasks = []
    for i in range(int(replicates)):
        key = (_KEY, fi, i)
        truth_rng, _, _ = task_streams(seed, key)
        truth = (posterior_truth(*posteriors[family], truth_rng) if posteriors
                 else prior_truth(problem, truth_rng))
        for scope, names in scopes.items():
            for f in times:
                tasks.append({"id": f"{scope}-x{f:g}-{i:04d}", "family": family,
                              "truth": truth, "seed": int(seed), "key": list(key),
                              "scope": scope, "factor": float(f),
                              "scale": {n: 1.0 / math.sqrt(f) for n in names}})
    return tasks


def plan_summary(tasks, records, times, target: float, fraction: float,
                 hours: float | None) -> dict:
    """Per scope and counting time: quantiles of 2 ln K, the fraction above ``target``,
    and the shortest counting time reaching ``fraction``.

    Parameters
    ----------
    tasks, records : list of dict
        In the same order.
    times : list of float
        Counting times as multiples of the case's.
    target : float
        2 ln K to reach.
    fraction : float
        Share of replicates that must reach it.
    hours : float, optional
        The case's counting time in hours (then times are also stated in hours).

    Returns
    -------
    dict
        ``scopes``: per scope, ``rows`` (one per counting time) and ``separates`` (the
        shortest listed counting time, or an extrapolation assuming ln K ∝ counting time,
        or None), and a ``statement``.
    """
    from .scores import wilson_interval
    out = {}
    for scope in dict.fromkeys(t["scope"] for t in tasks):
        rows = []
        for f in times:
            recs = [r for t, r in zip(tasks, records) if t["scope"] == scope
                    and t["factor"] == float(f) and not r.get("failed")]
            v = np.array([2.0 * r["ln_k_truth"] for r in recs], dtype=float)
            k = int(np.sum(v > target))
            q = np.quantile(v, [0.1, 0.5, 0.9]) if v.size else [None] * 3
            rows.append({"factor": float(f), "hours": None if hours is None else f * hours,
                         "n": int(v.size), "two_ln_k_q10": q[0], "two_ln_k_median": q[1],
                         "two_ln_k_q90": q[2], "fraction_above": (k / v.size) if v.size
                         else None, "interval95": wilson_interval(k, int(v.size))})
        hit = next((r for r in rows if r["fraction_above"] is not None
                    and r["fraction_above"] >= fraction), None)
        sep = None
        if hit is not None:
            sep = {"factor": hit["factor"], "hours": hit["hours"], "extrapolated": False}
        elif rows and rows[-1]["n"] and rows[-1]["two_ln_k_q10"] is not None:
            # the (1 − fraction) quantile of 2 ln K at the longest time, grown ∝ time
            last = rows[-1]
            recs = [2.0 * r["ln_k_truth"] for t, r in zip(tasks, records)
                    if t["scope"] == scope and t["factor"] == last["factor"]
                    and not r.get("failed")]
            low = float(np.quantile(recs, 1.0 - fraction))
            if low > 0:
                f = last["factor"] * target / low
                sep = {"factor": f, "hours": None if hours is None else f * hours,
                       "extrapolated": True}
        out[scope] = {"rows": rows, "separates": sep,
                      "statement": _statement(scope, sep, target, fraction, hours)}
    return {"scopes": out}


def _statement(scope, sep, target, fraction, hours) -> str:
    what = "all spectra" if scope == "all" else f"'{scope}' alone"
    if sep is None:
        return (f"counting {what} for none of the listed times separates the families at "
                f"2 ln K > {target:g} in {100 * fraction:.0f} % of replicates, and the "
                "trend gives no estimate")
    when = (f"{sep['hours']:.3g} hours ({sep['factor']:.3g} × the case's counting time)"
            if sep["hours"] is not None else f"{sep['factor']:.3g} × the case's counting time")
    how = " (extrapolated, taking ln K ∝ counting time)" if sep["extrapolated"] else ""
    return (f"{when} on {what} separate the families at 2 ln K > {target:g} in "
            f"{100 * fraction:.0f} % of replicates{how}")


def plan(case, *, out, times=DEFAULT_TIMES, replicates: int = 10, quick: bool = False,
         seed=None, truth=None, source=None, hours=None, target: float = 10.0,
         fraction: float = 0.9, per_dataset: bool = False, executor=None, workers=None,
         progress: bool = True, figures: bool = True) -> dict:
    """Run (or resume) a counting-time plan of ``case`` into the folder ``out``.

    Parameters
    ----------
    case : Case
    out : str or pathlib.Path
    times : list of float
        Counting times as multiples of the case's (> 0).
    replicates : int
        Replicates per counting time.
    quick : bool
        Smoke settings.
    seed : int, optional
    truth : str, optional
        The true family (default: the winner of ``source``, else the case's first model).
    source : str or pathlib.Path, optional
        A finished run folder of this case: truths from its posterior.
    hours : float, optional
        The counting time of the case's spectra in hours.
    target : float
        2 ln K to reach (10: "very strong", Kass & Raftery 1995).
    fraction : float
        Share of replicates that must reach it.
    per_dataset : bool
        Also count each spectrum longer on its own.
    executor, workers, progress, figures
        As for :func:`evidence1d.campaign.calibration.calibrate`.

    Returns
    -------
    dict
        The content of ``plan.json``.
    """
    from .calibration import NOISE_TEXT, case_fingerprint
    from .engine import run_tasks
    from .page import plan_page
    from .replicate import replicate_settings, run_replicate
    from .store import CampaignStore
    from .truths import load_posteriors
    times = sorted({float(t) for t in times})
    if not times or any(not (t > 0) or not np.isfinite(t) for t in times):
        raise InputError(f"counting times must be numbers > 0; got {list(times)}")
    if int(replicates) < 1 or not 0 < fraction < 1 or hours is not None and not hours > 0:
        raise InputError("expected --replicates >= 1, 0 < fraction < 1 and hours > 0")
    if len(case.models) < 2:
        raise InputError("a plan separates families: the case needs at least two models")
    seed = case.seed if seed is None else int(seed)
    posteriors = load_posteriors(source, case) if source else None
    if truth is None:
        truth = list(case.models)[0]
        if source:
            from ..results import load_results
            truth = load_results(source).comparison.best
    case.problem(truth)                                   # an unknown family: one line
    scopes = _scopes(case, per_dataset)
    settings = replicate_settings(case, quick)
    truths = f"posterior of {Path(source).resolve()}" if source else "prior"
    store = CampaignStore(out, {"command": "plan", "seed": seed, "settings": settings,
                                "truths": truths, "truth_family": truth, "times": times,
                                "scopes": list(scopes), "case": case_fingerprint(case),
                                "replicates": replicates})
    tasks = plan_tasks(case, truth, times, replicates, seed, scopes, posteriors)
    records = run_tasks(run_replicate, (case, settings), tasks, store, executor=executor,
                        workers=workers, progress=progress, label="plan")
    doc = {"what": "expected Bayes factor against counting time, from simulated replicates",
           "case": case.title, "truth_family": truth, "truths": truths,
           "rivals": [m for m in case.models if m != truth],
           "measure": "2 ln K of the true family against its strongest rival",
           "target_two_ln_k": float(target), "fraction": float(fraction),
           "case_counting_hours": hours, "seed": seed, "replicates": int(replicates),
           "settings": settings, "quick": bool(quick), "noise": NOISE_TEXT,
           "scaling": "a spectrum counted f × as long has errors / √f; thermodynamic "
                      "data keep theirs",
           "failed": sum(bool(r.get("failed")) for r in records),
           **plan_summary(tasks, records, times, target, fraction, hours)}
    doc = json_ready(doc)
    atomic_write(Path(out) / "plan.json", json.dumps(doc, indent=2) + "\n")
    made = []
    if figures:
        from .figures import plan_figure
        made = plan_figure(doc, Path(out) / "figures", quick=quick)
    atomic_write(Path(out) / "plan.md", plan_page(doc, made, out))
    store.log("plan written: " + "; ".join(s["statement"] for s in doc["scopes"].values()))
    return doc

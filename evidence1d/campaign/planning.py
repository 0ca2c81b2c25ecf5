"""``evidence1d plan``: how long to count to separate the families.

Replicates are simulated from one true family (``--truth``; default the winner of the
``--from`` run, else the case's first model) at several counting times, and every family
is fitted.  Counting a spectrum f times as long divides its errors by √f (Poisson
counting); the thermodynamic data keep theirs.  Each replicate keeps its truth and its
noise draws at every counting time (common random numbers), so its ln K changes smoothly
with counting time.  ``plan.json`` holds, per counting time, the quantiles of 2 ln K of the
true family against its strongest rival and the fraction of replicates above the target,
and says which counting time separates the families in the asked fraction of replicates.
With ``per_dataset``, the same is done for each spectrum counted longer on its own.  With
``leave_one_out``, every replicate is also fitted without each dataset in turn (same truth,
same noise on the datasets kept, same fit seed), and ``plan.json`` gives per dataset the
paired difference 2 ln K(all) − 2 ln K(without it): what that measurement adds to the
others.  A measurement not yet made is valued the same way: put its planned design (points
and expected errors, values made by ``evidence1d simulate``) in the case as a dataset, and
its leave-one-out difference is the expected gain of adding it.

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
import re
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..results import atomic_write, json_ready

__all__ = ["plan", "plan_tasks", "plan_summary", "leave_one_out_summary", "DEFAULT_TIMES"]

#: counting times, as multiples of the case's, scanned by default
DEFAULT_TIMES = (0.25, 0.5, 1.0, 2.0, 4.0)
#: first element of the task keys of plan replicates (calibrations use another)
_KEY = 2


_ID = re.compile(r"^[A-Za-z0-9_.+-]+$")
#: scope name of the fits without one dataset
_WITHOUT = "without-"


def _scopes(case, per_dataset: bool, leave_one_out: bool = False) -> dict:
    """Scope name -> {"count": spectra counted longer, "drop": datasets left out of the
    fit, "label": what the scope is}."""
    spectra = [ds.name for ds in case.datasets if ds.spec.is_spectrum]
    if not spectra:
        raise InputError("a plan scales the counting time of spectra; the case has none")
    bad = [ds.name for ds in case.datasets if not _ID.match(ds.name)]
    if bad and (per_dataset or leave_one_out):
        raise InputError(f"dataset name '{bad[0]}': a per-dataset plan names its replicates "
                         "after the datasets; use letters, digits, '_', '.', '+' or '-'")
    scopes = {"all": {"count": spectra, "drop": [], "label": "all spectra"}}
    if per_dataset and len(spectra) > 1:
        scopes.update({n: {"count": [n], "drop": [], "label": f"'{n}' alone"}
                       for n in spectra})
    if leave_one_out:
        if len(case.datasets) < 2:
            raise InputError("--leave-one-out needs a case with at least two datasets")
        scopes.update({f"{_WITHOUT}{ds.name}": {
            "count": [n for n in spectra if n != ds.name], "drop": [ds.name],
            "label": f"all spectra, '{ds.name}' left out"} for ds in case.datasets})
    return scopes


def plan_tasks(case, family: str, times, replicates: int, seed: int, scopes: dict,
               posteriors=None) -> list:
    """The tasks of a plan: every scope × counting time × replicate.

    Returns
    -------
    list of dict
        Tasks for :func:`~evidence1d.campaign.replicate.run_replicate` with ``scope``,
        ``factor`` (counting time / the case's) and ``drop`` (datasets left out) added.
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
        for scope, sc in scopes.items():
            for f in times:
                tasks.append({"id": f"{scope}-x{f:g}-{i:04d}", "family": family,
                              "truth": truth, "seed": int(seed), "key": list(key),
                              "scope": scope, "factor": float(f),
                              "scale": {n: 1.0 / math.sqrt(f) for n in sc["count"]},
                              "drop": list(sc["drop"])})
    return tasks


def plan_summary(tasks, records, times, target: float, fraction: float,
                 hours: float | None, labels: dict | None = None) -> dict:
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
    labels : dict of str to str, optional
        What each scope is (default: the scope's name).

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
        what = (labels or {}).get(scope) or ("all spectra" if scope == "all"
                                             else f"'{scope}' alone")
        out[scope] = {"label": what, "rows": rows, "separates": sep,
                      "statement": _statement(what, sep, target, fraction, hours)}
    return {"scopes": out}


def leave_one_out_summary(tasks, records, times, hours: float | None) -> dict:
    """What each dataset adds: per dataset and counting time, the paired difference
    Δ = 2 ln K(all) − 2 ln K(without the dataset) over the replicates.

    Parameters
    ----------
    tasks, records : list of dict
        In the same order (scopes ``all`` and ``without-<dataset>``).
    times : list of float
    hours : float, optional

    Returns
    -------
    dict
        Per dataset: ``rows`` (one per counting time: ``n``, ``delta_q10``,
        ``delta_median``, ``delta_q90``, ``delta_mean``, ``share_positive``) and a
        ``statement`` at the counting time nearest the case's.
    """
    from .scores import wilson_interval
    val = {(t["scope"], t["factor"], t["key"][-1]): 2.0 * r["ln_k_truth"]
           for t, r in zip(tasks, records) if not r.get("failed")}
    out = {}
    near = min(times, key=lambda f: abs(math.log(f)))
    for scope in dict.fromkeys(t["scope"] for t in tasks):
        if not scope.startswith(_WITHOUT):
            continue
        name = scope[len(_WITHOUT):]
        rows = []
        for f in times:
            d = np.array([v - val[(scope, float(f), i)] for (s, ff, i), v in val.items()
                          if s == "all" and ff == float(f) and (scope, ff, i) in val])
            k = int(np.sum(d > 0))
            q = np.quantile(d, [0.1, 0.5, 0.9]) if d.size else [None] * 3
            rows.append({"factor": float(f), "hours": None if hours is None else f * hours,
                         "n": int(d.size), "delta_q10": q[0], "delta_median": q[1],
                         "delta_q90": q[2],
                         "delta_mean": float(np.mean(d)) if d.size else None,
                         "share_positive": (k / d.size) if d.size else None,
                         "interval95": wilson_interval(k, int(d.size))})
        r = next(r for r in rows if r["factor"] == float(near))
        when = f"{near:g} × the case's counting time" + (
            f" ({near * hours:.3g} hours)" if hours is not None else "")
        statement = (f"'{name}' adds a median 2 ln K of {r['delta_median']:.3g} (10-90 % of "
                     f"replicates: {r['delta_q10']:.3g} to {r['delta_q90']:.3g}) to the "
                     f"other datasets at {when}" if r["n"] else
                     f"'{name}': no replicate was fitted both with and without it")
        out[name] = {"rows": rows, "statement": statement}
    return out


def _statement(what, sep, target, fraction, hours) -> str:
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
         fraction: float = 0.9, per_dataset: bool = False, leave_one_out: bool = False,
         executor=None, workers=None, progress: bool = True, figures: bool = True) -> dict:
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
    leave_one_out : bool
        Also fit every replicate without each dataset in turn (``leave_one_out`` in
        ``plan.json``: what each dataset adds).
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
    scopes = _scopes(case, per_dataset, leave_one_out)
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
           **plan_summary(tasks, records, times, target, fraction, hours,
                          {k: v["label"] for k, v in scopes.items()}),
           "leave_one_out": (leave_one_out_summary(tasks, records, times, hours)
                             if leave_one_out else None)}
    doc = json_ready(doc)
    atomic_write(Path(out) / "plan.json", json.dumps(doc, indent=2) + "\n")
    made = []
    if figures:
        from .figures import plan_figure
        made = plan_figure(doc, Path(out) / "figures", quick=quick)
    atomic_write(Path(out) / "plan.md", plan_page(doc, made, out))
    store.log("plan written: " + "; ".join(s["statement"] for s in doc["scopes"].values()))
    return doc

"""The ``comparison`` block of summary.json: the verdict, its reliability, what
"one-dimensional" means in the run, loud warnings when the winner fits badly, the evidence
budget and the prior sensitivity (all computed during the run; assembled here).

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995).
.. [2] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996).
"""
from __future__ import annotations

__all__ = ["comparison_block"]


def _fit_warnings(best: str, fits: dict) -> list:
    from ..analysis.fit import FIT_THRESHOLDS
    out = []
    for ds, f in fits.items():
        if f["bad_fit"]:
            low = min(f["chi2"], f["chi2_min_draws"]) / f["n_points"]
            out.append(f"the winning family {best} fits {ds} badly: χ²/N = {low:.2f} at best "
                       f"({f['chi2_per_point']:.2f} at the posterior median) over "
                       f"{f['n_points']} points (bad above "
                       f"1 + {FIT_THRESHOLDS['chi2_sigmas']:g}√(2/N) = "
                       f"{f['chi2_per_point_limit']:.2f}), posterior-predictive p = "
                       f"{f['p_value']:.2g} (bad below {FIT_THRESHOLDS['p_min']:g}); the "
                       "evidence ranks the families, it does not say the winner is "
                       "adequate: look at the residuals before quoting its parameters")
    return out


def _one_dimensional_block(cmp_, models) -> dict:
    """What "one-dimensional" means in this run, and P(1D) counting nested limits."""
    from ..inference.nested_limits import p_one_dimensional_with_limits
    fams = [n for n in cmp_.names if cmp_.one_dimensional[n]]
    included = getattr(cmp_, "one_dimensional_limits", "exclude") == "include"
    limits, rows = {}, []
    for n, mr in models.items():
        sd = mr.savage_dickey
        if sd is None or cmp_.one_dimensional[n]:
            continue
        limits[n] = (sd["ln_bf_nested_vs_full"], sd["ln_bf_err"])
        rows.append({"family": n, "parameter": sd["parameter"], "value": float(sd["value"]),
                     "ln_bf_limit_vs_full": sd["ln_bf_nested_vs_full"],
                     "counted": included, "near_limit": sd.get("near_limit")})
    p, err = (p_one_dimensional_with_limits(cmp_, limits) if limits
              else (float(cmp_.p_one_dimensional), float(cmp_.p_one_dimensional_err)))
    definition = ("P(one-dimensional | data) is the summed posterior probability of the "
                  "families whose model card declares one_dimensional: true ("
                  + (", ".join(fams) or "none") + "). Nested one-dimensional limits inside "
                  "other families (" + (", ".join(f"{r['family']}: {r['parameter']} = "
                                                   f"{r['value']:g}" for r in rows)
                                        or "none in this run")
                  + (") are counted (the case file says one_dimensional_limits: include): "
                     "each is a separate hypothesis with half its family's prior "
                     "probability and evidence Z × BF(limit/full) from the Savage–Dickey "
                     "ratio." if included else
                     ") are not counted (one_dimensional_limits: include counts them); "
                     "p_with_nested_limits counts each as a separate hypothesis with half "
                     "its family's prior probability and evidence Z × BF(limit/full) from "
                     "the Savage–Dickey ratio."))
    near = [f"{r['family']}: " + "; ".join(
        f"P({k} < {f}) = {v['p_below'][f]:.2g}" for k, v in r["near_limit"].items()
        for f in v["p_below"]) for r in rows if r.get("near_limit")]
    if near:
        definition += (" How close the families with a nested limit come to it (posterior "
                       "probability that each measure lies below 1 % and 5 %): "
                       + " | ".join(near) + ".")
    return {"definition": definition, "families": fams, "nested_limits": rows,
            "p_with_nested_limits": float(p), "p_with_nested_limits_err": float(err)}


def comparison_block(cmp_, models, budget, sensitivity=None) -> dict:
    """The ``comparison`` block of summary.json.

    Parameters
    ----------
    cmp_ : Comparison
        With its reliability attached (:func:`~evidence1d.inference.compare.with_reliability`).
    models : dict of str to ModelResult
    budget : dict or None
        The run's evidence budget (or ``{"skipped": why}``).
    sensitivity : dict or None
        The run's prior sensitivity.

    Returns
    -------
    dict
        Laid out as the ``comparison.*`` fields of :data:`~.schema.SUMMARY_FIELDS`.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §3.2.
    """
    order = sorted(cmp_.names, key=lambda n: -cmp_.log_z[n])
    strength = next(p.wording for p in cmp_.pairs if {p.a, p.b} == set(order[:2]))
    rel = dict(cmp_.reliability)
    out = {"best": cmp_.best, "strength": strength, "verdict": cmp_.verdict,
           "pairs": [p.to_dict() for p in cmp_.pairs],
           "prior_probabilities": dict(cmp_.prior_probability),
           "model_probabilities": dict(cmp_.posterior_probability),
           "prior_odds": cmp_.prior_odds_stated,
           "p_one_dimensional": float(cmp_.p_one_dimensional),
           "p_one_dimensional_err": float(cmp_.p_one_dimensional_err),
           "one_dimensional": _one_dimensional_block(cmp_, models),
           "unreliable": list(cmp_.unreliable),
           "posterior_unreliable": [n for n, mr in models.items() if not mr.diagnostics.ok],
           "reliability": rel,
           "winner_fit_warnings": _fit_warnings(
               cmp_.best, models[cmp_.best].analysis["goodness_of_fit"]),
           "evidence_budget": None,
           "prior_sensitivity": None if sensitivity is None else dict(sensitivity)}
    if budget is not None and "skipped" in budget:
        out["evidence_budget_note"] = "not computed: " + budget["skipped"]
    elif budget is not None:
        out["evidence_budget"] = dict(budget)
    else:
        out["evidence_budget_note"] = "not computed: the datasets form one likelihood term"
    return out

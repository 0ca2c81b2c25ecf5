"""The ``summary.json`` document of a run, rendered from the results record alone.

The numbers were computed during the run (the parameter table and dataset constraints by
:mod:`evidence1d.analysis.parameters`, goodness of fit, bounds and the budget by the rest of
:mod:`evidence1d.analysis`); this module only lays them out (schema in
:mod:`evidence1d.report.schema`; the comparison block in :mod:`evidence1d.report.verdict`)
and rounds them for print.

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995): wording of 2 ln K.
.. [2] Particle Data Group, Review of Particle Physics, "Introduction" (errors quoted to two
   significant digits; common practice).
"""
from __future__ import annotations

import math

from ..results import json_ready
from .schema import SCHEMA_VERSION
from .verdict import comparison_block

__all__ = ["build_summary", "round_interval"]


def _diagnostics_block(diag, post) -> dict:
    d = diag.to_dict()
    return {"ok": bool(d["ok"]), "rhat": d["rhat"], "ess_bulk": d["ess_bulk"],
            "ess_tail": d["ess_tail"], "tau": d["tau"], "acceptance": d["acceptance"],
            "n_steps": int(d["n_steps"]), "n_walkers": int(d["n_walkers"]),
            "burn_in": int(post.burn_in), "thin": int(post.thin),
            "n_samples": int(post.samples.shape[0]), "thresholds": d["thresholds"],
            "warnings": list(d["warnings"]) + list(post.warnings)}


def _model_block(mr) -> dict:
    post = mr.posterior
    lap = None
    if mr.laplace is not None:
        lap = {"log_evidence": float(mr.laplace.log_z), "approximate": True,
               "label": mr.laplace.label, "method": mr.laplace.method}
    sdk = None
    if mr.savage_dickey is not None:
        s = mr.savage_dickey
        sdk = {"parameter": s["parameter"], "value": s["value"],
               "ln_bf_nested_vs_full": s["ln_bf_nested_vs_full"], "ln_bf_err": s["ln_bf_err"],
               "reflected": bool(s["reflected"])}
    loo = None
    if mr.loo is not None:
        keys = ("elpd_loo", "se", "pareto_k_max", "n_bad_k", "n_points", "error")
        loo = {k: mr.loo[k] for k in keys if k in mr.loo}
    ev = mr.evidence
    an = mr.analysis
    table = an["parameter_table"]
    return {
        "title": mr.title, "one_dimensional": bool(mr.one_dimensional),
        "posterior_reliable": bool(mr.diagnostics.ok),
        "log_evidence": float(ev.log_z), "log_evidence_err": float(ev.log_z_err),
        "island_log_evidence": [float(v) for v in ev.island_log_z],
        "evidence_method": ev.method, "evidence_warnings": list(ev.warnings),
        "n_likelihood_evaluations": int(ev.n_evaluations + post.n_evaluations),
        "parameters": table["parameters"], "fixed_parameters": table["fixed_parameters"],
        "constraints": table["constraints"],
        "diagnostics": _diagnostics_block(mr.diagnostics, post),
        "laplace": lap, "savage_dickey": sdk, "loo": loo,
        "goodness_of_fit": dict(an["goodness_of_fit"]),
        "prior_bounds": list(an["prior_bounds"]),
        "metal": an.get("metal"),
        "absolute_scale": an.get("absolute_scale"),
        "sampler": _sampler_block(an["sampler"], ev),
    }


def _sampler_block(rec, ev) -> dict:
    """What the samplers of one family did (the methods text is written from this)."""
    st = ev.settings
    return {"moves": [dict(m) for m in rec["moves"]], "n_walkers": int(rec["n_walkers"]),
            "n_steps": int(rec["n_steps"]),
            "max_steps": int(rec.get("max_steps", rec["n_steps"])),
            "stop_rule": str(rec.get("stop_rule", "")),
            "posterior_ess": int(rec.get("posterior_ess", 0)),
            "population_size": int(rec["population_size"]),
            "move_acceptance": dict(rec["move_acceptance"]),
            "marginalised": list(rec["marginalised"]),
            "evidence_particles": int(st.get("n_particles", 0)),
            "evidence_islands": int(st.get("n_islands", 0)),
            "evidence_target_cess": float(st.get("target_cess", math.nan)),
            "evidence_min_sweeps": int(st.get("min_sweeps", 0)),
            "evidence_max_sweeps": int(st.get("max_sweeps", 0)),
            "evidence_importance_islands": sum(
                1 for isl in ev.islands
                if (getattr(isl, "importance", None) or {}).get("used")),
            "evidence_importance_draws": max(
                [int((getattr(isl, "importance", None) or {}).get("n_draws", 0))
                 for isl in ev.islands] or [0])}


def build_summary(results) -> dict:
    """The ``summary.json`` document of a run.

    Parameters
    ----------
    results : RunResults
        Results of :func:`evidence1d.runner.run` (or read from a saved run).

    Returns
    -------
    dict
        JSON-ready (see :func:`evidence1d.results.json_ready`), laid out as
        :data:`~.schema.SUMMARY_FIELDS`.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §3.2.
    """
    models = {n: _model_block(mr) for n, mr in results.models.items()}
    doc = {"schema_version": SCHEMA_VERSION, "title": results.context.get("title", ""),
           "reliable": bool(results.reliable), "models": models,
           "comparison": comparison_block(results.comparison, results.models,
                                          results.budget, results.sensitivity),
           "provenance": dict(results.provenance)}
    return json_ready(doc)


def round_interval(median: float, lo: float, hi: float) -> tuple:
    """Median and its errors as strings, rounded to two significant digits of the smaller error.

    Values below 10⁻³ or from 10⁵ in magnitude are given as mantissas with a common power of
    ten.

    Parameters
    ----------
    median, lo, hi : float
        Median and the 16 % and 84 % quantiles.

    Returns
    -------
    tuple
        (median, plus, minus, exponent): three strings, with plus = hi − median and
        minus = median − lo (no signs), all to be multiplied by 10**exponent (an int).

    References
    ----------
    .. [1] Particle Data Group, "Introduction" to the Review of Particle Physics (errors
       quoted to two significant digits; common practice).
    """
    exp = 0
    if median != 0 and math.isfinite(median) and not 1e-3 <= abs(median) < 1e5:
        exp = math.floor(math.log10(abs(median)))
    scale = 10.0 ** -exp
    m, plus, minus = median * scale, (hi - median) * scale, (median - lo) * scale
    errs = [e for e in (plus, minus) if e > 0 and math.isfinite(e)]
    digits = 3 if not errs else max(0, 1 - math.floor(math.log10(min(errs))))
    digits = min(digits, 15)
    return f"{m:.{digits}f}", f"{plus:.{digits}f}", f"{minus:.{digits}f}", exp



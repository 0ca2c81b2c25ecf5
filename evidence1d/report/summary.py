"""The numbers of the report: posterior summaries and dataset sensitivities.

Everything the report layers print is computed here (or, for the analyses of
:mod:`evidence1d.analysis`, during the run) from the run's results and the case,
deterministically (no random numbers), so that rebuilding from saved results gives the same
numbers.  :func:`build_summary` gives the ``summary.json`` document (schema in
:mod:`evidence1d.report.schema`; the comparison block in :mod:`evidence1d.report.verdict`).
The figures take their arrays from :mod:`evidence1d.report.figures`.

Which datasets constrain which parameter
----------------------------------------
At the posterior median θ̂ the derivative of every dataset's prediction μ_i with respect to
each parameter θ_j is taken by central finite differences (step 1 % of the posterior
standard deviation, one-sided at a prior bound).  For Gaussian errors σ_i the diagonal
Fisher information a dataset d carries about θ_j is F_dj = Σ_{i∈d} (∂μ_i/∂θ_j)² / σ_i²
(Tegmark, Taylor & Heavens 1997).  The report gives its share F_dj / Σ_d F_dj and the shift
√F_dj · sd_j: the root-sum-square change of dataset d, in units of its errors, when θ_j moves
by one posterior standard deviation.  Error inflation and Student-t noise are ignored in
this measure.

References
----------
.. [1] M. Tegmark, A. N. Taylor and A. F. Heavens, "Karhunen–Loève eigenvalue problems in
   cosmology: how should we tackle large data sets?", ApJ 480, 22 (1997), eq. 15 (Fisher
   matrix of Gaussian data; from memory).
.. [2] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995): wording of 2 ln K.
"""
from __future__ import annotations

import math

import numpy as np

from .schema import SCHEMA_VERSION
from .verdict import comparison_block

__all__ = ["QUANTILES", "BAND_QUANTILES", "parameter_role", "quantile_summary",
           "prior_interval", "dataset_sensitivity", "build_summary", "json_ready",
           "round_interval", "draw_indices", "MAX_DRAWS"]

#: quantiles quoted for every parameter (median and the central 68 % interval)
QUANTILES = (0.16, 0.5, 0.84)
#: quantiles of the predictive bands: 95 % and 68 % central intervals and the median
BAND_QUANTILES = (0.025, 0.16, 0.5, 0.84, 0.975)
#: posterior draws used for predictive bands (bounds the drawing time)
MAX_DRAWS = 200


def json_ready(obj):
    """A copy with numpy types as Python types and non-finite numbers as ``None``.

    Parameters
    ----------
    obj : object
        Nested dicts, lists, tuples, numpy scalars and arrays.

    Returns
    -------
    object
        Valid JSON content (RFC 8259 has no infinity or NaN).

    References
    ----------
    .. [1] RFC 8259 (IETF, 2017), §6.
    """
    if isinstance(obj, dict):
        return {str(k): json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return json_ready(obj.tolist())
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return float(obj) if math.isfinite(obj) else None
    return obj


def parameter_role(name: str, card) -> str:
    """``"physical"`` (a model-card parameter), ``"nuisance"`` (``dataset:what``) or ``"extra"``.

    References
    ----------
    .. [1] The naming of :mod:`evidence1d.families.predict` (``<dataset>:<what>`` nuisances).
    """
    if name in card.parameters:
        return "physical"
    return "nuisance" if ":" in name else "extra"


def quantile_summary(samples, names, units) -> dict:
    """Median and 16/84 % quantiles of every parameter.

    Parameters
    ----------
    samples : ndarray, shape (n_samples, m)
        Posterior samples, parameter units.
    names : sequence of str
        The m parameter names.
    units : dict of str to str

    Returns
    -------
    dict
        name -> {"median", "q16", "q84", "unit"} (parameter units).

    References
    ----------
    .. [1] R. J. Hyndman and Y. Fan, Am. Stat. 50, 361 (1996): sample quantiles (numpy's
       default, their definition 7).
    """
    q = np.quantile(np.asarray(samples, dtype=float), QUANTILES, axis=0)
    return {n: {"median": float(q[1, j]), "q16": float(q[0, j]), "q84": float(q[2, j]),
                "unit": units.get(n, "") or "1"} for j, n in enumerate(names)}


def prior_interval(prior) -> tuple:
    """16 % and 84 % quantiles of a one-parameter prior (inverse CDF), parameter units.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions* (1994).
    """
    lo, hi = prior.transform(np.array([0.16, 0.84]))
    return float(lo), float(hi)


def _steps(theta, sd, support):
    lo = np.array([s[0] for s in support])
    hi = np.array([s[1] for s in support])
    h = 0.01 * np.where(sd > 0, sd, 1e-6 * (np.abs(theta) + 1.0))
    up = np.minimum(theta + h, hi)
    dn = np.maximum(theta - h, lo)
    return up, dn


def dataset_sensitivity(problem, theta, sd) -> dict:
    """Fisher-information share and shift of every dataset for every parameter.

    Parameters
    ----------
    problem : JointProblem
    theta : ndarray, shape (m,)
        The point (posterior median), parameter units.
    sd : ndarray, shape (m,)
        Posterior standard deviations, parameter units.

    Returns
    -------
    dict
        parameter -> dataset -> {"information_share", "shift"}; the share is None when no
        dataset's prediction depends on the parameter (e.g. an error inflation factor).

    References
    ----------
    .. [1] Tegmark, Taylor & Heavens, ApJ 480, 22 (1997): F = Σ (∂μ/∂θ)² / σ² (from memory).
    """
    theta = np.asarray(theta, dtype=float)
    sd = np.asarray(sd, dtype=float)
    m = theta.size
    support = [problem.prior.priors[problem.prior.names.index(n)].support
               for n in problem.names]
    up, dn = _steps(theta, sd, support)
    batch = np.repeat(theta[None, :], 2 * m, axis=0)
    batch[np.arange(m), np.arange(m)] = up
    batch[m + np.arange(m), np.arange(m)] = dn
    pred = problem.predict(batch)
    errs = {pr.dataset.name: pr.dataset.err for pr in problem.predictors}
    fisher = {}
    for ds, f in pred.items():
        deriv = (f[:m] - f[m:]) / np.where(up > dn, up - dn, np.inf)[:, None]
        fisher[ds] = np.nansum((deriv / errs[ds][None, :]) ** 2, axis=1)
    out = {}
    for j, name in enumerate(problem.names):
        total = sum(float(fisher[d][j]) for d in fisher)
        out[name] = {d: {"information_share": float(fisher[d][j]) / total if total > 0
                         else None,
                         "shift": float(math.sqrt(fisher[d][j]) * sd[j])} for d in fisher}
    return out


def _diagnostics_block(diag, post) -> dict:
    d = diag.to_dict()
    return {"ok": bool(d["ok"]), "rhat": d["rhat"], "ess_bulk": d["ess_bulk"],
            "ess_tail": d["ess_tail"], "tau": d["tau"], "acceptance": d["acceptance"],
            "n_steps": int(d["n_steps"]), "n_walkers": int(d["n_walkers"]),
            "burn_in": int(post.burn_in), "thin": int(post.thin),
            "n_samples": int(post.samples.shape[0]), "thresholds": d["thresholds"],
            "warnings": list(d["warnings"]) + list(post.warnings)}


def _model_block(mr, problem) -> dict:
    post = mr.posterior
    samples = np.asarray(post.samples)
    params = quantile_summary(samples, mr.names, mr.units)
    for n in mr.names:
        pr = problem.prior.priors[problem.prior.names.index(n)]
        lo, hi = prior_interval(pr)
        p = params[n]
        width = hi - lo
        p.update(role=parameter_role(n, problem.card), prior=pr.describe(), prior_q16=lo,
                 prior_q84=hi,
                 width_ratio=(p["q84"] - p["q16"]) / width if width > 0 else math.nan)
    if mr.nuisance_names:
        nuis = quantile_summary(np.asarray(mr.nuisance_samples), mr.nuisance_names, mr.units)
        for n in mr.nuisance_names:
            pr = problem.declared_priors[n]
            lo, hi = prior_interval(pr)
            p = nuis[n]
            width = hi - lo
            p.update(role=parameter_role(n, problem.card), marginalised=True,
                     prior=pr.describe() + " (integrated out analytically under the Gaussian "
                     "of the same mean and standard deviation)", prior_q16=lo, prior_q84=hi,
                     width_ratio=(p["q84"] - p["q16"]) / width if width > 0 else math.nan)
        params.update(nuis)
    fixed = {n: {"value": float(pr.value), "unit": mr.units.get(n, "") or "1"}
             for n, pr in zip(problem.prior.names, problem.prior.priors)
             if n not in mr.names and hasattr(pr, "value")}
    theta = np.array([params[n]["median"] for n in mr.names])
    sd = np.std(samples, axis=0, ddof=1) if samples.shape[0] > 1 else np.zeros(theta.size)
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
    return {
        "title": mr.title, "one_dimensional": bool(mr.one_dimensional),
        "posterior_reliable": bool(mr.diagnostics.ok),
        "log_evidence": float(ev.log_z), "log_evidence_err": float(ev.log_z_err),
        "island_log_evidence": [float(v) for v in ev.island_log_z],
        "evidence_method": ev.method, "evidence_warnings": list(ev.warnings),
        "n_likelihood_evaluations": int(ev.n_evaluations + post.n_evaluations),
        "parameters": params, "fixed_parameters": fixed,
        "constraints": dataset_sensitivity(problem, theta, sd),
        "diagnostics": _diagnostics_block(mr.diagnostics, post),
        "laplace": lap, "savage_dickey": sdk, "loo": loo,
        "goodness_of_fit": dict(an["goodness_of_fit"]),
        "prior_bounds": list(an["prior_bounds"]),
        "metal": an.get("metal"),
        "sampler": _sampler_block(an["sampler"], ev),
    }


def _sampler_block(rec, ev) -> dict:
    """What the samplers of one family did (the methods text is written from this)."""
    st = ev.settings
    return {"moves": [dict(m) for m in rec["moves"]], "n_walkers": int(rec["n_walkers"]),
            "n_steps": int(rec["n_steps"]), "population_size": int(rec["population_size"]),
            "move_acceptance": dict(rec["move_acceptance"]),
            "marginalised": list(rec["marginalised"]),
            "evidence_particles": int(st.get("n_particles", 0)),
            "evidence_islands": int(st.get("n_islands", 0)),
            "evidence_target_cess": float(st.get("target_cess", math.nan)),
            "evidence_min_sweeps": int(st.get("min_sweeps", 0)),
            "evidence_max_sweeps": int(st.get("max_sweeps", 0))}


def build_summary(results, case) -> dict:
    """The ``summary.json`` document of a run.

    Parameters
    ----------
    results : RunResults
        Results of :func:`evidence1d.runner.run` (or rebuilt from a saved run).
    case : Case
        The case the run used (its problems give priors, units and predictions).

    Returns
    -------
    dict
        JSON-ready (see :func:`json_ready`), laid out as :data:`~.schema.SUMMARY_FIELDS`.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §3.2.
    """
    models = {n: _model_block(mr, case.problem(n)) for n, mr in results.models.items()}
    doc = {"schema_version": SCHEMA_VERSION, "title": case.title,
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


def draw_indices(n_samples: int, n_max: int = MAX_DRAWS) -> np.ndarray:
    """Evenly spaced indices of at most ``n_max`` samples (deterministic, no random numbers).

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996): predictive draws.
    """
    return np.unique(np.linspace(0, n_samples - 1, min(n_max, n_samples)).astype(int))

"""Prior sensitivity of ln K and P(1D): each physical prior halved and doubled in width, and
log-uniform swapped for uniform (or back), by reweighting the posterior population.

Reweighting
-----------
Under a new prior π' of one parameter θ_j (the others unchanged),

    Z' = ∫ L π' dθ = Z · E_post[π'(θ_j) / π(θ_j)]

(importance sampling with the posterior as the proposal; Kass & Raftery 1995, §4.3; Neal
2001).  The expectation is the mean ratio over the equally weighted final populations of
the tempered evidence islands; its Monte Carlo error, sd(r)/(√n mean r), is added in
quadrature to the error of ln Z.  The identity holds only where π' > 0 implies π > 0 *and
the samples see all of the likelihood under π'*.  Narrowing a prior and swapping its form
on the same support satisfy the first condition; the estimate is called valid when the
effective sample size of the ratios, (Σr)²/Σr², is at least ``ESS_MIN`` of the samples.
Widening a prior adds a region the samples never visited: reweighting is valid only if the
likelihood there is negligible, which is taken to hold when less than ``EDGE_MASS_MAX`` of
the posterior lies within ``EDGE_WINDOW`` of the prior width of every bound that moves out
(for a normal prior: when the posterior is at most ``NARROW_MAX`` times the prior's
width, i.e. the data dominate).  Where these fail, the family's ln Z under the changed prior
comes from a new tempered run (:func:`evidence1d.analysis.stage.sensitivity_reruns`; a full
run, not a --quick one), and the row says so; without it the row says that a re-run is
needed and gives no number.

Changed widths
--------------
* uniform on [a, b]: width scaled about the centre; when a = 0 (a non-negative quantity)
  the lower bound stays at 0 and only b moves;
* log-uniform on [a, b]: the width in ln θ scaled about its centre (ln √(ab));
* normal and truncated normal: the standard deviation scaled (truncation kept).

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995), §4.3 and §5:
   importance-sampling evidences and sensitivity to the prior.
.. [2] R. M. Neal, "Annealed importance sampling", Stat. Comput. 11, 125 (2001).
.. [3] L. Kish, *Survey Sampling* (Wiley, 1965): effective sample size of weights
   (from memory).
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["prior_variants", "reweighted_log_z", "prior_sensitivity", "rerun_requests",
           "ESS_MIN",
           "EDGE_WINDOW", "EDGE_MASS_MAX", "NARROW_MAX"]

#: smallest effective sample size of the ratios, as a fraction of the samples
ESS_MIN = 0.1
#: window at a bound that moves out (fraction of the prior width) and the largest posterior
#: mass allowed in it for a widened prior to be reweighted (reporting choices)
EDGE_WINDOW = 0.05
EDGE_MASS_MAX = 0.01
#: a normal prior may be widened by reweighting when the posterior sd is at most this
#: fraction of the prior sd
NARROW_MAX = 0.5


def prior_variants(prior) -> list:
    """The changed priors of one parameter: (label, new prior, widens, moved bounds).

    Parameters
    ----------
    prior : Prior

    Returns
    -------
    list of tuple
        ``label`` ("width × 0.5", "width × 2", "uniform", "log-uniform"), the new
        :class:`~evidence1d.inference.priors.Prior`, whether it widens, and the old bounds
        that move outwards (parameter units).

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §5.
    """
    from ..inference.priors import LogUniform, Normal, TruncatedNormal, Uniform
    out = []
    for f in (0.5, 2.0):
        label, widen = f"width × {f:g}", f > 1
        if isinstance(prior, Uniform):
            lo, hi = prior.lower, prior.upper
            if lo == 0.0:
                new, moved = Uniform(0.0, hi * f), [hi]
            else:
                c, h = 0.5 * (lo + hi), 0.5 * (hi - lo) * f
                new, moved = Uniform(c - h, c + h), [lo, hi]
        elif isinstance(prior, LogUniform):
            c = 0.5 * (math.log(prior.lower) + math.log(prior.upper))
            h = 0.5 * (math.log(prior.upper) - math.log(prior.lower)) * f
            new, moved = LogUniform(math.exp(c - h), math.exp(c + h)), [prior.lower,
                                                                        prior.upper]
        elif isinstance(prior, TruncatedNormal):
            new, moved = TruncatedNormal(prior.mean, prior.sd * f, prior.lower,
                                         prior.upper), []
        elif isinstance(prior, Normal):
            new, moved = Normal(prior.mean, prior.sd * f), []
        else:
            continue
        out.append((label, new, widen, moved if widen else []))
    if isinstance(prior, LogUniform):
        out.append(("uniform", Uniform(prior.lower, prior.upper), False, []))
    elif isinstance(prior, Uniform) and prior.lower > 0:
        out.append(("log-uniform", LogUniform(prior.lower, prior.upper), False, []))
    return out


def reweighted_log_z(x, old, new, widens: bool, moved=()) -> dict:
    """Change of ln Z when one parameter's prior ``old`` becomes ``new`` (module notes).

    Parameters
    ----------
    x : ndarray, shape (n,)
        Posterior samples of the parameter (equally weighted), parameter units.
    old, new : Prior
    widens : bool
        Whether ``new`` reaches beyond ``old``.
    moved : sequence of float
        Bounds of ``old`` that move outwards.

    Returns
    -------
    dict
        ``valid`` (bool), ``delta_ln_z`` and ``err`` (nats; None when not valid),
        ``ess_fraction`` and ``why`` (a sentence when not valid).

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §4.3.
    """
    x = np.asarray(x, dtype=float).reshape(-1)
    with np.errstate(all="ignore"):
        logr = np.asarray(new.log_pdf(x), float) - np.asarray(old.log_pdf(x), float)
    logr = np.where(np.isfinite(logr), logr, -np.inf)
    out = {"valid": False, "delta_ln_z": None, "err": None, "ess_fraction": 0.0, "why": ""}
    if not np.isfinite(logr).any():
        out["why"] = "no posterior sample lies inside the changed prior"
        return out
    top = float(np.max(logr))
    r = np.exp(logr - top)
    ess = float(r.sum() ** 2 / np.sum(r * r)) / x.size
    out["ess_fraction"] = ess
    mean = float(np.mean(r))
    out["delta_ln_z"] = top + math.log(mean)
    out["err"] = float(np.std(r, ddof=1) / (math.sqrt(x.size) * mean)) if x.size > 1 else None
    why = []
    if ess < ESS_MIN:
        why.append(f"the ratios' effective sample size is {ess:.0%} of the samples "
                   f"(< {ESS_MIN:.0%})")
    if widens:
        from ..inference.priors import LogUniform
        lo, hi = old.support
        if math.isfinite(lo) and math.isfinite(hi):
            f = np.log if isinstance(old, LogUniform) else (lambda v: v)
            with np.errstate(all="ignore"):
                fx = f(np.maximum(x, lo) if isinstance(old, LogUniform) else x)
            w = EDGE_WINDOW * (f(hi) - f(lo))
            for b in moved:
                mass = float(np.mean(np.abs(fx - f(b)) <= w))
                if mass > EDGE_MASS_MAX:
                    why.append(f"{mass:.1%} of the posterior lies within {EDGE_WINDOW:.0%} of "
                               f"the prior width of the bound {b:g} that moves out: the "
                               "likelihood beyond it is unknown")
        else:
            sd_prior = float(np.std(np.asarray(old.transform(
                (np.arange(2001) + 0.5) / 2001), float)))
            if np.std(x) > NARROW_MAX * sd_prior:
                why.append("the posterior is not narrow compared with the prior, so the wider "
                           "prior reaches likelihood the samples never saw")
    if why:
        out.update(delta_ln_z=None, err=None, why="; ".join(why))
    else:
        out["valid"] = True
    return out


def _variant_rows(models: dict):
    """Every changed prior of every physical parameter, with the reweighting of each family
    that owns it: yields (parameter, change, owners, {family: (new prior, reweighting)})."""
    names = list(models)
    params = []
    for n in names:
        params += [p for p in models[n]["priors"] if p not in params]
    for p in params:
        owners = [n for n in names if p in models[n]["priors"]]
        ref = models[owners[0]]["priors"][p]
        for label, new, widens, moved in prior_variants(ref):
            per = {}
            for n in owners:
                m = models[n]
                old = m["priors"][p]
                if old != ref:                           # a family with its own prior
                    variants = {v[0]: v for v in prior_variants(old)}
                    if label not in variants:
                        continue
                    _, new_n, widens_n, moved_n = variants[label]
                else:
                    new_n, widens_n, moved_n = new, widens, moved
                x = np.asarray(m["samples"])[:, list(m["names"]).index(p)]
                per[n] = (new_n, reweighted_log_z(x, old, new_n, widens_n, moved_n))
            yield p, label, owners, per


def rerun_requests(models: dict) -> list:
    """The evidences that reweighting cannot give: (parameter, change, family, new prior).

    Parameters
    ----------
    models : dict
        As in :func:`prior_sensitivity`.

    Returns
    -------
    list of tuple
        One entry per family whose ln Z under the changed prior must come from a new
        tempered run (:func:`evidence1d.analysis.stage.sensitivity_reruns`).
    """
    out = []
    for p, label, _, per in _variant_rows(models):
        out += [(p, label, n, new) for n, (new, rw) in per.items() if not rw["valid"]]
    return out


def prior_sensitivity(models: dict, prior_odds=None, reruns=None) -> dict:
    """ln K of the two leading families and P(1D) under every changed physical prior.

    A parameter that several families share (by name) is changed in all of them at once,
    since a fair contest gives shared parameters identical priors.

    Parameters
    ----------
    models : dict
        family -> {"log_z", "log_z_err", "one_dimensional", "names" (columns of
        "samples"), "samples" (n, m) posterior population, "priors" (name -> Prior of the
        physical parameters that are sampled)}.
    prior_odds : dict, optional
        As in :func:`~evidence1d.inference.compare.compare_models`.
    reruns : dict, optional
        ``(parameter, change, family) -> (ln Z, error)`` from new tempered runs under the
        changed prior, for the entries of :func:`rerun_requests`, or a one-line reason (str)
        where no run is possible.

    Returns
    -------
    dict
        ``families`` (winner, runner-up of the baseline), ``ln_k``, ``p_one_dimensional``
        (baseline), ``rows`` (per parameter and change: ``parameter``, ``change``,
        ``families``, ``method`` ("reweighting", "re-run" when every changed evidence
        needed a new run, "re-run and reweighting", "needs a re-run" when a needed run is
        missing, or "outside the model's domain" when the changed prior leaves a family's
        domain and no run is possible), ``rerun_families``, ``ln_k``, ``ln_k_err``, ``p_one_dimensional``,
        ``note``) and ``method``.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995), §5.
    """
    from ..inference.compare import compare_models
    names = list(models)
    reruns = reruns or {}
    base = {n: (models[n]["log_z"], models[n]["log_z_err"], models[n]["one_dimensional"])
            for n in names}
    cmp0 = compare_models(base, prior_odds=prior_odds)
    order = sorted(names, key=lambda n: -models[n]["log_z"])
    a, b = order[0], order[1]
    rows = []
    for p, label, owners, per in _variant_rows(models):
        new_lz, notes, missing, rerun, outside = dict(base), [], False, [], False
        for n, (_, rw) in per.items():
            lz, err, one_d = base[n]
            if rw["valid"]:
                new_lz[n] = (lz + rw["delta_ln_z"], math.hypot(err, rw["err"] or 0.0), one_d)
            elif isinstance(reruns.get((p, label, n)), str):      # no run possible
                missing, outside = True, True
                notes.append(f"{n}: {reruns[(p, label, n)]}")
            elif (p, label, n) in reruns:
                z, e = reruns[(p, label, n)]
                new_lz[n] = (float(z), float(e), one_d)
                rerun.append(n)
                notes.append(f"{n}: re-run ({rw['why']})")
            else:
                missing = True
                notes.append(f"{n}: {rw['why']} (not re-run here)")
        reweighted = len(rerun) < len(per)
        method = ("outside the model's domain" if outside else
                  "needs a re-run" if missing else "re-run and reweighting"
                  if rerun and reweighted else "re-run" if rerun else "reweighting")
        row = {"parameter": p, "change": label, "families": owners, "method": method,
               "rerun_families": rerun, "ln_k": None, "ln_k_err": None,
               "p_one_dimensional": None, "note": "; ".join(notes)}
        if not missing:
            c = compare_models(new_lz, prior_odds=prior_odds)
            row.update(ln_k=c.log_z[a] - c.log_z[b],
                       ln_k_err=math.hypot(c.log_z_err[a], c.log_z_err[b]),
                       p_one_dimensional=c.p_one_dimensional)
        rows.append(row)
    return {"families": [a, b], "ln_k": models[a]["log_z"] - models[b]["log_z"],
            "p_one_dimensional": float(cmp0.p_one_dimensional), "rows": rows,
            "method": ("importance reweighting of the final tempered populations by the "
                       "ratio of the changed to the declared prior (Kass & Raftery 1995, "
                       "§4.3) where valid; where not, a new tempered run of that family "
                       "under the changed prior (rows marked 're-run'); rows marked 'needs "
                       "a re-run' could not be reweighted and were not re-run")}

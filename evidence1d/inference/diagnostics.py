"""Convergence diagnostics of MCMC chains and PSIS-LOO; the only module that imports arviz.

Thresholds (a run that fails any of them is flagged, with the consequence and the remedy):

* rank-normalised split R-hat < 1.05 always, and < 1.01 unless the chain is longer than
  50 τ with bulk and tail ESS > 400. The walkers of an ensemble are not independent chains
  (their moves use each other's positions), so R-hat over walkers is noisier and more
  conservative than over independent chains; emcee's authors advise caution with it and
  recommend the autocorrelation time instead (Foreman-Mackey et al. 2013; emcee issue 279).
  A value in [1.01, 1.05) with a long chain and large ESS is reported as a note, not a
  failure; 1.01 is the target of Vehtari et al. (2021) for independent chains;
* bulk and tail effective sample sizes > 400 (Vehtari et al. 2021);
* chain length > 50 τ, τ the integrated autocorrelation time (emcee documentation, common
  practice);
* mean acceptance fraction in [0.15, 0.7] (common practice for ensemble samplers,
  Foreman-Mackey et al. 2013).  The range is a proxy for the step size of local moves
  (too long: nothing accepted; too short: everything accepted, nothing explored).  It is
  not applied (``independence=True``) when most moves are independence proposals: their
  acceptance tends to 1 as the proposal approaches the posterior (Tierney 1994), and is
  low, without harm, where the population that shapes them under-weights the best mode;
  there R-hat, ESS and τ, which measure mixing directly, decide alone.

The walkers of an ensemble are treated as the chains of R-hat (common practice).  arviz 0.2x
and 1.x differ in their entry points; the calls below try the current form first and fall back,
so the rest of the package never touches arviz.

References
----------
.. [1] A. Vehtari, A. Gelman, D. Simpson, B. Carpenter and P.-C. Bürkner, "Rank-normalization,
   folding, and localization: an improved R-hat for assessing convergence of MCMC",
   Bayesian Analysis 16, 667 (2021).
.. [2] A. Vehtari, A. Gelman and J. Gabry, "Practical Bayesian model evaluation using
   leave-one-out cross-validation and WAIC", Stat. Comput. 27, 1413 (2017).
.. [3] D. Foreman-Mackey et al., PASP 125, 306 (2013).
.. [4] L. Tierney, Ann. Statist. 22, 1701 (1994).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from evidence1d.errors import InputError

__all__ = ["Diagnostics", "diagnose", "to_inference_data", "psis_loo", "LooResult",
           "THRESHOLDS"]

#: Thresholds stated in the module notes.
THRESHOLDS = {"rhat_max": 1.05, "rhat_target": 1.01, "ess_min": 400.0,
              "length_over_tau_min": 50.0, "acceptance_range": (0.15, 0.7)}


def _az():
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        import arviz
    return arviz


def _per_chain(chain):
    """(n_steps, n_walkers, m) -> (n_walkers, n_steps, m): arviz's (chain, draw) order."""
    return np.swapaxes(np.asarray(chain, dtype=float), 0, 1)


def _stat(fn, arr2d, **kw):
    """Call an arviz statistic on a (chain, draw) array, across arviz versions."""
    az = _az()
    try:
        out = getattr(az, fn)(arr2d, **kw)
    except (TypeError, ValueError, AttributeError):
        ds = az.convert_to_dataset({"x": arr2d[None] if arr2d.ndim == 1 else arr2d})
        out = getattr(az, fn)(ds, **kw)["x"]
    return float(np.asarray(getattr(out, "values", out)))


@dataclass(frozen=True)
class Diagnostics:
    """Convergence summary of one chain.

    Attributes
    ----------
    names : tuple of str
    rhat, ess_bulk, ess_tail, tau : dict name -> float
    acceptance : float or None
        Mean acceptance fraction.
    n_steps, n_walkers : int
    ok : bool
        All thresholds met.
    warnings : tuple of str
        One sentence per failure: threshold, consequence, remedy.
    thresholds : dict
    """

    names: tuple
    rhat: dict
    ess_bulk: dict
    ess_tail: dict
    tau: dict
    acceptance: float | None
    n_steps: int
    n_walkers: int
    ok: bool
    warnings: tuple = field(default_factory=tuple)
    thresholds: dict = field(default_factory=lambda: dict(THRESHOLDS))

    def to_dict(self):
        return {"names": list(self.names), "rhat": dict(self.rhat),
                "ess_bulk": dict(self.ess_bulk), "ess_tail": dict(self.ess_tail),
                "tau": dict(self.tau), "acceptance": self.acceptance, "n_steps": self.n_steps,
                "n_walkers": self.n_walkers, "ok": self.ok, "warnings": list(self.warnings),
                "thresholds": {k: list(v) if isinstance(v, tuple) else v
                               for k, v in self.thresholds.items()}}


def diagnose(chain, names, log_prob=None, acceptance=None, tau=None,
             independence: bool = False) -> Diagnostics:
    """R-hat, bulk/tail ESS, autocorrelation time and acceptance, checked against thresholds.

    Parameters
    ----------
    chain : ndarray, shape (n_steps, n_walkers, m)
        Post-burn-in chain (emcee order), parameter units.
    names : sequence of str
        The m parameter names.
    log_prob : ndarray (n_steps, n_walkers), optional
        Log posterior; its R-hat is checked too (name ``"log_prob"``).
    acceptance : ndarray (n_walkers,) or float, optional
        Acceptance fractions.
    tau : ndarray (m,), optional
        Autocorrelation times; computed with emcee.autocorr.integrated_time(tol=0) if absent.
    independence : bool
        Most moves were independence proposals: the acceptance is reported, not checked.

    Returns
    -------
    Diagnostics

    References
    ----------
    .. [1] Vehtari et al., Bayesian Analysis 16, 667 (2021).
    .. [2] Goodman & Weare, CAMCoS 5, 65 (2010); Foreman-Mackey et al., PASP 125, 306 (2013).
    """
    import emcee
    chain = np.asarray(chain, dtype=float)
    names = tuple(names)
    if chain.ndim != 3 or chain.shape[2] != len(names):
        raise InputError(f"chain must have shape (n_steps, n_walkers, {len(names)}); got "
                         f"{chain.shape}")
    n_steps, n_walkers, _ = chain.shape
    per = _per_chain(chain)
    rhat, bulk, tail = {}, {}, {}
    for j, n in enumerate(names):
        rhat[n] = _stat("rhat", per[:, :, j], method="rank")
        bulk[n] = _stat("ess", per[:, :, j], method="bulk")
        tail[n] = _stat("ess", per[:, :, j], method="tail")
    if log_prob is not None:
        rhat["log_prob"] = _stat("rhat", np.swapaxes(np.asarray(log_prob, float), 0, 1),
                                 method="rank")
    if tau is None:
        tau = emcee.autocorr.integrated_time(chain, tol=0)
    tau = dict(zip(names, np.atleast_1d(np.asarray(tau, dtype=float)).tolist()))
    acc = None if acceptance is None else float(np.mean(acceptance))
    t = THRESHOLDS
    warn, notes = [], []
    long_enough = {n: n_steps > t["length_over_tau_min"] * v for n, v in tau.items()}
    for n, v in rhat.items():
        solid = (long_enough.get(n, all(long_enough.values()))
                 and bulk.get(n, np.inf) > t["ess_min"] and tail.get(n, np.inf) > t["ess_min"])
        if not v < t["rhat_max"] or (not v < t["rhat_target"] and not solid):
            warn.append(f"R-hat of {n} is {v:.3f} ≥ "
                        f"{t['rhat_max'] if not v < t['rhat_max'] else t['rhat_target']}: the "
                        "walkers disagree, so the posterior and every number derived from it "
                        "are unreliable; run longer or check for several modes")
        elif not v < t["rhat_target"]:
            notes.append(f"note: R-hat of {n} is {v:.3f}, above the {t['rhat_target']} target "
                         f"for independent chains but below {t['rhat_max']}, with a chain "
                         f"longer than {t['length_over_tau_min']:.0f} τ and ESS > "
                         f"{t['ess_min']:.0f}; walkers of an ensemble are not independent, "
                         "so this is not counted as a failure; run longer to remove it")
    for label, d in (("bulk", bulk), ("tail", tail)):
        for n, v in d.items():
            if not v > t["ess_min"]:
                warn.append(f"{label} ESS of {n} is {v:.0f} ≤ {t['ess_min']:.0f}: "
                            f"{'means' if label == 'bulk' else 'credible intervals'} are too "
                            "noisy to quote; run more steps")
    for n, v in tau.items():
        if not n_steps > t["length_over_tau_min"] * v:
            warn.append(f"the chain ({n_steps} steps) is not longer than "
                        f"{t['length_over_tau_min']:.0f} τ for {n} (τ = {v:.1f}): τ itself and "
                        "the burn-in are uncertain; run at least "
                        f"{int(np.ceil(t['length_over_tau_min'] * v))} steps")
    lo, hi = t["acceptance_range"]
    if acc is not None and not independence and not lo <= acc <= hi:
        warn.append(f"mean acceptance fraction {acc:.2f} lies outside [{lo}, {hi}]: the "
                    "walkers move badly, so mixing is poor; check the priors' ranges and the "
                    "starting points, or change the moves")
    return Diagnostics(names=names, rhat=rhat, ess_bulk=bulk, ess_tail=tail, tau=tau,
                       acceptance=acc, n_steps=n_steps, n_walkers=n_walkers,
                       ok=not warn, warnings=tuple(warn + notes))


def to_inference_data(chain, names, log_likelihood_pointwise=None):
    """An arviz InferenceData (or DataTree in arviz 1.x) of a chain.

    Parameters
    ----------
    chain : ndarray, shape (n_steps, n_walkers, m)
    names : sequence of str
    log_likelihood_pointwise : ndarray (n_steps, n_walkers, n_points), optional
        Pointwise log-likelihood for LOO (group ``log_likelihood``, variable ``"y"``).

    References
    ----------
    .. [1] R. Kumar et al., "ArviZ a unified library for exploratory analysis of Bayesian
       models in Python", J. Open Source Softw. 4, 1143 (2019).
    """
    az = _az()
    per = _per_chain(chain)
    post = {n: per[:, :, j] for j, n in enumerate(names)}
    kw = {"posterior": post}
    if log_likelihood_pointwise is not None:
        kw["log_likelihood"] = {"y": np.swapaxes(np.asarray(log_likelihood_pointwise, float),
                                                 0, 1)}
    return az.from_dict(**kw)


@dataclass(frozen=True)
class LooResult:
    """PSIS-LOO expected log predictive density (nats) and Pareto-k summary."""

    elpd_loo: float
    se: float
    pareto_k_max: float
    n_bad_k: int
    n_points: int

    def to_dict(self):
        return {"elpd_loo": self.elpd_loo, "se": self.se, "pareto_k_max": self.pareto_k_max,
                "n_bad_k": self.n_bad_k, "n_points": self.n_points,
                "pareto_k_threshold": 0.7}


def psis_loo(pointwise_loglik) -> LooResult:
    """Pareto-smoothed importance-sampling leave-one-out cross-validation (arviz).

    Parameters
    ----------
    pointwise_loglik : ndarray
        (n_samples, n_points) or per chain (n_steps, n_walkers, n_points), nats.

    Returns
    -------
    LooResult
        elpd_loo, its standard error, the largest Pareto k and the number of points with
        k > 0.7 (unreliable, Vehtari et al. 2017).

    References
    ----------
    .. [1] Vehtari, Gelman & Gabry, Stat. Comput. 27, 1413 (2017).
    """
    arr = np.asarray(pointwise_loglik, dtype=float)
    if arr.ndim == 2:
        arr = arr[:, None, :]
    if arr.ndim != 3:
        raise InputError(f"pointwise log-likelihood must be 2-D or 3-D; got shape {arr.shape}")
    az = _az()
    idata = to_inference_data(np.zeros(arr.shape[:2] + (1,)), ["_"], arr)
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = az.loo(idata, pointwise=True)
    def get(*keys):
        for k in keys:
            v = getattr(res, k, None)
            if v is None:
                try:
                    v = res[k]
                except (KeyError, TypeError, IndexError):
                    v = None
            if v is not None:
                return v
        raise RuntimeError(f"arviz loo result lacks {keys}")
    k = np.asarray(getattr(get("pareto_k"), "values", get("pareto_k")), dtype=float)
    return LooResult(elpd_loo=float(get("elpd_loo", "elpd")), se=float(get("se")),
                     pareto_k_max=float(np.max(k)), n_bad_k=int(np.sum(k > 0.7)),
                     n_points=int(arr.shape[2]))

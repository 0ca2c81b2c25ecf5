"""Two estimates of one Bayes factor: direct evidences against the Savage–Dickey ratio.

When a family's card declares that at its one-dimensional limit it *is* another family of the
run (``nested_1d_limit: {parameter: J_perp, value: 0, equals: spinon_continuum}``: the same
likelihood at the limit and the same priors on every shared parameter), the Bayes factor of
the nested family over the full one can be computed twice:

- directly, ln K = ln Z_nested − ln Z_full, from the two tempered evidences;
- from the full family's posterior alone, the Savage–Dickey density ratio
  ln p(θ₀ | data) − ln π(θ₀) (Dickey 1971), exact under those conditions.

The two use different samples and different estimators, so a disagreement beyond their
errors means at least one evidence (or the posterior density at the limit) is biased: the
verdict must not be quoted until it is resolved.  A posterior much narrower than its prior
and piled against the limit is the typical case (an adaptive-tempering evidence with few
particles underestimates such a family's ln Z while its islands agree with one another).

The criterion: inconsistent when |ln K − ln BF_SD| exceeds both ``sigmas`` combined standard
errors and ``floor`` nats (3 and 1 by default, common practice: the kernel estimate of the
posterior density at a boundary carries a bias of order its bandwidth times the density's
slope that its bootstrap error does not include).

References
----------
.. [1] J. M. Dickey, Ann. Math. Stat. 42, 204 (1971).
.. [2] I. Verdinelli and L. Wasserman, J. Am. Stat. Assoc. 90, 614 (1995).
"""
from __future__ import annotations

import math

__all__ = ["NESTED_CHECK_THRESHOLDS", "nested_consistency", "priors_agree"]

#: |difference| must exceed both this many combined standard errors and this many nats
NESTED_CHECK_THRESHOLDS = {"sigmas": 3.0, "floor_nats": 1.0}


def priors_agree(full_priors: dict, nested_priors: dict, parameter: str) -> list:
    """Names whose prior differs between the nested family and the full one.

    Parameters
    ----------
    full_priors, nested_priors : dict
        Parameter (and nuisance) name -> prior object (frozen dataclasses compare by value).
    parameter : str
        The full family's parameter that is fixed at the limit (not in the nested family).

    Returns
    -------
    list of str
        Names that differ or are missing on one side (empty: the Savage–Dickey conditions on
        the priors hold).
    """
    extra = sorted(set(full_priors) - set(nested_priors) - {parameter})
    missing = sorted(set(nested_priors) - set(full_priors))
    differ = sorted(k for k in set(full_priors) & set(nested_priors)
                    if full_priors[k] != nested_priors[k])
    return extra + missing + differ


def nested_consistency(full: str, nested: str, log_z: dict, log_z_err: dict,
                       savage_dickey: dict, differing_priors=(), thresholds=None) -> dict:
    """Compare the direct ln K of ``nested`` over ``full`` with the Savage–Dickey ratio.

    Parameters
    ----------
    full, nested : str
        The family with the nested limit and the family it equals there.
    log_z, log_z_err : dict
        Family -> ln Z and its standard error (nats).
    savage_dickey : dict
        The full family's Savage–Dickey record (``ln_bf_nested_vs_full``, ``ln_bf_err``,
        nats).
    differing_priors : sequence of str, optional
        From :func:`priors_agree` (and any family option the two set differently); when not
        empty the two numbers are not the same quantity and the check is not made.
    thresholds : dict, optional
        Override :data:`NESTED_CHECK_THRESHOLDS`.

    Returns
    -------
    dict
        ``full``, ``nested``, ``ln_k_direct`` and ``ln_k_direct_err`` (ln Z_nested −
        ln Z_full), ``ln_k_savage_dickey`` and ``ln_k_savage_dickey_err`` (nats),
        ``difference`` (direct − Savage–Dickey, nats), ``z`` (difference over the combined
        error), ``checked`` (bool), ``consistent`` (bool, True when not checked), ``why_not``
        (why it was not checked, or None), ``thresholds``.

    References
    ----------
    Dickey (1971); Verdinelli & Wasserman (1995).
    """
    t = dict(NESTED_CHECK_THRESHOLDS, **(thresholds or {}))
    direct = float(log_z[nested] - log_z[full])
    derr = float(math.hypot(log_z_err[nested], log_z_err[full]))
    sd = savage_dickey.get("ln_bf_nested_vs_full")
    sderr = savage_dickey.get("ln_bf_err")
    out = {"full": full, "nested": nested, "ln_k_direct": direct, "ln_k_direct_err": derr,
           "ln_k_savage_dickey": None if sd is None else float(sd),
           "ln_k_savage_dickey_err": None if sderr is None else float(sderr),
           "difference": None, "z": None, "checked": False, "consistent": True,
           "why_not": None, "thresholds": t}
    if differing_priors:
        out["why_not"] = ("the families differ in " + ", ".join(differing_priors)
                          + ", so the two are not the same quantity")
        return out
    if sd is not None and sd == -math.inf and math.isfinite(direct) and math.isfinite(derr):
        # no posterior mass at the limit: the full family is overwhelmingly favoured, which
        # contradicts a direct ln K that favours the nested one beyond its errors
        out.update(checked=True, consistent=not (direct - t["sigmas"] * derr
                                                 > t["floor_nats"]))
        return out
    if sd is None or not math.isfinite(sd) or sderr is None or not math.isfinite(sderr) \
            or not math.isfinite(direct) or not math.isfinite(derr):
        out["why_not"] = ("the Savage–Dickey ratio is not finite (no posterior mass at the "
                          "limit)" if sd is None or not math.isfinite(sd) else
                          "an error bar is not finite")
        return out
    diff = direct - float(sd)
    err = math.hypot(derr, float(sderr))
    z = diff / err if err > 0 else math.copysign(math.inf, diff)
    out.update(difference=diff, z=z, checked=True,
               consistent=not (abs(diff) > t["sigmas"] * err and abs(diff) > t["floor_nats"]))
    return out

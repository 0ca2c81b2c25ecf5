"""What a calibration campaign says: how often the comparison picks each family, how often
it calls data one-dimensional when they are not (and misses them when they are), whether
P(1D) means what it says, and whether the credible intervals cover the truth.

Every rate comes with its count, its number of replicates and a 95 % Wilson score
interval, so a small campaign shows how little it can tell.

References
----------
.. [1] E. B. Wilson, JASA 22, 209 (1927): the score interval of a binomial proportion.
.. [2] G. W. Brier, Mon. Weather Rev. 78, 1 (1950): the Brier score of probability forecasts.
.. [3] A. H. Murphy and R. L. Winkler, Appl. Stat. 26, 41 (1977): reliability diagrams
   (observed frequency against forecast probability, in bins).
.. [4] S. R. Cook, A. Gelman and D. B. Rubin, J. Comput. Graph. Stat. 15, 675 (2006):
   the posterior quantile of the truth is uniform when the software is right and truths
   are drawn from the prior.
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["wilson_interval", "rate", "calibration_scores", "INTERVALS"]

#: central credible intervals whose coverage is counted: name -> (lower, upper) quantile
INTERVALS = {"68": (0.16, 0.84), "95": (0.025, 0.975)}


def wilson_interval(k: int, n: int, z: float = 1.959963984540054) -> list:
    """Wilson score interval of a proportion k/n (95 % by default).

    Parameters
    ----------
    k, n : int
        Successes and trials.
    z : float
        Standard-normal quantile (1.96: 95 %).

    Returns
    -------
    list of float or None
        [lower, upper]; None when n = 0.

    References
    ----------
    .. [1] E. B. Wilson, JASA 22, 209 (1927), eq. for the score interval:
       (p + z²/2n ± z √(p(1−p)/n + z²/4n²)) / (1 + z²/n).
    """
    if n <= 0:
        return None
    p = k / n
    d = 1.0 + z * z / n
    c = (p + z * z / (2 * n)) / d
    h = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / d
    # exact ends at k = 0 and k = n (c - h and c + h are 0 and 1 there, up to rounding)
    return [0.0 if k == 0 else max(0.0, c - h), 1.0 if k == n else min(1.0, c + h)]


def rate(k: int, n: int) -> dict:
    """``{"rate", "count", "n", "interval95"}`` of k events in n trials (rate None if n = 0)."""
    return {"rate": (k / n) if n else None, "count": int(k), "n": int(n),
            "interval95": wilson_interval(k, n)}


def _quantiles(values) -> dict | None:
    v = np.asarray([x for x in values if x is not None and np.isfinite(x)], dtype=float)
    if not v.size:
        return None
    q = np.quantile(v, [0.05, 0.16, 0.5, 0.84, 0.95])
    return {"n": int(v.size), "q05": q[0], "q16": q[1], "median": q[2], "q84": q[3],
            "q95": q[4]}


def calibration_scores(records: list, families: list, threshold: float,
                       n_bins: int = 5, generators: dict | None = None) -> dict:
    """The scores of a calibration campaign.

    Parameters
    ----------
    records : list of dict
        Replicate records (:func:`~evidence1d.campaign.replicate.run_replicate`), failed
        ones included (they are counted, not scored).
    families : list of str
        The families of the case, in order (columns of the confusion matrix, and its first
        rows).
    threshold : float
        ln K above which a replicate is called one-dimensional (ln K of the one-dimensional
        families against the others, :func:`~evidence1d.campaign.replicate.one_dimensional_log_k`).
    n_bins : int
        Equal-width bins of predicted P(1D) in the reliability diagram.
    generators : dict of str to bool, optional
        Out-of-family generators (:mod:`evidence1d.campaign.generators`) and whether each
        counts as one-dimensional: further rows of the confusion matrix, counted in
        ``false_1d_rate`` and ``missed_1d_rate``; not in ``accuracy``, ``reliability`` and
        ``coverage`` (no family of the fit is their truth).

    Returns
    -------
    dict
        ``replicates`` (total, finished, failed), ``threshold``, ``true_families`` (the rows),
        ``truth_one_dimensional`` (per row), ``confusion_matrix`` (true family or generator
        -> chosen family -> count), ``accuracy``, ``false_1d_rate`` (truth not
        one-dimensional, called one-dimensional), ``missed_1d_rate`` (truth
        one-dimensional, not called so), ``per_truth`` (per row: share called
        one-dimensional, share won by a family of the truth's class), ``reliability``
        (bins and Brier score), ``coverage`` (per interval: overall and per
        family.parameter), ``ln_k_1d`` and ``ln_k_truth`` (quantiles per row).
    """
    generators = dict(generators or {})
    rows = list(families) + [g for g in generators if g not in families]
    ok = [r for r in records if not r.get("failed")]
    in_family = [r for r in ok if not r.get("generator")]
    conf = {t: {c: 0 for c in families} for t in rows}
    for r in ok:
        conf[r["family"]][r["winner"]] += 1
    one_d = ok[0]["one_dimensional"] if ok else {}
    truth_1d = {**{f: one_d.get(f) for f in families}, **generators}
    decided = [r for r in ok if r.get("ln_k_1d") is not None]
    truth_yes = [r for r in decided if truth_1d[r["family"]]]
    truth_no = [r for r in decided if not truth_1d[r["family"]]]
    false_1d = sum(r["ln_k_1d"] > threshold for r in truth_no)
    missed = sum(not (r["ln_k_1d"] > threshold) for r in truth_yes)
    per_truth = {}
    for t in rows:
        mine = [r for r in decided if r["family"] == t]
        won = [r for r in ok if r["family"] == t]
        per_truth[t] = {
            "one_dimensional": truth_1d[t], "generator": t in generators,
            "called_1d": rate(sum(r["ln_k_1d"] > threshold for r in mine), len(mine)),
            "winner_of_its_class": rate(sum(one_d.get(r["winner"]) == truth_1d[t]
                                            for r in won), len(won))}
    edges = np.linspace(0.0, 1.0, n_bins + 1)
    bins = []
    for i, (lo, hi) in enumerate(zip(edges[:-1], edges[1:])):
        inside = [r for r in in_family
                  if lo <= r["p_1d"] < hi or (i == n_bins - 1 and r["p_1d"] == hi)]
        k = sum(one_d.get(r["family"], False) for r in inside)
        bins.append({"p_low": lo, "p_high": hi, "n": len(inside),
                     "mean_predicted": float(np.mean([r["p_1d"] for r in inside]))
                     if inside else None,
                     "observed": (k / len(inside)) if inside else None,
                     "interval95": wilson_interval(k, len(inside))})
    brier = (float(np.mean([(r["p_1d"] - float(one_d[r["family"]])) ** 2
                            for r in in_family])) if in_family else None)
    coverage = {}
    for name, (lo, hi) in INTERVALS.items():
        per, n_all, k_all = {}, 0, 0
        for r in in_family:
            for p, q in r["ranks"].items():
                key = f"{r['family']}.{p}"
                inside = lo < q < hi
                n0, k0 = per.get(key, (0, 0))
                per[key] = (n0 + 1, k0 + int(inside))
                n_all += 1
                k_all += int(inside)
        coverage[name] = {"nominal": hi - lo, "overall": rate(k_all, n_all),
                          "parameters": {k: rate(b, a) for k, (a, b) in sorted(per.items())}}
    return {
        "replicates": {"total": len(records), "finished": len(ok),
                       "failed": len(records) - len(ok)},
        "threshold": {"ln_k": float(threshold), "two_ln_k": 2.0 * float(threshold),
                      "rule": "called one-dimensional when ln K(one-dimensional families "
                              "against the others) > ln_k"},
        "one_dimensional": dict(one_d),
        "true_families": rows,
        "truth_one_dimensional": truth_1d,
        "confusion_matrix": conf,
        "accuracy": rate(sum(r["winner"] == r["family"] for r in in_family), len(in_family)),
        "false_1d_rate": rate(false_1d, len(truth_no)),
        "missed_1d_rate": rate(missed, len(truth_yes)),
        "per_truth": per_truth,
        "reliability": {"bins": bins, "brier_score": brier},
        "coverage": coverage,
        "ln_k_1d": {f: _quantiles([r["ln_k_1d"] for r in ok if r["family"] == f])
                    for f in rows},
        "ln_k_truth": {f: _quantiles([r["ln_k_truth"] for r in ok if r["family"] == f])
                       for f in families},
    }

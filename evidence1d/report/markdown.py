"""``report.md``: the written report of a run, rendered from the summary and the model cards.

Nothing is computed here: the numbers come from :func:`evidence1d.report.summary.build_summary`
and the facts (model cards, datasets, settings) from :func:`report_context`.  Sections: a
loud UNRELIABLE banner when diagnostics failed, the verdict, the comparison, parameters,
diagnostics, which datasets constrain which parameters, assumptions and limitations,
methods with references, and a paragraph to adapt for a referee response.

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995): wording of 2 ln K.
"""
from __future__ import annotations

from .referee import (bounds_alert, bounds_section, budget_section, fit_section,
                      metal_section, reliability_section, sensitivity_section,
                      absolute_alert, absolute_section)
from .referee import fmt as _f
from .referee import md_table as _table
from .summary import round_interval

__all__ = ["report_context", "render_markdown", "METHOD_REFERENCES", "WIDTH_LEVELS",
           "SHARE_MIN"]

#: references of the methods, cited by key
METHOD_REFERENCES = {
    "emcee": "D. Foreman-Mackey, D. W. Hogg, D. Lang and J. Goodman, \"emcee: The MCMC "
             "Hammer\", PASP 125, 306 (2013).",
    "goodman": "J. Goodman and J. Weare, \"Ensemble samplers with affine invariance\", "
               "Commun. Appl. Math. Comput. Sci. 5, 65 (2010).",
    "de": "C. J. F. ter Braak, Stat. Comput. 16, 239 (2006); C. J. F. ter Braak and "
          "J. A. Vrugt, Stat. Comput. 18, 435 (2008).",
    "smc": "P. Del Moral, A. Doucet and A. Jasra, \"Sequential Monte Carlo samplers\", "
           "J. R. Stat. Soc. B 68, 411 (2006).",
    "adaptive": "Y. Zhou, A. M. Johansen and J. A. D. Aston, J. Comput. Graph. Stat. 25, 701 "
                "(2016).",
    "independent": "L. F. South, A. N. Pettitt and C. C. Drovandi, Bayesian Analysis 14, 753 "
                   "(2019).",
    "resampling": "G. Kitagawa, J. Comput. Graph. Stat. 5, 1 (1996).",
    "stepping": "W. Xie, P. O. Lewis, Y. Fan, L. Kuo and M.-H. Chen, Syst. Biol. 60, 150 "
                "(2011).",
    "rhat": "A. Vehtari, A. Gelman, D. Simpson, B. Carpenter and P.-C. Bürkner, Bayesian "
            "Analysis 16, 667 (2021).",
    "arviz": "R. Kumar, C. Carroll, A. Hartikainen and O. Martin, J. Open Source Softw. 4, "
             "1143 (2019).",
    "kass": "R. E. Kass and A. E. Raftery, \"Bayes factors\", J. Am. Stat. Assoc. 90, 773 "
            "(1995).",
    "laplace": "L. Tierney and J. B. Kadane, J. Am. Stat. Assoc. 81, 82 (1986).",
    "dickey": "J. M. Dickey, Ann. Math. Stat. 42, 204 (1971); I. Verdinelli and "
              "L. Wasserman, J. Am. Stat. Assoc. 90, 614 (1995).",
    "loo": "A. Vehtari, A. Gelman and J. Gabry, Stat. Comput. 27, 1413 (2017).",
    "fisher": "M. Tegmark, A. N. Taylor and A. F. Heavens, ApJ 480, 22 (1997).",
    "tierney": "L. Tierney, \"Markov chains for exploring posterior distributions\", Ann. "
               "Statist. 22, 1701 (1994).",
    "kde": "L. Breiman, W. Meisel and E. Purcell, Technometrics 19, 135 (1977); G. R. Terrell "
           "and D. W. Scott, Ann. Statist. 20, 1236 (1992).",
    "ppc": "A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996).",
    "defensive": "T. Hesterberg, \"Weighted average importance sampling and defensive "
                 "mixture distributions\", Technometrics 37, 185 (1995).",
}

#: posterior-to-prior 68 % width ratios: below the first "constrained", below the second
#: "partly constrained", else "prior-dominated" (a reporting choice of this package)
WIDTH_LEVELS = (0.5, 0.9)
#: a dataset is named as constraining a parameter when it carries at least this share of
#: the parameter's diagonal Fisher information (a reporting choice of this package)
SHARE_MIN = 0.1


def report_context(results) -> dict:
    """The facts report.md states besides the numbers: cards, datasets, settings.

    Parameters
    ----------
    results : RunResults
        Its ``context`` was taken from the case when the run was made.

    Returns
    -------
    dict
        ``cards`` (model -> assumptions, limitations, references, latex symbols),
        ``datasets`` (name, kind, points, units), ``settings``, ``seed``, ``quick``,
        ``evidence_settings`` and ``burn_in_rule`` per model.

    References
    ----------
    .. [1] Foreman-Mackey et al., PASP 125, 306 (2013).
    """
    ctx = results.context
    return {
        "cards": {n: dict(ctx["cards"][n]) for n in results.models},
        "datasets": [dict(d) for d in ctx["datasets"]],
        "settings": dict(results.settings), "seed": int(results.seed),
        "quick": bool(ctx.get("quick", False)),
        "evidence_settings": {n: dict(m.evidence.settings) for n, m in results.models.items()},
        "burn_in_rule": {n: m.posterior.burn_in_rule for n, m in results.models.items()},
    }


def _width_word(r):
    if r is None:
        return "—"
    return ("constrained" if r < WIDTH_LEVELS[0] else
            "partly constrained" if r < WIDTH_LEVELS[1] else "prior-dominated")


def _comparison(s) -> list:
    c = s["comparison"]
    best_lz = max(m["log_evidence"] for m in s["models"].values())
    rows = []
    for n, m in s["models"].items():
        lap = m["laplace"]["log_evidence"] if m["laplace"] else None
        rows.append([f"`{n}`", "yes" if m["one_dimensional"] else "no",
                     f"{m['log_evidence']:.2f} ± {m['log_evidence_err']:.2f}",
                     f"{m['log_evidence'] - best_lz:.2f}",
                     f"{c['model_probabilities'][n]:.3g}", f"{c['prior_probabilities'][n]:.3g}",
                     _f(lap)])
    out = ["## Model comparison", ""]
    out += _table(["family", "1D", "ln Z (nats)", "ln Z − ln Z_best", "P(model | data)",
                   "prior P", "Laplace ln Z (approximate)"], rows)
    out += _table(["pair a / b", "ln K (nats)", "2 ln K", "Kass–Raftery wording"],
                  [[f"`{p['a']}` / `{p['b']}`", f"{p['ln_k']:.2f} ± {p['ln_k_err']:.2f}",
                    f"{p['two_ln_k']:.1f}", p["wording"]] for p in c["pairs"]])
    od = c["one_dimensional"]
    out += [f"P(one-dimensional | data) = {c['p_one_dimensional']:.3g} ± "
            f"{c['p_one_dimensional_err']:.2g}, with {c['prior_odds']}.", "",
            f"What one-dimensional means here: {od['definition']}"
            + (f" Counting them: P = {od['p_with_nested_limits']:.3g} ± "
               f"{od['p_with_nested_limits_err']:.2g}." if od["nested_limits"]
               and not any(r["counted"] for r in od["nested_limits"]) else ""), ""]
    sd = [(n, m["savage_dickey"]) for n, m in s["models"].items() if m["savage_dickey"]]
    if sd:
        out += ["Savage–Dickey density ratio of each family's nested one-dimensional limit "
                "(positive ln BF favours the limit):", ""]
        out += _table(["family", "limit", "ln BF (limit / full, nats)",
                       "how close (posterior median, 95 %, P below 1 % / 5 %)"],
                      [[f"`{n}`", f"{d['parameter']} = {d['value']:g}",
                        f"{_f(d['ln_bf_nested_vs_full'])} ± {_f(d['ln_bf_err'])}"
                        if d["ln_bf_nested_vs_full"] is not None else
                        "−∞ (no posterior mass at the limit)", _near(d.get("near_limit"))]
                       for n, d in sd])
    loo = [(n, m["loo"]) for n, m in s["models"].items() if m["loo"]]
    if loo:
        out += ["PSIS-LOO predictive check (a cross-check, not the comparison itself):", ""]
        out += _table(["family", "elpd_loo (nats)", "points with Pareto k > 0.7"],
                      [[f"`{n}`", f"{_f(d.get('elpd_loo'))} ± {_f(d.get('se'))}",
                        f"{d.get('n_bad_k', '—')} of {d.get('n_points', '—')}"]
                       if "error" not in d else [f"`{n}`", f"not computed: {d['error']}", "—"]
                       for n, d in loo])
    return out


def _parameters(s) -> list:
    out = ["## Parameters", "", "Posterior medians with the central 68 % interval "
           "(16 % and 84 % quantiles); the width ratio is the posterior 68 % width over the "
           "prior's.", ""]
    for n, m in s["models"].items():
        rows = []
        for p, v in m["parameters"].items():
            med, plus, minus, exp = round_interval(v["median"], v["q16"], v["q84"])
            text = f"{med} +{plus} −{minus}"
            if exp:
                text = f"({text}) × 10^{exp}"
            rows.append([f"`{p}`", v["role"], text, v["unit"], v["prior"],
                         _f(v["width_ratio"])])
        out += [f"### {m['title']} (`{n}`)", ""]
        out += _table(["parameter", "role", "median (68 %)", "unit", "prior", "width ratio"],
                      rows)
        if m["fixed_parameters"]:
            out += ["Fixed: " + ", ".join(f"`{p}` = {v['value']:g} {v['unit']}"
                                          for p, v in m["fixed_parameters"].items()) + ".", ""]
    return out


def _diagnostics(s) -> list:
    out = ["## Diagnostics", ""]
    for n, m in s["models"].items():
        d = m["diagnostics"]
        state = "passed" if d["ok"] else "**FAILED**"
        out += [f"### `{n}`: {state}", "",
                f"{d['n_walkers']} walkers, {d['n_steps']} steps; burn-in {d['burn_in']} steps, "
                f"thinning {d['thin']}, {d['n_samples']} samples kept; mean acceptance "
                f"{_f(d['acceptance'])}.", ""]
        out += _table(["parameter", "R-hat", "bulk ESS", "tail ESS", "τ (steps)"],
                      [[f"`{p}`", _f(d["rhat"].get(p), ".3f"), _f(d["ess_bulk"].get(p), ".0f"),
                        _f(d["ess_tail"].get(p), ".0f"), _f(d["tau"].get(p), ".1f")]
                       for p in m["parameters"]])
        warns = list(d["warnings"]) + list(m["evidence_warnings"])
        if warns:
            out += ["Warnings:", ""] + [f"- {w}" for w in warns] + [""]
    return out


def _constraints(s, ctx) -> list:
    names = [d["name"] for d in ctx["datasets"]]
    out = ["## Which datasets constrain which parameters", "",
           "Method: at the posterior median the derivative of every dataset's prediction with "
           "respect to each parameter is taken by central finite differences (step 1 % of the "
           "posterior standard deviation). Each cell gives the share of the parameter's "
           "diagonal Fisher information Σ (∂μ/∂θ)²/σ² carried by the dataset (Tegmark, Taylor "
           "& Heavens 1997) and, in brackets, how far the dataset's prediction moves, in units "
           "of its errors (root sum of squares), when the parameter moves by one posterior "
           "standard deviation. A dataset is listed as constraining a parameter when its share "
           f"is at least {SHARE_MIN:.0%}; the parameter is called constrained when its "
           f"posterior 68 % width is below {WIDTH_LEVELS[0]:g} of the prior's, prior-dominated "
           f"above {WIDTH_LEVELS[1]:g}. Error inflation is not included.", ""]
    for n, m in s["models"].items():
        rows = []
        for p, by in m["constraints"].items():
            cells, names_ok = [], []
            for d in names:
                v = by.get(d)
                share = None if v is None else v["information_share"]
                cells.append("—" if share is None else f"{share:.2f} ({v['shift']:.2g})")
                if share is not None and share >= SHARE_MIN:
                    names_ok.append(d)
            wr = m["parameters"][p]["width_ratio"]
            rows.append([f"`{p}`", f"{_f(wr)} ({_width_word(wr)})"] + cells
                        + [", ".join(names_ok) or "none"])
        out += [f"### `{n}`", ""]
        out += _table(["parameter", "width ratio"] + [f"`{d}`" for d in names]
                      + ["constrained by"], rows)
    return out


def _option_text(v) -> str:
    return "null" if v is None else str(v).lower() if isinstance(v, bool) else str(v)


def _cards(s, ctx) -> list:
    out = ["## Assumptions and limitations", ""]
    for n, m in s["models"].items():
        c = ctx["cards"][n]
        out += [f"### {m['title']} (`{n}`)", ""]
        if c.get("options"):            # the options the family ran with (card and case file)
            out += ["Options: " + ", ".join(f"`{k}: {_option_text(v)}`"
                                            for k, v in c["options"].items()), ""]
        out += ["Assumptions:", ""]
        out += [f"- {a}" for a in c["assumptions"]] or ["- (none stated)"]
        out += ["", "Known limitations:", ""]
        out += [f"- {a}" for a in c["limitations"]] or ["- (none stated)"]
        if c["references"]:
            out += ["", "Model references: " + "; ".join(c["references"])]
        out.append("")
    return out


_MOVE_WORDS = {"population": "independence proposals from a kernel density estimate of "
                              "the final tempered population",
               "differential_evolution": "differential-evolution moves",
               "snooker": "snooker moves", "stretch": "stretch moves"}
_MOVE_REFS = {"population": ["tierney", "kde"], "differential_evolution": ["de"],
              "snooker": ["de"], "stretch": ["goodman"]}


def _near(near) -> str:
    """One cell: each dimensionality measure's median, 95th percentile and P below 1 %/5 %."""
    if not near:
        return "—"
    return "; ".join(f"{k}: {v['median']:.2g} (95 % < {v['p95']:.2g}), P = "
                     + " / ".join(f"{x:.2g}" for x in v["p_below"].values())
                     for k, v in near.items())


def _steps_words(models, fams) -> str:
    """How many steps each family's chain ran, and the stopping rule where one ended early."""
    sms = [models[f]["sampler"] for f in fams]
    most = max(int(sm.get("max_steps", sm["n_steps"])) for sm in sms)
    if all(int(sm["n_steps"]) == most for sm in sms):
        return f"{most} steps per walker"
    used = ", ".join(f"{int(models[f]['sampler']['n_steps'])} ({f})" for f in fams) \
        if len(fams) > 1 else f"{int(sms[0]['n_steps'])}"
    from ..inference.posterior import STOP_CHECK_EVERY, STOP_MIN_STEPS
    return (f"at most {most} steps per walker, stopped at the first multiple of "
            f"{STOP_CHECK_EVERY} steps (from {STOP_MIN_STEPS} on) where every convergence "
            "check passed and the bulk and tail "
            "effective sample size of every parameter reached the target "
            f"{max(int(sm.get('posterior_ess', 0)) for sm in sms)}; steps run: {used}")


def _families(names) -> str:
    return ", ".join(f"`{n}`" for n in names)


def _grouped(s, key) -> list:
    """[(value, [families])] grouping the families by ``key(model)`` (first seen order)."""
    groups = {}
    for n, m in s["models"].items():
        groups.setdefault(key(m), []).append(n)
    return list(groups.items())


def _methods(s, ctx) -> tuple:
    """The methods paragraph, written from what ran (the sampler records of summary.json,
    the settings and the thresholds applied)."""
    models = s["models"]
    methods = {m["evidence_method"] for m in models.values()}
    smc = any("sequential Monte Carlo" in t for t in methods)
    used = []
    for m in models.values():
        for mv in m["sampler"]["moves"]:
            used += _MOVE_REFS.get(mv["move"], [])
    keys = ["emcee"] + [k for k in dict.fromkeys(used) if k != "emcee"]
    if "goodman" not in keys:
        keys.append("goodman")                            # autocorrelation time
    if smc:
        keys += ["smc", "adaptive", "independent", "resampling"]
        if any(m["sampler"].get("evidence_importance_draws", 0) for m in models.values()):
            keys.append("defensive")
    if any("stepping" in t for t in methods):
        keys.append("stepping")
    keys += ["rhat", "arviz", "kass", "ppc"]
    has_lap = any(m["laplace"] for m in models.values())
    has_sd = any(m["savage_dickey"] for m in models.values())
    has_loo = any(m["loo"] and "error" not in m["loo"] for m in models.values())
    has_budget = s["comparison"]["evidence_budget"] is not None
    keys += (["laplace"] if has_lap else []) + (["dickey"] if has_sd else []) \
        + (["loo"] if has_loo else []) + ["fisher"]
    keys = list(dict.fromkeys(keys))
    ref = {k: i + 1 for i, k in enumerate(keys)}
    cite = lambda *ks: "[" + ", ".join(str(ref[k]) for k in ks if k in ref) + "]"  # noqa: E731
    rule = next(iter(ctx["burn_in_rule"].values()))
    parts = []
    for mix, fams in _grouped(s, lambda m: tuple((mv["move"], round(mv["share"], 6))
                                                 for mv in m["sampler"]["moves"])):
        sm = models[fams[0]]["sampler"]
        words = ", ".join(f"{share:.0%} {_MOVE_WORDS.get(mv, mv)} "
                          + cite(*_MOVE_REFS.get(mv, [])) for mv, share in mix)
        pop = (f" (the {sm['population_size']} equally weighted particles that end the "
               "evidence run, which also gave the starting walkers; Gaussian kernels with "
               "the covariance of each point's nearest distinct neighbours)"
               if any(mv == "population" for mv, _ in mix) else "")
        parts.append(f"The posterior of {_families(fams)} was sampled with the ensemble "
                     f"sampler emcee {cite('emcee')}, {sm['n_walkers']} walkers and "
                     f"{_steps_words(models, fams)} ({rule}); each step drew its move "
                     f"from the mixture: {words}{pop}. ")
    for marg, fams in _grouped(s, lambda m: tuple(m["sampler"]["marginalised"])):
        if marg:
            parts.append(f"For {_families(fams)} the linear nuisances ("
                         + ", ".join(f"`{x}`" for x in marg) + ") were not sampled but "
                         "integrated out analytically under their declared priors, bounds "
                         "included: the Gaussian marginal likelihood times the probability "
                         "of the prior's box under the nuisances' conditional posterior "
                         "over that under the prior (multivariate normal box probabilities: "
                         "exact in one and two bounded dimensions, by separation of "
                         "variables in more; Genz & Bretz 2009), a uniform prior through a "
                         "Gaussian 10⁴ times wider than its box (exact to 5·10⁻⁹ nats); "
                         "their posteriors were drawn from the conditional Gaussian "
                         "restricted to the prior's box given each sample, so no draw "
                         "leaves its prior. ")
        else:
            parts.append(f"For {_families(fams)} every nuisance was sampled. ")
    if smc:
        for ev, fams in _grouped(s, lambda m: (m["sampler"]["evidence_particles"],
                                               m["sampler"]["evidence_islands"],
                                               m["sampler"]["evidence_target_cess"],
                                               m["sampler"]["evidence_min_sweeps"],
                                               m["sampler"]["evidence_max_sweeps"])):
            n, r, cess, lo, hi = ev
            parts.append(f"Evidences ln Z of {_families(fams)} were computed by sequential "
                         f"Monte Carlo with adaptive tempering from the prior to the "
                         f"posterior {cite('smc', 'adaptive')} (each temperature step keeps a "
                         f"conditional effective sample size of {cess:g} of the population), "
                         f"independent-proposal and random-walk moves {cite('independent')} "
                         f"({lo}–{hi} sweeps per temperature) and systematic resampling "
                         f"{cite('resampling')}, with {n} particles in each of {r} "
                         "independent islands. ")
            imp = {f: s["models"][f]["sampler"].get("evidence_importance_islands", 0)
                   for f in fams}
            draws = max(s["models"][f]["sampler"].get("evidence_importance_draws", 0)
                        for f in fams)
            if draws:
                counts = ", ".join(f"{f} {k} of {r}" for f, k in imp.items())
                parts.append(f"Each island then drew {draws} points from a defensive "
                             f"mixture fitted to its final population {cite('defensive')} "
                             "(half a Student t with ν = 5 and the population's covariance "
                             "widened 1.5 times in every direction, half Gaussian kernels "
                             "on the particles, 10 % of the prior; folded back inside at a "
                             "prior bound the population lies against) and quotes that "
                             "importance estimate of its evidence when "
                             "the weights' effective sample size reaches 5 % of the draws "
                             "(below that, up to twice, after further sweeps of its moves at "
                             "β = 1 and a proposal fitted again), "
                             f"else its tempered estimate (importance estimate quoted on "
                             f"{counts} islands). ")
            parts.append("ln Z is the log of the mean island evidence and its error the "
                         "standard error across islands, floored by the importance weights' "
                         "own error. ")
    else:
        parts.append("Evidences ln Z were computed by: " + "; ".join(sorted(methods)) + ". ")
    th = next(iter(models.values()))["diagnostics"]["thresholds"]
    acc = th.get("acceptance_range")
    pop_any = any(mv["move"] == "population" and mv["share"] >= 0.5
                  for m in models.values() for mv in m["sampler"]["moves"])
    acc_text = ""
    if acc:
        acc_text = (f"; a mean acceptance fraction within [{acc[0]:g}, {acc[1]:g}]"
                    + (" (not applied where independence proposals make up most moves, "
                       "whose acceptance measures the proposal's fit, not the step size)"
                       if pop_any else ""))
    parts.append(f"Convergence thresholds: rank-normalised split R-hat below "
                 f"{th.get('rhat_max')} (target {th.get('rhat_target')}) and bulk and tail "
                 f"effective sample sizes above {th.get('ess_min'):g} {cite('rhat')} "
                 f"computed with ArviZ {cite('arviz')}; chains longer than "
                 f"{th.get('length_over_tau_min'):g} integrated autocorrelation times "
                 f"{cite('goodman')}{acc_text}. ")
    rt = s["comparison"]["reliability"]["thresholds"]
    parts.append(f"Bayes factors are worded on the Kass–Raftery scale of 2 ln K "
                 f"{cite('kass')}. The verdict was called reliable when every ln Z has a "
                 f"finite error, ln K exceeds {rt['ln_k_sigmas']:g} standard errors whenever "
                 f"it claims more than a bare mention (ln K + {rt['ln_k_sigmas']:g}σ ≥ "
                 f"{rt['ln_k_claim']:g} nat), more than {rt['island_majority']:.0%} of the "
                 "paired islands rank the two leading families alike, their tempered "
                 "sequences reach the posterior without the temperature cap, the direct ln K "
                 "of a family and its nested one-dimensional limit (where the limit is "
                 "another family of the run) agrees with their Savage–Dickey ratio, and "
                 "the winner's posterior passes the thresholds above; a losing family's "
                 "posterior is judged on its own. Goodness of fit is the χ² at the posterior median and "
                 f"the posterior-predictive p-value of the χ² discrepancy {cite('ppc')}. ")
    if has_lap:
        parts.append(f"A Laplace approximation of ln Z {cite('laplace')} is shown as an "
                     "approximate cross-check. ")
    if has_sd:
        parts.append(f"For families that contain their one-dimensional limit, the "
                     f"Savage–Dickey density ratio {cite('dickey')} gives the Bayes factor "
                     "of the limit. ")
    if has_loo:
        parts.append(f"Predictive accuracy was checked by PSIS-LOO {cite('loo')}. ")
    if has_budget:
        nb = s["comparison"]["evidence_budget"].get("n_islands")
        parts.append(f"The evidence budget takes differences of the evidences of subsets "
                     f"of the data, each by the same tempered sequence {cite('smc')}"
                     + (f" in {nb} islands per subset" if nb else "") + ". ")
    parts.append(f"Dataset sensitivities use the Fisher information of Gaussian data "
                 f"{cite('fisher')}.")
    refs = [f"{ref[k]}. {METHOD_REFERENCES[k]}" for k in keys]
    return ["## Methods", "", "".join(parts), "", "References:", ""] + refs + [""], smc


def _referee(s, ctx, smc) -> list:
    c = s["comparison"]
    ev = next(iter(ctx["evidence_settings"].values()))
    checks = [f"ln Z from {ev.get('n_islands')} independent runs (the quoted error is their "
              "spread)"]
    if any(m["laplace"] for m in s["models"].values()):
        checks.append("an approximate Laplace evidence for comparison")
    if any(m["savage_dickey"] for m in s["models"].values()):
        checks.append("Savage–Dickey ratios for the nested one-dimensional limits")
    if any(m["loo"] and "error" not in m["loo"] for m in s["models"].values()):
        checks.append("PSIS-LOO predictive checks")
    checks.append("R-hat, effective sample sizes and autocorrelation times of every parameter")
    checks.append("χ² per point and posterior-predictive p-values of every family on every "
                  "dataset")
    if c["evidence_budget"] is not None:
        checks.append("an evidence budget (each dataset's share of ln K, in sequence and "
                      "left out in turn)")
    text = ("Each model family was fitted jointly to all datasets ("
            + "; ".join(f"{d['name']}: {d['kind'].replace('_', ' ')}, {d['n']} points"
                        for d in ctx["datasets"])
            + ") with one set of physical parameters and per-dataset nuisance parameters "
            "(scales, backgrounds). Priors were stated before the fit (listed with every "
            "parameter in the tables; physical parameters from the model cards, nuisance "
            "priors fixed without the measured values, from physical bounds, the data's "
            "units and the ranges of the independent variables). The Bayesian evidence of "
            "each family was computed "
            + ("by adaptive-tempering sequential Monte Carlo" if smc else "as stated above")
            + f", with {c['prior_odds']}. Robustness checks done: " + "; ".join(checks)
            + ". Prior sensitivity: every physical prior was halved and doubled in width (and "
            "log-uniform swapped for uniform where it applies), by reweighting the tempered "
            "populations where valid and by new tempered runs under the changed prior where "
            "not; see the prior-sensitivity table for the resulting ln K and P(1D) and how "
            "each was obtained.")
    return ["## For a referee response", "", "A paragraph to adapt:", "", "> " + text, ""]


def render_markdown(summary: dict, context: dict) -> str:
    """The text of report.md.

    Parameters
    ----------
    summary : dict
        The document of :func:`~evidence1d.report.summary.build_summary`.
    context : dict
        From :func:`report_context`.

    Returns
    -------
    str
        Markdown; it starts with a quick-look banner when ``context["quick"]`` is true and an
        UNRELIABLE banner when ``summary["reliable"]`` is false.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    s, c = summary, summary["comparison"]
    out = [f"# {s['title']}: which model family explains the data?", ""]
    if context.get("quick"):
        cut = [f"'{d['name']}' on one point in {d['quick_subset']['every']} "
               f"({d['quick_subset']['kept']} of {d['quick_subset']['of']})"
               for d in context.get("datasets", []) if d.get("quick_subset")]
        out += ["> **QUICK LOOK, NOT FOR PUBLICATION**: reduced sampler settings (`--quick`)"
                + ("; spectra fitted on a regular subset of their points: " + ", ".join(cut)
                   + " (ln K scales roughly with the number of points fitted)" if cut else "")
                + "; run without `--quick` before quoting any number.", ""]
    if not s["reliable"]:
        why = list(c["reliability"].get("reasons") or [])
        out += ["> **UNRELIABLE**: " + "; ".join(why or ["see the diagnostics"]) + ". Do not "
                "quote the verdict; run longer (more steps, particles and islands) and "
                "check the warnings under Diagnostics.", ""]
    for w in c["winner_fit_warnings"]:
        out += [f"> **BAD FIT**: {w}.", ""]
    out += absolute_alert(s)
    out += [f"**Verdict** ({c['strength']}): {c['verdict']}", ""]
    out += reliability_section(s) + fit_section(s) + bounds_alert(s)
    out += _comparison(s) + budget_section(s) + sensitivity_section(s)
    out += (_parameters(s) + bounds_section(s) + metal_section(s) + absolute_section(s)
            + _diagnostics(s))
    out += _constraints(s, context)
    out += _cards(s, context)
    methods, smc = _methods(s, context)
    out += methods + _referee(s, context, smc)
    p = s["provenance"]
    out += ["## Provenance", "",
            f"Seed {p.get('seed')}; case file `{p.get('case_file')}` (SHA-256 "
            f"{str(p.get('case_sha256'))[:12]}…); started {p.get('start')}, run time "
            f"{_f(p.get('run_time_s'), '.0f')} s; evidence1d "
            f"{(p.get('versions') or {}).get('evidence1d')}. Full record in summary.json.", ""]
    return "\n".join(out)

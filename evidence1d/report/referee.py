"""The referee's sections of report.md: the verdict's reliability, goodness of fit, the
bad-fit and prior-bound alerts, which datasets decide the verdict (evidence budget), prior
sensitivity, parameters at a prior bound and the metal context.  Rendering only: every
number comes from summary.json (:mod:`evidence1d.analysis` computed them during the run).

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
.. [2] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995): sensitivity of
   Bayes factors to the priors.
.. [3] K. G. Wilson, Rev. Mod. Phys. 47, 773 (1975) (from memory): the Wilson ratio.
"""
from __future__ import annotations

from ..analysis.bounds import BOUND_MASS_MAX, BOUND_WINDOW
from .summary import round_interval

__all__ = ["fmt", "md_table", "reliability_section", "fit_section", "bounds_alert",
           "budget_section", "sensitivity_section", "bounds_section", "metal_section",
           "absolute_section", "absolute_alert"]


def fmt(x, spec=".2f"):
    """A number as text, "—" for None (a non-finite number in summary.json)."""
    return "—" if x is None else format(x, spec)


def md_table(header, rows) -> list:
    """A Markdown table (header, separator, rows; "|" escaped) and a blank line."""
    out = ["| " + " | ".join(header) + " |", "|" + "---|" * len(header)]
    out += ["| " + " | ".join(str(c).replace("|", "\\|") for c in r) + " |" for r in rows]
    return out + [""]


def reliability_section(s) -> list:
    """The verdict's reliability and the notes on each family's posterior."""
    c = s["comparison"]
    r = c["reliability"]
    t = r["thresholds"]
    state = "reliable" if r["verdict_reliable"] else "**UNRELIABLE**"
    if r["verdict_reliable"] and c.get("winner_fit_warnings"):
        # a ranking can be secure while the winner misfits: never call that simply reliable
        state = ("the ranking is secure, but the winner FITS BADLY (see BAD FIT above): the "
                 "data prefer it to the others, not that it describes them; do not quote its "
                 "parameters without the residuals")
    agree = r["island_pairs_agreeing"]
    out = [f"Reliability of the verdict: {state}. It rests on the evidences (ln K of "
           f"`{r['winner']}` over `{r['runner_up']}` = {r['ln_k']:.2f} ± {fmt(r['ln_k_err'])} "
           f"nats; ranking {'secure' if r['ranking_secure'] else 'NOT secure'} at "
           f"{t['ln_k_sigmas']:g} standard errors; "
           + (f"{agree:.0%} of paired islands agree; " if agree is not None else "")
           + f"evidence errors {'finite' if r['evidence_errors_finite'] else 'NOT finite'}) "
           f"and on the winner's posterior (diagnostics "
           f"{'passed' if r['winner_diagnostics_ok'] else 'FAILED'}). Each family's own "
           "posterior is judged separately below: a losing family's failed chain is a note "
           "on that family, not on the verdict.", ""]
    for full, c in (r.get("nested_checks") or {}).items():
        if not c["checked"]:
            out += [f"- `{full}` equals `{c['nested']}` at its nested limit, but the direct "
                    f"ln K was not checked against Savage–Dickey: {c['why_not']}."]
            continue
        sd = c["ln_k_savage_dickey"]
        # −∞ (no posterior mass at the limit) is stored as null in summary.json
        sd_txt = "−∞ (no posterior mass at the limit)" if sd is None or sd == float("-inf") \
            else f"{sd:.2f} ± {fmt(c['ln_k_savage_dickey_err'])}"
        out += [f"- Cross-check: ln K of `{c['nested']}` over `{full}` is "
                f"{c['ln_k_direct']:.2f} ± {fmt(c['ln_k_direct_err'])} nats from the "
                f"evidences and {sd_txt} from the Savage–Dickey ratio of `{full}`'s "
                "posterior (the same quantity, Dickey 1971): "
                + ("consistent." if c["consistent"] else
                   "**INCONSISTENT** — at least one of the two evidences is biased.")]
    if r.get("nested_checks"):
        out.append("")
    for n, note in r["posterior_notes"].items():
        out += [f"- Note on `{n}`: {note}"]
    if r["posterior_notes"]:
        out.append("")
    return out


def fit_section(s) -> list:
    """χ²/N and posterior-predictive p of every family on every dataset."""
    from ..analysis.fit import FIT_THRESHOLDS
    rows = []
    best = s["comparison"]["best"]
    for n, m in s["models"].items():
        for d, f in m["goodness_of_fit"].items():
            verdict = "**bad**" if f["bad_fit"] else "ok"
            if f["median_unrepresentative"]:
                verdict += " (the median is no fit: curved or multimodal posterior)"
            rows.append([f"`{n}`" + (" (winner)" if n == best else ""), f"`{d}`",
                         str(f["n_points"]), fmt(f["chi2_per_point"]),
                         fmt(None if f["chi2_min_draws"] is None
                             else f["chi2_min_draws"] / f["n_points"]),
                         f"{f['chi2_per_point_limit']:.2f}", f"{f['p_value']:.2g}", verdict])
    method = next((f["p_value_method"] for m in s["models"].values()
                   for f in m["goodness_of_fit"].values()), "")
    out = ["### Goodness of fit", "",
           "χ² at the posterior median of every parameter, per point (χ²/N, not per degree of "
           "freedom: a joint nonlinear fit has none per dataset), and the posterior-"
           f"predictive p-value ({method}; Gelman, Meng & Stern 1996). A fit is called bad "
           f"when χ²/N exceeds 1 + {FIT_THRESHOLDS['chi2_sigmas']:g}√(2/N) (five standard "
           "deviations of χ²/N for a correct model with correct errors; common practice) or "
           f"p < {FIT_THRESHOLDS['p_min']:g} (common practice); the χ²/N rule is applied to "
           "the better of the median and the best posterior draw, since the component-wise "
           "median of a curved posterior need not be near any draw. The evidence ranks the "
           "families; only these numbers say whether the winner describes the data.", ""]
    out += md_table(["family", "dataset", "N", "χ²/N at median",
                     "smallest χ²/N of the draws", "bad above", "p", "fit"], rows)
    return out


def bounds_alert(s) -> list:
    """A loud line when the winner's posterior piles up on a prior bound."""
    best = s["comparison"]["best"]
    flags = s["models"][best]["prior_bounds"]
    if not flags:
        return []
    items = ", ".join(f"`{f['parameter']}` at its {f['bound']} bound {f['bound_value']:g}"
                      for f in flags)
    return [f"> **Prior bound**: the winner's posterior piles up on {items}; see "
            "\"Parameters at a prior bound\" below.", ""]


def absolute_alert(s) -> list:
    """A loud line when the winner needs an intensity scale the absolute calibration rules
    out (:func:`absolute_section`)."""
    best = s["comparison"]["best"]
    bad = [(ds, rec) for ds, rec in (s["models"][best].get("absolute_scale") or {}).items()
           if "ratio" in rec and not rec["consistent"]]
    if not bad:
        return []
    items = ", ".join(f"`{ds}` needs r = {rec['ratio']['median']:.3g} of the absolute scale "
                      f"(calibration ±{rec['calibration_uncertainty']:.0%})" for ds, rec in bad)
    return [f"> **ABSOLUTE SCALE**: the winner's spectral weight disagrees with its own "
            f"normalisation: {items}; see \"Spectra on an absolute scale\" below.", ""]


def budget_section(s) -> list:
    """Which datasets decide the verdict: the evidence budget table."""
    c = s["comparison"]
    b = c["evidence_budget"]
    if b is None:
        note = c.get("evidence_budget_note")
        return ["### Which datasets decide the verdict", "", f"Evidence budget {note}.", ""] \
            if note else []
    a, bb = b["families"]
    loo = {r["dataset"]: r for r in b["leave_one_out"]}
    rows = []
    for r in b["sequential"]:
        lo = loo.get(r["dataset"])
        rows.append([f"`{r['dataset']}`", f"{r['ln_k']:.2f} ± {fmt(r['ln_k_err'])}",
                     f"{lo['added_last']:.2f} ± {fmt(lo['added_last_err'])}" if lo else "—",
                     f"{lo['ln_k_without']:.2f} ± {fmt(lo['ln_k_without_err'])}" if lo else "—"])
    ranked = sorted(b["leave_one_out"], key=lambda r: -abs(r["added_last"]))
    rests = ", ".join(f"`{r['dataset']}` ({r['added_last']:.1f} nats)" for r in ranked)
    out = ["### Which datasets decide the verdict", "",
           f"Evidence budget of ln K = ln Z(`{a}`) − ln Z(`{bb}`) = {b['ln_k']:.2f} ± "
           f"{fmt(b['ln_k_err'])} nats: the verdict rests on {rests} (each added last, "
           "given all the others). Method: " + b["method"] + f" ({b['n_particles']} particles"
           + (f" and {b['importance_draws']} final importance draws per island"
              if b.get("importance_draws") else "")
           + f", {b['n_islands']} islands per subset and family). Positive numbers favour "
           f"`{a}`.", ""]
    out += [f"- warning: {w}" for w in b["warnings"]] + ([""] if b["warnings"] else [])
    out += md_table(["dataset", "in sequence (given those above)", "added last",
                     "ln K without it"], rows)
    return out


def sensitivity_section(s) -> list:
    """ln K and P(1D) under changed physical priors."""
    ps = s["comparison"]["prior_sensitivity"]
    if not ps or not ps["rows"]:
        return []
    a, b = ps["families"]
    rows = []
    for r in ps["rows"]:
        how = r["method"]
        if r["ln_k"] is None:
            rows.append([f"`{r['parameter']}`", r["change"], "—", "—", how, r["note"]])
        else:
            rows.append([f"`{r['parameter']}`", r["change"],
                         f"{r['ln_k']:.2f} ± {fmt(r['ln_k_err'])}",
                         f"{r['p_one_dimensional']:.3g}", how, r["note"]])
    done = [r for r in ps["rows"] if r["ln_k"] is not None]
    span = ""
    if done:
        lo = min(r["ln_k"] for r in done)
        hi = max(r["ln_k"] for r in done)
        span = (f" Over the rows with a number ln K stays within [{lo:.2f}, {hi:.2f}] nats "
                f"(declared priors: {ps['ln_k']:.2f}).")
    outside = sum(r["method"] == "outside the model's domain" for r in ps["rows"])
    missing = sum(r["ln_k"] is None for r in ps["rows"]) - outside
    if missing:
        span += (f" {missing} row(s) could not be reweighted and were not re-run (a --quick "
                 "run skips the re-runs).")
    if outside:
        span += (f" {outside} row(s) change a prior beyond values a family's likelihood "
                 "accepts (its domain), so no number exists for them.")
    out = ["### Prior sensitivity", "",
           f"ln K of `{a}` over `{b}` and P(1D | data) with each physical prior halved and "
           "doubled in width (about its centre; from 0 when the prior starts at 0; in ln θ "
           "for a log-uniform prior) and log-uniform swapped for uniform or back, changed in "
           "every family that has the parameter. Method: " + ps["method"] + "." + span, ""]
    out += md_table(["parameter", "prior change", "ln K (nats)", "P(1D | data)", "how",
                     "note"], rows)
    return out


def bounds_section(s) -> list:
    """Every prior bound on which a posterior piles up, with advice."""
    out = []
    flagged = [(n, f) for n, m in s["models"].items() for f in m["prior_bounds"]]
    out += ["### Parameters at a prior bound", "",
            f"A bound is flagged when more than {BOUND_MASS_MAX:.0%} of the posterior lies "
            f"within {BOUND_WINDOW:.0%} of the prior width of it (or beyond it); a posterior "
            f"the data leave flat puts about {BOUND_WINDOW:.0%} there (a reporting choice of "
            "this package). Such a posterior is shaped by where the prior ends: widen the "
            "prior or justify the bound.", ""]
    if flagged:
        out += md_table(["family", "parameter", "bound", "posterior mass there", "advice"],
                        [[f"`{n}`", f"`{f['parameter']}`",
                          f"{f['bound']} = {f['bound_value']:g}",
                          f"{f['mass']:.0%}" + (f" ({f['mass_outside']:.0%} beyond)"
                                                if f["mass_outside"] else ""), f["advice"]]
                         for n, f in flagged])
    else:
        out += ["None flagged.", ""]
    return out


def metal_section(s) -> list:
    """The Wilson ratio of every family that fitted χ₀ and γ_e."""
    out = []
    metal = [(n, m["metal"]) for n, m in s["models"].items() if m.get("metal")]
    if metal:
        out += ["### Metal context", "",
                "Wilson ratio of the fitted χ₀ and γ_e, R_W = 4π² k_B² χ₀ / (3 (2 μ_B)² γ_e) "
                "(Wilson 1975; 1 for free electrons, about 2 for strong correlations), over "
                "the posterior samples with γ_e > 0. The fitted χ₀ also holds the core "
                "diamagnetism and any Van Vleck term: subtract them before reading R_W as a "
                "Fermi-liquid ratio.", ""]
        rows = []
        for n, mc in metal:
            w = mc["wilson_ratio"]
            if w is None:
                rows.append([f"`{n}`", "— (no sample with γ_e > 0)", "—"])
                continue
            med, plus, minus, exp = round_interval(w["median"], w["q16"], w["q84"])
            text = f"{med} +{plus} −{minus}"
            if exp:
                text = f"({text}) × 10^{exp}"
            rows.append([f"`{n}`", text, f"{mc['fraction_gamma_nonpositive']:.0%}"])
        out += md_table(["family", "R_W (median, 68 %)",
                         "samples with γ_e ≤ 0 (left out)"], rows)
    return out


def _q(d, digits=3) -> str:
    return f"{d['median']:.{digits}g} [{d['q16']:.{digits}g}, {d['q84']:.{digits}g}]"


def absolute_section(s) -> list:
    """Spectra on an absolute scale: each family's fitted scale against the cross-section
    and the share of the total moment S(S + 1) in the measured window."""
    rows, notes = [], []
    for n, m in s["models"].items():
        for ds, rec in (m.get("absolute_scale") or {}).items():
            if "ratio" not in rec:
                notes.append(f"`{n}` on `{ds}`: {rec['note']}")
                continue
            w = rec.get("window")
            verdict = "yes" if rec["consistent"] else f"**NO** (z = {rec['z']:+.1f})"
            rows.append([f"`{n}`", f"`{ds}`", _q(rec["ratio"]), verdict,
                         _q(w["data_moment"], 2) if w else "—",
                         _q(w["model_moment"], 2) if w else "—"])
    if not rows and not notes:
        return []
    out = ["### Spectra on an absolute scale", "",
           "r is the intensity scale each family needs divided by the one the cross-section "
           "gives, s_abs = (γr₀)²(g/2)²c (Squires 1978, Ch. 7): r = 1 means the spectra carry "
           "the weight that the family's own normalisation predicts, which every family ties "
           "to the bulk data (the paramagnon's amplitude is χ_u(T) by Kramers–Kronig, the "
           "chain families' follow from the exact first-moment sum rule at the J that χ(T) "
           "and C(T) see). Consistent: |ln r| within two combined standard deviations of the "
           "posterior and the declared calibration uncertainty. The window columns give the "
           "share of the total moment S(S + 1) = "
           f"{_total(s)} per spin found in the measured (Q_∥, E) window by the data (r times "
           "the family's) and by the family itself (total-moment sum rule; Hohenberg & "
           "Brinkman 1974).", ""]
    if rows:
        out += md_table(["family", "dataset", "r (median [68 %])", "consistent",
                         "window moment, data", "window moment, family"], rows)
    out += [f"- {t}" for t in notes] + ([""] if notes else [])
    return out


def _total(s) -> str:
    for m in s["models"].values():
        for rec in (m.get("absolute_scale") or {}).values():
            if rec.get("window"):
                return f"{rec['window']['total_moment']:.3g}"
    return "S(S + 1)"

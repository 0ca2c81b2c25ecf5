"""The fields of ``summary.json``: one table that drives validation and documentation
(:mod:`evidence1d.report.schema`).

Each :class:`SummaryField` names a dotted path into the document, its type, its unit and
what it means.  Path tokens: ``*`` stands for any key of a mapping (a model or parameter
name), ``[]`` after a key for every item of a list.

References
----------
.. [1] T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange Format",
   RFC 8259 (IETF, 2017): the value types used here.
"""
from __future__ import annotations

from dataclasses import dataclass

__all__ = ["SummaryField", "SUMMARY_FIELDS", "SCHEMA_VERSION"]

#: version of the summary.json layout; raised when a field changes meaning or is removed
SCHEMA_VERSION = "2.0"


@dataclass(frozen=True)
class SummaryField:
    """One documented field of ``summary.json``.

    Attributes
    ----------
    path : str
        Dotted path; ``*`` is any mapping key, ``key[]`` every item of the list ``key``.
    type : str
        See the module notes.
    unit : str
        Physical or statistical unit ("" if none; "param" for the parameter's own unit).
    meaning : str
        One sentence for the documentation.
    required : bool
        Whether the field must be present wherever its parent is.
    """

    path: str
    type: str
    unit: str
    meaning: str
    required: bool = True


_F = SummaryField
_M = "models.*"
_P = "models.*.parameters.*"
_D = "models.*.diagnostics"
_C = "comparison"
_G = "models.*.goodness_of_fit.*"
_A = "models.*.absolute_scale.*"


def _quantile_fields(path: str, unit: str) -> tuple:
    """The median, q16 and q84 of a posterior quantity."""
    return (_F(f"{path}.median", "number", unit, "posterior median"),
            _F(f"{path}.q16", "number", unit, "16 % quantile"),
            _F(f"{path}.q84", "number", unit, "84 % quantile"))

#: every field of summary.json, in documentation order
SUMMARY_FIELDS = (
    _F("schema_version", "string", "", "version of this layout"),
    _F("title", "string", "", "title of the case"),
    _F("reliable", "boolean", "", "whether the verdict can be trusted (finite evidence "
       "errors, ranking and islands secure against the size of ln K, no capped temperature "
       "schedule for the two leading families, the winner's diagnostics; see "
       "comparison.reliability); false: every output says UNRELIABLE. A losing family's "
       "failed chain does not make it false"),
    _F("models", "mapping[object]", "", "one entry per model family, keyed by its name"),
    _F(f"{_M}.title", "string", "", "title of the family's model card"),
    _F(f"{_M}.one_dimensional", "boolean", "", "whether the family is one-dimensional physics"),
    _F(f"{_M}.posterior_reliable", "boolean", "", "whether this family's emcee posterior "
       "passed its convergence diagnostics (its parameter table can be quoted)"),
    _F(f"{_M}.log_evidence", "number", "nats", "ln Z (tempered sequence, then importance "
       "sampling from its final population; see the README)"),
    _F(f"{_M}.log_evidence_err", "number", "nats", "standard error of ln Z from independent "
       "islands"),
    _F(f"{_M}.island_log_evidence", "array[number]", "nats", "ln Z of each island"),
    _F(f"{_M}.evidence_method", "string", "", "one-line description of the estimator"),
    _F(f"{_M}.evidence_warnings", "array[string]", "", "problems noticed by the estimator"),
    _F(f"{_M}.n_likelihood_evaluations", "integer", "", "parameter sets evaluated for ln Z "
       "and the posterior"),
    _F(f"{_M}.parameters", "mapping[object]", "", "every parameter with a posterior, "
       "nuisances included (sampled ones in sampling order, then those integrated out "
       "analytically)"),
    _F(f"{_P}.median", "number", "param", "posterior median"),
    _F(f"{_P}.q16", "number", "param", "16 % posterior quantile"),
    _F(f"{_P}.q84", "number", "param", "84 % posterior quantile"),
    _F(f"{_P}.unit", "string", "", "unit of the parameter ('1' if dimensionless)"),
    _F(f"{_P}.role", "string", "", "'physical' (model card), 'extra' (sample-level "
       "background term) or 'nuisance' (one dataset's own)"),
    _F(f"{_P}.prior", "string", "", "the prior, in words"),
    _F(f"{_P}.marginalised", "boolean", "", "true for a linear nuisance integrated out "
       "analytically; its quantiles come from conditional-posterior draws", required=False),
    _F(f"{_P}.prior_q16", "number", "param", "16 % quantile of the prior"),
    _F(f"{_P}.prior_q84", "number", "param", "84 % quantile of the prior"),
    _F(f"{_P}.width_ratio", "number", "", "posterior 68 % width over prior 68 % width "
       "(near 1: the data add little)"),
    _F(f"{_M}.fixed_parameters", "mapping[object]", "", "parameters held fixed"),
    _F(f"{_M}.fixed_parameters.*.value", "number", "param", "the fixed value"),
    _F(f"{_M}.fixed_parameters.*.unit", "string", "", "its unit"),
    _F(f"{_M}.constraints", "mapping[mapping[object]]", "", "parameter -> dataset -> "
       "sensitivity at the posterior median (see report.md for the method)"),
    _F(f"{_M}.constraints.*.*.information_share", "number|null", "", "fraction of the "
       "parameter's diagonal Fisher information carried by the dataset"),
    _F(f"{_M}.constraints.*.*.shift", "number", "data errors", "root-sum-square change of "
       "the dataset's prediction, in units of its errors, when the parameter moves by one "
       "posterior standard deviation"),
    _F(_D, "object", "", "convergence diagnostics of the emcee chain"),
    _F(f"{_D}.ok", "boolean", "", "all thresholds met"),
    _F(f"{_D}.rhat", "mapping[number|null]", "", "rank-normalised split R-hat per parameter"),
    _F(f"{_D}.ess_bulk", "mapping[number|null]", "samples", "bulk effective sample size"),
    _F(f"{_D}.ess_tail", "mapping[number|null]", "samples", "tail effective sample size"),
    _F(f"{_D}.tau", "mapping[number|null]", "steps", "integrated autocorrelation time"),
    _F(f"{_D}.acceptance", "number|null", "", "mean acceptance fraction"),
    _F(f"{_D}.n_steps", "integer", "steps", "steps per walker after burn-in"),
    _F(f"{_D}.n_walkers", "integer", "", "walkers"),
    _F(f"{_D}.burn_in", "integer", "steps", "discarded steps"),
    _F(f"{_D}.thin", "integer", "steps", "thinning interval of the saved samples"),
    _F(f"{_D}.n_samples", "integer", "samples", "posterior samples kept"),
    _F(f"{_D}.thresholds", "mapping[number|array[number]]", "", "thresholds applied"),
    _F(f"{_D}.warnings", "array[string]", "", "one sentence per failed threshold and per "
       "sampler warning"),
    _F(f"{_M}.laplace", "object|null", "", "Laplace estimate of ln Z (approximate)"),
    _F(f"{_M}.laplace.log_evidence", "number", "nats", "approximate ln Z"),
    _F(f"{_M}.laplace.approximate", "boolean", "", "always true"),
    _F(f"{_M}.laplace.label", "string", "", "how to label it"),
    _F(f"{_M}.laplace.method", "string", "", "'hessian' or 'samples' covariance"),
    _F(f"{_M}.savage_dickey", "object|null", "", "Savage–Dickey ratio for the family's "
       "nested 1D limit (null if it has none)"),
    _F(f"{_M}.savage_dickey.parameter", "string", "", "parameter that vanishes in the limit"),
    _F(f"{_M}.savage_dickey.value", "number", "param", "its value in the limit"),
    _F(f"{_M}.savage_dickey.ln_bf_nested_vs_full", "number|null", "nats", "ln Bayes factor "
       "of the 1D limit against the full family (null: posterior density zero there)"),
    _F(f"{_M}.savage_dickey.ln_bf_err", "number|null", "nats", "bootstrap error"),
    _F(f"{_M}.savage_dickey.reflected", "boolean", "", "the limit lies on the prior's "
       "bound: density from a local-linear boundary kernel (Jones 1993)"),
    _F(f"{_M}.savage_dickey.near_limit", "mapping[object]|null", "", "how close the "
       "posterior comes to the limit, per dimensionless measure of the family (for coupled "
       "chains and the ordered family J_perp/J and kT_N/J = k_B T_N/J); null if the family "
       "defines none", required=False),
    _F(f"{_M}.savage_dickey.near_limit.*.description", "string", "", "what the measure is"),
    _F(f"{_M}.savage_dickey.near_limit.*.median", "number", "", "its posterior median"),
    _F(f"{_M}.savage_dickey.near_limit.*.p95", "number", "", "its 95th percentile"),
    _F(f"{_M}.savage_dickey.near_limit.*.p_below", "mapping[number]", "", "posterior "
       "probability that it lies below each fraction (keys '0.01', '0.05')"),
    _F(f"{_M}.loo", "object|null", "", "PSIS-LOO predictive check (or its error)"),
    _F(f"{_M}.loo.elpd_loo", "number|null", "nats", "expected log predictive density",
       required=False),
    _F(f"{_M}.loo.se", "number|null", "nats", "its standard error", required=False),
    _F(f"{_M}.loo.pareto_k_max", "number|null", "", "largest Pareto k", required=False),
    _F(f"{_M}.loo.n_bad_k", "integer", "", "points with k > 0.7", required=False),
    _F(f"{_M}.loo.n_points", "integer", "", "data points", required=False),
    _F(f"{_M}.loo.error", "string", "", "why LOO could not be computed", required=False),
    _F(f"{_M}.goodness_of_fit", "mapping[object]", "", "dataset -> goodness of fit of the "
       "family (see report.md)"),
    _F(f"{_G}.chi2", "number|null", "", "χ² = Σ((y − μ)/σ)² at the posterior median of every "
       "parameter (σ times any error-inflation factor)"),
    _F(f"{_G}.n_points", "integer", "", "data points N"),
    _F(f"{_G}.chi2_per_point", "number|null", "", "χ²/N (per point, not per degree of freedom)"),
    _F(f"{_G}.chi2_per_point_limit", "number", "", "1 + 5√(2/N): χ²/N above it is a bad fit "
       "(five standard deviations of χ²/N for a correct model; common practice)"),
    _F(f"{_G}.chi2_min_draws", "number|null", "", "smallest χ² among the posterior draws used "
       "(null, like the two above, when the predictions are not finite: a bad fit)"),
    _F(f"{_G}.p_value", "number", "", "posterior-predictive p-value of the χ² discrepancy; "
       "below 0.001 the fit is bad (common practice)"),
    _F(f"{_G}.p_value_method", "string", "", "how the p-value was computed"),
    _F(f"{_G}.n_draws", "integer", "samples", "posterior draws behind the p-value"),
    _F(f"{_G}.bad_fit", "boolean", "", "bad fit: the smaller of χ² at the median and the "
       "smallest χ² of the draws, per point, above its limit, or p below 0.001"),
    _F(f"{_G}.median_unrepresentative", "boolean", "", "χ² at the posterior median is above "
       "the limit while some posterior draw is below it (a curved or multimodal posterior: "
       "the median is no fit)"),
    _F(f"{_M}.prior_bounds", "array[object]", "", "prior bounds on which the posterior piles "
       "up: more than 5 % of the posterior within 1 % of the prior width of the bound, or half "
       "the posterior's standard deviation if narrower (or beyond it)"),
    _F(f"{_M}.prior_bounds[].parameter", "string", "", "the parameter"),
    _F(f"{_M}.prior_bounds[].bound", "string", "", "'lower' or 'upper'"),
    _F(f"{_M}.prior_bounds[].bound_value", "number", "param", "the bound"),
    _F(f"{_M}.prior_bounds[].mass", "number", "", "posterior fraction within the window or "
       "beyond the bound"),
    _F(f"{_M}.prior_bounds[].mass_outside", "number", "", "posterior fraction beyond the "
       "bound (a check: 0 when every draw respects the declared prior)"),
    _F(f"{_M}.prior_bounds[].nested_limit", "boolean", "", "the bound is the family's nested "
       "one-dimensional limit"),
    _F(f"{_M}.prior_bounds[].advice", "string", "", "what to do"),
    _F(f"{_M}.metal", "object|null", "", "metal context when χ₀ and γ_e are fitted (null "
       "otherwise)"),
    _F(f"{_M}.metal.wilson_ratio", "object|null", "", "Wilson ratio R_W = 4π² k_B² χ₀ / "
       "(3 (2 μ_B)² γ_e) over the samples with γ_e > 0 (null: none)"),
    *_quantile_fields(f"{_M}.metal.wilson_ratio", ""),
    _F(f"{_M}.metal.fraction_gamma_nonpositive", "number", "", "fraction of samples with "
       "γ_e ≤ 0, left out"),
    _F(f"{_M}.metal.note", "string", "", "how to read it"),
    _F(f"{_M}.absolute_scale", "mapping[object]|null", "", "dataset -> the check of a "
       "spectrum declared on an absolute scale (null: none declared): the fitted intensity "
       "scale against the cross-section and the total-moment sum rule over the window"),
    _F(f"{_A}.unit", "string", "", "the data's intensity unit"),
    _F(f"{_A}.calibration_uncertainty", "number", "", "declared fractional uncertainty u of "
       "the absolute calibration"),
    _F(f"{_A}.cross_section_factor", "number", "", "c in Σ(δ_αβ − Q̂_αQ̂_β)S^αβ = c × the "
       "family's S (2/3 or 1)", required=False),
    _F(f"{_A}.expected_scale", "object", "unit·meV", "s_abs = (γr₀)²(g/2)²c over the g "
       "samples", required=False),
    *_quantile_fields(f"{_A}.expected_scale", "unit·meV"),
    _F(f"{_A}.ratio", "object", "", "r = fitted scale / s_abs", required=False),
    *_quantile_fields(f"{_A}.ratio", ""),
    _F(f"{_A}.z", "number", "", "ln r(median) / √(u² + σ²_ln r)", required=False),
    _F(f"{_A}.consistent", "boolean", "", "whether |z| ≤ 2", required=False),
    _F(f"{_A}.window", "object", "", "single-crystal spectra: the measured window and the "
       "share of the total moment in it", required=False),
    _F(f"{_A}.window.Q_par", "array[number]", "1/Å", "[lowest, highest] Q along the chain"),
    _F(f"{_A}.window.energy", "array[number]", "meV", "[lowest, highest] energy transfer"),
    _F(f"{_A}.window.total_moment", "number", "", "S(S + 1), the total moment per spin"),
    _F(f"{_A}.window.model_moment", "object", "", "the family's moment in the window "
       "(three spin components summed, per spin)"),
    *_quantile_fields(f"{_A}.window.model_moment", ""),
    _F(f"{_A}.window.data_moment", "object", "", "the data's moment in the window, r × "
       "model_moment"),
    *_quantile_fields(f"{_A}.window.data_moment", ""),
    _F(f"{_A}.note", "string", "", "how it was computed, or why not"),
    _F(f"{_M}.sampler", "object", "", "what the samplers of this family did (the methods "
       "text is written from it)"),
    _F(f"{_M}.sampler.moves", "array[object]", "", "the emcee move mixture"),
    _F(f"{_M}.sampler.moves[].move", "string", "", "'population' (independence proposals "
       "from a kernel density of the final tempered population), 'differential_evolution', "
       "'snooker' or 'stretch'"),
    _F(f"{_M}.sampler.moves[].share", "number", "", "fraction of steps using this move"),
    _F(f"{_M}.sampler.n_walkers", "integer", "", "emcee walkers"),
    _F(f"{_M}.sampler.n_steps", "integer", "steps", "emcee steps per walker (burn-in "
       "included)"),
    _F(f"{_M}.sampler.max_steps", "integer", "steps", "most steps allowed (the case's "
       "steps)"),
    _F(f"{_M}.sampler.stop_rule", "string", "", "why the chain stopped before max_steps "
       "(empty: every step was run)"),
    _F(f"{_M}.sampler.posterior_ess", "integer", "samples", "bulk and tail ESS at which "
       "the chain may stop (0: no early stop)"),
    _F(f"{_M}.sampler.population_size", "integer", "samples", "points of the tempered "
       "population that started the walkers and shaped the population proposal"),
    _F(f"{_M}.sampler.move_acceptance", "mapping[number|null]", "", "acceptance fraction of "
       "the population proposals and of the local moves"),
    _F(f"{_M}.sampler.marginalised", "array[string]", "", "linear nuisances integrated out "
       "analytically (not sampled)"),
    _F(f"{_M}.sampler.evidence_particles", "integer", "", "particles per evidence island"),
    _F(f"{_M}.sampler.evidence_islands", "integer", "", "independent evidence islands"),
    _F(f"{_M}.sampler.evidence_target_cess", "number|null", "", "conditional-ESS fraction "
       "that sets the temperature steps"),
    _F(f"{_M}.sampler.evidence_min_sweeps", "integer", "", "fewest move sweeps per "
       "temperature"),
    _F(f"{_M}.sampler.evidence_max_sweeps", "integer", "", "most move sweeps per "
       "temperature"),
    _F(f"{_M}.sampler.evidence_importance_islands", "integer", "", "islands whose ln Z is "
       "the final importance estimate (the others quote their tempered estimate)"),
    _F(f"{_M}.sampler.evidence_importance_draws", "integer", "", "draws of the final "
       "importance stage per island (0: not run)"),
    _F(_C, "object", "", "comparison of the families"),
    _F(f"{_C}.best", "string", "", "family with the largest ln Z"),
    _F(f"{_C}.strength", "string", "", "Kass–Raftery wording of 2 ln K, best against "
       "runner-up"),
    _F(f"{_C}.verdict", "string", "", "the verdict in one sentence"),
    _F(f"{_C}.pairs", "array[object]", "", "ln Bayes factor of every pair"),
    _F(f"{_C}.pairs[].a", "string", "", "first family"),
    _F(f"{_C}.pairs[].b", "string", "", "second family"),
    _F(f"{_C}.pairs[].ln_k", "number", "nats", "ln K = ln Z_a − ln Z_b"),
    _F(f"{_C}.pairs[].ln_k_err", "number", "nats", "its error (quadrature)"),
    _F(f"{_C}.pairs[].two_ln_k", "number", "nats", "2 ln K"),
    _F(f"{_C}.pairs[].wording", "string", "", "Kass & Raftery (1995) wording of 2 ln K"),
    _F(f"{_C}.prior_probabilities", "mapping[number]", "", "prior model probabilities"),
    _F(f"{_C}.model_probabilities", "mapping[number]", "", "posterior model probabilities"),
    _F(f"{_C}.prior_odds", "string", "", "the prior odds used, in words"),
    _F(f"{_C}.p_one_dimensional", "number", "", "P(one-dimensional | data)"),
    _F(f"{_C}.p_one_dimensional_err", "number", "", "its error (linear propagation)"),
    _F(f"{_C}.one_dimensional", "object", "", "what one-dimensional means in this run"),
    _F(f"{_C}.one_dimensional.definition", "string", "", "the definition, in words"),
    _F(f"{_C}.one_dimensional.families", "array[string]", "", "families counted in "
       "p_one_dimensional (model card one_dimensional: true)"),
    _F(f"{_C}.one_dimensional.nested_limits", "array[object]", "", "nested one-dimensional "
       "limits of the other families (counted in p_one_dimensional only with "
       "one_dimensional_limits: include in the case file)"),
    _F(f"{_C}.one_dimensional.nested_limits[].family", "string", "", "the family"),
    _F(f"{_C}.one_dimensional.nested_limits[].parameter", "string", "", "parameter that "
       "vanishes in the limit"),
    _F(f"{_C}.one_dimensional.nested_limits[].value", "number", "param", "its value there"),
    _F(f"{_C}.one_dimensional.nested_limits[].ln_bf_limit_vs_full", "number|null", "nats",
       "Savage–Dickey ln BF of the limit against the full family"),
    _F(f"{_C}.one_dimensional.nested_limits[].counted", "boolean", "", "whether it counts "
       "in p_one_dimensional (true with one_dimensional_limits: include)"),
    _F(f"{_C}.one_dimensional.nested_limits[].near_limit", "mapping[object]|null", "",
       "the family's savage_dickey.near_limit", required=False),
    _F(f"{_C}.one_dimensional.nested_limits[].near_limit.*.description", "string", "",
       "what the measure is"),
    _F(f"{_C}.one_dimensional.nested_limits[].near_limit.*.median", "number", "",
       "its posterior median"),
    _F(f"{_C}.one_dimensional.nested_limits[].near_limit.*.p95", "number", "",
       "its 95th percentile"),
    _F(f"{_C}.one_dimensional.nested_limits[].near_limit.*.p_below", "mapping[number]", "",
       "posterior probability below 0.01 and 0.05"),
    _F(f"{_C}.one_dimensional.p_with_nested_limits", "number", "", "P(1D | data) counting "
       "every nested limit as a hypothesis with half its family's prior probability"),
    _F(f"{_C}.one_dimensional.p_with_nested_limits_err", "number", "", "its error (linear "
       "propagation of the ln Z and ln BF errors)"),
    _F(f"{_C}.unreliable", "array[string]", "", "families whose failed diagnostics make the "
       "verdict unreliable (only ever the winner)"),
    _F(f"{_C}.posterior_unreliable", "array[string]", "", "every family whose emcee "
       "posterior failed its diagnostics (a note on that family; see "
       "reliability.posterior_notes)"),
    _F(f"{_C}.reliability", "object", "", "the verdict's reliability, checked separately "
       "from each family's posterior"),
    _F(f"{_C}.reliability.verdict_reliable", "boolean", "", "all checks below passed "
       "(equals the top-level reliable)"),
    _F(f"{_C}.reliability.reasons", "array[string]", "", "why the verdict is unreliable "
       "(empty when reliable)"),
    _F(f"{_C}.reliability.winner", "string", "", "family with the largest ln Z"),
    _F(f"{_C}.reliability.runner_up", "string", "", "family with the second largest ln Z"),
    _F(f"{_C}.reliability.ln_k", "number", "nats", "ln K of the winner over the runner-up"),
    _F(f"{_C}.reliability.ln_k_err", "number|null", "nats", "its standard error"),
    _F(f"{_C}.reliability.evidence_errors_finite", "boolean", "", "every ln Z has a finite "
       "error"),
    _F(f"{_C}.reliability.ranking_secure", "boolean", "", "ln K − 2σ > 0 whenever "
       "ln K + 2σ ≥ 1 nat (the verdict claims more than a bare mention)"),
    _F(f"{_C}.reliability.islands_agree", "boolean", "", "more than half of the paired "
       "islands rank the two leading families as the combined ln K does (checked when "
       "ln K ≥ 1 nat)"),
    _F(f"{_C}.reliability.island_pairs_agreeing", "number|null", "", "fraction of paired "
       "islands that agree"),
    _F(f"{_C}.reliability.winner_diagnostics_ok", "boolean", "", "the winner's posterior "
       "passed its diagnostics"),
    _F(f"{_C}.reliability.nested_consistent", "boolean", "", "where a family equals another "
       "of the run at its nested limit (card `nested_1d_limit.equals`) and one of them leads, "
       "the direct ln K agrees with the Savage–Dickey ratio"),
    _F(f"{_C}.reliability.nested_checks", "mapping[object]", "", "full family -> the "
       "cross-check of its ln K against the family it equals at its nested limit"),
    _F(f"{_C}.reliability.nested_checks.*.full", "string", "", "the family with the limit"),
    _F(f"{_C}.reliability.nested_checks.*.nested", "string", "", "the family it equals there"),
    _F(f"{_C}.reliability.nested_checks.*.ln_k_direct", "number", "nats",
       "ln Z_nested − ln Z_full from the evidences"),
    _F(f"{_C}.reliability.nested_checks.*.ln_k_direct_err", "number", "nats", "its error"),
    _F(f"{_C}.reliability.nested_checks.*.ln_k_savage_dickey", "number|null", "nats",
       "the same Bayes factor from the full family's posterior at the limit (Dickey 1971)"),
    _F(f"{_C}.reliability.nested_checks.*.ln_k_savage_dickey_err", "number|null", "nats",
       "its bootstrap error"),
    _F(f"{_C}.reliability.nested_checks.*.difference", "number|null", "nats",
       "direct − Savage–Dickey"),
    _F(f"{_C}.reliability.nested_checks.*.z", "number|null", "", "difference over the "
       "combined error"),
    _F(f"{_C}.reliability.nested_checks.*.checked", "boolean", "", "the comparison was made"),
    _F(f"{_C}.reliability.nested_checks.*.consistent", "boolean", "", "they agree (true "
       "when not checked)"),
    _F(f"{_C}.reliability.nested_checks.*.why_not", "string|null", "", "why it was not "
       "checked"),
    _F(f"{_C}.reliability.nested_checks.*.thresholds", "mapping[number]", "", "the "
       "thresholds applied (standard errors and nats)"),
    _F(f"{_C}.reliability.posterior_notes", "mapping[string]", "", "family -> note on a "
       "losing family's failed posterior"),
    _F(f"{_C}.reliability.thresholds", "mapping[number]", "", "thresholds applied"),
    _F(f"{_C}.winner_fit_warnings", "array[string]", "", "one loud sentence per dataset the "
       "winning family fits badly (empty: no bad fit)"),
    _F(f"{_C}.evidence_budget", "object|null", "", "how much each dataset contributes to "
       "ln K of the two leading families (null: not computed)"),
    _F(f"{_C}.evidence_budget.families", "array[string]", "", "the winner and the runner-up"),
    _F(f"{_C}.evidence_budget.order", "array[string]", "", "order of the sequential "
       "decomposition (likelihood terms; datasets sharing integrated-out nuisances are one "
       "term)"),
    _F(f"{_C}.evidence_budget.ln_k", "number", "nats", "ln K quoted (joint tempering)"),
    _F(f"{_C}.evidence_budget.ln_k_err", "number", "nats", "its error"),
    _F(f"{_C}.evidence_budget.sequential", "array[object]", "", "ln K of each dataset given "
       "the datasets before it"),
    _F(f"{_C}.evidence_budget.sequential[].dataset", "string", "", "the dataset (term)"),
    _F(f"{_C}.evidence_budget.sequential[].ln_k", "number", "nats", "its contribution "
       "ln p_a(d_k | d_<k) − ln p_b(d_k | d_<k); they add up to ln K"),
    _F(f"{_C}.evidence_budget.sequential[].ln_k_err", "number|null", "nats", "its error"),
    _F(f"{_C}.evidence_budget.leave_one_out", "array[object]", "", "ln K without each "
       "dataset"),
    _F(f"{_C}.evidence_budget.leave_one_out[].dataset", "string", "", "the dataset left out"),
    _F(f"{_C}.evidence_budget.leave_one_out[].ln_k_without", "number", "nats", "ln K from "
       "all other datasets"),
    _F(f"{_C}.evidence_budget.leave_one_out[].ln_k_without_err", "number|null", "nats",
       "its error"),
    _F(f"{_C}.evidence_budget.leave_one_out[].added_last", "number", "nats", "contribution "
       "of the dataset added last"),
    _F(f"{_C}.evidence_budget.leave_one_out[].added_last_err", "number|null", "nats",
       "its error"),
    _F(f"{_C}.evidence_budget.method", "string", "", "the method, in words"),
    _F(f"{_C}.evidence_budget.n_particles", "integer", "", "particles per island"),
    _F(f"{_C}.evidence_budget.n_islands", "integer", "", "independent islands per subset "
       "and family"),
    _F(f"{_C}.evidence_budget.importance_draws", "integer", "", "draws of each island's "
       "final importance stage", required=False),
    _F(f"{_C}.evidence_budget.warnings", "array[string]", "", "warnings of the subset runs"),
    _F(f"{_C}.evidence_budget_note", "string", "", "why the budget was not computed",
       required=False),
    _F(f"{_C}.prior_sensitivity", "object|null", "", "ln K and P(1D) with each physical prior "
       "halved and doubled in width, and log-uniform swapped for uniform or back"),
    _F(f"{_C}.prior_sensitivity.families", "array[string]", "", "the winner and the "
       "runner-up whose ln K is given"),
    _F(f"{_C}.prior_sensitivity.ln_k", "number", "nats", "ln K with the declared priors"),
    _F(f"{_C}.prior_sensitivity.p_one_dimensional", "number", "", "P(1D | data) with the "
       "declared priors"),
    _F(f"{_C}.prior_sensitivity.method", "string", "", "how the changed evidences were "
       "obtained"),
    _F(f"{_C}.prior_sensitivity.rows", "array[object]", "", "one row per parameter and "
       "change"),
    _F(f"{_C}.prior_sensitivity.rows[].parameter", "string", "", "the physical parameter "
       "(changed in every family that has it)"),
    _F(f"{_C}.prior_sensitivity.rows[].change", "string", "", "'width × 0.5', 'width × 2', "
       "'uniform' or 'log-uniform'"),
    _F(f"{_C}.prior_sensitivity.rows[].families", "array[string]", "", "families whose prior "
       "changed"),
    _F(f"{_C}.prior_sensitivity.rows[].method", "string", "", "'reweighting', 're-run' "
       "(new tempered runs under the changed prior), 're-run and reweighting', 'needs a "
       "re-run' (not re-run: no number then) or 'outside the model's domain' (the changed "
       "prior reaches values the family's likelihood refuses: no number)"),
    _F(f"{_C}.prior_sensitivity.rows[].rerun_families", "array[string]", "", "families whose "
       "ln Z under the changed prior comes from a new tempered run"),
    _F(f"{_C}.prior_sensitivity.rows[].ln_k", "number|null", "nats", "ln K with the changed "
       "prior"),
    _F(f"{_C}.prior_sensitivity.rows[].ln_k_err", "number|null", "nats", "its error"),
    _F(f"{_C}.prior_sensitivity.rows[].p_one_dimensional", "number|null", "", "P(1D | data) "
       "with the changed prior"),
    _F(f"{_C}.prior_sensitivity.rows[].note", "string", "", "why a family could not be "
       "reweighted, and whether it was re-run"),
    _F("provenance", "object", "", "what produced these numbers"),
    _F("provenance.versions", "mapping[string|null]", "", "versions of evidence1d, its "
       "dependencies and Python"),
    _F("provenance.seed", "integer", "", "random seed"),
    _F("provenance.case_file", "string", "", "path of the case file as run"),
    _F("provenance.case_sha256", "string", "", "SHA-256 of the case file"),
    _F("provenance.data_sha256", "mapping[string]", "", "SHA-256 of every data file"),
    _F("provenance.start", "string", "", "start time, ISO 8601 (UTC)"),
    _F("provenance.run_time_s", "number", "s", "wall time of the run"),
    _F("provenance.settings", "mapping[number|string|boolean|null]", "", "effective sampler "
       "settings"),
)

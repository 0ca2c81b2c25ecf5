"""The schema of ``summary.json``: one list of fields drives validation and documentation.

Each :class:`SummaryField` names a dotted path into the document, its type, its unit and
what it means.  Path tokens: ``*`` stands for any key of a mapping (a model or parameter
name), ``[]`` after a key for every item of a list.  :func:`validate_summary` checks a
document against :data:`SUMMARY_FIELDS` (presence, type, no undocumented keys in documented
objects); :func:`schema_markdown` renders the same list as a Markdown table for the README.

Types: ``string``, ``number`` (finite float or integer), ``integer``, ``boolean``,
``object`` (its keys are the documented child fields), ``mapping[T]`` (free keys, values of
type T), ``array[T]``; a trailing ``|null`` allows ``null``.  Numbers that are not finite
(an infinite Bayes factor, an undefined Pareto k) are written as ``null``, since JSON has no
infinity.

References
----------
.. [1] T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange Format",
   RFC 8259 (IETF, 2017): the value types used here.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import InputError

__all__ = ["SummaryField", "SUMMARY_FIELDS", "SCHEMA_VERSION", "validate_summary",
           "schema_markdown"]

#: version of the summary.json layout; raised when a field changes meaning or is removed
SCHEMA_VERSION = "1.0"


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

#: every field of summary.json, in documentation order
SUMMARY_FIELDS = (
    _F("schema_version", "string", "", "version of this layout"),
    _F("title", "string", "", "title of the case"),
    _F("reliable", "boolean", "", "false if any family failed the convergence diagnostics or "
       "has no finite evidence error; every output then says UNRELIABLE"),
    _F("models", "mapping[object]", "", "one entry per model family, keyed by its name"),
    _F(f"{_M}.title", "string", "", "title of the family's model card"),
    _F(f"{_M}.one_dimensional", "boolean", "", "whether the family is one-dimensional physics"),
    _F(f"{_M}.log_evidence", "number", "nats", "ln Z from the tempered sequence"),
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
    _F(f"{_M}.savage_dickey.reflected", "boolean", "", "density estimated with boundary "
       "reflection"),
    _F(f"{_M}.loo", "object|null", "", "PSIS-LOO predictive check (or its error)"),
    _F(f"{_M}.loo.elpd_loo", "number|null", "nats", "expected log predictive density",
       required=False),
    _F(f"{_M}.loo.se", "number|null", "nats", "its standard error", required=False),
    _F(f"{_M}.loo.pareto_k_max", "number|null", "", "largest Pareto k", required=False),
    _F(f"{_M}.loo.n_bad_k", "integer", "", "points with k > 0.7", required=False),
    _F(f"{_M}.loo.n_points", "integer", "", "data points", required=False),
    _F(f"{_M}.loo.error", "string", "", "why LOO could not be computed", required=False),
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
    _F(f"{_C}.unreliable", "array[string]", "", "families that failed the diagnostics"),
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


# ------------------------------------------------------------------------ type checking
def _is_type(value, t: str) -> bool:
    if t == "null":
        return value is None
    if t == "string":
        return isinstance(value, str)
    if t == "boolean":
        return isinstance(value, bool)
    if t == "integer":
        return isinstance(value, int) and not isinstance(value, bool)
    if t == "number":
        return (isinstance(value, (int, float)) and not isinstance(value, bool)
                and math.isfinite(value))
    if t == "object":
        return isinstance(value, dict)
    for head, kind in (("mapping[", dict), ("array[", list)):
        if t.startswith(head) and t.endswith("]"):
            if not isinstance(value, kind):
                return False
            inner = t[len(head):-1]
            items = value.values() if kind is dict else value
            return all(_matches(v, inner) for v in items)
    raise ValueError(f"unknown schema type {t!r}")


def _matches(value, type_text: str) -> bool:
    # split on '|' only at the top level (not inside brackets)
    parts, depth, cur = [], 0, ""
    for ch in type_text:
        depth += ch == "["
        depth -= ch == "]"
        if ch == "|" and depth == 0:
            parts.append(cur)
            cur = ""
        else:
            cur += ch
    parts.append(cur)
    return any(_is_type(value, p) for p in parts)


def _nodes(doc, path: str):
    """Yield (location, parent, key) for every place the path can point to."""
    found = [("", doc)]
    tokens = path.split(".")
    for depth, tok in enumerate(tokens):
        last = depth == len(tokens) - 1
        nxt = []
        for loc, node in found:
            if not isinstance(node, dict):
                continue
            if tok == "*":
                nxt += [(f"{loc}.{k}".lstrip("."), v) for k, v in node.items()]
                continue
            key, is_list = (tok[:-2], True) if tok.endswith("[]") else (tok, False)
            if last and not is_list:
                yield loc, node, key
                continue
            if key not in node:
                continue
            value = node[key]
            here = f"{loc}.{key}".lstrip(".")
            if is_list and isinstance(value, list):
                if last:
                    raise ValueError("a schema path may not end in []")
                nxt += [(f"{here}[{i}]", v) for i, v in enumerate(value)]
            elif not is_list:
                nxt.append((here, value))
        found = nxt


def _children(path: str) -> set:
    out = set()
    for f in SUMMARY_FIELDS:
        p = f.path.replace("[]", "")
        if p.startswith(path + ".") and "." not in p[len(path) + 1:]:
            out.add(p[len(path) + 1:])
    return out


def validate_summary(doc: dict) -> None:
    """Check a summary.json document against :data:`SUMMARY_FIELDS`.

    Parameters
    ----------
    doc : dict
        The parsed document.

    Raises
    ------
    InputError
        The first problem found: a missing field, a value of the wrong type, or a key that
        the schema does not document, naming the dotted key.

    References
    ----------
    .. [1] RFC 8259 (2017): JSON value types.
    """
    if not isinstance(doc, dict):
        raise InputError(f"summary.json must hold a JSON object; got {type(doc).__name__}")
    for f in SUMMARY_FIELDS:
        for loc, parent, key in _nodes(doc, f.path):
            where = f"{loc}.{key}".lstrip(".")
            if key not in parent:
                if f.required:
                    raise InputError(f"summary.json lacks the field '{where}' ({f.meaning})",
                                     key=where)
                continue
            value = parent[key]
            if not _matches(value, f.type):
                raise InputError(f"summary.json field '{where}' must be of type {f.type}; "
                                 f"got {type(value).__name__} {value!r:.60}", key=where)
            _check_keys(value, f.type, f.path.replace("[]", ""), where)


def _check_keys(value, type_text: str, path: str, where: str) -> None:
    """No undocumented keys in objects, also inside mappings and lists of objects."""
    if value is None:
        return
    if type_text.startswith("object"):
        extra = sorted(set(value) - _children(path))
        if extra:
            raise InputError(f"summary.json field '{where}' holds '{extra[0]}', which the "
                             "schema does not document", key=where)
    elif type_text.startswith("mapping[") and "object" in type_text:
        inner = type_text[len("mapping["):-1]
        for k, v in value.items():
            _check_keys(v, inner, f"{path}.*", f"{where}.{k}")
    elif type_text.startswith("array[") and "object" in type_text:
        inner = type_text[len("array["):-1]
        for i, v in enumerate(value):
            _check_keys(v, inner, path, f"{where}[{i}]")


def schema_markdown() -> str:
    """The schema of summary.json as a Markdown table (for the README).

    Returns
    -------
    str
        A heading line, a note on path syntax and one table row per field.

    References
    ----------
    .. [1] RFC 8259 (2017): JSON value types.
    """
    def cell(s):
        return str(s).replace("|", "\\|")

    lines = [f"summary.json, layout version {SCHEMA_VERSION}. In a path, `*` stands for any "
             "key (a family or parameter name) and `[]` for every item of a list; numbers "
             "that are not finite are written as `null`.", "",
             "| field | type | unit | meaning |", "|---|---|---|---|"]
    for f in SUMMARY_FIELDS:
        opt = "" if f.required else " (optional)"
        lines.append(f"| `{f.path}` | {cell(f.type)} | {cell(f.unit)} | "
                     f"{cell(f.meaning)}{opt} |")
    return "\n".join(lines) + "\n"

"""summary.json schema: one list drives validation and documentation."""
from __future__ import annotations

import copy
import json
import math

import pytest

from evidence1d.errors import InputError
from evidence1d.report.schema import (SUMMARY_FIELDS, schema_markdown, validate_summary)


def test_run_summary_is_valid(summary):
    validate_summary(summary)


#: required fields that the shared quick run may legitimately not produce: blocks that are
#: null for some families (Laplace, Savage–Dickey), lists and mappings that can be empty
#: (no fixed parameter, no parameter on a prior bound, no nested limit), and the evidence
#: budget, which quick runs skip (its fields are checked in test_budget_summary_fields)
_MAYBE_ABSENT = (".savage_dickey.", ".laplace.", ".fixed_parameters.*.", ".prior_bounds[].",
                 ".nested_limits[].", "comparison.evidence_budget.", ".nested_checks.*.")


def test_every_required_field_appears_in_a_real_summary(summary):
    """No stale documentation: each required path resolves somewhere in a run's summary."""
    from evidence1d.report.schema import _nodes
    for f in SUMMARY_FIELDS:
        if not f.required:
            continue
        hits = [1 for _, parent, key in _nodes(summary, f.path) if key in parent]
        assert hits or any(t in f.path for t in _MAYBE_ABSENT), f.path


def test_nested_check_summary_fields(summary):
    """A summary carrying a nested cross-check (coupled chains against the spinon family)
    validates; an undocumented key in it is refused."""
    from evidence1d.inference.nested_check import nested_consistency
    doc = copy.deepcopy(summary)
    c = nested_consistency("coupled_chains", "spinon_continuum",
                           {"coupled_chains": -480.5, "spinon_continuum": -467.7},
                           {"coupled_chains": 0.07, "spinon_continuum": 0.25},
                           {"ln_bf_nested_vs_full": 8.1, "ln_bf_err": 0.04})
    doc["comparison"]["reliability"]["nested_checks"] = {"coupled_chains": c}
    validate_summary(json.loads(json.dumps(doc)))
    doc["comparison"]["reliability"]["nested_checks"]["coupled_chains"]["extra"] = 1.0
    with pytest.raises(InputError):
        validate_summary(json.loads(json.dumps(doc)))


def test_budget_summary_fields(summary):
    """A summary carrying an evidence budget validates, and a budget lacking a documented
    field or holding an undocumented one is refused."""
    doc = copy.deepcopy(summary)
    a, b = list(doc["models"])[:2]
    row = {"dataset": "map", "ln_k": 1.0, "ln_k_err": 0.1}
    doc["comparison"].pop("evidence_budget_note", None)
    doc["comparison"]["evidence_budget"] = {
        "families": [a, b], "order": ["map"], "ln_k": 1.0, "ln_k_err": 0.1,
        "sequential": [row],
        "leave_one_out": [{"dataset": "map", "ln_k_without": 0.0, "ln_k_without_err": None,
                           "added_last": 1.0, "added_last_err": 0.1}],
        "method": "m", "n_particles": 10, "n_islands": 2, "warnings": []}
    validate_summary(doc)
    for f in SUMMARY_FIELDS:
        if f.path.startswith("comparison.evidence_budget.") and f.required:
            assert f.path.split(".")[2].replace("[]", "") in doc["comparison"]["evidence_budget"]
    del doc["comparison"]["evidence_budget"]["sequential"][0]["ln_k"]
    with pytest.raises(InputError, match=r"sequential\[0\]\.ln_k"):
        validate_summary(doc)


@pytest.mark.parametrize("path, value, match", [
    (("models", 0, "log_evidence"), "12", "type number"),
    (("models", 0, "one_dimensional"), 1, "type boolean"),
    (("comparison", "p_one_dimensional"), math.inf, "type number"),   # JSON has no infinity
    (("models", 0, "parameters", 0, "unit"), None, "type string"),
    (("reliable",), None, "type boolean"),
])
def test_wrong_types_are_named(summary, path, value, match):
    doc = copy.deepcopy(summary)
    node, where = doc, []
    for p in path[:-1]:
        key = list(node)[p] if isinstance(p, int) else p
        node, where = node[key], where + [key]
    last = path[-1]
    node[last] = value
    with pytest.raises(InputError, match=match) as exc:
        validate_summary(doc)
    assert ".".join(where + [last]) in str(exc.value)


def test_missing_and_undocumented_fields_are_named(summary):
    doc = copy.deepcopy(summary)
    name = next(iter(doc["models"]))
    del doc["models"][name]["log_evidence_err"]
    with pytest.raises(InputError, match=f"models.{name}.log_evidence_err"):
        validate_summary(doc)
    doc = copy.deepcopy(summary)
    first = next(iter(doc["models"][name]["parameters"]))
    doc["models"][name]["parameters"][first]["mean"] = 1.0
    with pytest.raises(InputError, match="'mean'"):
        validate_summary(doc)
    doc = copy.deepcopy(summary)
    doc["comparison"]["pairs"][0]["extra"] = 1
    with pytest.raises(InputError, match=r"pairs\[0\]"):
        validate_summary(doc)
    with pytest.raises(InputError, match="JSON object"):
        validate_summary([])


def test_nullable_blocks_and_optional_fields(summary):
    doc = copy.deepcopy(summary)
    for m in doc["models"].values():
        m["laplace"] = None
        m["savage_dickey"] = None
        m["loo"] = {"error": "ValueError: no pointwise log-likelihood"}
    validate_summary(doc)
    doc["models"][next(iter(doc["models"]))]["diagnostics"] = None
    with pytest.raises(InputError, match="diagnostics"):
        validate_summary(doc)


def test_schema_markdown_documents_every_field():
    text = schema_markdown()
    rows = [ln for ln in text.splitlines() if ln.startswith("| `")]
    assert len(rows) == len(SUMMARY_FIELDS)
    for f in SUMMARY_FIELDS:
        assert f"`{f.path}`" in text
        assert f.meaning.split()[0] in text
    assert "| field | type | unit | meaning |" in text

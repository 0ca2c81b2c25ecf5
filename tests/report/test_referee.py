"""What a referee reads in report.md: goodness of fit beside the verdict, the bad-fit and
prior-bound warnings, what one-dimensional means, the verdict's reliability apart from each
family's posterior, and a methods paragraph written from what ran."""
from __future__ import annotations

import copy
import re

import numpy as np
import pytest

from evidence1d.report.markdown import render_markdown, report_context


@pytest.fixture(scope="module")
def context(run_dir):
    from evidence1d.results import load_results
    out, _ = run_dir
    return report_context(load_results(out))


def _methods(text):
    return text.split("## Methods", 1)[1].split("References:", 1)[0]


def test_goodness_of_fit_is_in_the_summary_and_next_to_the_verdict(run_dir, summary):
    out, _ = run_dir
    text = (out / "report.md").read_text(encoding="utf-8")
    for name, m in summary["models"].items():
        assert set(m["goodness_of_fit"]) == {"map", "chi", "heat"}
        for f in m["goodness_of_fit"].values():
            assert f["chi2_per_point"] == pytest.approx(f["chi2"] / f["n_points"])
            assert 0.0 <= f["p_value"] <= 1.0
    verdict_at = text.index("**Verdict**")
    fit_at = text.index("### Goodness of fit")
    assert verdict_at < fit_at < text.index("## Model comparison")
    assert "1 + 5√(2/N)" in text and "p < 0.001" in text


def test_a_winner_that_fits_badly_gets_a_loud_warning(summary, context):
    doc = copy.deepcopy(summary)
    best = doc["comparison"]["best"]
    doc["comparison"]["winner_fit_warnings"] = [f"the winning family {best} fits chi badly"]
    text = render_markdown(doc, context)
    head = text.split("**Verdict**", 1)[0]
    assert "**BAD FIT**" in head and best in head
    assert "**BAD FIT**" not in render_markdown(
        {**summary, "comparison": {**summary["comparison"], "winner_fit_warnings": []}},
        context)


def test_bounds_are_flagged_with_advice(summary, context):
    doc = copy.deepcopy(summary)
    best = doc["comparison"]["best"]
    doc["models"][best]["prior_bounds"] = [{
        "parameter": "g", "bound": "upper", "bound_value": 2.4, "mass": 0.3,
        "mass_outside": 0.0, "nested_limit": False, "advice": "widen the prior"}]
    text = render_markdown(doc, context)
    assert "> **Prior bound**" in text.split("## Model comparison")[0]
    section = text.split("### Parameters at a prior bound", 1)[1].split("##", 1)[0]
    assert "`g`" in section and "upper = 2.4" in section and "30%" in section
    assert "widen the prior" in section


def test_what_one_dimensional_means_is_stated(run_dir, summary):
    out, _ = run_dir
    text = (out / "report.md").read_text(encoding="utf-8")
    od = summary["comparison"]["one_dimensional"]
    assert od["families"] == [n for n, m in summary["models"].items() if m["one_dimensional"]]
    assert "What one-dimensional means here" in text and od["definition"] in text
    for lim in od["nested_limits"]:
        assert not lim["counted"] and lim["family"] in od["definition"]


def test_a_losing_family_with_a_bad_chain_is_a_note_not_a_verdict(summary, context):
    doc = copy.deepcopy(summary)
    c = doc["comparison"]
    loser = next(n for n in doc["models"] if n != c["best"])
    c["reliability"].update(verdict_reliable=True, reasons=[], winner_diagnostics_ok=True,
                            posterior_notes={loser: "its chain failed; not the verdict's"})
    doc["reliable"] = True
    c["verdict"] = c["verdict"].split(". ", 1)[-1] if c["verdict"].startswith("UNRELIABLE") \
        else c["verdict"]
    text = render_markdown(doc, context)
    assert "UNRELIABLE" not in text.split("## Model comparison")[0]
    assert f"Note on `{loser}`: its chain failed" in text


def test_methods_text_follows_what_ran(summary, context):
    base = render_markdown(summary, context)
    s0 = next(iter(summary["models"].values()))["sampler"]
    shares = {m["move"]: m["share"] for m in s0["moves"]}
    for move, share in shares.items():
        assert f"{share:.0%}" in _methods(base)
    assert f"{s0['evidence_particles']} particles in each of {s0['evidence_islands']}" \
        in _methods(base)
    # the final importance stage is described with what it did on each family
    assert s0["evidence_importance_draws"] > 0
    assert f"drew {s0['evidence_importance_draws']} points from a defensive" in _methods(base)
    for n, m in summary["models"].items():
        k = m["sampler"]["evidence_importance_islands"]
        assert 0 <= k <= m["sampler"]["evidence_islands"]
        assert f"{n} {k} of {m['sampler']['evidence_islands']}" in _methods(base)
    assert "Hesterberg" in base.split("## Methods", 1)[1]
    doc = copy.deepcopy(summary)
    for m in doc["models"].values():
        m["sampler"]["moves"] = [{"move": "differential_evolution", "share": 0.6},
                                 {"move": "snooker", "share": 0.2},
                                 {"move": "stretch", "share": 0.2}]
        m["sampler"]["marginalised"] = []
        m["sampler"]["evidence_particles"] = 123
        m["sampler"]["evidence_islands"] = 5
        m["sampler"]["n_walkers"] = 34
        m["diagnostics"]["thresholds"]["rhat_max"] = 1.2
    text = _methods(render_markdown(doc, context))
    assert "kernel density" not in text
    assert "60% differential-evolution moves" in text and "20% stretch moves" in text
    assert "every nuisance was sampled" in text and "integrated out" not in text
    assert "123 particles in each of 5 independent islands" in text
    for m in doc["models"].values():
        m["sampler"]["evidence_importance_draws"] = 0
    text0 = render_markdown(doc, context)
    assert "defensive" not in _methods(text0) and "Hesterberg" not in text0
    assert "34 walkers" in text and "R-hat below 1.2" in text
    full = render_markdown(doc, context)
    refs = full.split("## Methods", 1)[1].split("## For a referee", 1)[0]
    assert "Markov chains for exploring" not in refs     # only the moves used are cited
    assert "Markov chains for exploring" in base or not any(
        m["move"] == "population" for m in s0["moves"])
    assert re.search(r"independence proposals", _methods(base)) or not any(
        m["move"] == "population" for m in s0["moves"])


def test_prior_sensitivity_table(run_dir, summary):
    out, _ = run_dir
    ps = summary["comparison"]["prior_sensitivity"]
    assert ps["families"] == sorted(summary["models"], key=lambda n: -summary["models"][n][
        "log_evidence"])[:2]
    physical = {p for m in summary["models"].values() for p, v in m["parameters"].items()
                if v["role"] == "physical"}
    assert {r["parameter"] for r in ps["rows"]} <= physical
    for r in ps["rows"]:
        assert (r["ln_k"] is None) is (r["method"] in ("needs a re-run",
                                                       "outside the model's domain"))
        assert (r["method"] != "reweighting") is bool(r["note"])
    text = (out / "report.md").read_text(encoding="utf-8")
    assert "### Prior sensitivity" in text
    assert "Prior sensitivity: every physical prior" in text.split("## For a referee")[1]


def test_metal_context_when_chi0_and_gamma_are_fitted(run_dir, summary):
    from evidence1d.analysis.metal import wilson_ratio
    from evidence1d.results import load_results
    out, _ = run_dir
    res = load_results(out)
    text = (out / "report.md").read_text(encoding="utf-8")
    assert "### Metal context" in text
    for name, mr in res.models.items():
        mc = summary["models"][name]["metal"]
        cols = [mr.full_names.index("chi0"), mr.full_names.index("gamma_e")]
        x = np.asarray(mr.full_samples)[:, cols]
        rw = wilson_ratio(x[:, 0], x[:, 1])
        assert mc["fraction_gamma_nonpositive"] == pytest.approx(np.mean(~np.isfinite(rw)))
        if mc["wilson_ratio"] is not None:
            assert mc["wilson_ratio"]["median"] == pytest.approx(
                np.median(rw[np.isfinite(rw)]))


def test_a_fit_without_finite_predictions_still_renders(summary, context):
    from evidence1d.report.latex import render_tables
    from evidence1d.report.schema import validate_summary
    doc = copy.deepcopy(summary)
    f = next(iter(next(iter(doc["models"].values()))["goodness_of_fit"].values()))
    f.update(chi2=None, chi2_per_point=None, chi2_min_draws=None, bad_fit=True)
    validate_summary(doc)
    assert "| — | — |" in render_markdown(doc, context)
    assert "---" in render_tables(doc, context)


def test_a_secure_ranking_with_a_badly_fitting_winner_is_not_called_reliable(summary, context):
    doc = copy.deepcopy(summary)
    c = doc["comparison"]
    c["reliability"].update(verdict_reliable=True, reasons=[], winner_diagnostics_ok=True)
    doc["reliable"] = True
    c["winner_fit_warnings"] = ["the winning family fits map badly: χ²/N = 9"]
    text = render_markdown(doc, context)
    line = next(ln for ln in text.splitlines() if ln.startswith("Reliability of the verdict"))
    assert "FITS BADLY" in line and "verdict: reliable" not in line
    c["winner_fit_warnings"] = []
    line = next(ln for ln in render_markdown(doc, context).splitlines()
                if ln.startswith("Reliability of the verdict"))
    assert line.startswith("Reliability of the verdict: reliable.")


def test_sensitivity_text_separates_missing_runs_from_rows_outside_a_domain():
    from evidence1d.report.referee import sensitivity_section
    row = {"parameter": "delta", "change": "width × 2", "ln_k": None, "ln_k_err": None,
           "p_one_dimensional": None, "note": "b: the changed prior leaves the model's domain"}
    ps = {"families": ["a", "b"], "ln_k": 3.0, "method": "reweighting",
          "rows": [dict(row, method="outside the model's domain"),
                   dict(row, parameter="J", method="needs a re-run", note="b: not re-run")]}
    text = "\n".join(sensitivity_section({"comparison": {"prior_sensitivity": ps}}))
    assert "1 row(s) could not be reweighted and were not re-run" in text
    assert "1 row(s) change a prior beyond values a family's likelihood accepts" in text
    assert "| `delta` | width × 2 | — | — | outside the model's domain |" in text


def test_sensitivity_panel_labels_rows_without_a_number_by_their_method():
    import matplotlib.pyplot as plt

    from evidence1d.report.figures.comparison import _sensitivity_panel
    row = {"parameter": "delta", "change": "width × 2", "ln_k": None, "ln_k_err": None}
    sens = {"families": ["a", "b"], "ln_k": 3.0,
            "rows": [dict(row, method="outside the model's domain"),
                     dict(row, parameter="J", method="needs a re-run"),
                     dict(row, parameter="g", ln_k=3.1, ln_k_err=0.1, method="reweighting")]}
    fig, ax = plt.subplots()
    _sensitivity_panel(ax, sens, titles=False, symbols={})
    from matplotlib.text import Text
    fig.canvas.draw()
    texts = {t.get_text() for t in fig.findobj(Text)}
    plt.close(fig)
    assert {"outside the model's domain", "needs a re-run"} <= texts

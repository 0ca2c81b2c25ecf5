"""run(): repeatability, resume, refusal to overwrite, the log file, the verdict's
reliability and the records the report is written from, the evidence budget and the
prior-sensitivity re-runs."""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.analysis.sensitivity import prior_variants
from evidence1d.inference.evidence import tempered_evidence

TEXT = (CASE_YAML.replace("  - spinon_continuum", "  - paramagnon\n  - gapped_spin_wave")
        .replace("sampler: {steps: 200, particles: 100, islands: 2}",
                 "sampler: {steps: 120, particles: 60, islands: 2, checkpoint_every: 40}"))


def _numbers(folder):
    s = json.loads((folder / "summary.json").read_text())
    return {m: (v["log_evidence"], v["log_evidence_err"],
                {p: q["median"] for p, q in v["parameters"].items()})
            for m, v in s["models"].items()}


@pytest.fixture(scope="module")
def first_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("runner")
    case = evidence1d.load_case(write_valid_case(folder / "case", TEXT))
    out = folder / "out1"
    evidence1d.run_to_folder(case, out=out, progress=False, figures=False, workers=1, budget=False)
    return case, out


def test_same_seed_same_numbers(first_run, tmp_path):
    case, out = first_run
    out2 = tmp_path / "out2"
    evidence1d.run_to_folder(case, out=out2, progress=False, figures=False, workers=2, budget=False)
    assert _numbers(out) == _numbers(out2)       # workers do not change the numbers


def test_run_computes_without_writing(first_run, tmp_path, monkeypatch):
    """run() is a computation: no folder, no log, no checkpoint; the same numbers as the
    run that wrote its folder."""
    case, out = first_run
    monkeypatch.chdir(tmp_path)
    case_dir = case.path.parent
    before = sorted(p for p in case_dir.rglob("*"))
    res = evidence1d.run(case, progress=False, figures=False, workers=1, budget=False)
    assert sorted(p for p in case_dir.rglob("*")) == before
    assert not any(tmp_path.iterdir()) and not case.output.exists()
    assert res.out is None
    s = json.loads((out / "summary.json").read_text())
    for name, mr in res.models.items():
        assert mr.evidence.log_z == s["models"][name]["log_evidence"]
        assert "figures" not in mr.analysis


def test_refuses_to_overwrite(first_run):
    case, out = first_run
    with pytest.raises(evidence1d.InputError, match="exists; use --overwrite"):
        evidence1d.run_to_folder(case, out=out, progress=False, figures=False)


def test_resume_reproduces_the_run(first_run, tmp_path):
    import shutil
    case, out = first_run
    out3 = tmp_path / "out3"
    shutil.copytree(out, out3)
    (out3 / "summary.json").unlink()
    res = evidence1d.run_to_folder(case, out=out3, resume=True, progress=False, figures=False,
                         workers=1, budget=False)
    assert _numbers(out3) == _numbers(out)
    for m in res.models.values():
        assert m.posterior.resumed_from == m.posterior.n_steps   # nothing sampled again


def test_log_file_written(first_run):
    _, out = first_run
    text = (out / "run.log").read_text()
    assert "ln Z" in text and "verdict" in text and "report written" in text


def test_reliability_and_records_in_the_summary(first_run):
    from evidence1d.inference.posterior import POPULATION_WEIGHT
    _, out = first_run
    s = json.loads((out / "summary.json").read_text())
    c = s["comparison"]
    rel = c["reliability"]
    assert s["reliable"] is rel["verdict_reliable"]
    assert c["verdict"].startswith("UNRELIABLE") is (not s["reliable"])
    failed = {n for n, m in s["models"].items() if not m["diagnostics"]["ok"]}
    assert set(c["posterior_unreliable"]) == failed
    assert set(rel["posterior_notes"]) == failed - {c["best"]}   # notes, not the verdict
    assert c["unreliable"] == ([c["best"]] if c["best"] in failed else [])
    assert c["evidence_budget"] is None and "not asked for" in c["evidence_budget_note"]
    for name, m in s["models"].items():
        assert m["posterior_reliable"] is m["diagnostics"]["ok"]
        assert set(m["goodness_of_fit"]) == {"map", "chi", "heat"}
        moves = {mv["move"]: mv["share"] for mv in m["sampler"]["moves"]}
        assert sum(moves.values()) == pytest.approx(1.0)
        if "population" in moves:                 # the tempered population shaped it
            assert moves["population"] == pytest.approx(POPULATION_WEIGHT)
        assert m["sampler"]["evidence_particles"] == 60
        assert m["sampler"]["evidence_islands"] == 2
        assert m["sampler"]["n_steps"] == 120
    # the methods paragraph is written from these records (the case's sampler settings)
    methods = (out / "report.md").read_text(encoding="utf-8").split("## Methods")[1]
    methods = methods.split("References:")[0]
    assert "with 60 particles in each of 2 independent islands" in methods
    assert "120 steps per walker" in methods


@pytest.mark.slow
def test_evidence_budget_of_a_small_case(tmp_path):
    """Two likelihood terms (chi, heat), two families: the budget is in summary.json and
    report.md, its sequential terms add up to the quoted ln K and the last dataset's
    leave-one-out uses the sequential prefix (about 20–40 s)."""
    from evidence1d.report.schema import validate_summary
    text = (CASE_YAML.split("  - name: map")[0] + "  - name: chi" +
            CASE_YAML.split("  - name: chi", 1)[1])
    text = (text.replace("  - spinon_continuum\n", "  - spinon_continuum\n  - paramagnon\n")
            .replace("sampler: {steps: 200, particles: 100, islands: 2}",
                     "sampler: {steps: 40, particles: 24, islands: 2, importance_draws: 6}"))
    case = evidence1d.load_case(write_valid_case(tmp_path / "case", text))
    res = evidence1d.run_to_folder(case, out=tmp_path / "out", progress=False, figures=False)
    s = json.loads((tmp_path / "out" / "summary.json").read_text())
    validate_summary(s)
    b = s["comparison"]["evidence_budget"]
    assert b["order"] == ["chi", "heat"] and b["families"][0] == s["comparison"]["best"]
    lz = {n: m.evidence.log_z for n, m in res.models.items()}
    assert b["ln_k"] == pytest.approx(lz[b["families"][0]] - lz[b["families"][1]])
    assert sum(r["ln_k"] for r in b["sequential"]) == pytest.approx(b["ln_k"])
    loo = {r["dataset"]: r for r in b["leave_one_out"]}
    assert loo["heat"]["ln_k_without"] == pytest.approx(b["sequential"][0]["ln_k"])
    for r in b["leave_one_out"]:
        assert r["added_last"] == pytest.approx(b["ln_k"] - r["ln_k_without"])
    report = (tmp_path / "out" / "report.md").read_text(encoding="utf-8")
    assert "### Which datasets decide the verdict" in report and "| `heat` |" in report
    # prior sensitivity: rows that reweighting cannot give are re-run (a full run), and the
    # re-run ln K agrees with independent tempered evidences of the changed cases
    ps = s["comparison"]["prior_sensitivity"]
    assert all(r["method"] != "needs a re-run" and r["ln_k"] is not None for r in ps["rows"])
    rerun = [r for r in ps["rows"] if r["rerun_families"]]
    assert rerun, "this case's posteriors touch prior bounds (measured): rows must re-run"
    assert "re-run" in report.split("### Prior sensitivity", 1)[1]
    r = rerun[0]
    a, b = ps["families"]
    lz = {}
    for fam in (a, b):
        m = res.models[fam]
        if r["parameter"] not in m.evidence.names:
            lz[fam] = (m.evidence.log_z, m.evidence.log_z_err)
            continue
        prior = case.problem(fam).prior.prior_of(r["parameter"])
        new = next(v[1] for v in prior_variants(prior) if v[0] == r["change"])
        pb = case.replace(priors={fam: {r["parameter"]: new}}).problem(fam)
        ev = tempered_evidence(pb.log_likelihood, pb.prior, rng=np.random.default_rng(99),
                               n_particles=100, n_islands=4, progress=False,
                               importance_draws=600)
        lz[fam] = (ev.log_z, ev.log_z_err)
    want = lz[a][0] - lz[b][0]
    tol = 4.0 * math.hypot(r["ln_k_err"], math.hypot(lz[a][1], lz[b][1])) + 0.5
    assert abs(r["ln_k"] - want) < tol, (r, want, tol)
    # the budget runs on an executor the caller owns (the executor contract of
    # evidence1d.parallel) with the same numbers as on local processes: the islands' seeds
    # come from the run's seed, not from where they run
    from concurrent.futures import ThreadPoolExecutor
    from evidence1d.analysis.stage import run_budget
    from evidence1d.runner import _evidence_options
    local = run_budget(case, res.models, res.settings, _evidence_options(res.settings),
                       res.seed, False, 1)
    with ThreadPoolExecutor(max_workers=2) as ex:
        remote = run_budget(case, res.models, res.settings, _evidence_options(res.settings),
                            res.seed, False, None, ex)
    assert remote["sequential"] == local["sequential"]
    assert remote["leave_one_out"] == local["leave_one_out"]
    quoted = s["comparison"]["evidence_budget"]["sequential"]
    assert [r["ln_k"] for r in local["sequential"]] == pytest.approx([r["ln_k"] for r in quoted],
                                                                     rel=1e-12)


def test_nuisances_drawn_for_an_even_subset_of_a_long_chain(first_run, monkeypatch):
    """Above MARGINAL_DRAWS samples the nuisances are drawn for that many evenly spaced
    samples; full_samples pairs each draw with its own sample, and the parameter table's
    nuisance quantiles stay those of the subset (the rule of the runner's notes)."""
    import evidence1d.runner as runner
    case, out = first_run
    monkeypatch.setattr(runner, "MARGINAL_DRAWS", 100)
    res = evidence1d.run(case, progress=False, figures=False, workers=1, budget=False,
                         models=["paramagnon", "gapped_spin_wave"])
    for name, mr in res.models.items():
        n = len(mr.posterior.samples)
        assert n > 100 and mr.nuisance_names
        rows = np.asarray(mr.nuisance_rows)
        assert rows.size == 100 and rows[0] == 0 and rows[-1] == n - 1
        assert np.all(np.diff(rows) > 0)
        full = np.asarray(mr.full_samples)
        assert full.shape == (100, len(mr.names) + len(mr.nuisance_names))
        np.testing.assert_array_equal(full[:, :len(mr.names)],
                                      np.asarray(mr.posterior.samples)[rows])
        j = len(mr.names)
        table = mr.analysis["parameter_table"]["parameters"]
        n0 = mr.nuisance_names[0]
        assert table[n0]["median"] == pytest.approx(float(np.median(full[:, j])))


def test_quick_caps_every_setting_and_asks_the_diagnostics_own_ess(tmp_path):
    """--quick lowers each sampler setting to at most its QUICK value and never raises one;
    the chain's ESS target is the diagnostics' floor (so a converged quick chain stops at
    the first check that passes), and a stop rule switched off (posterior_ess 0) stays off."""
    from evidence1d.inference.diagnostics import THRESHOLDS
    from evidence1d.runner import QUICK, effective_settings
    case = evidence1d.load_case(write_valid_case(tmp_path / "case", CASE_YAML))
    full = effective_settings(case)
    quick = effective_settings(case, quick=True)
    assert quick["posterior_ess"] == THRESHOLDS["ess_min"] < full["posterior_ess"]
    for key, cap in QUICK.items():
        assert quick[key] == min(full[key], cap)
    off = effective_settings(case.replace(sampler={"posterior_ess": 0}), quick=True)
    assert off["posterior_ess"] == 0


def test_a_single_model_is_refused_before_any_work(tmp_path, monkeypatch):
    # a run compares families: with one model it used to compute the family's evidence and
    # posterior and only then fail in the comparison ("needs at least two models")
    import evidence1d
    from evidence1d import runner
    from evidence1d.errors import InputError
    case = evidence1d.load_case(write_valid_case(tmp_path / "case", TEXT))

    def refuse(*args, **kwargs):
        raise AssertionError("work started")

    monkeypatch.setattr(runner, "effective_settings", refuse)
    with pytest.raises(InputError, match="at least two"):
        evidence1d.run(case, models=["spinon_continuum"], progress=False, figures=False)
    # from the command line with --overwrite: refused before the old results are replaced
    old = tmp_path / "old"
    old.mkdir()
    (old / "summary.json").write_text("{}")
    from evidence1d.cli import main
    code = main(["run", str(case.path), "--models", "spinon_continuum", "--overwrite",
                 "--out", str(old)])
    assert code == 2 and (old / "summary.json").read_text() == "{}"

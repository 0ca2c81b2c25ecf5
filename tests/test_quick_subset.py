"""``--quick`` on a dense map: a regular subset of each large spectrum, fitted exactly as the
full run fits those points, and said so in the log and the report."""
from __future__ import annotations

import shutil

import numpy as np

import evidence1d
import pytest
from casefactory import CASE_YAML, write_valid_case
from evidence1d import runner
from evidence1d.runner import quick_subset


def _map(case):
    return next(ds for ds in case.datasets if ds.name == "map")


def test_subset_keeps_one_point_in_k_and_nothing_else(valid_case):
    case = evidence1d.load_case(valid_case)
    full = _map(case)
    assert full.n == 30
    var, info = quick_subset(case, limit=8)
    assert info == {"map": {"kept": 8, "of": 30, "every": 4}}      # k = ⌈30/8⌉
    part = _map(var)
    for col, values in full.x.items():
        np.testing.assert_array_equal(part.x[col], np.asarray(values)[::4])
    np.testing.assert_array_equal(part.y, full.y[::4])
    np.testing.assert_array_equal(part.err, full.err[::4])
    np.testing.assert_array_equal(part.lines, np.asarray(full.lines)[::4])
    for a, b in zip(case.datasets, var.datasets):              # thermodynamics untouched
        if a.name != "map":
            assert a is b
    assert _map(case).n == 30                                 # the case itself unchanged
    same, none = quick_subset(case, limit=30)
    assert same is case and none == {}


def test_subset_likelihood_equals_a_case_read_from_those_rows(valid_case, tmp_path):
    """The reduced case is the case a user would get by deleting the other rows of the file:
    same points, resolution, nuisance priors and likelihood."""
    case = evidence1d.load_case(valid_case)
    var, _ = quick_subset(case, limit=15)
    folder = tmp_path / "rows"
    shutil.copytree(valid_case.parent, folder)
    full, part = _map(case), _map(var)
    text = full.path.read_text().splitlines(keepends=True)
    data_lines = {int(i) for i in full.lines}
    keep = {int(i) for i in part.lines}
    # ``lines`` are 1-based file lines
    rows = [t for i, t in enumerate(text, start=1) if i not in data_lines or i in keep]
    (folder / full.path.name).write_text("".join(rows))
    other = evidence1d.load_case(folder / valid_case.name)
    assert _map(other).n == 15
    rng = np.random.default_rng(3)
    for model in case.models:
        a, b = var.problem(model), other.problem(model)
        assert a.names == b.names
        theta = a.prior_transform(rng.uniform(0.05, 0.95, (6, len(a.names))))
        np.testing.assert_allclose(a.log_likelihood(theta), b.log_likelihood(theta),
                                   rtol=1e-12, atol=1e-9)


def test_quick_run_says_what_it_fitted(tmp_path, monkeypatch):
    monkeypatch.setattr(runner, "QUICK_POINTS", 10)
    text = CASE_YAML.replace("  - spinon_continuum", "  - spinon_continuum\n  - gapped_spin_wave")
    case = evidence1d.load_case(write_valid_case(tmp_path / "case", text)).replace(
        sampler={"steps": 40, "particles": 40})
    res = evidence1d.run_to_folder(case, out=tmp_path / "out", quick=True, progress=False,
                                   figures=False, workers=1)
    ds = {d["name"]: d for d in res.context["datasets"]}
    assert ds["map"]["n"] == 10 and ds["map"]["quick_subset"] == \
        {"kept": 10, "of": 30, "every": 3}
    assert "quick_subset" not in ds["chi"]
    report = (tmp_path / "out" / "report.md").read_text()
    assert "'map' on one point in 3 (10 of 30)" in report.splitlines()[2]
    assert "'map' fitted on one point in 3 in file order (10 of 30 points)" in \
        (tmp_path / "out" / "run.log").read_text()
    # the fitted points are those of the goodness-of-fit table
    assert res.models["spinon_continuum"].analysis["goodness_of_fit"]["map"]["n_points"] == 10


def test_the_cli_help_states_the_quick_limit(capsys):
    # the help text is written out (the CLI does not import the runner to print it)
    from evidence1d import cli
    with pytest.raises(SystemExit):
        cli.main(["run", "--help"])
    assert f"more than {runner.QUICK_POINTS} points" in " ".join(capsys.readouterr().out.split())

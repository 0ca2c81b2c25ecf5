"""End to end: every bundled case study, reduced settings, checked against expected.yaml.

Each case study's data are simulated from a stated scenario (see its generate.py: the
single-crystal cases use the out-of-family generators of tests/misspecification, the powder
case evidence1d's own simulator); expected.yaml names the family that must win, the minimum
ln Bayes factor against every other family, the parameters whose 95 % posterior interval
must contain the truth (``truth_in_95``) and, where the generator's physics differs from
every family's, the parameters whose posterior median must lie within a stated relative
tolerance of the truth (``truth_within: {name: [truth, tolerance]}``) and, optionally, the
largest χ²/N the winner may reach on each dataset (``winner_chi2_per_point_below``: a verdict is
only worth its winner's fit).
"""
from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pytest
import yaml

import evidence1d

ROOT = Path(__file__).resolve().parents[1] / "case_studies"
CASES = sorted(p.name for p in ROOT.iterdir() if (p / "expected.yaml").is_file())


@pytest.mark.slow
@pytest.mark.parametrize("name", CASES)
def test_case_study_outcome(name, tmp_path):
    src = ROOT / name
    dst = tmp_path / name
    shutil.copytree(src, dst, ignore=shutil.ignore_patterns("results"))
    expected = yaml.safe_load((dst / "expected.yaml").read_text())
    if expected.get("end_to_end_test") is False:
        pytest.skip(expected["why_not_end_to_end"])
    # every check below reads the evidences and the evidence stage's final populations, not
    # the emcee chains: a short chain keeps the run complete (report, goodness of fit, the
    # folder) at a fraction of the cost
    case = evidence1d.load_case(dst / "case.yaml").replace(sampler={"steps": 60})
    res = evidence1d.run_to_folder(case, quick=True, progress=False, figures=False,
                                   out=tmp_path / "out", workers=2)
    assert (tmp_path / "out" / "summary.json").is_file()
    lz = {n: m.evidence.log_z for n, m in res.models.items()}
    err = {n: m.evidence.log_z_err for n, m in res.models.items()}
    winner = expected["winner"]
    assert max(lz, key=lz.get) == winner, lz
    for other in lz:
        if other != winner:
            ln_k = lz[winner] - lz[other]
            assert ln_k - 3 * np.hypot(err[winner], err[other]) > expected["min_ln_k"], (other, ln_k)
    # The truth is checked against the tempered sampler's final population (equally
    # weighted posterior particles of independent islands), which does not depend on the
    # length of the (here short) emcee chains.
    mr = res.models[winner]
    samples = mr.evidence.posterior_samples
    names = list(mr.evidence.names)
    for pname, truth in (expected.get("truth_in_95") or {}).items():
        col = samples[:, names.index(pname)]
        lo, hi = np.percentile(col, [2.5, 97.5])
        assert lo <= truth <= hi, f"{pname}: truth {truth} outside [{lo:.4g}, {hi:.4g}]"
    for pname, (truth, tol) in (expected.get("truth_within") or {}).items():
        med = float(np.median(samples[:, names.index(pname)]))
        assert abs(med / truth - 1.0) <= tol, f"{pname}: median {med:.4g}, truth {truth}"
    fits = mr.analysis["goodness_of_fit"]
    for ds, limit in (expected.get("winner_chi2_per_point_below") or {}).items():
        f = fits[ds]
        got = min(f["chi2_per_point"], f["chi2_min_draws"] / f["n_points"])
        assert got < limit, f"{winner} fits {ds} at chi2/N = {got:.3g} (expected < {limit})"


@pytest.mark.parametrize("name", CASES)
def test_check_prints_table_for_bundled_case(name, capsys):
    from evidence1d.cli import main
    assert main(["check", str(ROOT / name / "case.yaml")]) == 0
    out = capsys.readouterr().out
    assert "case is valid" in out and "spinon_continuum" in out


@pytest.mark.parametrize("name", CASES)
def test_bundled_data_are_marked_simulated(name):
    case = evidence1d.load_case(ROOT / name / "case.yaml")
    for ds in case.datasets:
        assert "SIMULATED" in ds.path.read_text().splitlines()[0]

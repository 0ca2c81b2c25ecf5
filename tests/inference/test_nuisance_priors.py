"""Default nuisance priors never look at the data values, and nuisance draws stay inside the
declared prior support on the bundled case studies."""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import evidence1d
from casefactory import write_valid_case

ROOT = Path(__file__).resolve().parents[2] / "case_studies"


def _scale_values(path: Path, factor: float, skip: int):
    """Multiply the value and error columns of a data file (after ``skip`` header lines)."""
    lines = path.read_text().splitlines()
    out = lines[:skip]
    for line in lines[skip:]:
        sep = "," if "," in line else ("\t" if "\t" in line else " ")
        parts = [p.strip() for p in line.split(sep)]
        parts[-2] = f"{float(parts[-2]) * factor:.8g}"
        parts[-1] = f"{float(parts[-1]) * factor:.8g}"
        out.append((sep + " " if sep == "," else sep).join(parts))
    path.write_text("\n".join(out) + "\n")


def test_default_nuisance_priors_ignore_the_measured_values(tmp_path):
    a = evidence1d.load_case(write_valid_case(tmp_path / "a"))
    folder = tmp_path / "b"
    write_valid_case(folder)
    _scale_values(folder / "map.csv", 37.0, 2)
    _scale_values(folder / "chi.csv", 0.1, 1)
    _scale_values(folder / "heat.csv", 5.0, 1)
    b = evidence1d.load_case(folder / "case.yaml")
    assert not np.allclose(a.datasets[0].y, b.datasets[0].y)
    pa, pb = a.problem("spinon_continuum"), b.problem("spinon_continuum")
    nuis = [n for n in pa.all_names if n not in pa.card.parameters]
    assert nuis
    for n in nuis:
        assert pa.declared_priors[n] == pb.declared_priors[n], n


def _cases():
    out = []
    for folder in sorted(ROOT.iterdir()):
        if (folder / "case.yaml").is_file():
            case = evidence1d.load_case(folder / "case.yaml")
            if any(ds.spec.powder for ds in case.datasets):
                continue          # converged powder averages are too slow for a unit test
            out.append(folder.name)
    return out


@pytest.mark.parametrize("name", _cases())
def test_nuisance_draws_inside_prior_support_on_case_studies(name, rng):
    # parameter sets drawn from the prior (where the unconstrained conditional posterior of
    # the nuisances often lies far outside their bounds): every conditional draw, and so
    # every posterior quantile of every marginalised nuisance, lies in its prior support
    case = evidence1d.load_case(ROOT / name / "case.yaml")
    for model in case.models:
        prob = case.problem(model)
        theta = prob.prior_transform(rng.random((48, len(prob.names))))
        draws = prob.draw_marginalised(theta, rng)
        for j, n in enumerate(prob.marginalised):
            lo, hi = prob.declared_priors[n].support
            col = draws[:, j]
            ok = np.isfinite(col)
            assert np.all((col[ok] >= lo) & (col[ok] <= hi)), (model, n)
            q = np.percentile(col[ok], [2.5, 16, 50, 84, 97.5])
            assert np.all((q >= lo) & (q <= hi)), (model, n)


@pytest.mark.slow
def test_posterior_nuisance_quantiles_inside_prior_support_after_a_run():
    # a real (quick) run of two flagship families (under the former Gaussian stand-in the
    # paramagnon's χ(T) fit pulled C_imp below 0, the gapped spin wave's C(T) fit γ_e):
    # every quantile of the parameter table and every drawn value of every marginalised
    # nuisance lies in its prior support
    from evidence1d.runner import run
    # the property holds for any draw of the samplers, so small ones suffice
    case = evidence1d.load_case(ROOT / "flagship" / "case.yaml").replace(
        sampler={"steps": 100, "particles": 80})
    res = run(case, quick=True, models=["gapped_spin_wave", "paramagnon"], progress=False,
              figures=False, workers=1, budget=False)
    for model, mr in res.models.items():
        prob = case.problem(model)
        table = mr.analysis["parameter_table"]["parameters"]
        assert mr.nuisance_names
        for j, n in enumerate(mr.nuisance_names):
            lo, hi = prob.declared_priors[n].support
            col = np.asarray(mr.nuisance_samples)[:, j]
            assert np.all((col >= lo) & (col <= hi)), (model, n)
            for q in ("q16", "median", "q84"):
                assert lo <= table[n][q] <= hi, (model, n, q, table[n][q])

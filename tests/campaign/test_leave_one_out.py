"""plan --leave-one-out: every replicate fitted again without each dataset; plan.json gives
the paired difference 2 ln K(all) − 2 ln K(without it) per dataset."""
from __future__ import annotations

import json

import numpy as np
import pytest

import evidence1d
from evidence1d.campaign.replicate import without_datasets
from evidence1d.cli import main
from evidence1d.results import load_record


def test_without_datasets_drops_the_data_and_their_parameters(two_family_case):
    case = two_family_case
    v = without_datasets(case.replace(), ["chi"])
    assert [ds.name for ds in v.datasets] == ["map", "heat"]
    assert [ds.name for ds in case.datasets] == ["map", "chi", "heat"]   # untouched
    for fam in case.models:
        full, reduced = case.problem(fam).full_names, v.problem(fam).full_names
        gone = {"chi0", "c_imp"}                 # the extras only χ(T) uses
        assert gone <= set(full) and not gone & set(reduced)
        assert not any(n.startswith("chi:") for n in reduced)
        assert set(reduced) < set(full)
    assert without_datasets(case, None) is case
    with pytest.raises(evidence1d.InputError, match="unknown dataset 'chj'"):
        without_datasets(case, ["chj"])
    with pytest.raises(evidence1d.InputError, match="leaves nothing to fit"):
        without_datasets(case, ["map", "chi", "heat"])


def test_plan_leave_one_out_end_to_end(two_family_case, tmp_path, capsys):
    out = tmp_path / "loo"
    code = main(["plan", str(two_family_case.path), "--leave-one-out", "--counting-times",
                 "1", "--replicates", "1", "--quick", "--processes", "--workers", "1",
                 "--no-figures", "--out", str(out), "--hours", "3"])
    assert code == 0
    printed = capsys.readouterr().out
    doc = json.loads((out / "plan.json").read_text())
    loo = doc["leave_one_out"]
    assert list(loo) == ["map", "chi", "heat"]
    assert list(doc["scopes"]) == ["all", "without-map", "without-chi", "without-heat"]
    assert doc["scopes"]["without-chi"]["label"] == "all spectra, 'chi' left out"
    full = load_record(out / "replicates" / "all-x1-0000.npz")[0]
    assert full["dropped"] == []
    for name in loo:
        rec = load_record(out / "replicates" / f"without-{name}-x1-0000.npz")[0]
        assert rec["dropped"] == [name] and rec["truth"] == full["truth"]
        (row,) = loo[name]["rows"]
        delta = 2.0 * full["ln_k_truth"] - 2.0 * rec["ln_k_truth"]
        assert row["n"] == 1 and row["hours"] == 3.0
        assert np.isclose(row["delta_median"], delta) and np.isclose(row["delta_mean"], delta)
        assert row["share_positive"] == float(delta > 0)
        assert loo[name]["statement"].startswith(f"'{name}' adds a median 2 ln K of")
        assert loo[name]["statement"] in printed
    # the spectrum left out is not counted longer; the others keep the case's errors at 1 ×
    rec = load_record(out / "replicates" / "without-chi-x1-0000.npz")[0]
    assert rec["scale"] == {"map": 1.0}
    page = (out / "plan.md").read_text()
    assert "What each dataset adds (leave-one-out)" in page and "| chi | 1 × (3 h) | 1 |" in page

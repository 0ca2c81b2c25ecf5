"""run(): repeatability, resume, refusal to overwrite, the log file."""
from __future__ import annotations

import json

import numpy as np
import pytest

import evidence1d
from casefactory import CASE_YAML, write_valid_case

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
    evidence1d.run(case, out=out, progress=False, figures=False, workers=1)
    return case, out


def test_same_seed_same_numbers(first_run, tmp_path):
    case, out = first_run
    out2 = tmp_path / "out2"
    evidence1d.run(case, out=out2, progress=False, figures=False, workers=2)
    assert _numbers(out) == _numbers(out2)       # workers do not change the numbers


def test_refuses_to_overwrite(first_run):
    case, out = first_run
    with pytest.raises(evidence1d.InputError, match="exists; use --overwrite"):
        evidence1d.run(case, out=out, progress=False, figures=False)


def test_resume_reproduces_the_run(first_run, tmp_path):
    import shutil
    case, out = first_run
    out3 = tmp_path / "out3"
    shutil.copytree(out, out3)
    (out3 / "summary.json").unlink()
    res = evidence1d.run(case, out=out3, resume=True, progress=False, figures=False,
                         workers=1)
    assert _numbers(out3) == _numbers(out)
    for m in res.models.values():
        assert m.posterior.resumed_from == m.posterior.n_steps   # nothing sampled again


def test_log_file_written(first_run):
    _, out = first_run
    text = (out / "run.log").read_text()
    assert "ln Z" in text and "verdict" in text and "report written" in text

"""One small run shared by the report tests (session scope: sampled once), and helpers."""
from __future__ import annotations

import json

import pytest

from evidence1d.physics.chain_thermo import TABLE_PATH
from casefactory import CASE_YAML, write_valid_case

#: tiny sampler settings: the run is a fixture, not a statistical test
TINY = "sampler: {steps: 100, particles: 40, islands: 2}"


def small_case_text() -> str:
    """The shared test case with two or three families and tiny sampler settings.

    The spinon family needs the shipped XXZ thermodynamics table for chi(T) and C(T); without
    it the case compares the two other families only.
    """
    models = ("  - spinon_continuum\n" if TABLE_PATH.is_file() else "") + \
        "  - gapped_spin_wave\n  - paramagnon\n"
    text = CASE_YAML.replace("  - spinon_continuum\n", models)
    # the map on an absolute scale (a made-up calibration: the section is checked, not its
    # numbers)
    text = text.replace("intensity: arb}\n    temperature: 2.0\n",
                        "intensity: mb/sr/meV}\n    temperature: 2.0\n"
                        "    absolute_scale: {uncertainty: 0.2}\n", 1)
    assert "absolute_scale" in text
    return text.replace("sampler: {steps: 200, particles: 100, islands: 2}", TINY)


@pytest.fixture(scope="session")
def run_dir(tmp_path_factory):
    """Output folder of one quick run with figures (plus a copy of its first outputs)."""
    import evidence1d
    folder = tmp_path_factory.mktemp("report_run")
    case = evidence1d.load_case(write_valid_case(folder / "case", small_case_text()))
    out = folder / "out"
    evidence1d.run_to_folder(case, out=out, quick=True, progress=False, figures=True)
    first = {name: (out / name).read_text(encoding="utf-8")
             for name in ("summary.json", "report.md", "tables.tex")}
    return out, first


@pytest.fixture(scope="session")
def summary(run_dir):
    out, _ = run_dir
    return json.loads((out / "summary.json").read_text(encoding="utf-8"))

"""Figure data and drawing (incl. the spinon continuum overlay) and the saved-input copies."""
from __future__ import annotations

import math
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

import evidence1d
from evidence1d.report.figures import comparison_figure, predictive_figures, write_figures
from evidence1d.report.store import atomic_write, save_inputs
from evidence1d.report.summary import BAND_QUANTILES, predictive_data
from casefactory import CASE_YAML, write_valid_case

_SPECTRA_ONLY = CASE_YAML.split("  - name: chi")[0] + "models:\n  - spinon_continuum\n" \
    "  - gapped_spin_wave\n" + "sampler:" + CASE_YAML.split("sampler:")[1]


@pytest.fixture(scope="module")
def spectra_case(tmp_path_factory):
    return evidence1d.load_case(write_valid_case(tmp_path_factory.mktemp("spec"), _SPECTRA_ONLY))


def _prior_results(case, rng, n=40):
    """Light results holding prior draws (the figures need only samples and flags)."""
    models = {}
    for name in case.models:
        pb = case.problem(name)
        draws = pb.prior.sample(rng, n)
        models[name] = SimpleNamespace(posterior=SimpleNamespace(samples=draws),
                                       full_samples=draws, one_dimensional=pb.one_dimensional)
    return SimpleNamespace(models=models)


def _summary_for(case, medians):
    models = {}
    for name in case.models:
        pb = case.problem(name)
        params = {p: {"median": medians.get(p, 1.0)} for p in pb.names}
        models[name] = {"parameters": params, "fixed_parameters": {}}
    return {"models": models}


def test_spinon_bounds_over_the_map_at_the_median(spectra_case, rng, tmp_path):
    J = 1.3
    res = _prior_results(spectra_case, rng)
    data = predictive_data(res, spectra_case, _summary_for(spectra_case, {"J": J, "delta": 1.0}),
                           n_draws=20)
    mp = data["spinon_continuum"]["map"]["map"]
    assert mp["axis"] == "Q_par" and mp["data"].shape == (5, 6)
    b = mp["bounds"]
    q = b["x"] * spectra_case.sample.spin_spacing
    # Δ = 1: ω_L = (π/2) J |sin q|, ω_U = π J |sin(q/2)| (des Cloizeaux & Pearson,
    # Phys. Rev. 128, 2131, 1962)
    assert np.allclose(b["lower"], 0.5 * math.pi * J * np.abs(np.sin(q)), rtol=1e-9, atol=1e-12)
    assert np.allclose(b["upper"], math.pi * J * np.abs(np.sin(q / 2)), rtol=1e-9, atol=1e-12)
    assert data["gapped_spin_wave"]["map"]["map"]["bounds"] is None   # 3D family: no overlay
    cuts = data["spinon_continuum"]["map"]["cuts"]
    assert 1 <= len(cuts) <= 6 and all(c["axis"] == "energy" for c in cuts)
    for c in cuts:                        # bands ordered as BAND_QUANTILES
        assert c["bands"].shape[0] == len(BAND_QUANTILES)
        assert np.all(np.diff(c["bands"], axis=0) >= -1e-12)
    figs = predictive_figures(data["spinon_continuum"]["map"], "spinon_continuum", "map")
    assert [s for s, _ in figs] == ["predictive_spinon_continuum_map", "map_spinon_continuum_map"]
    fig = figs[1][1]
    lines = [ln for ax in fig.axes for ln in ax.get_lines() if "two-spinon" in str(ln.get_label())]
    assert len(lines) == 6                                  # both edges on the three panels
    for ax in fig.axes[:1]:
        assert "meV" in ax.get_ylabel()


def test_figures_are_written_as_png_and_pdf(tmp_path, rng):
    summary = {"models": {"a": {"log_evidence": -10.0, "log_evidence_err": 0.3,
                                "one_dimensional": True, "title": "A"},
                          "b": {"log_evidence": -12.5, "log_evidence_err": 0.4,
                                "one_dimensional": False, "title": "B"}},
               "comparison": {"model_probabilities": {"a": 0.92, "b": 0.08},
                              "p_one_dimensional": 0.92, "p_one_dimensional_err": 0.03}}
    x = np.linspace(2, 50, 8)
    bands = np.sort(rng.normal(1.0, 0.1, (5, 20)), axis=0)
    thermo = {"kind": "susceptibility", "units": {}, "x": x, "y": 1 / x, "err": 0.01 + 0 * x,
              "model_x": np.linspace(2, 50, 20), "bands": bands, "residual": 0 * x}
    corner = {"a": {"samples": rng.normal(size=(300, 2)), "labels": ["J (meV)", "Δ"]}}
    files = write_figures(tmp_path, summary, {"a": {"chi": thermo}}, corner)
    names = sorted(p.name for p in files)
    assert names == sorted(f"{s}.{e}" for s in ("corner_a", "predictive_a_chi", "comparison")
                           for e in ("png", "pdf"))
    assert all(p.stat().st_size > 1000 for p in files)
    fig = comparison_figure(summary)
    assert "nats" in fig.axes[0].get_xlabel() and "P(1D | data) = 0.92" in fig.axes[1].get_title()


def test_inputs_outside_the_case_folder_are_copied_and_renamed(tmp_path):
    case_path = write_valid_case(tmp_path / "c")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (tmp_path / "c" / "chi.csv").rename(elsewhere / "chi.csv")
    text = case_path.read_text().replace("file: chi.csv", f"file: {elsewhere / 'chi.csv'}")
    text = text.replace("file: heat.csv", "file: ../c/heat.csv")
    case_path.write_text(text)
    case = evidence1d.load_case(case_path)
    copied = save_inputs(case, tmp_path / "out")
    again = evidence1d.load_case(copied)
    assert (tmp_path / "out" / "inputs" / "original-case.yaml").read_text() == text
    for a, b in zip(case.datasets, again.datasets):
        assert tmp_path / "out" / "inputs" in b.path.parents
        assert np.array_equal(a.y, b.y) and np.array_equal(a.err, b.err)


def test_atomic_write_replaces_and_leaves_no_temporary(tmp_path):
    p = tmp_path / "sub" / "x.txt"
    atomic_write(p, "one")
    atomic_write(p, b"two")
    assert p.read_text() == "two"
    assert sorted(q.name for q in p.parent.iterdir()) == ["x.txt"]


def test_saved_chain_reuses_the_checkpoint(run_dir):
    import json
    out, _ = run_dir
    doc = json.loads((out / "saved" / "run.json").read_text())
    for name, m in doc["models"].items():
        with np.load(out / "saved" / f"{name}.npz") as z:
            has_chain = "chain" in z.files
        assert (m["chain_file"] is None) == has_chain
        if m["chain_file"]:
            assert Path(out / m["chain_file"]).is_file()

"""Figure data (incl. the spinon continuum overlay) and the saved-input copies."""
from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

import evidence1d
from evidence1d.analysis.figure_data import model_figure_data
from evidence1d.analysis.spectra_data import BAND_QUANTILES
from evidence1d.outputs import save_inputs
from evidence1d.report.figures import figure_data, figure_settings, map_figure, write_figures
from evidence1d.results import atomic_write
from casefactory import CASE_YAML, write_valid_case

_SPECTRA_ONLY = CASE_YAML.split("  - name: chi")[0] + "models:\n  - spinon_continuum\n" \
    "  - gapped_spin_wave\n" + "sampler:" + CASE_YAML.split("sampler:")[1]


@pytest.fixture(scope="module")
def spectra_case(tmp_path_factory):
    return evidence1d.load_case(write_valid_case(tmp_path_factory.mktemp("spec"), _SPECTRA_ONLY))


def prior_results(case, rng, n=40):
    """Light results holding prior draws (the figures need only samples, names and flags)."""
    models = {}
    for name in case.models:
        pb = case.problem(name)
        draws = pb.prior.sample(rng, n)
        models[name] = SimpleNamespace(name=name, names=list(pb.names), units=dict(pb.units),
                                       posterior=SimpleNamespace(samples=draws),
                                       full_samples=draws, one_dimensional=pb.one_dimensional)
    return SimpleNamespace(models=models, settings={}, out=None)


def summary_for(case, medians):
    """The summary fields the figures read, with stated medians (others 1.0)."""
    models = {}
    for name in case.models:
        pb = case.problem(name)
        params = {p: {"median": medians.get(p, 1.0), "q16": medians.get(p, 1.0) - 0.1,
                      "q84": medians.get(p, 1.0) + 0.1, "unit": pb.units.get(p, "1")}
                  for p in pb.names}
        models[name] = {"parameters": params, "fixed_parameters": {}, "title": name,
                        "one_dimensional": pb.one_dimensional, "log_evidence": -10.0,
                        "log_evidence_err": 0.3}
    p = 1.0 / len(models)
    return {"title": "t", "models": models,
            "comparison": {"model_probabilities": {n: p for n in models},
                           "p_one_dimensional": 0.5, "p_one_dimensional_err": 0.01}}


def figure_data_for(res, case, summary, raw=None, quick=False):
    """Figure data of results under other ``figures`` settings: what the run computes
    (:func:`model_figure_data`, here from the given summary's parameter table), assembled
    by the report (:func:`figure_data`)."""
    settings = figure_settings(raw, [ds.name for ds in case.datasets], list(res.models))
    models = {}
    for name, mr in res.models.items():
        table = {"parameters": summary["models"][name]["parameters"],
                 "fixed_parameters": summary["models"][name].get("fixed_parameters", {})}
        fig = model_figure_data(name, case.problem(name), case.sample,
                                np.asarray(mr.posterior.samples), np.asarray(mr.full_samples),
                                table, settings)
        models[name] = SimpleNamespace(one_dimensional=mr.one_dimensional,
                                       analysis={"figures": fig})
    light = SimpleNamespace(models=models, context={"figure_settings": settings})
    return figure_data(light, summary, quick)


def test_spinon_bounds_over_the_map_at_the_median(spectra_case, rng):
    J = 1.3
    res = prior_results(spectra_case, rng)
    data = figure_data_for(res, spectra_case, summary_for(spectra_case, {"J": J, "delta": 1.0}),
                       {"draws": 20})
    block = data["models"]["spinon_continuum"]["datasets"]["map"]
    mp = block["map"]
    assert mp["axis"] == "Q_par" and mp["data"].shape == (5, 6) and mp["unit"] == "rlu"
    lower, upper = mp["overlays"]
    assert "lower" in lower["label"] and "upper" in upper["label"]
    # r.l.u. along the chain (c = 6 Å): Q = 2π x / c; chain phase q = Q d (d = 3 Å)
    q = 2 * math.pi * lower["x"] / 6.0 * spectra_case.sample.spin_spacing
    # Δ = 1: ω_L = (π/2) J |sin q|, ω_U = π J |sin(q/2)| (des Cloizeaux & Pearson,
    # Phys. Rev. 128, 2131, 1962)
    assert np.allclose(lower["y"], 0.5 * math.pi * J * np.abs(np.sin(q)), rtol=1e-9,
                       atol=1e-12)
    assert np.allclose(upper["y"], math.pi * J * np.abs(np.sin(q / 2)), rtol=1e-9, atol=1e-12)
    assert mp["x"].min() == pytest.approx(0.05) and mp["x"].max() == pytest.approx(0.95)
    cuts = block["cuts"]
    assert 1 <= len(cuts) <= 6 and all(c["axis"] == "energy" for c in cuts)
    for c in cuts:                        # bands ordered as BAND_QUANTILES
        assert c["bands"].shape[0] == len(BAND_QUANTILES)
        assert np.all(np.diff(c["bands"], axis=0) >= -1e-12)
    fig = map_figure(mp, "Spinon continuum", "map", "arb")
    lines = [ln for ax in fig.axes for ln in ax.get_lines() if "two-spinon" in str(ln.get_label())]
    assert len(lines) == 6                                  # both edges on the three panels
    assert "meV" in fig.axes[0].get_ylabel() and "r.l.u." in fig.axes[0].get_xlabel()


def test_figures_are_written_as_png_and_pdf(spectra_case, tmp_path, rng):
    res = prior_results(spectra_case, rng)
    data = figure_data_for(res, spectra_case, summary_for(spectra_case, {"J": 1.0, "delta": 1.0}),
                       {"draws": 10})
    del data["models"]["gapped_spin_wave"]
    files = write_figures(tmp_path, data)
    names = sorted(p.name for p in files)
    stems = ("corner_spinon_continuum", "predictive_spinon_continuum_map",
             "map_spinon_continuum_map", "comparison")
    assert names == sorted(f"{s}.{e}" for s in stems for e in ("png", "pdf"))
    assert all(p.stat().st_size > 1000 for p in files)


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

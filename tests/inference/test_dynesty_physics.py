"""ln Z of a small physics case: tempered SMC against dynesty's static nested sampler.

The case holds only a susceptibility and a heat-capacity dataset explained by the spinon
continuum family, so that the sampled problem has three parameters (J, Δ, g) once the linear
nuisances (χ₀, C_imp, γ_e, β) are integrated out analytically.  Its data are simulated by the
project's own simulator first, so that the likelihood is that of a well-specified model.

Both evidences estimate the same integral ∫ L(θ) π(θ) dθ: nested sampling (Skilling,
Bayesian Analysis 1, 833 (2006)) as implemented in dynesty (Speagle, MNRAS 493, 3132 (2020)),
whose error is its own estimate (``results.logzerr``), and the project's tempered SMC
(Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006)).  They must agree within three combined
standard errors.
"""
from __future__ import annotations

import math

import dynesty
import numpy as np
import pytest

from casefactory import CASE_YAML, write_valid_case
import evidence1d
from evidence1d.inference.evidence import tempered_evidence
from evidence1d.simulate import NoiseModel, simulate_case, write_dataset

MODEL = "spinon_continuum"
TRUTH = {"J": 3.0, "delta": 0.8, "g": 2.1, "chi0": 2e-4, "c_imp": 3e-3,
         "gamma_e": 2e-3, "beta_lattice": 5e-5}


def _thermo_only(text: str) -> str:
    """The factory's case text without its spectrum dataset."""
    head, rest = text.split("datasets:\n", 1)
    blocks, tail = rest.split("models:\n", 1)
    kept = blocks.split("  - name: chi\n", 1)[1]
    return head + "datasets:\n  - name: chi\n" + kept + "models:\n" + tail


def _simulated_case(folder, seed):
    path = write_valid_case(folder, _thermo_only(CASE_YAML))
    (folder / "map.csv").unlink()
    template = evidence1d.load_case(path)
    sim = simulate_case(template, MODEL, TRUTH, NoiseModel(relative=0.01),
                        np.random.default_rng(seed))
    for ds in template.datasets:
        y, err = sim[ds.name]
        write_dataset(ds, y, err, ds.path, note=f"simulated from {MODEL}, seed {seed}")
    return evidence1d.load_case(path)


@pytest.mark.slow
def test_tempered_evidence_agrees_with_dynesty_on_a_thermodynamic_case(tmp_path, seed):
    case = _simulated_case(tmp_path / "case", seed)
    names = case.parameter_names(MODEL)
    assert names == ["J", "delta", "g"]
    assert set(case.marginalised_names(MODEL)) == {"chi0", "c_imp", "gamma_e", "beta_lattice"}

    problem = case.problem(MODEL)
    ours = tempered_evidence(problem.log_likelihood, problem.prior,
                             rng=np.random.default_rng(seed), n_particles=300, n_islands=8,
                             progress=False)

    # Static nested sampling (Skilling 2006) in dynesty (Speagle 2020) with its default
    # bounds and sampling method, on the exact problem the package exposes to external
    # samplers; its error is its own estimate.
    sampler = dynesty.NestedSampler(lambda th: case.log_likelihood(MODEL, th),
                                    lambda u: case.prior_transform(MODEL, u), len(names),
                                    nlive=300, rstate=np.random.default_rng(seed + 1))
    sampler.run_nested(dlogz=0.05, print_progress=False)
    ref, ref_err = float(sampler.results.logz[-1]), float(sampler.results.logzerr[-1])

    assert np.isfinite(ours.log_z) and ours.log_z_err > 0.0 and ref_err > 0.0
    combined = math.hypot(ours.log_z_err, ref_err)
    assert abs(ours.log_z - ref) < 3.0 * combined, (ours.log_z, ours.log_z_err, ref, ref_err)
    # The data are informative (dynesty's information H, the prior-to-posterior
    # Kullback-Leibler divergence, is several nats; Skilling 2006), and both samplers find
    # the posterior near the simulated truth of J.
    assert float(sampler.results.information[-1]) > 3.0
    post = ours.posterior_samples
    assert abs(np.median(post[:, 0]) - TRUTH["J"]) < 0.2 * TRUTH["J"]

"""Misspecification suite: verdicts on data that no family generated.

Each scenario's data come from a generator written here (:mod:`scenarios`), with its own
physics, counting noise, backgrounds and thermodynamic extras.  Every family is fitted with
quick settings; the test asserts that

* the right class (one-dimensional, ordered, itinerant) wins with P(wrong class) < 0.05 at
  equal prior odds of the families;
* where the right class has an exchange J: for the chain scenarios the true J lies inside the
  winner's central 95 % interval; for the ordered magnon within 25 % of the truth — the
  quantum renormalisation of the spin waves of coupled S = 1/2 chains is known to leading
  order in J_⊥/J only, and the generators and the ordered family use different treatments
  (see :mod:`scenarios`), so a sharp J would measure the difference of two approximations
  (measured: 12 % at J_⊥ = 0.15 J); where no family contains the physics (the continuum
  above an ordered magnon) J is not checked;
* misfit is loud where no family contains the generator's physics (the continuum above an
  ordered magnon, fitted also by the coupled-chains family, which describes modes and a
  continuum below T_N but with its own gaps and weights): the winner's χ²/N at its best
  posterior sample exceeds 3 on a spectrum.
  Elsewhere the winner's χ²/N is reported in the assertion messages but not bounded: the
  generators differ from the families on purpose (measured on the default seed: spectra
  1.3–2.5 for the planar magnon, up to 14 on the itinerant cut, whose continuum-form
  Ornstein–Zernike response the lattice-form family does not reproduce); the run's own
  goodness-of-fit table flags such datasets.
"""
from __future__ import annotations

import numpy as np
import pytest

import evidence1d
import generators as G
import scenarios as S

#: the class each family stands for; coupled chains (fitted where a scenario asks for them,
#: Scenario.extra_models) are not one-dimensional: their 1D limit J_perp = 0 is a nested
#: hypothesis reported by the Savage–Dickey ratio
CLASS_OF = {"spinon_continuum": "one_dimensional", "gapped_spin_wave": "ordered",
            "coupled_chains": "ordered",
            "paramagnon": "itinerant", "paramagnon_incommensurate": "itinerant"}
#: scenarios whose physics no family contains (the verdict must still be right, the misfit loud)
OUTSIDE_EVERY_FAMILY = {"ordered_with_continuum"}


def _run(name, tmp_path, seed):
    scen, spectra, chi, heat, T = S.SCENARIOS[name]()
    rng = np.random.default_rng(seed)
    path = G.write_case(tmp_path / name, scen, spectra, chi, heat, rng, temperature=T)
    # every check below reads the evidences and the final tempered populations (weighted
    # posterior samples of the evidence stage), not the emcee chains: a short chain keeps the
    # run complete (the report's analysis still runs) at a fraction of the cost
    case = evidence1d.load_case(path).replace(sampler={"steps": 60})
    res = evidence1d.run(case, quick=True, progress=False, figures=False, workers=2)
    return scen, case, res


def _class_probabilities(res):
    lz = {n: m.evidence.log_z for n, m in res.models.items()}
    top = max(lz.values())
    w = {n: np.exp(v - top) for n, v in lz.items()}
    tot = sum(w.values())
    out = {}
    for n, v in w.items():
        out[CLASS_OF[n]] = out.get(CLASS_OF[n], 0.0) + v / tot
    return out, lz


def _chi2_per_point(case, name, samples):
    """χ²/N of every dataset at the sample of highest likelihood (nuisances at their
    conditional means)."""
    prob = case.problem(name)
    best = samples[np.argmax(prob.log_likelihood(samples))]
    pred = prob.predict(best[None, :])
    return {ds.name: float(np.mean(((pred[ds.name][0] - ds.y) / ds.err) ** 2))
            for ds in case.datasets}


#: a verdict known to be wrong today, kept visible (strict: the test fails once it is right)
KNOWN_WRONG: dict = {}


@pytest.mark.slow
@pytest.mark.parametrize("name", [pytest.param(n, marks=pytest.mark.xfail(
    strict=True, reason=KNOWN_WRONG[n])) if n in KNOWN_WRONG else n for n in S.SCENARIOS])
def test_right_class_wins(name, tmp_path, seed):
    scen, case, res = _run(name, tmp_path, seed)
    probs, lz = _class_probabilities(res)
    wrong = 1.0 - probs.get(scen.right_class, 0.0)
    assert wrong < 0.05, f"{name}: P(wrong class) = {wrong:.3g}; ln Z = {lz}"
    winner = max(lz, key=lz.get)
    mr = res.models[winner]
    samples = mr.evidence.posterior_samples
    names = list(mr.evidence.names)
    if scen.J is not None and "J" in names:
        col = samples[:, names.index("J")]
        if scen.right_class == "one_dimensional":
            lo, hi = np.percentile(col, [2.5, 97.5])
            assert lo <= scen.J <= hi, f"{name}: true J {scen.J} outside [{lo:.4g}, {hi:.4g}]"
        elif name not in OUTSIDE_EVERY_FAMILY:
            assert abs(np.median(col) / scen.J - 1.0) < 0.25, (name, np.median(col))
    if name in OUTSIDE_EVERY_FAMILY:
        chi2 = _chi2_per_point(case, winner, samples)
        assert max(chi2[k] for k in ("map", "cut")) > 3.0, (name, chi2)

"""A fair contest: the families compete on the same footing.

* Shared physical parameters (J, Δ where it means the same, g) have identical default priors
  in every bundled card; a card whose physics needs a narrower range keeps the common upper
  bound and says why in its assumptions.
* Nuisances (intensity scales, backgrounds, χ₀, C_imp, γ_e, β) are identical in kind and in
  prior for every family of a case.
* One finite-temperature convention: S(Q, ω) = χ''(Q, ω)[n(ω) + 1]/π, so detailed balance
  S(Q, −ω) = e^{−ħω/k_BT} S(Q, ω) holds point by point (Lovesey, Theory of Neutron Scattering
  from Condensed Matter (1984), Vol. 1, ch. 4), checked with a resolution much narrower than
  every line.
"""
from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest

import evidence1d
from evidence1d.cards import bundled_cards, load_card
from evidence1d.families import FAMILY_CLASSES, SpectralPoints
from evidence1d.units import K_B_MEV

CARDS = {n: load_card(p) for n, p in sorted(bundled_cards().items())}
SHARED = ("J", "delta", "thermal_damping", "g")


def _spec(prior):
    return prior.to_spec()


@pytest.mark.parametrize("pname", SHARED)
def test_shared_parameters_have_identical_priors(pname):
    holders = {n: c for n, c in CARDS.items() if pname in c.parameters}
    if len(holders) < 2:
        pytest.skip(f"only one card has {pname}")
    ref_name = "spinon_continuum" if "spinon_continuum" in holders else sorted(holders)[0]
    ref = holders[ref_name].parameters[pname]["prior"]
    for n, c in holders.items():
        pr = c.parameters[pname]["prior"]
        if _spec(pr) == _spec(ref):
            continue
        # a narrower range is allowed only inside the common one, same upper bound, with a
        # stated reason
        lo, hi = pr.support
        rlo, rhi = ref.support
        assert type(pr) is type(ref) and rlo <= lo and hi == rhi, (n, pname, pr, ref)
        text = " ".join(c.assumptions).lower()
        assert "prior" in text and ("δ" in text or pname in text), \
            f"card {n} narrows the {pname} prior without saying why"


def test_nuisance_priors_identical_across_families():
    root = evidence1d.__file__.rsplit("/", 2)[0]
    case = evidence1d.load_case(f"{root}/case_studies/flagship/case.yaml")
    priors = {m: case.problem(m).declared_priors for m in case.models}
    physical = {m: set(case.models[m].card.parameters) for m in case.models}
    names = None
    for m, pr in priors.items():
        nuis = {k: v for k, v in pr.items() if k not in physical[m]}
        if names is None:
            names, ref = set(nuis), nuis
        assert set(nuis) == names, m
        for k in names:
            assert _spec(nuis[k]) == _spec(ref[k]), (m, k)


def _family(name):
    card = CARDS[name]
    cls = FAMILY_CLASSES[card.family]
    sample = SimpleNamespace(spin=0.5, spin_spacing=3.1, lattice={"a": 7.4, "b": 7.9, "c": 6.2})
    return cls(spin=0.5, **{**cls.sample_options(sample), **card.options}), card


PARAMS = {
    "spinon_continuum": {"J": 1.0, "delta": 1.0, "thermal_damping": 0.8, "g": 2.1},
    "gapped_spin_wave": {"J": 1.0, "J_perp": 0.1, "delta": 1.05, "damping": 0.4, "g": 2.1},
    "coupled_chains": {"J": 1.0, "J_perp": 0.05, "delta": 1.0, "thermal_damping": 0.8,
                       "g": 2.1},
    "paramagnon": {"chi_uniform": 0.01, "theta_sf": 30.0, "xi_par": 8.0, "xi_perp": 2.0,
                   "gamma0": 1.0, "g": 2.1},
    "paramagnon_incommensurate": {"chi_uniform": 0.01, "theta_sf": 30.0, "xi_par": 8.0,
                                  "xi_perp": 2.0, "gamma0": 1.0, "q0": 0.7, "g": 2.1},
}


@pytest.mark.parametrize("name", sorted(CARDS))
def test_detailed_balance_point_by_point(name):
    fam, card = _family(name)
    p = {k: np.array([[v]]) for k, v in PARAMS[name].items()}
    assert set(p) == set(card.parameters), "give every parameter of a new card a value here"
    T = 8.0
    E = np.array([0.3, 0.6, 0.9, 1.2])
    q = np.full(E.size, 0.8 * np.pi)
    n = E.size
    mk = lambda e: SpectralPoints(Q_par=q / 3.1, Q_a=np.full(n, 0.2), Q_b=np.zeros(n),  # noqa
                                  d=3.1, a_perp=7.4, b_perp=7.9, energy=e,
                                  sigma=np.full(n, 1e-3), temperature=T)
    loss = fam.spectrum(p, mk(E))[0]
    gain = fam.spectrum(p, mk(-E))[0]
    assert np.all(loss > 0), loss
    np.testing.assert_allclose(gain / loss, np.exp(-E / (K_B_MEV * T)), rtol=0.02)

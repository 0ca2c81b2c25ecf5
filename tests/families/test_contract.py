"""The contract every model family passes (shapes, finiteness in the prior support,
batch equals loop, picklable), run through the bundled model cards."""
from __future__ import annotations

import pickle
from types import SimpleNamespace

import numpy as np
import pytest

from evidence1d.cards import bundled_cards, load_card
from evidence1d.families import DIRECTIONS, FAMILY_CLASSES, SpectralPoints
from evidence1d.inference.priors import JointPrior

CARDS = sorted(bundled_cards())


def _points(n=40, T=3.0):
    rng = np.random.default_rng(3)
    return SpectralPoints(Q_par=rng.uniform(-2, 3, n), Q_a=rng.uniform(-1, 1, n),
                          Q_b=rng.uniform(-1, 1, n), d=3.0, a_perp=7.0, b_perp=7.5,
                          energy=rng.uniform(-3, 12, n), sigma=np.full(n, 0.1),
                          temperature=T)


def _family_and_params(name, k, seed=0):
    card = load_card(bundled_cards()[name])
    cls = FAMILY_CLASSES[card.family]
    sample = SimpleNamespace(spin=0.5, spin_spacing=3.0, lattice={"a": 7.0, "b": 7.5, "c": 6.0})
    fam = cls(spin=0.5, **{**cls.sample_options(sample), **card.options})
    prior = JointPrior(list(card.parameters), [p["prior"] for p in card.parameters.values()])
    theta = prior.sample(np.random.default_rng(seed), k)
    return fam, prior.expand(theta)


def _methods(fam):
    T = np.geomspace(0.3, 300.0, 25)
    out = {"spectrum": lambda p: fam.spectrum(p, _points())}
    for d in DIRECTIONS:
        out[f"chi_{d}"] = lambda p, d=d: fam.susceptibility(p, T, d)
    out["heat_capacity"] = lambda p: fam.heat_capacity(p, T)
    out["entropy"] = lambda p: fam.entropy(p, T)
    return out


@pytest.mark.parametrize("name", CARDS)
def test_shapes_and_finite_in_prior_support(name):
    fam, p = _family_and_params(name, 64)
    for what, f in _methods(fam).items():
        out = f(p)
        assert out.shape[0] == 64, what
        assert np.all(np.isfinite(out)), f"{name}.{what} not finite"


@pytest.mark.parametrize("name", CARDS)
def test_batch_equals_loop(name):
    fam, p = _family_and_params(name, 5, seed=1)
    for what, f in _methods(fam).items():
        batch = f(p)
        loop = np.concatenate([f({k: v[i:i + 1] for k, v in p.items()}) for i in range(5)])
        np.testing.assert_allclose(batch, loop, rtol=1e-10, atol=1e-300, err_msg=what)


@pytest.mark.parametrize("name", CARDS)
def test_picklable(name):
    fam, p = _family_and_params(name, 3)
    fam2 = pickle.loads(pickle.dumps(fam))
    np.testing.assert_array_equal(fam.spectrum(p, _points()), fam2.spectrum(p, _points()))


@pytest.mark.parametrize("name", CARDS)
def test_card_matches_family(name):
    card = load_card(bundled_cards()[name])
    assert tuple(card.parameters) == tuple(FAMILY_CLASSES[card.family].parameters)
    assert isinstance(card.one_dimensional, bool)


@pytest.mark.parametrize("name", CARDS)
def test_cross_section_convention_is_stated(name):
    # spectra on an absolute scale are checked against (γr₀)²(g/2)²c: every bundled family
    # states c (2/3: three spin components summed, 1: polarisation-weighted sum; Squires
    # 1978, Ch. 7)
    card = load_card(bundled_cards()[name])
    assert FAMILY_CLASSES[card.family].cross_section_factor in (2.0 / 3.0, 1.0)
